//! Camera-style CSV input through the real binary: uneven frame times in
//! ms, colour channels to choose from, a strap's R-R list to score against;
//! and the refusals of bad times, units and R-R lists. Recordings are
//! invented in a temp folder (a synthetic pulse, `plethwire_synth`).

use plethwire_records::{write_record, NewSignal};
use plethwire_synth::{generate, HrSchedule, SynthOptions};
use std::fmt::Write as _;
use std::path::Path;
use std::process::Command;

/// Run `plethwire args` in a fresh scratch folder (where its outputs go
/// unless `--out` says otherwise).
fn plethwire(args: &[&str]) -> (i32, String, String) {
    let scratch = tempfile::tempdir().unwrap();
    let out = Command::new(env!("CARGO_BIN_EXE_plethwire"))
        .args(args)
        .current_dir(scratch.path())
        .output()
        .expect("run plethwire");
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

fn one_line_failure(args: &[&str], names: &[&str]) {
    let (code, stdout, stderr) = plethwire(args);
    assert_eq!(code, 1, "{args:?}: exit {code}, stderr {stderr}");
    assert!(stdout.is_empty(), "{args:?}: {stdout}");
    assert_eq!(stderr.lines().count(), 1, "{args:?}: {stderr}");
    assert!(!stderr.contains("panicked"), "{stderr}");
    for n in names {
        assert!(
            stderr.starts_with("plethwire: ") && stderr.contains(n),
            "{args:?}: {stderr}"
        );
    }
}

/// A 60 s finger on a camera at 70 bpm (intervals scattered by 60 ms SD,
/// as a resting heart: a steadier one leaves the alignment less sure): frames about 33 ms apart (31 to
/// 36 ms, a 120 ms gap every 10 s), `time` in ms; the pulse in G (pointing
/// down, as brightness does), R stuck at 255, B noise. Writes
/// `<name>.csv` and the true peak-to-peak intervals from beat 5 on as
/// `<name>.rr.txt`.
fn make_camera_clip(dir: &Path, name: &str) {
    let s = generate(&SynthOptions {
        sample_rate_hz: 1000.0,
        duration_s: 60.0,
        hr: HrSchedule::constant(70.0),
        hr_variability_sd_ms: 60.0,
        ..SynthOptions::default()
    })
    .unwrap();
    let mut text = String::from("time,R,G,B\n");
    let (mut t, mut k) = (0usize, 0u64);
    while t < s.samples.len() {
        let g = 120.0 - 10.0 * f64::from(s.samples[t]);
        let b = 20.0 + ((k * 7919) % 13) as f64 * 0.1;
        writeln!(text, "{t},255,{g:.3},{b:.1}").unwrap();
        k += 1;
        t += if k % 300 == 0 {
            120
        } else {
            31 + (k * 37 % 6) as usize
        };
    }
    std::fs::write(dir.join(format!("{name}.csv")), text).unwrap();
    // Peak to peak from beat 5 on: the strap's first beat is beat 5's peak.
    let rr: String = s.beats[5..]
        .windows(2)
        .map(|w| format!("{:.0}\n", 1000.0 * (w[1].peak_s - w[0].peak_s)))
        .collect();
    std::fs::write(dir.join(format!("{name}.rr.txt")), rr).unwrap();
}

#[test]
fn uneven_camera_frames_are_resampled_chosen_and_scored_against_the_strap() {
    let dir = tempfile::tempdir().unwrap();
    make_camera_clip(dir.path(), "clip");
    let csv = dir.path().join("clip.csv");
    let (code, out, err) = plethwire(&["replay", csv.to_str().unwrap(), "--json"]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    let input = &v["input"];
    assert_eq!(input["time_column"], "time");
    assert_eq!(input["time_unit"], "ms");
    assert_eq!(input["time_unit_from"], "guessed from the frame steps");
    assert_eq!(input["channel"]["chosen"], "G", "{input}");
    assert_eq!(input["inverted"], true);
    let r = &input["resampled"];
    assert!(r["resampled_share"].as_f64().unwrap() > 0.1, "{r}");
    assert!((r["longest_gap_s"].as_f64().unwrap() - 0.12).abs() < 1e-9);
    assert_eq!(r["missing_samples"], 0);
    let beats = v["summary"]["beats"].as_u64().unwrap();
    assert!((65..=75).contains(&beats), "70 bpm for 60 s: {beats}");
    // The text summary says which unit and channel were used.
    let (code, out, _) = plethwire(&["replay", csv.to_str().unwrap()]);
    assert_eq!(code, 0);
    assert!(out.contains("in ms"), "{out}");
    assert!(out.contains("G chosen"), "{out}");

    let (code, out, err) = plethwire(&["score", dir.path().to_str().unwrap(), "--json"]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    let strap = &v["records"][0]["strap"];
    assert_eq!(strap["alignment"]["determined"], true, "{strap}");
    // The strap starts at beat 5's peak.
    let truth_ms = {
        let s = generate(&SynthOptions {
            sample_rate_hz: 1000.0,
            duration_s: 60.0,
            hr: HrSchedule::constant(70.0),
            hr_variability_sd_ms: 60.0,
            ..SynthOptions::default()
        })
        .unwrap();
        s.beats[5].peak_s * 1000.0
    };
    let offset = strap["alignment"]["offset_ms"].as_f64().unwrap();
    // Within a frame period plus the rounding of the list's whole ms.
    assert!((offset - truth_ms).abs() < 40.0, "{offset} vs {truth_ms}");
    let hr = &strap["mean_hr_bpm"];
    assert!((hr["ours"].as_f64().unwrap() - hr["strap"].as_f64().unwrap()).abs() < 2.0);
    let (code, out, _) = plethwire(&["score", dir.path().to_str().unwrap()]);
    assert_eq!(code, 0);
    assert!(out.contains("offset s") && out.contains("clip"), "{out}");

    // A WFDB record with a table beside it: the table is no recording.
    let pulse: Vec<i32> = (0..3000)
        .map(|k| (1000.0 * (k as f64 * 0.05).sin()) as i32)
        .collect();
    let sig = NewSignal::new("PLETH", "NU", 1000.0, 0);
    write_record(dir.path(), "rec", 100.0, &[sig], &[pulse]).unwrap();
    std::fs::write(dir.path().join("recn.csv"), "time_s,pulse_bpm\n0,60\n").unwrap();
    let (code, out, err) = plethwire(&["score", dir.path().to_str().unwrap(), "--json"]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    let names: Vec<&str> = v["records"]
        .as_array()
        .unwrap()
        .iter()
        .map(|r| r["record"].as_str().unwrap())
        .collect();
    assert_eq!(names, ["clip", "rec"]);
}

#[test]
fn a_list_of_signals_chooses_among_csv_columns_and_wfdb_signals() {
    let dir = tempfile::tempdir().unwrap();
    make_camera_clip(dir.path(), "clip");
    let csv = dir.path().join("clip.csv");
    let (code, out, err) =
        plethwire(&["replay", csv.to_str().unwrap(), "--signal", "R,B", "--json"]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(
        v["input"]["channel"]["candidates"]
            .as_array()
            .unwrap()
            .len(),
        2
    );
    // One column by name: no choice, that column.
    let (code, out, err) = plethwire(&["replay", csv.to_str().unwrap(), "--signal", "B", "--json"]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["signal"], "B");
    assert!(v["input"]["channel"].is_null());
    // A record with two LEDs' signals: noise in LED1, the pulse in LED2.
    let s = generate(&SynthOptions {
        sample_rate_hz: 125.0,
        duration_s: 40.0,
        hr: HrSchedule::constant(66.0),
        ..SynthOptions::default()
    })
    .unwrap();
    let pulse: Vec<i32> = s.samples.iter().map(|&v| (v * 1000.0) as i32).collect();
    let noise: Vec<i32> = (0..pulse.len() as i64)
        .map(|k| ((k * 7919 + 13) % 201 - 100) as i32)
        .collect();
    let led1 = NewSignal::new("LED1", "NU", 1000.0, 0);
    let led2 = NewSignal::new("LED2", "NU", 1000.0, 0);
    write_record(dir.path(), "two", 125.0, &[led1, led2], &[noise, pulse]).unwrap();
    let rec = dir.path().join("two");
    let (code, out, err) = plethwire(&[
        "replay",
        rec.to_str().unwrap(),
        "--signal",
        "LED1,LED2",
        "--out",
        dir.path().to_str().unwrap(),
        "--json",
    ]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["input"]["channel"]["chosen"], "LED2", "{}", v["input"]);
    assert_eq!(v["input"]["inverted"], false);
}

#[test]
fn bad_times_units_and_strap_lists_are_one_line_refusals() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    // Times that go back on line 4.
    let back = d.join("back.csv");
    std::fs::write(&back, "time,G\n0,1\n33,2\n20,3\n66,4\n").unwrap();
    one_line_failure(
        &["replay", back.to_str().unwrap(), "--time-unit", "ms"],
        &["back.csv line 4", "times must increase"],
    );
    // A unit that is none of s, ms, us.
    make_camera_clip(d, "clip");
    let clip = d.join("clip.csv");
    one_line_failure(
        &[
            "replay",
            clip.to_str().unwrap(),
            "--time-column",
            "time",
            "--time-unit",
            "min",
        ],
        &["clip.csv", "unknown time unit"],
    );
    // A ms column read as seconds gives a rate the pipeline cannot take.
    one_line_failure(
        &["replay", clip.to_str().unwrap(), "--time-column", "time"],
        &["clip.csv", "--time-unit"],
    );
    // A grid rate that would need memory without end.
    one_line_failure(
        &[
            "replay",
            clip.to_str().unwrap(),
            "--time-column",
            "time",
            "--time-unit",
            "ms",
            "--rate",
            "1e12",
        ],
        &["clip.csv", "more than"],
    );
    // An empty R-R list, then one with a word on line 2.
    let rr = d.join("clip.rr.txt");
    std::fs::write(&rr, "\n\n").unwrap();
    one_line_failure(
        &["score", clip.to_str().unwrap()],
        &["clip.rr.txt", "empty"],
    );
    std::fs::write(&rr, "800\nabout 810\n790\n").unwrap();
    one_line_failure(
        &["score", clip.to_str().unwrap()],
        &["clip.rr.txt line 2", "not an interval"],
    );
}
