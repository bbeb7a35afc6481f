//! The one server-sent message of the live page, field by field. Every
//! field is optional: a snapshot carries them all, a later message only
//! what changed since the one before.

use serde::Serialize;
use serde_json::Value;

use crate::listen::{HelloFields, StatusFields};

/// One sample as the page gets it: record sample number, input value,
/// band-passed value (a non-finite value travels as `null`).
pub type Point = (i64, f32, f32);

/// A beat as the page marks it.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct BeatMark {
    /// Record sample number of the peak (`None` before the record's start).
    pub peak: Option<u64>,
    /// Peak time in the record, s.
    pub time_s: Option<f64>,
    /// Instantaneous heart rate, bpm.
    pub hr_bpm: Option<f32>,
    /// The board's median (smoothed) heart rate, bpm, exactly as sent.
    pub median_hr_bpm: Option<f32>,
    /// Correlation with the running template, 0 to 1.
    pub quality: f32,
    /// `good` or `bad` (`docs/vocabulary.md`).
    pub verdict: &'static str,
}

/// The link's counters as the page shows them.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize)]
pub struct LinkCounts {
    /// Frames decoded.
    pub frames: u64,
    /// Damaged chunks (malformed or foreign frames), never fatal.
    pub damaged: u64,
    /// Frames missing by their sequence numbers.
    pub lost: u64,
    /// Of the damaged, CRC mismatches.
    pub crc_errors: u64,
}

/// Whether the board is there.
#[derive(Clone, Debug, Default, PartialEq, Eq, Serialize)]
pub struct BoardFields {
    /// The port is open.
    pub connected: bool,
    /// The port is open but nothing has decoded for a while.
    pub quiet: bool,
    /// The port as the user named it ("" before it was first opened).
    pub port: String,
}

/// One server-sent message (`data:` line) of `GET /events`.
#[derive(Clone, Debug, Default, PartialEq, Serialize)]
pub struct Message {
    /// `true` on the first message of a connection: the page starts over
    /// from what this one holds.
    #[serde(skip_serializing_if = "std::ops::Not::not")]
    pub snapshot: bool,
    /// Samples new since the last message (all kept, in a snapshot).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub samples: Vec<Point>,
    /// The session's sample rate, Hz.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub rate_hz: Option<f64>,
    /// Beats new since the last message.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub beats: Vec<BeatMark>,
    /// Signal state name (`SignalState::name`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub state: Option<&'static str>,
    /// The board's latest hello.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub hello: Option<HelloFields>,
    /// The board's latest status.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub status: Option<StatusFields>,
    /// Bring-up gauges by name ([`super::GAUGES`]); `null` for one not
    /// known. `pulse_codes` is in ADC codes, every other one a fraction
    /// (0 to 1) of the ADC's full scale or, for `led_drive`, of full drive;
    /// the page draws them as bars so.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub gauges: Option<Value>,
    /// The live checks, as their report gives them.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub checks: Option<Value>,
    /// Advice lines.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub advice: Option<Value>,
    /// The link's counters.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub link: Option<LinkCounts>,
    /// Whether the board is there.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub board: Option<BoardFields>,
    /// Notices new since the last message.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub notices: Vec<String>,
}

impl Message {
    /// The `data:` event as it goes on the wire, blank line included.
    pub fn event_text(&self) -> String {
        // Serialising these plain fields cannot fail; an empty object
        // still keeps the page's heartbeat.
        let json = serde_json::to_string(self).unwrap_or_else(|_| "{}".into());
        format!("data: {json}\n\n")
    }
}
