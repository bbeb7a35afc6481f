//! The references of one recording read once, so that several beat lists
//! (the pipeline's, a baseline's) are scored against exactly the same
//! references by exactly the same code: [`RecordReferences::load`] reads
//! them, [`RecordReferences::score`] scores one replay.

use super::records::{
    load_ecg, reference_beats, reference_rate, reference_windows, strap_intervals, RateSeries,
    RecordScore, References,
};
use super::strap::score_strap;
use super::timing::PeakTiming;
use super::windows::{RateWindow, ReplayWindows};
use super::{match_pairs, rate_error, MatchCounts, MATCH_WINDOW_S};
use crate::ecg::EcgReference;
use crate::replay::{Recording, Replay, ReplayError};

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
        Ok(Self {
            beats: reference_beats(&rec.path, &refs.annotator)?,
            windows: reference_windows(&rec.path, &refs.window_suffix)?,
            rate: reference_rate(&rec.path, refs)?,
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
