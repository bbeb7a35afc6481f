//! Host memory does not grow with the recording: replay, score and the
//! report's excerpt pass over a made-up hour at 500 Hz (1.8 M samples,
//! `bench_record`, a scenario of our own), and the replays of the same
//! hour with an accelerometer beside the pulse (`--motion`) and with the
//! choice among its four signals (`--signal auto`), and a CSV file of the
//! same hour near `check_csv_rate_hz` with uneven frame times (resampled
//! onto the median frame rate as its rows come) replayed with its
//! accelerometer, and the ECG reference `score --ecg` adds, streamed
//! from a made-up ECG beside the pulse of a third WFDB hour, raise this
//! process's peak
//! resident memory (Linux `VmHWM`, in kB: a count, not a timing) by no
//! more than the budget in docs/performance.toml, which is well under
//! what the samples alone would take read whole. The day-long figures
//! are `scripts/bench-memory`'s (docs/performance.md).
//!
//! One test in its own binary, so no other test's memory counts. It runs
//! its measurement in a child process of the same binary with
//! `MALLOC_ARENA_MAX=1`: glibc otherwise gives each thread that finds the
//! heap locked an arena of its own (the replay's read-ahead thread), as
//! many as the scheduling of the moment makes, which moved the count by
//! over 3 MB on a loaded machine; with one arena it is what the
//! recording's reading keeps.

use std::path::Path;

use plethwire::ecg::{EcgReference, RecordSource};
use plethwire::replay::{open, Source};
use plethwire::report::{excerpt_for, BandPass, TraceBuilder};
use plethwire::score::records::{score_all, References};
use plethwire_checks::repo_root;
use plethwire_dsp::pipeline::Config;
use plethwire_records::Record;
use serde::Deserialize;

#[derive(Deserialize)]
struct Book {
    host_memory: Budget,
}

#[derive(Deserialize)]
struct Budget {
    check_hours: f64,
    check_rate_hz: f64,
    check_csv_rate_hz: f64,
    stream_growth_budget_kb: u64,
}

/// This process's peak resident memory so far, kB.
fn peak_kb() -> u64 {
    let status = std::fs::read_to_string("/proc/self/status")
        .expect("/proc/self/status (Linux) holds the peak resident memory");
    status
        .lines()
        .find_map(|l| l.strip_prefix("VmHWM:"))
        .and_then(|v| v.trim().trim_end_matches("kB").trim().parse().ok())
        .expect("a VmHWM line in kB")
}

fn make_record(dir: &Path, hours: f64, rate: f64, extra: &[&str]) {
    let out = std::process::Command::new(env!("CARGO_BIN_EXE_bench_record"))
        .arg(dir)
        .args(["--hours", &hours.to_string(), "--rate", &rate.to_string()])
        .args(extra)
        .output()
        .expect("bench_record runs");
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
}

/// Set in the child process, where the measurement runs.
const CHILD: &str = "PLETHWIRE_HOST_MEMORY_CHILD";

#[test]
fn replay_score_and_the_report_pass_stay_within_the_memory_budget() {
    if std::env::var_os(CHILD).is_some() {
        measure();
        return;
    }
    let me = std::env::current_exe().expect("the test binary's path");
    let name = "replay_score_and_the_report_pass_stay_within_the_memory_budget";
    let out = std::process::Command::new(me)
        .args(["--exact", name, "--nocapture", "--test-threads=1"])
        .env(CHILD, "1")
        .env("MALLOC_ARENA_MAX", "1")
        .output()
        .expect("the test binary runs again");
    let text = String::from_utf8_lossy(&out.stdout);
    print!("{text}");
    eprint!("{}", String::from_utf8_lossy(&out.stderr));
    assert!(out.status.success(), "the measurement failed (above)");
    assert!(
        text.contains("peak memory grew by"),
        "the child measured nothing"
    );
}

