//! Board sample numbers to record sample numbers.
//!
//! The board numbers its samples from 0 at power-up, and every indexed
//! frame carries those numbers, so the record follows the board's clock,
//! not ours: a reconnect loses no time, and samples lost on the way leave
//! a gap at the right place. Two things move the mapping: joining a board
//! that is already running (the record starts at the first frame we see),
//! and a board restart (its numbers start again; the record goes on after
//! what it already holds).
//!
//! A restart is a step back in the board's numbers. A small one is only
//! taken for a restart right after a hello or a reopened port, where a
//! restart is to be expected (a replugged board boots, and its hello may
//! have gone by before the port reopened); elsewhere it takes a step back
//! of [`LONG_SLACK_S`], so frames sent a little out of order never split
//! the record.

use plethwire_dsp::wire::SAMPLES_PER_BLOCK;

/// How far a board's "now" may step back between frames before, after a
/// hello or a reopen, we take it for a restart. A sample block goes out
/// when full, so its first sample may precede a beat sent just before it
/// by up to a block; two blocks leave room for a queue.
pub const RESTART_SLACK: u64 = 2 * SAMPLES_PER_BLOCK as u64;

/// A step back this long (seconds) is a restart anywhere.
pub const LONG_SLACK_S: f64 = 10.0;

/// [`LONG_SLACK_S`] in samples until the rate is known (10 s at 250 Hz).
const LONG_SLACK_DEFAULT: u64 = 2500;

/// The mapping `record = board + offset`, with restart detection.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Timeline {
    offset: Option<i64>,
    max_now: Option<u64>,
    next_free: u64,
    fresh: bool,
    long_slack: u64,
}

impl Default for Timeline {
    fn default() -> Self {
        Self {
            offset: None,
            max_now: None,
            next_free: 0,
            fresh: false,
            long_slack: LONG_SLACK_DEFAULT,
        }
    }
}

impl Timeline {
    /// Nothing seen yet.
    pub fn new() -> Self {
        Self::default()
    }

    /// The sample rate, once known, sets the long slack.
    pub fn set_rate(&mut self, hz: f64) {
        if hz.is_finite() && hz > 0.0 {
            self.long_slack = (LONG_SLACK_S * hz).ceil() as u64;
        }
    }

    /// A hello. Before any indexed frame it means the board has just
    /// started: its sample 0 is the record's sample 0. Later, it may be
    /// a restarted board's.
    pub fn hello(&mut self) {
        if self.offset.is_none() {
            self.offset = Some(0);
        }
        self.fresh = true;
    }

    /// The port was reopened: the board may have restarted meanwhile.
    pub fn reopened(&mut self) {
        self.fresh = true;
    }

    /// An indexed frame whose board sample numbers run from `anchor` (first
    /// sample of a block, or the sample an event was decided at) to `now`
    /// (last sample it covers). Returns the record sample where a new run
    /// of the board begins, if this frame shows a restart.
    pub fn frame(&mut self, anchor: u64, now: u64) -> Option<u64> {
        let slack = if self.fresh {
            RESTART_SLACK
        } else {
            self.long_slack
        };
        self.fresh = false;
        let mut restart = None;
        match (self.offset, self.max_now) {
            // Joined a running board: its present is our start.
            (None, _) => self.offset = Some(-to_i64(anchor)),
            (Some(_), Some(max)) if anchor.saturating_add(slack) < max => {
                self.offset = Some(to_i64(self.next_free) - to_i64(anchor));
                self.max_now = None;
                restart = Some(self.next_free);
            }
            _ => {}
        }
        self.max_now = Some(self.max_now.map_or(now, |m| m.max(now)));
        if let Some(end) = self.record(now) {
            self.next_free = self.next_free.max(end + 1);
        }
        restart
    }

    /// Record sample number of board sample `board`, possibly negative
    /// (before the record).
    pub fn map(&self, board: u64) -> i64 {
        to_i64(board).saturating_add(self.offset.unwrap_or(0))
    }

    /// Record sample number of board sample `board`, if inside the record.
    pub fn record(&self, board: u64) -> Option<u64> {
        u64::try_from(self.map(board)).ok()
    }
}

fn to_i64(v: u64) -> i64 {
    i64::try_from(v).unwrap_or(i64::MAX)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_board_seen_from_its_hello_maps_one_to_one() {
        let mut t = Timeline::new();
        t.hello();
        assert_eq!(t.frame(0, 15), None);
        assert_eq!(t.frame(40, 40), None);
        // A block that starts before the beat just sent is no restart.
        assert_eq!(t.frame(16, 31), None);
        assert_eq!(t.record(31), Some(31));
    }

    #[test]
    fn joining_late_starts_the_record_at_the_first_frame() {
        let mut t = Timeline::new();
        assert_eq!(t.frame(1000, 1015), None);
        assert_eq!(t.record(1000), Some(0));
        assert_eq!(t.record(999), None);
        assert_eq!(t.map(990), -10);
    }

    #[test]
    fn a_restart_continues_after_the_record() {
        let mut t = Timeline::new();
        t.hello();
        t.frame(0, 15);
        t.frame(16, 31);
        t.frame(400, 400);
        // Out of order without a hello: no restart.
        assert_eq!(t.frame(300, 300), None);
        // The board starts over at 0 with a hello: the record goes on at 401.
        t.hello();
        assert_eq!(t.frame(0, 15), Some(401));
        assert_eq!(t.record(0), Some(401));
        assert_eq!(t.record(15), Some(416));
        // Within the new run, the usual slack applies again.
        assert_eq!(t.frame(16, 31), None);
        assert_eq!(t.frame(10, 10), None);
        assert_eq!(t.record(16), Some(417));
    }

    #[test]
    fn a_small_step_back_is_a_restart_only_after_a_reopen() {
        let mut t = Timeline::new();
        t.hello();
        t.frame(100, 100);
        t.reopened();
        assert_eq!(t.frame(100 - RESTART_SLACK, 100), None);
        t.reopened();
        assert_eq!(t.frame(100 - RESTART_SLACK - 1, 100), Some(101));
    }

    #[test]
    fn a_long_step_back_is_a_restart_anywhere() {
        let mut t = Timeline::new();
        t.set_rate(100.0);
        t.hello();
        t.frame(5000, 5000);
        assert_eq!(t.frame(4000, 4000), None);
        assert_eq!(t.frame(5000 - 1000, 5000), None);
        assert_eq!(t.frame(5000 - 1001, 5000), Some(5001));
    }
}
