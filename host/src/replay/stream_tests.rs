//! A streamed replay against the replay of the recording loaded whole,
//! on records made up here: a synthetic pulse (`plethwire_synth`, a
//! scenario of our own) with a made-up accelerometer beside it.

use super::*;
use plethwire_records::{write_record, NewSignal};
use plethwire_synth::{generate, HrSchedule, SynthOptions};
use std::path::{Path, PathBuf};

const FS: f64 = 125.0;

/// A 70 s record of `PLETH` at 80 bpm and `AX`, `AY`, `AZ` (g): an arm
/// swing at 1.3 Hz on x from 20 s to 45 s, gravity on z.
fn record(dir: &Path) -> PathBuf {
    let s = generate(&SynthOptions {
        sample_rate_hz: FS,
        duration_s: 70.0,
        hr: HrSchedule::constant(80.0),
        ..SynthOptions::default()
    })
    .unwrap();
    let n = s.samples.len();
    let pleth = s.samples.iter().map(|&v| (v * 900.0).round() as i32);
    let g = |v: f64| (v * 4000.0).round() as i32;
    let swing = |i: usize| {
        let t = i as f64 / FS;
        g(((20.0..45.0).contains(&t) as u8 as f64) * (8.17 * t).sin())
    };
    let signals = [
        NewSignal::new("PLETH", "NU", 900.0, 0),
        NewSignal::new("AX", "g", 4000.0, 0),
        NewSignal::new("AY", "g", 4000.0, 0),
        NewSignal::new("AZ", "g", 4000.0, 0),
    ];
    let samples = [
        pleth.collect(),
        (0..n).map(swing).collect(),
        (0..n).map(|i| g(0.1 * ((i % 7) as f64))).collect(),
        vec![g(1.0); n],
    ];
    write_record(dir, "m", FS, &signals, &samples).unwrap();
    dir.join("m")
}

fn axes() -> Option<[String; 3]> {
    Some(["AX", "AY", "AZ"].map(String::from))
}

#[test]
fn a_record_with_its_accelerometer_streams_the_beats_of_the_whole_read() {
    let dir = tempfile::tempdir().unwrap();
    let path = record(dir.path());
    for polarity in [Polarity::Auto, Polarity::Down] {
        let source = Source {
            motion: axes(),
            polarity,
            ..Source::default()
        };
        let whole = load(&path, &source).unwrap();
        let config = Config::new(FS as f32);
        let want = replay_recording(&whole, config).unwrap();
        let streamed = open(&path, &source).unwrap();
        assert!(streamed.head.motion.is_none(), "not read whole");
        assert_eq!(streamed.motion_names(), source.motion.as_ref());
        let got = streamed.replay(config).unwrap();
        assert_eq!(got, want, "{polarity:?}");
        assert!(want.beats.len() > 60, "{}", want.beats.len());
        let flagged = |r: &Replay| {
            r.beats
                .iter()
                .filter(|b| b.flags.has(plethwire_dsp::pipeline::BeatFlags::MOTION))
                .count()
        };
        assert!(flagged(&want) > 0, "the swing flags beats");
    }
}

#[test]
fn motion_signals_that_do_not_fit_are_refused_as_the_whole_read_refuses_them() {
    let dir = tempfile::tempdir().unwrap();
    let path = record(dir.path());
    let missing = Source {
        motion: Some(["AX", "AY", "AW"].map(String::from)),
        ..Source::default()
    };
    let whole = load(&path, &missing).unwrap_err().to_string();
    assert_eq!(open(&path, &missing).unwrap_err().to_string(), whole);
    assert!(whole.contains("AW"), "{whole}");
    // AY at twice the rate: the header says so, and half the frames, so
    // the file is long enough for them.
    let header = std::fs::read_to_string(dir.path().join("m.hea")).unwrap();
    let mut lines: Vec<String> = header.lines().map(String::from).collect();
    let mut fields: Vec<&str> = lines[0].split(' ').collect();
    let half = (fields[3].parse::<usize>().unwrap() / 2).to_string();
    fields[3] = &half;
    lines[0] = fields.join(" ");
    let ay = lines.iter_mut().find(|l| l.ends_with(" AY")).unwrap();
    *ay = ay.replacen(" 16 ", " 16x2 ", 1);
    std::fs::write(dir.path().join("m.hea"), lines.join("\n") + "\n").unwrap();
    let source = Source {
        motion: axes(),
        ..Source::default()
    };
    let whole = load(&path, &source).unwrap_err().to_string();
    assert_eq!(open(&path, &source).unwrap_err().to_string(), whole);
    assert!(whole.contains("must be the same"), "{whole}");
}

