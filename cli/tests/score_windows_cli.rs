//! `plethwire score` with a reference window table beside a record, and
//! with a malformed one, through the real binary. The record is invented
//! (a synthetic 72 bpm pulse, `plethwire_synth`, after Tang et al. 2020,
//! Sci Rep 10:13883) in a temp folder, never a copy of shared data.

mod common;

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

/// A 40 s, 72 bpm record named `name` in `dir`.
fn make_record(dir: &Path, name: &str) {
    common::synthetic_record(dir, name, 40.0, 72.0, false);
}

/// 8 s windows every 2 s from 4 s on, every one saying `bpm`.
fn windows(bpm: f64) -> String {
    let mut t = String::from("window_start_s,window_end_s,bpm\n");
    for k in 0..14 {
        let start = 4 + 2 * k;
        t += &format!("{start},{},{bpm}\n", start + 8);
    }
    t
}

#[test]
fn windows_of_a_steady_pulse_agree_with_its_rate() {
    let dir = tempfile::tempdir().unwrap();
    make_record(dir.path(), "w");
    // The generator's own rate in the table (the truth of the scenario),
    // and a wrong one 20 bpm off under another suffix.
    std::fs::write(dir.path().join("wbpm.csv"), windows(72.0)).unwrap();
    std::fs::write(dir.path().join("w.off.csv"), windows(92.0)).unwrap();
    let rec = dir.path().join("w");
    let rec = rec.to_str().unwrap();
    let (code, out, err) = plethwire(&["score", rec, "--json"]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    let good = &v["records"][0]["windows"]["good"];
    assert_eq!(good["windows"], 14);
    assert_eq!(good["coverage"], 1.0, "{good}");
    assert_eq!(good["within_share"], 1.0, "{good}");
    assert!(good["hr_mae_bpm"].as_f64().unwrap() < 3.0, "{good}");
    assert_eq!(v["pooled_windows"]["all"]["windows"], 14);

    let (code, out, err) = plethwire(&["score", rec, "--window-suffix", ".off.csv", "--json"]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["records"][0]["windows"]["good"]["within_share"], 0.0);

    let (code, out, _) = plethwire(&["score", rec]);
    assert_eq!(code, 0);
    // The window figures come as a table of their own after the beats table.
    let header = out
        .lines()
        .find(|l| l.starts_with("record") && l.contains("cov %"))
        .unwrap_or_else(|| panic!("no window table in:\n{out}"));
    assert!(header.ends_with("all MAE"), "{header}");
}

#[test]
fn a_malformed_window_table_is_one_line_naming_it() {
    let dir = tempfile::tempdir().unwrap();
    make_record(dir.path(), "m");
    std::fs::write(dir.path().join("mbpm.csv"), "window_start_s,bpm\n0,70\n").unwrap();
    let (code, out, err) = plethwire(&["score", dir.path().join("m").to_str().unwrap()]);
    assert_eq!(code, 1, "{out}");
    assert_eq!(err.trim_end().lines().count(), 1, "{err}");
    assert!(
        err.contains("mbpm.csv") && err.contains("window_end_s"),
        "{err}"
    );
}
