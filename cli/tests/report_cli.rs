//! `plethwire report` as a user runs it: the default file name, `--json`
//! printing the page's numbers, and one-line refusals.

mod common;
mod page_check;

use common::{plethwire, stdout_of_success};
use plethwire_synth::{generate, write_csv, HrSchedule, SynthOptions};
use std::collections::BTreeMap;

/// A minute of synthetic pulse at 100 Hz as `dir/session.csv`.
fn session(dir: &std::path::Path) {
    let rec = generate(&SynthOptions {
        duration_s: 60.0,
        hr: HrSchedule::from_points(&[(0.0, 58.0), (60.0, 84.0)]),
        seed: 3,
        ..SynthOptions::default()
    })
    .unwrap();
    let file = std::fs::File::create(dir.join("session.csv")).unwrap();
    write_csv(&rec, std::io::BufWriter::new(file)).unwrap();
}

fn leaves(v: &serde_json::Value, out: &mut BTreeMap<String, serde_json::Value>) {
    if let serde_json::Value::Object(m) = v {
        for (k, x) in m {
            if x.is_object() {
                leaves(x, out);
            } else {
                out.insert(k.clone(), x.clone());
            }
        }
    }
}

#[test]
fn json_prints_the_numbers_on_the_page() {
    let dir = tempfile::tempdir().unwrap();
    session(dir.path());
    let out = plethwire(
        dir.path(),
        &[
            "report",
            "session.csv",
            "--signal",
            "pleth",
            "--time-column",
            "time_s",
            "--json",
        ],
    );
    let json: serde_json::Value = serde_json::from_str(&stdout_of_success(&out)).unwrap();
    // Default: <record>.report.html in the current folder.
    assert_eq!(json["written"], "session.report.html");
    let html = std::fs::read_to_string(dir.path().join("session.report.html")).unwrap();
    let page = page_check::read(&html);
    let mut flat = BTreeMap::new();
    leaves(&json, &mut flat);
    assert!(page.figures.len() > 40, "{} figures", page.figures.len());
    for (name, shown) in &page.figures {
        match &flat[name] {
            serde_json::Value::String(s) => assert_eq!(&shown.text, s, "{name}"),
            v => assert_eq!(shown.value, v.as_f64(), "{name}"),
        }
    }
    assert_eq!(json["record"], "session");
    assert_eq!(json["sample_rate_hz"], 100.0);
    assert!(json["score"].is_null(), "no reference beside the CSV");
}

#[test]
fn out_and_excerpt_are_honoured() {
    let dir = tempfile::tempdir().unwrap();
    session(dir.path());
    let out = plethwire(
        dir.path(),
        &[
            "report",
            "session.csv",
            "--signal",
            "pleth",
            "--rate",
            "100",
            "--excerpt",
            "50:30",
            "--out",
            "sub.html",
        ],
    );
    let text = stdout_of_success(&out);
    assert!(text.starts_with("session: wrote sub.html ("), "{text}");
    let page = page_check::read(&std::fs::read_to_string(dir.path().join("sub.html")).unwrap());
    // Cut to the recording's end.
    page.assert_figure("excerpt_start_s", Some(50.0), 1);
    page.assert_figure("excerpt_length_s", Some(10.0), 1);
}

fn refused(args: &[&str]) -> (i32, String) {
    let dir = tempfile::tempdir().unwrap();
    session(dir.path());
    let out = plethwire(dir.path(), args);
    let err = String::from_utf8(out.stderr).unwrap();
    assert_eq!(err.lines().count(), 1, "one line: {err}");
    assert!(err.starts_with("plethwire: "), "{err}");
    (out.status.code().unwrap(), err)
}

#[test]
fn bad_requests_are_refused_in_one_line() {
    let csv = [
        "report",
        "session.csv",
        "--signal",
        "pleth",
        "--rate",
        "100",
    ];
    let with = |extra: &[&'static str]| -> Vec<&'static str> {
        csv.iter().chain(extra).copied().collect()
    };
    let (code, err) = refused(&with(&["--excerpt", "75:10"]));
    assert_eq!(code, 1, "{err}");
    assert!(err.contains("outside the recording"), "{err}");
    let (code, err) = refused(&with(&["--excerpt", "75"]));
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("START:SECONDS"), "{err}");
    let (code, err) = refused(&with(&["--reference", "../x"]));
    assert_eq!(code, 2, "{err}");
    let (code, err) = refused(&[
        "report",
        "missing.csv",
        "--signal",
        "pleth",
        "--rate",
        "100",
    ]);
    assert_eq!(code, 1, "{err}");
    let (code, err) = refused(&with(&["--out", "no/such/folder/x.html"]));
    assert_eq!(code, 1, "{err}");
    assert!(err.contains("cannot write"), "{err}");
}
