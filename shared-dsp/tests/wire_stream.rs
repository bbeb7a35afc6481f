//! The wire format under damage: every intact frame decodes, every damaged
//! one is counted, whatever flipped bits, dropped bytes and inserted
//! garbage do to the stream.

use plethwire_dsp::pipeline::{BeatEvent, BeatFlags, Options, SignalState, StateEvent};
use plethwire_dsp::wire::{
    cobs_encode, crc32, decode_frame, max_encoded_len, Decoder, EncodeError, Encoder, FrameError,
    Hello, Message, Refusal, SampleBlock, Status, FORMAT_VERSION, MAX_FRAME, MAX_RAW_FRAME,
    SAMPLES_PER_BLOCK,
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
            ambient_level: 0.003 * i as f32,
            measured: (i % 8) as u8,
            clipped_samples: i as u32,
            adc_overruns: 0,
            dropped_frames: 1,
            rejected_samples: 2,
        }),
        3 => Message::Hello(Hello {
            firmware_version: [0, 1, i as u8],
            sample_rate_hz: 250.0,
            options: Options::default(),
            adc_bits: (i % 17) as u8,
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
                stride: (i % 3 + 1) as u8,
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

/// A frame of `version` with `kind` and a payload of `len` zero bytes on
/// the wire, its CRC xored with `crc_xor` (0: intact).
fn frame_of_version(version: u8, kind: u8, len: usize, crc_xor: u32) -> Vec<u8> {
    let mut raw = vec![version, kind, 0, 0];
    raw.resize(4 + len, 0);
    raw.extend((crc32(&raw) ^ crc_xor).to_le_bytes());
    let mut out = vec![0u8; max_encoded_len(raw.len())];
    let n = cobs_encode(&raw, &mut out).unwrap();
    out.truncate(n);
    out.push(0);
    out
}

#[test]
fn frames_of_another_version_are_counted_as_foreign_and_damaged() {
    let mut dec = Decoder::new();
    // A version 1 status frame (22 payload bytes) and a version 7 one.
    let mut stream = frame_of_version(1, 4, 22, 0);
    stream.extend(frame_of_version(1, 4, 22, 0));
    stream.extend(frame_of_version(7, 2, 46, 0));
    let mut buf = [0u8; MAX_FRAME];
    stream.extend_from_slice(Encoder::new().encode(&message(1, 2), &mut buf).unwrap());
    let mut got = Vec::new();
    for &b in &stream {
        if let Some(r) = dec.push(b) {
            got.push(r.map(|f| f.message));
        }
    }
    let version = Err(FrameError::Refused(Refusal::Version));
    assert_eq!(got, [version, version, version, Ok(message(1, 2))]);
    let s = dec.stats();
    assert_eq!((s.damaged, s.foreign_version, s.crc_errors), (3, 3, 0));
    assert_eq!(s.last_foreign_version, Some(7));
    assert_eq!(s.bytes, stream.len() as u64);
    // A frame of another version whose CRC fails is damage, not foreign.
    for &b in &frame_of_version(1, 4, 22, 0x40) {
        dec.push(b);
    }
    assert_eq!(
        (dec.stats().foreign_version, dec.stats().crc_errors),
        (3, 1)
    );
}

#[test]
fn every_byte_fed_is_counted_idle_line_included() {
    let mut dec = Decoder::new();
    let mut buf = [0u8; MAX_FRAME];
    let frame = Encoder::new()
        .encode(&message(4, 3), &mut buf)
        .unwrap()
        .to_vec();
    for &b in [0u8, 0, 0].iter().chain(&frame).chain(&[0x55, 0x55]) {
        dec.push(b);
    }
    assert_eq!(dec.stats().bytes, 3 + frame.len() as u64 + 2);
    assert_eq!(dec.stats().frames, 1);
}

#[test]
fn a_zero_stride_or_unknown_measured_bits_are_refused() {
    let Message::Samples(mut block) = message(5, 4) else {
        unreachable!()
    };
    block.stride = 0;
    let mut buf = [0u8; MAX_FRAME];
    assert_eq!(
        Encoder::new().encode(&Message::Samples(block), &mut buf),
        Err(EncodeError::BadStride)
    );
    // The same refusals on the receiving side, from hand-made payloads:
    // a samples frame of stride 0, a status frame with measured bit 3.
    let mut samples = vec![FORMAT_VERSION, 5, 0, 0];
    samples.extend(7u64.to_le_bytes());
    samples.extend([1, 0]);
    samples.extend([0u8; 8]);
    let mut status = vec![FORMAT_VERSION, 4, 0, 0];
    status.extend([0u8; 10]);
    status.push(1 << 3);
    status.extend([0u8; 16]);
    for mut raw in [samples, status] {
        raw.extend(crc32(&raw).to_le_bytes());
        assert_eq!(decode_frame(&raw), Err(Refusal::Payload));
    }
}

#[test]
fn the_largest_frame_is_a_full_sample_block() {
    let mut block = SampleBlock {
        first_index: u64::MAX,
        count: SAMPLES_PER_BLOCK as u8,
        stride: 255,
        raw: [f32::from_bits(0x0101_0101); SAMPLES_PER_BLOCK],
        filtered: [f32::from_bits(0x0101_0101); SAMPLES_PER_BLOCK],
    };
    let mut buf = [0u8; MAX_FRAME];
    let n = Encoder::new()
        .encode(&Message::Samples(block), &mut buf)
        .unwrap()
        .len();
    assert!(n <= MAX_FRAME);
    // 4 header + 10 + 16 × 8 + 4 CRC.
    assert_eq!(MAX_RAW_FRAME, 146);
    block.count = 0;
    assert_eq!(
        Encoder::new().encode(&Message::Samples(block), &mut buf),
        Err(EncodeError::BadSampleCount)
    );
}
