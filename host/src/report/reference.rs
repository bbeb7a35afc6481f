//! What a report compares the pipeline with: reference beats and a
//! reference heart-rate series, and the score against them.

use crate::replay::{Replay, ReplayError};
use crate::score::records::{reference_beats, reference_rate, References};
use crate::score::{match_beats, rate_error, MatchCounts, RateError, MATCH_WINDOW_S};
use serde::Serialize;
use std::path::Path;

/// Reference data for one recording; either part may be missing.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Reference {
    /// Where the beats came from, for the reader (an annotator name such as
    /// `peak`, or `synthetic truth`).
    pub beats_source: String,
    /// Reference beats, input sample indices.
    pub beats: Option<Vec<u64>>,
    /// Where the heart-rate series came from, for the reader.
    pub rate_source: String,
    /// Reference heart rate `(time_s, bpm)`; `None` values are seconds
    /// without one.
    pub rate: Option<Vec<(f64, Option<f64>)>>,
}

impl Reference {
    /// What lies beside the record at `record` (path without extension):
    /// `<record>.<annotator>` and `<record><rate_suffix>` as `refs` names
    /// them, beats in samples of the signal sampled at `fs`. `None` when
    /// neither exists.
    pub fn load(record: &Path, refs: &References, fs: f64) -> Result<Option<Self>, ReplayError> {
        let beats = reference_beats(record, &refs.annotator, fs)?;
        let rate = reference_rate(record, refs)?;
        if beats.is_none() && rate.is_none() {
            return Ok(None);
        }
        let name = record.file_name().unwrap_or_default().to_string_lossy();
        Ok(Some(Self {
            beats_source: format!("{name}.{}", refs.annotator),
            beats,
            rate_source: format!("{name}{}, column {}", refs.rate_suffix, refs.rate_column),
            rate,
        }))
    }

    /// The reference series' values, `(time_s, bpm)`, seconds without one
    /// left out.
    pub fn rate_points(&self) -> Vec<(f64, f64)> {
        self.rate
            .iter()
            .flatten()
            .filter_map(|&(t, v)| v.filter(|v| v.is_finite()).map(|v| (t, v)))
            .collect()
    }
}

/// The score of a replay against a reference, ANSI/AAMI EC57 practice for
/// the beats (one-to-one within ±150 ms).
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct ScoreFigures {
    /// Reference beats, if any.
    pub reference_beats: Option<usize>,
    /// Matched detections.
    pub tp: Option<usize>,
    /// Detections with no reference beat.
    pub fp: Option<usize>,
    /// Reference beats with no detection.
    #[serde(rename = "fn")]
    pub fn_: Option<usize>,
    /// Sensitivity TP/(TP+FN), percent.
    pub se_percent: Option<f64>,
    /// Positive predictivity TP/(TP+FP), percent.
    pub ppv_percent: Option<f64>,
    /// F1 = 2TP/(2TP+FP+FN), percent.
    pub f1_percent: Option<f64>,
    /// Mean absolute heart-rate error against the reference series, bpm.
    pub hr_mae_bpm: Option<f64>,
    /// Seconds of the reference series compared.
    pub hr_seconds: Option<usize>,
}

/// Score `replay` against `reference` with the library's matching
/// ([`match_beats`], [`rate_error`]), as `plethwire score` does.
pub fn score(replay: &Replay, reference: &Reference) -> ScoreFigures {
    let tol = (MATCH_WINDOW_S * replay.fs).round() as u64;
    let beats: Option<MatchCounts> = reference
        .beats
        .as_ref()
        .map(|r| match_beats(r, &replay.peaks(), tol));
    let rate: Option<RateError> = reference
        .rate
        .as_ref()
        .map(|r| rate_error(&replay.heart_rate_track(), r));
    let pct = |v: Option<f64>| v.map(|v| 100.0 * v);
    ScoreFigures {
        reference_beats: reference.beats.as_ref().map(Vec::len),
        tp: beats.map(|m| m.tp),
        fp: beats.map(|m| m.fp),
        fn_: beats.map(|m| m.fn_),
        se_percent: pct(beats.and_then(|m| m.se())),
        ppv_percent: pct(beats.and_then(|m| m.ppv())),
        f1_percent: pct(beats.and_then(|m| m.f1())),
        hr_mae_bpm: rate.and_then(|r| r.mae()),
        hr_seconds: rate.map(|r| r.count),
    }
}
