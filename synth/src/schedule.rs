//! Heart rate over time as a piecewise-linear schedule, so one recording
//! can rest, speed up under effort and recover.

use super::SynthError;

/// Lowest heart rate a schedule may ask for, bpm; below any adult at rest,
/// so detectors can be tried just outside their 30 bpm floor.
pub const MIN_BPM: f64 = 20.0;
/// Highest heart rate a schedule may ask for, bpm; above the 220 bpm that
/// detectors are built for.
pub const MAX_BPM: f64 = 300.0;

/// Heart rate (bpm) against time (s): straight lines between the given
/// points, constant before the first point and after the last.
///
/// ```
/// use plethwire_synth::HrSchedule;
/// // Rest at 65 bpm for a minute, climb to 140 bpm over the next one, hold,
/// // then recover to 80 bpm.
/// let hr = HrSchedule::from_points(&[(60.0, 65.0), (120.0, 140.0), (180.0, 140.0), (240.0, 80.0)]);
/// assert_eq!(hr.bpm_at(30.0), 65.0);
/// assert_eq!(hr.bpm_at(90.0), 102.5);
/// assert_eq!(hr.bpm_at(600.0), 80.0);
/// ```
#[derive(Clone, Debug, PartialEq)]
pub struct HrSchedule {
    /// `(time_s, bpm)`, times strictly increasing.
    points: Vec<(f64, f64)>,
}

impl Default for HrSchedule {
    /// A constant 72 bpm (a resting adult, common practice).
    fn default() -> Self {
        Self::constant(72.0)
    }
}

impl HrSchedule {
    /// The same rate all the time.
    pub fn constant(bpm: f64) -> Self {
        Self {
            points: vec![(0.0, bpm)],
        }
    }

    /// A schedule through `(time_s, bpm)` points; checked when the signal
    /// is generated (see [`validate`](Self::validate)).
    pub fn from_points(points: &[(f64, f64)]) -> Self {
        Self {
            points: points.to_vec(),
        }
    }

    /// The `(time_s, bpm)` points.
    pub fn points(&self) -> &[(f64, f64)] {
        &self.points
    }

    /// At least one point, finite times in strictly increasing order, every
    /// rate within [`MIN_BPM`, `MAX_BPM`].
    pub fn validate(&self) -> Result<(), SynthError> {
        let bad = |why: String| Err(SynthError::new("hr", why));
        if self.points.is_empty() {
            return bad("the heart-rate schedule has no points".into());
        }
        for (i, &(t, bpm)) in self.points.iter().enumerate() {
            if !t.is_finite() {
                return bad(format!("point {i} has a non-finite time"));
            }
            if !(MIN_BPM..=MAX_BPM).contains(&bpm) {
                return bad(format!(
                    "point {i} asks for {bpm} bpm; rates must be within {MIN_BPM}..{MAX_BPM}"
                ));
            }
            if i > 0 && t <= self.points[i - 1].0 {
                return bad(format!(
                    "point {i}'s time {t} s does not come after the one before"
                ));
            }
        }
        Ok(())
    }

    /// The rate at time `t_s`, bpm.
    pub fn bpm_at(&self, t_s: f64) -> f64 {
        let Some(&(t0, hr0)) = self.points.first() else {
            return f64::NAN;
        };
        if t_s <= t0 {
            return hr0;
        }
        for w in self.points.windows(2) {
            let ((ta, ha), (tb, hb)) = (w[0], w[1]);
            if t_s <= tb {
                return ha + (hb - ha) * (t_s - ta) / (tb - ta);
            }
        }
        self.points[self.points.len() - 1].1
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn interpolates_between_points_and_holds_outside() {
        let s = HrSchedule::from_points(&[(10.0, 60.0), (20.0, 120.0), (30.0, 90.0)]);
        s.validate().unwrap();
        assert_eq!(s.bpm_at(-5.0), 60.0);
        assert_eq!(s.bpm_at(10.0), 60.0);
        assert_eq!(s.bpm_at(15.0), 90.0);
        assert_eq!(s.bpm_at(20.0), 120.0);
        assert_eq!(s.bpm_at(27.5), 97.5);
        assert_eq!(s.bpm_at(1e6), 90.0);
        assert_eq!(HrSchedule::constant(55.0).bpm_at(123.0), 55.0);
    }

    #[test]
    fn bad_schedules_are_refused() {
        assert!(HrSchedule::from_points(&[]).validate().is_err());
        assert!(HrSchedule::from_points(&[(0.0, 60.0), (0.0, 70.0)])
            .validate()
            .is_err());
        assert!(HrSchedule::from_points(&[(5.0, 60.0), (1.0, 70.0)])
            .validate()
            .is_err());
        assert!(HrSchedule::constant(10.0).validate().is_err());
        assert!(HrSchedule::constant(f64::NAN).validate().is_err());
        assert!(HrSchedule::from_points(&[(f64::NAN, 60.0)])
            .validate()
            .is_err());
    }
}
