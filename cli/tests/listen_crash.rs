//! `plethwire listen` killed with SIGKILL (as `kill -9`) while a pretend
//! board streams on a pseudo-terminal: whatever moment it dies, the files
//! it leaves must read with the Python `wfdb` package (PhysioNet's
//! reference reader) and with ours, hold exactly what was sent, and lose
//! at most the last second.

mod listen_support;

use listen_support::*;
use plethwire_checks::{need, needs, python, python_json};
use plethwire_records::{read_annotations, Record};
use serde::Deserialize;
use serde_json::Value;
use std::path::Path;
use std::process::Stdio;
use std::time::{Duration, Instant};

/// 16 samples at 250 Hz: the board sends a block every 64 ms.
const BLOCK_EVERY: Duration = Duration::from_millis(64);

/// What the listener has shown at least this long before its death must
/// be in its files: the promise is "at most the last second".
const AT_MOST_LOST: Duration = Duration::from_secs(1);

/// Beat peaks every 200 samples (800 ms) from 100 on.
fn peak(k: u64) -> u64 {
    100 + 200 * k
}

const READ_BACK: &str = "import json, sys, math, wfdb\n\
req = json.load(sys.stdin)\n\
r = wfdb.rdrecord(req['record'])\n\
a = wfdb.rdann(req['record'], 'pwire')\n\
col = lambda i: [None if math.isnan(v) else float(v) for v in r.p_signal[:, i]]\n\
json.dump({'fs': r.fs, 'names': r.sig_name, 'gain': [float(g) for g in r.adc_gain],\n\
           'raw': col(0), 'filtered': col(1),\n\
           'peaks': [int(s) for s in a.sample], 'symbols': list(a.symbol)}, sys.stdout)\n";

#[derive(Deserialize)]
struct ReadBack {
    fs: f64,
    names: Vec<String>,
    gain: Vec<f64>,
    raw: Vec<Option<f64>>,
    filtered: Vec<Option<f64>>,
    peaks: Vec<u64>,
    symbols: Vec<String>,
}

fn python_has_wfdb() -> bool {
    python().is_some_and(|mut py| {
        py.args(["-c", "import wfdb"])
            .stdout(Stdio::null())
            .stderr(Stdio::null())
            .status()
            .is_ok_and(|s| s.success())
    })
}

/// What one session sent before the kill, and what it had shown by when.
struct Cut {
    blocks_sent: u64,
    peaks_sent: Vec<u64>,
    /// The last block whose status line came at least [`AT_MOST_LOST`]
    /// before the kill: it, and all before it, must be in the files.
    confirmed: Option<u64>,
}

/// Stream `blocks` blocks in real time (each followed by a status whose
/// LED code is the block's number, and the beats it completes), then
/// SIGKILL the listener.
fn stream_and_kill(dir: &Path, blocks: u64) -> Cut {
    let port = dir.join("board");
    let mut board = Board::new(&port);
    board.plug_in();
    let out = dir.to_str().unwrap();
    let mut l = Listener::start(&[
        "--port",
        port.to_str().unwrap(),
        "--out",
        out,
        "--name",
        "cut",
        "--json",
    ]);
    l.wait_for("the port open", |s| s.contains("\"opened\""));
    board.send(&hello());
    let start = Instant::now();
    let mut shown: Vec<(Instant, u64)> = Vec::new();
    let mut peaks_sent = Vec::new();
    for b in 0..blocks {
        board.send(&block(16 * b));
        let mut k = peaks_sent.len() as u64;
        while peak(k) + 40 <= 16 * b + 15 {
            let ibi = (k > 0).then_some(800.0);
            board.send(&beat(peak(k), ibi, 0));
            peaks_sent.push(peak(k));
            k += 1;
        }
        board.send(&status(b as u16));
        let due = start + BLOCK_EVERY * (b as u32 + 1);
        while Instant::now() < due {
            std::thread::sleep(Duration::from_millis(5));
            let now = Instant::now();
            for line in l.poll() {
                let v: Value = serde_json::from_str(&line).unwrap();
                if v["event"] == "status" {
                    shown.push((now, v["led_drive_code"].as_u64().unwrap()));
                }
            }
        }
    }
    let killed_at = Instant::now();
    l.kill_hard();
    let confirmed = shown
        .iter()
        .filter(|(at, _)| *at + AT_MOST_LOST <= killed_at)
        .map(|(_, b)| *b)
        .max();
    Cut {
        blocks_sent: blocks,
        peaks_sent,
        confirmed,
    }
}

fn check(dir: &Path, cut: &Cut) {
    let record = dir.join("cut");
    let req = serde_json::json!({ "record": record.to_str().unwrap() });
    let got: ReadBack = python_json(&["-c", READ_BACK], &req);
    assert_eq!(got.fs, f64::from(RATE_HZ));
    assert_eq!(got.names, ["PLETH", "PLETH filtered"]);
    let n = got.raw.len() as u64;
    assert!(n <= 16 * cut.blocks_sent, "{n} samples, more than sent");
    for (i, (r, f)) in got.raw.iter().zip(&got.filtered).enumerate() {
        let i = i as u64;
        assert_eq!(*r, Some(f64::from(raw_at(i))), "raw sample {i}");
        let f = f.unwrap_or_else(|| panic!("filtered sample {i} invalid"));
        let sent = f64::from(filtered_at(i));
        assert!((f - sent).abs() <= 0.5 / got.gain[1] + 1e-9, "filtered {i}");
    }
    // The beats are a prefix of those sent, each a normal beat.
    assert!(got.peaks.len() <= cut.peaks_sent.len());
    assert_eq!(got.peaks, cut.peaks_sent[..got.peaks.len()]);
    assert!(got.symbols.iter().all(|s| s == "N"), "{:?}", got.symbols);
    if let Some(b) = cut.confirmed {
        let last = 16 * b + 15;
        assert!(
            n > last,
            "block {b} was shown a second before the kill, the record has {n}"
        );
        let due = cut.peaks_sent.iter().filter(|&&p| p + 40 <= last).count();
        assert!(got.peaks.len() >= due, "{} beats of {due}", got.peaks.len());
    }
    // Our own reader agrees, checksums included.
    let rec = Record::open(&record).unwrap();
    rec.verify_checksums().unwrap();
    assert_eq!(rec.len() as u64, n);
    assert_eq!(
        read_annotations(dir.join("cut.pwire")).unwrap().len(),
        got.peaks.len()
    );
    // The summary, as of its last writing, says the session was cut off.
    let summary: Value =
        serde_json::from_str(&std::fs::read_to_string(dir.join("cut.session.json")).unwrap())
            .unwrap();
    assert_eq!(summary["ended_by"], "running");
    assert!(summary["record_samples"].as_u64().unwrap() <= n);
    assert!(summary["beats_annotated"].as_u64().unwrap() <= got.peaks.len() as u64);
    assert_eq!(summary["board"]["firmware"], "0.4.2");
}

#[test]
fn a_listener_killed_at_any_moment_loses_at_most_the_last_second() {
    if !need(needs::PYTHON, python_has_wfdb()) {
        return;
    }
    // Killed early (under a second in), midway, and later.
    for blocks in [11, 37, 70] {
        let dir = tempfile::tempdir().unwrap();
        let cut = stream_and_kill(dir.path(), blocks);
        if blocks >= 37 {
            assert!(
                cut.confirmed.is_some(),
                "nothing shown a second before the kill"
            );
        }
        check(dir.path(), &cut);
    }
}
