//! Scoring detected beats against reference annotations, and heart rate
//! against a reference series.
//!
//! Beat matching follows ANSI/AAMI EC57 practice: a detection matches a
//! reference beat when within ±150 ms, each beat matched at most once;
//! Se = TP/(TP+FN), +P = TP/(TP+FP), F1 = 2TP/(2TP+FP+FN).

use serde::Serialize;

/// Matching window of ANSI/AAMI EC57 practice, seconds.
pub const MATCH_WINDOW_S: f64 = 0.150;

/// Counts of a beat-by-beat comparison.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize)]
pub struct MatchCounts {
    /// Detections matched to a reference beat.
    pub tp: usize,
    /// Detections with no reference beat.
    pub fp: usize,
    /// Reference beats with no detection.
    pub fn_: usize,
}

impl MatchCounts {
    /// Sensitivity TP/(TP+FN), if defined.
    pub fn se(&self) -> Option<f64> {
        ratio(self.tp, self.tp + self.fn_)
    }
    /// Positive predictivity TP/(TP+FP), if defined.
    pub fn ppv(&self) -> Option<f64> {
        ratio(self.tp, self.tp + self.fp)
    }
    /// F1 = 2TP/(2TP+FP+FN), if defined.
    pub fn f1(&self) -> Option<f64> {
        ratio(2 * self.tp, 2 * self.tp + self.fp + self.fn_)
    }
    /// Sum of two comparisons (pooling).
    pub fn add(&mut self, o: &MatchCounts) {
        self.tp += o.tp;
        self.fp += o.fp;
        self.fn_ += o.fn_;
    }
}

fn ratio(a: usize, b: usize) -> Option<f64> {
    (b > 0).then(|| a as f64 / b as f64)
}

/// Match `detected` to `reference` (sample indices, any order) one to one
/// within `tolerance` samples, closest pairs first.
pub fn match_beats(reference: &[u64], detected: &[u64], tolerance: u64) -> MatchCounts {
    let pairs = match_pairs(reference, detected, tolerance);
    MatchCounts {
        tp: pairs.len(),
        fp: detected.len() - pairs.len(),
        fn_: reference.len() - pairs.len(),
    }
}

/// The matched pairs of [`match_beats`] as `(reference, detected)` sample
/// indices, sorted by the reference beat: the data for timing offsets.
pub fn match_pairs(reference: &[u64], detected: &[u64], tolerance: u64) -> Vec<(u64, u64)> {
    let mut r: Vec<u64> = reference.to_vec();
    let mut d: Vec<u64> = detected.to_vec();
    r.sort_unstable();
    d.sort_unstable();
    // Every pair within the window, found with a sliding start index.
    let mut pairs: Vec<(u64, usize, usize)> = Vec::new();
    let mut start = 0;
    for (i, &ri) in r.iter().enumerate() {
        while start < d.len() && d[start] + tolerance < ri {
            start += 1;
        }
        let mut j = start;
        while j < d.len() && d[j] <= ri + tolerance {
            pairs.push((d[j].abs_diff(ri), i, j));
            j += 1;
        }
    }
    pairs.sort_unstable();
    let (mut used_r, mut used_d) = (vec![false; r.len()], vec![false; d.len()]);
    let mut matched = Vec::new();
    for (_, i, j) in pairs {
        if !used_r[i] && !used_d[j] {
            used_r[i] = true;
            used_d[j] = true;
            matched.push((r[i], d[j]));
        }
    }
    matched.sort_unstable();
    matched
}

/// Heart-rate agreement with a reference series.
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize)]
pub struct RateError {
    /// Sum of absolute differences, bpm.
    pub abs_sum: f64,
    /// Seconds compared.
    pub count: usize,
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
    fn one_to_one_matching_within_the_window() {
        // Two detections near one reference beat: one TP, one FP.
        let m = match_beats(&[100, 300], &[95, 110, 420], 45);
        assert_eq!(
            m,
            MatchCounts {
                tp: 1,
                fp: 2,
                fn_: 1
            }
        );
        // Closest pairs first: 140 belongs to 150, 100 to 100.
        let m = match_beats(&[100, 150], &[140, 100], 45);
        assert_eq!(m.tp, 2);
        assert_eq!(m.f1(), Some(1.0));
    }

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
pub mod strap;
pub mod timing;
pub mod windows;
