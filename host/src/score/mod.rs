//! Scoring detected beats against reference annotations, and heart rate
//! against a reference series.
//!
//! Beats are matched as [`crate::matching`] does (ANSI/AAMI EC57
//! practice; its items are re-exported here).

use serde::{Serialize, Serializer};

pub use crate::matching::{match_beats, match_pairs, MatchCounts, MATCH_WINDOW_S};

/// Beat counts with the figures made of them, as JSON writes them.
#[derive(Serialize)]
struct CountsWithFigures<'a> {
    #[serde(flatten)]
    counts: &'a MatchCounts,
    /// Se = TP / (TP + FN), in percent; `null` with no reference beat.
    se_percent: Option<f64>,
    /// +P = TP / (TP + FP), in percent; `null` with no detected beat.
    ppv_percent: Option<f64>,
    /// F1 = 2TP / (2TP + FP + FN), in percent.
    f1_percent: Option<f64>,
}

/// Serialize beat counts with their sensitivity, positive predictivity
/// and F1 beside them (`serialize_with` for `Option<MatchCounts>`).
pub fn counts_with_figures<S: Serializer>(
    counts: &Option<MatchCounts>,
    s: S,
) -> Result<S::Ok, S::Error> {
    counts
        .as_ref()
        .map(|c| CountsWithFigures {
            counts: c,
            se_percent: c.se().map(|v| 100.0 * v),
            ppv_percent: c.ppv().map(|v| 100.0 * v),
            f1_percent: c.f1().map(|v| 100.0 * v),
        })
        .serialize(s)
}

/// Heart-rate agreement with a reference series (JSON: its sums and
/// `hr_mae_bpm`, the mean absolute error; the names the report uses).
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct RateError {
    /// Sum of absolute differences, bpm.
    pub abs_sum: f64,
    /// Seconds compared.
    pub count: usize,
}

impl Serialize for RateError {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        #[derive(Serialize)]
        struct Shown {
            abs_sum: f64,
            count: usize,
            hr_mae_bpm: Option<f64>,
        }
        Shown {
            abs_sum: self.abs_sum,
            count: self.count,
            hr_mae_bpm: self.mae(),
        }
        .serialize(s)
    }
}

impl RateError {
    /// Mean absolute error, bpm.
    pub fn mae(&self) -> Option<f64> {
        (self.count > 0).then(|| self.abs_sum / self.count as f64)
    }
    /// Pool with another.
    pub fn add(&mut self, o: &RateError) {
        self.abs_sum += o.abs_sum;
        self.count += o.count;
    }
}

/// Compare a heart-rate track with a reference series: for each reference
/// time with a value, our latest heart rate reported at or before it.
/// `ours` is `(time_s, bpm)` sorted by time; `reference` is
/// `(time_s, Option<bpm>)`. Reference times with no value, or before our
/// first report, are left out.
pub fn rate_error(ours: &[(f64, f64)], reference: &[(f64, Option<f64>)]) -> RateError {
    let mut e = RateError::default();
    let mut k = 0;
    let mut latest: Option<f64> = None;
    for &(t, r) in reference {
        while k < ours.len() && ours[k].0 <= t {
            latest = Some(ours[k].1);
            k += 1;
        }
        if let (Some(r), Some(h)) = (r, latest) {
            if r.is_finite() {
                e.abs_sum += (h - r).abs();
                e.count += 1;
            }
        }
    }
    e
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rate_error_uses_the_latest_report() {
        let ours = [(1.0, 60.0), (2.5, 70.0)];
        let reference = [
            (0.5, Some(99.0)),
            (2.0, Some(62.0)),
            (3.0, None),
            (4.0, Some(72.0)),
        ];
        let e = rate_error(&ours, &reference);
        assert_eq!(e.count, 2);
        assert!((e.mae().unwrap() - 2.0).abs() < 1e-12);
    }
}

pub mod record_refs;
pub mod records;
pub mod references;
mod required;
pub mod strap;
pub mod timing;
pub mod windows;
