//! The wire format under damage: every intact frame decodes, every damaged
//! one is counted, whatever flipped bits, dropped bytes and inserted
//! garbage do to the stream.

use plethwire_dsp::pipeline::{BeatEvent, BeatFlags, Options, SignalState, StateEvent};
use plethwire_dsp::wire::{
    Decoder, Encoder, Hello, Message, SampleBlock, Status, MAX_FRAME, SAMPLES_PER_BLOCK,
};
use proptest::prelude::*;

fn message(i: u64, kind: u8) -> Message {
    match kind % 5 {
        0 => Message::Beat(BeatEvent {
            peak_index: 1000 * i + 7,
            onset_index: (i % 2 == 0).then_some(1000 * i),
            emitted_at: 1000 * i + 140,
            ibi_ms: (i > 0).then_some(812.5 + i as f32),
            hr_bpm: (i > 0).then_some(73.8),
            hr_smoothed_bpm: (i > 2).then_some(72.1),
            amplitude: 0.031,
            quality: 0.97,
            // Flag bits 0 to 5 (bit 5, motion, from i = 32 on).
            flags: BeatFlags((i % 64) as u8),
        }),
        1 => Message::State(StateEvent {
            state: SignalState::Good,
            previous: SignalState::Noisy,
            at: i * 3,
        }),
        2 => Message::Status(Status {
            led_drive: (i * 977) as u16,
            dc_level: 0.5,
            clipped_samples: i as u32,
            adc_overruns: 0,
            dropped_frames: 1,
            rejected_samples: 2,
        }),
        3 => Message::Hello(Hello {
            firmware_version: [0, 1, i as u8],
            sample_rate_hz: 250.0,
            options: Options::default(),
        }),
        _ => {
            let count = (i as usize % SAMPLES_PER_BLOCK) + 1;
            let mut raw = [0.0; SAMPLES_PER_BLOCK];
            let mut filtered = [0.0; SAMPLES_PER_BLOCK];
            for k in 0..count {
                raw[k] = 1.5 + k as f32 * 0.01;
                filtered[k] = -0.002 * k as f32;
            }
            Message::Samples(SampleBlock {
                first_index: i * 16,
                count: count as u8,
                raw,
                filtered,
            })
        }
    }
}

#[derive(Debug, Clone)]
enum Damage {
    None,
    /// Flip bit `bit` of body byte `at` (never into the delimiter).
    Flip {
        at: usize,
        bit: u8,
    },
    /// Drop body byte `at`.
    Drop {
        at: usize,
    },
    /// Insert these non-zero bytes before body byte `at`.
    Insert {
        at: usize,
        junk: Vec<u8>,
    },
}

fn damage() -> impl Strategy<Value = Damage> {
    prop_oneof![
        4 => Just(Damage::None),
        1 => (any::<usize>(), 0..8u8).prop_map(|(at, bit)| Damage::Flip { at, bit }),
        1 => any::<usize>().prop_map(|at| Damage::Drop { at }),
        1 => (any::<usize>(), proptest::collection::vec(1..=255u8, 1..20))
            .prop_map(|(at, junk)| Damage::Insert { at, junk }),
    ]
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(300))]

    #[test]
    fn intact_frames_decode_and_damaged_ones_are_counted(
        plan in proptest::collection::vec((any::<u8>(), damage(), proptest::option::of(proptest::collection::vec(any::<u8>(), 1..30))), 1..60)
    ) {
        let mut enc = Encoder::new();
        let mut stream = Vec::new();
        let mut intact = Vec::new();
        let mut damaged = 0u64;
        for (i, (kind, dmg, noise)) in plan.iter().enumerate() {
            // Line noise between frames, ended by a delimiter: one damaged
            // "frame" if it holds anything but delimiters.
            if let Some(noise) = noise {
                stream.extend_from_slice(noise);
                stream.push(0);
                // Bytes before the first delimiter in the noise form one
                // damaged chunk, and so does each later run of non-zero bytes.
                damaged += noise
                    .split(|&b| b == 0)
                    .filter(|c| !c.is_empty())
                    .count() as u64;
            }
            let msg = message(i as u64, *kind);
            let mut buf = [0u8; MAX_FRAME];
            let mut frame = enc.encode(&msg, &mut buf).unwrap().to_vec();
            let body = frame.len() - 1; // the delimiter stays
            let changed = match dmg {
                Damage::None => false,
                Damage::Flip { at, bit } => {
                    let at = at % body;
                    let flipped = frame[at] ^ (1 << bit);
                    if flipped == 0 {
                        false // would split the frame; not this case
                    } else {
                        frame[at] = flipped;
                        true
                    }
                }
                Damage::Drop { at } => {
                    frame.remove(at % body);
                    true
                }
                Damage::Insert { at, junk } => {
                    let at = at % body;
                    frame.splice(at..at, junk.iter().copied());
                    true
                }
            };
            if changed {
                damaged += 1;
            } else {
                intact.push(msg);
            }
            stream.extend_from_slice(&frame);
        }
        let mut dec = Decoder::new();
        let mut got = Vec::new();
        for &b in &stream {
            if let Some(Ok(f)) = dec.push(b) {
                got.push(f.message);
            }
        }
        prop_assert_eq!(&got, &intact);
        prop_assert_eq!(dec.stats().damaged, damaged);
        prop_assert_eq!(dec.stats().frames, intact.len() as u64);
    }
}

#[test]
fn every_message_round_trips_bit_for_bit() {
    let mut enc = Encoder::new();
    let mut dec = Decoder::new();
    for i in 0..50 {
        for kind in 0..5 {
            let msg = message(i, kind);
            let mut buf = [0u8; MAX_FRAME];
            let bytes = enc.encode(&msg, &mut buf).unwrap().to_vec();
            assert!(bytes.len() <= MAX_FRAME);
            assert_eq!(bytes.iter().filter(|&&b| b == 0).count(), 1);
            let f = bytes.iter().find_map(|&b| dec.push(b)).unwrap().unwrap();
            assert_eq!(f.message, msg);
        }
    }
    assert_eq!(dec.stats().lost_frames, 0);
}

#[test]
fn lost_frames_are_counted_from_sequence_numbers() {
    let mut enc = Encoder::new();
    let mut dec = Decoder::new();
    for i in 0..10u64 {
        let mut buf = [0u8; MAX_FRAME];
        let bytes = enc.encode(&message(i, 1), &mut buf).unwrap().to_vec();
        if i % 3 != 1 {
            for b in bytes {
                dec.push(b);
            }
        }
    }
    // Frames 1, 4 and 7 never arrived.
    assert_eq!(dec.stats().lost_frames, 3);
    assert_eq!(dec.stats().frames, 7);
}

#[test]
fn an_endless_run_without_delimiter_is_dropped_and_the_next_frame_decodes() {
    let mut dec = Decoder::new();
    for _ in 0..5000 {
        assert!(dec.push(0x55).is_none());
    }
    assert!(matches!(dec.push(0), Some(Err(_))));
    let mut enc = Encoder::new();
    let mut buf = [0u8; MAX_FRAME];
    let bytes = enc.encode(&message(3, 2), &mut buf).unwrap().to_vec();
    let f = bytes.iter().find_map(|&b| dec.push(b)).unwrap().unwrap();
    assert_eq!(f.message, message(3, 2));
    assert_eq!(dec.stats().dropped_bytes, 5000);
}
