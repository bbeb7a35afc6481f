//! `plethwire score` and `replay` with `--motion`, through the real binary,
//! on records invented in a temp folder: a synthetic pulse
//! (`plethwire_synth`) at 75 bpm and, beside it, a made-up wrist
//! accelerometer (gravity on z, an arm swing on x), never a copy of shared
//! data.

mod common;

use common::write_truth;
use plethwire_records::{write_record, NewSignal};
use plethwire_synth::{generate, HrSchedule, SynthOptions};
use std::path::{Path, PathBuf};
use std::process::Command;

/// Run `plethwire args` in a fresh scratch folder (where its outputs go
/// unless `--out` says otherwise).
fn plethwire(args: &[&str]) -> (i32, String, String) {
    let scratch = tempfile::tempdir().unwrap();
    let out = Command::new(env!("CARGO_BIN_EXE_plethwire"))
        .args(args)
        .current_dir(scratch.path())
        .output()
        .expect("run plethwire");
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

const FS: f64 = 125.0;

/// A 90 s record `name` with `PLETH` (75 bpm, steady: 10 ms SD) and
/// `ACCX`, `ACCY`, `ACCZ` in g: a 1 g swing on x at `swing_hz` (none at
/// 0), gravity on z.
fn make_record(dir: &Path, name: &str, swing_hz: f64) -> PathBuf {
    let s = generate(&SynthOptions {
        sample_rate_hz: FS,
        duration_s: 90.0,
        hr: HrSchedule::constant(75.0),
        hr_variability_sd_ms: 10.0,
        ..SynthOptions::default()
    })
    .unwrap();
    let n = s.samples.len();
    let pleth: Vec<i32> = s
        .samples
        .iter()
        .map(|&v| (v * 1000.0).round() as i32)
        .collect();
    let g = |v: f64| (v * 10_000.0).round() as i32;
    let t = |i: usize| i as f64 / FS;
    let x: Vec<i32> = (0..n)
        .map(
            |i| g((2.0 * std::f64::consts::PI * swing_hz * t(i)).sin() * f64::from(swing_hz > 0.0)),
        )
        .collect();
    let y: Vec<i32> = (0..n)
        .map(|i| g(0.2 + 0.001 * ((i * 7919) % 13) as f64))
        .collect();
    let z: Vec<i32> = vec![g(1.0); n];
    write_record(
        dir,
        name,
        FS,
        &[
            NewSignal::new("PLETH", "NU", 1000.0, 0),
            NewSignal::new("ACCX", "g", 10_000.0, 0),
            NewSignal::new("ACCY", "g", 10_000.0, 0),
            NewSignal::new("ACCZ", "g", 10_000.0, 0),
        ],
        &[pleth, x, y, z],
    )
    .unwrap();
    write_truth(dir, name, &s);
    dir.join(name)
}

/// Beats and good beats of `score REC [extra...] --json`.
fn beats_and_good(rec: &Path, extra: &[&str]) -> (u64, u64) {
    let mut args = vec!["score", rec.to_str().unwrap(), "--json"];
    args.extend_from_slice(extra);
    let (code, out, err) = plethwire(&args);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    let s = &v["records"][0]["summary"];
    (
        s["beats"].as_u64().unwrap(),
        s["good_beats"].as_u64().unwrap(),
    )
}

const MOTION: [&str; 2] = ["--motion", "ACCX,ACCY,ACCZ"];

#[test]
fn an_arm_swinging_at_the_heart_rate_makes_the_beats_untrusted_but_finds_the_same_ones() {
    let dir = tempfile::tempdir().unwrap();
    // 1.25 Hz: one swing per beat at 75 bpm.
    let rec = make_record(dir.path(), "locked", 1.25);
    let (beats, good) = beats_and_good(&rec, &[]);
    let (beats_m, good_m) = beats_and_good(&rec, &MOTION);
    assert_eq!(beats, beats_m);
    assert!(good as f64 > 0.8 * beats as f64, "{good} of {beats}");
    assert!((good_m as f64) < 0.05 * beats as f64, "{good_m} of {beats}");
}

#[test]
fn a_swing_at_another_period_leaves_steady_beats_good() {
    let dir = tempfile::tempdir().unwrap();
    // 1.6 Hz (625 ms): 22 % from the 800 ms beat, 36 % from two swings.
    let rec = make_record(dir.path(), "apart", 1.6);
    let (beats, good) = beats_and_good(&rec, &[]);
    let (beats_m, good_m) = beats_and_good(&rec, &MOTION);
    assert_eq!(beats, beats_m);
    // The first beats have fewer than three intervals behind them.
    assert!(good_m + 3 >= good, "{good_m} vs {good} of {beats}");
}

#[test]
fn an_accelerometer_at_rest_changes_no_flag() {
    let dir = tempfile::tempdir().unwrap();
    let rec = make_record(dir.path(), "still", 0.0);
    let out = dir.path().join("out");
    let rec_s = rec.to_str().unwrap();
    let out_s = out.to_str().unwrap();
    let rows = |extra: &[&str]| {
        let mut args = vec!["replay", rec_s, "--out", out_s, "--beats-json", "--force"];
        args.extend_from_slice(extra);
        let (code, _, err) = plethwire(&args);
        assert_eq!(code, 0, "{err}");
        std::fs::read_to_string(out.join("still.pwire.json")).unwrap()
    };
    assert_eq!(rows(&[]), rows(&MOTION));
}

#[test]
fn replay_names_the_accelerometer_and_counts_the_flagged_beats() {
    let dir = tempfile::tempdir().unwrap();
    let rec = make_record(dir.path(), "locked", 1.25);
    let out = dir.path().join("out");
    let args = [
        "replay",
        rec.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--motion",
        "ACCX,ACCY,ACCZ",
        "--force",
    ];
    let (code, text, err) = plethwire(&args);
    assert_eq!(code, 0, "{err}");
    let line = text
        .lines()
        .find(|l| l.trim_start().starts_with("motion"))
        .unwrap_or_else(|| panic!("no motion line in:\n{text}"));
    assert!(line.contains("ACCX, ACCY, ACCZ"), "{line}");
    let mut json_args = args.to_vec();
    json_args.push("--json");
    let (code, text, err) = plethwire(&json_args);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&text).unwrap();
    let flagged = v["motion"]["flagged_beats"].as_u64().unwrap();
    let beats = v["summary"]["beats"].as_u64().unwrap();
    assert!(flagged as f64 > 0.9 * beats as f64, "{flagged} of {beats}");
}

