//! `bench_record`: a long made-up recording for `scripts/bench-memory`.
//!
//! Invented data, in a scenario of our own: a day on one finger clip at
//! 500 Hz, heart rate low at night, up during a walk and a run, a few
//! bursts of hand movement and two stretches with the finger off. It is
//! written as a WFDB record (format 16, signal `PLETH`) with the true
//! systolic peaks as `<name>.peak`, the annotator `score` and `report`
//! take by default. With `--accelerometer` the record also holds
//! `ACCX`, `ACCY`, `ACCZ` (g, made up: gravity on z, the hand's movement
//! on x during the bursts), for `--motion` and `--signal auto`. With
//! `--csv` the same signals go to `<name>.csv` instead, after a column
//! `time_ms` of uneven frame times (made up: each frame up to 0.3 periods
//! early or late, one in 500 dropped), so the rows are resampled onto the
//! median frame rate; no true beats are written for it. With `--ecg`
//! the WFDB record holds `ECG` too (mV, made up: a QRS and a T wave a
//! fixed delay before each true pulse, on a slow wander), for
//! `score --ecg`.

use std::path::PathBuf;
use std::process::ExitCode;

use plethwire_records::{annotation_path, write_annotations, Annotation, NewSignal, RecordWriter};
use plethwire_synth::{generate, FingerOff, HrSchedule, MotionBurst, SynthOptions};

const HELP: &str = "\
bench_record: a made-up long recording for the memory benchmark

Usage: bench_record DIR [--hours H] [--rate HZ] [--name NAME] [--accelerometer] [--csv] [--ecg]

Writes DIR/NAME.hea, NAME.dat (format 16, signal PLETH; with
--accelerometer also ACCX, ACCY, ACCZ in g; with --ecg also ECG in mV)
and NAME.peak (the true systolic peaks); with --csv, DIR/NAME.csv instead: time_ms (uneven
frame times), PLETH and the accelerometer's columns. Defaults: 24 hours,
500 Hz, name day.";

/// Stored units per g of the made-up accelerometer.
const ACC_GAIN: f64 = 8_000.0;
/// Stored units per mV of the made-up ECG.
const ECG_GAIN: f64 = 1_000.0;
/// The made-up ECG's R peak comes this long before its pulse's systolic
/// peak, seconds (a pulse arrival time of our own choosing).
const ECG_LEAD_S: f64 = 0.25;

/// Stored units per signal unit, and the stored value of zero: the made-up
/// signal sits near 1.5 units, so it is stored around 0 with room for the
/// pulse and the movement.
const GAIN: f64 = 10_000.0;
const BASELINE: i32 = -15_000;

fn scenario(hours: f64, fs: f64) -> SynthOptions {
    let h = 3600.0;
    let day = hours * h;
    // (time s, bpm) as shares of the day: night, morning, walk, run, evening.
    let points: Vec<(f64, f64)> = [
        (0.0, 58.0),
        (0.25, 54.0),
        (0.33, 70.0),
        (0.45, 95.0),
        (0.5, 135.0),
        (0.55, 80.0),
        (0.8, 72.0),
        (1.0, 60.0),
    ]
    .iter()
    .map(|&(share, bpm)| (share * day, bpm))
    .collect();
    let motion = (1..8)
        .map(|k| MotionBurst {
            start_s: day * k as f64 / 8.0,
            duration_s: 20.0,
            amplitude: 0.1,
        })
        .collect();
    let finger_off = [0.4, 0.7]
        .iter()
        .map(|&share| FingerOff {
            start_s: share * day,
            duration_s: 30.0,
        })
        .collect();
    SynthOptions {
        sample_rate_hz: fs,
        duration_s: day,
        hr: HrSchedule::from_points(&points),
        motion,
        finger_off,
        seed: 20_261_203,
        ..SynthOptions::default()
    }
}

