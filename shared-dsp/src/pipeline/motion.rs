//! An accelerometer as a motion reference: how strongly the sensor moves,
//! the period of that motion, and whether a beat can be told apart from it.
//!
//! On a wrist, walking and running swing the arm once a stride and jolt it
//! once a step, and both leave pulses in the PPG that a beat detector takes
//! for heartbeats (R. W. C. G. R. Wijshoff, M. Mischi, R. M. Aarts,
//! "Reduction of periodic motion artifacts in photoplethysmography", IEEE
//! Trans. Biomed. Eng. 64(1):196–207, 2017). Frequency-domain trackers drop
//! the PPG's spectral peaks that coincide with the acceleration's (Z. Zhang,
//! Z. Pi, B. Liu, "TROIKA: A general framework for heart rate monitoring
//! using wrist-type photoplethysmographic signals during intensive physical
//! exercise", IEEE Trans. Biomed. Eng. 62(2):522–531, 2015); here, in the
//! time domain and one beat at a time, in that manner: a beat is not
//! trusted while the sensor moves strongly when its interval lies at the
//! motion's period (or at its double, or close to its half: the steps), or
//! when the intervals before it disagree (during exercise the heart's own
//! beat-to-beat changes are small, common practice; a scatter of intervals
//! is missed and extra detections).
//!
//! Work per accelerometer sample: a first-order high-pass per axis
//! (gravity and posture out) and a block average down to about
//! [`TRACK_RATE_HZ`]; per tracker sample, an exponentially weighted
//! autocorrelation of the three axes summed, at every lag up to
//! [`MAX_PERIOD_S`] (41 lags at 25 Hz). The period is read from it only
//! when a beat is judged. No trigonometry after construction.
//!
//! The pipeline judges each beat against a [`MotionReference`] it is
//! handed: [`NoMotion`] in [`super::Pipeline::push`], which judges nothing
//! and is compiled away (no memory, no judgement: a board without an
//! accelerometer runs what it ran before, within 0.1 instruction per
//! sample on the emulated board), or the
//! [`MotionTracker`] of a [`super::MotionPipeline`].

use super::ring::Ring;
use super::PipelineError;
use crate::math::max_f32;

/// The tracker runs at the accelerometer's rate divided by
/// `ceil(rate / TRACK_RATE_HZ)`, so at 12.5 to 25 Hz: arm swing and steps
/// lie below 5 Hz.
pub const TRACK_RATE_HZ: f32 = 25.0;
/// Lowest accelerometer rate accepted, Hz.
pub const MIN_MOTION_RATE_HZ: f32 = 20.0;
/// Highest accelerometer rate accepted, Hz.
pub const MAX_MOTION_RATE_HZ: f32 = 1000.0;
/// Corner of the high-pass that takes gravity and posture out, Hz (a slow
/// walk swings the arm at about 0.8 Hz, common practice).
pub const HIGHPASS_HZ: f32 = 0.5;
/// Time constant of the motion's power and autocorrelation, seconds: a few
/// strides.
pub const AVERAGE_S: f32 = 3.0;
/// Shortest motion period looked for, seconds (steps of a sprint).
pub const MIN_PERIOD_S: f32 = 0.25;
/// Longest motion period looked for, seconds (a slow walk's stride).
pub const MAX_PERIOD_S: f32 = 1.6;
/// The period is the shortest lag whose autocorrelation peak reaches this
/// share of the highest: the stride rather than two strides.
pub const PEAK_SHARE: f32 = 0.8;
/// Motion of at least this RMS acceleration, g (gravity out), is strong.
/// Measured on the shared exercise recordings (wrist, treadmill): a median
/// 0.06-0.23 g over the first 30 s (standing), 0.7-1.5 g running.
pub const STRONG_G: f32 = 0.2;
/// A beat interval within this share of the motion's period, or of twice
/// the period, is locked to the motion.
pub const LOCK_TOLERANCE: f32 = 0.10;
/// A beat interval within this share of half the motion's period (a
/// step) is locked to the motion. Narrow: a runner's heart often beats
/// near the step rate, and only an interval at it cannot be told apart.
pub const STEP_TOLERANCE: f32 = 0.02;
/// Intervals judged for steadiness, the beat's own included.
pub const STEADY_INTERVALS: usize = 3;
/// Under strong motion, the longest of the last [`STEADY_INTERVALS`]
/// intervals may be at most this many times the shortest.
pub const STEADY_SPREAD: f32 = 1.15;

