//! Bytes in, events out: the decoder, the board-to-record timeline and the
//! session's counts, with no port and no files attached.

use plethwire_dsp::wire::{
    DecodeStats, Decoder, Frame, FrameError, Hello, Message, Refusal, SampleBlock, Status,
    FORMAT_VERSION,
};
use std::io;
use std::time::{Duration, Instant, SystemTime};

use super::event::{BeatSeen, Counts, Event, Progress, Sink, StateSeen};
use super::timeline::Timeline;
use admit::Held;

mod admit;

/// Silence on an open port after which we say so (once per silence).
pub const QUIET_AFTER: Duration = Duration::from_secs(5);
/// Changed link counters are reported at most this often, so a burst of
/// line noise is one line, not hundreds.
pub const LINK_EVERY: Duration = Duration::from_secs(1);

/// The decoding half of a listening session.
#[derive(Clone, Debug)]
pub struct Session {
    decoder: Decoder,
    timeline: Timeline,
    fallback_rate: Option<f64>,
    rate: Option<f64>,
    rate_in_doubt: bool,
    told_no_rate: bool,
    hello: Option<Hello>,
    counts: Counts,
    first_frame: Option<SystemTime>,
    last_frame: Option<SystemTime>,
    reported: DecodeStats,
    reported_at: Option<Instant>,
    last_good: Option<Instant>,
    told_quiet: bool,
    last_status: Option<Status>,
    /// When the last indexed frame was placed (or the first hello came),
    /// on both clocks: the monotonic one stops while a laptop sleeps.
    placed_at: Option<(Instant, SystemTime)>,
    held: Option<Held>,
    told_implausible: bool,
    /// The foreign wire format version last told about.
    told_foreign: Option<u8>,
}

impl Session {
    /// A new session; `fallback_rate` (Hz) is used when samples or events
    /// arrive before any hello.
    pub fn new(fallback_rate: Option<f64>) -> Self {
        Self {
            decoder: Decoder::new(),
            timeline: Timeline::new(),
            fallback_rate,
            rate: None,
            rate_in_doubt: false,
            told_no_rate: false,
            hello: None,
            counts: Counts::default(),
            first_frame: None,
            last_frame: None,
            reported: DecodeStats::default(),
            reported_at: None,
            last_good: None,
            told_quiet: false,
            last_status: None,
            placed_at: None,
            held: None,
            told_implausible: false,
            told_foreign: None,
        }
    }

    /// The port was (re)opened: drop any half frame and the sequence
    /// history, and start the silence clock.
    pub fn opened(&mut self, now: Instant) {
        self.counts.opens += 1;
        self.decoder.resync();
        self.timeline.reopened();
        self.last_good = Some(now);
        self.told_quiet = false;
    }

    /// The port went away.
    pub fn lost(&mut self) {
        self.counts.losses += 1;
    }

    /// Decode `bytes` and report what they held.
    pub fn feed(&mut self, bytes: &[u8], now: Instant, sink: &mut dyn Sink) -> io::Result<()> {
        for &b in bytes {
            match self.decoder.push(b) {
                Some(Ok(frame)) => {
                    self.last_good = Some(now);
                    self.told_quiet = false;
                    self.frame(frame, now, sink)?;
                }
                Some(Err(FrameError::Refused(Refusal::Version))) => self.foreign(sink)?,
                _ => {}
            }
        }
        // Bytes that never decode (a wrong baud rate) are silence too.
        self.idle(now, sink)
    }

    /// Nothing arrived for a moment: report silence and pending counters.
    pub fn idle(&mut self, now: Instant, sink: &mut dyn Sink) -> io::Result<()> {
        if let Some(since) = self.last_good {
            let quiet = now.saturating_duration_since(since);
            if quiet >= QUIET_AFTER && !self.told_quiet {
                self.told_quiet = true;
                sink.event(&Event::Quiet { for_time: quiet })?;
            }
        }
        self.report_link(now, sink)
    }

    /// The decoder's counters; frames refused for implausible sample
    /// numbers are among the damaged.
    pub fn stats(&self) -> DecodeStats {
        let mut s = self.decoder.stats();
        s.damaged += self.counts.implausible;
        s
    }

    /// What the session has seen so far.
    pub fn progress(&self) -> Progress {
        Progress {
            counts: self.counts,
            link: self.stats(),
            hello: self.hello,
            last_status: self.last_status,
            first_frame: self.first_frame,
            last_frame: self.last_frame,
        }
    }

    /// The latest hello, if any.
    pub fn hello(&self) -> Option<&Hello> {
        self.hello.as_ref()
    }

    /// The record's sample rate, once known.
    pub fn rate(&self) -> Option<f64> {
        self.rate
    }

    /// The latest status, if any.
    pub fn last_status(&self) -> Option<&Status> {
        self.last_status.as_ref()
    }

    /// Frame counts.
    pub fn counts(&self) -> Counts {
        self.counts
    }

    /// Wall-clock times of the first and last good frame.
    pub fn frame_times(&self) -> (Option<SystemTime>, Option<SystemTime>) {
        (self.first_frame, self.last_frame)
    }

