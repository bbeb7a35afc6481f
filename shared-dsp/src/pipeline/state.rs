//! The signal's condition, decided from beats, clipping and silence, with
//! hysteresis so it does not flicker.

use super::events::{SignalState, StateEvent};
use crate::math::{max_f32, min_f32};

/// Clipped share of the last [`CLIP_WINDOW_S`] above which the signal is
/// saturated (common practice: a front end at its rails most of the time
/// needs less LED drive or gain).
pub const SATURATED_SHARE: f32 = 0.3;
/// Window for the clipped share, seconds.
pub const CLIP_WINDOW_S: f32 = 2.0;
/// No beat for this long (or 2.5 recent intervals, if longer) means no
/// signal, seconds.
pub const SILENCE_S: f32 = 3.0;
/// …or for this many recent intervals, if longer (a slow pulse is not
/// silence).
pub const SILENCE_INTERVALS: f32 = 2.5;
/// Of the last [`JUDGED_BEATS`] beats, at least this many bad ones make the
/// signal noisy.
pub const NOISY_BAD_BEATS: u32 = 3;
/// Beats judged for noisiness.
pub const JUDGED_BEATS: u32 = 5;
/// Consecutive good beats needed to declare the signal good.
pub const GOOD_RUN: u32 = 3;

/// `Monitor::silence_for` when there is no median interval: the bits of
/// a NaN, which no median of intervals is.
const NO_MEDIAN: u32 = u32::MAX;

/// State machine over the signal's condition.
#[derive(Clone, Copy, Debug)]
pub struct Monitor {
    state: SignalState,
    clip_share: f32,
    // `clip_share > SATURATED_SHARE`, kept where the share changes (most
    // blocks leave it at 0).
    saturated: bool,
    clip_alpha: f32,
    // A share below this is taken as 0. Any clipped block adds at least
    // about `clip_alpha` (its weight times a share of at least one sample
    // in the block, or the share itself when the weight is 1), and a share
    // below 2⁻²⁵ of what is added is lost in its rounding (half an ulp):
    // the sum, and so every later share, is bit for bit what it would be
    // from 0. Far below that, at `clip_alpha`·10⁻⁹, a decaying share stops
    // costing work some 20 s in, not after minutes of underflow to 0.
    clip_floor: f32,
    // The block length the share's weight was last worked out for, and
    // that weight (`min(clip_alpha · samples, 1)`): blocks keep one length.
    alpha_samples: u32,
    block_alpha: f32,
    fs: f32,
    // Input index of the last beat (0 before the first: the silence then
    // counts from the start), and the index after which, without another
    // beat, the signal is silent (`last_beat + silence_after`, kept so the
    // per-block test is one comparison).
    last_beat: u64,
    silent_after: u64,
    recent: u8,
    // Bad beats among the last JUDGED_BEATS, kept with `recent`.
    bad: u32,
    judged: u32,
    good_run: u32,
    // The silence limit in samples and the median interval (bits, or
    // `NO_MEDIAN`) it was worked out for: the median changes once per
    // beat, the check runs every block.
    silence_for: u32,
    // Whole samples: `since > silence_after` is the same test as against
    // the exact limit, without converting `since` on every call.
    silence_after: u64,
    // The input index from which the state is decided again. The decision
    // depends on saturation, silence, the beat counts and the state only,
    // and taking it again on the same ones changes nothing (a state it
    // reached, and the good run it cleared, give that state again); so it
    // is taken only when one of them may have moved: 0 after a beat, a new
    // silence limit or a change of saturation, else the first index of
    // silence (never, when silent already: only a beat or a new limit ends
    // it). One comparison per block.
    decide_at: u64,
}