/// Stream every path over the made-up hour and count the peak's growth.
fn measure() {
    let path = repo_root().join("docs/performance.toml");
    let text = std::fs::read_to_string(&path).unwrap();
    let book: Book = toml::from_str(&text).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    let b = book.host_memory;
    let dir = tempfile::tempdir().unwrap();
    make_record(dir.path(), b.check_hours, b.check_rate_hz, &[]);
    let with_motion = ["--accelerometer", "--name", "moving"];
    make_record(dir.path(), b.check_hours, b.check_rate_hz, &with_motion);
    let as_csv = ["--accelerometer", "--csv", "--name", "frames"];
    make_record(dir.path(), b.check_hours, b.check_csv_rate_hz, &as_csv);
    let with_ecg = ["--ecg", "--name", "heart"];
    make_record(dir.path(), b.check_hours, b.check_rate_hz, &with_ecg);
    let record = dir.path().join("day");
    let before = peak_kb();

    let streamed = open(&record, &Source::default()).unwrap();
    let config = Config::new(streamed.head.signal.fs as f32);
    let run = streamed.replay(config).unwrap();
    let excerpt = excerpt_for(None, &run).unwrap();
    let band = BandPass::new(&config).unwrap();
    let mut traces = TraceBuilder::new(run.fs, streamed.len, excerpt, &band, &run.beats);
    streamed
        .blocks(|block| {
            traces.push(block);
            true // the whole record, as far as the excerpt could lie
        })
        .unwrap();
    let traces = traces.finish();
    let refs = References::default();
    let scores = score_all(
        std::slice::from_ref(&record),
        &Source::default(),
        config,
        &refs,
        |_| (),
    )
    .unwrap();

    let moving = dir.path().join("moving");
    let motion = Source {
        motion: Some(["ACCX", "ACCY", "ACCZ"].map(String::from)),
        ..Source::default()
    };
    let moved = open(&moving, &motion).unwrap().replay(config).unwrap();
    let auto = Source {
        signal: Some("auto".into()),
        ..Source::default()
    };
    let chosen = open(&moving, &auto).unwrap();
    let choice = chosen
        .head
        .input
        .channel
        .clone()
        .expect("a choice among four");
    let auto_run = chosen.replay(config).unwrap();
    let frames = Source {
        signal: Some("PLETH".into()),
        ..motion
    };
    let timed = open(&dir.path().join("frames.csv"), &frames).unwrap();
    let resampled = timed
        .head
        .input
        .resampled
        .expect("uneven frames are resampled");
    let timed_config = Config::new(timed.head.signal.fs as f32);
    let timed_run = timed.replay(timed_config).unwrap();
    let heart = Record::open(dir.path().join("heart")).unwrap();
    let ecg_index = heart.pick_signal(Some("ECG")).unwrap();
    let mut ecg_source = RecordSource::new(&heart, ecg_index, 4096);
    let ecg = EcgReference::streamed(&mut ecg_source, heart.signal_fs(ecg_index)).unwrap();

    let grown = peak_kb().saturating_sub(before);
    let samples = (b.check_hours * 3600.0 * b.check_rate_hz) as u64;
    let whole_kb = samples * 8 / 1024;
    println!(
        "{samples} samples, {} beats, {} trace points: peak memory grew by {grown} kB \
         (budget {} kB; the samples read whole as f64 alone: {whole_kb} kB)",
        run.beats.len(),
        traces.raw.iter().map(Vec::len).sum::<usize>(),
        b.stream_growth_budget_kb
    );
    assert_eq!(run.samples, samples);
    assert_eq!((moved.samples, auto_run.samples), (samples, samples));
    assert_eq!(choice.chosen, "PLETH", "{choice:?}");
    assert_eq!(auto_run.beats, run.beats, "the same pulse, the same beats");
    assert!(
        moved.beats.len() == run.beats.len(),
        "the motion reference flags beats, it finds the same ones"
    );
    assert!(!scores.records.is_empty(), "the record was scored");
    // The made-up ECG has an R peak before every true pulse: nearly all
    // found (4254 of 4254 for the hour at 500 Hz when this was written).
    let beats = scores.records[0].beats.as_ref().map_or(0, |m| m.tp + m.fn_);
    assert!(
        ecg.r_peaks.len().abs_diff(beats) * 100 <= beats,
        "{} R peaks for {beats} true beats",
        ecg.r_peaks.len()
    );
    // One frame in 500 dropped (bench_record), the grid at the median step.
    let csv_hour = b.check_hours * 3600.0;
    assert!(
        (resampled.grid_hz - b.check_csv_rate_hz).abs() < 0.01 * b.check_csv_rate_hz,
        "{resampled:?}"
    );
    assert!((timed_run.samples as f64 - csv_hour * resampled.grid_hz).abs() < 2.0);
    let timed_bpm = 60.0 * timed_run.beats.len() as f64 / csv_hour;
    let bpm = 60.0 * run.beats.len() as f64 / csv_hour;
    assert!(
        (timed_bpm - bpm).abs() < 0.05 * bpm,
        "the same made-up day: {timed_bpm:.1} and {bpm:.1} beats a minute"
    );
    assert!(
        b.stream_growth_budget_kb < whole_kb / 2,
        "the budget must tell streaming from reading whole"
    );
    assert!(
        grown <= b.stream_growth_budget_kb,
        "peak memory grew by {grown} kB over {samples} samples, budget {} kB",
        b.stream_growth_budget_kb
    );
}
