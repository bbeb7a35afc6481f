//! Second-order sections and their cascades.
//!
//! Coefficients ([`Biquad`]) are kept apart from state: a section type pairs
//! a coefficient set with the arithmetic of one filter structure, and its
//! `State` is a separate plain value, so one designed filter can run many
//! channels and be reset or settled without redesign.
//!
//! | structure | sample | use it for |
//! |---|---|---|
//! | [`Delta`] | `f32` | the default: low corners at high sample rates (0.5 Hz at 1 kHz) stay accurate |
//! | [`Df2t`] | `f32` / `f64` | textbook transposed direct form II; fine when corners are above ~fs/100 |
//! | [`Df1`] | `f32` / `f64` | textbook direct form I |
//! | [`Q31`] | `i32` (Q1.31) | cores without an FPU (Cortex-M0/M3); 64-bit accumulator and error feedback |
//!
//! Per-sample processing cannot fail: it never panics, floating-point forms
//! take a non-finite input as 0 (see [`Sample::sanitize`]), and the Q31 form
//! saturates.

mod biquad;
mod bounded;
mod cascade;
mod delta;
mod q31;

pub use biquad::{Biquad, Df1, Df1State, Df2t, Df2tState, Real};
pub use bounded::Bounded;
pub use cascade::Cascade;
pub use delta::{Delta, DeltaState};
pub use q31::{from_q31, to_q31, Q31State, Q31};

use crate::DesignError;

/// A sample type a section processes.
pub trait Sample: Copy + Default + PartialEq + core::fmt::Debug {
    /// Make any value safe to feed to a section: floating-point NaN and
    /// infinities become 0 and magnitudes are limited to `1e18`, so a
    /// corrupt sample cannot poison filter state forever; integers pass as
    /// they are (the fixed-point arithmetic saturates instead).
    fn sanitize(self) -> Self;
}

// Floats: NaN and infinities become 0, magnitudes are limited.
macro_rules! float_sample {
    ($($t:ty),*) => {$(
        impl Sample for $t {
            #[inline]
            fn sanitize(self) -> Self {
                // Nearly every sample is in range: one comparison (NaN
                // fails it) instead of a finiteness test and two clamps,
                // on every filtered sample.
                if self.abs() <= 1e18 {
                    self
                } else if self.is_finite() {
                    self.clamp(-1e18, 1e18)
                } else {
                    0.0
                }
            }
        }
    )*};
}
float_sample!(f32, f64);

impl Sample for i32 {
    #[inline]
    fn sanitize(self) -> Self {
        self
    }
}

/// One second-order section: coefficients plus the arithmetic of one
/// structure. The state lives outside, in [`Section::State`].
pub trait Section: Copy + core::fmt::Debug {
    /// The sample type (`f32`, `f64` or Q31 in `i32`).
    type Sample: Sample;
    /// The delay-line state of this structure.
    type State: Copy + Default + core::fmt::Debug;

    /// Filter one sample. Never fails.
    fn process(&self, state: &mut Self::State, x: Self::Sample) -> Self::Sample;

    /// Quantise designed double-precision coefficients into this structure,
    /// checking that the quantised section is still strictly stable.
    fn from_biquad(c: &Biquad<f64>) -> Result<Self, DesignError>;

    /// The coefficients this section really implements after quantisation,
    /// in double precision, for frequency-response checks.
    fn realised(&self) -> Biquad<f64>;

    /// A pass-through section (fills the unused slots of a cascade, which
    /// are never run).
    fn identity() -> Self;

    /// The state in which a constant input `x` has been applied forever, so
    /// the output starts at its steady value instead of ringing from zero.
    fn steady_state(&self, x: Self::Sample) -> Self::State;

    /// The output for a constant input `x` in that steady state.
    fn steady_output(&self, x: Self::Sample) -> Self::Sample;
}

/// True when the second-order denominator `1 + a1 z⁻¹ + a2 z⁻²` has both
/// roots strictly inside the unit circle (the stability triangle
/// `|a2| < 1`, `|a1| < 1 + a2`).
pub fn is_stable(a1: f64, a2: f64) -> bool {
    a1.is_finite() && a2.is_finite() && a2.abs() < 1.0 && a1.abs() < 1.0 + a2
}
