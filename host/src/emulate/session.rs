//! What came back from the board: the decoded frames of one session, and
//! the checks that the stream is whole.

use plethwire_dsp::pipeline::{BeatEvent, StateEvent};
use plethwire_dsp::wire::{
    DecodeStats, Decoder, Frame, FrameError, Hello, Message, SampleBlock, Status,
};

use super::perf::PerfReport;
use crate::replay::Replay;

/// Why a session's frame stream is not whole; one line.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum StreamError {
    /// Frames were damaged or lost; the decoder's counters.
    #[error(
        "the frame stream is damaged: {} damaged frames ({} CRC errors, {} bytes dropped), {} lost",
        .0.damaged, .0.crc_errors, .0.dropped_bytes, .0.lost_frames
    )]
    Damaged(DecodeStats),
    /// The first frame is not a hello.
    #[error("the board's first frame is not a hello")]
    NoHello,
    /// The last frame is not a status.
    #[error("the board's last frame is not a status (stream cut short?)")]
    NoStatus,
    /// A frame's sequence number is not its place in the stream.
    #[error("frame {frame} carries sequence number {seq}")]
    Sequence {
        /// The frame's place.
        frame: usize,
        /// The number it carries.
        seq: u16,
    },
    /// A frame other than a beat, a state or a sample block sits inside
    /// the session.
    #[error("frame {frame} is a {kind:?} inside the session")]
    Misplaced {
        /// The frame's place.
        frame: usize,
        /// Its message's type byte.
        kind: u8,
    },
}

/// One session's frames, decoded, in the order they arrived.
#[derive(Debug, Clone)]
pub struct Session {
    /// Samples the host fed.
    pub samples_fed: u64,
    /// Every frame decoded.
    pub frames: Vec<Frame>,
    /// Byte chunks that did not decode, in order.
    pub damaged: Vec<FrameError>,
    /// The decoder's counters.
    pub stats: DecodeStats,
    /// The instruction count report, when counting was asked for.
    pub perf: Option<PerfReport>,
}

/// Collects frames from bytes as they arrive.
pub(crate) struct Collector {
    decoder: Decoder,
    session: Session,
}

impl Collector {
    /// Empty, for a feed of `samples_fed` samples.
    pub(crate) fn new(samples_fed: u64) -> Self {
        Self {
            decoder: Decoder::new(),
            session: Session {
                samples_fed,
                frames: Vec::new(),
                damaged: Vec::new(),
                stats: DecodeStats::default(),
                perf: None,
            },
        }
    }

    /// Decode `bytes`, handing each good frame to `on_frame` as it
    /// completes.
    pub(crate) fn push(&mut self, bytes: &[u8], on_frame: &mut dyn FnMut(&Frame)) {
        for &b in bytes {
            match self.decoder.push(b) {
                Some(Ok(frame)) => {
                    on_frame(&frame);
                    self.session.frames.push(frame);
                }
                Some(Err(e)) => self.session.damaged.push(e),
                None => {}
            }
        }
    }

    /// The session so far.
    pub(crate) fn finish(mut self, perf: Option<PerfReport>) -> Session {
        self.session.stats = self.decoder.stats();
        self.session.perf = perf;
        self.session
    }
}

impl Session {
    /// The hello frame, if the first frame is one.
    pub fn hello(&self) -> Option<&Hello> {
        match self.frames.first().map(|f| &f.message) {
            Some(Message::Hello(h)) => Some(h),
            _ => None,
        }
    }

    /// The status frame, if the last frame is one.
    pub fn status(&self) -> Option<&Status> {
        match self.frames.last().map(|f| &f.message) {
            Some(Message::Status(s)) if self.frames.len() > 1 => Some(s),
            _ => None,
        }
    }

    /// Every beat, in the order sent.
    pub fn beats(&self) -> Vec<BeatEvent> {
        self.frames
            .iter()
            .filter_map(|f| match f.message {
                Message::Beat(b) => Some(b),
                _ => None,
            })
            .collect()
    }

    /// Every sample block, in the order sent.
    pub fn blocks(&self) -> Vec<SampleBlock> {
        self.frames
            .iter()
            .filter_map(|f| match f.message {
                Message::Samples(b) => Some(b),
                _ => None,
            })
            .collect()
    }

    /// Every state change, in the order sent.
    pub fn states(&self) -> Vec<StateEvent> {
        self.frames
            .iter()
            .filter_map(|f| match f.message {
                Message::State(s) => Some(s),
                _ => None,
            })
            .collect()
    }

