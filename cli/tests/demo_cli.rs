//! `plethwire demo` end to end without the emulated board: the ride is
//! made, streamed, scored against its own true beats, saved and reported.
//! (With the board: tests/tests/demo_with_board.rs.)

use std::process::Command;

#[test]
fn the_demo_finds_the_rides_beats_and_writes_its_files() {
    let dir = tempfile::tempdir().unwrap();
    let out = Command::new(env!("CARGO_BIN_EXE_plethwire"))
        .args(["demo", "--no-board", "--json", "--out"])
        .arg(dir.path())
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    // Truth: the generator's beats (synthetic ride, a scenario of our own).
    let tp = v["against_truth"]["tp"].as_f64().unwrap();
    let fp = v["against_truth"]["fp"].as_f64().unwrap();
    let fn_ = v["against_truth"]["fn"].as_f64().unwrap();
    let f1 = 2.0 * tp / (2.0 * tp + fp + fn_);
    assert!(f1 > 0.97, "F1 {f1} against the ride's true beats");
    assert!(v["true_beats"].as_u64().unwrap() > 350);
    assert!(v["board"]["not_run"]
        .as_str()
        .unwrap()
        .contains("--no-board"));
    for name in [
        "ride.hea",
        "ride.dat",
        "ride.truth",
        "ride.pwire",
        "ride.report.html",
    ] {
        assert!(dir.path().join(name).is_file(), "{name} missing");
    }
    let page = std::fs::read_to_string(dir.path().join("ride.report.html")).unwrap();
    assert!(page.contains("<svg") && !page.contains("<script"));
    // The saved ride replays to the same beats the demo found.
    let replay = Command::new(env!("CARGO_BIN_EXE_plethwire"))
        .args(["replay", "--json", "--annotator", "again", "--out"])
        .arg(dir.path())
        .arg(dir.path().join("ride"))
        .output()
        .unwrap();
    assert!(replay.status.success());
    let r: serde_json::Value = serde_json::from_slice(&replay.stdout).unwrap();
    assert_eq!(r["summary"]["beats"], v["summary"]["beats"]);
    assert_eq!(
        std::fs::read(dir.path().join("ride.again")).unwrap(),
        std::fs::read(dir.path().join("ride.pwire")).unwrap()
    );
}

#[test]
fn a_bad_speed_is_a_usage_error() {
    let out = Command::new(env!("CARGO_BIN_EXE_plethwire"))
        .args(["demo", "--speed", "-3"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert_eq!(String::from_utf8_lossy(&out.stderr).lines().count(), 1);
}
