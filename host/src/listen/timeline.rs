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
//!
//! Sample numbers come off the wire, so a frame that passed its CRC by
//! chance, or a board with a bug, can carry any number. A board cannot
//! count faster than its clock: a frame further ahead than the time since
//! the last placed frame explains ([`Timeline::reach`]) or than
//! [`MAX_GAP_S`] does not [`Timeline::fit`]. Neither does a step back.
//! After a hello or a reopen such a frame starts a new run at once; elsewhere
//! the session holds it until the next frame shows whether the numbering
//! really went on from there, and drops it if not (see `super::session`).

use plethwire_dsp::wire::SAMPLES_PER_BLOCK;
use std::time::Duration;

/// How far a board's "now" may step back between frames before, after a
/// hello or a reopen, we take it for a restart. A sample block goes out
/// when full, so its first sample may precede a beat sent just before it
/// by up to a block; two blocks leave room for a queue.
pub const RESTART_SLACK: u64 = 2 * SAMPLES_PER_BLOCK as u64;

/// A step back this long (seconds) is a restart anywhere; also the room
/// a frame gets ahead of what the clocks explain (queues on the board and
/// in the PC's serial buffers, blocks sent when full).
pub const LONG_SLACK_S: f64 = 10.0;

/// The longest gap (seconds) in the board's numbers filled with invalid
/// samples; a real gap this long (the port away, a laptop asleep) goes on
/// as a new run after the record's end instead. One hour fills at most
/// 14.4 MB at 1000 Hz, the pipeline's fastest rate (4 bytes a frame), and
/// is longer than any wait for a replugged port the command offers by
/// default (30 s); a day, as before, let one bad frame write 345 MB.
pub const MAX_GAP_S: f64 = 3600.0;

/// The board's clock may run this much faster than the PC's. Crystals are
/// off by tens of ppm, on-chip RC oscillators by 1 to 2 % (common practice).
const CLOCK_MARGIN: f64 = 1.05;

/// The pipeline's fastest sample rate, for reach before the rate is known.
pub(crate) const FASTEST_HZ: f64 = 1000.0;

/// [`LONG_SLACK_S`] in samples until the rate is known (10 s at 250 Hz).
const LONG_SLACK_DEFAULT: u64 = 2500;

/// The mapping `record = board + offset`, with restart detection.
#[derive(Clone, Debug, PartialEq)]
pub struct Timeline {
    offset: Option<i64>,
    max_now: Option<u64>,
    next_free: u64,
    fresh: bool,
    long_slack: u64,
    rate: Option<f64>,
}

impl Default for Timeline {
    fn default() -> Self {
        Self {
            offset: None,
            max_now: None,
            next_free: 0,
            fresh: false,
            long_slack: LONG_SLACK_DEFAULT,
            rate: None,
        }
    }
}

impl Timeline {
    /// Nothing seen yet.
    pub fn new() -> Self {
        Self::default()
    }

    /// The sample rate, once known, sets the long slack and the reach.
    pub fn set_rate(&mut self, hz: f64) {
        if hz.is_finite() && hz > 0.0 {
            self.long_slack = (LONG_SLACK_S * hz).ceil() as u64;
            self.rate = Some(hz);
        }
    }

    /// A hello. Before any indexed frame it means the board has just
    /// started: its sample 0 is the record's sample 0, and its numbers
    /// are near 0. Later, it may be a restarted board's.
    pub fn hello(&mut self) {
        if self.offset.is_none() {
            self.offset = Some(0);
            self.max_now = Some(0);
        }
        self.fresh = true;
    }

    /// The port was reopened: the board may have restarted meanwhile.
    pub fn reopened(&mut self) {
        self.fresh = true;
    }

    /// [`LONG_SLACK_S`] in samples.
    pub fn long_slack(&self) -> u64 {
        self.long_slack
    }

    /// The board's latest sample number placed, if any since the last
    /// new run.
    pub fn latest(&self) -> Option<u64> {
        self.max_now
    }

    /// Whether a hello or a reopen came since the last placed frame.
    pub fn fresh(&self) -> bool {
        self.fresh
    }

    /// How many samples past its latest the board can have got in
    /// `elapsed` (PC time since the last placed frame): its rate (or the
    /// fastest) with `CLOCK_MARGIN`, plus `LONG_SLACK_S`.
    pub fn reach(&self, elapsed: Duration) -> u64 {
        let hz = self.rate.unwrap_or(FASTEST_HZ);
        let counted = (elapsed.as_secs_f64() * hz * CLOCK_MARGIN).ceil();
        // The float cast saturates; the sum must not wrap.
        (counted as u64).saturating_add(self.long_slack)
    }

    fn max_gap(&self) -> u64 {
        (MAX_GAP_S * self.rate.unwrap_or(FASTEST_HZ)).ceil() as u64
    }

    /// Whether a frame covering board samples `anchor` (first sample of a
    /// block, or the sample an event was decided at) to `now` (last sample
    /// it covers) goes on from what came before: no step back, and no
    /// further ahead than `reach` or [`MAX_GAP_S`].
    pub fn fit(&self, anchor: u64, now: u64, reach: u64) -> bool {
        let Some(max) = self.max_now else {
            return true;
        };
        let slack = if self.fresh {
            RESTART_SLACK
        } else {
            self.long_slack
        };
        let back = anchor.saturating_add(slack) < max;
        let ahead = now > max.saturating_add(reach.min(self.max_gap()));
        !(back || ahead)
    }

