//! The smoothed input's recent scale, learnt from the signal alone, for
//! telling a step or the end of an artefact from a pulse.
//!
//! The signal is cut into blocks of [`BLOCK_S`]; each block keeps its
//! highest and lowest value. A *step* is a jump within a short lag larger
//! than [`STEP_FACTOR`] times the range of the blocks before it; a
//! *collapse* (an artefact ends, a tap or a burst of noise stops) is a last
//! second whose range is below 1/[`COLLAPSE_FACTOR`] of the range of the
//! (up to) two seconds before it. Both make the pipeline restart its
//! filters from the present level. After a step the history is forgotten,
//! after a collapse all but the quiet second, so the reference is always
//! the signal since: nothing learnt from one artefact can make every later
//! pulse look like a step (a candidate-based reference could: one small
//! first pulse made every upstroke a step). Until a second of new blocks
//! is held, a jump of more than [`EARLY_STEP_FACTOR`] ranges of all since
//! the restart is a step, so no second after a restart is blind.

use crate::math::{max_f32, min_f32};

/// Block length, seconds.
pub const BLOCK_S: f32 = 0.25;
/// Blocks whose range is the reference for a step (2 s).
pub const STEP_BLOCKS: usize = 8;
/// A jump within the step lag larger than this many ranges of the blocks
/// before it is a step (finger placed or lifted, a knock, a light step).
pub const STEP_FACTOR: f32 = 8.0;
/// Until a second of blocks since a restart is held, a step is a jump larger than
/// this many ranges of all since the restart (at least the step lag): the
/// range of a short stretch is a poor reference, so only a jump far beyond
/// it counts, such as the end of a short stretch of junk.
pub const EARLY_STEP_FACTOR: f32 = 4.0 * STEP_FACTOR;
/// Newest blocks judged for a collapse (1 s).
pub const QUIET_BLOCKS: usize = 4;
/// A range of the newest [`QUIET_BLOCKS`] below 1/this of the range of the
/// (up to [`STEP_BLOCKS`]) blocks before them is a collapse.
pub const COLLAPSE_FACTOR: f32 = 20.0;
/// Blocks held.
const JUDGED: usize = STEP_BLOCKS + QUIET_BLOCKS;
/// Slots of the block ring: a power of two at least [`JUDGED`], so the
/// ring's index is a mask.
const RING: usize = 16;
/// Blocks needed since a restart before a step is judged (1 s).
const STEP_AFTER: usize = 4;

/// What the scale says about the newest sample.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Change {
    /// Nothing unusual.
    None,
    /// A jump far beyond the recent range.
    Step,
    /// The recent range fell far below the range before it.
    Collapse,
}

/// Ranges of recent blocks of the smoothed input, at the detector's rate.
#[derive(Clone, Copy, Debug)]
pub struct Scale {
    block_len: u32,
    // Detector samples over which a jump is measured (the pipeline's
    // `STEP_S`).
    lag: u32,
    filled: u32,
    high: f32,
    low: f32,
    // Completed blocks' highest and lowest values in a ring, `newest` the
    // slot of the newest (no shifting: this runs on every block); the
    // newest `blocks` of them are held.
    highs: [f32; RING],
    lows: [f32; RING],
    newest: usize,
    blocks: usize,
    // Blocks completed since the last restart (`blocks` may also hold the
    // quiet second kept from before a collapse).
    fresh: usize,
    // Range of the STEP_BLOCKS newest completed blocks, kept per block,
    // and STEP_FACTOR times it (the per-sample test is one comparison;
    // −∞ without a range).
    step_range: Option<f32>,
    step_jump: f32,
}

impl Scale {
    /// A tracker at detector rate `fd_hz`.
    pub fn new(fd_hz: f32) -> Self {
        Self {
            block_len: (libm::roundf(BLOCK_S * fd_hz) as u32).max(1),
            lag: (libm::roundf(super::restart::STEP_S * fd_hz) as u32).max(1),
            filled: 0,
            high: f32::NEG_INFINITY,
            low: f32::INFINITY,
            highs: [0.0; RING],
            lows: [0.0; RING],
            newest: 0,
            blocks: 0,
            fresh: 0,
            step_range: None,
            step_jump: f32::NEG_INFINITY,
        }
    }

