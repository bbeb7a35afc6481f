//! One session: a recorded-samples feed in, wire frames out.
//!
//! The loop is the host replay's (`plethwire::replay::replay`): a
//! `Pipeline` built from the feed's `Config`, `push` once per sample in
//! order, `finish` at the end, beats closed by `finish` reported only when
//! their peak lies within the recording. Frames: a hello first, then per
//! sample its state change, its beat, and the sample block it fills
//! (`wire::SampleTap` at `wire::sample_stride`), then the last block,
//! partly filled, then the beats `finish` closed, then one status.

use core::fmt;

use plethwire_dsp::feed::{FeedError, FeedHeader, FEED_HEADER_LEN};
use plethwire_dsp::pipeline::{BandSections, Output, Pipeline, PipelineError};
use plethwire_dsp::wire::{sample_stride, Encoder, Hello, Message, SampleTap, Status, MAX_FRAME};

use crate::semihost::HostError;

/// This firmware's version as sent in the hello frame.
pub const FIRMWARE_VERSION: [u8; 3] = [
    version_part(env!("CARGO_PKG_VERSION_MAJOR")),
    version_part(env!("CARGO_PKG_VERSION_MINOR")),
    version_part(env!("CARGO_PKG_VERSION_PATCH")),
];

/// A decimal version number that fits a byte (checked when compiling).
const fn version_part(s: &str) -> u8 {
    let b = s.as_bytes();
    let mut v: u32 = 0;
    let mut i = 0;
    while i < b.len() {
        v = v * 10 + (b[i] - b'0') as u32;
        i += 1;
    }
    assert!(v <= 255, "version parts must fit a byte");
    v as u8
}

/// Why a session stopped.
#[derive(Clone, Copy, Debug)]
pub enum RunError {
    /// A semihosting call failed.
    Host(HostError),
    /// The feed's header was refused.
    Feed(FeedError),
    /// The pipeline refused the feed's configuration.
    Pipeline(PipelineError),
    /// The input holds fewer bytes than its header promises.
    Truncated {
        /// Bytes the header promises, header included.
        expected: u64,
        /// Bytes there are.
        found: u64,
    },
}

impl fmt::Display for RunError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::Host(e) => write!(f, "{e}"),
            Self::Feed(e) => write!(f, "samples feed: {e}"),
            Self::Pipeline(e) => write!(f, "the pipeline refuses the feed's settings: {e:?}"),
            Self::Truncated { expected, found } => write!(
                f,
                "the samples feed has {found} bytes where its header promises {expected}"
            ),
        }
    }
}

impl From<HostError> for RunError {
    fn from(e: HostError) -> Self {
        Self::Host(e)
    }
}

/// Where the feed's bytes come from.
pub trait FeedSource {
    /// Fill `buf`, or fail (a feed cut short is [`RunError::Truncated`]).
    fn read_exact(&mut self, buf: &mut [u8]) -> Result<(), RunError>;

    /// Refuse a source that cannot hold `bytes` bytes (when it knows its
    /// length), before any work is done.
    fn expect_len(&mut self, bytes: u64) -> Result<(), RunError>;
}

/// Where the frames go.
pub trait FrameSink {
    /// Send one encoded frame, delimiter included.
    fn send(&mut self, frame: &[u8]) -> Result<(), RunError>;
}

/// How `Pipeline::push` is called: plainly, or inside a measurement.
pub trait Push {
    /// Push `x` into `pipeline`.
    fn push(&mut self, pipeline: &mut Pipeline, x: f32) -> Output;
}

/// Calls `push` and nothing else.
pub struct Plain;

impl Push for Plain {
    #[inline(always)]
    fn push(&mut self, pipeline: &mut Pipeline, x: f32) -> Output {
        pipeline.push(x)
    }
}

/// What a finished session sent.
#[derive(Clone, Copy, Debug, Default)]
pub struct Totals {
    /// Samples pushed (the feed's count; `finish` adds its own).
    pub samples: u64,
}

/// Numbers and sends frames.
struct Framer<'a, S: FrameSink> {
    encoder: Encoder,
    sink: &'a mut S,
}

