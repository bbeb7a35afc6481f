//! The Poincaré plot's numbers: pairs of successive normal-to-normal
//! intervals and the spread across and along the identity line.

use crate::replay::Replay;
use serde::Serialize;

/// Spread of a Poincaré plot of successive NN intervals `(x[n], x[n+1])`,
/// after M. Brennan, M. Palaniswami, P. Kamen, "Do existing measures of
/// Poincaré plot geometry reflect nonlinear features of heart rate
/// variability?", IEEE Trans. Biomed. Eng. 48(11):1342–1347, 2001.
///
/// The points are rotated by 45°: `SD1` is the sample standard deviation
/// (denominator N − 1) of `(x[n+1] − x[n]) / √2`, the spread across the
/// identity line (beat-to-beat variability); `SD2` that of
/// `(x[n+1] + x[n]) / √2`, the spread along it (slower variability).
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct PoincareStats {
    /// Pairs the figures are computed from.
    pub pairs: usize,
    /// Spread across the identity line, ms (needs 2 pairs).
    pub sd1_ms: Option<f64>,
    /// Spread along the identity line, ms (needs 2 pairs).
    pub sd2_ms: Option<f64>,
    /// Mean of the pairs' first and second interval, ms: the centre of the
    /// cloud (needs 1 pair).
    pub centre_ms: Option<(f64, f64)>,
}

/// Pairs of successive NN intervals `(x[n], x[n+1])`, ms, in time order.
///
/// An interval is NN when the beats at both its ends are good (as in
/// [`Replay::hrv`]); a pair needs two NN intervals that share a beat, so it
/// never spans a beat without an interval (a gap, a restart). These are
/// exactly the successive differences [`Replay::hrv`] forms for RMSSD.
pub fn nn_pairs(replay: &Replay) -> Vec<(f64, f64)> {
    let mut pairs = Vec::new();
    let mut previous_good = false;
    // The NN interval ending at the previous beat, if it was one.
    let mut last_nn: Option<f64> = None;
    for b in &replay.beats {
        let good = b.flags.is_good();
        let nn = match b.ibi_ms {
            Some(i) if good && previous_good && i.is_finite() && i > 0.0 => Some(f64::from(i)),
            _ => None,
        };
        if let (Some(a), Some(c)) = (last_nn, nn) {
            pairs.push((a, c));
        }
        last_nn = nn;
        previous_good = good;
    }
    pairs
}

/// Sample standard deviation (N − 1) of `v`, two-pass; `None` below 2.
fn sample_sd(v: impl Iterator<Item = f64> + Clone) -> Option<f64> {
    let n = v.clone().count();
    if n < 2 {
        return None;
    }
    let mean = v.clone().sum::<f64>() / n as f64;
    let ss: f64 = v.map(|x| (x - mean) * (x - mean)).sum();
    Some((ss / (n - 1) as f64).sqrt())
}

/// SD1 and SD2 of `pairs` (see [`PoincareStats`]).
pub fn poincare(pairs: &[(f64, f64)]) -> PoincareStats {
    let r = std::f64::consts::FRAC_1_SQRT_2;
    let across = pairs.iter().map(|&(a, b)| (b - a) * r);
    let along = pairs.iter().map(|&(a, b)| (b + a) * r);
    let n = pairs.len() as f64;
    let centre_ms = (!pairs.is_empty()).then(|| {
        (
            pairs.iter().map(|p| p.0).sum::<f64>() / n,
            pairs.iter().map(|p| p.1).sum::<f64>() / n,
        )
    });
    PoincareStats {
        pairs: pairs.len(),
        sd1_ms: sample_sd(across),
        sd2_ms: sample_sd(along),
        centre_ms,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sd1_and_sd2_of_a_hand_worked_cloud() {
        // Intervals 800, 900, 800, 900, 800: the pairs alternate between
        // (800, 900) and (900, 800). Across the identity line every point
        // lies ±100/√2 from it: d = ±70.71, four values, mean 0, so
        // SD1 = √(4 · 5000 / 3) = 81.65 ms. Along it every point has
        // (a + b)/√2 = 1700/√2: SD2 = 0.
        let pairs = [
            (800.0, 900.0),
            (900.0, 800.0),
            (800.0, 900.0),
            (900.0, 800.0),
        ];
        let s = poincare(&pairs);
        assert_eq!(s.pairs, 4);
        assert!((s.sd1_ms.unwrap() - (20_000.0f64 / 3.0).sqrt()).abs() < 1e-9);
        assert!(s.sd2_ms.unwrap().abs() < 1e-9);
        assert_eq!(s.centre_ms, Some((850.0, 850.0)));
    }

    #[test]
    fn a_steady_drift_lies_along_the_identity_line() {
        // Intervals rising by 10 ms each beat: every difference is the
        // same, so SD1 = 0; SD2 = √2 · SD of the pair means.
        let x: Vec<f64> = (0..20).map(|i| 700.0 + 10.0 * i as f64).collect();
        let pairs: Vec<(f64, f64)> = x.windows(2).map(|w| (w[0], w[1])).collect();
        let s = poincare(&pairs);
        assert!(s.sd1_ms.unwrap().abs() < 1e-9);
        let means = pairs.iter().map(|p| (p.0 + p.1) / 2.0);
        let expected = std::f64::consts::SQRT_2 * sample_sd(means).unwrap();
        assert!((s.sd2_ms.unwrap() - expected).abs() < 1e-9);
    }

    #[test]
    fn too_few_pairs_give_no_spread() {
        assert_eq!(poincare(&[]).sd1_ms, None);
        let one = poincare(&[(800.0, 810.0)]);
        assert_eq!((one.pairs, one.sd1_ms, one.sd2_ms), (1, None, None));
    }
}
