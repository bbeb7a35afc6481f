//! The band and step restart stage, at the detector's rate: the band's
//! lower edge (a Butterworth high-pass, order 2), and the judgement of when
//! the pipeline starts afresh: a step or a collapse of the smoothed input
//! against its own recent range ([`super::scale`]), or twice the silence
//! limit without a beat.

use super::band;
#[cfg(test)]
use super::ring::Ring;
use super::ring::Trace;
use super::scale::{Change, Scale};
use super::settings::{Config, PipelineError};
use super::state;
use crate::filter::{Bounded, Delta, Df1, Section};

/// Time over which a step is measured, seconds (the size that makes a
/// step is in [`super::scale`]).
pub const STEP_S: f32 = 0.1;

/// Without a beat for this many silence limits ([`state::SILENCE_S`]:
/// longer than any detector needs to learn its threshold), the pipeline
/// starts afresh, and again each time that passes.
pub const LOST_SILENCES: f32 = 2.0;

/// Why the pipeline starts afresh.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Restart {
    /// A step in the input: the low-pass starts at the new level too.
    Step,
    /// The smoothed input's range collapsed (an artefact ended).
    Collapse,
    /// No beat for [`LOST_SILENCES`] silence limits.
    Lost,
}

/// High-pass, step judgement and restart bookkeeping.
// `repr(C)`: the per-sample fields first (see `Pipeline`).
#[derive(Clone, Debug)]
#[repr(C)]
pub struct BandRestart {
    // Lower band edge at the detector's rate, direct form I. Bounded: its
    // input is the low-pass's output, of conditioned (bounded) samples.
    // Not the `Delta` form it is designed in: at the detector's rates (at
    // most 125 Hz) plain f32 stays within 0.3 % of the smallest pulse of
    // a 12-bit ADC (`the_plain_high_pass_stays_within_rounding`), and on
    // every shared recording no beat moved (`scripts/accuracy --events`),
    // for 8 instructions less per detector sample on the Cortex-M4F.
    highpass: Bounded<Df1<f32>>,
    // Detector samples over which a step is measured (STEP_S).
    step_lag: usize,
    scale: Scale,
    // Detector index after which, without a beat or a restart since, the
    // pipeline starts afresh; and that span.
    lost_at: u64,
    lost_after: u64,
    // Detector index of the last restart, and the detector index the
    // detector's own count starts from.
    restarted_at: u64,
    epoch: u64,
    restarts: u64,
}

impl BandRestart {
    /// The stage for `config` (checked already) at detector rate `fd`, its
    /// high-pass designed here.
    pub fn new(config: &Config, fd: f32) -> Result<Self, PipelineError> {
        let highpass = band::highpass(config.options.band_low_hz, fd)?;
        Ok(Self::with_highpass(fd, highpass))
    }

    /// The stage at detector rate `fd` with the band's `highpass` designed
    /// already ([`band::BandSections`]).
    pub fn with_highpass(fd: f32, highpass: Delta) -> Self {
        // Whole detector samples: `t > lost_at` is then the same test as
        // against the exact span.
        let lost_after = libm::floorf(LOST_SILENCES * state::SILENCE_S * fd) as u64;
        Self {
            // The Delta's own coefficients, exactly, rounded to f32 once.
            highpass: Bounded::new(Df1(highpass.realised().cast::<f32>())),
            step_lag: (libm::roundf(STEP_S * fd) as usize).max(1),
            lost_at: lost_after,
            lost_after,
            scale: Scale::new(fd),
            restarted_at: 0,
            epoch: 0,
            restarts: 0,
        }
    }

    /// Start the high-pass at rest at low-passed level `s` (the first
    /// sample).
    pub fn start(&mut self, s: f32) {
        self.highpass.settle(s);
    }

    /// Judge the newest smoothed value `s` at detector index `t` against
    /// the `smoothed` values before it: whether to start afresh.
    #[inline(always)]
    pub fn judge<const N: usize>(
        &mut self,
        s: f32,
        smoothed: Trace<'_, N>,
        t: u64,
    ) -> Option<Restart> {
        // No fill test: until the ring holds the lag (the first lag
        // samples of the pipeline) the scale has seen fewer than the lag
        // and judges no jump (`Scale::early_step`), so what the unwritten
        // slots give is never used. The lag is below the ring's size.
        let jump = s - smoothed.at_within(self.step_lag - 1);
        let change = self.scale.push(s, jump);
        match change {
            Change::Step => Some(Restart::Step),
            Change::Collapse => Some(Restart::Collapse),
            Change::None => (t > self.lost_at).then_some(Restart::Lost),
        }
    }

