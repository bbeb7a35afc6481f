//! Beat matching for the behaviour tests: ANSI/AAMI EC57 practice, a
//! detection matches a reference beat within ±150 ms, each beat matched at
//! most once, closest pairs first. (The same rule as `plethwire::score`,
//! restated here so `plethwire-dsp`'s tests need no host crate.)
#![allow(dead_code)] // each test file uses a different subset

/// Matching window of ANSI/AAMI EC57 practice, seconds.
pub const MATCH_WINDOW_S: f64 = 0.150;

/// Counts of a beat-by-beat comparison.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct MatchCounts {
    /// Detections matched to a reference beat.
    pub tp: usize,
    /// Detections with no reference beat.
    pub fp: usize,
    /// Reference beats with no detection.
    pub fn_: usize,
}

impl MatchCounts {
    /// F1 = 2TP/(2TP+FP+FN), if defined.
    pub fn f1(&self) -> Option<f64> {
        let den = 2 * self.tp + self.fp + self.fn_;
        (den > 0).then(|| (2 * self.tp) as f64 / den as f64)
    }
}

/// Match `detected` to `reference` (sample indices, any order) one to one
/// within `tolerance` samples.
pub fn match_beats(reference: &[u64], detected: &[u64], tolerance: u64) -> MatchCounts {
    let pairs = match_pairs(reference, detected, tolerance);
    MatchCounts {
        tp: pairs.len(),
        fp: detected.len() - pairs.len(),
        fn_: reference.len() - pairs.len(),
    }
}

/// The matched pairs as `(reference, detected)` sample indices, sorted by
/// the reference beat.
pub fn match_pairs(reference: &[u64], detected: &[u64], tolerance: u64) -> Vec<(u64, u64)> {
    let mut r = reference.to_vec();
    let mut d = detected.to_vec();
    r.sort_unstable();
    d.sort_unstable();
    // Every pair within the window, closest first; then greedily one to one.
    let mut pairs: Vec<(u64, usize, usize)> = Vec::new();
    let mut start = 0;
    for (i, &ri) in r.iter().enumerate() {
        while start < d.len() && d[start] + tolerance < ri {
            start += 1;
        }
        let within = d[start..].iter().take_while(|&&dj| dj <= ri + tolerance);
        pairs.extend(
            within
                .enumerate()
                .map(|(k, &dj)| (dj.abs_diff(ri), i, start + k)),
        );
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
