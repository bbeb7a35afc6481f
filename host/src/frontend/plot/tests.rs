//! The Bode plot against the defects it once had: titles split between a
//! number and its unit, a legend over the curves, curves flattened along
//! the floor, a phase unlike the table's, findings missing.

use super::*;
use crate::frontend::Draft;
use crate::plot::svg_check::{crosses, curves as drawn, legend_frames, run_along_bottom};
use crate::plot::svg_check::{plain, split_unit, texts};

const EXAMPLE: &str = include_str!("../../../../examples/frontend-fingerclip.toml");

fn report(toml: &str) -> FrontendReport {
    FrontendReport::build(&Draft::from_toml(toml).unwrap().resolve().unwrap()).unwrap()
}

/// The example at 100 Hz with a pulse ten times larger: it clips, and the
/// rate is below the rule.
fn troubled() -> FrontendReport {
    let toml = EXAMPLE
        .replace("change_ua = 0.02", "change_ua = 0.2")
        .replace("# rate_hz = 200", "rate_hz = 100");
    report(&toml)
}

#[test]
fn titles_keep_each_number_with_its_unit() {
    let svg = render_svg(&report(EXAMPLE)).unwrap();
    let lines = texts(&svg);
    assert!(lines[0].starts_with("plethwire frontend: "), "{lines:?}");
    assert_eq!(split_unit(&lines), None, "{lines:?}");
}

#[test]
fn the_legend_covers_no_curve() {
    for r in [report(EXAMPLE), troubled()] {
        let svg = render_svg(&r).unwrap();
        let frames = legend_frames(&svg);
        assert!(!frames.is_empty(), "no legend frame");
        let lines = drawn(&svg, 2);
        assert!(lines.len() >= 4, "{} curves", lines.len());
        for f in &frames {
            for c in &lines {
                assert!(!crosses(*f, c), "the legend at {f:?} covers a curve");
            }
        }
    }
}

#[test]
fn a_gain_below_the_axis_is_broken_and_marked_not_flattened() {
    let r = report(EXAMPLE);
    // The combined gain falls below −60 dB before 50 Hz.
    assert!(r.response.last().unwrap().with_digital_db.unwrap() < GAIN_FLOOR_DB);
    let svg = render_svg(&r).unwrap();
    for c in drawn(&svg, 2) {
        assert!(run_along_bottom(&c) < 3, "a curve runs along its floor");
    }
    let colour = crate::plot::css(BOARD);
    let doc = roxmltree::Document::parse(&svg).unwrap();
    let marks = doc
        .descendants()
        .filter(|n| n.has_tag_name("polygon"))
        .filter(|n| {
            n.attribute("fill")
                .is_some_and(|f| f.eq_ignore_ascii_case(&colour))
        })
        .count();
    assert!(marks >= 2, "the edge is marked in the plot and its legend");
}

#[test]
fn the_table_shows_the_phase_the_plot_draws() {
    for r in [report(EXAMPLE), troubled()] {
        let freqs: Vec<f64> = r.response.iter().map(|row| row.frequency_hz).collect();
        let (_, phase) = curves(&r, &freqs);
        for (row, drawn) in r.response.iter().zip(&phase.analog) {
            assert!(
                (row.analog_phase_deg - drawn.1).abs() < 1e-9,
                "{} Hz: table {} plot {}",
                row.frequency_hz,
                row.analog_phase_deg,
                drawn.1
            );
        }
        let with: Vec<f64> = r
            .response
            .iter()
            .filter_map(|r| r.with_digital_phase_deg)
            .collect();
        assert_eq!(with.len(), phase.combined.len());
        for (t, p) in with.iter().zip(&phase.combined) {
            assert!((t - p.1).abs() < 1e-9, "{} Hz: table {t} plot {}", p.0, p.1);
        }
    }
    // At 0.05 Hz the chain's phase lies within one turn, as printed.
    let first = report(EXAMPLE).response[0];
    assert!((first.analog_phase_deg + 98.9).abs() < 0.05, "{first:?}");
}

#[test]
fn phase_follows_the_frequency_without_jumps() {
    let r = report(EXAMPLE);
    let freqs = log_frequencies(0.05, 50.0, 600, &[]);
    let track = crate::frontend::phase::phase_track(&r.chain, &r.digital, &freqs);
    for w in track.windows(2) {
        assert!((w[1].0 - w[0].0).abs() < 30.0, "{w:?}");
        if let (Some(a), Some(b)) = (w[0].1, w[1].1) {
            assert!((b - a).abs() < 30.0, "{w:?}");
        }
    }
}

#[test]
fn every_finding_is_on_the_figure() {
    let r = troubled();
    let said = |level: FindingLevel, what: &str| {
        r.findings
            .iter()
            .any(|f| f.level == level && f.message.contains(what))
    };
    assert!(said(FindingLevel::Error, "clipping"), "{:?}", r.findings);
    assert!(
        said(FindingLevel::Warning, "below the rule"),
        "{:?}",
        r.findings
    );
    let svg = render_svg(&r).unwrap();
    let shown = plain(&texts(&svg).join(" "));
    for f in &r.findings {
        let line = plain(&format!("{}: {}", f.node, f.message));
        assert!(shown.contains(&line), "{line:?} not in {shown:?}");
    }
    for level in ["error", "warning", "note"] {
        assert!(texts(&svg).iter().any(|t| t == level), "no {level}");
    }
}
