//! Which stretch of the recording the signal plot shows.

use crate::replay::Replay;
use serde::Serialize;

/// Length of the excerpt chosen when none is asked for, seconds: a dozen
/// to forty beats, each still wide enough on screen to judge its shape.
pub const DEFAULT_EXCERPT_S: f64 = 20.0;

/// A stretch of the recording, seconds from its start.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct Excerpt {
    /// Start, s.
    pub start_s: f64,
    /// Length, s.
    pub length_s: f64,
}

impl Excerpt {
    /// End, s.
    pub fn end_s(&self) -> f64 {
        self.start_s + self.length_s
    }

    /// Sample range `[from, to)` at `fs`, within `len` samples.
    pub fn samples(&self, fs: f64, len: usize) -> (usize, usize) {
        let from = ((self.start_s * fs).floor().max(0.0) as usize).min(len);
        let to = ((self.end_s() * fs).ceil().max(0.0) as usize).clamp(from, len);
        (from, to)
    }

    /// `self` cut to a recording of `duration_s`; `None` when it starts at
    /// or after the end, or is empty or not finite.
    pub fn within(self, duration_s: f64) -> Option<Excerpt> {
        let ok = self.start_s.is_finite()
            && self.length_s.is_finite()
            && self.start_s >= 0.0
            && self.length_s > 0.0
            && self.start_s < duration_s;
        ok.then(|| Excerpt {
            start_s: self.start_s,
            length_s: self.length_s.min(duration_s - self.start_s),
        })
    }
}

/// The [`DEFAULT_EXCERPT_S`] window (the whole recording when shorter)
/// holding the most good beats, on whole seconds; the earliest such window
/// wins a tie, so a recording that is good throughout shows its start.
pub fn choose(replay: &Replay) -> Excerpt {
    let duration = replay.samples as f64 / replay.fs;
    let length = DEFAULT_EXCERPT_S.min(duration);
    let mut good: Vec<f64> = replay
        .beats
        .iter()
        .filter(|b| b.flags.is_good())
        .map(|b| b.peak_index as f64 / replay.fs)
        .collect();
    good.sort_by(f64::total_cmp);
    let last_start = (duration - length).max(0.0).floor() as usize;
    let mut best = (0usize, 0.0f64);
    for s in 0..=last_start {
        let start = s as f64;
        let from = good.partition_point(|&t| t < start);
        let to = good.partition_point(|&t| t < start + length);
        if to - from > best.0 {
            best = (to - from, start);
        }
    }
    Excerpt {
        start_s: best.1,
        length_s: length,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use plethwire_dsp::pipeline::{BeatEvent, BeatFlags};

    fn replay_with(peaks_s: &[(f64, bool)], seconds: f64) -> Replay {
        let fs = 100.0;
        let beats = peaks_s
            .iter()
            .map(|&(t, good)| BeatEvent {
                peak_index: (t * fs) as u64,
                onset_index: None,
                emitted_at: (t * fs) as u64 + 40,
                ibi_ms: Some(800.0),
                hr_bpm: Some(75.0),
                hr_smoothed_bpm: Some(75.0),
                amplitude: 1.0,
                quality: 0.95,
                flags: BeatFlags(if good { 0 } else { BeatFlags::LOW_CORRELATION }),
            })
            .collect();
        Replay {
            fs,
            samples: (seconds * fs) as u64,
            beats,
            states: Vec::new(),
            rejected: 0,
            clipped: 0,
            restarts: 0,
        }
    }

    #[test]
    fn the_window_with_most_good_beats_is_chosen() {
        // Flagged beats in the first minute, good ones from 60 s on.
        let mut peaks: Vec<(f64, bool)> = (0..60).map(|i| (i as f64, false)).collect();
        peaks.extend((60..120).map(|i| (i as f64 + 0.5, true)));
        let e = choose(&replay_with(&peaks, 120.0));
        assert_eq!(e.length_s, DEFAULT_EXCERPT_S);
        assert_eq!(e.start_s, 60.0);
    }

    #[test]
    fn a_short_recording_is_shown_whole() {
        let e = choose(&replay_with(&[(1.0, true), (2.0, true)], 8.0));
        assert_eq!((e.start_s, e.length_s), (0.0, 8.0));
    }

    #[test]
    fn a_given_excerpt_is_cut_to_the_recording() {
        let e = Excerpt {
            start_s: 50.0,
            length_s: 20.0,
        };
        assert_eq!(e.within(60.0).unwrap().length_s, 10.0);
        assert_eq!(e.within(50.0), None);
        assert_eq!(e.samples(100.0, 6000), (5000, 6000));
        let bad = Excerpt {
            start_s: -1.0,
            length_s: 5.0,
        };
        assert_eq!(bad.within(60.0), None);
    }
}