    /// The band-passed value of low-passed `s`.
    #[inline(always)]
    pub fn filter(&mut self, s: f32) -> f32 {
        self.highpass.process(s)
    }

    /// Start afresh at detector index `t` from low-passed level `s`: the
    /// high-pass at rest there (its output returned), the scale's history
    /// as `why` leaves it, the detector's count from `t`.
    pub fn restart(&mut self, s: f32, why: Restart, t: u64) -> f32 {
        let rest = self.highpass.settle(s);
        self.epoch = t;
        self.restarted_at = t;
        self.lost_at = t + self.lost_after;
        match why {
            // The history held the step.
            Restart::Step => self.scale.forget(),
            // The history held the artefact, but its last second is the
            // quiet signal after it: kept as the reference, no second
            // after the restart is blind to a step.
            Restart::Collapse => self.scale.keep_quiet(),
            // After a silence the history is the signal's own.
            Restart::Lost => {}
        }
        self.restarts += 1;
        rest
    }

    /// A beat was accepted; `t` is the next detector index.
    pub fn beat(&mut self, t: u64) {
        self.lost_at = t + self.lost_after;
    }

    /// Detector index the detector's own indices count from.
    pub fn epoch(&self) -> u64 {
        self.epoch
    }

    /// Detector samples since the last restart at detector index `now`:
    /// the oldest age of the rings that holds this signal, not what came
    /// before the restart (a step, an artefact).
    pub fn since_restart(&self, now: u64) -> usize {
        (now - self.restarted_at) as usize
    }

    /// Restarts so far.
    pub fn restarts(&self) -> u64 {
        self.restarts
    }

    /// Set the count of restarts (`finish` does not count its own).
    pub fn set_restarts(&mut self, restarts: u64) {
        self.restarts = restarts;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn stage(fd: f32) -> BandRestart {
        BandRestart::new(&Config::new(fd), fd).unwrap()
    }

    /// The plain form against the same section in f64 (common practice:
    /// two implementations checked against each other), at the highest
    /// detector rate and the smallest pulse worth finding: 2 codes on a
    /// 12-bit ADC's full scale, the level drifting by 5 %.
    #[test]
    fn the_plain_high_pass_stays_within_rounding() {
        for fd in [62.5, 75.0, 124.0] {
            let b = stage(fd as f32);
            let exact = Df1::<f64>(b.highpass.section().realised());
            let (mut s32, mut s64) = (b.highpass, exact.steady_state(4095.0));
            s32.settle(4095.0);
            let mut worst = 0.0f64;
            for i in 0..(600.0 * fd) as usize {
                let t = i as f64 / fd;
                let pulse = libm::sin(2.0 * core::f64::consts::PI * 1.2 * t).max(0.0);
                let x = (4095.0 * (1.0 + 0.05 * libm::sin(0.1 * t)) + 2.0 * pulse * pulse) as f32;
                let (y32, y64) = (s32.process(x) as f64, exact.process(&mut s64, x as f64));
                if t > 20.0 {
                    worst = worst.max((y32 - y64).abs());
                }
            }
            assert!(worst < 0.01 * 2.0, "{fd} Hz: {worst}");
        }
    }

    #[test]
    fn a_jump_restarts_and_a_pulse_does_not() {
        let fd = 62.5;
        let mut b = stage(fd);
        let mut ring = Ring::<256>::new();
        let mut why = None;
        for t in 0..400u64 {
            let s = libm::sinf(t as f32 * 0.12) + if t >= 300 { 50.0 } else { 0.0 };
            let j = b.judge(s, ring.trace(), t);
            if j.is_some() && why.is_none() {
                why = j.map(|w| (w, t));
            }
            ring.push(s);
        }
        assert_eq!(why, Some((Restart::Step, 300)));
    }

    #[test]
    fn silence_without_beats_restarts_and_a_beat_puts_it_off() {
        let fd = 62.5;
        let mut b = stage(fd);
        let ring = Ring::<256>::new();
        let limit = libm::floorf(LOST_SILENCES * state::SILENCE_S * fd) as u64;
        // Flat: the scale sees nothing; only the silence counts.
        assert_eq!(b.judge(0.0, ring.trace(), limit), None);
        b.beat(10);
        assert_eq!(b.judge(0.0, ring.trace(), limit + 1), None);
        assert_eq!(b.judge(0.0, ring.trace(), limit + 11), Some(Restart::Lost));
        assert_eq!(b.restart(0.0, Restart::Lost, limit + 11), 0.0);
        assert_eq!((b.epoch(), b.restarts()), (limit + 11, 1));
        assert_eq!(b.since_restart(limit + 20), 9);
    }
}
