//! The signal's condition, decided from beats, clipping and silence, with
//! hysteresis so it does not flicker.

use super::events::{SignalState, StateEvent};

/// Clipped share of the last [`CLIP_WINDOW_S`] above which the signal is
/// saturated (common practice: a front end at its rails most of the time
/// needs less LED drive or gain).
pub const SATURATED_SHARE: f32 = 0.3;
/// Window for the clipped share, seconds.
pub const CLIP_WINDOW_S: f32 = 2.0;
/// No beat for this long (or 2.5 recent intervals, if longer) means no
/// signal, seconds.
pub const SILENCE_S: f32 = 3.0;
/// Of the last [`JUDGED_BEATS`] beats, at least this many bad ones make the
/// signal noisy.
pub const NOISY_BAD_BEATS: u32 = 3;
/// Beats judged for noisiness.
pub const JUDGED_BEATS: u32 = 5;
/// Consecutive good beats needed to declare the signal good.
pub const GOOD_RUN: u32 = 3;

/// State machine over the signal's condition.
#[derive(Clone, Copy, Debug)]
pub struct Monitor {
    state: SignalState,
    clip_share: f32,
    clip_alpha: f32,
    fs: f32,
    last_beat: Option<u64>,
    recent: u8,
    judged: u32,
    good_run: u32,
}

impl Monitor {
    /// A monitor for input at `fs_hz`.
    pub fn new(fs_hz: f32) -> Self {
        Self {
            state: SignalState::Acquiring,
            clip_share: 0.0,
            clip_alpha: 1.0 / (CLIP_WINDOW_S * fs_hz),
            fs: fs_hz,
            last_beat: None,
            recent: 0,
            judged: 0,
            good_run: 0,
        }
    }

    /// The current state.
    pub fn state(&self) -> SignalState {
        self.state
    }

    /// Record a beat at input index `at`.
    pub fn beat(&mut self, at: u64, good: bool) {
        self.last_beat = Some(at);
        self.recent = (self.recent << 1) | u8::from(!good);
        self.judged = (self.judged + 1).min(JUDGED_BEATS);
        self.good_run = if good { self.good_run + 1 } else { 0 };
    }

    /// Update once per input sample (index `n`, clipped or not, with the
    /// recent median interval) and report a change of state.
    pub fn sample(
        &mut self,
        n: u64,
        clipped: bool,
        median_ibi_ms: Option<f32>,
    ) -> Option<StateEvent> {
        let c = if clipped { 1.0 } else { 0.0 };
        self.clip_share += self.clip_alpha * (c - self.clip_share);
        let silence_s = median_ibi_ms.map_or(SILENCE_S, |m| (2.5 * m / 1000.0).max(SILENCE_S));
        let since = self.last_beat.map_or(n, |b| n.saturating_sub(b));
        let silent = since as f32 > silence_s * self.fs;
        let mask = (1u8 << JUDGED_BEATS) - 1;
        let bad = (self.recent & mask).count_ones();
        let next = if self.clip_share > SATURATED_SHARE {
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
