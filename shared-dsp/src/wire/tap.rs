//! Sample blocks from a running pipeline: every `stride`-th input sample,
//! as pushed and band-passed, 16 to a block.

use super::{SampleBlock, SAMPLES_PER_BLOCK};
use crate::pipeline::Pipeline;

/// Highest input rate sent sample by sample, Hz: above it every
/// [`sample_stride`]-th sample is sent, so a 115200 baud line keeps its
/// headroom (`docs/wire-format.md`, "Bandwidth").
pub const FULL_RATE_LIMIT_HZ: f32 = 500.0;

/// The stride a board sends its samples at: ⌈rate / 500 Hz⌉, at least 1
/// (1 up to 500 Hz, 2 up to the pipeline's 1000 Hz).
pub fn sample_stride(sample_rate_hz: f32) -> u8 {
    let s = libm::ceilf(sample_rate_hz / FULL_RATE_LIMIT_HZ);
    // A non-finite or tiny rate (refused by the pipeline anyway) gives 1.
    if (1.0..=255.0).contains(&s) {
        s as u8
    } else if s > 255.0 {
        255
    } else {
        1
    }
}

/// Fills [`SampleBlock`]s from each pushed input and the pipeline after
/// the push. Fixed size, no allocation; costs nothing inside
/// [`Pipeline::push`] (it reads [`Pipeline::band_passed`] afterwards).
///
/// ```
/// use plethwire_dsp::pipeline::{Config, Pipeline};
/// use plethwire_dsp::wire::SampleTap;
/// let mut p = Pipeline::new(Config::new(250.0))?;
/// let mut tap = SampleTap::new(1);
/// let mut blocks = 0;
/// for n in 0..100 {
///     let x = n as f32;
///     p.push(x);
///     if let Some(block) = tap.push(x, &p) {
///         assert_eq!(block.first_index, 16 * blocks);
///         blocks += 1;
///     }
/// }
/// assert_eq!(blocks, 6);
/// assert_eq!(tap.flush().map(|b| b.count), Some(4));
/// # Ok::<(), plethwire_dsp::pipeline::PipelineError>(())
/// ```
#[derive(Clone, Copy, Debug)]
pub struct SampleTap {
    /// Inputs still to skip before the next one kept.
    skip: u8,
    block: SampleBlock,
}

impl SampleTap {
    /// A tap keeping every `stride`-th input (0 is taken as 1), the first
    /// one pushed included.
    pub const fn new(stride: u8) -> Self {
        let stride = if stride == 0 { 1 } else { stride };
        Self {
            skip: 0,
            block: SampleBlock {
                first_index: 0,
                count: 0,
                stride,
                raw: [0.0; SAMPLES_PER_BLOCK],
                filtered: [0.0; SAMPLES_PER_BLOCK],
            },
        }
    }

    /// The stride.
    pub fn stride(&self) -> u8 {
        self.block.stride
    }

    /// After `pipeline.push(x)`: keep `x` and the band-passed value if it
    /// is this input's turn; a block just filled comes back.
    #[inline]
    pub fn push(&mut self, x: f32, pipeline: &Pipeline) -> Option<SampleBlock> {
        if self.skip > 0 {
            self.skip -= 1;
            return None;
        }
        self.skip = self.block.stride - 1;
        let b = &mut self.block;
        let i = b.count as usize % SAMPLES_PER_BLOCK;
        if i == 0 {
            // The pipeline counts the input just pushed.
            b.first_index = pipeline.samples().saturating_sub(1);
        }
        b.raw[i] = x;
        b.filtered[i] = pipeline.band_passed();
        b.count = i as u8 + 1;
        if b.count as usize == SAMPLES_PER_BLOCK {
            return self.flush();
        }
        None
    }

    /// The block begun and not yet full, if any (at the end of a session);
    /// the next input kept starts a new block.
    pub fn flush(&mut self) -> Option<SampleBlock> {
        if self.block.count == 0 {
            return None;
        }
        let out = self.block;
        self.block.count = 0;
        Some(out)
    }
}
