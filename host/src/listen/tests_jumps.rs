//! Hand-made frames whose sample numbers no board could send: each is
//! refused and counted as damaged, no writer loops or overflows on it,
//! and the record goes on as if it had never come. Real changes of the
//! board's numbering (a restart whose hello was lost, a long gap while
//! the PC slept) are still followed.

use super::tests::{beat, block, bytes, hello, Both};
use super::*;
use plethwire_dsp::wire::{Encoder, Message};
use plethwire_records::{read_annotations, Record};
use std::time::{Duration, Instant, SystemTime};

const RAILS: Option<(f32, f32)> = Some((0.0, 4095.0));

/// Feed `stream` at `t`, then close the files; returns the events.
fn feed(session: &mut Session, rec: &mut Recorder, stream: &[u8], t: Instant) -> Vec<Event> {
    let mut both = Both(rec, Vec::new());
    session.feed(stream, t, &mut both).unwrap();
    both.1
}

fn peaks(w: &Written) -> Vec<i64> {
    read_annotations(&w.annotations)
        .unwrap()
        .iter()
        .map(|a| a.sample)
        .collect()
}

fn restarts(events: &[Event]) -> Vec<u64> {
    events
        .iter()
        .filter_map(|e| match e {
            Event::Restart { sample } => Some(*sample),
            _ => None,
        })
        .collect()
}

#[test]
fn a_beat_peak_of_2_to_the_62_is_refused_and_shown() {
    let dir = tempfile::tempdir().unwrap();
    let mut session = Session::new(None);
    let mut rec = Recorder::new(dir.path(), "wild", "pwire");
    // Sent at a plausible moment, peak far after it.
    let mut wild = beat(10);
    if let Message::Beat(b) = &mut wild {
        b.peak_index = 1 << 62;
    }
    // A beat consistent in itself, but 2^62 samples ahead.
    let far = beat(1 << 62);
    let stream = bytes(
        &mut Encoder::new(),
        &[
            hello(RAILS),
            block(0),
            beat(5),
            wild,
            block(16),
            far,
            block(32),
            beat(40),
        ],
    );
    let events = feed(&mut session, &mut rec, &stream, Instant::now());
    assert_eq!(session.counts().implausible, 2);
    assert_eq!(session.stats().damaged, 2);
    assert!(events
        .iter()
        .any(|e| matches!(e, Event::Link(l) if l.damaged == 2)));
    let notices = events
        .iter()
        .filter(|e| matches!(e, Event::Notice(n) if n.contains("counted as damaged")))
        .count();
    assert_eq!(notices, 1);
    assert!(restarts(&events).is_empty());
    let w = rec.finish().unwrap();
    assert_eq!(peaks(&w), [5, 40]);
    // 2 beats, no SKIP entries: 3 words.
    assert_eq!(std::fs::metadata(&w.annotations).unwrap().len(), 6);
    // The summary and the end line tell.
    let setup = Setup {
        record: "wild".into(),
        port: "test".into(),
        baud: 115_200,
        started: SystemTime::now(),
    };
    let summary = Summary::new(&setup, &session.progress(), "stopped", &w);
    assert_eq!(summary.counts.implausible, 2);
    assert_eq!(summary.link.damaged, 2);
    let mut out = Vec::new();
    Screen::new(&mut out, false, false, &Settings::default())
        .end(&summary)
        .unwrap();
    let text = String::from_utf8(out).unwrap();
    assert!(
        text.contains("damaged 2 (0 CRC, 2 with sample numbers out of reach)"),
        "{text}"
    );
}

#[test]
fn a_block_86000_s_ahead_writes_nothing_and_is_no_restart() {
    let dir = tempfile::tempdir().unwrap();
    let mut session = Session::new(None);
    let mut rec = Recorder::new(dir.path(), "ahead", "pwire");
    // 100 Hz: 86,000 s is 8.6 M samples.
    let stream = bytes(
        &mut Encoder::new(),
        &[
            hello(RAILS),
            block(0),
            block(16),
            block(8_600_000),
            block(32),
            block(48),
        ],
    );
    let events = feed(&mut session, &mut rec, &stream, Instant::now());
    assert!(restarts(&events).is_empty(), "{events:?}");
    assert_eq!(session.counts().implausible, 1);
    let w = rec.finish().unwrap();
    assert_eq!(w.record_samples, 64);
    assert_eq!(w.samples.missing, 0);
    let raw = Record::open(w.record.unwrap())
        .unwrap()
        .read_physical(0)
        .unwrap();
    assert_eq!(raw[63], 1063.0);
}

