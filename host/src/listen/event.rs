//! What a listening session reports, one value per thing worth a line.

use plethwire_dsp::pipeline::{BeatEvent, StateEvent};
use plethwire_dsp::wire::{DecodeStats, Hello, SampleBlock, Status};
use serde::Serialize;
use std::time::{Duration, Instant, SystemTime};

/// One thing that happened while listening.
#[derive(Clone, Debug, PartialEq)]
pub enum Event {
    /// The port was opened; `again_after` is how long it was away when
    /// this is a reconnect.
    Opened {
        /// The port as the user named it.
        port: String,
        /// Time since it went away, for a reconnect.
        again_after: Option<Duration>,
    },
    /// The port went away (read error, hang-up); reopening follows.
    Lost {
        /// The port as the user named it.
        port: String,
        /// What the system said.
        reason: String,
    },
    /// Nothing has decoded for a while although the port is open.
    Quiet {
        /// Time since the last good frame (or since the port opened).
        for_time: Duration,
    },
    /// Something the user should know that is none of the above.
    Notice(String),
    /// The board said who it is and how its pipeline is set up.
    Hello(Hello),
    /// A beat.
    Beat(BeatSeen),
    /// A change of signal state.
    State(StateSeen),
    /// The board's health counters, with the link's at the same moment.
    Status {
        /// As the board sent it.
        status: Status,
        /// The decoder's counters when it arrived.
        link: DecodeStats,
    },
    /// Samples to record (only sent once the sample rate is known).
    Samples {
        /// Record sample number of the block's first sample (negative
        /// when the block starts before the record does).
        start: i64,
        /// The block as the board sent it.
        block: SampleBlock,
        /// The session's sample rate, Hz.
        rate_hz: f64,
    },
    /// The decoder's counters changed (damaged or lost frames).
    Link(DecodeStats),
    /// The board's sample numbers started again: it was restarted. The
    /// record goes on at `sample`.
    Restart {
        /// Record sample number where the new run of the board begins.
        sample: u64,
    },
}

/// A beat with its place in the record.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct BeatSeen {
    /// The beat as the board sent it (board sample numbers).
    pub beat: BeatEvent,
    /// Record sample number of the peak; `None` when the peak lies before
    /// the record's first sample.
    pub peak: Option<u64>,
    /// Peak time in the record, seconds, when the sample rate is known.
    pub time_s: Option<f64>,
}

/// A change of signal state with its place in the record.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct StateSeen {
    /// The change as the board sent it.
    pub change: StateEvent,
    /// Record sample number at which it was decided, if inside the record.
    pub sample: Option<u64>,
    /// Its time in the record, seconds, when the sample rate is known.
    pub time_s: Option<f64>,
}

/// What a session has seen, for the summary.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize)]
pub struct Counts {
    /// Hello frames.
    pub hellos: u64,
    /// Beat frames.
    pub beats: u64,
    /// State frames.
    pub states: u64,
    /// Status frames.
    pub statuses: u64,
    /// Sample frames.
    pub sample_blocks: u64,
    /// Samples that arrived while the sample rate was unknown or in doubt,
    /// so were not recorded.
    pub samples_unrecorded: u64,
    /// Board restarts seen in its sample numbers.
    pub restarts: u64,
    /// Times the port was opened.
    pub opens: u64,
    /// Times it went away.
    pub losses: u64,
    /// Frames that decoded but whose sample numbers jump where no board
    /// could have got to (counted as damaged too), not used.
    pub implausible: u64,
}

/// What a session has seen so far, for a summary written as it goes.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Progress {
    /// Frame counts.
    pub counts: Counts,
    /// The link's counters; frames refused for implausible sample numbers
    /// are among the damaged.
    pub link: DecodeStats,
    /// The latest hello.
    pub hello: Option<Hello>,
    /// The latest status.
    pub last_status: Option<Status>,
    /// Wall-clock time of the first good frame.
    pub first_frame: Option<SystemTime>,
    /// Wall-clock time of the last good frame.
    pub last_frame: Option<SystemTime>,
}

/// Where events go: the screen, the recorder, a test's list.
pub trait Sink {
    /// Take one event; an error ends the session.
    fn event(&mut self, event: &Event) -> std::io::Result<()>;

    /// Called after every read or read timeout (a few times a second),
    /// so files can be brought up to date while nothing arrives; an error
    /// ends the session.
    fn tick(&mut self, now: Instant, progress: &Progress) -> std::io::Result<()> {
        let _ = (now, progress);
        Ok(())
    }
}

impl Sink for Vec<Event> {
    fn event(&mut self, event: &Event) -> std::io::Result<()> {
        self.push(event.clone());
        Ok(())
    }
}
