//! The difference form without its compensated last addition.

use super::{Biquad, Delta, DeltaState, Section};
use crate::DesignError;

/// A [`Delta`] section whose last addition `y[n−1] + d[n]` is a plain one:
/// three additions and a load and a store fewer per sample, for a section
/// whose rounding matters less than its cost. The pipeline's 8 Hz
/// low-pass runs at the input rate on this form: measured on every shared
/// recording (`scripts/accuracy --events`), no beat moved by a sample and
/// no interval by more than 0.06 ms against the compensated form (33 338
/// beats), for 3 instructions less per input sample on the Cortex-M4F at
/// 125 Hz. The 0.5 Hz
/// high-pass, whose poles sit much nearer z = 1, keeps [`Delta`].
/// `DeltaState::carry` stays 0.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PlainDelta(pub Delta);

impl Section for PlainDelta {
    type Sample = f32;
    type State = DeltaState;

    #[inline]
    fn process(&self, s: &mut DeltaState, x: f32) -> f32 {
        let c = &self.0;
        let u = x - s.x1;
        let u1 = s.x1 - s.x2;
        let num = c.c0 * u + c.c1 * u1 + c.c2 * s.x2;
        // The same order of operations as `Delta::process`, the carry left
        // out.
        let d = (s.d1 - c.g2 * s.d1) + (num - c.g1 * s.y1);
        let y = s.y1 + d;
        *s = DeltaState {
            x1: x,
            x2: s.x1,
            y1: y,
            d1: d,
            carry: 0.0,
        };
        y
    }

    fn from_biquad(c: &Biquad<f64>) -> Result<Self, DesignError> {
        Delta::from_biquad(c).map(PlainDelta)
    }

    fn realised(&self) -> Biquad<f64> {
        self.0.realised()
    }

    fn identity() -> Self {
        PlainDelta(Delta::identity())
    }

    fn steady_state(&self, x: f32) -> DeltaState {
        self.0.steady_state(x)
    }

    fn steady_output(&self, x: f32) -> f32 {
        self.0.steady_output(x)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::design::butterworth_lowpass;
    use crate::filter::Cascade;

    /// Against the compensated form on a pulse-like signal with a large DC
    /// level (a finger on a 12-bit ADC): within 1e-5 of the level
    /// (common practice: the two forms of one section checked against
    /// each other).
    #[test]
    fn it_stays_within_rounding_of_the_compensated_form() {
        let d: Cascade<Delta, 1> = butterworth_lowpass(2, 8.0, 250.0)
            .unwrap()
            .cascade()
            .unwrap();
        let (full, plain) = (d.sections()[0], PlainDelta(d.sections()[0]));
        let (mut a, mut b) = (full.steady_state(2000.0), plain.steady_state(2000.0));
        let mut worst = 0.0f32;
        for n in 0..250 * 60 {
            let t = n as f32 / 250.0;
            let x = 2000.0 + 20.0 * libm::sinf(2.0 * core::f32::consts::PI * 1.2 * t);
            let (ya, yb) = (full.process(&mut a, x), plain.process(&mut b, x));
            worst = worst.max((ya - yb).abs());
        }
        assert!(worst < 2000.0 * 1e-5, "{worst}");
        assert_eq!(b.carry, 0.0);
    }
}
