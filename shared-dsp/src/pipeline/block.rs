//! Feeding the pipeline a run of input samples in one call: the results of
//! one [`Pipeline::push`] after another, for less work per sample (the
//! call and the sample count's bookkeeping are paid once per
//! detector-rate sample instead of once per input sample).

use super::{Output, Pipeline};

impl Pipeline {
    /// Input samples still to come before the pipeline's next
    /// detector-rate sample: from 1 to the decimation (the input rate over
    /// [`Self::detector_rate_hz`]).
    pub fn block_remaining(&self) -> usize {
        self.conditioning.remaining() as usize
    }

    /// Feed input samples from the front of `xs`, up to and including the
    /// one that completes the current detector-rate sample: it takes
    /// `xs.len().min(self.block_remaining())` of them. Returns the output
    /// of the last one taken: the same as [`Self::push`] of each in turn,
    /// whose outputs before the last are always empty (beats and state
    /// changes come only on a detector-rate sample). Never fails; an empty
    /// `xs` takes nothing.
    pub fn push_until_block(&mut self, xs: &[f32]) -> Output {
        let take = xs.len().min(self.block_remaining());
        let Some((&last, front)) = xs[..take].split_last() else {
            return Output::default();
        };
        for &x in front {
            self.input_sample(x);
        }
        // `front` is shorter than the decimation, a u32.
        self.conditioning.skip(front.len() as u32);
        self.push(last)
    }
}
