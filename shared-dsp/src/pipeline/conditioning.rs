//! The conditioning stage, at the input rate: the sample conditioned
//! ([`super::condition`]: non-finite replaced, rails marked), the band's
//! upper edge (a Butterworth low-pass, order 2, whose output is also the
//! smoothed signal peaks are placed on), and the decimation to the
//! detector's rate.

use super::band;
use super::condition::{Conditioner, Rails};
use super::settings::{Config, PipelineError};
use crate::filter::{Bounded, Delta, Df1, Section};

/// Order of the band's low-pass (and of its high-pass): two poles at each
/// edge, the band of [`super`]'s Butterworth design.
pub const BAND_ORDER: usize = 2;

/// Per detector-rate sample: one of its input samples was clipped.
pub const MARK_CLIPPED: u8 = 1;
/// Per detector-rate sample: one of its input samples was replaced (not a
/// number).
pub const MARK_REJECTED: u8 = 2;

/// One input sample after conditioning and the low-pass.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Smoothed {
    /// The conditioned input value.
    pub value: f32,
    /// The low-passed value.
    pub smoothed: f32,
    /// On the very first sample only: the low-pass's output at rest at
    /// this value, for the stages after it to settle on.
    pub first_rest: Option<f32>,
}

/// What one detector-rate sample's input samples held.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Block {
    /// Input samples in the block marked clipped.
    pub clipped: u32,
    /// [`MARK_CLIPPED`] and [`MARK_REJECTED`] bits of the block.
    pub mark: u8,
}

/// Conditioning, low-pass and decimation state.
// `repr(C)`: the per-sample fields first and together (see `Pipeline`).
#[derive(Clone, Debug)]
#[repr(C)]
pub struct Conditioning {
    decim: u32,
    phase: u32,
    conditioner: Conditioner,
    // Upper band edge at the input rate, direct form I. Bounded: the
    // conditioner keeps its input within `INPUT_LIMIT`. Not the `Delta`
    // form the band is designed in: at 8 Hz its poles are far enough from
    // z = 1 for plain f32 (on every shared recording no interval moved by
    // more than 0.02 ms and one peak by one sample, `scripts/accuracy
    // --events`), for about 7 instructions less per input sample on the
    // Cortex-M4F at 125 Hz than the compensated `Delta`.
    lowpass: Bounded<Df1<f32>>,
    mark: u8,
    // Clipped input samples since the last detector-rate sample.
    clipped_in_block: u32,
}

impl Conditioning {
    /// The stage for `config` (checked already), decimating by `decim`,
    /// its low-pass designed here.
    pub fn new(config: &Config, decim: u32) -> Result<Self, PipelineError> {
        let lowpass = band::lowpass(config.options.band_high_hz, config.sample_rate_hz)?;
        Ok(Self::with_lowpass(config, decim, lowpass))
    }

    /// The stage for `config` (checked already), decimating by `decim`,
    /// with the band's `lowpass` designed already ([`band::BandSections`]).
    pub fn with_lowpass(config: &Config, decim: u32, lowpass: Delta) -> Self {
        let rails = match config.options.rails {
            Some((low, high)) => Rails::Known { low, high },
            None => Rails::Auto,
        };
        Self {
            decim,
            phase: 0,
            conditioner: Conditioner::new(rails, config.sample_rate_hz),
            // The Delta's own coefficients, exactly (`realised`), rounded to
            // f32 once.
            lowpass: Bounded::new(Df1(lowpass.realised().cast::<f32>())),
            mark: 0,
            clipped_in_block: 0,
        }
    }

    /// Condition and low-pass one input sample; `first` on the very
    /// first one only (the pipeline knows it from its sample count, so no
    /// flag of this stage is tested on every sample).
    #[inline(always)]
    pub fn push(&mut self, x: f32, first: bool) -> Smoothed {
        let c = self.conditioner.push(x);
        if c.rejected {
            return self.push_replaced(c.value, first);
        }
        let first_rest = if first {
            // Start as if this value had always been there: no transient.
            Some(self.lowpass.settle(c.value))
        } else {
            None
        };
        let smoothed = self.lowpass.process(c.value);
        if c.clipped {
            self.mark |= MARK_CLIPPED;
            self.clipped_in_block += 1;
        }
        Smoothed {
            value: c.value,
            smoothed,
            first_rest,
        }
    }

