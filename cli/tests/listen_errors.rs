//! `plethwire listen` refusing: a port that never appears, one that is
//! not a serial port, a record name already taken, bad options. Each is
//! one line on stderr and the documented exit status.

mod listen_support;

use listen_support::PATIENCE;
use std::path::Path;
use std::process::{Command, Output, Stdio};
use std::time::{Duration, Instant};

/// Run `plethwire listen ARGS`, killing it if it outlives [`PATIENCE`].
fn listen(args: &[&str]) -> Output {
    let mut child = Command::new(env!("CARGO_BIN_EXE_plethwire"))
        .arg("listen")
        .args(args)
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let deadline = Instant::now() + PATIENCE;
    while child.try_wait().unwrap().is_none() {
        if Instant::now() > deadline {
            child.kill().unwrap();
            panic!("plethwire listen {args:?} still running after {PATIENCE:?}");
        }
        std::thread::sleep(Duration::from_millis(20));
    }
    child.wait_with_output().unwrap()
}

fn one_line_error(out: &Output, code: i32, names: &str) -> String {
    let err = String::from_utf8_lossy(&out.stderr).into_owned();
    assert_eq!(out.status.code(), Some(code), "stderr: {err}");
    assert_eq!(err.lines().count(), 1, "{err}");
    assert!(
        err.starts_with("plethwire: ") && err.contains(names),
        "{err}"
    );
    assert!(!err.contains("panicked"), "{err}");
    err
}

fn s(p: &Path) -> &str {
    p.to_str().unwrap()
}

#[test]
fn a_port_that_never_appears_gives_up_after_the_wait() {
    let dir = tempfile::tempdir().unwrap();
    let port = dir.path().join("no-such-board");
    let out_dir = dir.path().join("rec");
    let out = listen(&["--port", s(&port), "--out", s(&out_dir), "--wait", "1"]);
    let err = one_line_error(&out, 1, "did not appear within");
    assert!(err.contains(s(&port)), "{err}");
    // Nothing was recorded, so no files.
    assert_eq!(std::fs::read_dir(&out_dir).unwrap().count(), 0);
    // The cautions were shown all the same.
    assert!(String::from_utf8_lossy(&out.stdout).contains("not a medical device"));
}

#[test]
fn a_file_that_is_not_a_serial_port_is_refused_at_once() {
    let dir = tempfile::tempdir().unwrap();
    let file = dir.path().join("notes.txt");
    std::fs::write(&file, "not a port").unwrap();
    let out = listen(&["--port", s(&file), "--out", s(dir.path()), "--wait", "600"]);
    let err = one_line_error(&out, 1, "is not a serial port but an ordinary file");
    assert!(err.contains("check that --port names"), "{err}");
    // A folder, and a device that is no terminal: the system's own words
    // for the latter ("Not a typewriter") are not the user's.
    let out = listen(&["--port", s(dir.path()), "--out", s(dir.path())]);
    one_line_error(&out, 1, "is not a serial port but a folder");
    let out = listen(&["--port", "/dev/null", "--out", s(dir.path())]);
    let err = one_line_error(&out, 1, "/dev/null: it is not a serial port");
    assert!(!err.contains("typewriter"), "{err}");
}

#[test]
fn a_record_name_in_use_is_not_overwritten() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("taken.pwire"), b"keep me").unwrap();
    let out = listen(&[
        "--port",
        "/nowhere",
        "--out",
        s(dir.path()),
        "--name",
        "taken",
    ]);
    one_line_error(&out, 1, "taken.pwire exists");
    assert_eq!(
        std::fs::read(dir.path().join("taken.pwire")).unwrap(),
        b"keep me"
    );
}

#[test]
fn bad_options_are_usage_errors() {
    let cases: [(&[&str], &str); 10] = [
        (&[], "--port"),
        (&["--port", "/x", "--baud", "0"], "--baud"),
        (&["--port", "/x", "--baud", "fast"], "--baud"),
        (&["--port", "/x", "--seconds", "0"], "--seconds"),
        (&["--port", "/x", "--wait", "nan"], "--wait"),
        (&["--port", "/x", "--rate", "-250"], "--rate"),
        (&["--port", "/x", "--seconds", "-5"], "--seconds"),
        (&["--port", "/x", "--name", "my session"], "--name"),
        (&["--port", "/x", "--name", ""], "--name"),
        (&["--port", "/x", "--jsn"], "did you mean '--json'"),
    ];
    for (args, names) in cases {
        let out = listen(args);
        one_line_error(&out, 2, names);
        assert!(out.stdout.is_empty(), "{args:?}");
    }
}

#[test]
fn help_states_the_cautions() {
    let out = listen(&["--help"]);
    assert!(out.status.success());
    let help = String::from_utf8_lossy(&out.stdout);
    for words in [
        "not a medical device",
        "not for diagnosis",
        "USB isolator",
        "IEC 60601-1",
    ] {
        assert!(help.contains(words), "help lacks '{words}':\n{help}");
    }
}
