//! Matching detected beats to reference beats, as ANSI/AAMI EC57 practice
//! does: a detection matches a reference beat when within ±150 ms, each
//! beat matched at most once, closest pairs first; Se = TP/(TP+FN),
//! +P = TP/(TP+FP), F1 = 2TP/(2TP+FP+FN). Used by [`crate::score`] and by
//! the ECG reference ([`crate::ecg`]) alike.

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
    /// Reference beats with no detection (`fn` in JSON).
    #[serde(rename = "fn")]
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
}
