//! Recordings that claim more than they hold, through the real binary:
//! each is refused with exit 1 and one line, never a hang or a panic.
//! Recordings here are invented in a temp folder (a synthetic pulse).

mod common;

use common::synthetic_record;
use std::path::Path;
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

/// Run `plethwire args` in `cwd`: (exit code, stdout, stderr). A run that
/// has not ended after a generous guard is killed and fails the test (a
/// reader blocked on a FIFO would otherwise hang the tests forever).
fn plethwire(cwd: &Path, args: &[&str]) -> (i32, String, String) {
    let mut child = Command::new(env!("CARGO_BIN_EXE_plethwire"))
        .args(args)
        .current_dir(cwd)
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("run plethwire");
    let guard = Instant::now() + Duration::from_secs(60);
    while child.try_wait().unwrap().is_none() {
        if Instant::now() > guard {
            child.kill().unwrap();
            panic!("plethwire {args:?} blocked");
        }
        std::thread::sleep(Duration::from_millis(20));
    }
    let out = child.wait_with_output().unwrap();
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// Expect exit 1 and one line on stderr holding `says`.
fn refused(cwd: &Path, args: &[&str], says: &str) {
    let (code, _, stderr) = plethwire(cwd, args);
    assert_eq!(code, 1, "{args:?}: exit {code}, stderr {stderr}");
    assert_eq!(stderr.lines().count(), 1, "{args:?}: {stderr}");
    assert!(!stderr.contains("panicked"), "{stderr}");
    assert!(stderr.contains(says), "{args:?}: {stderr}");
}

#[test]
fn fifo_folder_and_huge_count_are_one_line_refusals() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let status = Command::new("mkfifo")
        .arg(d.join("pipe.hea"))
        .status()
        .unwrap();
    assert!(status.success(), "mkfifo");
    refused(
        d,
        &["replay", d.join("pipe").to_str().unwrap()],
        "named pipe (FIFO)",
    );
    std::fs::create_dir(d.join("folder")).unwrap();
    refused(
        d,
        &["replay", d.join("folder").to_str().unwrap()],
        "is a folder, not a WFDB record",
    );
    synthetic_record(d, "huge", 20.0, 72.0, false);
    let hea = d.join("huge.hea");
    let text = std::fs::read_to_string(&hea).unwrap();
    let first = text.lines().next().unwrap();
    let fields: Vec<&str> = first.split_whitespace().collect();
    let bigger = format!(
        "{} {} {} 9223372036854775808",
        fields[0], fields[1], fields[2]
    );
    std::fs::write(&hea, text.replacen(first, &bigger, 1)).unwrap();
    refused(
        d,
        &["replay", d.join("huge").to_str().unwrap()],
        "number of samples",
    );
}

#[test]
fn signal_files_outside_the_folder_need_the_flag() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    synthetic_record(d, "pulse", 20.0, 72.0, false);
    let inner = d.join("elsewhere");
    std::fs::create_dir(&inner).unwrap();
    let text = std::fs::read_to_string(d.join("pulse.hea")).unwrap();
    std::fs::write(
        inner.join("pulse.hea"),
        text.replace("pulse.dat", "../pulse.dat"),
    )
    .unwrap();
    let record = inner.join("pulse");
    let record = record.to_str().unwrap();
    let out = d.join("out");
    let out = out.to_str().unwrap();
    refused(
        d,
        &["replay", record, "--out", out],
        "leads out of the record's folder",
    );
    let (code, _, stderr) = plethwire(
        d,
        &[
            "replay",
            record,
            "--out",
            out,
            "--allow-outside-signal-files",
        ],
    );
    assert_eq!(code, 0, "{stderr}");
}

#[test]
fn the_flag_reaches_the_ecg_a_score_reads_from_the_same_record() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let s = plethwire_synth::generate(&plethwire_synth::SynthOptions {
        sample_rate_hz: 125.0,
        duration_s: 20.0,
        ..plethwire_synth::SynthOptions::default()
    })
    .unwrap();
    let wave: Vec<i32> = s.samples.iter().map(|&v| (v * 1000.0) as i32).collect();
    let signals = [
        plethwire_records::NewSignal::new("PLETH", "NU", 1000.0, 0),
        plethwire_records::NewSignal::new("II", "mV", 1000.0, 0),
    ];
    plethwire_records::write_record(d, "two", 125.0, &signals, &[wave.clone(), wave]).unwrap();
    let inner = d.join("elsewhere");
    std::fs::create_dir(&inner).unwrap();
    let text = std::fs::read_to_string(d.join("two.hea")).unwrap();
    std::fs::write(inner.join("two.hea"), text.replace("two.dat", "../two.dat")).unwrap();
    let record = inner.join("two");
    let args = [
        "score",
        record.to_str().unwrap(),
        "--ecg",
        "II",
        "--allow-outside-signal-files",
    ];
    // The pulse stands in for the ECG, so the score may refuse it as an
    // ECG; it must not refuse to open the file the flag allowed.
    let (_, out, err) = plethwire(d, &args);
    assert!(
        !err.contains("leads out of the record's folder"),
        "{err}\n{out}"
    );
}
