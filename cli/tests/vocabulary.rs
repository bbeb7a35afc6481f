//! One vocabulary (`docs/vocabulary.md`) in every command's output: JSON
//! keys are plain snake_case words, the beat files share their column
//! names with `listen`'s JSON, the verdict and the flags are named, the
//! old words (smoothed, avg, flagged, `fn_`, `NotRun`) are gone, and every
//! error speaks of the value given. Recordings are invented here (a
//! synthetic pulse, `plethwire_synth`).

mod common;

use common::plethwire;
use plethwire::bringup::live::{BoardInfo, LiveChecks};
use plethwire::listen::{BeatSeen, Event, Screen, Settings, Sink, StateSeen};
use plethwire::vocabulary::state_words;
use plethwire_checks::{build_emulated_firmware, need, needs, qemu};
use plethwire_dsp::pipeline::{BeatEvent, BeatFlags, SignalState, StateEvent};
use plethwire_records::{annotation_path, write_annotations, Annotation};
use serde_json::Value;
use std::path::Path;

/// A 30 s, 72 bpm record `ride` in `dir`, its true peaks as `ride.truth`
/// and a reference heart rate once a second as `riden.csv`.
fn make_ride(dir: &Path) {
    let s = common::synthetic_pulse(dir, "ride", 30.0, 72.0);
    let truth: Vec<Annotation> = s
        .beats
        .iter()
        .map(|b| Annotation::beat((b.peak_s * 125.0).round() as i64))
        .collect();
    write_annotations(annotation_path(&dir.join("ride"), "truth"), &truth).unwrap();
    let rows: String = (0..30).map(|t| format!("{t},72\n")).collect();
    std::fs::write(dir.join("riden.csv"), format!("time_s,pulse_bpm\n{rows}")).unwrap();
}

fn text(bytes: &[u8]) -> String {
    String::from_utf8_lossy(bytes).into_owned()
}

/// Standard output of a run that must succeed.
fn ok(dir: &Path, args: &[&str]) -> String {
    let out = plethwire(dir, args);
    assert!(out.status.success(), "{args:?}: {}", text(&out.stderr));
    text(&out.stdout)
}

/// Every key of `v`, with where it is.
fn keys(v: &Value, at: &str, found: &mut Vec<(String, String)>) {
    match v {
        Value::Object(m) => {
            for (k, x) in m {
                found.push((k.clone(), at.to_owned()));
                keys(x, &format!("{at}.{k}"), found);
            }
        }
        Value::Array(a) => a.iter().for_each(|x| keys(x, &format!("{at}[]"), found)),
        _ => {}
    }
}

/// Lower-case words joined by single underscores: `^[a-z]([a-z0-9_]*[a-z0-9])?$`
/// with no `__` (a single letter is a trade symbol: the filter's `b`, `a`).
fn plain_key(k: &str) -> bool {
    let b = k.as_bytes();
    !b.is_empty()
        && b[0].is_ascii_lowercase()
        && b.iter()
            .all(|c| c.is_ascii_lowercase() || c.is_ascii_digit() || *c == b'_')
        && !k.ends_with('_')
        && !k.contains("__")
}

fn assert_plain_keys(what: &str, json: &str) {
    let docs: Vec<Value> = match serde_json::from_str(json) {
        Ok(v) => vec![v],
        Err(_) => json
            .lines()
            .map(|l| serde_json::from_str(l).unwrap())
            .collect(),
    };
    let mut found = Vec::new();
    docs.iter().for_each(|d| keys(d, "", &mut found));
    assert!(!found.is_empty(), "{what}: no keys in {json}");
    let bad: Vec<_> = found.iter().filter(|(k, _)| !plain_key(k)).collect();
    assert!(
        bad.is_empty(),
        "{what}: keys that are not plain words: {bad:?}"
    );
}

/// The old words for the median heart rate, the verdict, state changes
/// and the code's own names, none of which may appear in an output.
const OLD_WORDS: [&str; 14] = [
    "smoothed heart",
    "smoothed rate",
    "smoothed (",
    "smoothed  ",
    " avg ",
    "(flagged)",
    "flagged beat",
    "good signal",
    "(was ",
    "no-signal",
    "hr_smoothed_bpm",
    "NotRun",
    "Agreed",
    "fn_",
];

