//! The smoothed input's recent scale, learnt from the signal alone, for
//! telling a step or the end of an artefact from a pulse.
//!
//! The signal is cut into blocks of [`BLOCK_S`]; each block keeps its
//! highest and lowest value. A *step* is a jump within a short lag larger
//! than [`STEP_FACTOR`] times the range of the blocks before it; a
//! *collapse* (an artefact ends, a tap or a burst of noise stops) is a last
//! second whose range is below 1/[`COLLAPSE_FACTOR`] of the range of the
//! two seconds before it. Both make the pipeline restart its filters from
//! the present level. After a restart the history is forgotten, so the
//! reference is always the signal since then: nothing learnt from one
//! artefact can make every later pulse look like a step (a candidate-based
//! reference could: one small first pulse made every upstroke a step).

use crate::math::{max_f32, min_f32};

/// Block length, seconds.
pub const BLOCK_S: f32 = 0.25;
/// Blocks whose range is the reference for a step (2 s).
pub const STEP_BLOCKS: usize = 8;
/// A jump within the step lag larger than this many ranges of the blocks
/// before it is a step (finger placed or lifted, a knock, a light step).
pub const STEP_FACTOR: f32 = 8.0;
/// Newest blocks judged for a collapse (1 s).
pub const QUIET_BLOCKS: usize = 4;
/// A range of the newest [`QUIET_BLOCKS`] below 1/this of the range of the
/// [`STEP_BLOCKS`] before them is a collapse.
pub const COLLAPSE_FACTOR: f32 = 20.0;
/// Blocks judged.
const JUDGED: usize = STEP_BLOCKS + QUIET_BLOCKS;
/// Slots of the block ring: a power of two at least [`JUDGED`], so the
/// ring's index is a mask.
const HELD: usize = 16;
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
    filled: u32,
    high: f32,
    low: f32,
    // Completed blocks' highest and lowest values in a ring; `newest` is
    // the slot of the newest (no shifting: this runs on every block).
    highs: [f32; HELD],
    lows: [f32; HELD],
    newest: usize,
    blocks: usize,
    // STEP_FACTOR times the range of the STEP_BLOCKS newest completed
    // blocks (infinite until enough are held), kept per block so the
    // per-sample test is one comparison.
    step_jump: f32,
}

impl Scale {
    /// A tracker at detector rate `fd_hz`.
    pub fn new(fd_hz: f32) -> Self {
        Self {
            block_len: (libm::roundf(BLOCK_S * fd_hz) as u32).max(1),
            filled: 0,
            high: f32::NEG_INFINITY,
            low: f32::INFINITY,
            highs: [0.0; HELD],
            lows: [0.0; HELD],
            newest: 0,
            blocks: 0,
            step_jump: f32::INFINITY,
        }
    }

    /// Judge a jump of `jump` (the newest smoothed value minus the one a
    /// step lag ago), then take the newest smoothed value `s`.
    #[inline]
    pub fn push(&mut self, s: f32, jump: f32) -> Change {
        if jump.abs() > self.step_jump {
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

    fn close_block(&mut self) -> Change {
        self.newest = (self.newest + 1) % HELD;
        self.highs[self.newest] = self.high;
        self.lows[self.newest] = self.low;
        self.blocks = (self.blocks + 1).min(JUDGED);
        self.filled = 0;
        self.high = f32::NEG_INFINITY;
        self.low = f32::INFINITY;
        if self.blocks < STEP_AFTER {
            return Change::None;
        }
        // Ranges of the newest second of blocks, of those before it (up
        // to STEP_BLOCKS in all) and, once held, of the second before
        // those: each block is read once.
        let newest = self.range(0, QUIET_BLOCKS);
        let n = self.blocks.min(STEP_BLOCKS);
        let older = self.range(QUIET_BLOCKS, n);
        let recent = join(newest, older);
        self.step_jump = STEP_FACTOR * (recent.0 - recent.1);
        if self.blocks >= JUDGED {
            let oldest = self.range(STEP_BLOCKS, JUDGED);
            let before = join(older, oldest);
            if (newest.0 - newest.1) * COLLAPSE_FACTOR < before.0 - before.1 {
                return Change::Collapse;
            }
        }
        Change::None
    }

    /// Highest and lowest value of the completed blocks `from..to` ago
    /// (0 = the newest); (−∞, ∞) when the span is empty.
    fn range(&self, from: usize, to: usize) -> (f32, f32) {
        let mut high = f32::NEG_INFINITY;
        let mut low = f32::INFINITY;
        for age in from..to {
            let k = (self.newest + HELD - age) % HELD;
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
        self.filled = 0;
        self.high = f32::NEG_INFINITY;
        self.low = f32::INFINITY;
        self.blocks = 0;
        self.step_jump = f32::INFINITY;
    }

    /// Range of the newest completed blocks up to [`STEP_BLOCKS`], if
    /// enough are held to judge a step.
    pub fn step_range(&self) -> Option<f32> {
        (self.blocks >= STEP_AFTER).then(|| {
            let (high, low) = self.range(0, self.blocks.min(STEP_BLOCKS));
            high - low
        })
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
