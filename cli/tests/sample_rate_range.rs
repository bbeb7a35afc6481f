//! One sample-rate range, 25 to 1000 Hz (plethwire-dsp's
//! `check_sample_rate`), with one message: a CSV recording outside it is
//! refused, `frontend --rate` outside it is refused, and `filter` designs
//! outside it with a warning (refusing only rates past 1 MHz).

mod common;

use common::plethwire;
use std::path::Path;

const RANGE: &str = "the sample rate must be between 25 and 1000 Hz";

/// A CSV of 20 s of a 1.2 Hz sine at `fs` with a time column in seconds.
fn csv_at(dir: &Path, fs: f64) -> String {
    let mut text = String::from("time_s,ppg\n");
    for i in 0..(20.0 * fs) as usize {
        let t = i as f64 / fs;
        text.push_str(&format!(
            "{t:.6},{}\n",
            (2.0 * std::f64::consts::PI * 1.2 * t).sin()
        ));
    }
    let path = dir.join(format!("at{fs}.csv"));
    std::fs::write(&path, text).unwrap();
    path.display().to_string()
}

#[test]
fn a_csv_outside_the_range_gets_the_one_message() {
    let dir = tempfile::tempdir().unwrap();
    for fs in [5.0, 2000.0] {
        let csv = csv_at(dir.path(), fs);
        let out = plethwire(dir.path(), &["replay", &csv, "--out", "out"]);
        let stderr = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(1), "{stderr}");
        assert_eq!(stderr.lines().count(), 1, "{stderr}");
        assert!(
            stderr.contains(&format!(
                "{RANGE}, not {fs} Hz (measured from the time column"
            )),
            "{stderr}"
        );
    }
}

#[test]
fn filter_warns_outside_the_range_and_refuses_absurd_rates() {
    let dir = tempfile::tempdir().unwrap();
    let out = plethwire(
        dir.path(),
        &[
            "filter",
            "--rate",
            "2000",
            "--band",
            "0.5:8",
            "--no-plot",
            "--json",
        ],
    );
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(0), "{stderr}");
    assert_eq!(
        stderr.trim_end(),
        format!("plethwire: warning: {RANGE}, not 2000 Hz for the beat pipeline; this filter is designed anyway, for other uses")
    );
    let r: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(r["warnings"].as_array().unwrap().len(), 1);
    // Inside the range: no warning.
    let out = plethwire(
        dir.path(),
        &["filter", "--rate", "250", "--band", "0.5:8", "--no-plot"],
    );
    assert!(out.status.success() && out.stderr.is_empty());
    for absurd in ["2e6", "1e308"] {
        let out = plethwire(
            dir.path(),
            &["filter", "--rate", absurd, "--band", "0.5:8", "--no-plot"],
        );
        let stderr = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(1), "{stderr}");
        assert_eq!(stderr.lines().count(), 1, "{stderr}");
        assert!(
            stderr.contains("refused: filters are designed at up to 1000000 Hz"),
            "{stderr}"
        );
    }
}

#[test]
fn frontend_refuses_a_rate_outside_the_range() {
    let dir = tempfile::tempdir().unwrap();
    let example = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/../examples/frontend-fingerclip.toml"
    );
    for rate in ["5", "2000"] {
        let out = plethwire(
            dir.path(),
            &["frontend", example, "--rate", rate, "--no-plot"],
        );
        let stderr = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{stderr}");
        assert!(
            stderr.contains(&format!("{RANGE}, not {rate} Hz")),
            "{stderr}"
        );
    }
}
