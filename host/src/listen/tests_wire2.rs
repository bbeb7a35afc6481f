//! Wire format 2 in `listen`: a board of another version is told about
//! once, and a board that sends every `stride`-th sample is recorded at
//! its rate over the stride with true annotations.

use super::tests::{beat, bytes, Both};
use super::*;
use plethwire_dsp::pipeline::Options;
use plethwire_dsp::wire::{
    cobs_encode, crc32, max_encoded_len, Encoder, Hello, Message, SampleBlock,
};
use plethwire_records::{read_annotations, Record};
use std::time::Instant;

/// A status frame of wire format `version` (its own 22-byte layout when
/// 1), CRC intact.
fn foreign_frame(version: u8, seq: u16) -> Vec<u8> {
    let mut raw = vec![version, 4];
    raw.extend(seq.to_le_bytes());
    raw.resize(4 + 22, 0);
    raw.extend(crc32(&raw).to_le_bytes());
    let mut out = vec![0u8; max_encoded_len(raw.len())];
    let n = cobs_encode(&raw, &mut out).unwrap();
    out.truncate(n);
    out.push(0);
    out
}

fn notices(events: &[Event]) -> Vec<String> {
    events
        .iter()
        .filter_map(|e| match e {
            Event::Notice(n) => Some(n.clone()),
            _ => None,
        })
        .collect()
}

#[test]
fn a_board_of_wire_format_1_is_told_about_once_and_never_fatal() {
    let mut session = Session::new(None);
    let mut events: Vec<Event> = Vec::new();
    let stream: Vec<u8> = (0..20).flat_map(|seq| foreign_frame(1, seq)).collect();
    let now = Instant::now();
    session.feed(&stream, now, &mut events).unwrap();
    session
        .feed(&foreign_frame(1, 20), now, &mut events)
        .unwrap();
    assert_eq!(
        notices(&events),
        [
            "the board speaks wire format version 1; this plethwire reads version 2: \
          update the board's firmware"
        ]
    );
    let s = session.stats();
    assert_eq!((s.damaged, s.foreign_version, s.frames), (21, 21, 0));
    assert_eq!(s.last_foreign_version, Some(1));
    // A board of our version afterwards is read as usual.
    let mut enc = Encoder::new();
    let good = bytes(&mut enc, &[super::tests::hello(None)]);
    session.feed(&good, now, &mut events).unwrap();
    assert_eq!(session.stats().frames, 1);
    assert!(events.iter().any(|e| matches!(e, Event::Hello(_))));
}

#[test]
fn a_newer_board_is_told_to_wait_for_a_newer_plethwire() {
    assert_eq!(
        foreign_version_message(3),
        "the board speaks wire format version 3; this plethwire reads version 2: \
         update plethwire"
    );
}

fn hello_at(rate: f32) -> Message {
    Message::Hello(Hello {
        firmware_version: [0, 5, 0],
        sample_rate_hz: rate,
        options: Options {
            rails: Some((0.0, 4095.0)),
            ..Options::default()
        },
        adc_bits: 12,
    })
}

/// 16 samples of stride `stride` from board sample `first`; raw is the
/// board sample number.
fn strided(first: u64, stride: u8) -> Message {
    let mut b = SampleBlock {
        first_index: first,
        count: 16,
        stride,
        raw: [0.0; 16],
        filtered: [0.0; 16],
    };
    for i in 0..16 {
        b.raw[i] = (first + i as u64 * u64::from(stride)) as f32;
    }
    Message::Samples(b)
}

