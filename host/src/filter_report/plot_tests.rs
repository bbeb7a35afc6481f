//! The response plot against the defects it once had: a title split
//! between a number and its unit, a legend over the curves, a notch drawn
//! along the floor, warnings missing from the picture.

use super::*;
use crate::filter_report::Stage;
use crate::plot::svg_check::{
    crosses, curves, legend_frames, plain, run_along_bottom, split_unit, texts,
};

fn plot(stages: Vec<Stage>, rate: f64) -> String {
    let spec = crate::filter_report::FilterSpec::new(rate, stages).unwrap();
    render_svg(&FilterReport::build(&spec, None, "F", "cmd").unwrap()).unwrap()
}

fn band_and_notch() -> String {
    plot(
        vec![
            Stage::BandPass {
                low_hz: 0.5,
                high_hz: 8.0,
                order: 2,
            },
            Stage::Notch {
                centre_hz: 50.0,
                quality: 30.0,
            },
        ],
        250.0,
    )
}

#[test]
fn the_title_keeps_each_number_with_its_unit() {
    let lines = texts(&band_and_notch());
    assert!(lines[0].starts_with("plethwire filter: "), "{lines:?}");
    assert_eq!(split_unit(&lines), None, "{lines:?}");
}

#[test]
fn the_legend_covers_no_curve() {
    let band = |low_hz, high_hz, order| {
        let stage = Stage::BandPass {
            low_hz,
            high_hz,
            order,
        };
        plot(vec![stage], 100.0)
    };
    // A wide band with a low corner: its curves sweep the whole panel. A
    // high corner: the stop band climbs through the panel's lower left
    // corner (−92 dB at 0.01 Hz, −64 dB at 0.05 Hz), where a legend in the
    // panel would sit.
    for svg in [band_and_notch(), band(0.05, 40.0, 4), band(2.0, 8.0, 2)] {
        let frames = legend_frames(&svg);
        assert!(!frames.is_empty(), "no legend frame");
        for f in &frames {
            for c in curves(&svg, 2) {
                assert!(!crosses(*f, &c), "the legend at {f:?} covers a curve");
            }
        }
    }
}

#[test]
fn the_notch_leaves_the_axis_instead_of_lying_on_the_floor() {
    let svg = band_and_notch();
    let doc = roxmltree::Document::parse(&svg).unwrap();
    let marks = doc
        .descendants()
        .filter(|n| n.has_tag_name("polygon"))
        .count();
    // Notch and Nyquist, design and board, and the legend's sample.
    assert!(marks >= 5, "{marks} marks");
    // The magnitude panel is the top third: no piece of its curves runs
    // along the floor.
    let top_third = f64::from(HEIGHT) / 3.0 + 40.0;
    let magnitude: Vec<_> = curves(&svg, 20)
        .into_iter()
        .filter(|c| c.iter().all(|p| p.1 < top_third))
        .collect();
    assert!(magnitude.len() >= 2, "{} magnitude curves", magnitude.len());
    for c in &magnitude {
        assert!(
            run_along_bottom(c) < 3,
            "a curve runs along the floor: {:?}",
            &c[c.len().saturating_sub(8)..]
        );
    }
}

#[test]
fn a_rate_outside_the_pipelines_range_is_warned_on_the_figure() {
    let low = vec![Stage::BandPass {
        low_hz: 0.5,
        high_hz: 4.0,
        order: 2,
    }];
    let spec = crate::filter_report::FilterSpec::new(20.0, low).unwrap();
    let report = FilterReport::build(&spec, None, "F", "cmd").unwrap();
    assert_eq!(report.warnings.len(), 1, "{:?}", report.warnings);
    let svg = render_svg(&report).unwrap();
    let shown = plain(&texts(&svg).join(" "));
    assert!(shown.contains(&plain(&report.warnings[0])), "{shown}");
    assert!(texts(&svg).iter().any(|t| t == "warning"));
    // Without a warning the figure has none.
    assert!(!texts(&band_and_notch()).iter().any(|t| t == "warning"));
}