#[test]
fn a_choice_among_a_records_signals_streams_to_the_whole_reads_choice() {
    let dir = tempfile::tempdir().unwrap();
    let path = record(dir.path());
    let config = Config::new(FS as f32);
    // The arm swing, a pure 1.3 Hz sine for 25 s, beats the pulse.
    for (spec, chosen) in [
        ("auto", Some("AX")),
        ("AZ, PLETH,AY", Some("PLETH")),
        ("AY,AX", Some("AX")),
        ("PLETH,", None),
    ] {
        let source = Source {
            signal: Some(spec.into()),
            polarity: Polarity::Down,
            ..Source::default()
        };
        let whole = load(&path, &source).unwrap();
        let streamed = open(&path, &source).unwrap();
        assert_eq!(streamed.head.input, whole.input, "{spec}");
        assert_eq!(streamed.head.signal.name, whole.signal.name, "{spec}");
        let got = streamed
            .head
            .input
            .channel
            .as_ref()
            .map(|c| c.chosen.as_str());
        assert_eq!(got, chosen, "{spec}");
        let want = replay_recording(&whole, config).unwrap();
        assert_eq!(streamed.replay(config).unwrap(), want, "{spec}");
    }
    let unknown = Source {
        signal: Some("PLETH,NONE".into()),
        ..Source::default()
    };
    let e = load(&path, &unknown).unwrap_err().to_string();
    assert_eq!(open(&path, &unknown).unwrap_err().to_string(), e);
}

/// A 60 s camera-like CSV at 30 rows a second, no time column: `R` near
/// the top of its range, `G` the pulse (falling with each beat), `B`
/// noise, `nan` now and then.
fn camera_csv(dir: &Path) -> PathBuf {
    let s = generate(&SynthOptions {
        sample_rate_hz: 30.0,
        duration_s: 60.0,
        hr: HrSchedule::constant(70.0),
        ..SynthOptions::default()
    })
    .unwrap();
    let mut text = String::from("R,G,B\n");
    for (k, &v) in s.samples.iter().enumerate() {
        let g = if k % 211 == 5 {
            "nan".to_string()
        } else {
            format!("{:.3}", 120.0 - 8.0 * f64::from(v))
        };
        text += &format!(
            "{:.2},{g},{}\n",
            (250.0 + f64::from(v)).min(252.0),
            (k * 7919) % 17
        );
    }
    let path = dir.join("cam.csv");
    std::fs::write(&path, text).unwrap();
    path
}

#[test]
fn a_csv_file_at_a_given_rate_streams_the_whole_reads_replay() {
    let dir = tempfile::tempdir().unwrap();
    let path = camera_csv(dir.path());
    let config = Config::new(30.0);
    for signal in [None, Some("G"), Some("B,R"), Some("G,B")] {
        for polarity in [Polarity::Auto, Polarity::Up] {
            let source = Source {
                signal: signal.map(String::from),
                rate: Some(30.0),
                polarity,
                ..Source::default()
            };
            let whole = load(&path, &source).unwrap();
            let streamed = open(&path, &source).unwrap();
            assert!(matches!(streamed.samples, super::stream::Samples::Csv(_)));
            assert_eq!(streamed.head.input, whole.input, "{signal:?}");
            assert_eq!(streamed.head.signal.name, whole.signal.name);
            assert_eq!(streamed.len, whole.signal.samples.len() as u64);
            let want = replay_recording(&whole, config).unwrap();
            assert_eq!(
                streamed.replay(config).unwrap(),
                want,
                "{signal:?} {polarity:?}"
            );
        }
    }
    // Refused as the whole read refuses: a bad cell, a column not there,
    // a rate outside the pipeline's.
    let bad = dir.path().join("bad.csv");
    std::fs::write(&bad, "R,G\n1,2\n3,oops\n").unwrap();
    for (file, signal, rate) in [(&bad, "G", 30.0), (&path, "Q", 30.0), (&path, "G", 2000.0)] {
        let source = Source {
            signal: Some(signal.into()),
            rate: Some(rate),
            ..Source::default()
        };
        let whole = load(file, &source).unwrap_err().to_string();
        assert_eq!(open(file, &source).unwrap_err().to_string(), whole);
    }
}

