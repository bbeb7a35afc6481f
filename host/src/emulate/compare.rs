//! The board's events and sample blocks against the host's, bit for bit.

use plethwire_dsp::pipeline::{BeatEvent, StateEvent};
use plethwire_dsp::wire::SampleBlock;

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
    /// A sample block differs in a field or a sample.
    #[error("sample block {index} (from input sample {first_index}) differs in {field}: board {board}, host {host}")]
    Block {
        /// Its place in both lists.
        index: usize,
        /// The host's block's first input sample.
        first_index: u64,
        /// The first field that differs (`raw[3]`: its fourth raw sample).
        field: String,
        /// The board's value (floats with their bit pattern).
        board: String,
        /// The host's value.
        host: String,
    },
    /// The lists of sample blocks have different lengths.
    #[error("the board sent {board} sample blocks, the host replay made {host}")]
    BlockCount {
        /// Blocks from the board.
        board: usize,
        /// Blocks from the host.
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
    /// Sample blocks compared.
    pub blocks: usize,
}

/// What the board sent, to hold against the host replay.
#[derive(Debug, Clone, Copy)]
pub struct BoardEvents<'a> {
    /// Beats, in the order sent.
    pub beats: &'a [BeatEvent],
    /// State changes, in the order sent.
    pub states: &'a [StateEvent],
    /// Sample blocks, in the order sent.
    pub blocks: &'a [SampleBlock],
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

/// The first field (or sample) in which blocks `a` (the board's) and `b`
/// differ, with both values; floats are compared as bit patterns.
pub fn block_difference(a: &SampleBlock, b: &SampleBlock) -> Option<(String, String, String)> {
    let head =
        |name: &str, x: u64, y: u64| (x != y).then(|| (name.into(), x.to_string(), y.to_string()));
    let found = head("first_index", a.first_index, b.first_index)
        .or_else(|| head("count", a.count.into(), b.count.into()))
        .or_else(|| head("stride", a.stride.into(), b.stride.into()));
    if found.is_some() {
        return found;
    }
    let shown = |v: f32| format!("{v:?} (0x{:08x})", v.to_bits());
    let n = usize::from(a.count).min(a.raw.len());
    (0..n).find_map(|i| {
        [
            ("raw", a.raw[i], b.raw[i]),
            ("filtered", a.filtered[i], b.filtered[i]),
        ]
        .into_iter()
        .find(|(_, x, y)| x.to_bits() != y.to_bits())
        .map(|(name, x, y)| (format!("{name}[{i}]"), shown(x), shown(y)))
    })
}

/// Do the board's beats, states and sample blocks equal the host
/// replay's (`host` and `host_blocks`, from
/// [`crate::replay::sample_blocks`]), bit for bit? The error names the
/// first difference in one line.
pub fn compare(
    board: BoardEvents<'_>,
    host: &Replay,
    host_blocks: &[SampleBlock],
) -> Result<Agreement, Disagreement> {
    let (board_beats, board_states) = (board.beats, board.states);
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
    compare_blocks(board.blocks, host_blocks)?;
    Ok(Agreement {
        beats: board_beats.len(),
        states: board_states.len(),
        blocks: board.blocks.len(),
    })
}

fn compare_blocks(board: &[SampleBlock], host: &[SampleBlock]) -> Result<(), Disagreement> {
    for (index, (b, h)) in board.iter().zip(host).enumerate() {
        if let Some((field, board, host)) = block_difference(b, h) {
            return Err(Disagreement::Block {
                index,
                first_index: h.first_index,
                field,
                board,
                host,
            });
        }
    }
    if board.len() != host.len() {
        return Err(Disagreement::BlockCount {
            board: board.len(),
            host: host.len(),
        });
    }
    Ok(())
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

    fn events<'a>(
        beats: &'a [BeatEvent],
        states: &'a [StateEvent],
        blocks: &'a [SampleBlock],
    ) -> BoardEvents<'a> {
        BoardEvents {
            beats,
            states,
            blocks,
        }
    }

    #[test]
    fn lists_must_agree_in_length_and_order() {
        let s = StateEvent {
            state: SignalState::Good,
            previous: SignalState::Acquiring,
            at: 30,
        };
        let host = replay(vec![beat(), beat()], vec![s]);
        let two = [beat(), beat()];
        assert_eq!(
            compare(events(&two, &[s], &[]), &host, &[]),
            Ok(Agreement {
                beats: 2,
                states: 1,
                blocks: 0
            })
        );
        assert!(compare(events(&[beat()], &[s], &[]), &host, &[])
            .unwrap_err()
            .to_string()
            .contains("the board sent 1 beats, the host replay found 2"));
        assert!(compare(events(&two, &[], &[]), &host, &[]).is_err());
        let mut late = s;
        late.at = 31;
        assert!(compare(events(&two, &[late], &[]), &host, &[]).is_err());
    }

    fn block(first_index: u64) -> SampleBlock {
        let mut b = SampleBlock {
            first_index,
            count: 16,
            stride: 1,
            raw: [0.0; 16],
            filtered: [0.0; 16],
        };
        for i in 0..16 {
            b.raw[i] = (first_index + i as u64) as f32;
            b.filtered[i] = -0.5 * i as f32;
        }
        b
    }

    #[test]
    fn every_sample_of_every_block_is_compared_bit_for_bit() {
        let host = replay(vec![], vec![]);
        let blocks = [block(0), block(16)];
        let agreed = compare(events(&[], &[], &blocks), &host, &blocks).unwrap();
        assert_eq!(agreed.blocks, 2);
        let mut other = blocks;
        other[1].filtered[7] = f32::from_bits(other[1].filtered[7].to_bits() + 1);
        let e = compare(events(&[], &[], &other), &host, &blocks).unwrap_err();
        assert!(
            e.to_string()
                .starts_with("sample block 1 (from input sample 16) differs in filtered[7]"),
            "{e}"
        );
        let mut zero = blocks;
        // −0.5 × 0 is −0.0 there; +0.0 is another bit pattern.
        zero[0].filtered[0] = 0.0;
        assert!(compare(events(&[], &[], &zero), &host, &blocks).is_err());
        let mut strided = blocks;
        strided[0].stride = 2;
        let e = compare(events(&[], &[], &strided), &host, &blocks).unwrap_err();
        assert!(
            e.to_string().contains("differs in stride: board 2, host 1"),
            "{e}"
        );
        let e = compare(events(&[], &[], &blocks[..1]), &host, &blocks).unwrap_err();
        assert_eq!(
            e.to_string(),
            "the board sent 1 sample blocks, the host replay made 2"
        );
    }
}
