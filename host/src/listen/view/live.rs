//! What the live page shows, kept between messages: the last seconds of
//! samples, the last beats, and the latest of everything else, each
//! stamped with when it changed so a message can carry only news.

use serde_json::{Map, Value};
use std::collections::VecDeque;

use super::message::{BeatMark, BoardFields, LinkCounts, Message, Point};
use crate::listen::{HelloFields, StatusFields};

/// Seconds of samples kept for a snapshot (the page's waveform).
pub const WINDOW_S: f64 = 10.0;
/// Most samples kept whatever the rate (10 s at 1000 Hz, twice over).
const MAX_POINTS: usize = 20_000;
/// Beats kept for a snapshot.
const MAX_BEATS: usize = 64;
/// Notices kept for a snapshot.
const MAX_NOTICES: usize = 8;
/// The gauges the page has a bar for, in its order.
pub const GAUGES: [&str; 6] = [
    "dc",
    "pulse_codes",
    "pulse_share",
    "clipped",
    "ambient",
    "led_drive",
];

/// A value and the clock reading when it last changed (0: never).
#[derive(Debug, Default)]
struct Stamped<T> {
    value: T,
    at: u64,
}

impl<T: Clone> Stamped<T> {
    fn newer(&self, clock: u64) -> Option<T> {
        (self.at > clock).then(|| self.value.clone())
    }
}

/// Where a connection's last message left off.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Cursor {
    clock: u64,
    samples: u64,
    beats: u64,
    notices: u64,
}

/// The page's state.
#[derive(Debug, Default)]
pub struct Live {
    clock: u64,
    rate_hz: Stamped<Option<f64>>,
    samples: VecDeque<Point>,
    samples_in: u64,
    beats: VecDeque<BeatMark>,
    beats_in: u64,
    notices: VecDeque<String>,
    notices_in: u64,
    state: Stamped<Option<&'static str>>,
    hello: Stamped<Option<HelloFields>>,
    status: Stamped<Option<StatusFields>>,
    link: Stamped<LinkCounts>,
    board: Stamped<BoardFields>,
    gauges: Stamped<Option<Value>>,
    gauges_reported: bool,
    checks: Stamped<Option<Value>>,
    advice: Stamped<Option<Value>>,
}

/// Sets `field` to `value` at a new clock reading.
macro_rules! stamp {
    ($live:expr, $field:ident, $value:expr) => {{
        $live.clock += 1;
        $live.$field.value = $value;
        $live.$field.at = $live.clock;
    }};
}

impl Live {
    /// Adds samples (record sample number, input, band-passed) at `rate_hz`.
    pub fn samples(&mut self, rate_hz: f64, points: impl IntoIterator<Item = Point>) {
        if self.rate_hz.value != Some(rate_hz) {
            stamp!(self, rate_hz, Some(rate_hz));
        }
        let span = (WINDOW_S * rate_hz).ceil() as i64;
        for p in points {
            // Record numbers only go forward; if they ever did not, the
            // old trace means nothing next to the new one.
            if self.samples.back().is_some_and(|last| last.0 >= p.0) {
                self.samples.clear();
            }
            self.samples.push_back(p);
            self.samples_in += 1;
        }
        let newest = self.samples.back().map_or(0, |p| p.0);
        while self
            .samples
            .front()
            .is_some_and(|p| p.0 <= newest - span || self.samples.len() > MAX_POINTS)
        {
            self.samples.pop_front();
        }
    }

    /// Adds a beat.
    pub fn beat(&mut self, beat: BeatMark) {
        push_capped(&mut self.beats, beat, MAX_BEATS);
        self.beats_in += 1;
    }

    /// Adds a notice.
    pub fn notice(&mut self, text: String) {
        push_capped(&mut self.notices, text, MAX_NOTICES);
        self.notices_in += 1;
    }

    /// The signal state changed.
    pub fn state(&mut self, name: &'static str) {
        stamp!(self, state, Some(name));
    }

    /// The board said hello.
    pub fn hello(&mut self, hello: HelloFields) {
        stamp!(self, hello, Some(hello));
    }

