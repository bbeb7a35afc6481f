//! What every streamed replay shares: the block length, why it stops,
//! and the beats and state changes it keeps as they come.

use super::{Replay, ReplayError};
use plethwire_dsp::pipeline::{BeatEvent, Config, Output, Pipeline, PipelineError, StateEvent};

/// Frames read at once: 64 Ki frames, half a megabyte of samples.
pub const BLOCK_FRAMES: usize = 1 << 16;

/// Why a streamed replay stopped.
#[derive(Debug, thiserror::Error)]
pub enum StreamError {
    /// The pipeline refused its configuration (before any sample).
    #[error(transparent)]
    Pipeline(#[from] PipelineError),
    /// The record would not read part way.
    #[error(transparent)]
    Read(#[from] ReplayError),
}

/// The beats and state changes of a replay, as they come.
#[derive(Default)]
pub(super) struct Kept {
    beats: Vec<BeatEvent>,
    states: Vec<StateEvent>,
}

impl Kept {
    /// Keep what the pipeline said for one sample.
    #[inline(always)]
    pub(super) fn keep(&mut self, out: Output) {
        // `push` on an `Option` (not `extend`): `extend` is a call per
        // sample, 7 % of a replay.
        if let Some(b) = out.beat {
            self.beats.push(b);
        }
        if let Some(s) = out.state {
            self.states.push(s);
        }
    }

    /// Keep a beat closed by the end of the recording.
    pub(super) fn closed(&mut self, b: BeatEvent) {
        self.beats.push(b);
    }

    /// The replay of `samples` samples by `p` (its open beats closed).
    pub(super) fn into_replay(self, p: &Pipeline, config: Config, samples: u64) -> Replay {
        Replay {
            fs: config.sample_rate_hz as f64,
            samples,
            beats: self.beats,
            states: self.states,
            rejected: p.rejected_samples(),
            clipped: p.clipped_samples(),
            restarts: p.restarts(),
        }
    }
}