/// The camera CSV of [`camera_csv`] with frame times (`time` in `unit`,
/// jittered, a frame now and then dropped) and an accelerometer
/// (`AX`, `AY`, `AZ`).
fn timed_camera_csv(dir: &Path, unit: f64, steady: bool) -> PathBuf {
    let plain = std::fs::read_to_string(camera_csv(dir)).unwrap();
    let mut text = String::from("time,R,G,B,AX,AY,AZ\n");
    let mut t = 1.5;
    for (k, line) in plain.lines().skip(1).enumerate() {
        if !steady && k % 97 == 40 {
            t += 1.0 / 30.0; // dropped
        }
        let jitter = if steady {
            0.0
        } else {
            ((k * 37) % 11) as f64 * 4e-4
        };
        let swing = (k as f64 * 0.27).sin() * if (600..1200).contains(&k) { 0.8 } else { 0.0 };
        text += &format!("{:.6},{line},{swing:.4},0.01,1.0\n", (t + jitter) / unit);
        t += 1.0 / 30.0;
    }
    let path = dir.join(format!("timed-{unit}-{steady}.csv"));
    std::fs::write(&path, text).unwrap();
    path
}

#[test]
fn a_csv_file_with_a_time_column_streams_the_whole_reads_replay() {
    let dir = tempfile::tempdir().unwrap();
    for (unit, steady) in [(1.0, true), (1.0, false), (1e-3, false)] {
        let path = timed_camera_csv(dir.path(), unit, steady);
        for rate in [None, Some(40.0)] {
            for motion in [None, Some(["AX", "AY", "AZ"].map(String::from))] {
                let source = Source {
                    signal: Some("R,G,B".into()),
                    rate,
                    // With a rate, the time column must be named.
                    time_column: rate.map(|_| "time".to_string()),
                    time_unit: (unit != 1.0).then(|| "ms".to_string()),
                    motion: motion.clone(),
                    ..Source::default()
                };
                let whole = load(&path, &source).unwrap();
                let streamed = open(&path, &source).unwrap();
                let what = format!("{path:?} {rate:?} {motion:?}");
                assert_eq!(streamed.head.input, whole.input, "{what}");
                assert!(whole.input.time_column.is_some(), "{what}");
                assert_eq!(streamed.head.signal.fs, whole.signal.fs, "{what}");
                assert_eq!(streamed.len, whole.signal.samples.len() as u64, "{what}");
                assert_eq!(streamed.motion_names(), motion.as_ref(), "{what}");
                let config = Config::new(whole.signal.fs as f32);
                let want = replay_recording(&whole, config).unwrap();
                assert!(want.beats.len() > 50, "{what}: {}", want.beats.len());
                assert_eq!(streamed.replay(config).unwrap(), want, "{what}");
            }
        }
    }
    // Refused as the whole read refuses: a time that goes back, a bad
    // accelerometer cell, a unit that puts the rate out of range.
    let back = dir.path().join("back.csv");
    std::fs::write(&back, "time,G\n0,1\n0.04,2\n0.03,3\n0.1,4\n").unwrap();
    let bad_motion = dir.path().join("motion.csv");
    std::fs::write(
        &bad_motion,
        "time,G,AX,AY,AZ\n0,1,0,0,1\n0.04,2,0,x,1\n0.08,3,0,0,1\n",
    )
    .unwrap();
    let timed = timed_camera_csv(dir.path(), 1.0, false);
    let cases = [
        (&back, None, None),
        (
            &bad_motion,
            Some(["AX", "AY", "AZ"].map(String::from)),
            None,
        ),
        (&timed, None, Some("ms")),
    ];
    for (file, motion, unit) in cases {
        let source = Source {
            signal: Some("G".into()),
            motion,
            time_unit: unit.map(String::from),
            ..Source::default()
        };
        let whole = load(file, &source).unwrap_err().to_string();
        assert_eq!(open(file, &source).unwrap_err().to_string(), whole);
    }
}
