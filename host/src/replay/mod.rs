//! Replaying a recording through the very pipeline the firmware runs, and
//! writing what it found.

mod beats;
mod blocks;
mod csv_stream;
mod csv_time;
mod feed;
mod load;
mod motion_stream;
mod read_ahead;
mod stream;
#[cfg(test)]
mod stream_tests;
mod summary;
#[cfg(test)]
mod tests;

pub use beats::{
    beat_rows, beats_csv, write_beat_annotations, write_recording_beats, BeatRow, BEATS_CSV_HEADER,
};
pub use blocks::sample_blocks;
pub use feed::{StreamError, BLOCK_FRAMES};
pub use load::{load, InputInfo, Polarity, Recording, ReplayError, Source};
pub use stream::{open, Streamed};
pub use summary::{HrvSummary, RateSummary, Summary};

use crate::motion::MotionSignals;
use plethwire_dsp::pipeline::PipelineError;
use plethwire_dsp::pipeline::{BeatEvent, Config, MotionPipeline, Output, Pipeline, StateEvent};

/// Annotator name of the beat files we write, unless told otherwise.
pub const DEFAULT_ANNOTATOR: &str = "pwire";

/// Everything the pipeline said about a recording.
#[derive(Debug, Clone, PartialEq)]
pub struct Replay {
    /// Sample rate, Hz.
    pub fs: f64,
    /// Samples fed.
    pub samples: u64,
    /// Beats, in the order emitted (including those closed by the end of
    /// the recording).
    pub beats: Vec<BeatEvent>,
    /// Signal state changes.
    pub states: Vec<StateEvent>,
    /// Non-finite samples replaced.
    pub rejected: u64,
    /// Samples marked clipped.
    pub clipped: u64,
    /// Filter restarts after steps in the input.
    pub restarts: u64,
}

/// Feed `samples` (at `config.sample_rate_hz`) through the pipeline, one at
/// a time as the board would, and close open beats at the end.
pub fn replay(samples: &[f64], config: Config) -> Result<Replay, PipelineError> {
    replay_with_motion(samples, None, config)
}

/// [`replay`] of a loaded recording, with its accelerometer when it has
/// one (at `config.sample_rate_hz`, the pulse signal's rate).
pub fn replay_recording(rec: &Recording, config: Config) -> Result<Replay, PipelineError> {
    replay_with_motion(&rec.signal.samples, rec.motion.as_ref(), config)
}

/// [`replay`], with each sample's accelerometer sample fed just before it
/// when `motion` is given (at the same rate).
pub fn replay_with_motion(
    samples: &[f64],
    motion: Option<&MotionSignals>,
    config: Config,
) -> Result<Replay, PipelineError> {
    let (mut beats, mut states) = (Vec::new(), Vec::new());
    let mut keep = |out: Output| {
        if let Some(b) = out.beat {
            beats.push(b);
        }
        if let Some(s) = out.state {
            states.push(s);
        }
    };
    // The board hands the pipeline f32 samples; so does the replay.
    let counts = |p: &Pipeline| (p.rejected_samples(), p.clipped_samples(), p.restarts());
    let (rejected, clipped, restarts) = match motion {
        Some(m) => {
            let mut p = MotionPipeline::new(config, m.fs as f32)?;
            for (n, &x) in samples.iter().enumerate() {
                p.push_motion(m.at(n));
                keep(p.push(x as f32));
            }
            p.finish(|b| {
                keep(Output {
                    beat: Some(b),
                    state: None,
                })
            });
            counts(p.pipeline())
        }
        None => {
            let mut p = Pipeline::new(config)?;
            for &x in samples {
                keep(p.push(x as f32));
            }
            p.finish(|b| {
                keep(Output {
                    beat: Some(b),
                    state: None,
                })
            });
            counts(&p)
        }
    };
    Ok(Replay {
        fs: config.sample_rate_hz as f64,
        samples: samples.len() as u64,
        beats,
        states,
        rejected,
        clipped,
        restarts,
    })
}
