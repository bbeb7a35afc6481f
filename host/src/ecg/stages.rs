//! The signal stages in front of Pan and Tompkins' decision rules, done
//! offline and without delay: zero-phase band-pass, centred derivative,
//! squaring, centred moving-window integration.

use plethwire_dsp::design::butterworth_bandpass;
use plethwire_dsp::filter::Biquad;

/// Pass band of the QRS energy, Hz (Pan and Tompkins 1985: 5-15 Hz).
pub const BAND_HZ: (f64, f64) = (5.0, 15.0);
/// Width of the moving-window integrator, seconds (Pan and Tompkins 1985:
/// 150 ms, 30 samples at 200 Hz).
pub const INTEGRATION_S: f64 = 0.150;

/// The samples with every non-finite value replaced by the last finite
/// one before it (the first finite one for a leading run; zeros when there
/// is none), and the first value subtracted so the filters start near rest.
pub fn sanitised(x: &[f64]) -> Vec<f64> {
    let first = x.iter().copied().find(|v| v.is_finite()).unwrap_or(0.0);
    let mut last = first;
    x.iter()
        .map(|&v| {
            if v.is_finite() {
                last = v;
            }
            last - first
        })
        .collect()
}

/// Butterworth band-pass over [`BAND_HZ`] (order 2 prototype), run forward
/// and then backward so the QRS keeps its place (as `scipy.signal.sosfiltfilt`
/// does, without its edge padding). `fs` must be checked by the caller.
pub fn band_passed(x: &[f64], fs: f64) -> Vec<f64> {
    zero_phase_band(x, fs, BAND_HZ).expect("5-15 Hz band-pass exists for every accepted rate")
}

/// Butterworth band-pass over `band` Hz (order 2 prototype), run forward
/// and then backward, as [`band_passed`]; `None` when no such band-pass
/// exists at `fs`.
pub fn zero_phase_band(x: &[f64], fs: f64, band: (f64, f64)) -> Option<Vec<f64>> {
    let design = butterworth_bandpass(2, band.0, band.1, fs).ok()?;
    let mut y = x.to_vec();
    for s in design.sections() {
        run_section(s, &mut y);
    }
    y.reverse();
    for s in design.sections() {
        run_section(s, &mut y);
    }
    y.reverse();
    Some(y)
}

/// One biquad in transposed direct form II over `y`, in place.
fn run_section(s: &Biquad<f64>, y: &mut [f64]) {
    let (mut z1, mut z2) = (0.0, 0.0);
    for v in y.iter_mut() {
        let x = *v;
        let out = s.b0 * x + z1;
        z1 = s.b1 * x - s.a1 * out + z2;
        z2 = s.b2 * x - s.a2 * out;
        *v = out;
    }
}

/// Five-point derivative of Pan and Tompkins 1985, centred:
/// (2x[n+2] + x[n+1] − x[n−1] − 2x[n−2]) / 8, per sample; the samples are
/// spaced by `step` (about 5 ms, the paper's 200 Hz) so the filter's
/// response stays the paper's at any rate.
pub fn derivative(x: &[f64], step: usize) -> Vec<f64> {
    let n = x.len();
    let at = |i: isize| x[i.clamp(0, n as isize - 1) as usize];
    let k = step as isize;
    (0..n as isize)
        .map(|i| (2.0 * at(i + 2 * k) + at(i + k) - at(i - k) - 2.0 * at(i - 2 * k)) / 8.0)
        .collect()
}

/// Centred moving average of `width` samples (odd widths are exactly
/// centred; the edges average what is there).
pub fn integrated(x: &[f64], width: usize) -> Vec<f64> {
    let n = x.len();
    let half = width / 2;
    let mut prefix = Vec::with_capacity(n + 1);
    prefix.push(0.0);
    for &v in x {
        prefix.push(prefix.last().copied().unwrap_or(0.0) + v);
    }
    (0..n)
        .map(|i| {
            let lo = i.saturating_sub(half);
            let hi = (i + width - half).min(n);
            (prefix[hi] - prefix[lo]) / (hi - lo) as f64
        })
        .collect()
}

/// Indices of the local maxima of `x` (the first sample of a flat top).
pub fn local_maxima(x: &[f64]) -> Vec<usize> {
    let mut out = Vec::new();
    let mut i = 1;
    while i + 1 < x.len() {
        if x[i] > x[i - 1] {
            let start = i;
            while i + 1 < x.len() && x[i + 1] == x[i] {
                i += 1;
            }
            if i + 1 < x.len() && x[i + 1] < x[i] {
                out.push(start);
            }
        }
        i += 1;
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn non_finite_samples_are_held() {
        let y = sanitised(&[f64::NAN, 2.0, f64::INFINITY, 5.0, f64::NAN]);
        assert_eq!(y, vec![0.0, 0.0, 0.0, 3.0, 3.0]);
        assert_eq!(sanitised(&[f64::NAN; 3]), vec![0.0; 3]);
    }

    #[test]
    fn band_pass_keeps_the_band_and_the_place() {
        let fs = 250.0;
        let tone = |f: f64| -> Vec<f64> {
            (0..2500)
                .map(|i| (2.0 * std::f64::consts::PI * f * i as f64 / fs).sin())
                .collect()
        };
        let rms = |v: &[f64]| (v[500..2000].iter().map(|x| x * x).sum::<f64>() / 1500.0).sqrt();
        let pass = band_passed(&tone(9.0), fs);
        assert!(rms(&pass) > 0.65, "{}", rms(&pass));
        assert!(rms(&band_passed(&tone(0.5), fs)) < 0.01);
        assert!(rms(&band_passed(&tone(50.0), fs)) < 0.02);
        // Zero phase: the pass-band tone keeps its zero crossings.
        let x = tone(9.0);
        let lag: f64 = (500..2000).map(|i| (pass[i] - x[i]).abs()).sum::<f64>() / 1500.0;
        assert!(lag < 0.2, "{lag}");
    }

    #[test]
    fn derivative_integration_and_maxima() {
        let ramp: Vec<f64> = (0..20).map(|i| i as f64).collect();
        let d = derivative(&ramp, 1);
        assert!((d[10] - 1.25).abs() < 1e-12, "{}", d[10]);
        let m = integrated(&[0.0, 0.0, 3.0, 0.0, 0.0], 3);
        assert_eq!(m, vec![0.0, 1.0, 1.0, 1.0, 0.0]);
        assert_eq!(
            local_maxima(&[0.0, 1.0, 0.0, 2.0, 2.0, 1.0, 3.0]),
            vec![1, 3]
        );
    }
}
