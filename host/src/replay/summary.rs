//! The numbers a replay is summed up by: beats, heart rate, HRV, latency.

use super::Replay;
use plethwire_dsp::hrv::{hrv, HrvStats};
use serde::Serialize;

/// The median heart rate over a recording, bpm.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct RateSummary {
    /// Mean of the median heart rate reported with each good beat.
    pub mean: f64,
    /// Lowest median heart rate reported with a good beat.
    pub min: f64,
    /// Highest median heart rate reported with a good beat.
    pub max: f64,
}

/// The numbers a replay is summed up by.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Summary {
    /// Recording length, seconds.
    pub duration_s: f64,
    /// Beats detected.
    pub beats: usize,
    /// Beats with no quality flag that makes them unfit.
    pub good_beats: usize,
    /// `good_beats / beats`, 0 to 1.
    pub good_share: f64,
    /// The median heart rate's statistics, if any was reported
    /// (`median_hr_bpm` in JSON).
    #[serde(rename = "median_hr_bpm")]
    pub heart_rate_bpm: Option<RateSummary>,
    /// Time-domain HRV over the whole recording, normal-to-normal intervals
    /// only (both beats good), Task Force of the ESC and NASPE 1996.
    pub hrv: HrvSummary,
    /// Median delay from a beat's peak to its event, ms.
    pub latency_median_ms: Option<f64>,
    /// Non-finite samples replaced by the last good value
    /// (`replaced_samples` in JSON).
    #[serde(rename = "replaced_samples")]
    pub rejected_samples: u64,
    /// Samples at the rails.
    pub clipped_samples: u64,
    /// Filter restarts after steps in the input.
    pub restarts: u64,
}

/// HRV figures for the summary.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct HrvSummary {
    /// Normal-to-normal intervals used.
    pub nn_intervals: usize,
    /// SDNN, ms (N−1 denominator).
    pub sdnn_ms: Option<f32>,
    /// RMSSD, ms.
    pub rmssd_ms: Option<f32>,
    /// pNN50, % of successive differences.
    pub pnn50_percent: Option<f32>,
}

impl From<HrvStats> for HrvSummary {
    fn from(s: HrvStats) -> Self {
        Self {
            nn_intervals: s.nn_count,
            sdnn_ms: s.sdnn_ms,
            rmssd_ms: s.rmssd_ms,
            pnn50_percent: s.pnn50_percent,
        }
    }
}

impl Replay {
    /// `(time_s, bpm)` of every median heart rate, at the moment it was
    /// reported.
    pub fn heart_rate_track(&self) -> Vec<(f64, f64)> {
        self.beats
            .iter()
            .filter_map(|b| {
                b.hr_smoothed_bpm
                    .map(|h| (b.emitted_at as f64 / self.fs, h as f64))
            })
            .collect()
    }

    /// Peak sample of every beat, in time order.
    pub fn peaks(&self) -> Vec<u64> {
        let mut p: Vec<u64> = self.beats.iter().map(|b| b.peak_index).collect();
        p.sort_unstable();
        p
    }

    /// HRV over the whole recording: an interval is normal-to-normal when
    /// the beats at both of its ends are good. A beat without an interval
    /// (the signal came back, the filters restarted) breaks the succession,
    /// so no successive difference spans the gap before it.
    pub fn hrv(&self) -> HrvStats {
        let mut ibi = Vec::new();
        let mut good = Vec::new();
        let mut previous_good = false;
        for b in &self.beats {
            match b.ibi_ms {
                Some(i) => {
                    ibi.push(i);
                    good.push(b.flags.is_good() && previous_good);
                }
                // A bad placeholder: `hrv` forms no difference across it.
                None if !ibi.is_empty() => {
                    ibi.push(f32::NAN);
                    good.push(false);
                }
                None => {}
            }
            previous_good = b.flags.is_good();
        }
        hrv(&ibi, Some(&good)).unwrap_or_default()
    }

    /// The summary.
    pub fn summary(&self) -> Summary {
        let good_beats = self.beats.iter().filter(|b| b.flags.is_good()).count();
        let rates: Vec<f64> = self
            .beats
            .iter()
            .filter(|b| b.flags.is_good())
            .filter_map(|b| b.hr_smoothed_bpm.map(f64::from))
            .collect();
        let heart_rate_bpm = (!rates.is_empty()).then(|| RateSummary {
            mean: rates.iter().sum::<f64>() / rates.len() as f64,
            min: rates.iter().copied().fold(f64::INFINITY, f64::min),
            max: rates.iter().copied().fold(f64::NEG_INFINITY, f64::max),
        });
        let mut lat: Vec<f64> = self
            .beats
            .iter()
            .map(|b| (b.emitted_at.saturating_sub(b.peak_index)) as f64 * 1000.0 / self.fs)
            .collect();
        lat.sort_by(f64::total_cmp);
        Summary {
            duration_s: self.samples as f64 / self.fs,
            beats: self.beats.len(),
            good_beats,
            good_share: if self.beats.is_empty() {
                0.0
            } else {
                good_beats as f64 / self.beats.len() as f64
            },
            heart_rate_bpm,
            hrv: self.hrv().into(),
            latency_median_ms: lat.get(lat.len() / 2).copied(),
            rejected_samples: self.rejected,
            clipped_samples: self.clipped,
            restarts: self.restarts,
        }
    }
}