    /// Judge a jump of `jump` (the newest smoothed value minus the one a
    /// step lag ago), then take the newest smoothed value `s`.
    #[inline]
    pub fn push(&mut self, s: f32, jump: f32) -> Change {
        // Without a step range the threshold is −∞, so the one comparison
        // sends every sample of the early second on to `early_step`.
        if jump.abs() > self.step_jump && (self.step_range.is_some() || self.early_step(jump)) {
            return Change::Step;
        }
        // The smoothed input is finite (the conditioner replaces NaN), so
        // plain comparisons do.
        if s > self.high {
            self.high = s;
        }
        if s < self.low {
            self.low = s;
        }
        self.filled += 1;
        if self.filled < self.block_len {
            return Change::None;
        }
        self.close_block()
    }

    /// Until a second of blocks is held (after a restart), a step is
    /// judged against the range of everything since, once the jump's lag
    /// lies wholly within it: a second
    /// step soon after a first (into a short stretch of junk and out
    /// again) is caught, and a pulse rising from a flat line makes at most
    /// one restart, since its own rise is then the range.
    // Only in the first second after a restart: kept out of the per-sample
    // path's code.
    #[cold]
    #[inline(never)]
    fn early_step(&self, jump: f32) -> bool {
        let seen = self.blocks as u32 * self.block_len + self.filled;
        if seen < self.lag {
            return false;
        }
        let (high, low) = join(self.range(0, self.blocks), (self.high, self.low));
        jump.abs() > EARLY_STEP_FACTOR * (high - low)
    }

    fn close_block(&mut self) -> Change {
        self.newest = (self.newest + 1) % RING;
        self.highs[self.newest] = self.high;
        self.lows[self.newest] = self.low;
        self.blocks = (self.blocks + 1).min(JUDGED);
        self.fresh += 1;
        self.filled = 0;
        self.high = f32::NEG_INFINITY;
        self.low = f32::INFINITY;
        // Ranges of the newest second, of the blocks after it up to
        // STEP_BLOCKS, and of the rest: each block is read once. Once all
        // are held (nearly always) the spans are constants, and the reads
        // unrolled.
        let held = self.blocks;
        let (newest, older, rest) = if held == JUDGED {
            (
                self.range(0, QUIET_BLOCKS),
                self.range(QUIET_BLOCKS, STEP_BLOCKS),
                self.range(STEP_BLOCKS, JUDGED),
            )
        } else {
            (
                self.range(0, QUIET_BLOCKS.min(held)),
                self.range(QUIET_BLOCKS.min(held), held.min(STEP_BLOCKS)),
                self.range(STEP_BLOCKS.min(held), held),
            )
        };
        self.step_range = (self.fresh >= STEP_AFTER).then(|| {
            let (high, low) = join(newest, older);
            high - low
        });
        self.step_jump = self
            .step_range
            .map_or(f32::NEG_INFINITY, |r| STEP_FACTOR * r);
        // Judged as soon as a block before the quiet second is held: an
        // artefact that began with a restart (a step into it) and ended
        // within three seconds is a collapse too.
        if held > QUIET_BLOCKS {
            let before = join(older, rest);
            if (newest.0 - newest.1) * COLLAPSE_FACTOR < before.0 - before.1 {
                return Change::Collapse;
            }
        }
        Change::None
    }

    /// Highest and lowest value of the completed blocks `from..to` ago
    /// (0 = the newest); (−∞, ∞) when the span is empty.
    #[inline(always)]
    fn range(&self, from: usize, to: usize) -> (f32, f32) {
        let mut high = f32::NEG_INFINITY;
        let mut low = f32::INFINITY;
        for age in from..to {
            let k = (self.newest + RING - age) % RING;
            // Block extremes are finite: plain comparisons do.
            if self.highs[k] > high {
                high = self.highs[k];
            }
            if self.lows[k] < low {
                low = self.lows[k];
            }
        }
        (high, low)
    }

    /// Forget the history (after a restart).
    pub fn forget(&mut self) {
        *self = Self {
            block_len: self.block_len,
            lag: self.lag,
            ..Self::new(1.0)
        };
    }

    /// Forget all but the newest [`QUIET_BLOCKS`] completed blocks and the
    /// block being filled (after a collapse: the quiet second is the
    /// signal's own, what came before it the artefact's). Until
    /// a second of new signal is held, steps are judged as
    /// right after any restart (`early_step`), against the kept second too.
    pub fn keep_quiet(&mut self) {
        self.blocks = self.blocks.min(QUIET_BLOCKS);
        self.fresh = 0;
        self.step_range = None;
        self.step_jump = f32::NEG_INFINITY;
    }