fn assert_no_old_words(what: &str, output: &str) {
    for w in OLD_WORDS {
        assert!(!output.contains(w), "{what} still says {w:?}:\n{output}");
    }
}

/// What `listen` prints for a hello-less session's beat and state change,
/// as text or JSON lines.
fn listen_lines(json: bool) -> String {
    let beat = |flags: u8, ibi: Option<f32>| {
        Event::Beat(BeatSeen {
            beat: BeatEvent {
                peak_index: 300,
                onset_index: None,
                emitted_at: 340,
                ibi_ms: ibi,
                hr_bpm: ibi.map(|i| 60_000.0 / i),
                hr_smoothed_bpm: ibi.map(|_| 75.0),
                amplitude: 40.0,
                quality: 0.9,
                flags: BeatFlags(flags),
            },
            peak: Some(300),
            time_s: Some(1.2),
        })
    };
    let state = Event::State(StateSeen {
        change: StateEvent {
            state: SignalState::NoSignal,
            previous: SignalState::Good,
            at: 500,
        },
        sample: Some(500),
        time_s: Some(2.0),
    });
    let mut out = Vec::new();
    {
        let mut screen = Screen::new(&mut out, json, false, &Settings::default());
        for e in [
            beat(BeatFlags::NO_INTERVAL, None),
            beat(0, Some(800.0)),
            beat(BeatFlags::CLIPPED | BeatFlags::MOTION, Some(790.0)),
            state,
        ] {
            screen.event(&e).unwrap();
        }
        // A second of samples: the live checks' first report.
        let mut live = LiveChecks::new();
        live.board(BoardInfo {
            rate_hz: Some(250.0),
            rails: Some((0.0, 4095.0)),
            adc_bits: None,
        });
        let raw: Vec<f32> = (0..16).map(|i| 2000.0 + i as f32).collect();
        let report = (0..16)
            .find_map(|b| live.samples(b * 16, &raw, 1, 250.0))
            .unwrap();
        screen.checks(&report).unwrap();
    }
    text(&out)
}

#[test]
fn every_commands_json_keys_are_plain_words() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    make_ride(d);
    let rec = d.join("ride");
    let rec = rec.to_str().unwrap();
    let out = d.to_str().unwrap();
    let replay = ok(d, &["replay", rec, "--out", out, "--json", "--beats-json"]);
    assert_plain_keys("replay --json", &replay);
    let beats = std::fs::read_to_string(d.join("ride.pwire.json")).unwrap();
    assert_plain_keys("replay --beats-json", &beats);
    assert_plain_keys(
        "score --json",
        &ok(d, &["score", rec, "--reference", "truth", "--json"]),
    );
    let page = d.join("ride.html");
    let report = ok(
        d,
        &[
            "report",
            rec,
            "--reference",
            "truth",
            "--out",
            page.to_str().unwrap(),
            "--json",
        ],
    );
    assert_plain_keys("report --json", &report);
    let demo_dir = d.join("demo");
    let demo = ok(
        d,
        &[
            "demo",
            "--no-board",
            "--json",
            "--out",
            demo_dir.to_str().unwrap(),
        ],
    );
    assert_plain_keys("demo --json", &demo);
    assert_no_old_words("demo --json", &demo);
    let filter = ok(
        d,
        &[
            "filter",
            "--rate",
            "250",
            "--band",
            "0.5:8",
            "--notch",
            "50",
            "--json",
            "--no-plot",
        ],
    );
    assert_plain_keys("filter --json", &filter);
    let example = plethwire_checks::repo_root().join("examples/frontend-fingerclip.toml");
    let frontend = ok(
        d,
        &["frontend", example.to_str().unwrap(), "--json", "--no-plot"],
    );
    assert_plain_keys("frontend --json", &frontend);
    assert_plain_keys("listen --json", &listen_lines(true));
    for json in [&replay, &beats, &report] {
        assert_no_old_words("a JSON output", json);
    }
}

