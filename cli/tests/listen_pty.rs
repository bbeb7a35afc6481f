//! `plethwire listen` on a pseudo-terminal, through the real binary: what
//! a pretend board sends (with line noise and a damaged frame, and across
//! an unplug and replug) must come back exactly from the recorded files.

mod listen_support;

use listen_support::*;
use plethwire_dsp::pipeline::{BeatFlags, SignalState};
use plethwire_dsp::wire::Message;
use plethwire_records::{read_annotations, Record, NORMAL};
use serde_json::Value;
use std::path::Path;

/// Beat peaks of the pretend session, 200 samples (800 ms) apart.
const PEAKS: [u64; 4] = [100, 300, 500, 700];
const BLOCKS: u64 = 50;

fn peak_beat(k: usize) -> Message {
    let ibi = (k > 0).then_some(800.0);
    let flags = match k {
        0 => BeatFlags::NO_INTERVAL,
        2 => BeatFlags::LOW_CORRELATION,
        _ => 0,
    };
    beat(PEAKS[k], ibi, flags)
}

/// Send blocks `from..to`, each beat right after the block in which it
/// was emitted (peak + 40), as a board would, and a status after block
/// 25; `tamper` may change the bytes of a block's frame or add some after
/// it.
fn stream(board: &mut Board, from: u64, to: u64, tamper: &mut dyn FnMut(u64, &mut Vec<u8>)) {
    for b in from..to {
        let mut bytes = board.frame(&block(16 * b));
        tamper(b, &mut bytes);
        board.raw(&bytes);
        let last = 16 * b + 15;
        for (k, &p) in PEAKS.iter().enumerate() {
            if (16 * b..=last).contains(&(p + 40)) {
                board.send(&peak_beat(k));
            }
        }
        if (16 * b..=last).contains(&350) {
            board.send(&state(350, SignalState::Good, SignalState::Acquiring));
        }
        if b == 25 {
            board.send(&status(1000));
        }
    }
}

fn json(line: &str) -> Value {
    serde_json::from_str(line).unwrap_or_else(|e| panic!("not JSON ({e}): {line}"))
}

fn events<'a>(lines: &'a [Value], kind: &'a str) -> impl Iterator<Item = &'a Value> + 'a {
    lines.iter().filter(move |v| v["event"] == kind)
}

/// The record and annotations hold exactly what was sent; samples in
/// `missing` are marked invalid.
fn check_files(dir: &Path, name: &str, missing: std::ops::Range<u64>) {
    let ann = read_annotations(dir.join(format!("{name}.pwire"))).unwrap();
    let peaks: Vec<i64> = ann.iter().map(|a| a.sample).collect();
    assert_eq!(peaks, PEAKS.map(|p| p as i64));
    assert!(ann.iter().all(|a| a.code == NORMAL));
    let rec = Record::open(dir.join(name)).unwrap();
    rec.verify_checksums().unwrap();
    assert_eq!(rec.fs(), f64::from(RATE_HZ));
    assert_eq!(rec.signal_names(), ["PLETH", "PLETH filtered"]);
    assert_eq!(rec.len() as u64, 16 * BLOCKS);
    let gain = rec.signals()[1].adc_gain;
    let raw = rec.read_physical(0).unwrap();
    let filtered = rec.read_physical(1).unwrap();
    for n in 0..16 * BLOCKS {
        let (r, f) = (raw[n as usize], filtered[n as usize]);
        if missing.contains(&n) {
            assert!(r.is_nan() && f.is_nan(), "sample {n} should be invalid");
            continue;
        }
        assert_eq!(r, f64::from(raw_at(n)), "raw sample {n}");
        let sent = f64::from(filtered_at(n));
        assert!(
            (f - sent).abs() <= 0.5 / gain + 1e-9,
            "filtered {n}: {f} vs {sent}"
        );
    }
}

