//! No command writes over what it did not make: annotator names that are
//! WFDB record parts or a recording's own files, outputs that already
//! exist, and the default output folder (the current one, for every
//! command). Recordings are invented in a temp folder (a synthetic pulse,
//! `plethwire_synth`).

use std::path::{Path, PathBuf};

mod common;
use common::run_in as plethwire;

/// A 30 s, 72 bpm record `name` in `dir` with its true beats as
/// `<name>.peak` (the expert reference of a real record).
fn make_record(dir: &Path, name: &str) -> PathBuf {
    common::synthetic_record(dir, name, 30.0, 72.0, true)
}

/// Every file in `dir` with its bytes.
fn snapshot(dir: &Path) -> Vec<(PathBuf, Vec<u8>)> {
    let mut files: Vec<(PathBuf, Vec<u8>)> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.is_file())
        .map(|p| {
            let bytes = std::fs::read(&p).unwrap();
            (p, bytes)
        })
        .collect();
    files.sort();
    files
}

/// A refusal: exit `code`, nothing on stdout, one line naming `names`.
fn refused(got: (i32, String, String), code: i32, names: &[&str]) {
    let (c, out, err) = got;
    assert_eq!(c, code, "exit {c}: {err}");
    assert!(out.is_empty(), "{out}");
    assert_eq!(err.lines().count(), 1, "{err}");
    for n in names {
        assert!(err.contains(n), "{n} not in {err}");
    }
}

