//! Per-beat quality: how well a pulse's shape matches the recent pulses.
//!
//! In the manner of C. Orphanidou et al., "Signal-quality indices for the
//! electrocardiogram and photoplethysmogram: derivation and applications to
//! wireless monitoring", IEEE J. Biomed. Health Inform. 19(3):832–838, 2015:
//! each pulse is compared with an average template by correlation, and
//! pulses below 0.86 (the paper's threshold for PPG, from memory) are not
//! trusted. The paper averages the beats of a 10 s window; streaming, the
//! template here is a running average of trusted pulses, and each pulse is
//! a fixed number of points resampled from a window around its peak whose
//! width follows the recent interval.

use crate::math::max_f32;

/// Points per resampled pulse. A pulse spans some 40 to 80 detector
/// samples, so 16 still follow its rise, peak and fall; 32 cost about
/// 1 300 instructions more per beat on a Cortex-M4F and gave the same
/// figures on every shared dataset (docs/performance.md).
pub const POINTS: usize = 16;
/// Correlation below which a pulse is not trusted.
pub const MIN_CORRELATION: f32 = 0.86;
/// Weight of a new trusted pulse in the running template.
const TEMPLATE_WEIGHT: f32 = 0.2;
/// Pulses that build the template before its verdicts count.
const WARM_UP: u32 = 3;

/// A pulse resampled to [`POINTS`] values, zero mean and unit norm.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Shape(pub [f32; POINTS]);

impl Shape {
    /// Resample `get(age)` between ages `from` (older) and `to` (newer),
    /// linearly interpolated, then normalise. `None` for a flat pulse.
    pub fn capture(get: impl Fn(usize) -> f32, from: f32, to: f32) -> Option<Self> {
        let mut v = [0.0f32; POINTS];
        let step = (from - to) / (POINTS - 1) as f32;
        for (i, slot) in v.iter_mut().enumerate() {
            let age = from - step * i as f32;
            // For ages ≥ 0 truncation is floor (and a library call cheaper
            // than none at all on a Cortex-M); below 0, clamp to the newest.
            let whole = if age > 0.0 { age as usize } else { 0 };
            let frac = max_f32(age - whole as f32, 0.0);
            let a0 = whole;
            // Older sample at a0 + 1, newer at a0: interpolate in time.
            let older = get(a0 + 1);
            let newer = get(a0);
            *slot = newer + (older - newer) * frac;
        }
        Self::normalised(v)
    }

    /// Zero mean, unit norm; `None` when flat.
    pub fn normalised(mut v: [f32; POINTS]) -> Option<Self> {
        normalise(&mut v).then_some(Self(v))
    }

    /// Pearson correlation with another normalised shape.
    pub fn correlation(&self, other: &Shape) -> f32 {
        self.0.iter().zip(other.0.iter()).map(|(a, b)| a * b).sum()
    }
}

/// Make `v` zero mean and unit norm, in place; `false` and `v` untouched
/// when it is flat.
fn normalise(v: &mut [f32; POINTS]) -> bool {
    let mean = v.iter().sum::<f32>() / POINTS as f32;
    let mut norm = 0.0;
    for x in v.iter() {
        let d = *x - mean;
        norm += d * d;
    }
    let norm = libm::sqrtf(norm);
    if norm.is_nan() || norm <= 1e-20 {
        return false;
    }
    for x in v.iter_mut() {
        *x = (*x - mean) / norm;
    }
    true
}

/// The running template and its verdicts.
#[derive(Clone, Copy, Debug)]
pub struct Template {
    shape: Option<Shape>,
    accepted: u32,
}

impl Template {
    /// No template yet.
    pub const fn new() -> Self {
        Self {
            shape: None,
            accepted: 0,
        }
    }

    /// Correlation of `pulse` with the template (1.0 while the template is
    /// still being built), and whether it counts as low.
    pub fn judge(&self, pulse: &Shape) -> (f32, bool) {
        match &self.shape {
            Some(t) if self.accepted >= WARM_UP => {
                let r = pulse.correlation(t).clamp(0.0, 1.0);
                (r, r < MIN_CORRELATION)
            }
            Some(t) => (pulse.correlation(t).clamp(0.0, 1.0), false),
            None => (1.0, false),
        }
    }

    /// Blend a trusted pulse into the template.
    // Kept out of line as it always was: inlined, it grows the per-beat
    // path the emulated board counts (see docs/performance.md).
    #[inline(never)]
    pub fn learn(&mut self, pulse: &Shape) {
        if let Some(t) = &mut self.shape {
            let w = if self.accepted < WARM_UP {
                1.0 / (self.accepted + 1) as f32
            } else {
                TEMPLATE_WEIGHT
            };
            for (a, b) in t.0.iter_mut().zip(pulse.0.iter()) {
                *a += w * (b - *a);
            }
            // Renormalise so correlations stay Pearson correlations (a
            // flat blend stays as it is). In place: a copy of the template
            // each way cost as much as the blend.
            normalise(&mut t.0);
        } else {
            self.shape = Some(*pulse);
        }
        self.accepted += 1;
    }

    /// Forget the template (after the signal was lost).
    pub fn reset(&mut self) {
        *self = Self::new();
    }
}

impl Default for Template {
    fn default() -> Self {
        Self::new()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn identical_pulses_correlate_fully_and_inverted_ones_not_at_all() {
        let wave = |age: usize| libm::sinf(age as f32 * 0.2);
        let a = Shape::capture(wave, 30.0, 0.0).unwrap();
        let b = Shape::capture(wave, 30.0, 0.0).unwrap();
        let c = Shape::capture(|age| -wave(age), 30.0, 0.0).unwrap();
        assert!((a.correlation(&b) - 1.0).abs() < 1e-5);
        assert!((a.correlation(&c) + 1.0).abs() < 1e-5);
        let mut t = Template::new();
        for _ in 0..5 {
            t.learn(&a);
        }
        assert!(!t.judge(&b).1);
        assert!(t.judge(&c).1 && t.judge(&c).0 == 0.0);
    }

    #[test]
    fn a_flat_pulse_has_no_shape() {
        assert!(Shape::capture(|_| 3.0, 20.0, 0.0).is_none());
    }
}