    /// Range of the newest completed blocks up to [`STEP_BLOCKS`], if
    /// enough are held to judge a step.
    pub fn step_range(&self) -> Option<f32> {
        self.step_range
    }
}

/// The range covering two ranges.
fn join(a: (f32, f32), b: (f32, f32)) -> (f32, f32) {
    (max_f32(a.0, b.0), min_f32(a.1, b.1))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn feed(scale: &mut Scale, values: impl Iterator<Item = f32>, lag: usize) -> Vec<Change> {
        let mut held: [f32; 64] = [0.0; 64];
        let mut out = Vec::new();
        for (k, v) in values.enumerate() {
            held[k % 64] = v;
            let jump = if k >= lag {
                v - held[(k - lag) % 64]
            } else {
                0.0
            };
            out.push(scale.push(v, jump));
        }
        out
    }

    extern crate std;
    use std::vec::Vec;

    #[test]
    fn a_jump_of_many_ranges_is_a_step_and_a_pulse_is_not() {
        let fd = 100.0;
        let mut s = Scale::new(fd);
        let pulse = (0..400).map(|k| libm::sinf(k as f32 * 0.075));
        assert!(feed(&mut s, pulse, 10).iter().all(|c| *c == Change::None));
        let mut s = Scale::new(fd);
        let with_step = (0..400).map(|k| {
            if k < 300 {
                libm::sinf(k as f32 * 0.075)
            } else {
                100.0
            }
        });
        assert!(feed(&mut s, with_step, 10).contains(&Change::Step));
    }

    #[test]
    fn a_second_step_soon_after_a_restart_is_a_step_and_a_rising_pulse_is_not() {
        let fd = 100.0;
        // 0.2 s flat after a restart, then a jump far beyond that range.
        let mut s = Scale::new(fd);
        let v = (0..40).map(|k| if k < 20 { 1.0 } else { 50.0 });
        assert!(feed(&mut s, v, 10).contains(&Change::Step));
        // A pulse rising from the restart: its own rise is the range.
        let mut s = Scale::new(fd);
        let v = (0..60).map(|k| libm::sinf(k as f32 * 0.05));
        assert!(feed(&mut s, v, 10).iter().all(|c| *c == Change::None));
    }

    #[test]
    fn after_a_collapse_the_quiet_second_judges_steps_at_once() {
        let fd = 100.0;
        let mut s = Scale::new(fd);
        let loud = (0..300).map(|k| if k % 2 == 0 { 500.0 } else { -500.0 });
        let quiet = (0..200).map(|k| 0.01 * libm::sinf(k as f32 * 0.075));
        let changes = feed(&mut s, loud.chain(quiet), 10);
        assert!(changes.contains(&Change::Collapse));
        s.keep_quiet();
        // A jump of 10 right away: far beyond the quiet second's range.
        assert_eq!(s.push(10.0, 10.0), Change::Step);
    }

    #[test]
    fn a_short_artefact_right_after_a_restart_ends_in_a_collapse() {
        // Half a second of loud noise from the start (as after a step into
        // it), then a small pulse: a collapse once its quiet second is held.
        let fd = 100.0;
        let mut s = Scale::new(fd);
        let v = (0..400).map(|k| {
            if k < 50 {
                if k % 2 == 0 {
                    500.0
                } else {
                    -500.0
                }
            } else {
                libm::sinf(k as f32 * 0.075)
            }
        });
        let changes = feed(&mut s, v, 10);
        let at = changes.iter().position(|c| *c == Change::Collapse);
        assert!(at.is_some_and(|a| (140..=200).contains(&a)), "{at:?}");
    }

    #[test]
    fn loud_noise_that_stops_is_a_collapse() {
        let fd = 100.0;
        let mut s = Scale::new(fd);
        let v = (0..600).map(|k| {
            if k < 300 {
                if k % 2 == 0 {
                    500.0
                } else {
                    -500.0
                }
            } else {
                libm::sinf(k as f32 * 0.075)
            }
        });
        let changes = feed(&mut s, v, 10);
        let at = changes
            .iter()
            .position(|c| *c == Change::Collapse)
            .expect("collapse");
        assert!((300..=425).contains(&at), "{at}");
    }
}
