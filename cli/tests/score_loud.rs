//! `plethwire score` and `report --reference` fail loudly: a missing or
//! misspelt reference, or nothing to compare, is one line and exit 1; a
//! record given twice counts once; the JSON carries the figures the table
//! shows. Recordings are invented in a temp folder (a synthetic pulse,
//! `plethwire_synth`).

use plethwire_records::{annotation_path, write_annotations};
use std::path::{Path, PathBuf};

mod common;
use common::run_in as plethwire;

/// A 30 s, 72 bpm record `name` in `dir`; with `truth`, its true beats
/// as `<name>.peak`.
fn make_record(dir: &Path, name: &str, truth: bool) -> PathBuf {
    common::synthetic_record(dir, name, 30.0, 72.0, truth)
}

fn one_line_refusal(got: (i32, String, String), names: &[&str]) {
    let (code, out, err) = got;
    assert_eq!(code, 1, "exit {code}: {err}\n{out}");
    assert!(out.is_empty(), "{out}");
    assert_eq!(err.lines().count(), 1, "{err}");
    for n in names {
        assert!(err.contains(n), "{n} not in {err}");
    }
}

#[test]
fn a_misspelt_or_missing_reference_is_one_line_naming_the_files() {
    let dir = tempfile::tempdir().unwrap();
    let a = make_record(dir.path(), "a", true);
    let b = make_record(dir.path(), "b", false);
    let (a_s, b_s) = (a.to_str().unwrap(), b.to_str().unwrap());
    let d = dir.path();
    // Misspelt: the file named, and the one there is.
    one_line_refusal(
        plethwire(d, &["score", a_s, "--reference", "peek"]),
        &["a.peek", "--reference", "peak"],
    );
    // A record with no reference of any kind, beside one that has.
    one_line_refusal(
        plethwire(d, &["score", a_s, b_s]),
        &["b.peak", "bn.csv", "bbpm.csv", "b.rr.txt"],
    );
    one_line_refusal(plethwire(d, &["score", a_s, b_s, "--json"]), &["b.peak"]);
    // A named table must be there too.
    one_line_refusal(
        plethwire(d, &["score", a_s, "--rate-suffix", "_hr.csv"]),
        &["a_hr.csv", "--rate-suffix"],
    );
    // The same for the report's named reference.
    one_line_refusal(
        plethwire(d, &["report", a_s, "--reference", "peek"]),
        &["a.peek", "peak"],
    );
    assert!(!d.join("a.report.html").exists());
}

#[test]
fn nothing_to_compare_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    let a = make_record(dir.path(), "a", false);
    // A reference file that holds no beat.
    write_annotations(annotation_path(&a, "peak"), &[]).unwrap();
    one_line_refusal(
        plethwire(dir.path(), &["score", a.to_str().unwrap()]),
        &["nothing could be scored", "a"],
    );
}

#[test]
fn a_record_given_twice_counts_once_and_json_has_the_figures() {
    let dir = tempfile::tempdir().unwrap();
    let a = make_record(dir.path(), "a", true);
    let a_s = a.to_str().unwrap();
    let hea = dir.path().join("a.hea");
    let once = plethwire(dir.path(), &["score", a_s, "--json"]);
    let thrice = plethwire(
        dir.path(),
        &[
            "score",
            a_s,
            hea.to_str().unwrap(),
            dir.path().to_str().unwrap(),
            "--json",
        ],
    );
    assert_eq!(once.0, 0, "{}", once.2);
    assert_eq!(thrice.0, 0, "{}", thrice.2);
    let v1: serde_json::Value = serde_json::from_str(&once.1).unwrap();
    let v3: serde_json::Value = serde_json::from_str(&thrice.1).unwrap();
    assert_eq!(v3["records"].as_array().unwrap().len(), 1);
    assert_eq!(v3["pooled_beats"], v1["pooled_beats"]);
    // Se, +P and F1 beside the counts, as the table prints them
    // (ANSI/AAMI EC57 practice: Se = TP/(TP+FN), +P = TP/(TP+FP)).
    let p = &v1["pooled_beats"];
    let tp = p["tp"].as_f64().unwrap();
    let fp = p["fp"].as_f64().unwrap();
    let r = &v1["records"][0]["beats"];
    let fn_ = v1["records"][0]["reference_beats"].as_f64().unwrap() - tp;
    for (key, want) in [
        ("se_percent", 100.0 * tp / (tp + fn_)),
        ("ppv_percent", 100.0 * tp / (tp + fp)),
        ("f1_percent", 200.0 * tp / (2.0 * tp + fp + fn_)),
    ] {
        let got = p[key].as_f64().unwrap_or_else(|| panic!("no {key} in {p}"));
        assert!((got - want).abs() < 1e-9, "{key}: {got} vs {want}");
        assert_eq!(r[key], p[key], "{key}");
    }
    // The peaks' mean absolute error against the reference beats, ms:
    // matched pairs lie within the ±150 ms window.
    let t = &v1["pooled_peak_timing"];
    let mae = t["mae_ms"]
        .as_f64()
        .unwrap_or_else(|| panic!("no mae_ms: {t}"));
    assert!((0.0..=150.0).contains(&mae), "{t}");
    assert_eq!(v1["records"][0]["peak_timing"]["mae_ms"], t["mae_ms"]);
    // The table's pooled row says the same.
    let (code, table, _) = plethwire(dir.path(), &["score", a_s, a_s]);
    assert_eq!(code, 0);
    assert_eq!(table.lines().filter(|l| l.starts_with("a ")).count(), 1);
}

#[test]
fn json_heart_rate_has_its_mean_absolute_error() {
    let dir = tempfile::tempdir().unwrap();
    let a = make_record(dir.path(), "a", false);
    // A reference heart rate of 70 bpm once a second (ours is about 72).
    let mut table = String::from("time_s,pulse_bpm\n");
    for t in 0..30 {
        table += &format!("{t},70\n");
    }
    std::fs::write(dir.path().join("an.csv"), table).unwrap();
    let (code, out, err) = plethwire(dir.path(), &["score", a.to_str().unwrap(), "--json"]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    let h = &v["pooled_heart_rate"];
    let mae = h["hr_mae_bpm"]
        .as_f64()
        .unwrap_or_else(|| panic!("no hr_mae_bpm: {h}"));
    let want = h["abs_sum"].as_f64().unwrap() / h["count"].as_f64().unwrap();
    assert!((mae - want).abs() < 1e-12, "{mae} vs {want}");
    assert!((1.0..4.0).contains(&mae), "{mae}");
    assert_eq!(v["records"][0]["heart_rate"]["hr_mae_bpm"], h["hr_mae_bpm"]);
}