    /// A status arrived. Until a live-checks report gives the gauges, the
    /// two the status holds as they are are shown from it.
    pub fn status(&mut self, status: StatusFields) {
        if !self.gauges_reported {
            let mut g = empty_gauges();
            let has = |name| status.measured.contains(&name);
            if has("dc_level") {
                g.insert("dc".into(), number(status.dc_level));
            }
            if has("led_drive") {
                g.insert("led_drive".into(), number(status.led_drive));
            }
            if let Some(ambient) = status.ambient_level {
                g.insert("ambient".into(), number(ambient));
            }
            stamp!(self, gauges, Some(Value::Object(g)));
        }
        stamp!(self, status, Some(status));
    }

    /// The link's counters, if they changed.
    pub fn link(&mut self, link: LinkCounts) {
        if self.link.value != link {
            stamp!(self, link, link);
        }
    }

    /// Whether the board is there, if that changed.
    pub fn board(&mut self, board: BoardFields) {
        if self.board.value != board {
            stamp!(self, board, board);
        }
    }

    /// The board as it is now.
    pub fn board_now(&self) -> BoardFields {
        self.board.value.clone()
    }

    /// A live-checks report: any of `checks` (a list), `gauges` (an object
    /// by gauge name) and `advice` (a list of lines) it holds replaces
    /// what the page shows.
    pub fn report(&mut self, report: &Value) {
        if let Some(c) = report.get("checks") {
            stamp!(self, checks, Some(c.clone()));
        }
        if let Some(Value::Object(given)) = report.get("gauges") {
            let mut g = empty_gauges();
            g.extend(given.iter().map(|(k, v)| (k.clone(), v.clone())));
            self.gauges_reported = true;
            stamp!(self, gauges, Some(Value::Object(g)));
        }
        if let Some(a) = report.get("advice") {
            stamp!(self, advice, Some(a.clone()));
        }
    }

    /// Where a message built now leaves off.
    pub fn cursor(&self) -> Cursor {
        Cursor {
            clock: self.clock,
            samples: self.samples_in,
            beats: self.beats_in,
            notices: self.notices_in,
        }
    }

    /// Everything there is, for a new connection.
    pub fn snapshot(&self) -> Message {
        let oldest = self.samples.front().map(|p| p.0);
        let in_window = |b: &&BeatMark| match (b.peak, oldest) {
            (Some(peak), Some(first)) => peak as i64 >= first,
            _ => true,
        };
        Message {
            snapshot: true,
            samples: self.samples.iter().copied().collect(),
            beats: self.beats.iter().filter(in_window).cloned().collect(),
            notices: self.notices.iter().cloned().collect(),
            link: Some(self.link.value),
            board: Some(self.board.value.clone()),
            gauges: Some(
                self.gauges
                    .value
                    .clone()
                    .unwrap_or(Value::Object(empty_gauges())),
            ),
            ..self.since(&Cursor::default())
        }
    }

    /// What changed since `c`.
    pub fn since(&self, c: &Cursor) -> Message {
        Message {
            snapshot: false,
            samples: newest(&self.samples, self.samples_in - c.samples),
            rate_hz: self.rate_hz.newer(c.clock).flatten(),
            beats: newest(&self.beats, self.beats_in - c.beats),
            state: self.state.newer(c.clock).flatten(),
            hello: self.hello.newer(c.clock).flatten(),
            status: self.status.newer(c.clock).flatten(),
            gauges: self.gauges.newer(c.clock).flatten(),
            checks: self.checks.newer(c.clock).flatten(),
            advice: self.advice.newer(c.clock).flatten(),
            link: self.link.newer(c.clock),
            board: self.board.newer(c.clock),
            notices: newest(&self.notices, self.notices_in - c.notices),
        }
    }
}

fn push_capped<T>(ring: &mut VecDeque<T>, item: T, cap: usize) {
    if ring.len() == cap {
        ring.pop_front();
    }
    ring.push_back(item);
}

/// The last `n` items of `ring` (all of it when `n` is larger).
fn newest<T: Clone>(ring: &VecDeque<T>, n: u64) -> Vec<T> {
    let n = usize::try_from(n).unwrap_or(usize::MAX).min(ring.len());
    ring.iter().skip(ring.len() - n).cloned().collect()
}

fn empty_gauges() -> Map<String, Value> {
    GAUGES
        .iter()
        .map(|g| (g.to_string(), Value::Null))
        .collect()
}

/// `x` as JSON with the digits an `f32` needs (0.52, not 0.519999980926).
fn number(x: f32) -> Value {
    let shortest: f64 = x.to_string().parse().unwrap_or(f64::NAN);
    serde_json::Number::from_f64(shortest).map_or(Value::Null, Value::Number)
}