fn run(args: &[String]) -> Result<String, String> {
    let mut dir: Option<PathBuf> = None;
    let (mut hours, mut fs, mut name) = (24.0, 500.0, "day".to_string());
    let (mut accelerometer, mut csv, mut ecg) = (false, false, false);
    let mut it = args.iter();
    while let Some(a) = it.next() {
        let mut value = |what: &str| it.next().cloned().ok_or(format!("{what} needs a value"));
        match a.as_str() {
            "--hours" => {
                hours = value("--hours")?
                    .parse()
                    .map_err(|e| format!("--hours: {e}"))?
            }
            "--rate" => {
                fs = value("--rate")?
                    .parse()
                    .map_err(|e| format!("--rate: {e}"))?
            }
            "--name" => name = value("--name")?,
            "--accelerometer" => accelerometer = true,
            "--csv" => csv = true,
            "--ecg" => ecg = true,
            "-h" | "--help" => return Ok(HELP.to_string()),
            _ if dir.is_none() => dir = Some(PathBuf::from(a)),
            _ => return Err(format!("unexpected argument {a:?}\n\n{HELP}")),
        }
    }
    let dir = dir.ok_or(format!("no folder given\n\n{HELP}"))?;
    std::fs::create_dir_all(&dir).map_err(|e| format!("{}: {e}", dir.display()))?;
    let options = scenario(hours, fs);
    let rec = generate(&options).map_err(|e| e.to_string())?;
    if csv {
        return write_csv(&dir, &name, &options, &rec.samples, accelerometer);
    }
    let mut signals = vec![NewSignal::new("PLETH", "NU", GAIN, BASELINE)];
    if accelerometer {
        for axis in ["ACCX", "ACCY", "ACCZ"] {
            signals.push(NewSignal::new(axis, "g", ACC_GAIN, 0));
        }
    }
    let heart = ecg.then(|| demo_ecg(&rec.peak_indices(), fs, rec.samples.len()));
    if ecg {
        signals.push(NewSignal::new("ECG", "mV", ECG_GAIN, 0));
    }
    let mut w = RecordWriter::create(&dir, &name, fs, &signals).map_err(|e| e.to_string())?;
    let mut frame = Vec::with_capacity(4);
    for (n, &x) in rec.samples.iter().enumerate() {
        let stored = (f64::from(x) * GAIN).round() as i64 + i64::from(BASELINE);
        frame.clear();
        frame.push(stored.clamp(-32_767, 32_767) as i32);
        if accelerometer {
            frame.extend(acceleration(&options, n as f64 / fs).map(|g| (g * ACC_GAIN) as i32));
        }
        if let Some(heart) = &heart {
            frame.push((f64::from(heart[n]) * ECG_GAIN).round() as i32);
        }
        w.push_frame(&frame).map_err(|e| e.to_string())?;
    }
    let (_, header) = w.finish().map_err(|e| e.to_string())?;
    let peaks: Vec<Annotation> = rec
        .peak_indices()
        .into_iter()
        .map(|p| Annotation::beat(p as i64))
        .collect();
    let ann = annotation_path(&dir.join(&name), "peak");
    write_annotations(&ann, &peaks).map_err(|e| e.to_string())?;
    Ok(format!(
        "{}: {} samples at {fs} Hz, {} true beats in {}",
        header.display(),
        rec.samples.len(),
        peaks.len(),
        ann.display()
    ))
}

