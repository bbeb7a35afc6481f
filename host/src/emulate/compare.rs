//! The board's events against the host's, bit for bit.

use plethwire_dsp::pipeline::{BeatEvent, StateEvent};

use crate::replay::Replay;

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
) -> Result<Agreement, String> {
    for (i, (b, h)) in board_beats.iter().zip(&host.beats).enumerate() {
        if let Some(field) = beat_difference(b, h) {
            return Err(format!(
                "beat {i} (peak at sample {}) differs in {field}: board {b:?}, host {h:?}",
                h.peak_index
            ));
        }
    }
    if board_beats.len() != host.beats.len() {
        return Err(format!(
            "the board sent {} beats, the host replay found {}",
            board_beats.len(),
            host.beats.len()
        ));
    }
    for (i, (b, h)) in board_states.iter().zip(&host.states).enumerate() {
        if b != h {
            return Err(format!("state change {i} differs: board {b:?}, host {h:?}"));
        }
    }
    if board_states.len() != host.states.len() {
        return Err(format!(
            "the board sent {} state changes, the host replay found {}",
            board_states.len(),
            host.states.len()
        ));
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
            .contains("1 beats"));
        assert!(compare(&[beat(), beat()], &[], &host).is_err());
        let mut late = s;
        late.at = 31;
        assert!(compare(&[beat(), beat()], &[late], &host).is_err());
    }
}
