//! The references of one recording read once, so that several beat lists
//! (the pipeline's, a baseline's) are scored against exactly the same
//! references by exactly the same code: [`RecordReferences::load`] reads
//! them, [`RecordReferences::score`] scores one replay.

use super::references::{
    load_ecg, reference_beats, reference_rate, reference_windows, strap_intervals, RateSeries,
    References,
};
use super::strap::{score_strap, StrapScore};
use super::timing::PeakTiming;
use super::windows::{RateWindow, ReplayWindows};
use super::{match_pairs, rate_error, MatchCounts, RateError, MATCH_WINDOW_S};
use crate::ecg::{EcgReference, EcgScore};
use crate::output_guard::record_base;
use crate::replay::{InputInfo, Recording, Replay, ReplayError, Summary};
use serde::Serialize;

/// One recording's score.
#[derive(Debug, Clone, Serialize)]
pub struct RecordScore {
    /// Record name.
    pub record: String,
    /// Beat comparison, when reference beats exist (JSON: with its
    /// sensitivity, positive predictivity and F1).
    #[serde(serialize_with = "super::counts_with_figures")]
    pub beats: Option<MatchCounts>,
    /// Reference beats.
    pub reference_beats: Option<usize>,
    /// Heart-rate comparison, when a reference series exists.
    pub heart_rate: Option<RateError>,
    /// The replay's summary.
    pub summary: Summary,
    /// Offsets of our matched peaks from the reference beats.
    pub peak_timing: Option<PeakTiming>,
    /// Heart rate in the reference windows, when a window table exists.
    pub windows: Option<ReplayWindows>,
    /// The signal scored (the chosen one, when there was a choice).
    pub signal: String,
    /// How the samples were got (time column, resampling, channel choice).
    pub input: InputInfo,
    /// Against a chest strap's R-R list, when one exists.
    pub strap: Option<StrapScore>,
    /// Pulses against the ECG's R peaks, when an ECG signal was named.
    pub ecg: Option<EcgScore>,
}

/// Every reference one recording has, as [`References`] names them.
#[derive(Debug, Clone, PartialEq)]
pub struct RecordReferences {
    /// Reference beats (`<record>.<annotator>`), sample indices.
    pub beats: Option<Vec<u64>>,
    /// Reference heart-rate windows (`<record><window_suffix>`).
    pub windows: Option<Vec<RateWindow>>,
    /// Reference heart-rate series (`<record><rate_suffix>`).
    pub rate: Option<RateSeries>,
    /// A chest strap's R-R intervals, ms (`<record><strap_suffix>`).
    pub strap_rr_ms: Option<Vec<f64>>,
    /// The R peaks of the ECG named by [`References::ecg`].
    pub ecg: Option<EcgReference>,
}

impl RecordReferences {
    /// Read the references of `rec`; one that does not exist is `None`,
    /// one that exists but cannot be read (or an ECG that cannot be
    /// used) is an error naming the file.
    pub fn load(rec: &Recording, refs: &References) -> Result<Self, ReplayError> {
        // A CSV recording's references sit beside it under its stem.
        let base = record_base(&rec.path);
        Ok(Self {
            beats: reference_beats(&base, &refs.annotator, rec.signal.fs)?,
            windows: reference_windows(&base, &refs.window_suffix)?,
            rate: reference_rate(&base, refs)?,
            strap_rr_ms: strap_intervals(&rec.path, &refs.strap_suffix)?,
            ecg: match &refs.ecg {
                Some(name) => Some(load_ecg(rec, name)?),
                None => None,
            },
        })
    }

    /// Score `run`, a replay of `rec`'s samples (or any beat list carried
    /// as one), against these references.
    pub fn score(&self, rec: &Recording, run: &Replay) -> RecordScore {
        let peaks = run.peaks();
        let tol = (MATCH_WINDOW_S * run.fs).round() as u64;
        let pairs = self
            .beats
            .as_ref()
            .map(|r| (r, match_pairs(r, &peaks, tol)));
        RecordScore {
            record: rec.name.clone(),
            beats: pairs.as_ref().map(|(r, p)| MatchCounts {
                tp: p.len(),
                fp: peaks.len() - p.len(),
                fn_: r.len() - p.len(),
            }),
            reference_beats: self.beats.as_ref().map(Vec::len),
            heart_rate: self
                .rate
                .as_ref()
                .map(|series| rate_error(&run.heart_rate_track(), series)),
            summary: run.summary(),
            peak_timing: pairs.map(|(_, p)| PeakTiming::from_pairs(&p, run.fs)),
            windows: self.windows.as_ref().map(|w| ReplayWindows::of(w, run)),
            signal: rec.signal.name.clone(),
            input: rec.input.clone(),
            strap: self
                .strap_rr_ms
                .as_ref()
                .and_then(|rr| score_strap(run, rr)),
            ecg: self.ecg.as_ref().map(|e| e.score(&peaks)),
        }
    }
}