    /// A frame of another wire format version (counted as damaged by the
    /// decoder): say so once per version, in words that say what to do.
    fn foreign(&mut self, sink: &mut dyn Sink) -> io::Result<()> {
        let Some(v) = self.decoder.stats().last_foreign_version else {
            return Ok(());
        };
        if self.told_foreign == Some(v) {
            return Ok(());
        }
        self.told_foreign = Some(v);
        sink.event(&Event::Notice(foreign_version_message(v)))
    }

    fn report_link(&mut self, now: Instant, sink: &mut dyn Sink) -> io::Result<()> {
        let stats = self.stats();
        let changed = stats.damaged != self.reported.damaged
            || stats.lost_frames != self.reported.lost_frames;
        let due = self
            .reported_at
            .is_none_or(|t| now.saturating_duration_since(t) >= LINK_EVERY);
        if changed && due {
            self.reported = stats;
            self.reported_at = Some(now);
            sink.event(&Event::Link(stats))?;
        }
        Ok(())
    }

    /// Samples and events need a rate from the first indexed frame on.
    fn settle_rate(&mut self) {
        if self.rate.is_none() {
            self.rate = self.fallback_rate;
            if let Some(r) = self.rate {
                self.timeline.set_rate(r);
            }
        }
    }

    fn seconds(&self, sample: Option<u64>) -> Option<f64> {
        Some(sample? as f64 / self.rate?)
    }

    fn frame(&mut self, frame: Frame, t: Instant, sink: &mut dyn Sink) -> io::Result<()> {
        let wall = SystemTime::now();
        self.first_frame.get_or_insert(wall);
        self.last_frame = Some(wall);
        match frame.message {
            Message::Hello(h) => self.on_hello(h, t, sink),
            Message::Status(status) => {
                self.counts.statuses += 1;
                self.last_status = Some(status);
                self.reported = self.stats();
                sink.event(&Event::Status {
                    status,
                    link: self.reported,
                })
            }
            Message::Beat(_) => {
                self.counts.beats += 1;
                self.indexed(frame, t, sink)
            }
            Message::State(_) => {
                self.counts.states += 1;
                self.indexed(frame, t, sink)
            }
            Message::Samples(_) => {
                self.counts.sample_blocks += 1;
                self.indexed(frame, t, sink)
            }
        }
    }

    /// An indexed frame placed in the record: say what it holds.
    fn placed(&mut self, frame: Frame, t: Instant, sink: &mut dyn Sink) -> io::Result<()> {
        self.placed_at = Some((t, SystemTime::now()));
        match frame.message {
            Message::Beat(beat) => {
                let peak = self.timeline.record(beat.peak_index);
                sink.event(&Event::Beat(BeatSeen {
                    beat,
                    peak,
                    time_s: self.seconds(peak),
                }))
            }
            Message::State(change) => {
                let sample = self.timeline.record(change.at);
                sink.event(&Event::State(StateSeen {
                    change,
                    sample,
                    time_s: self.seconds(sample),
                }))
            }
            Message::Samples(block) => self.samples(block, sink),
            Message::Hello(_) | Message::Status(_) => Ok(()),
        }
    }

    fn samples(&mut self, block: SampleBlock, sink: &mut dyn Sink) -> io::Result<()> {
        match self.rate.filter(|_| !self.rate_in_doubt) {
            Some(rate_hz) => sink.event(&Event::Samples {
                start: self.timeline.map(block.first_index),
                block,
                rate_hz,
            }),
            None => {
                self.counts.samples_unrecorded += u64::from(block.count);
                if self.told_no_rate || self.rate_in_doubt {
                    return Ok(());
                }
                self.told_no_rate = true;
                sink.event(&Event::Notice(
                    "samples arrive, but no hello has told their rate: they are not \
                     recorded (give --rate to record them)"
                        .into(),
                ))
            }
        }
    }

    fn on_hello(&mut self, h: Hello, t: Instant, sink: &mut dyn Sink) -> io::Result<()> {
        self.counts.hellos += 1;
        self.timeline.hello();
        // A board that has just said hello counts from about now.
        self.placed_at.get_or_insert((t, SystemTime::now()));
        self.hello = Some(h);
        sink.event(&Event::Hello(h))?;
        let said = f64::from(h.sample_rate_hz);
        if !(said.is_finite() && said > 0.0) {
            return sink.event(&Event::Notice(format!(
                "the board gives a sample rate of {said} Hz, which cannot be used"
            )));
        }
        match self.rate {
            None => {
                self.rate = Some(said);
                self.timeline.set_rate(said);
            }
            Some(r) if r != said && !self.rate_in_doubt => {
                // One record has one rate; samples at another would be
                // placed at the wrong times.
                self.rate_in_doubt = true;
                return sink.event(&Event::Notice(format!(
                    "the board now says {said} Hz, the record is at {r} Hz: \
                     samples are no longer recorded"
                )));
            }
            Some(_) => {}
        }
        Ok(())
    }
}

/// What to tell a user whose board speaks wire format `version`.
pub fn foreign_version_message(version: u8) -> String {
    let update = if version < FORMAT_VERSION {
        "update the board's firmware"
    } else {
        "update plethwire"
    };
    format!(
        "the board speaks wire format version {version}; this plethwire reads version \
         {FORMAT_VERSION}: {update}"
    )
}
