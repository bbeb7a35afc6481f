//! The plain baseline beside the pipeline, on the same samples of the
//! shared recordings: a causal scipy band-pass and find_peaks
//! (`tests/scipy/baseline_beats.py`: scipy.signal.butter, sosfilt,
//! find_peaks) against the streaming pipeline, one table per data set.
//!
//! - CapnoBase (Karlen et al., IEEE TBME 60(7):1946, 2013): expert-reviewed
//!   systolic peaks; F1 and peak timing, matching within ±150 ms
//!   (ANSI/AAMI EC57 practice).
//! - BIDMC (Pimentel et al., IEEE TBME 64(8):1914, 2017; PhysioNet): the
//!   monitor's `pulse_bpm`, once a second; and how far the two beat lists
//!   agree with each other.
//! - Exercise wrist PPG (IEEE Signal Processing Cup 2015 training set,
//!   Zhang et al., IEEE TBME 62(2):522, 2015): the ECG heart rate in 8 s
//!   windows every 2 s; PPG1, without and with the wrist accelerometer
//!   as the pipeline's motion reference (`ACCX`, `ACCY`, `ACCZ`).
//!
//! The figures are printed (run with `--nocapture`), not held to targets:
//! `accuracy_targets.rs` holds the pipeline's. Asserted here is only
//! what a correct harness gives: both sides saw every record, the
//! baseline finds beats everywhere, its refined peaks lie in the 150 ms
//! before its filtered ones, and on CapnoBase's clean finger PPG a plain
//! band-pass and peak finder scores F1 > 95 %.

use std::path::{Path, PathBuf};

use plethwire::replay::{load, replay, replay_recording, Recording, Replay, Source};
use plethwire::score::rate_error;
use plethwire::score::records::{expand, reference_beats, reference_rate, References};
use plethwire::score::windows::{read_rate_windows, ReplayWindows};
use plethwire::score::RateError;
use plethwire_checks::beside::{
    beats_table, peak_rate_track, windows_table, BeatFigures, BeatsRow, WindowsRow,
};
use plethwire_checks::{
    baseline_detections, need, needs, python, shared_data_dir, BaselineInput, BaselinePeaks,
};
use plethwire_dsp::pipeline::Config;

/// One record loaded, replayed and handed to the baseline.
struct Run {
    rec: Recording,
    pipeline: Replay,
}

fn runs(folder: &Path, signal: &str) -> Vec<Run> {
    let source = Source {
        signal: Some(signal.into()),
        ..Source::default()
    };
    expand(&[folder.to_path_buf()])
        .unwrap()
        .iter()
        .map(|path| {
            let rec = load(path, &source).unwrap();
            let pipeline = replay(&rec.signal.samples, Config::new(rec.signal.fs as f32)).unwrap();
            Run { rec, pipeline }
        })
        .collect()
}

fn input(run: &Run) -> BaselineInput {
    BaselineInput {
        name: run.rec.name.clone(),
        fs: run.rec.signal.fs,
        samples: run.rec.signal.samples.clone(),
    }
}

fn harness_invariants(run: &Run, base: &BaselinePeaks) {
    let fs = run.rec.signal.fs;
    assert_eq!(run.pipeline.samples, run.rec.signal.samples.len() as u64);
    assert!(
        !base.refined.is_empty(),
        "{}: baseline found no beat",
        base.name
    );
    assert_eq!(base.refined.len(), base.filtered.len(), "{}", base.name);
    let span = (0.150 * fs).round() as u64;
    for (&r, &f) in base.refined.iter().zip(&base.filtered) {
        assert!(
            r <= f && f - r <= span,
            "{}: refined {r}, filtered {f}",
            base.name
        );
    }
}