impl Monitor {
    /// A monitor for input at `fs_hz`.
    pub fn new(fs_hz: f32) -> Self {
        Self {
            state: SignalState::Acquiring,
            clip_share: 0.0,
            saturated: false,
            clip_alpha: 1.0 / (CLIP_WINDOW_S * fs_hz),
            clip_floor: 1e-9 / (CLIP_WINDOW_S * fs_hz),
            alpha_samples: 0,
            block_alpha: 0.0,
            fs: fs_hz,
            last_beat: 0,
            silent_after: libm::floorf(SILENCE_S * fs_hz) as u64,
            recent: 0,
            bad: 0,
            judged: 0,
            good_run: 0,
            silence_for: NO_MEDIAN,
            silence_after: libm::floorf(SILENCE_S * fs_hz) as u64,
            decide_at: 0,
        }
    }

    /// The recent median interval, after every change of it (a beat, a
    /// restart): the silence limit follows it. Told when it changes, not
    /// read on every block, so a block does no work for it.
    #[inline]
    pub fn median(&mut self, median_ibi_ms: Option<f32>) {
        let key = median_ibi_ms.map_or(NO_MEDIAN, f32::to_bits);
        if key != self.silence_for {
            self.new_median(median_ibi_ms, key);
        }
    }

    /// The median interval changed (its bits `key`).
    // Once per beat at most: kept out of the per-block path's code.
    #[cold]
    #[inline(never)]
    fn new_median(&mut self, median_ibi_ms: Option<f32>, key: u32) {
        let silence_s = median_ibi_ms.map_or(SILENCE_S, |m| {
            max_f32(SILENCE_INTERVALS * m / 1000.0, SILENCE_S)
        });
        self.silence_after = libm::floorf(silence_s * self.fs) as u64;
        self.silent_after = self.last_beat + self.silence_after;
        self.silence_for = key;
        self.decide_at = 0;
    }

    /// The current state.
    pub fn state(&self) -> SignalState {
        self.state
    }

    /// Record a beat at input index `at`.
    pub fn beat(&mut self, at: u64, good: bool) {
        self.last_beat = at;
        self.silent_after = at + self.silence_after;
        self.recent = (self.recent << 1) | u8::from(!good);
        let mask = (1u8 << JUDGED_BEATS) - 1;
        self.bad = (self.recent & mask).count_ones();
        self.judged = (self.judged + 1).min(JUDGED_BEATS);
        self.good_run = if good { self.good_run + 1 } else { 0 };
        self.decide_at = 0;
    }

    /// Update once per block of `samples` input samples ending at input
    /// index `n`, `clipped` of them at the rails; report a change of
    /// state. (The pipeline calls it at the detector's rate: state needs
    /// no finer timing.) The silence limit is the one [`Self::median`] set.
    pub fn block(&mut self, n: u64, clipped: u32, samples: u32) -> Option<StateEvent> {
        // Most blocks hold no clipped sample, and the share is then often
        // exactly 0 already: it stays 0 (0 + α·(0 − 0)), no work.
        if clipped != 0 || self.clip_share != 0.0 {
            let share = if clipped == 0 {
                0.0
            } else {
                clipped as f32 / samples.max(1) as f32
            };
            if samples != self.alpha_samples {
                self.alpha_samples = samples;
                self.block_alpha = min_f32(self.clip_alpha * samples as f32, 1.0);
            }
            self.clip_share += self.block_alpha * (share - self.clip_share);
            if self.clip_share < self.clip_floor {
                // Too small to move the next clipped block's share by a
                // bit, or the state: exactly 0, and no work until then.
                self.clip_share = 0.0;
            }
            let saturated = self.clip_share > SATURATED_SHARE;
            if saturated != self.saturated {
                self.saturated = saturated;
                self.decide_at = 0;
            }
        }
        if n < self.decide_at {
            return None;
        }
        self.decide(n)
    }

