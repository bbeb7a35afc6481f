//! `plethwire::report` pages for a synthetic recording of our own (known
//! beats, via `plethwire_synth`) and for shared recordings when
//! `../shared/data` is there: well-formed, self-contained, complete, and
//! showing exactly the numbers the library computes from the pipeline's
//! output.

mod page_check;

use page_check::{read, Page};
use plethwire::replay::{load, replay, Replay, Source};
use plethwire::report::{build, figures, Excerpt, Reference, ReportInput};
use plethwire::score::records::{score_one, References};
use plethwire::score::{match_beats, MATCH_WINDOW_S};
use plethwire_dsp::pipeline::Config;
use plethwire_synth::{generate, FingerOff, HrSchedule, MotionBurst, SynthOptions, Synthetic};
use std::path::PathBuf;

/// Three minutes at 125 Hz: a steady start, a climb from 64 to 96 bpm and
/// back towards 72, a hand movement at 70 s and the finger off at 130 s.
fn scenario() -> Synthetic {
    generate(&SynthOptions {
        sample_rate_hz: 125.0,
        duration_s: 180.0,
        hr: HrSchedule::from_points(&[(0.0, 64.0), (60.0, 64.0), (100.0, 96.0), (180.0, 72.0)]),
        hr_variability_sd_ms: 25.0,
        motion: vec![MotionBurst {
            start_s: 70.0,
            duration_s: 6.0,
            amplitude: 0.15,
        }],
        finger_off: vec![FingerOff {
            start_s: 130.0,
            duration_s: 8.0,
        }],
        seed: 11,
        ..SynthOptions::default()
    })
    .expect("valid options")
}

/// Sample standard deviation, written out here independently of the
/// library.
fn sd(v: &[f64]) -> f64 {
    let m = v.iter().sum::<f64>() / v.len() as f64;
    (v.iter().map(|x| (x - m).powi(2)).sum::<f64>() / (v.len() - 1) as f64).sqrt()
}

/// SD1 and SD2 (Brennan, Palaniswami, Kamen 2001: the spread of the
/// successive-interval pairs across and along the identity line), from
/// the beats directly: pairs of intervals ending at consecutive beats,
/// each interval's two beats good.
fn sd1_sd2(run: &Replay) -> (usize, f64, f64) {
    let mut pairs = Vec::new();
    for w in run.beats.windows(3) {
        let ok = w.iter().all(|b| b.flags.is_good());
        if let (true, Some(a), Some(b)) = (ok, w[1].ibi_ms, w[2].ibi_ms) {
            pairs.push((f64::from(a), f64::from(b)));
        }
    }
    let across: Vec<f64> = pairs.iter().map(|p| (p.1 - p.0) / 2f64.sqrt()).collect();
    let along: Vec<f64> = pairs.iter().map(|p| (p.1 + p.0) / 2f64.sqrt()).collect();
    (pairs.len(), sd(&across), sd(&along))
}

