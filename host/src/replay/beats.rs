//! A replay's beats as a WFDB annotation file, rows, and our beat CSV.

use super::{Recording, Replay, ReplayError};
use crate::vocabulary::flag_list;
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
    /// Heart rate of this interval (60000 / IBI), bpm.
    pub hr_bpm: Option<f32>,
    /// Median heart rate (60000 / median of the good intervals of the last
    /// 12 s), bpm.
    pub median_hr_bpm: Option<f32>,
    /// Pulse amplitude (input units).
    pub amplitude: f32,
    /// Template correlation, 0 to 1.
    pub quality: f32,
    /// `good` (fit for heart rate and HRV) or `bad`.
    pub verdict: &'static str,
    /// The flags set, by name (`plethwire_dsp::pipeline::BeatFlags::NAMES`).
    pub flags: Vec<&'static str>,
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
            median_hr_bpm: b.hr_smoothed_bpm,
            amplitude: b.amplitude,
            quality: b.quality,
            verdict: b.flags.verdict(),
            flags: flag_list(b.flags),
        })
        .collect()
}

/// The header of our beat CSV: the keys of [`BeatRow`] in its JSON, in
/// the same order (`docs/vocabulary.md`).
pub const BEATS_CSV_HEADER: &str =
    "peak_sample,peak_s,onset_sample,emitted_sample,ibi_ms,hr_bpm,median_hr_bpm,amplitude,quality,verdict,flags";

/// Our beat CSV: a header line, then one row per beat; `flags` holds the
/// names of the flags set joined by `|` (empty when none).
pub fn beats_csv(replay: &Replay) -> String {
    let opt = |v: Option<f32>| v.map_or(String::new(), |v| format!("{v}"));
    let mut s = format!("{BEATS_CSV_HEADER}\n");
    for r in beat_rows(replay) {
        s.push_str(&format!(
            "{},{:.4},{},{},{},{},{},{},{},{},{}\n",
            r.peak_sample,
            r.peak_s,
            r.onset_sample.map_or(String::new(), |v| v.to_string()),
            r.emitted_sample,
            opt(r.ibi_ms),
            opt(r.hr_bpm),
            opt(r.median_hr_bpm),
            r.amplitude,
            r.quality,
            r.verdict,
            r.flags.join("|")
        ));
    }
    s
}