    /// The state decision at input index `n`, and when to take it next.
    // A few times per beat at most: kept out of the per-block path's code.
    #[inline(never)]
    fn decide(&mut self, n: u64) -> Option<StateEvent> {
        // `n − last_beat > silence_after`, the difference saturating at 0
        // (indices are far below overflow).
        let silent = n > self.silent_after;
        let saturated = self.saturated;
        self.decide_at = if silent {
            u64::MAX
        } else {
            self.silent_after + 1
        };
        let bad = self.bad;
        let next = if saturated {
            SignalState::Saturated
        } else if silent {
            SignalState::NoSignal
        } else if self.judged >= JUDGED_BEATS && bad >= NOISY_BAD_BEATS {
            SignalState::Noisy
        } else if self.good_run >= GOOD_RUN {
            SignalState::Good
        } else {
            self.state
        };
        if next == self.state {
            return None;
        }
        let event = StateEvent {
            state: next,
            previous: self.state,
            at: n,
        };
        self.state = next;
        if next != SignalState::Good {
            // A fresh start: good beats must prove themselves again.
            self.good_run = 0;
        }
        Some(event)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn silence_follows_the_recent_interval() {
        let mut m = Monitor::new(100.0);
        m.beat(0, true);
        // 3 s floor at 100 Hz: silent after sample 300.
        assert_eq!(m.block(300, 0, 1), None);
        let e = m.block(301, 0, 1).expect("no signal");
        assert_eq!(e.state, SignalState::NoSignal);
        // With 2 s intervals the limit is 2.5 intervals: 500 samples.
        let mut m = Monitor::new(100.0);
        m.beat(0, true);
        m.median(Some(2000.0));
        assert_eq!(m.block(301, 0, 1), None);
        assert_eq!(m.block(500, 0, 1), None);
        assert!(m.block(501, 0, 1).is_some());
    }

    #[test]
    fn beats_and_silence_move_the_state_even_between_unchanged_blocks() {
        // 100 Hz, blocks of 2 samples: the decision is skipped while
        // nothing moves, and taken again at each beat and when silence
        // begins.
        let mut m = Monitor::new(100.0);
        m.median(Some(800.0));
        let mut states = std::vec::Vec::new();
        let mut n = 0u64;
        let mut run = |m: &mut Monitor, blocks: u64, beat_every: Option<u64>| {
            for _ in 0..blocks {
                n += 2;
                if beat_every.is_some_and(|k| n % k == 0) {
                    m.beat(n, true);
                }
                if let Some(e) = m.block(n, 0, 2) {
                    states.push(e.state);
                }
            }
        };
        run(&mut m, 200, Some(80)); // 4 s of beats every 0.8 s
        run(&mut m, 200, None); // 4 s without: silent after 3 s
        run(&mut m, 200, Some(80)); // beats again
        assert_eq!(
            states,
            [SignalState::Good, SignalState::NoSignal, SignalState::Good]
        );
    }

    #[test]
    fn a_share_taken_as_zero_gives_the_next_clipped_block_the_same_share() {
        // Blocks of 2 at 125 Hz: a burst, then gaps without clipping of
        // every length up to 5000 blocks (the share falls below the floor
        // after about 2400), then clipped blocks; the share after each is
        // bit for bit what the plain running mean gives.
        for gap in (0..5000).step_by(50) {
            let mut m = Monitor::new(125.0);
            let alpha = m.clip_alpha * 2.0;
            let mut plain = 0.0f32;
            let burst = (0..40).map(|k| k % 2);
            let clips = burst.chain(core::iter::repeat_n(0, gap));
            for (k, clipped) in clips.chain([1, 2, 0, 1]).enumerate() {
                m.block(2 * k as u64, clipped, 2);
                plain += alpha * (clipped as f32 / 2.0 - plain);
                if clipped != 0 {
                    assert_eq!(m.clip_share.to_bits(), plain.to_bits(), "gap {gap}");
                }
            }
        }
    }

    #[test]
    fn clipped_share_counts_whole_blocks() {
        // Blocks of 4 samples, 3 clipped: a 75 % share, saturated within
        // the 2 s window (100 Hz: 50 blocks).
        let mut m = Monitor::new(100.0);
        m.median(Some(800.0));
        let mut saw = false;
        for k in 0..50u64 {
            m.beat(4 * k, true);
            if let Some(e) = m.block(4 * k + 3, 3, 4) {
                saw |= e.state == SignalState::Saturated;
            }
        }
        assert!(saw);
    }
}