#[test]
fn indices_near_the_integer_limits_overflow_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let mut session = Session::new(None);
    let mut rec = Recorder::new(dir.path(), "edge", "pwire");
    let near_i64 = i64::MAX as u64 - 3;
    let mut at_u64 = block(0);
    if let Message::Samples(b) = &mut at_u64 {
        b.first_index = u64::MAX - 3;
    }
    let stream = bytes(
        &mut Encoder::new(),
        &[
            hello(RAILS),
            block(0),
            block(near_i64),
            block(16),
            at_u64,
            block(32),
            beat(near_i64),
            beat(u64::MAX - 20),
            block(48),
        ],
    );
    let events = feed(&mut session, &mut rec, &stream, Instant::now());
    assert!(restarts(&events).is_empty(), "{events:?}");
    // Two blocks and two beats out of reach, each refused.
    assert_eq!(session.counts().implausible, 4);
    let w = rec.finish().unwrap();
    assert_eq!(w.record_samples, 64);
    assert!(peaks(&w).is_empty());
}

#[test]
fn a_restart_whose_hello_was_lost_is_followed_from_its_second_frame() {
    let dir = tempfile::tempdir().unwrap();
    let mut session = Session::new(None);
    let mut rec = Recorder::new(dir.path(), "again", "pwire");
    let mut messages = vec![hello(RAILS)];
    // 20.48 s at 100 Hz: more than the 10 s step back a restart needs.
    messages.extend((0..128).map(|k| block(16 * k)));
    let mut stream = bytes(&mut Encoder::new(), &messages);
    stream.extend(bytes(&mut Encoder::new(), &[block(0), block(16), beat(20)]));
    let events = feed(&mut session, &mut rec, &stream, Instant::now());
    assert_eq!(restarts(&events), [2048]);
    assert_eq!(session.counts().implausible, 0);
    let w = rec.finish().unwrap();
    assert_eq!(w.record_samples, 2048 + 32);
    assert_eq!(peaks(&w), [2048 + 20]);
    let raw = Record::open(w.record.unwrap())
        .unwrap()
        .read_physical(0)
        .unwrap();
    assert_eq!(raw[2048], 1000.0);
}

#[test]
fn a_gap_the_clock_explains_is_filled_and_a_longer_one_is_not() {
    let dir = tempfile::tempdir().unwrap();
    let mut session = Session::new(None);
    let mut rec = Recorder::new(dir.path(), "gap", "pwire");
    let t0 = Instant::now();
    let mut enc = Encoder::new();
    feed(
        &mut session,
        &mut rec,
        &bytes(&mut enc, &[hello(RAILS), block(0)]),
        t0,
    );
    // 60 s later (a PC that was busy, or asleep): 50 s ahead is possible,
    // 80 s is not (100 Hz, 5 % clock margin, 10 s slack: 73 s at most).
    let later = t0 + Duration::from_secs(60);
    let stream = bytes(
        &mut enc,
        &[block(5000), block(5016), block(13_000), block(5032)],
    );
    let events = feed(&mut session, &mut rec, &stream, later);
    assert!(restarts(&events).is_empty(), "{events:?}");
    assert_eq!(session.counts().implausible, 1);
    // Two hours on, a gap of 7000 s is real but longer than any filled:
    // the record goes on after its end.
    let much_later = later + Duration::from_secs(7200);
    let stream = bytes(&mut enc, &[block(705_000), block(705_016)]);
    let events = feed(&mut session, &mut rec, &stream, much_later);
    assert_eq!(restarts(&events), [5048]);
    assert!(events.iter().any(
        |e| matches!(e, Event::Notice(n) if n.contains("jumped 7000 s ahead, more than the 3600 s"))
    ));
    let w = rec.finish().unwrap();
    assert_eq!(w.samples.missing, 5000 - 16);
    assert_eq!(w.record_samples, 5048 + 32);
}

#[test]
fn the_recorder_alone_bounds_what_it_is_given() {
    // Events as no session sends them: the recorder's own checks hold.
    let dir = tempfile::tempdir().unwrap();
    let mut rec = Recorder::new(dir.path(), "alone", "pwire");
    let Message::Samples(b) = block(0) else {
        unreachable!()
    };
    let samples = |start| Event::Samples {
        start,
        block: b,
        rate_hz: 100.0,
    };
    rec.event(&Event::Hello(match hello(RAILS) {
        Message::Hello(h) => h,
        _ => unreachable!(),
    }))
    .unwrap();
    rec.event(&samples(0)).unwrap();
    rec.event(&samples(i64::MAX - 3)).unwrap();
    rec.event(&samples(16)).unwrap();
    let seen = |peak| {
        let Message::Beat(beat) = beat(5) else {
            unreachable!()
        };
        Event::Beat(BeatSeen {
            beat,
            peak: Some(peak),
            time_s: None,
        })
    };
    rec.event(&seen(5)).unwrap();
    rec.event(&seen(1 << 62)).unwrap();
    let w = rec.finish().unwrap();
    assert_eq!(w.record_samples, 32);
    assert_eq!(w.samples.far_off, 16);
    assert_eq!(w.beats_far_off, 1);
    assert_eq!(peaks(&w), [5]);
}