#[test]
fn a_motion_signal_the_record_lacks_is_one_line_naming_file_and_signal() {
    let dir = tempfile::tempdir().unwrap();
    let rec = make_record(dir.path(), "wrist", 1.25);
    for command in ["score", "replay"] {
        let (code, out, err) =
            plethwire(&[command, rec.to_str().unwrap(), "--motion", "ACCX,ACCQ,ACCZ"]);
        assert_eq!(code, 1, "{err}");
        assert!(out.is_empty(), "{out}");
        assert_eq!(err.lines().count(), 1, "{err}");
        assert!(!err.contains("panicked"), "{err}");
        for needle in ["wrist.hea", "ACCQ", "--motion"] {
            assert!(err.contains(needle), "{needle} not in {err}");
        }
    }
}

#[test]
fn anything_but_three_names_is_a_usage_error() {
    let dir = tempfile::tempdir().unwrap();
    let rec = make_record(dir.path(), "wrist", 1.25);
    for bad in ["ACCX,ACCY", "ACCX,ACCY,ACCZ,ACCX", "ACCX,,ACCZ"] {
        let (code, _, err) = plethwire(&["score", rec.to_str().unwrap(), "--motion", bad]);
        assert_eq!(code, 2, "{err}");
        assert!(err.contains("X,Y,Z") && !err.contains("panicked"), "{err}");
    }
}

#[test]
fn csv_columns_serve_as_the_accelerometer_and_a_missing_one_is_named() {
    let dir = tempfile::tempdir().unwrap();
    let s = generate(&SynthOptions {
        sample_rate_hz: FS,
        duration_s: 60.0,
        hr: HrSchedule::constant(75.0),
        hr_variability_sd_ms: 10.0,
        ..SynthOptions::default()
    })
    .unwrap();
    let mut csv = String::from("time_s,pleth,ax,ay,az\n");
    for (i, v) in s.samples.iter().enumerate() {
        let t = i as f64 / FS;
        let swing = (2.0 * std::f64::consts::PI * 1.25 * t).sin();
        csv += &format!("{t:.4},{v},{swing:.4},0.2,1.0\n");
    }
    let path = dir.path().join("band.csv");
    std::fs::write(&path, csv).unwrap();
    write_truth(dir.path(), "band", &s);
    let p = path.to_str().unwrap();
    let (code, out, err) = plethwire(&[
        "score", p, "--signal", "pleth", "--json", "--motion", "ax,ay,az",
    ]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    let summary = &v["records"][0]["summary"];
    let (beats, good) = (
        summary["beats"].as_u64().unwrap(),
        summary["good_beats"].as_u64().unwrap(),
    );
    assert!(
        beats > 60 && (good as f64) < 0.05 * beats as f64,
        "{good} of {beats}"
    );
    let (code, out, err) = plethwire(&["score", p, "--signal", "pleth", "--motion", "ax,ay,aw"]);
    assert_eq!(code, 1, "{err}");
    assert!(out.is_empty() && err.lines().count() == 1, "{err}");
    for needle in ["band.csv", "aw"] {
        assert!(err.contains(needle), "{needle} not in {err}");
    }
}
