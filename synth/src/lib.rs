//! Synthetic pulse recordings whose true beat times are known, for tests
//! and demos.
//!
//! Each beat, onset to onset, is the two-Gaussian pulse of Tang Q. et al.
//! 2020, "Synthetic photoplethysmogram generation using two Gaussian
//! functions", Sci Rep 10:13883 ([`PulseTemplate`]), stretched over its
//! interval and joined continuously to its neighbours ([`PulseShape`]).
//! Intervals are drawn from a normal distribution around the mean that a
//! piecewise-linear heart-rate schedule gives at each onset
//! ([`HrSchedule`]). On top come a DC level, breathing-like baseline
//! wander, white noise, motion bursts, finger-off stretches and ADC
//! clipping, in that order ([`SynthOptions`]).
//!
//! [`generate`] returns the samples with the truth ([`Synthetic`]): each
//! beat's onset and systolic peak (where the pulse really is largest,
//! found from the shape, not assumed), its interval, and flags for beats
//! touched by motion, clipping or a finger-off stretch. [`write_csv`]
//! writes the signal for other tools.
//!
//! The same options and seed give the same samples bit for bit on every
//! machine: the random source is our own and all transcendental maths go
//! through `libm`.
//!
//! ```
//! use plethwire_synth::{generate, HrSchedule, SynthOptions};
//! let rec = generate(&SynthOptions {
//!     duration_s: 300.0,
//!     hr: HrSchedule::from_points(&[(60.0, 65.0), (120.0, 140.0), (180.0, 140.0), (240.0, 80.0)]),
//!     ..SynthOptions::default()
//! })
//! .unwrap();
//! assert_eq!(rec.samples.len(), 30_000);
//! assert!(rec.beats.len() > 400);
//! ```

#![deny(missing_docs)]

mod csv;
mod generate;
mod options;
mod rng;
mod schedule;
mod template;
#[cfg(test)]
mod tests;

pub use csv::{write_csv, CSV_HEADER};
pub use generate::{generate, BeatFlags, Synthetic, TrueBeat};
pub use options::{
    AdcRails, FingerOff, MotionBurst, SynthError, SynthOptions, MAX_SAMPLES, MIN_SAMPLES_PER_BEAT,
};
pub use schedule::{HrSchedule, MAX_BPM, MIN_BPM};
pub use template::{PulseShape, PulseTemplate, Wave};