    /// [`Self::push`] of a sample the conditioner replaced by `value`
    /// (never clipped): marked, then low-passed as any other.
    // Rare: out of the per-sample path's code, which then needs no second
    // test of the replacement.
    #[cold]
    #[inline(never)]
    fn push_replaced(&mut self, value: f32, first: bool) -> Smoothed {
        self.mark |= MARK_REJECTED;
        let first_rest = first.then(|| self.lowpass.settle(value));
        Smoothed {
            value,
            smoothed: self.lowpass.process(value),
            first_rest,
        }
    }

    /// After [`Self::push`]: the block, when that sample completed a
    /// detector-rate sample (its counts start again).
    #[inline(always)]
    pub fn block(&mut self) -> Option<Block> {
        self.phase += 1;
        if self.phase < self.decim {
            return None;
        }
        self.phase = 0;
        let block = Block {
            clipped: self.clipped_in_block,
            mark: self.mark,
        };
        self.clipped_in_block = 0;
        self.mark = 0;
        Some(block)
    }

    /// Input samples still to come before the next detector-rate sample
    /// (1 to the decimation).
    #[inline(always)]
    pub fn remaining(&self) -> u32 {
        self.decim - self.phase
    }

    /// After `k` calls of [`Self::push`], fewer than [`Self::remaining`]:
    /// the phase moves on by `k` (no block completes).
    #[inline(always)]
    pub fn skip(&mut self, k: u32) {
        self.phase += k;
    }

    /// The last sample low-passed: what [`Self::push`] returned for it as
    /// `smoothed` (read back from the low-pass's state, so the caller need
    /// not keep it across the per-sample path).
    #[inline(always)]
    pub fn last_smoothed(&self) -> f32 {
        self.lowpass.state().y[0]
    }

    /// Start the low-pass at `value` (after a step); its output at rest.
    pub fn settle(&mut self, value: f32) -> f32 {
        self.lowpass.settle(value)
    }

    /// Input samples per detector sample.
    pub fn decimation(&self) -> u32 {
        self.decim
    }

    /// The last conditioned value.
    pub fn last_value(&self) -> f32 {
        self.conditioner.last_value()
    }

    /// Non-finite input samples replaced so far.
    pub fn rejected(&self) -> u64 {
        self.conditioner.rejected()
    }

    /// Input samples marked clipped so far.
    pub fn clipped(&self) -> u64 {
        self.conditioner.clipped()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn blocks_close_every_decimation_and_carry_their_marks() {
        let mut c = Config::new(250.0); // decimation 4
        c.options.rails = Some((0.0, 10.0));
        let mut stage = Conditioning::new(&c, c.decimation()).unwrap();
        assert_eq!(stage.decimation(), 4);
        let mut blocks = std::vec::Vec::new();
        for (k, x) in [1.0, 10.0, f32::NAN, 2.0, 3.0, 3.0, 3.0, 3.0]
            .into_iter()
            .enumerate()
        {
            let s = stage.push(x, k == 0);
            assert_eq!(s.first_rest.is_some(), k == 0);
            blocks.extend(stage.block());
        }
        let marked = Block {
            clipped: 1,
            mark: MARK_CLIPPED | MARK_REJECTED,
        };
        assert_eq!(
            blocks,
            [
                marked,
                Block {
                    clipped: 0,
                    mark: 0
                }
            ]
        );
        assert_eq!((stage.rejected(), stage.clipped()), (1, 1));
    }

    #[test]
    fn a_constant_input_passes_the_low_pass_unchanged_from_the_first_sample() {
        let c = Config::new(125.0);
        let mut stage = Conditioning::new(&c, c.decimation()).unwrap();
        for k in 0..50 {
            let s = stage.push(2.5, k == 0);
            assert!((s.smoothed - 2.5).abs() < 1e-5, "{}", s.smoothed);
        }
    }
}
