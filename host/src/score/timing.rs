//! Peak timing: how far matched detections sit from the reference beats.
//!
//! An offset is `detected − reference` of one matched pair of
//! [`match_pairs`](super::match_pairs), in ms (positive: we place the peak
//! late). Per record and pooled, the pooled figures are taken over all the
//! pooled offsets, never as medians of medians. Percentiles interpolate
//! linearly between order statistics (numpy's default `linear` method).

use serde::Serialize;

/// Timing offsets of matched pairs and their statistics.
#[derive(Debug, Clone, Default, PartialEq, Serialize)]
pub struct PeakTiming {
    /// Matched pairs the statistics are taken over.
    pub pairs: usize,
    /// Median of the signed offsets, ms.
    pub median_ms: Option<f64>,
    /// Median of the absolute offsets, ms.
    pub abs_median_ms: Option<f64>,
    /// 95th percentile of the absolute offsets, ms.
    pub abs_p95_ms: Option<f64>,
    /// Mean absolute offset, ms (the peaks' mean absolute error against
    /// the reference beats).
    pub mae_ms: Option<f64>,
    /// The offsets themselves, ms, kept for pooling (not in the JSON).
    #[serde(skip)]
    pub offsets_ms: Vec<f64>,
}

impl PeakTiming {
    /// Statistics of `offsets_ms` (detected − reference, ms).
    pub fn from_offsets(offsets_ms: Vec<f64>) -> Self {
        let signed = sorted(offsets_ms.clone());
        let abs = sorted(offsets_ms.iter().map(|o| o.abs()).collect());
        Self {
            pairs: offsets_ms.len(),
            median_ms: percentile(&signed, 50.0),
            abs_median_ms: percentile(&abs, 50.0),
            abs_p95_ms: percentile(&abs, 95.0),
            mae_ms: (!abs.is_empty()).then(|| abs.iter().sum::<f64>() / abs.len() as f64),
            offsets_ms,
        }
    }

    /// Timing of the `(reference, detected)` sample pairs at `fs` Hz.
    pub fn from_pairs(pairs: &[(u64, u64)], fs: f64) -> Self {
        Self::from_offsets(offsets_ms(pairs, fs))
    }

    /// The statistics over the offsets of all of `parts` together.
    pub fn pooled<'a>(parts: impl IntoIterator<Item = &'a PeakTiming>) -> Self {
        Self::from_offsets(
            parts
                .into_iter()
                .flat_map(|p| p.offsets_ms.iter().copied())
                .collect(),
        )
    }
}

/// `detected − reference` of each `(reference, detected)` pair, ms.
pub fn offsets_ms(pairs: &[(u64, u64)], fs: f64) -> Vec<f64> {
    pairs
        .iter()
        .map(|&(r, d)| (d as f64 - r as f64) * 1000.0 / fs)
        .collect()
}

fn sorted(mut v: Vec<f64>) -> Vec<f64> {
    v.sort_by(f64::total_cmp);
    v
}

/// The `q`th percentile (0 to 100) of ascending `sorted` values, linear
/// between order statistics; `None` when empty.
pub fn percentile(sorted: &[f64], q: f64) -> Option<f64> {
    let last = sorted.len().checked_sub(1)?;
    let at = q.clamp(0.0, 100.0) / 100.0 * last as f64;
    let (lo, frac) = (at.floor() as usize, at.fract());
    let hi = (lo + 1).min(last);
    Some(sorted[lo] + frac * (sorted[hi] - sorted[lo]))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn percentiles_interpolate_like_numpy() {
        // numpy.percentile([1, 2, 3, 4], 50) = 2.5, 95 -> 3.85 (numpy docs'
        // 'linear' method: i + (j - i) * fraction).
        let v = [1.0, 2.0, 3.0, 4.0];
        assert_eq!(percentile(&v, 50.0), Some(2.5));
        assert!((percentile(&v, 95.0).unwrap() - 3.85).abs() < 1e-12);
        assert_eq!(percentile(&[7.0], 95.0), Some(7.0));
        assert_eq!(percentile(&[], 50.0), None);
    }

    #[test]
    fn offsets_are_detected_minus_reference_and_pool_over_all_pairs() {
        // 100 Hz: one sample is 10 ms.
        let a = PeakTiming::from_pairs(&[(100, 102), (200, 199), (300, 303)], 100.0);
        assert_eq!(a.offsets_ms, vec![20.0, -10.0, 30.0]);
        assert_eq!(a.median_ms, Some(20.0));
        assert_eq!(a.abs_median_ms, Some(20.0));
        assert_eq!(a.mae_ms, Some(20.0));
        let b = PeakTiming::from_pairs(&[(50, 40)], 100.0);
        let pooled = PeakTiming::pooled([&a, &b]);
        assert_eq!(pooled.pairs, 4);
        // Signed offsets -100, -10, 20, 30: median 5, not the median of
        // the two records' medians (-40).
        assert_eq!(pooled.median_ms, Some(5.0));
        assert_eq!(pooled.abs_median_ms, Some(25.0));
        assert_eq!(pooled.mae_ms, Some(40.0));
        assert_eq!(PeakTiming::from_offsets(Vec::new()).mae_ms, None);
    }
}
