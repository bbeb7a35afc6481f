//! `plethwire replay` and `plethwire score` on good and malformed inputs,
//! through the real binary. Recordings here are invented in a temp folder
//! (a synthetic pulse, `plethwire_synth`), never copies of shared data.

mod common;

use std::path::Path;
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

/// A 30 s, 72 bpm record in format 16 named `name` in `dir`.
fn make_record(dir: &Path, name: &str) {
    common::synthetic_record(dir, name, 30.0, 72.0, false);
}

fn one_line_failure(args: &[&str], names: &str) {
    let (code, stdout, stderr) = plethwire(args);
    assert_eq!(code, 1, "{args:?}: exit {code}, stderr {stderr}");
    assert!(stdout.is_empty(), "{args:?}: {stdout}");
    assert_eq!(stderr.lines().count(), 1, "{args:?}: {stderr}");
    assert!(!stderr.contains("panicked"), "{stderr}");
    assert!(
        stderr.starts_with("plethwire: ") && stderr.contains(names),
        "{args:?}: {stderr}"
    );
}

#[test]
fn replay_writes_annotations_and_a_summary() {
    let dir = tempfile::tempdir().unwrap();
    make_record(dir.path(), "ride");
    let rec = dir.path().join("ride");
    let (code, out, err) = plethwire(&[
        "replay",
        rec.to_str().unwrap(),
        "--json",
        "--beats-json",
        "--out",
        dir.path().to_str().unwrap(),
    ]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    let beats = v["summary"]["beats"].as_u64().unwrap();
    assert!(
        (33..=37).contains(&beats),
        "{beats} beats in 30 s at 72 bpm"
    );
    let hr = v["summary"]["median_hr_bpm"]["mean"].as_f64().unwrap();
    assert!((hr - 72.0).abs() < 2.0, "{hr}");
    assert!(dir.path().join("ride.pwire").is_file());
    assert!(dir.path().join("ride.pwire.json").is_file());
}

#[test]
fn malformed_recordings_give_one_line_naming_the_file() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    // Truncated .dat.
    make_record(d, "cut");
    let dat = d.join("cut.dat");
    let bytes = std::fs::read(&dat).unwrap();
    std::fs::write(&dat, &bytes[..bytes.len() / 3]).unwrap();
    one_line_failure(&["replay", d.join("cut").to_str().unwrap()], "cut.dat");
    // A header with a format code that does not exist.
    make_record(d, "odd");
    let hea = d.join("odd.hea");
    let text = std::fs::read_to_string(&hea)
        .unwrap()
        .replace(" 16 ", " 999 ");
    std::fs::write(&hea, text).unwrap();
    one_line_failure(&["replay", d.join("odd").to_str().unwrap()], "odd.hea");
    // A CSV with text in the number column.
    let csv = d.join("words.csv");
    std::fs::write(&csv, "time_s,pleth\n0.00,1.0\n0.01,one\n0.02,1.2\n").unwrap();
    one_line_failure(
        &[
            "replay",
            csv.to_str().unwrap(),
            "--signal",
            "pleth",
            "--rate",
            "100",
        ],
        "words.csv",
    );
    // An empty file, as a CSV and as a header.
    let empty = d.join("empty.csv");
    std::fs::write(&empty, "").unwrap();
    one_line_failure(
        &[
            "replay",
            empty.to_str().unwrap(),
            "--signal",
            "pleth",
            "--rate",
            "100",
        ],
        "empty.csv",
    );
    std::fs::write(d.join("blank.hea"), "").unwrap();
    one_line_failure(&["replay", d.join("blank").to_str().unwrap()], "blank.hea");
    // A record that is not there, a signal that is not in it.
    one_line_failure(&["replay", d.join("nothing").to_str().unwrap()], "nothing");
    make_record(d, "one");
    one_line_failure(
        &["replay", d.join("one").to_str().unwrap(), "--signal", "ECG"],
        "PLETH",
    );
    // A CSV without a rate.
    let ok = d.join("ok.csv");
    std::fs::write(&ok, "pleth\n1\n2\n3\n").unwrap();
    one_line_failure(
        &["replay", ok.to_str().unwrap(), "--signal", "pleth"],
        "ok.csv",
    );
}

#[test]
fn score_reports_pooled_counts_against_reference_annotations() {
    let dir = tempfile::tempdir().unwrap();
    make_record(dir.path(), "a");
    make_record(dir.path(), "b");
    // The pipeline's own beats as the reference: every beat must match.
    for name in ["a", "b"] {
        let rec = dir.path().join(name);
        let (code, _, err) = plethwire(&[
            "replay",
            rec.to_str().unwrap(),
            "--annotator",
            "ref",
            "--out",
            dir.path().to_str().unwrap(),
        ]);
        assert_eq!(code, 0, "{err}");
    }
    let (code, out, err) = plethwire(&[
        "score",
        dir.path().to_str().unwrap(),
        "--reference",
        "ref",
        "--json",
    ]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["records"].as_array().unwrap().len(), 2);
    assert_eq!(v["pooled_beats"]["fp"], 0);
    assert_eq!(v["pooled_beats"]["fn"], 0);
    assert!(v["pooled_beats"]["tp"].as_u64().unwrap() >= 66);
    let (code, out, _) = plethwire(&["score", dir.path().to_str().unwrap(), "--reference", "ref"]);
    assert_eq!(code, 0);
    assert!(out.lines().any(|l| l.starts_with("pooled")), "{out}");
}
