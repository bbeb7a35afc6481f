//! Coefficients of one section and the two textbook structures.

use super::{is_stable, Sample, Section};
use crate::DesignError;
use core::ops::{Add, Mul, Neg, Sub};

/// Floating-point types a [`Biquad`] can hold (`f32`, `f64`).
pub trait Real:
    Sample + Add<Output = Self> + Sub<Output = Self> + Mul<Output = Self> + Neg<Output = Self>
{
    /// Round a double to this type.
    fn from_f64(x: f64) -> Self;
    /// Widen to a double (exact).
    fn to_f64(self) -> f64;
}
impl Real for f32 {
    #[inline]
    fn from_f64(x: f64) -> Self {
        x as f32
    }
    #[inline]
    fn to_f64(self) -> f64 {
        self as f64
    }
}
impl Real for f64 {
    #[inline]
    fn from_f64(x: f64) -> Self {
        x
    }
    #[inline]
    fn to_f64(self) -> f64 {
        self
    }
}

/// Coefficients of one second-order section, normalised so that a0 = 1.
///
/// The section computes
/// `y[n] = b0·x[n] + b1·x[n−1] + b2·x[n−2] − a1·y[n−1] − a2·y[n−2]`.
/// The signs of `a1` and `a2` follow `scipy.signal` (an `sos` row is
/// `[b0, b1, b2, 1, a1, a2]`); CMSIS-DSP stores them negated. A first-order
/// section has `b2 = a2 = 0`.
#[derive(Clone, Copy, Debug, PartialEq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Biquad<T> {
    /// Feed-forward coefficient of `x[n]`.
    pub b0: T,
    /// Feed-forward coefficient of `x[n−1]`.
    pub b1: T,
    /// Feed-forward coefficient of `x[n−2]`.
    pub b2: T,
    /// Feedback coefficient of `y[n−1]`, scipy sign: it is *subtracted*.
    pub a1: T,
    /// Feedback coefficient of `y[n−2]`, scipy sign: it is *subtracted*.
    pub a2: T,
}

impl<T: Real> Biquad<T> {
    /// A section that passes its input unchanged.
    pub fn identity() -> Self {
        let (one, zero) = (T::from_f64(1.0), T::from_f64(0.0));
        Self {
            b0: one,
            b1: zero,
            b2: zero,
            a1: zero,
            a2: zero,
        }
    }

    /// Round every coefficient to another floating-point type.
    pub fn cast<U: Real>(&self) -> Biquad<U> {
        Biquad {
            b0: U::from_f64(self.b0.to_f64()),
            b1: U::from_f64(self.b1.to_f64()),
            b2: U::from_f64(self.b2.to_f64()),
            a1: U::from_f64(self.a1.to_f64()),
            a2: U::from_f64(self.a2.to_f64()),
        }
    }

    /// The coefficients as a scipy `sos` row `[b0, b1, b2, 1, a1, a2]`.
    pub fn to_sos_row(&self) -> [f64; 6] {
        [
            self.b0.to_f64(),
            self.b1.to_f64(),
            self.b2.to_f64(),
            1.0,
            self.a1.to_f64(),
            self.a2.to_f64(),
        ]
    }

    /// Strictly stable (both poles inside the unit circle)?
    pub fn is_stable(&self) -> bool {
        is_stable(self.a1.to_f64(), self.a2.to_f64())
    }

    /// Gain at DC, `B(1) / A(1)`, in double precision.
    pub fn dc_gain(&self) -> f64 {
        let b = self.b0.to_f64() + self.b1.to_f64() + self.b2.to_f64();
        b / (1.0 + self.a1.to_f64() + self.a2.to_f64())
    }

    fn checked(c: &Biquad<f64>) -> Result<Self, DesignError> {
        let q = c.cast::<T>();
        if q.is_stable() {
            Ok(q)
        } else {
            Err(DesignError::Unstable)
        }
    }
}

/// Direct form I: keeps the last two inputs and outputs. Robust (no internal
/// overflow beyond the output's), four state words.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Df1<T = f32>(pub Biquad<T>);

/// State of a [`Df1`] section: `[x[n−1], x[n−2], y[n−1], y[n−2]]`.
#[derive(Clone, Copy, Debug, PartialEq, Default)]
pub struct Df1State<T = f32> {
    /// `x[n−1], x[n−2]`.
    pub x: [T; 2],
    /// `y[n−1], y[n−2]`.
    pub y: [T; 2],
}

impl<T: Real> Section for Df1<T> {
    type Sample = T;
    type State = Df1State<T>;

    #[inline]
    fn process(&self, s: &mut Df1State<T>, x: T) -> T {
        let c = &self.0;
        let y = c.b0 * x + c.b1 * s.x[0] + c.b2 * s.x[1] - c.a1 * s.y[0] - c.a2 * s.y[1];
        s.x = [x, s.x[0]];
        s.y = [y, s.y[0]];
        y
    }
    fn from_biquad(c: &Biquad<f64>) -> Result<Self, DesignError> {
        Biquad::checked(c).map(Df1)
    }
    fn realised(&self) -> Biquad<f64> {
        self.0.cast()
    }
    fn identity() -> Self {
        Df1(Biquad::identity())
    }
    fn steady_state(&self, x: T) -> Df1State<T> {
        let y = self.steady_output(x);
        Df1State {
            x: [x, x],
            y: [y, y],
        }
    }
    fn steady_output(&self, x: T) -> T {
        T::from_f64(self.0.dc_gain() * x.to_f64())
    }
}

/// Transposed direct form II: two state words, the usual floating-point
/// structure. Its coefficient rounding hurts when poles crowd z = 1 (low
/// corner, high sample rate); use [`super::Delta`] there.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Df2t<T = f32>(pub Biquad<T>);

/// State of a [`Df2t`] section: the two partial sums.
#[derive(Clone, Copy, Debug, PartialEq, Default)]
pub struct Df2tState<T = f32> {
    /// s1, s2.
    pub s: [T; 2],
}

impl<T: Real> Section for Df2t<T> {
    type Sample = T;
    type State = Df2tState<T>;

    #[inline]
    fn process(&self, st: &mut Df2tState<T>, x: T) -> T {
        let c = &self.0;
        let y = c.b0 * x + st.s[0];
        st.s[0] = c.b1 * x - c.a1 * y + st.s[1];
        st.s[1] = c.b2 * x - c.a2 * y;
        y
    }
    fn from_biquad(c: &Biquad<f64>) -> Result<Self, DesignError> {
        Biquad::checked(c).map(Df2t)
    }
    fn realised(&self) -> Biquad<f64> {
        self.0.cast()
    }
    fn identity() -> Self {
        Df2t(Biquad::identity())
    }
    fn steady_state(&self, x: T) -> Df2tState<T> {
        let c = self.0.cast::<f64>();
        let (xd, y) = (x.to_f64(), c.dc_gain() * x.to_f64());
        let s2 = c.b2 * xd - c.a2 * y;
        let s1 = c.b1 * xd - c.a1 * y + s2;
        Df2tState {
            s: [T::from_f64(s1), T::from_f64(s2)],
        }
    }
    fn steady_output(&self, x: T) -> T {
        T::from_f64(self.0.dc_gain() * x.to_f64())
    }
}
