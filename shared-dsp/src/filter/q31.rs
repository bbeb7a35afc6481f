//! Q31 fixed-point direct form I for cores without an FPU.
//!
//! Samples are Q1.31 (`i32`, full scale ±1). Coefficients are Q2.30 (range
//! [−2, 2)), enough for every stable section's a1. Products are summed in a
//! 64-bit accumulator (each Q31 × Q30 product is exact), and the bits that the
//! final shift drops are fed back into the next sample's sum (first-order
//! error feedback, "fraction saving"). This puts a zero at DC in the
//! rounding-noise transfer function, which cancels most of the noise gain of
//! poles close to z = 1 — the case of a 0.5 Hz high-pass at hundreds of hertz.
//! See CMSIS-DSP's `arm_biquad_cas_df1_32x64` (64-bit state for low
//! cut-offs) and C. T. Mullis, R. A. Roberts, "Roundoff noise in digital
//! filters: frequency transformations and invariants", IEEE Trans. ASSP
//! 24(6):538–550, 1976, on error feedback.
//!
//! When the numerator has a zero at DC (or at Nyquist) the quantised b keeps
//! it exactly: b0 and b2 are rounded and b1 is set from them
//! (k·[1, −2, 1] stays an exact multiple), so a high-pass blocks DC
//! exactly even after quantisation.

use super::{is_stable, Biquad, Section};
use crate::math::round;
use crate::DesignError;

/// Fractional bits of a coefficient (Q2.30).
pub const COEFF_FRAC_BITS: u32 = 30;
const ONE: f64 = (1u64 << COEFF_FRAC_BITS) as f64;

/// Convert a float in [−1, 1) to Q31, saturating.
pub fn to_q31(x: f32) -> i32 {
    let v = round(x as f64 * 2_147_483_648.0);
    if v.is_nan() {
        0
    } else {
        v.clamp(i32::MIN as f64, i32::MAX as f64) as i32
    }
}

/// Convert Q31 to a float.
pub fn from_q31(x: i32) -> f32 {
    (x as f64 / 2_147_483_648.0) as f32
}

/// Q2.30 coefficients of one direct form I section (scipy signs for a1, a2).
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Q31 {
    /// b0, b1, b2 in Q2.30.
    pub b: [i32; 3],
    /// a1, a2 in Q2.30 (subtracted).
    pub a: [i32; 2],
}

/// State of a [`Q31`] section.
#[derive(Clone, Copy, Debug, PartialEq, Default)]
pub struct Q31State {
    /// `x[n−1], x[n−2]` (Q31).
    pub x: [i32; 2],
    /// `y[n−1], y[n−2]` (Q31).
    pub y: [i32; 2],
    /// Bits below the output's LSB left over from the last sample.
    pub carry: i64,
}

fn quantise(c: f64) -> Result<i32, DesignError> {
    let v = round(c * ONE);
    if v.is_finite() && v >= i32::MIN as f64 && v <= i32::MAX as f64 {
        Ok(v as i32)
    } else {
        Err(DesignError::NotRepresentable)
    }
}

impl Section for Q31 {
    type Sample = i32;
    type State = Q31State;

    #[inline]
    fn process(&self, s: &mut Q31State, x: i32) -> i32 {
        let m = |c: i32, v: i32| (c as i64) * (v as i64);
        // Wrapping sums are exact modulo 2^64, so intermediate overflow is
        // harmless whenever the true output lies within ±4 full scale.
        let acc = m(self.b[0], x)
            .wrapping_add(m(self.b[1], s.x[0]))
            .wrapping_add(m(self.b[2], s.x[1]))
            .wrapping_sub(m(self.a[0], s.y[0]))
            .wrapping_sub(m(self.a[1], s.y[1]))
            .wrapping_add(s.carry);
        let wide = acc >> COEFF_FRAC_BITS;
        let (y, carry) = if wide > i32::MAX as i64 {
            (i32::MAX, 0)
        } else if wide < i32::MIN as i64 {
            (i32::MIN, 0)
        } else {
            (wide as i32, acc - (wide << COEFF_FRAC_BITS))
        };
        *s = Q31State {
            x: [x, s.x[0]],
            y: [y, s.y[0]],
            carry,
        };
        y
    }

    fn from_biquad(c: &Biquad<f64>) -> Result<Self, DesignError> {
        let scale = c.b0.abs() + c.b1.abs() + c.b2.abs();
        let zero_at_dc = (c.b0 + c.b1 + c.b2).abs() <= 1e-12 * scale;
        let zero_at_nyquist = (c.b0 - c.b1 + c.b2).abs() <= 1e-12 * scale;
        let b0 = quantise(c.b0)?;
        let b2q = quantise(c.b2)?;
        let wide = |v: i64| i32::try_from(v).map_err(|_| DesignError::NotRepresentable);
        let (b1, b2) = match (zero_at_dc, zero_at_nyquist) {
            (true, true) => (0, b2q.checked_neg().ok_or(DesignError::NotRepresentable)?),
            (true, false) => (wide(-(b0 as i64 + b2q as i64))?, b2q),
            (false, true) => (wide(b0 as i64 + b2q as i64)?, b2q),
            (false, false) => (quantise(c.b1)?, b2q),
        };
        let q = Q31 {
            b: [b0, b1, b2],
            a: [quantise(c.a1)?, quantise(c.a2)?],
        };
        let r = q.realised();
        if is_stable(r.a1, r.a2) {
            Ok(q)
        } else {
            Err(DesignError::Unstable)
        }
    }

    fn realised(&self) -> Biquad<f64> {
        let f = |v: i32| v as f64 / ONE;
        Biquad {
            b0: f(self.b[0]),
            b1: f(self.b[1]),
            b2: f(self.b[2]),
            a1: f(self.a[0]),
            a2: f(self.a[1]),
        }
    }

    fn identity() -> Self {
        Q31 {
            b: [1 << COEFF_FRAC_BITS, 0, 0],
            a: [0, 0],
        }
    }

    fn steady_state(&self, x: i32) -> Q31State {
        let y = self.steady_output(x);
        Q31State {
            x: [x, x],
            y: [y, y],
            carry: 0,
        }
    }

    fn steady_output(&self, x: i32) -> i32 {
        let g = self.realised().dc_gain();
        let v = round(g * x as f64);
        if v.is_nan() {
            0
        } else {
            v.clamp(i32::MIN as f64, i32::MAX as f64) as i32
        }
    }
}