/// Lags held: [`MAX_PERIOD_S`] at [`TRACK_RATE_HZ`], and lag 0.
const LAGS: usize = 41;
/// Tracker samples kept for the products (a power of two above `LAGS`).
const HISTORY: usize = 64;

/// What the motion says about one beat.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Verdict {
    /// No motion reference, or the motion is weak: the beat stands as the
    /// PPG alone judged it.
    Still,
    /// Strong motion, but the beat's interval is steady and apart from the
    /// motion's period.
    Apart,
    /// Strong motion and the beat's interval lies at the motion's period
    /// (or its double, or its half).
    Locked,
    /// Strong motion and the last intervals disagree (or there are not
    /// yet [`STEADY_INTERVALS`] of them).
    Unsteady,
}

impl Verdict {
    /// Should the beat be flagged?
    pub fn flags(self) -> bool {
        matches!(self, Self::Locked | Self::Unsteady)
    }
}

/// What the pipeline asks of a motion reference.
pub trait MotionReference {
    /// Can this reference flag beats at all? (`false`: the pipeline leaves
    /// the judgement out entirely.)
    const JUDGES: bool;
    /// The verdict on a beat with interval `ibi_ms` (if it has one), where
    /// `spread` is the longest of the last [`STEADY_INTERVALS`] intervals
    /// over the shortest (`None` when fewer are held).
    fn judge(&self, ibi_ms: Option<f32>, spread: Option<f32>) -> Verdict;
}

/// No accelerometer: every beat stands as the PPG alone judged it.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct NoMotion;

impl MotionReference for NoMotion {
    const JUDGES: bool = false;

    fn judge(&self, _: Option<f32>, _: Option<f32>) -> Verdict {
        Verdict::Still
    }
}

/// The accelerometer's motion: strength and period.
#[derive(Clone, Debug)]
pub struct MotionTracker {
    decim: u32,
    phase: u32,
    rate_hz: f32,
    // First-order high-pass y = gain·(x − x₋₁) + pole·y₋₁ per axis.
    pole: f32,
    gain: f32,
    last_in: [f32; 3],
    last_out: [f32; 3],
    started: bool,
    block: [f32; 3],
    // Forgetting factor per tracker sample.
    forget: f32,
    min_lag: usize,
    max_lag: usize,
    // Exponentially weighted Σ v[n]·v[n−lag] over the three axes.
    products: [f32; LAGS],
    history: Ring<HISTORY, [f32; 3]>,
}

impl MotionTracker {
    /// A tracker for three-axis samples in g at `rate_hz` (20 to 1000 Hz).
    pub fn new(rate_hz: f32) -> Result<Self, PipelineError> {
        if !(MIN_MOTION_RATE_HZ..=MAX_MOTION_RATE_HZ).contains(&rate_hz) {
            return Err(PipelineError::MotionRate);
        }
        let decim = max_f32(libm::ceilf(rate_hz / TRACK_RATE_HZ), 1.0) as u32;
        let fm = rate_hz / decim as f32;
        // Bilinear transform of s / (s + ωc), pre-warped.
        let w = libm::tanf(core::f32::consts::PI * HIGHPASS_HZ / rate_hz);
        let pole = (1.0 - w) / (1.0 + w);
        let max_lag = (libm::ceilf(MAX_PERIOD_S * fm) as usize).min(LAGS - 1);
        Ok(Self {
            decim,
            phase: 0,
            rate_hz,
            pole,
            gain: 1.0 / (1.0 + w),
            last_in: [0.0; 3],
            last_out: [0.0; 3],
            started: false,
            block: [0.0; 3],
            forget: libm::expf(-1.0 / (AVERAGE_S * fm)),
            min_lag: (libm::floorf(MIN_PERIOD_S * fm) as usize).max(2),
            max_lag,
            products: [0.0; LAGS],
            history: Ring::new(),
        })
    }

    /// The tracker's own rate, Hz.
    pub fn track_rate_hz(&self) -> f32 {
        self.rate_hz / self.decim as f32
    }

