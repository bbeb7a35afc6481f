//! A replay's beats as a WFDB annotation file, rows, and our beat CSV.

use super::{Recording, Replay, ReplayError};
use plethwire_records::{
    annotation_path, write_annotation_file, Annotation, AnnotationFile, Header,
};
use serde::Serialize;
use std::path::{Path, PathBuf};

/// `dir` (symbol `N` at each systolic peak); returns its path.
pub fn write_beat_annotations(
    dir: &Path,
    record_name: &str,
    annotator: &str,
    replay: &Replay,
) -> Result<PathBuf, ReplayError> {
    write_beats(dir, record_name, annotator, replay, None)
}

/// [`write_beat_annotations`] for the replay of `rec`. When its signal has
/// several samples per frame of a WFDB record, the times are that
/// signal's samples and the file says so in a time-resolution note
/// (annot(5)), so WFDB readers (Python wfdb's `rdann` among them) place
/// them right.
pub fn write_recording_beats(
    dir: &Path,
    rec: &Recording,
    annotator: &str,
    replay: &Replay,
) -> Result<PathBuf, ReplayError> {
    let header = annotation_path(&rec.path, "hea");
    let frame_rate = match header.is_file() {
        true => Some(Header::read(&header)?.fs),
        false => None,
    };
    let resolution = frame_rate.filter(|&f| f != replay.fs).map(|_| replay.fs);
    write_beats(dir, &rec.name, annotator, replay, resolution)
}

fn write_beats(
    dir: &Path,
    record_name: &str,
    annotator: &str,
    replay: &Replay,
    time_resolution: Option<f64>,
) -> Result<PathBuf, ReplayError> {
    let path = annotation_path(&dir.join(record_name), annotator);
    let annotations: Vec<Annotation> = replay
        .peaks()
        .into_iter()
        .map(|p| Annotation::beat(p as i64))
        .collect();
    let file = AnnotationFile {
        time_resolution,
        annotations,
    };
    write_annotation_file(&path, &file)?;
    Ok(path)
}

/// One beat as a row of our CSV and JSON beat files.
#[derive(Debug, Clone, Serialize)]
pub struct BeatRow {
    /// Peak sample.
    pub peak_sample: u64,
    /// Peak time, s.
    pub peak_s: f64,
    /// Onset sample, when the detector gives one.
    pub onset_sample: Option<u64>,
    /// Sample at which the event was emitted.
    pub emitted_sample: u64,
    /// Interval, ms.
    pub ibi_ms: Option<f32>,
    /// Instantaneous heart rate, bpm.
    pub hr_bpm: Option<f32>,
    /// Smoothed heart rate, bpm.
    pub hr_smoothed_bpm: Option<f32>,
    /// Pulse amplitude (input units).
    pub amplitude: f32,
    /// Template correlation, 0 to 1.
    pub quality: f32,
    /// Flag bits (see `plethwire_dsp::pipeline::BeatFlags`).
    pub flags: u8,
    /// Fit for heart rate and HRV.
    pub good: bool,
}

/// The beats as rows.
pub fn beat_rows(replay: &Replay) -> Vec<BeatRow> {
    replay
        .beats
        .iter()
        .map(|b| BeatRow {
            peak_sample: b.peak_index,
            peak_s: b.peak_index as f64 / replay.fs,
            onset_sample: b.onset_index,
            emitted_sample: b.emitted_at,
            ibi_ms: b.ibi_ms,
            hr_bpm: b.hr_bpm,
            hr_smoothed_bpm: b.hr_smoothed_bpm,
            amplitude: b.amplitude,
            quality: b.quality,
            flags: b.flags.0,
            good: b.flags.is_good(),
        })
        .collect()
}

/// Our beat CSV: a header line, then one row per beat.
pub fn beats_csv(replay: &Replay) -> String {
    let opt = |v: Option<f32>| v.map_or(String::new(), |v| format!("{v}"));
    let mut s = String::from(
        "peak_sample,peak_s,onset_sample,emitted_sample,ibi_ms,hr_bpm,hr_smoothed_bpm,amplitude,quality,flags,good\n",
    );
    for r in beat_rows(replay) {
        s.push_str(&format!(
            "{},{:.4},{},{},{},{},{},{},{},{},{}\n",
            r.peak_sample,
            r.peak_s,
            r.onset_sample.map_or(String::new(), |v| v.to_string()),
            r.emitted_sample,
            opt(r.ibi_ms),
            opt(r.hr_bpm),
            opt(r.hr_smoothed_bpm),
            r.amplitude,
            r.quality,
            r.flags,
            u8::from(r.good)
        ));
    }
    s
}
