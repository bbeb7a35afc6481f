//! The plain baseline: beats found by `tests/scipy/baseline_beats.py`
//! (scipy.signal.butter 0.5–8 Hz order 2 run causally with sosfilt,
//! find_peaks with a 0.3 s distance and a prominence gate from the whole
//! record, peaks refined to the largest raw sample in the 150 ms before;
//! the script's doc string is the method's definition).
//!
//! It is printed beside the pipeline's figures so a reader can tell what a
//! generic peak finder does on the same samples. Gate callers with
//! `need(needs::PYTHON, python().is_some())`.

use plethwire::replay::Replay;
use plethwire_dsp::pipeline::{BeatEvent, BeatFlags, Options};
use serde::{Deserialize, Serialize};

use crate::beside::peak_rate_track;
use crate::{python_json, repo_root};

/// One record for the baseline: the exact samples the pipeline sees.
#[derive(Debug, Clone, Serialize)]
pub struct BaselineInput {
    /// Record name, echoed in the answer.
    pub name: String,
    /// Sample rate, Hz.
    pub fs: f64,
    /// The samples; NaN (sent as JSON null) is taken as the last finite
    /// value.
    pub samples: Vec<f64>,
}

/// The baseline's peaks of one record, both ways the script reports them.
#[derive(Debug, Clone, PartialEq, Eq, Deserialize)]
pub struct BaselinePeaks {
    /// Record name.
    pub name: String,
    /// Where find_peaks puts them on the causally filtered signal (late by
    /// the filter's delay).
    pub filtered: Vec<u64>,
    /// Each filtered peak moved to the largest raw sample within the
    /// 150 ms before it: the baseline's beats for every comparison.
    pub refined: Vec<u64>,
}

#[derive(Serialize)]
struct Request<'a> {
    records: &'a [BaselineInput],
}

#[derive(Deserialize)]
struct Answer {
    records: Vec<BaselinePeaks>,
}

/// Path of the baseline script.
pub fn baseline_script() -> std::path::PathBuf {
    repo_root().join("tests/scipy/baseline_beats.py")
}

/// Both kinds of baseline peaks of every record, in the order given, from
/// one Python run. Panics (with Python's message) when the script fails or
/// answers for other records than asked.
pub fn baseline_detections(records: &[BaselineInput]) -> Vec<BaselinePeaks> {
    let answer: Answer = python_json(&[baseline_script()], &Request { records });
    assert_eq!(
        answer.records.len(),
        records.len(),
        "baseline answered for a different number of records"
    );
    for (asked, got) in records.iter().zip(&answer.records) {
        assert_eq!(asked.name, got.name, "baseline answered out of order");
    }
    answer.records
}

/// The baseline's beats (the refined peaks) of every record, in the order
/// given, from one Python run.
pub fn baseline_peaks(records: &[BaselineInput]) -> Vec<Vec<u64>> {
    baseline_detections(records)
        .into_iter()
        .map(|p| p.refined)
        .collect()
}

/// The baseline's beats (`peaks`, sample indices at `fs` Hz, of a
/// recording of `samples` samples) carried as a [`Replay`], so that every
/// scoring function takes them exactly as it takes the pipeline's. The
/// baseline judges no beat, so every beat is good (the first has no
/// interval); each interval is the distance to the previous peak; the
/// smoothed heart rate is made as the pipeline makes its own: 60000 / the
/// median of the intervals that ended within the pipeline's default
/// `hr_window_s` ([`peak_rate_track`]). It knows the whole record, so each
/// beat is "emitted" at its peak: latency means nothing here.
pub fn baseline_replay(peaks: &[u64], fs: f64, samples: u64) -> Replay {
    let mut p = peaks.to_vec();
    p.sort_unstable();
    let window_s = f64::from(Options::default().hr_window_s);
    // The track has one entry per peak after the first, in order.
    let smoothed = std::iter::once(None).chain(
        peak_rate_track(&p, fs, window_s)
            .into_iter()
            .map(|(_, bpm)| Some(bpm as f32)),
    );
    let beats = p
        .iter()
        .zip(smoothed)
        .enumerate()
        .map(|(k, (&peak, hr_smoothed_bpm))| {
            let ibi_ms = (k > 0).then(|| ((peak - p[k - 1]) as f64 * 1000.0 / fs) as f32);
            BeatEvent {
                peak_index: peak,
                onset_index: None,
                emitted_at: peak,
                ibi_ms,
                hr_bpm: ibi_ms.map(|i| 60_000.0 / i),
                hr_smoothed_bpm,
                amplitude: 0.0,
                quality: 1.0,
                flags: BeatFlags(if k == 0 { BeatFlags::NO_INTERVAL } else { 0 }),
            }
        })
        .collect();
    Replay {
        fs,
        samples,
        beats,
        states: Vec::new(),
        rejected: 0,
        clipped: 0,
        restarts: 0,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn baseline_beats_become_good_beats_with_peak_intervals() {
        // 100 Hz: peaks 1.0 s, then 0.5 s apart (given out of order).
        let run = baseline_replay(&[110, 10, 160], 100.0, 200);
        assert_eq!(run.peaks(), vec![10, 110, 160]);
        let ibi: Vec<Option<f32>> = run.beats.iter().map(|b| b.ibi_ms).collect();
        assert_eq!(ibi, vec![None, Some(1000.0), Some(500.0)]);
        assert!(run.beats.iter().all(|b| b.flags.is_good()));
        // Median of 1000 and 500 ms: 750 ms, 80 bpm, reported at 1.6 s.
        assert_eq!(run.heart_rate_track(), vec![(1.1, 60.0), (1.6, 80.0)]);
        assert_eq!(run.hrv().nn_count, 2);
    }
}