/// The figures every page must show as the library computes them.
fn assert_core_figures(page: &Page, run: &Replay) {
    let s = run.summary();
    let h = run.hrv();
    page.assert_figure("beats", Some(run.beats.len() as f64), 0);
    page.assert_figure("good_beats", Some(s.good_beats as f64), 0);
    page.assert_figure("good_share_percent", Some(100.0 * s.good_share), 1);
    page.assert_figure("duration_s", Some(run.samples as f64 / run.fs), 1);
    let hr = s.heart_rate_bpm.expect("a heart rate");
    page.assert_figure("median_hr_mean_bpm", Some(hr.mean), 1);
    page.assert_figure("median_hr_min_bpm", Some(hr.min), 1);
    page.assert_figure("median_hr_max_bpm", Some(hr.max), 1);
    page.assert_figure("latency_median_ms", s.latency_median_ms, 0);
    page.assert_figure("nn_intervals", Some(h.nn_count as f64), 0);
    page.assert_figure("sdnn_ms", h.sdnn_ms.map(f64::from), 1);
    page.assert_figure("rmssd_ms", h.rmssd_ms.map(f64::from), 1);
    page.assert_figure("pnn50_percent", h.pnn50_percent.map(f64::from), 1);
    // SD1/SD2 from our own pairing and formula: equal to rounding.
    let (pairs, sd1, sd2) = sd1_sd2(run);
    page.assert_figure("poincare_pairs", Some(pairs as f64), 0);
    assert_eq!(pairs, h.diff_count, "the pairs are RMSSD's differences");
    for (name, ours) in [("sd1_ms", sd1), ("sd2_ms", sd2)] {
        let v = page.get(name).value.expect(name);
        assert!(
            (v - ours).abs() < 1e-9 * ours.max(1.0),
            "{name}: {v} vs {ours}"
        );
    }
    // Brennan et al.: SD1² = SDSD²/2, and RMSSD² = SDSD² + mean², so the
    // page's SD1 and the library's RMSSD (f32) must agree.
    let rmssd = f64::from(h.rmssd_ms.unwrap());
    let n = pairs as f64;
    let mean_d = {
        let mut d = Vec::new();
        for w in run.beats.windows(3) {
            if let (true, Some(a), Some(b)) = (
                w.iter().all(|b| b.flags.is_good()),
                w[1].ibi_ms,
                w[2].ibi_ms,
            ) {
                d.push(f64::from(b - a));
            }
        }
        d.iter().sum::<f64>() / n
    };
    let sd1_from_rmssd = ((n * rmssd * rmssd - n * mean_d * mean_d) / (2.0 * (n - 1.0))).sqrt();
    assert!(
        (sd1_from_rmssd - sd1).abs() < 1e-3 * sd1,
        "SD1 {sd1} vs {sd1_from_rmssd} from RMSSD"
    );
    page.assert_figure("state_changes", Some(run.states.len() as f64), 0);
}

#[test]
fn a_synthetic_report_shows_what_the_pipeline_computed() {
    let rec = scenario();
    let fs = rec.sample_rate_hz;
    let samples: Vec<f64> = rec.samples.iter().map(|&x| f64::from(x)).collect();
    let config = Config::new(fs as f32);
    let run = replay(&samples, config).unwrap();
    let truth: Vec<u64> = rec.peak_indices().iter().map(|&p| p as u64).collect();
    let schedule: Vec<(f64, Option<f64>)> = (0..180)
        .map(|t| (t as f64, Some(rec_bpm(t as f64))))
        .collect();
    let reference = Reference {
        beats_source: "synthetic truth".into(),
        beats: Some(truth.clone()),
        rate_source: "the generator's schedule".into(),
        rate: Some(schedule),
    };
    let mut input = ReportInput::new("synthetic & <co>", &samples, config, &run);
    input.signal = "pleth";
    input.units = Some("V");
    input.reference = Some(&reference);
    let html = build(&input).unwrap();
    let page = read(&html);
    assert_core_figures(&page, &run);
    assert_eq!(
        page.get("record").text,
        "synthetic & <co>",
        "escaped and read back"
    );
    assert!(html.len() < 1_000_000, "{} bytes", html.len());

    // The score, from the library's matching (±150 ms, EC57 practice).
    let m = match_beats(&truth, &run.peaks(), (MATCH_WINDOW_S * fs).round() as u64);
    page.assert_figure("tp", Some(m.tp as f64), 0);
    page.assert_figure("fp", Some(m.fp as f64), 0);
    page.assert_figure("fn", Some(m.fn_ as f64), 0);
    page.assert_figure("f1_percent", m.f1().map(|f| 100.0 * f), 2);
    assert!(m.f1().unwrap() > 0.95, "the scenario is detectable: {m:?}");
    assert!(page.get("hr_mae_bpm").value.unwrap() < 5.0);

    // The finger-off stretch shows in the state figures.
    let no_signal = page.get("no_signal_s").value.unwrap();
    assert!(no_signal > 2.0, "no signal for {no_signal} s");
    // The chosen excerpt is the 20 s with most good beats, not over the
    // finger-off stretch.
    let start = page.get("excerpt_start_s").value.unwrap();
    assert!(!(110.0..138.0).contains(&start), "excerpt at {start} s");
    let shown = run
        .beats
        .iter()
        .map(|b| b.peak_index as f64 / fs)
        .filter(|&t| t >= start && t < start + 20.0)
        .count();
    page.assert_figure("excerpt_beats", Some(shown as f64), 0);

    // Every figure on the page is the number `figures` returns (and so
    // the number `--json` prints).
    let f = serde_json::to_value(figures(&input).unwrap()).unwrap();
    let mut flat = std::collections::BTreeMap::new();
    flatten(&f, &mut flat);
    for (name, shown) in &page.figures {
        let json = flat
            .get(name)
            .unwrap_or_else(|| panic!("{name} not in the figures"));
        match json {
            serde_json::Value::String(s) => assert_eq!(&shown.text, s, "{name}"),
            v => assert_eq!(shown.value, v.as_f64(), "{name}"),
        }
    }
}

