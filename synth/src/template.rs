//! The shape of one pulse: two Gaussians over the beat's phase, after Tang
//! Q., Chen Z., Ward R., Elgendi M. 2020, "Synthetic photoplethysmogram
//! generation using two Gaussian functions", Sci Rep 10:13883.
//!
//! A beat runs from one onset to the next; its phase θ goes from −π to π
//! and the raw shape is
//! `a1·exp(−(θ−θ1)²/(2·b1²)) + a2·exp(−(θ−θ2)²/(2·b2²))`:
//! the first Gaussian is the systolic wave, the second the diastolic one.
//!
//! # Joining beats
//! The raw shape does not come back to its starting value at θ = π (for
//! the "excellent" template it is 0.0361 at −π and 0.0151 at π), so beats
//! laid end to end would step at every onset. [`PulseShape`] subtracts the
//! straight line between the two end values, which makes every beat start
//! and end at exactly 0 (consecutive beats join continuously), and then
//! scales the result so its maximum is 1: a pulse amplitude option is then
//! the onset-to-peak height. The line moves the maximum slightly: for the
//! "excellent" template from 0.2608 to 0.2611 of the interval after onset.

use super::SynthError;
use std::f64::consts::PI;

/// One Gaussian wave of a pulse template: height, centre phase (rad) and
/// width (rad).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Wave {
    /// Height `a`.
    pub a: f64,
    /// Centre phase `θ` in radians, within the beat's [−π, π).
    pub theta: f64,
    /// Width `b` in radians (> 0).
    pub b: f64,
}

impl Wave {
    fn at(&self, theta: f64) -> f64 {
        let u = (theta - self.theta) / self.b;
        self.a * libm::exp(-0.5 * u * u)
    }
}

/// A two-Gaussian pulse template. The three presets are Table 1 of Tang et
/// al. 2020 (Sci Rep 10:13883), fitted to recorded pulses of the quality
/// their names say; any other values may be used.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PulseTemplate {
    /// The systolic wave.
    pub systolic: Wave,
    /// The diastolic wave.
    pub diastolic: Wave,
}

impl PulseTemplate {
    /// "Excellent" quality pulse: a sharp systolic wave, a small late
    /// diastolic one (Tang et al. 2020, Table 1).
    pub const EXCELLENT: Self = Self::new(1.0000, -1.5161, 0.6303, 0.1999, 0.8186, 1.0225);
    /// "Acceptable" quality pulse: broader, with a large diastolic wave
    /// merging into the systolic one (Tang et al. 2020, Table 1).
    pub const ACCEPTABLE: Self = Self::new(0.7303, -1.5510, 0.7283, 0.5291, -0.2553, 1.2271);
    /// "Unfit" pulse: wide, rounded and poorly shaped (Tang et al. 2020,
    /// Table 1).
    pub const UNFIT: Self = Self::new(0.9288, -1.0241, 1.2055, 0.4916, 2.2684, 1.2055);

    /// A template from `(a1, θ1, b1)` (systolic) and `(a2, θ2, b2)`
    /// (diastolic).
    pub const fn new(a1: f64, theta1: f64, b1: f64, a2: f64, theta2: f64, b2: f64) -> Self {
        Self {
            systolic: Wave {
                a: a1,
                theta: theta1,
                b: b1,
            },
            diastolic: Wave {
                a: a2,
                theta: theta2,
                b: b2,
            },
        }
    }

    /// The raw template at phase `theta` (rad), before joining and scaling.
    pub fn raw(&self, theta: f64) -> f64 {
        self.systolic.at(theta) + self.diastolic.at(theta)
    }

    /// Where the raw template peaks, as a fraction of the beat after onset.
    pub fn raw_peak_fraction(&self) -> f64 {
        argmax_fraction(|f| self.raw(phase(f)))
    }
}

/// The phase at fraction `f` ∈ [0, 1] of a beat.
fn phase(f: f64) -> f64 {
    -PI + 2.0 * PI * f
}

/// The fraction in [0, 1] where `g` is largest: a grid of 4096 steps, then
/// golden-section search on the two steps around the best grid point.
/// Enough for smooth shapes with one maximum per grid step; accurate to
/// about 1e-9 of a beat.
fn argmax_fraction(g: impl Fn(f64) -> f64) -> f64 {
    const STEPS: usize = 4096;
    let best = (0..=STEPS)
        .map(|k| k as f64 / STEPS as f64)
        .max_by(|&x, &y| g(x).total_cmp(&g(y)))
        .unwrap_or(0.0);
    let h = 1.0 / STEPS as f64;
    let (mut lo, mut hi) = ((best - h).max(0.0), (best + h).min(1.0));
    let r = (libm::sqrt(5.0) - 1.0) / 2.0;
    while hi - lo > 1e-10 {
        let (m1, m2) = (hi - r * (hi - lo), lo + r * (hi - lo));
        if g(m1) < g(m2) {
            lo = m1;
        } else {
            hi = m2;
        }
    }
    (lo + hi) / 2.0
}