#[test]
fn emulate_json_keys_are_plain_words() {
    if !need(needs::QEMU, qemu().is_some()) {
        return;
    }
    build_emulated_firmware();
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    make_ride(d);
    let rec = d.join("ride");
    let out = d.join("out");
    let args = [
        "emulate",
        rec.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ];
    let json = ok(d, &[&args[..], &["--json"]].concat());
    assert_plain_keys("emulate --json", &json);
    // The second run writes the same beat file again: the first run made it.
    let lines = ok(d, &[&args[..], &["--force"]].concat());
    assert_no_old_words("emulate", &lines);
    assert!(
        lines.contains("median HR") && lines.contains("acquiring -> good"),
        "{lines}"
    );
}

/// The beat CSV's header is the beats JSON's keys in order; `listen`'s
/// beat lines use the same names for the same quantities; the verdict is
/// `good` or `bad`, the flags are names joined by `|`.
#[test]
fn beat_files_name_their_columns_and_flags_alike() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    make_ride(d);
    let rec = d.join("ride");
    ok(
        d,
        &[
            "replay",
            rec.to_str().unwrap(),
            "--out",
            d.to_str().unwrap(),
            "--beats-csv",
            "--beats-json",
        ],
    );
    let csv = std::fs::read_to_string(d.join("ride.pwire.csv")).unwrap();
    let header: Vec<&str> = csv.lines().next().unwrap().split(',').collect();
    let json: Value =
        serde_json::from_str(&std::fs::read_to_string(d.join("ride.pwire.json")).unwrap()).unwrap();
    let mut columns = header.clone();
    columns.sort_unstable();
    let first = json[0].as_object().unwrap();
    assert_eq!(
        columns,
        first.keys().map(String::as_str).collect::<Vec<_>>()
    );
    let names: Vec<&str> = BeatFlags::NAMES.iter().map(|(_, n)| *n).collect();
    let (verdict, flags) = (
        header.iter().position(|c| *c == "verdict").unwrap(),
        header.len() - 1,
    );
    assert_eq!(header[flags], "flags");
    for row in csv.lines().skip(1) {
        let cells: Vec<&str> = row.split(',').collect();
        assert!(["good", "bad"].contains(&cells[verdict]), "{row}");
        assert!(
            cells[flags]
                .split('|')
                .all(|f| f.is_empty() || names.contains(&f)),
            "{row}"
        );
    }
    assert!(
        csv.lines().nth(1).unwrap().ends_with(",good,no_interval"),
        "{csv}"
    );
    let listen: Vec<Value> = listen_lines(true)
        .lines()
        .map(|l| serde_json::from_str(l).unwrap())
        .collect();
    let beat = listen.iter().find(|v| v["event"] == "beat").unwrap();
    for key in [
        "ibi_ms",
        "hr_bpm",
        "median_hr_bpm",
        "amplitude",
        "quality",
        "verdict",
        "flags",
    ] {
        assert!(
            header.contains(&key) && beat.get(key).is_some(),
            "{key}: {header:?} / {beat}"
        );
    }
    assert_eq!(listen[2]["flags"], serde_json::json!(["clipped", "motion"]));
    assert_eq!(listen[3]["state"], "no_signal");
    let help = ok(d, &["replay", "--help"]);
    assert!(
        help.contains("verdict") && names.iter().all(|n| help.contains(n)),
        "{help}"
    );
}

#[test]
fn terminal_lines_use_the_same_words() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    make_ride(d);
    let rec = d.join("ride");
    let replay = ok(
        d,
        &[
            "replay",
            rec.to_str().unwrap(),
            "--out",
            d.to_str().unwrap(),
        ],
    );
    assert!(replay.contains("median HR"), "{replay}");
    let demo_dir = d.join("demo");
    let demo = ok(
        d,
        &[
            "demo",
            "--no-board",
            "--speed",
            "0",
            "--out",
            demo_dir.to_str().unwrap(),
        ],
    );
    assert!(
        demo.contains("median HR") && demo.contains("acquiring -> good"),
        "{demo}"
    );
    let listen = listen_lines(false);
    assert!(
        listen.contains("good (no interval)") && listen.contains("bad (clipped, motion)"),
        "{listen}"
    );
    assert!(
        listen.contains("good -> no signal") && listen.contains("median HR"),
        "{listen}"
    );
    let page = std::fs::read_to_string(demo_dir.join("ride.report.html")).unwrap();
    for (what, output) in [
        ("replay", &replay),
        ("demo", &demo),
        ("listen", &listen),
        ("the page", &page),
    ] {
        assert_no_old_words(what, output);
    }
}