/// `samples` (with the accelerometer's when asked for) as `dir/name.csv`
/// after a column of uneven frame times in ms.
fn write_csv(
    dir: &std::path::Path,
    name: &str,
    options: &SynthOptions,
    samples: &[f32],
    accelerometer: bool,
) -> Result<String, String> {
    use std::io::Write;
    let path = dir.join(format!("{name}.csv"));
    let fail = |e: std::io::Error| format!("{}: {e}", path.display());
    let mut out = std::io::BufWriter::new(std::fs::File::create(&path).map_err(fail)?);
    let fs = options.sample_rate_hz;
    let header = if accelerometer {
        "time_ms,PLETH,ACCX,ACCY,ACCZ\n"
    } else {
        "time_ms,PLETH\n"
    };
    out.write_all(header.as_bytes()).map_err(fail)?;
    let mut rows = 0u64;
    for (n, &x) in samples.iter().enumerate() {
        if n % 500 == 250 {
            continue; // a dropped frame
        }
        // Up to 0.3 periods early or late, from a hash of the frame's
        // number: the steps' median stays one period.
        let jitter = mixed(n as u64) * 0.6 - 0.3;
        let t_ms = (n as f64 + jitter) / fs * 1e3;
        write!(out, "{t_ms:.3},{:.5}", f64::from(x)).map_err(fail)?;
        if accelerometer {
            let [ax, ay, az] = acceleration(options, n as f64 / fs);
            write!(out, ",{ax:.4},{ay:.4},{az:.4}").map_err(fail)?;
        }
        out.write_all(b"\n").map_err(fail)?;
        rows += 1;
    }
    out.flush().map_err(fail)?;
    Ok(format!(
        "{}: {rows} rows of uneven frames near {fs} Hz",
        path.display()
    ))
}

/// A number in [0, 1) from `n`, no two neighbours alike (the SplitMix64
/// finaliser, Steele, Lea and Flood, OOPSLA 2014).
fn mixed(n: u64) -> f64 {
    let mut z = n.wrapping_add(0x9E37_79B9_7F4A_7C15);
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^= z >> 31;
    (z >> 11) as f64 / (1u64 << 53) as f64
}

/// The made-up wrist at `t` s, g: gravity on z, a slight tilt on y, and
/// during each of the scenario's movement bursts a 2 Hz swing of 0.8 g on x.
fn acceleration(options: &SynthOptions, t: f64) -> [f64; 3] {
    let moving = options
        .motion
        .iter()
        .any(|b| (b.start_s..b.start_s + b.duration_s).contains(&t));
    let swing = if moving {
        0.8 * (2.0 * std::f64::consts::PI * 2.0 * t).sin()
    } else {
        0.0
    };
    [swing, 0.12, 0.99]
}

/// A made-up ECG of `len` samples at `fs` Hz, mV: for each true pulse
/// peak, Q, R, S and T waves as Gaussian bumps [`ECG_LEAD_S`] before it,
/// on a 0.1 Hz wander of 0.2 mV.
fn demo_ecg(peaks: &[usize], fs: f64, len: usize) -> Vec<f32> {
    let mut x: Vec<f32> = (0..len)
        .map(|n| (0.2 * (2.0 * std::f64::consts::PI * 0.1 * n as f64 / fs).sin()) as f32)
        .collect();
    // (offset s, width s, height mV) of Q, R, S, T.
    let waves = [
        (-0.025, 0.008, -0.15),
        (0.0, 0.010, 1.0),
        (0.03, 0.010, -0.25),
        (0.22, 0.045, 0.3),
    ];
    for &p in peaks {
        let r = p as f64 - ECG_LEAD_S * fs;
        for (off, w, h) in waves {
            let centre = r + off * fs;
            let reach = (4.0 * w * fs) as isize;
            for i in (centre as isize - reach)..=(centre as isize + reach) {
                if let Some(v) = usize::try_from(i).ok().and_then(|i| x.get_mut(i)) {
                    let d = (i as f64 - centre) / (w * fs);
                    *v += (h * (-0.5 * d * d).exp()) as f32;
                }
            }
        }
    }
    x
}

fn main() -> ExitCode {
    let args: Vec<String> = std::env::args().skip(1).collect();
    match run(&args) {
        Ok(text) => {
            println!("{text}");
            ExitCode::SUCCESS
        }
        Err(e) => {
            eprintln!("bench_record: {e}");
            ExitCode::FAILURE
        }
    }
}
