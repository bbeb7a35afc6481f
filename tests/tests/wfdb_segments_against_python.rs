//! The WFDB a user meets beyond single records, checked against the
//! Python wfdb package (4.x; written against 4.3.1, and the script reports
//! the version it ran), driven by
//! `tests/python/wfdb_reference.py`:
//!
//! * skewed signals: header checksums are over the samples as stored,
//!   which `wfdb.rdrecord(..., physical=False, ignore_skew=True)` returns;
//! * the annotation time-resolution note: `wfdb.rdann` reads ours and its
//!   `fs`, `wfdb.wrann(..., fs=...)` writes one we read, and a replay of a
//!   signal with several samples per frame writes one so `rdann` places
//!   the beats right;
//! * code-0 entries and NOTE annotations with aux text round trip;
//! * multi-segment records (fixed and variable layout, gaps `~`, signals a
//!   segment lacks) written by `wrsamp` and `MultiRecord.wrheader`, read
//!   by us and by `wfdb.rdrecord`, also through the host's record loading.

use std::path::Path;

use plethwire::replay::{load, replay_recording, write_recording_beats, Source};
use plethwire_checks::{need, needs};
use plethwire_dsp::pipeline::Config;
use plethwire_records::{
    annotation_path, checksum, encode_annotations, read_annotation_file, read_annotations,
    write_annotation_file, write_annotations, Annotation, AnnotationFile, Record,
};
use serde::Deserialize;
use serde_json::{json, Value};

#[path = "wfdb_against_python/reference.rs"]
mod reference;
use reference::{assert_blocks_equal, have_wfdb, read_le, reference, wrann_task, PyAnnotations};

fn le16(values: &[i16]) -> Vec<u8> {
    values.iter().flat_map(|v| v.to_le_bytes()).collect()
}

/// `rdann`'s reading with the file's `fs`.
#[derive(Deserialize, Debug)]
struct PyAnnFs {
    fs: Option<f64>,
}

fn read_ann(record: &Path, ext: &str) -> Value {
    json!({"op": "read_ann", "record": record.display().to_string(), "ext": ext})
}

#[test]
fn skewed_checksums_are_over_the_stored_samples_as_rdrecord_reads_them() {
    if !need(needs::PYTHON, have_wfdb()) {
        return;
    }
    let tmp = tempfile::tempdir().expect("temp dir");
    // Two signals in one format 16 file, the second 3 frames behind, and a
    // third in a file of its own, 1 frame behind (wfdb 4.3 cannot read two
    // different skews in one file). Checksums computed as header(5) says:
    // the 16-bit sum of the signal's samples as the file stores them.
    let n = 400usize;
    let cols: Vec<Vec<i16>> = (0..3)
        .map(|s| {
            (0..n)
                .map(|k| ((k * 7919 + s * 104_729) % 60_001) as i32 - 30_000)
                .map(|v| v as i16)
                .collect()
        })
        .collect();
    let frames: Vec<i16> = (0..n).flat_map(|k| [cols[0][k], cols[1][k]]).collect();
    std::fs::write(tmp.path().join("skw.dat"), le16(&frames)).unwrap();
    std::fs::write(tmp.path().join("skw_c.dat"), le16(&cols[2])).unwrap();
    let sum = |c: &[i16]| checksum(&c.iter().map(|&v| v as i32).collect::<Vec<_>>());
    let header = format!(
        "skw 3 250 {n}\n\
         skw.dat 16 100/mV 16 0 {} {} 0 A\n\
         skw.dat 16:3 100/mV 16 0 {} {} 0 B\n\
         skw_c.dat 16:1 100/mV 16 0 {} {} 0 C\n",
        cols[0][0],
        sum(&cols[0]),
        cols[1][0],
        sum(&cols[1]),
        cols[2][0],
        sum(&cols[2])
    );
    std::fs::write(tmp.path().join("skw.hea"), header).unwrap();
    let rec_path = tmp.path().join("skw");
    let answers = reference(vec![
        json!({"op": "stored_sums", "record": rec_path.display().to_string()}),
        json!({"op": "read_record", "record": rec_path.display().to_string(),
               "out": tmp.path().join("skw.out").display().to_string(), "expanded": false}),
    ]);
    #[derive(Deserialize)]
    struct Sums {
        checksum: Vec<i64>,
        sums: Vec<i64>,
    }
    let py: Sums = serde_json::from_value(answers[0].clone()).expect("sums answer");
    // Python wfdb: the header checksums equal the sums of the stored samples.
    for s in 0..3 {
        assert_eq!(py.checksum[s].rem_euclid(65536), py.sums[s], "signal {s}");
    }
    let rec = Record::open(&rec_path).unwrap_or_else(|e| panic!("{e}"));
    rec.verify_checksums().unwrap_or_else(|e| panic!("{e}"));
    // And the skew itself is undone as rdrecord undoes it.
    let py_rec: reference::PyRecord = serde_json::from_value(answers[1].clone()).unwrap();
    let mut tally = reference::Tally::default();
    reference::compare(&rec, &py_rec, &tmp.path().join("skw.out"), &mut tally);
    assert!(tally.nans >= 4, "{tally:?}");
}

