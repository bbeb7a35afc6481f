//! `plethwire listen`'s live bring-up checks through the real binary on a
//! pseudo-terminal: a pretend bench board (a scenario of our own) sends
//! 12 s of a weak pulse; `--json` gives `checks` lines, `--circuit` the
//! advice that names the part, and a circuit file that does not fit the
//! board one warning and no advice.

mod listen_support;

use listen_support::*;
use plethwire_dsp::wire::{Message, SampleBlock};
use serde_json::Value;
use std::f64::consts::PI;
use std::path::{Path, PathBuf};

/// Seconds of samples the pretend board sends.
const SECONDS: u64 = 12;

/// The 16 samples from `first` of a weak pulse: 1.2 Hz, 24 codes peak to
/// peak on 2048, and its band-passed trace.
fn weak_block(first: u64) -> Message {
    let mut b = SampleBlock {
        first_index: first,
        count: 16,
        stride: 1,
        raw: [0.0; 16],
        filtered: [0.0; 16],
    };
    for i in 0..16 {
        let t = (first + i as u64) as f64 / f64::from(RATE_HZ);
        let pulse = 12.0 * (2.0 * PI * 1.2 * t).sin();
        // Whole ADC codes, as a board sends them; the band-passed trace
        // the pulse alone.
        b.raw[i] = (2048.0 + pulse).round() as f32;
        b.filtered[i] = pulse as f32;
    }
    Message::Samples(b)
}

fn json(line: &str) -> Value {
    serde_json::from_str(line).unwrap_or_else(|e| panic!("not JSON ({e}): {line}"))
}

fn example() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../examples/frontend-fingerclip.toml")
}

/// Runs a session of the weak pulse with `extra` options; every stdout line.
fn session(extra: &[&str]) -> Vec<String> {
    let dir = tempfile::tempdir().unwrap();
    let port = dir.path().join("board");
    let mut board = Board::new(&port);
    board.plug_in();
    let args = [
        "--port",
        port.to_str().unwrap(),
        "--out",
        dir.path().to_str().unwrap(),
        "--name",
        "bench",
        "--wait",
        "1",
    ];
    let mut l = Listener::start(&[&args[..], extra].concat());
    l.wait_for("the port open", |s| s.contains("open"));
    board.send(&hello());
    // Half of full drive (32768 / 65535).
    board.send(&status(32_768));
    let blocks = SECONDS * u64::from(RATE_HZ as u32) / 16;
    for b in 0..blocks {
        board.send(&weak_block(16 * b));
    }
    board.send(&status(12_345));
    l.wait_for("the last status", |s| {
        s.contains("\"led_drive_code\":12345") || s.starts_with("status   LED 18.8 %")
    });
    board.unplug();
    let (code, lines, err) = l.finish();
    assert!(code.success(), "{code:?} {err}");
    lines
}

#[test]
fn json_checks_carry_the_seven_checks_gauges_and_advice() {
    // The fingerclip example: AC-coupled to 1.65 V of 3.3 V (50 %), gain
    // 23 after the TIA. The board: rails 0 to 4095, so the pulse is 24 /
    // 4095 = 0.59 % of the range. For 1 %: stage 2's 22k → 39k gives gain
    // 40, 0.59 % × 40 / 23 = 1.02 % (33k gives 34: 0.87 %); the LED at
    // half drive: 0.5 × (3.3 − 1.35) V / 100 Ω = 9.75 mA, the board's
    // most drive at --max-drive 0.5 the same, so it stays allowed.
    let circuit = example();
    let lines = session(&[
        "--json",
        "--circuit",
        circuit.to_str().unwrap(),
        "--max-drive",
        "0.5",
    ]);
    let values: Vec<Value> = lines.iter().map(|l| json(l)).collect();
    let checks: Vec<&Value> = values.iter().filter(|v| v["event"] == "checks").collect();
    // One a second of samples: 11 or 12 in 12 s.
    assert!((11..=12).contains(&checks.len()), "{lines:#?}");
    let last = checks.last().unwrap();
    let names: Vec<&str> = last["checks"]
        .as_array()
        .unwrap()
        .iter()
        .map(|c| c["name"].as_str().unwrap())
        .collect();
    assert_eq!(
        names,
        [
            "perfusion",
            "pulse_bits",
            "snr",
            "hum",
            "clipping",
            "ambient",
            "settling"
        ]
    );
    let verdict = |name: &str| {
        last["checks"]
            .as_array()
            .unwrap()
            .iter()
            .find(|c| c["name"] == name)
            .unwrap()["verdict"]
            .clone()
    };
    // 24 codes: 4.6 bits (borderline, 16 to 64 codes); a clean sine.
    assert_eq!(verdict("pulse_bits"), "borderline");
    assert_eq!(verdict("snr"), "clear");
    // The status's ambient level 0.02 of full scale against its DC level
    // 0.48: 4.2 % of the LED-on level.
    assert_eq!(verdict("ambient"), "clear");
    let g = &last["gauges"];
    let codes = g["pulse_codes"].as_f64().unwrap();
    assert!((codes - 24.0).abs() < 0.01, "{g}");
    assert!((g["led_drive"].as_f64().unwrap() - 0.5).abs() < 1e-4, "{g}");
    assert!((g["ambient"].as_f64().unwrap() - 0.02).abs() < 1e-6, "{g}");
    let advice = last["advice"][0].as_str().unwrap();
    assert!(
        advice.starts_with(
            "pulse is 0.6 % of the ADC range: stage 2 feedback resistor 22 kΩ → 39 kΩ gives a \
             pulse of 1.0 % and DC at 50 %, LED 9.75 mA"
        ),
        "{advice}"
    );
    assert!(values.iter().all(|v| v["event"] != "notice"), "{lines:#?}");
}

