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

/// Evaluate `c0 + c1·e^{−jω} + c2·e^{−j2ω}` and the group delay of that
/// polynomial in samples, `Re(Σ k·ck·e^{−jkω} / Σ ck·e^{−jkω})`.
fn poly_at(c: [f64; 3], w: f64) -> (Complex, f64) {
    let e1 = Complex::expj(-w);
    let e2 = Complex::expj(-2.0 * w);
    let p = Complex::real(c[0]) + e1.scale(c[1]) + e2.scale(c[2]);
    let dp = e1.scale(c[1]) + e2.scale(2.0 * c[2]);
    let tau = if p.abs() > 0.0 { (dp / p).re } else { 0.0 };
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