    /// Feed one accelerometer sample, three axes in g. A non-finite axis
    /// holds its last value.
    pub fn push(&mut self, a: [f32; 3]) {
        let mut x = a;
        for (v, last) in x.iter_mut().zip(self.last_in.iter()) {
            if !v.is_finite() {
                *v = if self.started { *last } else { 0.0 };
            }
        }
        if !self.started {
            // Start as if this sample had always been there: no transient.
            self.last_in = x;
            self.started = true;
        }
        for (((&xi, last_in), last_out), sum) in x
            .iter()
            .zip(self.last_in.iter_mut())
            .zip(self.last_out.iter_mut())
            .zip(self.block.iter_mut())
        {
            let y = self.gain * (xi - *last_in) + self.pole * *last_out;
            *last_in = xi;
            *last_out = y;
            *sum += y;
        }
        self.phase += 1;
        if self.phase < self.decim {
            return;
        }
        self.phase = 0;
        let scale = 1.0 / self.decim as f32;
        let v = self.block.map(|s| s * scale);
        self.block = [0.0; 3];
        self.history.push(v);
        let f = self.forget;
        for (lag, p) in self.products[..=self.max_lag].iter_mut().enumerate() {
            let old = self.history.at(lag);
            *p = f * *p + v[0] * old[0] + v[1] * old[1] + v[2] * old[2];
        }
    }

    /// RMS of the high-passed acceleration over about [`AVERAGE_S`], g.
    pub fn strength_g(&self) -> f32 {
        libm::sqrtf(max_f32(self.products[0], 0.0) * (1.0 - self.forget))
    }

    /// The motion's period, ms: the shortest lag in [`MIN_PERIOD_S`] to
    /// [`MAX_PERIOD_S`] with a peak of the normalised autocorrelation of at
    /// least [`PEAK_SHARE`] of the highest (placed between lags by a
    /// parabola), and how alike the motion is one period apart (the
    /// autocorrelation there, at most 1). `None` until the tracker has seen
    /// [`MAX_PERIOD_S`] of motion, when it is still, or when nothing
    /// repeats.
    pub fn period(&self) -> Option<(f32, f32)> {
        let energy = self.products[0];
        if self.history.len() <= self.max_lag || energy.is_nan() || energy <= 0.0 {
            return None;
        }
        let inverse = 1.0 / energy;
        let rho = |lag: usize| self.products[lag] * inverse;
        let mut highest = f32::NEG_INFINITY;
        for lag in self.min_lag..=self.max_lag {
            highest = max_f32(highest, rho(lag));
        }
        if highest.is_nan() || highest <= 0.0 {
            return None;
        }
        for lag in self.min_lag + 1..self.max_lag {
            let (before, at, after) = (rho(lag - 1), rho(lag), rho(lag + 1));
            if at >= before && at >= after && at >= PEAK_SHARE * highest {
                let curvature = before - 2.0 * at + after;
                let shift = if curvature < 0.0 {
                    0.5 * (before - after) / curvature
                } else {
                    0.0
                };
                let ms = (lag as f32 + shift) * 1000.0 / self.track_rate_hz();
                return Some((ms, at));
            }
        }
        None
    }

    /// The verdict on a beat with interval `ibi_ms` (if it has one), where
    /// `spread` is the longest of the last [`STEADY_INTERVALS`] intervals
    /// over the shortest (`None` when fewer are held).
    pub fn judge(&self, ibi_ms: Option<f32>, spread: Option<f32>) -> Verdict {
        // A NaN strength (never, with finite input) counts as weak.
        let strong = self.strength_g() >= STRONG_G;
        if !strong {
            return Verdict::Still;
        }
        let Some(ibi) = ibi_ms else {
            return Verdict::Unsteady;
        };
        if let Some((period, _)) = self.period() {
            let near = |target: f32, tolerance: f32| (ibi - target).abs() < tolerance * target;
            if near(period, LOCK_TOLERANCE)
                || near(2.0 * period, LOCK_TOLERANCE)
                || near(0.5 * period, STEP_TOLERANCE)
            {
                return Verdict::Locked;
            }
        }
        match spread {
            Some(s) if s <= STEADY_SPREAD => Verdict::Apart,
            _ => Verdict::Unsteady,
        }
    }
}

impl MotionReference for MotionTracker {
    const JUDGES: bool = true;

    fn judge(&self, ibi_ms: Option<f32>, spread: Option<f32>) -> Verdict {
        MotionTracker::judge(self, ibi_ms, spread)
    }
}

#[cfg(test)]
mod tests;