#[test]
fn noisy_stream_is_shown_as_json_lines_and_recorded_exactly() {
    let dir = tempfile::tempdir().unwrap();
    let port = dir.path().join("board");
    let out = dir.path().join("rec");
    let mut board = Board::new(&port);
    board.plug_in();
    let args = [
        "--port",
        port.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ];
    let mut l =
        Listener::start(&[&args[..], &["--name", "bench", "--json", "--wait", "1"]].concat());
    l.wait_for("the port open", |s| json(s)["event"] == "opened");
    board.send(&hello());
    stream(&mut board, 0, BLOCKS, &mut |b, bytes| match b {
        // Idle line: not damage.
        5 => bytes.extend([0, 0, 0]),
        // Noise, each run ended by a delimiter: two damaged chunks.
        10 => bytes.extend([0x13, 0x37, 0xFF, 0x55, 0x00]),
        30 => bytes.extend((1..=20u8).chain([0])),
        // One flipped bit in a sample frame: damaged, and one frame lost.
        20 => {
            let mid = bytes.len() / 2;
            bytes[mid] = if bytes[mid] == 1 { 3 } else { bytes[mid] ^ 1 };
        }
        _ => {}
    });
    board.send(&status(40_000));
    l.wait_for("the last status", |s| json(s)["led_drive_code"] == 40_000);
    board.unplug();
    let (code, lines, err) = l.finish();
    assert!(code.success(), "{code:?} {err}");
    assert!(err.is_empty(), "{err}");
    let lines: Vec<Value> = lines.iter().map(|l| json(l)).collect();

    let start = &lines[0];
    assert_eq!(start["event"], "start");
    let caution = start["caution"].as_str().unwrap();
    assert!(caution.contains("not a medical device") && caution.contains("USB isolator"));

    let beats: Vec<&Value> = events(&lines, "beat").collect();
    assert_eq!(beats.len(), PEAKS.len());
    for (k, b) in beats.iter().enumerate() {
        assert_eq!(b["sample"], PEAKS[k]);
        assert_eq!(b["time_s"], PEAKS[k] as f64 / f64::from(RATE_HZ));
        assert_eq!(b["latency_samples"], 40);
    }
    assert_eq!(beats[0]["ibi_ms"], Value::Null);
    assert_eq!(beats[0]["flags"], serde_json::json!(["no_interval"]));
    assert_eq!(beats[1]["hr_bpm"], 75.0);
    assert_eq!(beats[2]["verdict"], "bad");
    assert_eq!(beats[2]["flags"], serde_json::json!(["low_correlation"]));
    let states: Vec<&Value> = events(&lines, "state").collect();
    assert_eq!(states.len(), 1);
    assert_eq!(
        (states[0]["state"].as_str(), states[0]["previous"].as_str()),
        (Some("good"), Some("acquiring"))
    );
    assert_eq!(states[0]["time_s"], 1.4);

    // The last status carries the link's counters: 3 damaged, 1 lost.
    let last_status = events(&lines, "status").last().unwrap();
    assert_eq!(last_status["link"]["damaged"], 3);
    assert_eq!(last_status["link"]["lost_frames"], 1);
    assert_eq!(last_status["adc_overruns"], 1);
    assert_eq!(
        last_status["measured"],
        serde_json::json!(["led_drive", "dc_level", "ambient_level"])
    );
    assert_eq!(last_status["ambient_level"], 0.02);
    assert!(events(&lines, "link").any(|v| v["damaged"].as_u64() > Some(0)));
    assert_eq!(events(&lines, "lost").count(), 1);

    let end = lines.last().unwrap();
    assert_eq!(end["event"], "end");
    let summary = &end["summary"];
    assert_eq!(summary["ended_by"], "port_gone");
    // hello, 49 good sample frames, 4 beats, 1 state, 2 statuses.
    assert_eq!(summary["link"]["frames"], 57);
    assert_eq!(summary["link"]["damaged"], 3);
    assert_eq!(summary["samples"]["missing"], 16);
    // Every byte the board sent: 50 sample frames of 148 bytes and more.
    let bytes = summary["link"]["bytes"].as_u64().unwrap();
    assert!((50 * 148..50 * 148 + 2000).contains(&bytes), "{bytes}");
    assert_eq!(summary["link"]["foreign_version"], 0);
    assert_eq!(summary["record_stride"], 1);

    check_files(&out, "bench", 320..336);
    let file = std::fs::read_to_string(out.join("bench.session.json")).unwrap();
    let saved = json(&file);
    assert_eq!(&saved, summary);
    assert_eq!(saved["board"]["firmware"], "0.4.2");
    assert_eq!(saved["board"]["rails"], serde_json::json!([0.0, 4095.0]));
    assert_eq!(saved["board"]["adc_bits"], 12);
    assert_eq!(saved["counts"]["beats"], 4);
    assert_eq!(saved["beats_annotated"], 4);
    assert_eq!(saved["record_samples"], 800);
    assert_eq!(saved["scale"]["source"], "rails");
    assert!(
        saved["first_frame_utc"].as_str().unwrap() <= saved["last_frame_utc"].as_str().unwrap()
    );
}