fn capnobase(runs: &[Run], base: &[BaselinePeaks]) {
    let mut rows = Vec::new();
    let mut filtered = Vec::new();
    for (run, b) in runs.iter().zip(base) {
        let reference = reference_beats(&run.rec.path, "peak", run.rec.signal.fs)
            .unwrap()
            .unwrap();
        let fs = run.rec.signal.fs;
        rows.push(BeatsRow::score(
            &run.rec.name,
            fs,
            &reference,
            &run.pipeline.peaks(),
            &b.refined,
        ));
        filtered.push(BeatFigures::score(&reference, &b.filtered, fs));
    }
    eprintln!(
        "{}",
        beats_table(
            "CapnoBase PLETH: pipeline beside the baseline (refined peaks)",
            &rows
        )
    );
    let pooled = BeatsRow::pooled(&rows);
    let unrefined = BeatFigures::pooled(&filtered);
    let spread = |t: &plethwire::score::timing::PeakTiming| {
        let mut v = t.offsets_ms.clone();
        v.sort_by(f64::total_cmp);
        let q = |p| plethwire::score::timing::percentile(&v, p).unwrap_or(f64::NAN);
        format!(
            "median {:.1}, IQR {:.1} to {:.1}, p5 {:.1}, p95 {:.1} ms",
            q(50.0),
            q(25.0),
            q(75.0),
            q(5.0),
            q(95.0)
        )
    };
    eprintln!("signed dt, pipeline: {}", spread(&pooled.pipeline.timing));
    eprintln!(
        "signed dt, baseline refined: {}",
        spread(&pooled.baseline.timing)
    );
    eprintln!(
        "baseline on the filtered signal (not refined): F1 {:.2} %, {}\n",
        100.0 * unrefined.counts.f1().unwrap_or(0.0),
        spread(&unrefined.timing)
    );
    let f1 = pooled.baseline.counts.f1().unwrap();
    assert!(
        f1 > 0.95,
        "baseline CapnoBase F1 {:.2} % <= 95 %: the harness is wrong",
        100.0 * f1
    );
}

fn bidmc(runs: &[Run], base: &[BaselinePeaks]) {
    let refs = References::default();
    let mut t = String::from("BIDMC PLETH: heart rate against the monitor's pulse_bpm (pipeline: its smoothed rate; baseline: 60000 / median of the intervals of the last 12 s)\n");
    t += &format!(
        "{:<10} {:>6} {:>6} {:>8} {:>8} {:>8} {:>6}\n",
        "record", "pipe", "base", "agree %", "pipe MAE", "base MAE", "secs"
    );
    let (mut pipe_all, mut base_all) = (RateError::default(), RateError::default());
    for (run, b) in runs.iter().zip(base) {
        let fs = run.rec.signal.fs;
        let monitor = reference_rate(&run.rec.path, &refs).unwrap().unwrap();
        let pipe = rate_error(&run.pipeline.heart_rate_track(), &monitor);
        let base_hr = rate_error(&peak_rate_track(&b.refined, fs, 12.0), &monitor);
        // The baseline taken as the reference: how far the two lists agree.
        let agree = BeatFigures::score(&b.refined, &run.pipeline.peaks(), fs);
        t += &format!(
            "{:<10} {:>6} {:>6} {:>8.2} {:>8.2} {:>8.2} {:>6}\n",
            run.rec.name,
            run.pipeline.beats.len(),
            b.refined.len(),
            100.0 * agree.counts.f1().unwrap_or(0.0),
            pipe.mae().unwrap_or(f64::NAN),
            base_hr.mae().unwrap_or(f64::NAN),
            pipe.count
        );
        pipe_all.add(&pipe);
        base_all.add(&base_hr);
    }
    t += &format!(
        "{:<10} {:>6} {:>6} {:>8} {:>8.2} {:>8.2} {:>6}\n",
        "pooled",
        "",
        "",
        "",
        pipe_all.mae().unwrap_or(f64::NAN),
        base_all.mae().unwrap_or(f64::NAN),
        pipe_all.count
    );
    eprintln!("{t}agree: F1 of the pipeline's beats with the baseline's taken as reference.\n");
    assert!(pipe_all.count > 0 && base_all.count > 0, "seconds compared");
}