/// Wrong values on each command: the message names the option and the
/// value, in words, never a Rust type or parser.
#[test]
fn errors_speak_of_the_value_given() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    make_ride(d);
    let rec = d.join("ride");
    let rec = rec.to_str().unwrap();
    let circuit = d.join("bad.toml");
    std::fs::write(&circuit, "[led]\nsupply_v = \"x\"\n").unwrap();
    let kinds = d.join("kinds.toml");
    std::fs::write(&kinds, "[detector]\nkind = \"photo\"\n").unwrap();
    let cases: [&[&str]; 12] = [
        &["replay", rec, "--rate", "x"],
        &["replay", rec, "--rails", "-1:x"],
        &["replay", rec, "--polarity", "sideways"],
        &["score", rec, "--rate", "1e400"],
        &["demo", "--seed", "x"],
        &["demo", "--speed", "fast"],
        &["frontend", "--adc-bits", "x"],
        &["frontend", "--led-parallel", "-2"],
        &["frontend", circuit.to_str().unwrap()],
        &["frontend", kinds.to_str().unwrap()],
        &["frontend", "--stage", "bandpass"],
        &["replay", rec, "--out", "/proc/no/such/folder"],
    ];
    let leaks = [
        "expected f64",
        "expected u32",
        "invalid float literal",
        "invalid digit found",
        "unexpected argument '-",
        "unknown variant",
        "unknown field",
        "(os error",
    ];
    for args in cases {
        let out = plethwire(d, args);
        let err = text(&out.stderr);
        assert!(
            !out.status.success() && err.starts_with("plethwire: "),
            "{args:?}: {err}"
        );
        assert_eq!(err.lines().count(), 1, "{args:?}: {err}");
        for leak in leaks {
            assert!(!err.contains(leak), "{args:?} says {leak:?}: {err}");
        }
    }
    let spaced = plethwire(d, &["filter", "--rate", "250", "--band", "-1:8"]);
    let joined = plethwire(d, &["filter", "--rate", "250", "--band=-1:8"]);
    assert_eq!(text(&spaced.stderr), text(&joined.stderr));
    assert_eq!(spaced.status.code(), joined.status.code());
    let choices = text(&plethwire(d, &["replay", rec, "--polarity", "sideways"]).stderr);
    assert!(choices.contains("(one of: auto, up, down)"), "{choices}");
}

/// `docs/vocabulary.md` names every flag and every signal state by the
/// name the outputs use.
#[test]
fn the_vocabulary_page_names_every_flag_and_state() {
    let page =
        std::fs::read_to_string(plethwire_checks::repo_root().join("docs/vocabulary.md")).unwrap();
    for (_, name) in BeatFlags::NAMES {
        assert!(
            page.contains(&format!("`{name}`")),
            "docs/vocabulary.md lacks flag {name}"
        );
    }
    let states = [
        SignalState::Acquiring,
        SignalState::Good,
        SignalState::NoSignal,
        SignalState::Saturated,
        SignalState::Noisy,
    ];
    for s in states {
        assert_eq!(
            plethwire::report::state_name(s),
            state_words(s),
            "the page's state name"
        );
        assert!(
            page.contains(&format!("`{}`", s.name())),
            "docs/vocabulary.md lacks state {}",
            s.name()
        );
    }
    for term in [
        "median_hr_bpm",
        "median HR",
        "verdict",
        "`good`",
        "`bad`",
        "->",
    ] {
        assert!(page.contains(term), "docs/vocabulary.md lacks {term}");
    }
}
