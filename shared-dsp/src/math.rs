//! Small numeric helpers: a complex type for design work and thin wrappers
//! around [`libm`], so every target computes the same bits.

use core::ops::{Add, Div, Mul, Neg, Sub};

/// π in double precision.
pub const PI: f64 = core::f64::consts::PI;

/// Sine (libm).
#[inline]
pub fn sin(x: f64) -> f64 {
    libm::sin(x)
}
/// Cosine (libm).
#[inline]
pub fn cos(x: f64) -> f64 {
    libm::cos(x)
}
/// Tangent (libm).
#[inline]
pub fn tan(x: f64) -> f64 {
    libm::tan(x)
}
/// Square root (libm).
#[inline]
pub fn sqrt(x: f64) -> f64 {
    libm::sqrt(x)
}
/// Four-quadrant arctangent (libm).
#[inline]
pub fn atan2(y: f64, x: f64) -> f64 {
    libm::atan2(y, x)
}
/// Base-10 logarithm (libm).
#[inline]
pub fn log10(x: f64) -> f64 {
    libm::log10(x)
}
/// Round half away from zero (libm); `f64::round` is not in `core`.
#[inline]
pub fn round(x: f64) -> f64 {
    libm::round(x)
}

/// The larger of `a` and `b`, the other one if either is NaN, and `a` when
/// they compare equal (so the choice between 0.0 and −0.0 is the same on
/// every target). `f32::max` is a library call on cores without VMAXNM,
/// such as the Cortex-M4 (a dozen instructions per use); this is inline.
#[inline(always)]
pub fn max_f32(a: f32, b: f32) -> f32 {
    if a < b || a.is_nan() {
        b
    } else {
        a
    }
}

/// The smaller of `a` and `b`, the other one if either is NaN, and `b`
/// when they compare equal; inline, like [`max_f32`].
#[inline(always)]
pub fn min_f32(a: f32, b: f32) -> f32 {
    if a < b || b.is_nan() {
        a
    } else {
        b
    }
}

/// A complex number in double precision, enough for poles and zeros.
#[derive(Clone, Copy, Debug, PartialEq, Default)]
pub struct Complex {
    /// Real part.
    pub re: f64,
    /// Imaginary part.
    pub im: f64,
}

impl Complex {
    /// `re + j·im`.
    pub const fn new(re: f64, im: f64) -> Self {
        Self { re, im }
    }
    /// A real number.
    pub const fn real(re: f64) -> Self {
        Self { re, im: 0.0 }
    }
    /// Complex conjugate.
    pub fn conj(self) -> Self {
        Self::new(self.re, -self.im)
    }
    /// Modulus |z| without intermediate overflow.
    pub fn abs(self) -> f64 {
        libm::hypot(self.re, self.im)
    }
    /// Argument in (−π, π].
    pub fn arg(self) -> f64 {
        atan2(self.im, self.re)
    }
    /// `e^(jθ)`.
    pub fn expj(theta: f64) -> Self {
        Self::new(cos(theta), sin(theta))
    }
    /// Principal square root (branch cut on the negative real axis, as numpy).
    pub fn sqrt(self) -> Self {
        if self.re == 0.0 && self.im == 0.0 {
            return Self::new(0.0, self.im);
        }
        let m = self.abs();
        let re = sqrt(0.5 * (m + self.re));
        let im = sqrt(0.5 * (m - self.re));
        Self::new(re, if self.im < 0.0 { -im } else { im })
    }
    /// Scale by a real number.
    pub fn scale(self, k: f64) -> Self {
        Self::new(self.re * k, self.im * k)
    }
}

impl Add for Complex {
    type Output = Self;
    fn add(self, o: Self) -> Self {
        Self::new(self.re + o.re, self.im + o.im)
    }
}
impl Sub for Complex {
    type Output = Self;
    fn sub(self, o: Self) -> Self {
        Self::new(self.re - o.re, self.im - o.im)
    }
}
impl Mul for Complex {
    type Output = Self;
    fn mul(self, o: Self) -> Self {
        Self::new(
            self.re * o.re - self.im * o.im,
            self.re * o.im + self.im * o.re,
        )
    }
}
impl Div for Complex {
    type Output = Self;
    fn div(self, o: Self) -> Self {
        // Smith's algorithm keeps the quotient accurate for any scaling.
        if libm::fabs(o.re) >= libm::fabs(o.im) {
            let r = o.im / o.re;
            let d = o.re + o.im * r;
            Self::new((self.re + self.im * r) / d, (self.im - self.re * r) / d)
        } else {
            let r = o.re / o.im;
            let d = o.re * r + o.im;
            Self::new((self.re * r + self.im) / d, (self.im * r - self.re) / d)
        }
    }
}
impl Neg for Complex {
    type Output = Self;
    fn neg(self) -> Self {
        Self::new(-self.re, -self.im)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sqrt_matches_principal_branch() {
        let z = Complex::new(-4.0, 0.0).sqrt();
        assert!((z.re - 0.0).abs() < 1e-15 && (z.im - 2.0).abs() < 1e-15);
        let w = Complex::new(3.0, -4.0).sqrt();
        assert!((w.re - 2.0).abs() < 1e-15 && (w.im + 1.0).abs() < 1e-15);
    }

    #[test]
    fn max_and_min_behave_as_documented() {
        assert_eq!(max_f32(1.0, 2.0), 2.0);
        assert_eq!(max_f32(2.0, f32::NAN), 2.0);
        assert_eq!(max_f32(f32::NAN, 2.0), 2.0);
        assert_eq!(max_f32(0.0, -0.0).to_bits(), 0.0f32.to_bits());
        assert_eq!(max_f32(-0.0, 0.0).to_bits(), (-0.0f32).to_bits());
        assert_eq!(min_f32(1.0, 2.0), 1.0);
        assert_eq!(min_f32(2.0, f32::NAN), 2.0);
        assert_eq!(min_f32(f32::NAN, 2.0), 2.0);
        assert_eq!(min_f32(0.0, -0.0).to_bits(), (-0.0f32).to_bits());
        assert_eq!(min_f32(f32::NEG_INFINITY, 3.0), f32::NEG_INFINITY);
        assert!(max_f32(f32::NAN, f32::NAN).is_nan());
    }

    #[test]
    fn division_inverts_multiplication() {
        let a = Complex::new(1.5, -2.0);
        let b = Complex::new(-0.25, 3.0);
        let c = (a * b) / b;
        assert!((c - a).abs() < 1e-14);
    }
}