fn rec_bpm(t: f64) -> f64 {
    HrSchedule::from_points(&[(0.0, 64.0), (60.0, 64.0), (100.0, 96.0), (180.0, 72.0)]).bpm_at(t)
}

/// Leaf values of a JSON object by key (keys are unique in `Figures`).
pub fn flatten(
    v: &serde_json::Value,
    out: &mut std::collections::BTreeMap<String, serde_json::Value>,
) {
    if let serde_json::Value::Object(m) = v {
        for (k, x) in m {
            if x.is_object() {
                flatten(x, out);
            } else {
                assert!(out.insert(k.clone(), x.clone()).is_none(), "key {k} twice");
            }
        }
    }
}

#[test]
fn navigation_and_cards_follow_what_is_on_the_page() {
    let rec = scenario();
    let samples: Vec<f64> = rec.samples.iter().map(|&x| f64::from(x)).collect();
    let config = Config::new(rec.sample_rate_hz as f32);
    let run = replay(&samples, config).unwrap();
    // No reference: no score section, no link to one, no score cards.
    let bare = read(&build(&ReportInput::new("bare", &samples, config, &run)).unwrap());
    assert!(
        !bare.sections.iter().any(|s| s == "score"),
        "{:?}",
        bare.sections
    );
    assert!(!bare
        .cards
        .iter()
        .any(|c| c == "f1_percent" || c == "hr_mae_bpm"));
    // A heart-rate series alone (as beside a BIDMC record): its error has
    // a card, as `plethwire report` prints it, and the score is linked.
    let rate = Reference {
        rate_source: "the generator's schedule".into(),
        rate: Some(
            (0..180)
                .map(|t| (t as f64, Some(rec_bpm(t as f64))))
                .collect(),
        ),
        ..Reference::default()
    };
    let mut input = ReportInput::new("rate only", &samples, config, &run);
    input.reference = Some(&rate);
    let page = read(&build(&input).unwrap());
    assert_eq!(page.sections.last().map(String::as_str), Some("score"));
    assert!(
        page.cards.iter().any(|c| c == "hr_mae_bpm"),
        "{:?}",
        page.cards
    );
    assert!(
        !page.cards.iter().any(|c| c == "f1_percent"),
        "{:?}",
        page.cards
    );
}

#[test]
fn flagged_and_reference_beats_are_drawn_in_a_chosen_excerpt() {
    let rec = scenario();
    let samples: Vec<f64> = rec.samples.iter().map(|&x| f64::from(x)).collect();
    let config = Config::new(125.0);
    let run = replay(&samples, config).unwrap();
    let reference = Reference {
        beats_source: "synthetic truth".into(),
        beats: Some(rec.peak_indices().iter().map(|&p| p as u64).collect()),
        ..Reference::default()
    };
    let mut input = ReportInput::new("motion", &samples, config, &run);
    input.reference = Some(&reference);
    // Over the hand movement at 70 s.
    input.excerpt = Some(Excerpt {
        start_s: 64.0,
        length_s: 16.0,
    });
    let page = read(&build(&input).unwrap());
    page.assert_figure("excerpt_start_s", Some(64.0), 1);
    page.assert_figure("excerpt_length_s", Some(16.0), 1);
    let in_window = |t: f64| (64.0..80.0).contains(&t);
    let flagged = run
        .beats
        .iter()
        .filter(|b| !b.flags.is_good() && in_window(b.peak_index as f64 / 125.0))
        .count();
    assert!(flagged > 0, "the movement flags beats");
    let svg = &page.svgs["excerpt"][0];
    // Good beats as filled dots, flagged ones as crosses of their own
    // colour, reference beats as triangles of theirs (plotters writes
    // colours in capitals).
    assert!(svg.contains("fill=\"#187A6E\""), "good beats drawn");
    assert!(svg.contains("stroke=\"#CD4A30\""), "flagged beats drawn");
    assert!(svg.contains("fill=\"#7646A0\""), "reference beats drawn");
    let truth_in = reference
        .beats
        .as_ref()
        .unwrap()
        .iter()
        .filter(|&&p| in_window(p as f64 / 125.0))
        .count();
    page.assert_figure("excerpt_reference_beats", Some(truth_in as f64), 0);
    // No reference series: no heart-rate error.
    assert!(!page.figures.contains_key("hr_mae_bpm"));
    assert!(page.figures.contains_key("f1_percent"));
}