#[test]
fn a_circuit_of_another_adc_width_is_warned_once_and_gives_no_advice() {
    // The example with a 10-bit ADC; the board's hello says 12 bits.
    let dir = tempfile::tempdir().unwrap();
    let file = dir.path().join("ten_bits.toml");
    let text = std::fs::read_to_string(example()).unwrap();
    std::fs::write(&file, text.replace("bits = 12", "bits = 10")).unwrap();
    let lines = session(&["--json", "--circuit", file.to_str().unwrap()]);
    let values: Vec<Value> = lines.iter().map(|l| json(l)).collect();
    let why = "the circuit file does not match the board: its ADC has 10 bits, the board says 12";
    let notices: Vec<&Value> = values.iter().filter(|v| v["event"] == "notice").collect();
    assert_eq!(notices.len(), 1, "{lines:#?}");
    assert_eq!(notices[0]["text"], why);
    let checks: Vec<&Value> = values.iter().filter(|v| v["event"] == "checks").collect();
    assert!(!checks.is_empty());
    for c in checks {
        assert_eq!(
            c["advice"],
            serde_json::json!([format!("no advice: {why}")])
        );
        assert_eq!(c["mismatch"], why);
    }
}

#[test]
fn text_shows_a_checks_line_and_the_advice() {
    let circuit = example();
    let lines = session(&["--circuit", circuit.to_str().unwrap()]);
    let text = lines.join("\n");
    let checks: Vec<&String> = lines.iter().filter(|l| l.starts_with("checks ")).collect();
    // At most one every 10 s unless a verdict changes: far fewer than the
    // 12 reports (the SNR and hum become measurable at 8 s, the settling
    // at 2 s).
    assert!(!checks.is_empty() && checks.len() < 8, "{text}");
    assert!(
        checks[0].contains("pulse bits 4.6 borderline")
            && checks[0].contains("ambient 4.2 % clear"),
        "{text}"
    );
    assert!(
        lines.iter().any(|l| l.starts_with(
            "advice   pulse is 0.6 % of the ADC range: stage 2 feedback resistor 22 kΩ → 39 kΩ"
        )),
        "{text}"
    );
}

#[test]
fn a_bad_max_drive_or_circuit_file_is_refused_before_listening() {
    let dir = tempfile::tempdir().unwrap();
    let port = dir.path().join("no_board");
    let run = |extra: &[&str]| {
        std::process::Command::new(env!("CARGO_BIN_EXE_plethwire"))
            .args(["listen", "--port", port.to_str().unwrap(), "--wait", "0"])
            .args(extra)
            .current_dir(dir.path())
            .output()
            .unwrap()
    };
    let circuit = example();
    let bad = run(&["--circuit", circuit.to_str().unwrap(), "--max-drive", "1.5"]);
    assert_eq!(bad.status.code(), Some(2));
    let err = String::from_utf8_lossy(&bad.stderr);
    assert!(
        err.contains("expected a share of full drive, above 0 and at most 1"),
        "{err}"
    );
    let missing = dir.path().join("none.toml");
    let gone = run(&["--circuit", missing.to_str().unwrap()]);
    assert_eq!(gone.status.code(), Some(1));
    let err = String::from_utf8_lossy(&gone.stderr);
    assert!(err.contains("none.toml"), "{err}");
}
