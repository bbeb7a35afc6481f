//! `plethwire score` on a signal stored with two samples per frame: the
//! expert's beats count frames of the record (WFDB annotations without a
//! time-resolution note do, annot(5)), the detector's count the signal's
//! own samples; the score must put both on one clock. The recording is
//! invented (a synthetic pulse, `plethwire_synth`), written by hand as
//! format 16 with `16x2` in its header (header(5): samples per frame).

use plethwire_records::{annotation_path, write_annotations, Annotation};
use std::path::{Path, PathBuf};

mod common;
use common::run_in as plethwire;

/// A 30 s, 72 bpm pulse at 250 Hz stored as 125 frames/s of 2 samples,
/// and its true beats as `<name>.peak` in frames.
fn twice_per_frame(dir: &Path, name: &str) -> PathBuf {
    let s = plethwire_synth::generate(&plethwire_synth::SynthOptions {
        sample_rate_hz: 250.0,
        duration_s: 30.0,
        hr: plethwire_synth::HrSchedule::constant(72.0),
        ..plethwire_synth::SynthOptions::default()
    })
    .unwrap();
    let mut stored: Vec<i16> = s
        .samples
        .iter()
        .map(|&v| (v * 1000.0).round() as i16)
        .collect();
    stored.truncate(stored.len() / 2 * 2);
    let bytes: Vec<u8> = stored.iter().flat_map(|v| v.to_le_bytes()).collect();
    std::fs::write(dir.join(format!("{name}.dat")), bytes).unwrap();
    let checksum = stored.iter().fold(0i16, |a, &v| a.wrapping_add(v));
    let header = format!(
        "{name} 1 125 {frames}\n{name}.dat 16x2 1000/NU 16 0 {first} {checksum} 0 PLETH\n",
        frames = stored.len() / 2,
        first = stored[0],
    );
    std::fs::write(dir.join(format!("{name}.hea")), header).unwrap();
    let beats: Vec<Annotation> = s
        .beats
        .iter()
        .map(|b| Annotation::beat((b.peak / 2) as i64))
        .collect();
    write_annotations(annotation_path(&dir.join(name), "peak"), &beats).unwrap();
    dir.join(name)
}

#[test]
fn references_in_frames_score_a_signal_of_two_samples_per_frame() {
    let dir = tempfile::tempdir().unwrap();
    let rec = twice_per_frame(dir.path(), "twice");
    let (code, out, err) = plethwire(dir.path(), &["score", rec.to_str().unwrap(), "--json"]);
    assert_eq!(code, 0, "{err}\n{out}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    let beats = &v["records"][0]["beats"];
    let f1 = beats["f1_percent"]
        .as_f64()
        .unwrap_or_else(|| panic!("no f1_percent in {v}"));
    // 36 beats of a clean synthetic pulse: every one is found when both
    // lists count the same samples (on separate clocks 15 of 36 matched).
    assert!(f1 > 95.0, "F1 {f1}: {beats}");
}