    /// Whether the frame `anchor..=now` goes on from an earlier one that
    /// did not fit, ending at `held_now`: the two agree on a numbering.
    pub fn follows(&self, held_now: u64, anchor: u64, now: u64, reach: u64) -> bool {
        anchor.saturating_add(self.long_slack) >= held_now
            && now <= held_now.saturating_add(reach.min(self.max_gap()))
    }

    /// Place a frame that [`Timeline::fit`] (joining a running board if it
    /// is the first).
    pub fn place(&mut self, anchor: u64, now: u64) {
        if self.offset.is_none() {
            // Joined a running board: its present is our start.
            self.offset = Some(-to_i64(anchor));
        }
        self.advance(now);
    }

    /// A new run of the board's numbers begins with the frame
    /// `anchor..=now`: the record goes on after what it holds. Returns the
    /// record sample where the run begins.
    pub fn new_run(&mut self, anchor: u64, now: u64) -> u64 {
        self.offset = Some(to_i64(self.next_free) - to_i64(anchor));
        self.max_now = None;
        let start = self.next_free;
        self.advance(now);
        start
    }

    fn advance(&mut self, now: u64) {
        self.fresh = false;
        self.max_now = Some(self.max_now.map_or(now, |m| m.max(now)));
        if let Some(end) = self.record(now) {
            self.next_free = self.next_free.max(end.saturating_add(1));
        }
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

    /// A reach for frames that arrive together.
    const NEAR: u64 = 1000;

    /// What the session does with a frame, without holding any: `None`
    /// placed, `Some(start)` a new run, panics when it does not fit.
    fn frame(t: &mut Timeline, anchor: u64, now: u64) -> Option<u64> {
        if t.fit(anchor, now, NEAR) {
            t.place(anchor, now);
            None
        } else {
            assert!(t.fresh(), "{anchor}..{now} does not fit");
            Some(t.new_run(anchor, now))
        }
    }

    #[test]
    fn a_board_seen_from_its_hello_maps_one_to_one() {
        let mut t = Timeline::new();
        t.hello();
        assert_eq!(frame(&mut t, 0, 15), None);
        assert_eq!(frame(&mut t, 40, 40), None);
        // A block that starts before the beat just sent is no restart.
        assert_eq!(frame(&mut t, 16, 31), None);
        assert_eq!(t.record(31), Some(31));
    }

    #[test]
    fn joining_late_starts_the_record_at_the_first_frame() {
        let mut t = Timeline::new();
        assert_eq!(frame(&mut t, 1000, 1015), None);
        assert_eq!(t.record(1000), Some(0));
        assert_eq!(t.record(999), None);
        assert_eq!(t.map(990), -10);
        // After a hello, numbers far from 0 are a board joined late too.
        let mut t = Timeline::new();
        t.hello();
        assert_eq!(frame(&mut t, 90_000, 90_015), Some(0));
        assert_eq!(t.record(90_015), Some(15));
    }

    #[test]
    fn a_restart_continues_after_the_record() {
        let mut t = Timeline::new();
        t.hello();
        frame(&mut t, 0, 15);
        frame(&mut t, 16, 31);
        frame(&mut t, 400, 400);
        // Out of order without a hello: it fits.
        assert_eq!(frame(&mut t, 300, 300), None);
        // The board starts over at 0 with a hello: the record goes on at 401.
        t.hello();
        assert_eq!(frame(&mut t, 0, 15), Some(401));
        assert_eq!(t.record(0), Some(401));
        assert_eq!(t.record(15), Some(416));
        // Within the new run, the usual slack applies again.
        assert_eq!(frame(&mut t, 16, 31), None);
        assert_eq!(frame(&mut t, 10, 10), None);
        assert_eq!(t.record(16), Some(417));
    }

    #[test]
    fn a_small_step_back_breaks_the_numbering_only_after_a_reopen() {
        let mut t = Timeline::new();
        t.hello();
        frame(&mut t, 100, 100);
        t.reopened();
        assert_eq!(frame(&mut t, 100 - RESTART_SLACK, 100), None);
        t.reopened();
        assert_eq!(frame(&mut t, 100 - RESTART_SLACK - 1, 100), Some(101));
    }

    #[test]
    fn a_long_step_back_or_a_jump_does_not_fit() {
        let mut t = Timeline::new();
        t.set_rate(100.0);
        // Joined at 5000: the record starts there.
        frame(&mut t, 5000, 5000);
        assert!(t.fit(4000, 4000, NEAR));
        assert!(t.fit(5000 - 1000, 5000, NEAR));
        assert!(!t.fit(5000 - 1001, 5000, NEAR));
        // Ahead: as far as the reach, never past the longest gap.
        assert!(t.fit(5000 + NEAR, 5000 + NEAR, NEAR));
        assert!(!t.fit(5001 + NEAR, 5001 + NEAR, NEAR));
        assert!(t.fit(365_000, 365_000, u64::MAX));
        assert!(!t.fit(365_001, 365_001, u64::MAX));
        assert!(!t.fit(1 << 62, 1 << 62, u64::MAX));
        // Two frames that agree on a new numbering.
        assert!(t.follows(1 << 40, (1 << 40) + 1, (1 << 40) + 16, NEAR));
        assert!(!t.follows(1 << 40, 5016, 5031, NEAR));
        assert_eq!(t.new_run(1 << 40, 1 << 40), 1);
        assert_eq!(t.record(1 << 40), Some(1));
    }

    #[test]
    fn reach_follows_the_clock_and_never_wraps() {
        let mut t = Timeline::new();
        assert_eq!(t.reach(Duration::ZERO), 2500);
        t.set_rate(250.0);
        assert_eq!(t.reach(Duration::from_secs(60)), 2500 + 15_750);
        assert_eq!(t.reach(Duration::MAX), u64::MAX);
    }
}
