//! The beats an ECG reference has that a pulse list misses, and why: for
//! each missed R peak, whether it came early (a premature beat) and
//! whether the pulse signal shows a pulse where one was due at all. A
//! premature beat can eject little or no blood, so its pulse is small or
//! absent; no detector can find a pulse that is not there, and those
//! beats cap Se against the ECG.
//!
//! - Premature: the R-R interval before it is shorter than
//!   [`PREMATURE_SHARE`] of the record's median R-R (common practice).
//! - Visible pulse: on the pulse signal band-passed 0.5-8 Hz without delay
//!   (order 2 Butterworth forward and backward, as `scipy.signal.sosfiltfilt`
//!   without its edge padding), the highest value within ±150 ms of where
//!   the pulse was due, less the lowest in the [`FOOT_S`] before it, is at
//!   least [`VISIBLE_SHARE`] of the median of that height at the matched
//!   beats of the same record (our choice).

use plethwire::channel::hold_missing;
use plethwire::ecg::stages::zero_phase_band;
use plethwire::ecg::EcgReference;
use plethwire::score::MATCH_WINDOW_S;

/// An R-R interval shorter than this share of the record's median makes
/// the beat after it premature (common practice: 80-90 %).
pub const PREMATURE_SHARE: f64 = 0.85;
/// A pulse is visible when at least this share of the record's median
/// pulse height (our choice).
pub const VISIBLE_SHARE: f64 = 0.3;
/// How far before its top a pulse's foot is looked for, seconds (a
/// systolic upstroke lasts 0.1-0.3 s, from memory).
pub const FOOT_S: f64 = 0.35;
/// The pulse band, Hz (the pipeline's default band).
pub const PULSE_BAND_HZ: (f64, f64) = (0.5, 8.0);

/// One pulse list's missed R peaks in one record, counted by kind.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct MissedCounts {
    /// R peaks scored (outside the ECG's unusable time).
    pub scored: usize,
    /// Of those, no pulse matched.
    pub missed: usize,
    /// Missed and premature.
    pub premature: usize,
    /// Missed with no visible pulse where it was due.
    pub no_pulse: usize,
    /// Missed, premature and with no visible pulse.
    pub premature_no_pulse: usize,
}

impl MissedCounts {
    /// Add another record's counts.
    pub fn add(&mut self, o: &MissedCounts) {
        self.scored += o.scored;
        self.missed += o.missed;
        self.premature += o.premature;
        self.no_pulse += o.no_pulse;
        self.premature_no_pulse += o.premature_no_pulse;
    }

    /// Se against the ECG with the missed beats that show no pulse left
    /// out of the reference: what a detector could reach at most if it
    /// found every visible pulse.
    pub fn se_of_visible(&self) -> Option<f64> {
        let reference = self.scored.checked_sub(self.no_pulse)?;
        let found = self.scored - self.missed;
        (reference > 0).then(|| found as f64 / reference as f64)
    }
}

/// Count the R peaks of `ecg` that `pulses` (sample indices of `ppg`, at
/// the ECG's rate) miss, by kind.
pub fn count_missed(ecg: &EcgReference, ppg: &[f64], pulses: &[u64]) -> MissedCounts {
    let fs = ecg.fs;
    let missed = ecg.missed(pulses);
    let scored = ecg.score(pulses);
    let scored_r = scored.counts.tp + scored.counts.fn_;
    let Some(band) = zero_phase_band(&hold_missing(ppg), fs, PULSE_BAND_HZ) else {
        return MissedCounts {
            scored: scored_r,
            missed: missed.len(),
            ..MissedCounts::default()
        };
    };
    let height = |due: u64| pulse_height(&band, fs, due);
    // The typical pulse: the median height where matched pulses are.
    let mut matched: Vec<f64> = pulses
        .iter()
        .filter(|&&p| !missed.iter().any(|m| m.due.abs_diff(p) <= window(fs)))
        .map(|&p| height(p))
        .collect();
    matched.sort_unstable_by(f64::total_cmp);
    let typical = matched.get(matched.len() / 2).copied().unwrap_or(0.0);
    let mut rr: Vec<u64> = ecg.r_peaks.windows(2).map(|w| w[1] - w[0]).collect();
    rr.sort_unstable();
    let median_rr = rr.get(rr.len() / 2).copied().unwrap_or(0) as f64;
    let mut c = MissedCounts {
        scored: scored_r,
        missed: missed.len(),
        ..MissedCounts::default()
    };
    for m in &missed {
        let premature = m.r > 0
            && ((ecg.r_peaks[m.r] - ecg.r_peaks[m.r - 1]) as f64) < PREMATURE_SHARE * median_rr;
        let no_pulse = height(m.due) < VISIBLE_SHARE * typical;
        c.premature += usize::from(premature);
        c.no_pulse += usize::from(no_pulse);
        c.premature_no_pulse += usize::from(premature && no_pulse);
    }
    c
}

/// The matching window, samples.
fn window(fs: f64) -> u64 {
    (MATCH_WINDOW_S * fs).round() as u64
}

/// Top within the matching window of `due`, less the lowest value in the
/// [`FOOT_S`] before that top.
fn pulse_height(band: &[f64], fs: f64, due: u64) -> f64 {
    let w = window(fs) as usize;
    let due = due as usize;
    let (lo, hi) = (due.saturating_sub(w), (due + w + 1).min(band.len()));
    if lo >= hi {
        return 0.0;
    }
    let top = (lo..hi)
        .max_by(|&a, &b| band[a].total_cmp(&band[b]))
        .unwrap_or(lo);
    let foot_from = top.saturating_sub((FOOT_S * fs).round() as usize);
    let foot = band[foot_from..=top]
        .iter()
        .copied()
        .fold(f64::INFINITY, f64::min);
    band[top] - foot
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Invented: a pulse every second at 125 Hz with every fifth beat's
    /// pulse left out; the ECG reference has every beat, R 0.2 s before.
    #[test]
    fn a_beat_without_a_pulse_is_counted_as_such() {
        let fs = 125.0;
        let n = 60 * 125;
        let r: Vec<u64> = (1..59).map(|k| k * 125).collect();
        let mut ppg = vec![0.0; n];
        let mut pulses = Vec::new();
        for (k, &ri) in r.iter().enumerate() {
            let top = ri as usize + 25;
            if k % 5 == 4 {
                continue;
            }
            pulses.push(top as u64);
            for (i, v) in ppg.iter_mut().enumerate() {
                let d = (i as f64 - top as f64) / 10.0;
                *v += (-d * d).exp();
            }
        }
        let ecg = EcgReference {
            fs,
            r_peaks: r.clone(),
            unusable: Vec::new(),
        };
        let c = count_missed(&ecg, &ppg, &pulses);
        assert_eq!(c.scored, r.len());
        assert_eq!(c.missed, r.len() - pulses.len());
        assert_eq!(c.no_pulse, c.missed, "{c:?}");
        assert_eq!(c.premature, 0, "{c:?}");
        assert_eq!(c.se_of_visible(), Some(1.0));
    }
}