/// A template made ready to lay beat after beat: the line between its end
/// values removed and scaled to a peak of 1 (see the module notes).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PulseShape {
    template: PulseTemplate,
    start: f64,
    end: f64,
    scale: f64,
    peak_fraction: f64,
}

impl PulseShape {
    /// Prepare `template`. Refuses non-finite values, widths that are not
    /// positive, and templates that do not rise above their end line.
    pub fn new(template: PulseTemplate) -> Result<Self, SynthError> {
        for w in [template.systolic, template.diastolic] {
            if !(w.a.is_finite() && w.theta.is_finite() && w.b.is_finite() && w.b > 0.0) {
                return Err(SynthError::new(
                    "template",
                    "every height, centre and width must be finite and every width > 0",
                ));
            }
        }
        let mut shape = Self {
            template,
            start: template.raw(-PI),
            end: template.raw(PI),
            scale: 1.0,
            peak_fraction: 0.0,
        };
        shape.peak_fraction = argmax_fraction(|f| shape.value(f));
        let peak = shape.value(shape.peak_fraction);
        // Written so that a NaN peak is refused too.
        if peak.is_nan() || peak <= 1e-9 {
            return Err(SynthError::new(
                "template",
                "the pulse never rises above the line between its end values",
            ));
        }
        shape.scale = 1.0 / peak;
        Ok(shape)
    }

    /// The template it was made from.
    pub fn template(&self) -> PulseTemplate {
        self.template
    }

    /// The joined, scaled shape at fraction `f` ∈ [0, 1] of the beat after
    /// onset: 0 at both ends, 1 at [`peak_fraction`](Self::peak_fraction).
    pub fn value(&self, f: f64) -> f64 {
        let line = self.start + (self.end - self.start) * f;
        (self.template.raw(phase(f)) - line) * self.scale
    }

    /// Where the systolic peak falls, as a fraction of the interval after
    /// onset (found numerically, not assumed from θ1).
    pub fn peak_fraction(&self) -> f64 {
        self.peak_fraction
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn excellent_peak_falls_about_a_quarter_beat_after_onset() {
        // Computed with numpy: argmax of the template on a 2 000 001-point
        // grid over [−π, π] gives 0.260839 (raw) and 0.261055 (after
        // removing the end line); (θ1 + π)/(2π) = 0.2587 would be wrong.
        let raw = PulseTemplate::EXCELLENT.raw_peak_fraction();
        assert!((raw - 0.260839).abs() < 2e-6, "raw peak fraction {raw}");
        let joined = PulseShape::new(PulseTemplate::EXCELLENT)
            .unwrap()
            .peak_fraction();
        assert!((joined - 0.261055).abs() < 2e-6, "joined {joined}");
    }

    #[test]
    fn other_presets_peak_where_numpy_says() {
        // Computed with numpy on the same grid (raw, joined).
        for (t, raw, joined) in [
            (PulseTemplate::ACCEPTABLE, 0.284140, 0.285912),
            (PulseTemplate::UNFIT, 0.344290, 0.336406),
        ] {
            assert!((t.raw_peak_fraction() - raw).abs() < 2e-6);
            let s = PulseShape::new(t).unwrap();
            assert!((s.peak_fraction() - joined).abs() < 2e-6);
        }
    }

    #[test]
    fn joined_shape_starts_and_ends_at_zero_and_peaks_at_one() {
        for t in [
            PulseTemplate::EXCELLENT,
            PulseTemplate::ACCEPTABLE,
            PulseTemplate::UNFIT,
        ] {
            // The raw template does not close on itself...
            assert!((t.raw(-PI) - t.raw(PI)).abs() > 0.01);
            // ...the joined one does.
            let s = PulseShape::new(t).unwrap();
            assert!(s.value(0.0).abs() < 1e-15 && s.value(1.0).abs() < 1e-15);
            assert!((s.value(s.peak_fraction()) - 1.0).abs() < 1e-15);
            for k in 0..=1000 {
                assert!(s.value(k as f64 / 1000.0) <= 1.0 + 1e-12);
            }
        }
    }

    #[test]
    fn bad_templates_are_refused() {
        let mut t = PulseTemplate::EXCELLENT;
        t.diastolic.b = 0.0;
        assert!(PulseShape::new(t).is_err());
        t = PulseTemplate::EXCELLENT;
        t.systolic.a = f64::NAN;
        assert!(PulseShape::new(t).is_err());
        // Flat: nothing rises above the end line.
        let flat = PulseTemplate::new(0.0, 0.0, 1.0, 0.0, 0.0, 1.0);
        assert!(PulseShape::new(flat).is_err());
    }
}