    /// Is the stream whole? Nothing damaged or lost, sequence numbers
    /// counting from 0 without a gap, a hello first, a status last, and
    /// only beats, states and sample blocks between them. The error names
    /// the first problem.
    pub fn verify(&self) -> Result<(), StreamError> {
        let s = &self.stats;
        if s.damaged > 0 || s.lost_frames > 0 || !self.damaged.is_empty() {
            return Err(StreamError::Damaged(*s));
        }
        if self.hello().is_none() {
            return Err(StreamError::NoHello);
        }
        if self.status().is_none() {
            return Err(StreamError::NoStatus);
        }
        for (i, f) in self.frames.iter().enumerate() {
            if f.seq != i as u16 {
                return Err(StreamError::Sequence {
                    frame: i,
                    seq: f.seq,
                });
            }
            let inner = i > 0 && i + 1 < self.frames.len();
            let inside = matches!(
                f.message,
                Message::Beat(_) | Message::State(_) | Message::Samples(_)
            );
            if inner && !inside {
                return Err(StreamError::Misplaced {
                    frame: i,
                    kind: f.message.kind(),
                });
            }
        }
        Ok(())
    }

    /// The session as a [`Replay`], for the writers and the summary of
    /// `plethwire replay`. Counters come from the status frame; the
    /// filter restarts are not on the wire, so `restarts` is 0.
    pub fn to_replay(&self) -> Replay {
        let status = self.status();
        Replay {
            fs: self.hello().map_or(0.0, |h| h.sample_rate_hz as f64),
            samples: self.samples_fed,
            beats: self.beats(),
            states: self.states(),
            rejected: status.map_or(0, |s| s.rejected_samples as u64),
            clipped: status.map_or(0, |s| s.clipped_samples as u64),
            restarts: 0,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use plethwire_dsp::pipeline::{BeatFlags, Options, SignalState};
    use plethwire_dsp::wire::{Encoder, MAX_FRAME};

    fn bytes(messages: &[Message]) -> Vec<u8> {
        let mut enc = Encoder::new();
        let mut out = Vec::new();
        for m in messages {
            let mut buf = [0u8; MAX_FRAME];
            out.extend_from_slice(enc.encode(m, &mut buf).unwrap());
        }
        out
    }

    fn messages() -> Vec<Message> {
        let beat = BeatEvent {
            peak_index: 100,
            onset_index: None,
            emitted_at: 150,
            ibi_ms: Some(812.5),
            hr_bpm: Some(73.8),
            hr_smoothed_bpm: None,
            amplitude: 0.25,
            quality: 0.97,
            flags: BeatFlags(0),
        };
        vec![
            Message::Hello(Hello {
                firmware_version: [0, 1, 0],
                sample_rate_hz: 125.0,
                options: Options::default(),
                adc_bits: 0,
            }),
            Message::State(StateEvent {
                state: SignalState::Good,
                previous: SignalState::Acquiring,
                at: 140,
            }),
            Message::Beat(beat),
            Message::Status(Status {
                led_drive: 0,
                dc_level: 0.0,
                ambient_level: 0.0,
                measured: 0,
                clipped_samples: 3,
                adc_overruns: 0,
                dropped_frames: 0,
                rejected_samples: 1,
            }),
        ]
    }

    fn collect(b: &[u8]) -> Session {
        let mut c = Collector::new(200);
        let mut seen = 0;
        c.push(b, &mut |_| seen += 1);
        let s = c.finish(None);
        assert_eq!(seen, s.frames.len());
        s
    }

    #[test]
    fn a_whole_session_verifies_and_becomes_a_replay() {
        let s = collect(&bytes(&messages()));
        s.verify().unwrap();
        let r = s.to_replay();
        assert_eq!(
            (r.fs, r.samples, r.beats.len(), r.states.len()),
            (125.0, 200, 1, 1)
        );
        assert_eq!((r.rejected, r.clipped), (1, 3));
    }

    #[test]
    fn damage_loss_and_missing_ends_are_refused() {
        let good = bytes(&messages());
        let mut flipped = good.clone();
        flipped[20] ^= 0x10;
        assert!(collect(&flipped)
            .verify()
            .unwrap_err()
            .to_string()
            .contains("damaged"));
        let cut = &good[..good.len() - 10];
        assert!(collect(cut)
            .verify()
            .unwrap_err()
            .to_string()
            .contains("status"));
        let m = messages();
        let without_hello = bytes(&m[1..]);
        assert!(collect(&without_hello).verify().is_err());
        // A frame dropped in the middle shows up as a sequence gap.
        let mut enc = Encoder::new();
        let mut gapped = Vec::new();
        for (i, msg) in m.iter().enumerate() {
            let mut buf = [0u8; MAX_FRAME];
            let frame = enc.encode(msg, &mut buf).unwrap().to_vec();
            if i != 2 {
                gapped.extend(frame);
            }
        }
        assert!(collect(&gapped)
            .verify()
            .unwrap_err()
            .to_string()
            .contains("lost"));
    }
}