#[test]
fn time_resolution_notes_cross_between_us_and_rdann_and_wrann() {
    if !need(needs::PYTHON, have_wfdb()) {
        return;
    }
    let tmp = tempfile::tempdir().expect("temp dir");
    let rec = tmp.path().join("tr");
    // A 250 Hz record beside the annotation files.
    std::fs::write(tmp.path().join("tr.hea"), "tr 1 250 10000\ntr.dat 16\n").unwrap();
    std::fs::write(tmp.path().join("tr.dat"), vec![0u8; 20_000]).unwrap();
    let ticks: Vec<Annotation> = (1..=60)
        .map(|k| Annotation::beat(k * 333 + k % 3))
        .collect();
    let ours = AnnotationFile {
        time_resolution: Some(1000.0),
        annotations: ticks.clone(),
    };
    write_annotation_file(annotation_path(&rec, "ours"), &ours).unwrap();
    let task = wrann_task(tmp.path(), "tr", "py", &ticks, Some(1000.0));
    let answers = reference(vec![read_ann(&rec, "ours"), task, read_ann(&rec, "py")]);
    // Python wfdb rdann: our note gives fs 1000 and the times as written.
    let fs: PyAnnFs = serde_json::from_value(answers[0].clone()).unwrap();
    assert_eq!(fs.fs, Some(1000.0));
    let py: PyAnnotations = serde_json::from_value(answers[0].clone()).unwrap();
    assert_eq!(py, PyAnnotations::from_ours(&ticks));
    // wrann's note, read by us: the same file, byte for byte as ours.
    let theirs = read_annotation_file(annotation_path(&rec, "py")).unwrap();
    assert_eq!(theirs, ours);
    let their_bytes = std::fs::read(annotation_path(&rec, "py")).unwrap();
    assert_eq!(
        std::fs::read(annotation_path(&rec, "ours")).unwrap(),
        their_bytes
    );
    // In frames of the 250 Hz record: ticks / 4, rounded.
    let frames = read_annotations(annotation_path(&rec, "py")).unwrap();
    for (f, t) in frames.iter().zip(&ticks) {
        assert_eq!(f.sample, (t.sample as f64 / 4.0).round() as i64);
    }
}

