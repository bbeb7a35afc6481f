//! What a listening session reports, one value per thing worth a line.

use plethwire_dsp::pipeline::{BeatEvent, StateEvent};
use plethwire_dsp::wire::{DecodeStats, Hello, SampleBlock, Status};
use std::time::Duration;

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

/// Where events go: the screen, the recorder, a test's list.
pub trait Sink {
    /// Take one event; an error ends the session.
    fn event(&mut self, event: &Event) -> std::io::Result<()>;
}

impl Sink for Vec<Event> {
    fn event(&mut self, event: &Event) -> std::io::Result<()> {
        self.push(event.clone());
        Ok(())
    }
}