fn exercise(runs: &[Run], base: &[BaselinePeaks]) {
    let tables: Vec<PathBuf> = runs
        .iter()
        .map(|r| {
            let mut name = r.rec.path.file_name().unwrap().to_os_string();
            name.push("bpm.csv");
            r.rec.path.with_file_name(name)
        })
        .collect();
    let windows: Vec<_> = tables
        .iter()
        .map(|t| read_rate_windows(t).unwrap())
        .collect();
    let rows: Vec<WindowsRow> = runs
        .iter()
        .zip(base)
        .zip(&windows)
        .map(|((run, b), w)| {
            WindowsRow::score(
                &run.rec.name,
                w,
                ReplayWindows::of(w, &run.pipeline),
                &b.refined,
                run.rec.signal.fs,
            )
        })
        .collect();
    eprintln!(
        "{}",
        windows_table(
            "Exercise wrist PPG1: heart rate in the ECG's 8 s windows",
            &rows
        )
    );
    // The same records with their accelerometer as the motion reference.
    let with_motion = Source {
        signal: Some("PPG1".into()),
        motion: Some(["ACCX", "ACCY", "ACCZ"].map(String::from)),
        ..Source::default()
    };
    let moved: Vec<Replay> = runs
        .iter()
        .map(|r| {
            let rec = load(&r.rec.path, &with_motion).unwrap();
            replay_recording(&rec, Config::new(rec.signal.fs as f32)).unwrap()
        })
        .collect();
    let motion_rows: Vec<WindowsRow> = runs
        .iter()
        .zip(base)
        .zip(&windows)
        .zip(&moved)
        .map(|(((run, b), w), m)| {
            WindowsRow::score(
                &run.rec.name,
                w,
                ReplayWindows::of(w, m),
                &b.refined,
                run.rec.signal.fs,
            )
        })
        .collect();
    eprintln!(
        "{}",
        windows_table(
            "Exercise wrist PPG1 with the accelerometer (ACCX, ACCY, ACCZ) as motion reference",
            &motion_rows
        )
    );
    for (run, m) in runs.iter().zip(&moved) {
        // The motion changes flags, never the beats.
        assert_eq!(run.pipeline.peaks(), m.peaks(), "{}", run.rec.name);
    }
    for (r, w) in rows.iter().zip(&windows) {
        assert_eq!(r.baseline.windows, w.len());
        assert!(
            r.baseline.covered > 0,
            "{}: baseline covers no window",
            r.name
        );
    }
}

#[test]
fn the_baseline_beside_the_pipeline_on_the_shared_recordings() {
    let Some(data) = shared_data_dir().filter(|d| {
        ["capnobase", "bidmc", "exercise"]
            .iter()
            .all(|s| d.join(s).is_dir())
    }) else {
        need(needs::SHARED_DATA, false);
        return;
    };
    if !need(needs::PYTHON, python().is_some()) {
        return;
    }
    let sets = [
        runs(&data.join("capnobase"), "PLETH"),
        runs(&data.join("bidmc"), "PLETH"),
        runs(&data.join("exercise"), "PPG1"),
    ];
    assert_eq!(sets.iter().map(Vec::len).collect::<Vec<_>>(), [21, 16, 12]);
    let inputs: Vec<BaselineInput> = sets.iter().flatten().map(input).collect();
    let all = baseline_detections(&inputs);
    for (run, b) in sets.iter().flatten().zip(&all) {
        harness_invariants(run, b);
    }
    let (capno, rest) = all.split_at(sets[0].len());
    let (bid, ex) = rest.split_at(sets[1].len());
    capnobase(&sets[0], capno);
    bidmc(&sets[1], bid);
    exercise(&sets[2], ex);
}
