//! The pictures as a reader sees them: the filter and front-end SVGs and a
//! report page, loaded in headless Chromium and checked through the DOM:
//! no legend over a plotted curve, every text inside its figure, no
//! number parted from its unit (across a title's lines, or by a breakable
//! space in the page's text). Screenshots of each are left in the test's
//! temporary folder for a person to look at.
//!
//! The recording is our own synthetic scenario (`plethwire_synth`), the
//! circuit the invented example of `examples/`.

use plethwire::filter_report::{self, FilterReport, FilterSpec, Stage};
use plethwire::frontend::{self, Draft, FrontendReport};
use plethwire::replay::replay;
use plethwire::report::{build, Reference, ReportInput};
use plethwire_checks::browser::{
    breakable_unit, chromium, crosses, measure, page_of_svg, screenshot, split_between_lines,
    within, Measured,
};
use plethwire_checks::{need, needs, repo_root};
use plethwire_dsp::pipeline::Config;
use plethwire_synth::{generate, SynthOptions};
use std::path::PathBuf;

/// The band-pass and notch at 250 Hz, and a band-pass at 20 Hz, below
/// the pipeline's rates: its warning is drawn on the figure.
fn filter_svgs() -> [String; 2] {
    let low = vec![Stage::BandPass {
        low_hz: 0.5,
        high_hz: 4.0,
        order: 2,
    }];
    let stages = vec![
        Stage::BandPass {
            low_hz: 0.5,
            high_hz: 8.0,
            order: 2,
        },
        Stage::Notch {
            centre_hz: 50.0,
            quality: 30.0,
        },
    ];
    [(250.0, stages), (20.0, low)].map(|(rate, stages)| {
        let spec = FilterSpec::new(rate, stages).unwrap();
        filter_report::render_svg(&FilterReport::build(&spec, None, "F", "cmd").unwrap()).unwrap()
    })
}

/// The example circuit, and the same at 100 Hz with a pulse that clips:
/// its warnings are drawn on the figure.
fn frontend_svgs() -> [String; 2] {
    let toml = std::fs::read_to_string(repo_root().join("examples/frontend-fingerclip.toml"))
        .expect("the example circuit");
    let troubled = toml
        .replace("change_ua = 0.02", "change_ua = 0.2")
        .replace("# rate_hz = 200", "rate_hz = 100");
    [toml, troubled].map(|t| {
        let circuit = Draft::from_toml(&t).unwrap().resolve().unwrap();
        frontend::render_svg(&FrontendReport::build(&circuit).unwrap()).unwrap()
    })
}

/// Two minutes of the synthetic pulse at 125 Hz, scored against its own
/// true beats.
fn report_page() -> String {
    let rec = generate(&SynthOptions {
        sample_rate_hz: 125.0,
        duration_s: 120.0,
        ..SynthOptions::default()
    })
    .unwrap();
    let samples: Vec<f64> = rec.samples.iter().map(|&x| f64::from(x)).collect();
    let config = Config::new(125.0);
    let run = replay(&samples, config).unwrap();
    let reference = Reference {
        beats_source: "synthetic truth".into(),
        beats: Some(rec.peak_indices().iter().map(|&p| p as u64).collect()),
        ..Reference::default()
    };
    let mut input = ReportInput::new("synthetic", &samples, config, &run);
    input.reference = Some(&reference);
    build(&input).unwrap()
}

/// Everything wrong with one measured page, one line each.
fn faults(name: &str, m: &Measured, legend_frames: bool) -> Vec<String> {
    let mut out = Vec::new();
    if m.figures.is_empty() {
        out.push(format!("{name}: no figure"));
    }
    let frames: usize = m.figures.iter().map(|f| f.frames.len()).sum();
    if legend_frames && frames == 0 {
        out.push(format!("{name}: no legend frame to check"));
    }
    for (i, f) in m.figures.iter().enumerate() {
        for t in f.texts.iter().filter(|t| !t.text.is_empty()) {
            if !within(t.at, f.at) {
                out.push(format!(
                    "{name} figure {i}: {:?} at {:?} leaves {:?}",
                    t.text, t.at, f.at
                ));
            }
        }
        let legends = f.frames.iter().chain(&m.legends);
        for (b, c) in legends.flat_map(|b| f.curves.iter().map(move |c| (b, c))) {
            if crosses(*b, c) {
                out.push(format!(
                    "{name} figure {i}: the legend at {b:?} covers a curve"
                ));
            }
        }
        if let Some((a, b)) = split_between_lines(&f.texts) {
            out.push(format!(
                "{name} figure {i}: {a:?} / {b:?} parts a number from its unit"
            ));
        }
    }
    for p in &m.prose {
        if let Some(bit) = breakable_unit(p) {
            out.push(format!("{name}: {bit:?} may break between number and unit"));
        }
    }
    out
}

#[test]
fn figures_read_right_in_chromium() {
    let Some(exe) = chromium() else {
        need(needs::CHROMIUM, false);
        return;
    };
    let dir = PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join("plots-in-chromium");
    std::fs::create_dir_all(&dir).unwrap();
    let [frontend, troubled] = frontend_svgs();
    let [filter, slow_filter] = filter_svgs();
    let report = report_page();
    let pages = [
        ("filter", page_of_svg(&filter), (960, 1000), true),
        (
            "filter-warning",
            page_of_svg(&slow_filter),
            (960, 1100),
            true,
        ),
        ("frontend", page_of_svg(&frontend), (960, 1000), true),
        (
            "frontend-findings",
            page_of_svg(&troubled),
            (960, 1100),
            true,
        ),
        ("report", report.clone(), (1100, 7000), false),
        // A phone's width: the figures shrink, the text wraps.
        ("report-narrow", report, (420, 9000), false),
    ];
    let mut all = Vec::new();
    for (name, html, size, sheet) in &pages {
        let m = measure(&exe, &dir, name, html, size.0);
        let count = |f: fn(&plethwire_checks::browser::Figure) -> usize| {
            m.figures.iter().map(f).sum::<usize>()
        };
        eprintln!(
            "{name}: {} figures, {} texts, {} curves, {} legend frames, {} page legends",
            m.figures.len(),
            count(|f| f.texts.len()),
            count(|f| f.curves.len()),
            count(|f| f.frames.len()),
            m.legends.len()
        );
        if !*sheet && m.legends.is_empty() {
            all.push(format!("{name}: no legend to check"));
        }
        all.extend(faults(name, &m, *sheet));
        screenshot(&exe, &dir, &format!("{name}-shot"), html, *size);
    }
    eprintln!("screenshots: {}", dir.display());
    assert!(all.is_empty(), "{} faults:\n{}", all.len(), all.join("\n"));
}
