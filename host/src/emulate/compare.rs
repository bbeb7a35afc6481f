//! The board's events against the host's, bit for bit.

use plethwire_dsp::pipeline::{BeatEvent, StateEvent};

use crate::replay::Replay;

/// The first difference between the board's events and the host's; one line.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum Disagreement {
    /// A beat differs in a field.
    #[error("beat {index} (peak at sample {}) differs in {field}: board {board:?}, host {host:?}", .host.peak_index)]
    Beat {
        /// Its place in both lists.
        index: usize,
        /// The first field that differs.
        field: &'static str,
        /// The board's beat.
        board: Box<BeatEvent>,
        /// The host's beat.
        host: Box<BeatEvent>,
    },
    /// The lists of beats have different lengths.
    #[error("the board sent {board} beats, the host replay found {host}")]
    BeatCount {
        /// Beats from the board.
        board: usize,
        /// Beats from the host.
        host: usize,
    },
    /// A state change differs.
    #[error("state change {index} differs: board {board:?}, host {host:?}")]
    State {
        /// Its place in both lists.
        index: usize,
        /// The board's.
        board: StateEvent,
        /// The host's.
        host: StateEvent,
    },
    /// The lists of state changes have different lengths.
    #[error("the board sent {board} state changes, the host replay found {host}")]
    StateCount {
        /// State changes from the board.
        board: usize,
        /// State changes from the host.
        host: usize,
    },
}

/// How far two event lists agree.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Agreement {
    /// Beats compared (all of them, when they agree).
    pub beats: usize,
    /// State changes compared.
    pub states: usize,
}

/// `Some(bits)` of an optional float, so `None` and every value (also
/// −0.0 against 0.0, or NaN payloads) compare exactly.
fn bits(v: Option<f32>) -> Option<u32> {
    v.map(f32::to_bits)
}

/// The name of the first field in which `a` and `b` differ, if any; floats
/// are compared as bit patterns.
pub fn beat_difference(a: &BeatEvent, b: &BeatEvent) -> Option<&'static str> {
    let checks: [(&'static str, bool); 9] = [
        ("peak_index", a.peak_index == b.peak_index),
        ("onset_index", a.onset_index == b.onset_index),
        ("emitted_at", a.emitted_at == b.emitted_at),
        ("ibi_ms", bits(a.ibi_ms) == bits(b.ibi_ms)),
        ("hr_bpm", bits(a.hr_bpm) == bits(b.hr_bpm)),
        (
            "hr_smoothed_bpm",
            bits(a.hr_smoothed_bpm) == bits(b.hr_smoothed_bpm),
        ),
        ("amplitude", a.amplitude.to_bits() == b.amplitude.to_bits()),
        ("quality", a.quality.to_bits() == b.quality.to_bits()),
        ("flags", a.flags == b.flags),
    ];
    checks.iter().find(|(_, same)| !same).map(|(name, _)| *name)
}

/// Do the board's beats and states equal the host replay's, bit for bit?
/// The error names the first difference in one line.
pub fn compare(
    board_beats: &[BeatEvent],
    board_states: &[StateEvent],
    host: &Replay,
) -> Result<Agreement, Disagreement> {
    for (index, (b, h)) in board_beats.iter().zip(&host.beats).enumerate() {
        if let Some(field) = beat_difference(b, h) {
            return Err(Disagreement::Beat {
                index,
                field,
                board: Box::new(*b),
                host: Box::new(*h),
            });
        }
    }
    if board_beats.len() != host.beats.len() {
        return Err(Disagreement::BeatCount {
            board: board_beats.len(),
            host: host.beats.len(),
        });
    }
    for (index, (b, h)) in board_states.iter().zip(&host.states).enumerate() {
        if b != h {
            return Err(Disagreement::State {
                index,
                board: *b,
                host: *h,
            });
        }
    }
    if board_states.len() != host.states.len() {
        return Err(Disagreement::StateCount {
            board: board_states.len(),
            host: host.states.len(),
        });
    }
    Ok(Agreement {
        beats: board_beats.len(),
        states: board_states.len(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use plethwire_dsp::pipeline::{BeatFlags, SignalState};

    fn beat() -> BeatEvent {
        BeatEvent {
            peak_index: 10,
            onset_index: Some(4),
            emitted_at: 40,
            ibi_ms: Some(800.0),
            hr_bpm: Some(75.0),
            hr_smoothed_bpm: Some(74.5),
            amplitude: 0.0,
            quality: 0.9,
            flags: BeatFlags(0),
        }
    }

    fn replay(beats: Vec<BeatEvent>, states: Vec<StateEvent>) -> Replay {
        Replay {
            fs: 100.0,
            samples: 100,
            beats,
            states,
            rejected: 0,
            clipped: 0,
            restarts: 0,
        }
    }

    #[test]
    fn one_ulp_or_a_sign_of_zero_is_a_difference() {
        let a = beat();
        let mut b = a;
        b.ibi_ms = Some(f32::from_bits(800.0f32.to_bits() + 1));
        assert_eq!(beat_difference(&a, &b), Some("ibi_ms"));
        let mut c = a;
        c.amplitude = -0.0;
        assert_eq!(beat_difference(&a, &c), Some("amplitude"));
        let mut d = a;
        d.hr_smoothed_bpm = None;
        assert_eq!(beat_difference(&a, &d), Some("hr_smoothed_bpm"));
        assert_eq!(beat_difference(&a, &a), None);
    }

    #[test]
    fn lists_must_agree_in_length_and_order() {
        let s = StateEvent {
            state: SignalState::Good,
            previous: SignalState::Acquiring,
            at: 30,
        };
        let host = replay(vec![beat(), beat()], vec![s]);
        assert_eq!(
            compare(&[beat(), beat()], &[s], &host),
            Ok(Agreement {
                beats: 2,
                states: 1
            })
        );
        assert!(compare(&[beat()], &[s], &host)
            .unwrap_err()
            .to_string()
            .contains("the board sent 1 beats, the host replay found 2"));
        assert!(compare(&[beat(), beat()], &[], &host).is_err());
        let mut late = s;
        late.at = 31;
        assert!(compare(&[beat(), beat()], &[late], &host).is_err());
    }
}