#[test]
fn a_stride_2_board_at_1000_hz_is_recorded_at_500_hz_with_true_beat_times() {
    let dir = tempfile::tempdir().unwrap();
    let mut rec = Recorder::new(dir.path(), "s", "pwire");
    let mut session = Session::new(None);
    let mut both = Both(&mut rec, Vec::new());
    let mut enc = Encoder::new();
    // Blocks cover board samples 0..=62 (two of stride 2), then 64..=79
    // at stride 1 (a finer block: half of it lies between record samples).
    let frames = [
        hello_at(1000.0),
        strided(0, 2),
        beat(41),
        strided(32, 2),
        beat(100),
        strided(64, 1),
    ];
    session
        .feed(&bytes(&mut enc, &frames), Instant::now(), &mut both)
        .unwrap();
    let w = rec.finish().unwrap();
    assert_eq!((w.rate_hz, w.stride), (Some(500.0), 2));
    let r = Record::open(w.record.unwrap()).unwrap();
    assert_eq!(r.fs(), 500.0);
    // Record sample k is board sample 2k: its raw value says which. The
    // stride-1 block's odd samples fall on record samples already filled.
    let raw = r.read_physical(0).unwrap();
    let want: Vec<f64> = (0..40).map(|k| 2.0 * k as f64).collect();
    assert_eq!(raw, want);
    assert_eq!(w.samples.repeated, 8);
    // Beats at board samples 41 and 100: 41 ms and 100 ms, so record
    // samples 20 (41 / 2, the tie rounded down: 40 ms, the sample that
    // holds board sample 40) and 50 (100 ms) at 500 Hz.
    let peaks: Vec<i64> = read_annotations(&w.annotations)
        .unwrap()
        .iter()
        .map(|a| a.sample)
        .collect();
    assert_eq!(peaks, [20, 50]);
}

#[test]
fn below_500_hz_the_record_keeps_the_boards_rate_and_samples() {
    let dir = tempfile::tempdir().unwrap();
    let mut rec = Recorder::new(dir.path(), "u", "pwire");
    let mut session = Session::new(None);
    let mut both = Both(&mut rec, Vec::new());
    let mut enc = Encoder::new();
    let frames = [hello_at(250.0), strided(0, 1), beat(9), strided(16, 1)];
    session
        .feed(&bytes(&mut enc, &frames), Instant::now(), &mut both)
        .unwrap();
    let w = rec.finish().unwrap();
    assert_eq!(
        (w.rate_hz, w.stride, w.record_samples),
        (Some(250.0), 1, 32)
    );
    let peaks: Vec<i64> = read_annotations(&w.annotations)
        .unwrap()
        .iter()
        .map(|a| a.sample)
        .collect();
    assert_eq!(peaks, [9]);
}

#[test]
fn without_a_hello_the_first_blocks_stride_is_the_records_and_beats_wait_for_it() {
    let dir = tempfile::tempdir().unwrap();
    let mut rec = Recorder::new(dir.path(), "v", "pwire");
    // A beat at record sample 9 (board samples) before any block.
    let Message::Beat(b) = beat(9) else {
        unreachable!()
    };
    rec.event(&Event::Beat(BeatSeen {
        beat: b,
        peak: Some(9),
        time_s: Some(9.0 / 800.0),
    }))
    .unwrap();
    for first in [0, 32] {
        let Message::Samples(block) = strided(first, 2) else {
            unreachable!()
        };
        rec.event(&Event::Samples {
            start: first as i64,
            block,
            rate_hz: 800.0,
        })
        .unwrap();
    }
    let w = rec.finish().unwrap();
    assert_eq!(
        (w.rate_hz, w.stride, w.record_samples),
        (Some(400.0), 2, 32)
    );
    let peaks: Vec<i64> = read_annotations(&w.annotations)
        .unwrap()
        .iter()
        .map(|a| a.sample)
        .collect();
    // Board sample 9 is 11.25 ms; record sample 4 (9 / 2, the tie rounded
    // down) is 10 ms at 400 Hz, and holds board sample 8.
    assert_eq!(peaks, [4]);
}

#[test]
fn nearest_rounds_to_the_closest_record_sample_ties_down() {
    let got: Vec<u64> = (0..8).map(|at| nearest(at, 2)).collect();
    assert_eq!(got, [0, 0, 1, 1, 2, 2, 3, 3]);
    let got: Vec<u64> = (0..7).map(|at| nearest(at, 3)).collect();
    assert_eq!(got, [0, 0, 1, 1, 1, 2, 2]);
    assert_eq!(nearest(u64::MAX, 1), u64::MAX);
    assert_eq!(nearest(5, 0), 5);
}