impl<S: FrameSink> Framer<'_, S> {
    fn send(&mut self, message: &Message) -> Result<(), RunError> {
        let mut buf = [0u8; MAX_FRAME];
        // Only sample blocks can fail to encode, and the tap fills them
        // with 1 to 16 samples at a stride of at least 1.
        if let Ok(frame) = self.encoder.encode(message, &mut buf) {
            self.sink.send(frame)?;
        }
        Ok(())
    }
}

/// Run the whole feed from `source` through the pipeline, frames to `sink`.
pub fn run<F: FeedSource, S: FrameSink, P: Push>(
    source: &mut F,
    sink: &mut S,
    pusher: &mut P,
) -> Result<Totals, RunError> {
    let mut head = [0u8; FEED_HEADER_LEN];
    source.read_exact(&mut head)?;
    let header = FeedHeader::decode(&head).map_err(RunError::Feed)?;
    source.expect_len(header.feed_len())?;
    // The band is designed here, before `stream`'s frame (which holds the
    // pipeline) exists: the f64 design's 6.6 KiB of stack and the
    // pipeline's 10.5 KiB are never needed at once, which the microbit's
    // 16 KiB could not hold. The same sections `Pipeline::new` designs.
    let band = design(&header)?;
    stream(source, sink, pusher, &header, &band)
}

/// The feed's band filters, designed in a frame of their own.
#[inline(never)]
fn design(header: &FeedHeader) -> Result<BandSections, RunError> {
    BandSections::design(&header.config).map_err(RunError::Pipeline)
}

/// The feed's samples through a pipeline on `band`, frames to `sink`.
#[inline(never)]
fn stream<F: FeedSource, S: FrameSink, P: Push>(
    source: &mut F,
    sink: &mut S,
    pusher: &mut P,
    header: &FeedHeader,
    band: &BandSections,
) -> Result<Totals, RunError> {
    // Matched by reference, never moved: the pipeline is 10.5 KiB, two
    // thirds of the microbit's RAM, and a move (as `map_err` and `?` make)
    // would take as much again. `with_band` returns straight into `built`.
    let mut built = Pipeline::with_band(header.config, band);
    let pipeline = match &mut built {
        Ok(pipeline) => pipeline,
        Err(e) => return Err(RunError::Pipeline(*e)),
    };
    let mut out = Framer {
        encoder: Encoder::new(),
        sink,
    };
    out.send(&Message::Hello(Hello {
        firmware_version: FIRMWARE_VERSION,
        sample_rate_hz: header.config.sample_rate_hz,
        options: header.config.options,
        adc_bits: 0,
    }))?;
    let mut tap = SampleTap::new(sample_stride(header.config.sample_rate_hz));
    let mut bytes = [0u8; 4];
    for _ in 0..header.samples {
        source.read_exact(&mut bytes)?;
        let x = f32::from_le_bytes(bytes);
        let o = pusher.push(pipeline, x);
        if let Some(s) = o.state {
            out.send(&Message::State(s))?;
        }
        if let Some(b) = o.beat {
            out.send(&Message::Beat(b))?;
        }
        if let Some(block) = tap.push(x, pipeline) {
            out.send(&Message::Samples(block))?;
        }
    }
    // Before `finish`: the values it feeds to close the beats are not
    // samples of the recording.
    if let Some(block) = tap.flush() {
        out.send(&Message::Samples(block))?;
    }
    let mut failed = None;
    pipeline.finish(|b| {
        if failed.is_none() {
            failed = out.send(&Message::Beat(b)).err();
        }
    });
    if let Some(e) = failed {
        return Err(e);
    }
    // No LED, ADC or transmit queue in the emulation: those stay 0.
    let saturate = |n: u64| u32::try_from(n).unwrap_or(u32::MAX);
    out.send(&Message::Status(Status {
        led_drive: 0,
        dc_level: 0.0,
        ambient_level: 0.0,
        measured: 0,
        clipped_samples: saturate(pipeline.clipped_samples()),
        adc_overruns: 0,
        dropped_frames: 0,
        rejected_samples: saturate(pipeline.rejected_samples()),
    }))?;
    Ok(Totals {
        samples: header.samples,
    })
}
