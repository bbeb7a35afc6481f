//! `plethwire-dsp`: the signal-processing core shared by plethwire's firmware
//! and its host tools.
//!
//! The crate is `no_std`, never allocates, and contains no `unsafe` code, so
//! the very same filter code runs on a Cortex-M microcontroller and on the PC
//! that checks it.
//!
//! * [`design`]: filter design by the bilinear transform with pre-warping
//!   (Butterworth low-pass, high-pass and band-pass, a mains notch, a DC
//!   blocker), returning `Result` with the small [`DesignError`] enum.
//! * [`filter`]: second-order sections and their cascades in `f32`
//!   ([`filter::Df2t`], [`filter::Df1`] and the low-corner-safe
//!   [`filter::Delta`] form) and in Q31 fixed point ([`filter::Q31`]) for
//!   cores without an FPU. Coefficients are kept apart from state, and
//!   per-sample processing cannot fail.
//! * [`response`]: magnitude, phase and group delay of a cascade at any
//!   frequency.
//! * [`feed`]: the recorded-samples feed a host sends an emulated board
//!   (header with the pipeline's configuration, then `f32` samples).
//! * [`hrv`]: time-domain heart-rate variability (SDNN, RMSSD, NN50, pNN50)
//!   over a slice of intervals or a fixed-capacity sliding window.
//!
//! # Coefficient sign convention
//! Every section implements
//! `y[n] = b0·x[n] + b1·x[n−1] + b2·x[n−2] − a1·y[n−1] − a2·y[n−2]`,
//! i.e. `H(z) = (b0 + b1 z⁻¹ + b2 z⁻²) / (1 + a1 z⁻¹ + a2 z⁻²)`, the same
//! convention as `scipy.signal` (`sos` rows `[b0, b1, b2, 1, a1, a2]`). CMSIS-DSP
//! stores a1 and a2 with the opposite sign; convert when exchanging
//! coefficients with it.
//!
//! # Maths library
//! All transcendental functions go through [`libm`] (a pure-Rust port of
//! musl's maths library), never through the platform's `f64::sin` and
//! friends, which do not exist in `no_std` and differ between targets.
//! `libm` was chosen over `micromath` because it is correctly rounded to
//! within an ulp (designs match scipy to ~1e-15) while `micromath` trades
//! accuracy for speed; design runs once, so accuracy wins.
//!
//! In the per-sample path `libm` stays too, because there is almost nothing
//! to win. Counted on the emulated Cortex-M4F (`scripts/profile-pipeline`,
//! first 30 s, every instruction inside `Pipeline::push` whose inlining
//! chain is in `libm`), its calls (`trunc`, `floor`, `ceil`, `sqrt`, all
//! per beat) take 1.19 of 273.6 instructions per sample on CapnoBase
//! cb0009 at 300 Hz (0.44 %) and 2.71 of 415.4 on BIDMC bidmc01 at 125 Hz
//! (0.65 %). `micromath` could save at most that share, and its
//! approximate square root would change the beats' figures, which must
//! stay identical (docs/accuracy.md).
#![no_std]

#[cfg(any(feature = "std", test))]
extern crate std;

pub mod design;
pub mod feed;
pub mod filter;
pub mod hrv;
pub mod math;
pub mod pipeline;
pub mod response;
pub mod wire;

pub use design::{Design, DesignError};
