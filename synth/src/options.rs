//! What to generate: [`SynthOptions`] and the events that can be placed in
//! a recording, with their checks.
//!
//! Signal values are in arbitrary units (think volts at the ADC input);
//! the defaults resemble a finger sensor after its front end: a large DC
//! level, a pulse of a few percent of it, slow breathing-like wander and a
//! little noise (common practice for transmissive finger sensors).

use super::{HrSchedule, PulseTemplate};
use std::fmt;

/// A stretch of hand or finger movement: a large, irregular, low-frequency
/// disturbance added on top of the signal.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct MotionBurst {
    /// Start, s.
    pub start_s: f64,
    /// Length, s.
    pub duration_s: f64,
    /// Largest size of the disturbance, signal units (it never exceeds it).
    pub amplitude: f64,
}

/// A stretch with the finger off the sensor: the signal drops to
/// [`SynthOptions::finger_off_level`] with a little noise, no pulses.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct FingerOff {
    /// Start, s.
    pub start_s: f64,
    /// Length, s.
    pub duration_s: f64,
}

/// The ADC's range: values below `low` or above `high` read as the rail.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct AdcRails {
    /// Lowest value the ADC can report.
    pub low: f64,
    /// Highest value the ADC can report.
    pub high: f64,
}

/// Everything the generator needs. Start from `Default` and change what
/// matters: `SynthOptions { duration_s: 30.0, ..Default::default() }`.
#[derive(Clone, Debug, PartialEq)]
pub struct SynthOptions {
    /// Sample rate, Hz (default 100).
    pub sample_rate_hz: f64,
    /// Length of the recording, s (default 60).
    pub duration_s: f64,
    /// Mean heart rate over time (default constant 72 bpm).
    pub hr: HrSchedule,
    /// Standard deviation of each beat's interval around the schedule's
    /// mean, ms (default 30). Draws are limited to 3 SD (and to half the
    /// mean interval) on either side, symmetrically so the mean stays put.
    pub hr_variability_sd_ms: f64,
    /// Pulse shape (default [`PulseTemplate::EXCELLENT`]).
    pub template: PulseTemplate,
    /// Onset-to-peak height of a pulse, signal units (default 0.05).
    pub pulse_amplitude: f64,
    /// Constant level under the pulses, signal units (default 1.5).
    pub dc_level: f64,
    /// Peak size of the slow sinusoidal baseline wander (default 0.02).
    pub wander_amplitude: f64,
    /// Frequency of the wander, Hz (default 0.25, a breathing rate of 15
    /// per minute, common practice).
    pub wander_hz: f64,
    /// Standard deviation of white Gaussian noise on every sample (default
    /// 0.0005).
    pub noise_sd: f64,
    /// Motion bursts (default none).
    pub motion: Vec<MotionBurst>,
    /// ADC range; `None` (default) never clips.
    pub rails: Option<AdcRails>,
    /// Finger-off stretches (default none).
    pub finger_off: Vec<FingerOff>,
    /// Level while the finger is off, signal units (default 0.05).
    pub finger_off_level: f64,
    /// Noise standard deviation while the finger is off (default 0.0002).
    pub finger_off_noise_sd: f64,
    /// Seed of every random draw; the same options give the same signal.
    pub seed: u64,
}

impl Default for SynthOptions {
    fn default() -> Self {
        Self {
            sample_rate_hz: 100.0,
            duration_s: 60.0,
            hr: HrSchedule::default(),
            hr_variability_sd_ms: 30.0,
            template: PulseTemplate::EXCELLENT,
            pulse_amplitude: 0.05,
            dc_level: 1.5,
            wander_amplitude: 0.02,
            wander_hz: 0.25,
            noise_sd: 0.0005,
            motion: Vec::new(),
            rails: None,
            finger_off: Vec::new(),
            finger_off_level: 0.05,
            finger_off_noise_sd: 0.0002,
            seed: 1,
        }
    }
}

/// Fewest samples a beat may span at the fastest scheduled rate; fewer
/// cannot show a pulse shape at all.
pub const MIN_SAMPLES_PER_BEAT: f64 = 4.0;
/// Most samples one call may generate (about 28 h at 1 kHz), so a typo in
/// the duration cannot exhaust memory.
pub const MAX_SAMPLES: f64 = 1.0e8;

/// An option the generator refuses, and why.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct SynthError {
    /// The option's field name in [`SynthOptions`].
    pub option: &'static str,
    /// What is wrong with it.
    pub reason: String,
}

impl SynthError {
    pub(crate) fn new(option: &'static str, reason: impl Into<String>) -> Self {
        Self {
            option,
            reason: reason.into(),
        }
    }
}

impl fmt::Display for SynthError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "synthetic signal option `{}`: {}",
            self.option, self.reason
        )
    }
}

impl std::error::Error for SynthError {}

/// `Ok` when `x` is finite and at least 0.
fn non_negative(option: &'static str, x: f64) -> Result<(), SynthError> {
    if x.is_finite() && x >= 0.0 {
        Ok(())
    } else {
        Err(SynthError::new(
            option,
            format!("{x} must be finite and >= 0"),
        ))
    }
}

impl SynthOptions {
    /// Check every option; [`generate`](super::generate) calls this first.
    pub fn validate(&self) -> Result<(), SynthError> {
        let fs = self.sample_rate_hz;
        if !(fs.is_finite() && fs > 0.0) {
            return Err(SynthError::new("sample_rate_hz", "must be finite and > 0"));
        }
        if !(self.duration_s.is_finite() && self.duration_s > 0.0) {
            return Err(SynthError::new("duration_s", "must be finite and > 0"));
        }
        if self.duration_s * fs > MAX_SAMPLES {
            return Err(SynthError::new(
                "duration_s",
                format!("more than {MAX_SAMPLES} samples at this rate"),
            ));
        }
        self.hr.validate()?;
        let fastest = self.hr.points().iter().map(|p| p.1).fold(0.0, f64::max);
        if 60.0 / fastest * fs < MIN_SAMPLES_PER_BEAT {
            return Err(SynthError::new(
                "sample_rate_hz",
                format!("{fs} Hz gives fewer than {MIN_SAMPLES_PER_BEAT} samples per beat at {fastest} bpm"),
            ));
        }
        non_negative("hr_variability_sd_ms", self.hr_variability_sd_ms)?;
        non_negative("pulse_amplitude", self.pulse_amplitude)?;
        non_negative("wander_amplitude", self.wander_amplitude)?;
        non_negative("wander_hz", self.wander_hz)?;
        non_negative("noise_sd", self.noise_sd)?;
        non_negative("finger_off_noise_sd", self.finger_off_noise_sd)?;
        for (option, x) in [
            ("dc_level", self.dc_level),
            ("finger_off_level", self.finger_off_level),
        ] {
            if !x.is_finite() {
                return Err(SynthError::new(option, "must be finite"));
            }
        }
        for m in &self.motion {
            non_negative("motion", m.start_s)?;
            non_negative("motion", m.duration_s)?;
            non_negative("motion", m.amplitude)?;
        }
        for g in &self.finger_off {
            non_negative("finger_off", g.start_s)?;
            non_negative("finger_off", g.duration_s)?;
        }
        if let Some(r) = self.rails {
            if !(r.low.is_finite() && r.high.is_finite() && r.low < r.high) {
                return Err(SynthError::new("rails", "need finite low < high"));
            }
        }
        Ok(())
    }
}