#[test]
fn a_long_recording_is_thinned_for_drawing() {
    let rec = generate(&SynthOptions {
        sample_rate_hz: 50.0,
        duration_s: 5400.0,
        hr: HrSchedule::from_points(&[(0.0, 70.0), (2700.0, 110.0), (5400.0, 60.0)]),
        hr_variability_sd_ms: 10.0,
        seed: 5,
        ..SynthOptions::default()
    })
    .unwrap();
    let samples: Vec<f64> = rec.samples.iter().map(|&x| f64::from(x)).collect();
    let config = Config::new(50.0);
    let run = replay(&samples, config).unwrap();
    let html = build(&ReportInput::new("long", &samples, config, &run)).unwrap();
    let page = read(&html);
    assert_core_figures(&page, &run);
    let dots = page.svgs["heart-rate"][0].matches("<circle").count();
    assert!(run.beats.len() > 7000);
    assert!(
        dots < run.beats.len() / 2,
        "{dots} dots for {} beats",
        run.beats.len()
    );
    assert!(html.len() < 800_000, "{} bytes", html.len());
}

/// The shared recordings folder, or `None` with a SKIPPED line; with
/// `CI=true` a missing folder fails the test.
fn shared_data() -> Option<PathBuf> {
    let dir = std::env::var_os("PLETHWIRE_DATA")
        .map(PathBuf::from)
        .unwrap_or_else(|| PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../../shared/data"));
    if dir.is_dir() {
        return Some(dir);
    }
    let ci = std::env::var("CI").is_ok_and(|v| v.eq_ignore_ascii_case("true") || v == "1");
    assert!(
        !ci,
        "missing the shared recordings {} (CI=true: no skipping)",
        dir.display()
    );
    use std::io::Write;
    let _ = std::io::stderr().write_all(
        format!(
            "SKIPPED shared-data report: missing {} (with CI=true this is a failure)\n",
            dir.display()
        )
        .as_bytes(),
    );
    None
}

#[test]
fn shared_recordings_report_their_score() {
    let Some(data) = shared_data() else {
        return;
    };
    // CapnoBase (expert-reviewed peaks) and BIDMC (monitor's pulse rate).
    for record in ["capnobase/cb0009", "bidmc/bidmc01"] {
        let path = data.join(record);
        let rec = load(&path, &Source::default()).unwrap();
        let config = Config::new(rec.signal.fs as f32);
        let run = replay(&rec.signal.samples, config).unwrap();
        let refs = References::default();
        let reference = Reference::load(&rec.path, &refs, rec.signal.fs)
            .unwrap()
            .expect("a reference");
        let mut input = ReportInput::new(&rec.name, &rec.signal.samples, config, &run);
        input.reference = Some(&reference);
        let html = build(&input).unwrap();
        let page = read(&html);
        assert_core_figures(&page, &run);
        let scored = score_one(&rec, &run, &refs).unwrap();
        page.assert_figure_if(
            "f1_percent",
            scored.beats.and_then(|b| b.f1()).map(|f| 100.0 * f),
            2,
        );
        let mae = scored.heart_rate.and_then(|h| h.mae());
        page.assert_figure_if("hr_mae_bpm", mae, 2);
        // What the terminal prints against the reference has its card.
        if mae.is_some() {
            assert!(page.cards.iter().any(|c| c == "hr_mae_bpm"), "{record}");
        }
        assert!(html.len() < 1_000_000, "{record}: {} bytes", html.len());
    }
}