#[test]
fn unplugging_and_replugging_continues_one_recording() {
    let dir = tempfile::tempdir().unwrap();
    let port = dir.path().join("board");
    let out = dir.path().join("rec");
    let mut board = Board::new(&port);
    board.plug_in();
    let mut l = Listener::start(&[
        "--port",
        port.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--name",
        "replug",
        "--wait",
        "30",
    ]);
    l.wait_for("the port open", |s| {
        s.starts_with("port ") && s.ends_with(" open")
    });
    board.send(&hello());
    stream(&mut board, 0, 25, &mut |_, _| {});
    // Unread bytes die with the pty: unplug only once all were shown.
    board.send(&status(2000));
    l.wait_for("the first status", |s| s.starts_with("status "));
    board.unplug();
    l.wait_for("the loss", |s| s.starts_with("lost "));
    // The board goes on while unplugged: samples 400..479 go nowhere.
    for b in 25..30 {
        board.frame(&block(16 * b));
    }
    board.plug_in();
    l.wait_for("the port again", |s| s.contains(" open again after "));
    stream(&mut board, 30, BLOCKS, &mut |_, _| {});
    board.send(&status(40_000));
    l.wait_for("the last status", |s| s.starts_with("status   LED 61.0 %"));
    l.interrupt();
    let (code, lines, err) = l.finish();
    assert!(code.success(), "{code:?} {err}");
    assert!(err.is_empty(), "{err}");
    let text = lines.join("\n");
    assert!(!text.contains('\x1b'), "escape codes in a pipe:\n{text}");
    assert!(lines[0].contains("not a medical device"), "{text}");
    assert!(lines[1].contains("USB isolator") && lines[1].contains("IEC 60601-1"));
    let beat_lines: Vec<&String> = lines.iter().filter(|l| l.starts_with("beat ")).collect();
    assert_eq!(beat_lines.len(), 4, "{text}");
    assert!(beat_lines[0].contains("0.400 s") && beat_lines[0].ends_with("good (no interval)"));
    assert!(
        beat_lines[1].contains("IBI   800 ms  HR  75.0 bpm  median HR  72.5 bpm"),
        "{}",
        beat_lines[1]
    );
    assert!(beat_lines[2].ends_with("bad (low correlation)"));
    assert!(lines
        .iter()
        .any(|l| l.starts_with("state ") && l.contains("acquiring -> good")));
    assert!(
        lines
            .iter()
            .any(|l| l.starts_with("end ") && l.contains("stopped: 4 beats")),
        "{text}"
    );

    check_files(&out, "replug", 400..480);
    let saved = json(&std::fs::read_to_string(out.join("replug.session.json")).unwrap());
    assert_eq!(saved["ended_by"], "stopped");
    assert_eq!(saved["counts"]["opens"], 2);
    assert_eq!(saved["counts"]["losses"], 1);
    // The decoder resynchronised on reconnect: the frames sent into the
    // void are not counted as lost on the line.
    assert_eq!(saved["link"]["lost_frames"], 0);
    assert_eq!(saved["link"]["damaged"], 0);
    assert_eq!(saved["samples"]["missing"], 80);
}

#[test]
fn a_time_limit_ends_a_quiet_session_with_empty_files() {
    let dir = tempfile::tempdir().unwrap();
    let port = dir.path().join("board");
    let mut board = Board::new(&port);
    board.plug_in();
    let out = dir.path().to_str().unwrap();
    let mut l = Listener::start(&[
        "--port",
        port.to_str().unwrap(),
        "--out",
        out,
        "--name",
        "idle",
        "--seconds",
        "1",
        "--json",
    ]);
    l.wait_for("the port open", |s| json(s)["event"] == "opened");
    let (code, lines, err) = l.finish();
    assert!(code.success(), "{code:?} {err}");
    let end = json(lines.last().unwrap());
    assert_eq!(end["summary"]["ended_by"], "time_up");
    assert_eq!(end["summary"]["link"]["frames"], 0);
    assert!(read_annotations(dir.path().join("idle.pwire"))
        .unwrap()
        .is_empty());
    // No samples, no record.
    assert!(!dir.path().join("idle.hea").exists());
    assert!(!dir.path().join("idle.dat").exists());
    assert!(dir.path().join("idle.session.json").exists());
    // The pty was open all along: the clock ended the session, not a loss.
    assert_eq!(end["summary"]["counts"]["losses"], 0);
    drop(board);
}

#[test]
fn a_board_of_wire_format_1_gets_one_plain_notice_and_listen_goes_on() {
    let dir = tempfile::tempdir().unwrap();
    let port = dir.path().join("board");
    let mut board = Board::new(&port);
    board.plug_in();
    let out = dir.path().to_str().unwrap();
    let mut l = Listener::start(&[
        "--port",
        port.to_str().unwrap(),
        "--out",
        out,
        "--name",
        "old",
        "--json",
    ]);
    l.wait_for("the port open", |s| json(s)["event"] == "opened");
    for seq in 0..30 {
        board.raw(&foreign_status(1, seq));
    }
    // Then a board of our version: still read.
    board.send(&hello());
    l.wait_for("the hello", |s| json(s)["event"] == "hello");
    board.unplug();
    let (code, lines, err) = l.finish();
    assert!(code.success(), "{code:?} {err}");
    let lines: Vec<Value> = lines.iter().map(|l| json(l)).collect();
    let notices: Vec<&Value> = events(&lines, "notice").collect();
    assert_eq!(notices.len(), 1, "{notices:?}");
    assert_eq!(
        notices[0]["text"],
        "the board speaks wire format version 1; this plethwire reads version 2: \
         update the board's firmware"
    );
    let link = &lines.last().unwrap()["summary"]["link"];
    assert_eq!(link["damaged"], 30);
    assert_eq!(link["foreign_version"], 30);
    assert_eq!(link["last_foreign_version"], 1);
    assert_eq!(link["frames"], 1);
}