#[test]
fn the_expert_reference_is_never_taken_as_an_annotator() {
    let data = tempfile::tempdir().unwrap();
    let rec = make_record(data.path(), "cb");
    let rec_s = rec.to_str().unwrap();
    let before = snapshot(data.path());
    // Run from the recording's own folder: where the old default wrote.
    for cwd in [data.path(), &data.path().join("..")] {
        for args in [
            &["replay", rec_s, "--annotator", "peak"][..],
            &[
                "replay",
                rec_s,
                "--annotator",
                "peak",
                "--out",
                data.path().to_str().unwrap(),
            ],
            &["emulate", rec_s, "--annotator", "peak"],
        ] {
            refused(plethwire(cwd, args), 1, &["cb.peak", "--force"]);
        }
    }
    assert_eq!(snapshot(data.path()), before);
    // Scored against itself no more: the reference still holds the truth.
    let (code, out, err) = plethwire(data.path(), &["score", rec_s, "--json"]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert!(v["records"][0]["reference_beats"].as_u64().unwrap() >= 35);
}

#[test]
fn record_parts_are_refused_even_when_forced() {
    let data = tempfile::tempdir().unwrap();
    let rec = make_record(data.path(), "r");
    let rec_s = rec.to_str().unwrap();
    let before = snapshot(data.path());
    for name in ["hea", "dat"] {
        for force in [&[][..], &["--force"]] {
            for command in ["replay", "emulate"] {
                let mut args = vec![command, rec_s, "--annotator", name];
                args.extend_from_slice(force);
                refused(plethwire(data.path(), &args), 2, &[name, "--annotator"]);
            }
        }
    }
    assert_eq!(snapshot(data.path()), before);
    // The record still loads.
    let (code, _, err) = plethwire(data.path(), &["replay", rec_s, "--annotator", "ok"]);
    assert_eq!(code, 0, "{err}");
}

#[test]
fn a_csv_recording_is_never_its_own_output() {
    let data = tempfile::tempdir().unwrap();
    let mut csv = String::from("time_s,pleth\n");
    for i in 0..3000 {
        let t = i as f64 / 100.0;
        csv += &format!(
            "{t:.2},{:.4}\n",
            (2.0 * std::f64::consts::PI * 1.2 * t).sin()
        );
    }
    let path = data.path().join("clip.csv");
    std::fs::write(&path, &csv).unwrap();
    let p = path.to_str().unwrap();
    refused(
        plethwire(data.path(), &["replay", p, "--annotator", "csv", "--force"]),
        1,
        &["clip.csv", "never"],
    );
    assert_eq!(std::fs::read_to_string(&path).unwrap(), csv);
}

#[test]
fn outputs_go_to_the_current_folder_and_are_not_replaced_without_force() {
    let data = tempfile::tempdir().unwrap();
    let here = tempfile::tempdir().unwrap();
    let rec = make_record(data.path(), "r");
    let rec_s = rec.to_str().unwrap();
    let before = snapshot(data.path());
    let (code, out, err) = plethwire(here.path(), &["replay", rec_s, "--beats-csv"]);
    assert_eq!(code, 0, "{err}");
    assert!(out.contains("r.pwire"), "{out}");
    assert!(here.path().join("r.pwire").is_file());
    assert!(here.path().join("r.pwire.csv").is_file());
    assert_eq!(snapshot(data.path()), before, "nothing beside the record");
    // Again: refused, nothing touched, even the file that is not there yet.
    std::fs::remove_file(here.path().join("r.pwire")).unwrap();
    std::fs::write(here.path().join("r.pwire"), b"mine").unwrap();
    refused(
        plethwire(here.path(), &["replay", rec_s, "--beats-json"]),
        1,
        &["r.pwire", "already exists", "--force"],
    );
    assert_eq!(std::fs::read(here.path().join("r.pwire")).unwrap(), b"mine");
    assert!(!here.path().join("r.pwire.json").exists());
    // With --force it is replaced.
    let (code, _, err) = plethwire(here.path(), &["replay", rec_s, "--force"]);
    assert_eq!(code, 0, "{err}");
    assert_ne!(std::fs::read(here.path().join("r.pwire")).unwrap(), b"mine");
}

#[test]
fn the_report_page_is_not_replaced_without_force() {
    let data = tempfile::tempdir().unwrap();
    let here = tempfile::tempdir().unwrap();
    let rec = make_record(data.path(), "r");
    let rec_s = rec.to_str().unwrap();
    let page = here.path().join("r.report.html");
    std::fs::write(&page, "my notes").unwrap();
    refused(
        plethwire(here.path(), &["report", rec_s]),
        1,
        &["r.report.html", "--force"],
    );
    assert_eq!(std::fs::read_to_string(&page).unwrap(), "my notes");
    let (code, _, err) = plethwire(here.path(), &["report", rec_s, "--force"]);
    assert_eq!(code, 0, "{err}");
    assert!(std::fs::read_to_string(&page).unwrap().contains("<svg"));
}

#[test]
fn the_demo_replaces_only_its_own_files() {
    let here = tempfile::tempdir().unwrap();
    // A folder of someone's own recording called `ride`.
    let theirs = here.path().join("theirs");
    std::fs::create_dir(&theirs).unwrap();
    std::fs::write(theirs.join("ride.hea"), "ride 1 125 10\n").unwrap();
    let demo = |out: &str, extra: &[&str]| {
        let mut args = vec!["demo", "--no-board", "--json", "--out", out];
        args.extend_from_slice(extra);
        plethwire(here.path(), &args)
    };
    refused(demo("theirs", &[]), 1, &["ride.hea", "--force"]);
    assert_eq!(
        std::fs::read_to_string(theirs.join("ride.hea")).unwrap(),
        "ride 1 125 10\n"
    );
    // Its own folder, twice: the second run replaces the first's files.
    for _ in 0..2 {
        let (code, _, err) = demo("mine", &[]);
        assert_eq!(code, 0, "{err}");
    }
    assert!(here.path().join("mine/ride.report.html").is_file());
    // The default folder is in the current one.
    let (code, _, err) = plethwire(here.path(), &["demo", "--no-board", "--json"]);
    assert_eq!(code, 0, "{err}");
    assert!(here.path().join("plethwire-demo/ride.hea").is_file());
    let (code, _, err) = demo("theirs", &["--force"]);
    assert_eq!(code, 0, "{err}");
}

#[test]
fn the_filter_plot_is_not_replaced_without_force() {
    let here = tempfile::tempdir().unwrap();
    let plot = here.path().join("plethwire-filter.svg");
    std::fs::write(&plot, "my drawing").unwrap();
    let args = ["filter", "--rate", "250", "--band", "0.5:8"];
    refused(
        plethwire(here.path(), &args),
        1,
        &["plethwire-filter.svg", "--force"],
    );
    assert_eq!(std::fs::read_to_string(&plot).unwrap(), "my drawing");
    let mut forced = args.to_vec();
    forced.push("--force");
    let (code, _, err) = plethwire(here.path(), &forced);
    assert_eq!(code, 0, "{err}");
    assert!(std::fs::read_to_string(&plot).unwrap().contains("<svg"));
}

#[test]
fn the_frontend_plot_needs_force_and_never_replaces_the_circuit() {
    let here = tempfile::tempdir().unwrap();
    let circuit = here.path().join("clip.toml");
    let example = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/../examples/frontend-fingerclip.toml"
    );
    std::fs::copy(example, &circuit).unwrap();
    let text = std::fs::read_to_string(&circuit).unwrap();
    let c = circuit.to_str().unwrap();
    refused(
        plethwire(here.path(), &["frontend", c, "--plot", c, "--force"]),
        1,
        &["clip.toml", "never"],
    );
    assert_eq!(std::fs::read_to_string(&circuit).unwrap(), text);
    let plot = here.path().join("plethwire-frontend.svg");
    std::fs::write(&plot, "my drawing").unwrap();
    refused(
        plethwire(here.path(), &["frontend", c]),
        1,
        &["plethwire-frontend.svg", "--force"],
    );
    assert_eq!(std::fs::read_to_string(&plot).unwrap(), "my drawing");
    let (code, _, err) = plethwire(here.path(), &["frontend", c, "--force"]);
    assert_eq!(code, 0, "{err}");
    assert!(std::fs::read_to_string(&plot).unwrap().contains("<svg"));
}
