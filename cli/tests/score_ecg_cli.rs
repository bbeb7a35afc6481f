//! `plethwire score --ecg` through the real binary, on a record invented
//! in a temp folder: a synthetic pulse (`plethwire_synth`) and, beside it,
//! an ECG-like spike train whose R peaks come 0.25 s before each true
//! pulse peak (a made-up arrival delay), never a copy of shared data.

use plethwire::replay::replay;
use plethwire_dsp::pipeline::Config;
use plethwire_records::{write_record, NewSignal};
use plethwire_synth::{generate, HrSchedule, SynthOptions};
use std::path::Path;
use std::process::Command;

fn plethwire(args: &[&str]) -> (i32, String, String) {
    let out = Command::new(env!("CARGO_BIN_EXE_plethwire"))
        .args(args)
        .output()
        .expect("run plethwire");
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// A 60 s, 75 bpm record with `PLETH` and `II` at 125 Hz; the number of
/// true beats, and the median of the pipeline's pulse peak minus the true
/// R peak, ms (the made-up 250 ms plus where the pipeline puts a peak on
/// this pulse shape).
fn make_record(dir: &Path, name: &str) -> (usize, f64) {
    let fs = 125.0;
    let s = generate(&SynthOptions {
        sample_rate_hz: fs,
        duration_s: 60.0,
        hr: HrSchedule::constant(75.0),
        ..SynthOptions::default()
    })
    .unwrap();
    let pleth: Vec<i32> = s
        .samples
        .iter()
        .map(|&v| (v * 1000.0).round() as i32)
        .collect();
    // R waves (10 ms wide) and T waves (40 ms wide, 0.25 of the height).
    let mut ecg = vec![0.0f64; s.samples.len()];
    for b in &s.beats {
        let r = b.peak_s - 0.25;
        for (at, width, height) in [(r, 0.010, 1.0), (r + 0.25, 0.040, 0.25)] {
            for (i, v) in ecg.iter_mut().enumerate() {
                let d = (i as f64 / fs - at) / width;
                if d.abs() < 5.0 {
                    *v += height * (-0.5 * d * d).exp();
                }
            }
        }
    }
    let ecg: Vec<i32> = ecg.iter().map(|v| (v * 1000.0).round() as i32).collect();
    let stored: Vec<f64> = pleth.iter().map(|&d| d as f64 / 1000.0).collect();
    let peaks = replay(&stored, Config::new(fs as f32)).unwrap().peaks();
    let mut offsets: Vec<f64> = s
        .beats
        .iter()
        .filter_map(|b| {
            peaks
                .iter()
                .map(|&p| p as f64 / fs - (b.peak_s - 0.25))
                .find(|d| (0.1..0.5).contains(d))
        })
        .collect();
    offsets.sort_unstable_by(f64::total_cmp);
    write_record(
        dir,
        name,
        fs,
        &[
            NewSignal::new("PLETH", "NU", 1000.0, 0),
            NewSignal::new("II", "mV", 1000.0, 0),
        ],
        &[pleth, ecg],
    )
    .unwrap();
    let beats = s.beats.iter().filter(|b| b.peak_s > 0.3).count();
    (beats, 1000.0 * offsets[offsets.len() / 2])
}

#[test]
fn pulses_match_the_r_peaks_moved_by_the_delay() {
    let dir = tempfile::tempdir().unwrap();
    let (beats, expected_delay) = make_record(dir.path(), "ward");
    let rec = dir.path().join("ward");
    let (code, out, err) = plethwire(&["score", rec.to_str().unwrap(), "--ecg", "II", "--json"]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    let e = &v["records"][0]["ecg"];
    let r_peaks = e["r_peaks"].as_u64().unwrap() as usize;
    assert!(
        r_peaks.abs_diff(beats) <= 1,
        "{r_peaks} R peaks, {beats} beats"
    );
    let se = v["pooled_ecg"]["tp"].as_f64().unwrap()
        / (v["pooled_ecg"]["tp"].as_f64().unwrap() + v["pooled_ecg"]["fn"].as_f64().unwrap());
    // The pipeline needs a few seconds to start: the first beats may be
    // missed, nothing else.
    assert!(se > 0.93, "{e}");
    assert!(v["pooled_ecg"]["fp"].as_u64().unwrap() <= 1, "{e}");
    let delay = e["delay_ms"].as_f64().unwrap();
    assert!(
        (delay - expected_delay).abs() <= 8.0,
        "{delay} vs {expected_delay}"
    );
    let (code, out, err) = plethwire(&["score", rec.to_str().unwrap(), "--ecg", "II"]);
    assert_eq!(code, 0, "{err}");
    // The ECG figures come as a table of their own after the beats table.
    let header = out
        .lines()
        .find(|l| l.starts_with("record") && l.contains("ECG Se"))
        .unwrap_or_else(|| panic!("no ECG table in:\n{out}"));
    assert!(header.contains("PAT ms"), "{out}");
}

#[test]
fn an_ecg_signal_the_record_lacks_is_one_line_naming_file_and_signals() {
    let dir = tempfile::tempdir().unwrap();
    make_record(dir.path(), "ward");
    let rec = dir.path().join("ward");
    let (code, out, err) = plethwire(&["score", rec.to_str().unwrap(), "--ecg", "V5"]);
    assert_eq!(code, 1, "{err}");
    assert!(out.is_empty(), "{out}");
    assert_eq!(err.lines().count(), 1, "{err}");
    assert!(!err.contains("panicked"), "{err}");
    for needle in ["ward.hea", "V5", "PLETH", "II"] {
        assert!(err.contains(needle), "{needle} not in {err}");
    }
}
