//! Frequency response of a cascade: magnitude, phase and group delay at any
//! frequency, evaluated exactly from the coefficients (no FFT, no grid).

use crate::filter::Biquad;
use crate::math::{log10, Complex, PI};

/// The response of a filter at one frequency.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Response {
    /// Frequency, Hz.
    pub frequency_hz: f64,
    /// `H(e^{jω})`.
    pub h: Complex,
    /// `20·log10|H|`, dB (−∞ at an exact zero).
    pub magnitude_db: f64,
    /// Phase, radians, the sum of each section's principal phase (so it is
    /// continuous across sections but may exceed ±π; unwrap across
    /// frequencies for a plot).
    pub phase_rad: f64,
    /// Group delay `−dφ/dω`, seconds.
    pub group_delay_s: f64,
}

/// Evaluate `P(ω) = c0 + c1·e^{−jω} + c2·e^{−j2ω}` and the group delay of
/// that polynomial in samples. With `S_k = Σ n^k·c_n·e^{−jnω}`, the delay is
/// `Re(S_1 / S_0)`; on a zero of the unit circle (`S_0 = 0`: a notch centre,
/// a low-pass at Nyquist) it takes the limit `Re(S_{m+1} / ((m+1)·S_m))`
/// with `m` the first non-vanishing `S_m` (L'Hôpital), e.g. ½ sample for a
/// simple zero, instead of dividing rounding noise by rounding noise.
fn poly_at(c: [f64; 3], w: f64) -> (Complex, f64) {
    let e = [
        Complex::real(1.0),
        Complex::expj(-w),
        Complex::expj(-2.0 * w),
    ];
    let s = |k: i32| {
        (0..3).fold(Complex::real(0.0), |acc, n| {
            acc + e[n].scale(c[n] * libm::pow(n as f64, k as f64))
        })
    };
    let p = s(0);
    let scale = c.iter().map(|v| v.abs()).sum::<f64>();
    // Only at rounding level is the point a zero; just beside it the
    // direct formula is right (and the limit would not be).
    let tiny = 1e-12 * scale;
    let mut m = 0;
    while m < 2 && s(m).abs() <= tiny {
        m += 1;
    }
    let sm = s(m);
    let tau = if sm.abs() > 0.0 {
        (s(m + 1) / sm.scale((m + 1) as f64)).re
    } else {
        0.0
    };
    (p, tau)
}

/// Response of the cascade `sections` at `frequency_hz` for sample rate
/// `fs_hz`. Use it on [`crate::Design::sections`] for the design, or on
/// [`crate::filter::Cascade::realised`] for what a quantised filter does.
pub fn response(sections: &[Biquad<f64>], frequency_hz: f64, fs_hz: f64) -> Response {
    let w = 2.0 * PI * frequency_hz / fs_hz;
    let mut h = Complex::real(1.0);
    let mut phase = 0.0;
    let mut delay = 0.0;
    for s in sections {
        let (b, tb) = poly_at([s.b0, s.b1, s.b2], w);
        let (a, ta) = poly_at([1.0, s.a1, s.a2], w);
        let hs = b / a;
        h = h * hs;
        phase += hs.arg();
        delay += tb - ta;
    }
    let mag = h.abs();
    Response {
        frequency_hz,
        h,
        magnitude_db: if mag > 0.0 {
            20.0 * log10(mag)
        } else {
            f64::NEG_INFINITY
        },
        phase_rad: phase,
        group_delay_s: delay / fs_hz,
    }
}