#[test]
fn beats_of_a_signal_with_two_samples_per_frame_land_right_in_rdann() {
    if !need(needs::PYTHON, have_wfdb()) {
        return;
    }
    let tmp = tempfile::tempdir().expect("temp dir");
    // 125 frames per second; PLETH has 2 samples per frame (250 Hz).
    let synth = plethwire_synth::generate(&plethwire_synth::SynthOptions {
        sample_rate_hz: 250.0,
        duration_s: 40.0,
        ..Default::default()
    })
    .expect("synthetic pulse");
    let pleth: Vec<i16> = synth
        .samples
        .iter()
        .map(|&x| (x * 1000.0).round() as i16)
        .collect();
    let frames = pleth.len() / 2;
    let mut stored = Vec::with_capacity(frames * 3);
    for f in 0..frames {
        stored.extend([pleth[2 * f], pleth[2 * f + 1], (f % 100) as i16]);
    }
    std::fs::write(tmp.path().join("twice.dat"), le16(&stored)).unwrap();
    let header = format!(
        "twice 2 125 {frames}\ntwice.dat 16x2 1000/NU 16 0 0 0 0 PLETH\ntwice.dat 16 1/NU 16 0 0 0 0 RAMP\n"
    );
    std::fs::write(tmp.path().join("twice.hea"), header).unwrap();
    let source = Source {
        signal: Some("PLETH".into()),
        ..Source::default()
    };
    let rec = load(&tmp.path().join("twice"), &source).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(rec.signal.fs, 250.0);
    let run = replay_recording(&rec, Config::new(250.0)).unwrap();
    let path = write_recording_beats(tmp.path(), &rec, "beats", &run).unwrap();
    let answers = reference(vec![read_ann(&tmp.path().join("twice"), "beats")]);
    // Python wfdb rdann: fs from our note (the header alone says 125).
    let fs: PyAnnFs = serde_json::from_value(answers[0].clone()).unwrap();
    assert_eq!(fs.fs, Some(250.0), "{}", path.display());
    let py: PyAnnotations = serde_json::from_value(answers[0].clone()).unwrap();
    let peaks: Vec<i64> = run.peaks().iter().map(|&p| p as i64).collect();
    assert_eq!(py.sample, peaks);
    assert!(peaks.len() > 30, "{} beats", peaks.len());
    // Seconds by rdann's fs match the synthetic truth's peaks.
    let truth: Vec<f64> = synth
        .peak_indices()
        .iter()
        .map(|&i| i as f64 / 250.0)
        .collect();
    let near = py
        .sample
        .iter()
        .filter(|&&s| truth.iter().any(|t| (s as f64 / 250.0 - t).abs() < 0.15))
        .count();
    assert!(
        near * 10 >= py.sample.len() * 9,
        "{near} of {}",
        py.sample.len()
    );
}

#[test]
fn code_0_and_note_entries_round_trip_and_rdann_reads_around_them() {
    if !need(needs::PYTHON, have_wfdb()) {
        return;
    }
    let tmp = tempfile::tempdir().expect("temp dir");
    let rec = tmp.path().join("c0");
    let mut anns = Vec::new();
    for k in 0..50i64 {
        let t = k * 97;
        anns.push(Annotation::beat(t + 5));
        if k % 5 == 0 {
            anns.push(Annotation::new(t + 5, 0));
        }
        if k % 7 == 3 {
            let mut note = Annotation::new(t + 9, 22);
            note.aux = Some(format!("lead off {k}"));
            anns.push(note);
        }
    }
    anns.push(Annotation::new(80_000, 0));
    write_annotations(annotation_path(&rec, "ours"), &anns).unwrap();
    let notes: Vec<&Annotation> = anns.iter().filter(|a| a.code == 22).collect();
    let owned: Vec<Annotation> = notes.iter().map(|&a| a.clone()).collect();
    let task = wrann_task(tmp.path(), "c0", "py", &owned, None);
    let answers = reference(vec![read_ann(&rec, "ours"), task]);
    // Python wfdb rdann drops code 0 and keeps the NOTEs with their text.
    let py: PyAnnotations = serde_json::from_value(answers[0].clone()).unwrap();
    assert_eq!(py, PyAnnotations::from_ours(&anns));
    assert!(py.aux_note.iter().any(|t| t == "lead off 3"));
    // Ours back: every entry, code 0 included; written again, the same bytes.
    let back = read_annotations(annotation_path(&rec, "ours")).unwrap();
    assert_eq!(back, anns);
    let bytes = std::fs::read(annotation_path(&rec, "ours")).unwrap();
    assert_eq!(encode_annotations(&back).unwrap(), bytes);
    // wrann's NOTEs, read by us and written back byte for byte.
    let theirs = read_annotation_file(annotation_path(&rec, "py")).unwrap();
    assert_eq!(theirs.annotations, owned);
    let their_bytes = std::fs::read(annotation_path(&rec, "py")).unwrap();
    assert_eq!(
        encode_annotations(&theirs.annotations).unwrap(),
        their_bytes
    );
}

#[path = "wfdb_segments_against_python/segments.rs"]
mod segments;
