//! The listening loop, session and recorder on scripted byte sources: no
//! port, no timing beyond short retry intervals.

use super::*;
use plethwire_dsp::pipeline::{BeatEvent, BeatFlags, Options};
use plethwire_dsp::wire::{Encoder, Hello, Message, SampleBlock, MAX_FRAME};
use plethwire_records::{read_annotations, Record};
use std::collections::VecDeque;
use std::io::{self, Read};
use std::sync::atomic::{AtomicBool, Ordering};
use std::time::{Duration, Instant};

/// One attempt to open: missing, refused, or there with these reads.
enum Plug {
    Missing,
    Refused,
    Reads(Vec<Vec<u8>>),
}

struct Script(VecDeque<Plug>);

struct Reads(VecDeque<Vec<u8>>);

impl Read for Reads {
    fn read(&mut self, buf: &mut [u8]) -> io::Result<usize> {
        match self.0.pop_front() {
            Some(chunk) if chunk.is_empty() => {
                // What a port's read timeout looks like.
                std::thread::sleep(Duration::from_millis(1));
                Err(io::ErrorKind::TimedOut.into())
            }
            Some(mut chunk) => {
                let n = chunk.len().min(buf.len());
                buf[..n].copy_from_slice(&chunk[..n]);
                if n < chunk.len() {
                    self.0.push_front(chunk.split_off(n));
                }
                Ok(n)
            }
            None => Err(io::Error::other("Input/output error")),
        }
    }
}

impl Connector for Script {
    type Link = Reads;
    fn open(&mut self) -> io::Result<Reads> {
        match self.0.pop_front() {
            Some(Plug::Reads(r)) => Ok(Reads(r.into())),
            Some(Plug::Refused) => Err(io::ErrorKind::PermissionDenied.into()),
            Some(Plug::Missing) | None => Err(io::ErrorKind::NotFound.into()),
        }
    }
    fn name(&self) -> String {
        "test-port".into()
    }
}

pub(super) fn hello(rails: Option<(f32, f32)>) -> Message {
    Message::Hello(Hello {
        firmware_version: [0, 3, 1],
        sample_rate_hz: 100.0,
        options: Options {
            rails,
            ..Options::default()
        },
        adc_bits: 12,
    })
}

pub(super) fn beat(peak: u64) -> Message {
    Message::Beat(BeatEvent {
        peak_index: peak,
        onset_index: None,
        emitted_at: peak + 20,
        ibi_ms: Some(800.0),
        hr_bpm: Some(75.0),
        hr_smoothed_bpm: Some(75.0),
        amplitude: 30.0,
        quality: 0.9,
        flags: BeatFlags(0),
    })
}

/// 16 samples from `first`: raw is a whole count, filtered its tenth.
pub(super) fn block(first: u64) -> Message {
    let mut b = SampleBlock {
        first_index: first,
        count: 16,
        stride: 1,
        raw: [0.0; 16],
        filtered: [0.0; 16],
    };
    for i in 0..16 {
        let n = (first + i as u64) as f32;
        b.raw[i] = 1000.0 + n;
        b.filtered[i] = n / 10.0 - 5.0;
    }
    Message::Samples(b)
}

pub(super) fn bytes(enc: &mut Encoder, messages: &[Message]) -> Vec<u8> {
    let mut buf = [0u8; MAX_FRAME];
    messages
        .iter()
        .flat_map(|m| enc.encode(m, &mut buf).unwrap().to_vec())
        .collect()
}

/// Records and keeps every event.
pub(super) struct Both<'a>(pub(super) &'a mut Recorder, pub(super) Vec<Event>);

impl Sink for Both<'_> {
    fn event(&mut self, e: &Event) -> io::Result<()> {
        self.0.event(e)?;
        self.1.push(e.clone());
        Ok(())
    }
}

fn quick(give_up_ms: u64) -> Settings {
    Settings {
        retry_every: Duration::from_millis(5),
        give_up_after: Duration::from_millis(give_up_ms),
        duration: Some(Duration::from_secs(20)),
    }
}

fn go(script: Vec<Plug>, settings: Settings) -> (Result<Ending, ListenError>, Session, Vec<Event>) {
    let mut session = Session::new(None);
    let dir = tempfile::tempdir().unwrap();
    let mut rec = Recorder::new(dir.path(), "t", "pwire");
    let mut both = Both(&mut rec, Vec::new());
    let stop = AtomicBool::new(false);
    let end = run(
        &mut Script(script.into()),
        &mut session,
        &mut both,
        &settings,
        &stop,
    );
    let events = both.1;
    (end, session, events)
}

#[test]
fn unplug_and_replug_continue_one_recording() {
    let dir = tempfile::tempdir().unwrap();
    let mut enc = Encoder::new();
    let first = bytes(
        &mut enc,
        &[hello(Some((0.0, 4095.0))), block(0), beat(5), block(16)],
    );
    // While away the board went on: the frames of samples 32..63 never
    // arrive, but used up their sequence numbers.
    for _ in 0..2 {
        enc.encode(&block(0), &mut [0u8; MAX_FRAME]).unwrap();
    }
    let second = bytes(&mut enc, &[block(64), beat(70)]);
    let script = vec![
        Plug::Missing,
        Plug::Reads(vec![first[..7].to_vec(), vec![], first[7..].to_vec()]),
        Plug::Missing,
        Plug::Missing,
        Plug::Reads(vec![second]),
    ];
    let mut session = Session::new(None);
    let mut rec = Recorder::new(dir.path(), "t", "pwire");
    let mut both = Both(&mut rec, Vec::new());
    let stop = AtomicBool::new(false);
    let end = run(
        &mut Script(script.into()),
        &mut session,
        &mut both,
        &quick(60),
        &stop,
    );
    assert!(matches!(end, Ok(Ending::PortGone)), "{end:?}");
    let events = both.1;
    let opened: Vec<bool> = events
        .iter()
        .filter_map(|e| match e {
            Event::Opened { again_after, .. } => Some(again_after.is_some()),
            _ => None,
        })
        .collect();
    assert_eq!(opened, [false, true]);
    let losses = events
        .iter()
        .filter(|e| matches!(e, Event::Lost { .. }))
        .count();
    assert_eq!(losses, 2);
    assert_eq!(session.counts().opens, 2);
    // The reconnect resynchronised, so the two skipped frames are no loss.
    assert_eq!(session.stats().lost_frames, 0);
    let w = rec.finish().unwrap();
    let peaks: Vec<i64> = read_annotations(&w.annotations)
        .unwrap()
        .iter()
        .map(|a| a.sample)
        .collect();
    assert_eq!(peaks, [5, 70]);
    let record = Record::open(w.record.unwrap()).unwrap();
    assert_eq!(record.len(), 80);
    assert_eq!(record.fs(), 100.0);
    let raw = record.read_physical(0).unwrap();
    for (n, v) in raw.iter().enumerate() {
        if (32..64).contains(&n) {
            assert!(v.is_nan(), "sample {n} should be missing: {v}");
        } else {
            assert_eq!(*v, 1000.0 + n as f64, "sample {n}");
        }
    }
    assert_eq!(w.samples.missing, 32);
    assert_eq!(w.samples.recorded, 48);
}

#[test]
fn garbage_and_damage_are_counted_and_the_rest_decodes() {
    let mut enc = Encoder::new();
    let mut stream = vec![0x55; 9];
    stream.push(0);
    stream.extend(bytes(&mut enc, &[hello(None), beat(10)]));
    let mut bad = bytes(&mut enc, &[beat(90)]);
    let mid = bad.len() / 2;
    bad[mid] = if bad[mid] == 1 { 2 } else { bad[mid] ^ 1 };
    stream.extend(bad);
    stream.extend(bytes(&mut enc, &[beat(170)]));
    let (end, session, events) = go(vec![Plug::Reads(vec![stream])], quick(20));
    assert!(matches!(end, Ok(Ending::PortGone)));
    let s = session.stats();
    assert_eq!((s.frames, s.damaged, s.lost_frames), (3, 2, 1));
    let peaks: Vec<u64> = events
        .iter()
        .filter_map(|e| match e {
            Event::Beat(b) => b.peak,
            _ => None,
        })
        .collect();
    assert_eq!(peaks, [10, 170]);
    assert!(events
        .iter()
        .any(|e| matches!(e, Event::Link(l) if l.damaged == 2 && l.lost_frames == 1)));
}

#[test]
fn a_port_that_never_appears_or_refuses_ends_at_once() {
    let (end, _, events) = go(vec![], quick(30));
    match end {
        Err(ListenError::NeverOpened {
            cause: NeverCause::GaveUp(e),
            waited,
        }) => {
            assert_eq!(e.kind(), io::ErrorKind::NotFound);
            assert!(waited >= Duration::from_millis(30));
        }
        other => panic!("{other:?}"),
    }
    assert!(events.is_empty());
    let (end, _, _) = go(vec![Plug::Missing, Plug::Refused], quick(1000));
    assert!(
        matches!(end, Err(ListenError::Refused(e)) if e.kind() == io::ErrorKind::PermissionDenied)
    );
}

#[test]
fn stop_and_time_limit_end_the_session() {
    struct StopOnBeat<'a>(&'a AtomicBool);
    impl Sink for StopOnBeat<'_> {
        fn event(&mut self, e: &Event) -> io::Result<()> {
            if matches!(e, Event::Beat(_)) {
                self.0.store(true, Ordering::SeqCst);
            }
            Ok(())
        }
    }
    let stop = AtomicBool::new(false);
    let stream = bytes(&mut Encoder::new(), &[hello(None), beat(3), beat(80)]);
    let mut session = Session::new(None);
    let plugs = vec![Plug::Reads(vec![stream, vec![], vec![]])];
    let end = run(
        &mut Script(plugs.into()),
        &mut session,
        &mut StopOnBeat(&stop),
        &quick(1000),
        &stop,
    );
    assert!(matches!(end, Ok(Ending::Stopped)));
    // A quiet port with a time limit: the limit ends it.
    let settings = Settings {
        duration: Some(Duration::from_millis(50)),
        ..quick(1000)
    };
    let quiet: Vec<Vec<u8>> = vec![vec![]; 10_000];
    let started = Instant::now();
    let (end, _, _) = go(vec![Plug::Reads(quiet)], settings);
    assert!(matches!(end, Ok(Ending::TimeUp)), "{end:?}");
    assert!(started.elapsed() < Duration::from_secs(10));
}

#[test]
fn without_rails_the_scale_comes_from_the_first_two_seconds() {
    let dir = tempfile::tempdir().unwrap();
    let mut session = Session::new(None);
    let mut rec = Recorder::new(dir.path(), "free", "pwire");
    let mut enc = Encoder::new();
    let mut messages = vec![hello(None)];
    messages.extend((0..20).map(|k| block(16 * k)));
    let stream = bytes(&mut enc, &messages);
    session.feed(&stream, Instant::now(), &mut rec).unwrap();
    let w = rec.finish().unwrap();
    let scale = w.scale.unwrap();
    assert_eq!(scale.source, ScaleSource::FirstSamples);
    // Level about 1100, spread about 200: the level sets the span.
    assert_eq!(scale.gain, 50.0);
    let record = Record::open(w.record.unwrap()).unwrap();
    assert_eq!(record.len(), 320);
    let filtered = record.read_physical(1).unwrap();
    for (n, v) in filtered.iter().enumerate() {
        let sent = f64::from(n as f32 / 10.0 - 5.0);
        assert!(
            (v - sent).abs() <= 0.5 / scale.gain + 1e-9,
            "{n}: {v} vs {sent}"
        );
    }
    assert_eq!(w.samples.clipped, 0);
}

#[test]
fn a_board_restart_continues_the_record_after_its_end() {
    let dir = tempfile::tempdir().unwrap();
    let mut session = Session::new(None);
    let mut rec = Recorder::new(dir.path(), "rs", "pwire");
    let mut enc = Encoder::new();
    let mut messages = vec![hello(Some((0.0, 4095.0)))];
    messages.extend((0..6).map(|k| block(16 * k)));
    messages.push(beat(50));
    let mut again = Encoder::new();
    let mut stream = bytes(&mut enc, &messages);
    stream.extend(bytes(
        &mut again,
        &[hello(Some((0.0, 4095.0))), block(0), beat(10)],
    ));
    let mut both = Both(&mut rec, Vec::new());
    session.feed(&stream, Instant::now(), &mut both).unwrap();
    // The first run's last frame covered up to 95, so the new run starts at 96.
    assert!(both.1.contains(&Event::Restart { sample: 96 }));
    assert_eq!(session.counts().restarts, 1);
    let w = rec.finish().unwrap();
    let peaks: Vec<i64> = read_annotations(&w.annotations)
        .unwrap()
        .iter()
        .map(|a| a.sample)
        .collect();
    assert_eq!(peaks, [50, 106]);
    let record = Record::open(w.record.unwrap()).unwrap();
    assert_eq!(record.len(), 112);
    let raw = record.read_physical(0).unwrap();
    assert_eq!(raw[95], 1095.0);
    assert_eq!(raw[96], 1000.0);
    assert!(record
        .header()
        .comments
        .iter()
        .any(|c| c.contains("restarted")));
}

#[test]
fn samples_without_a_rate_are_counted_not_recorded() {
    let dir = tempfile::tempdir().unwrap();
    let mut session = Session::new(None);
    let mut rec = Recorder::new(dir.path(), "late", "pwire");
    let stream = bytes(&mut Encoder::new(), &[block(1000), beat(1010), block(1016)]);
    let mut both = Both(&mut rec, Vec::new());
    session.feed(&stream, Instant::now(), &mut both).unwrap();
    let notices = both
        .1
        .iter()
        .filter(|e| matches!(e, Event::Notice(_)))
        .count();
    assert_eq!(notices, 1);
    assert_eq!(session.counts().samples_unrecorded, 32);
    let w = rec.finish().unwrap();
    assert!(w.record.is_none());
    // Joined late: the record's clock starts at the first frame.
    assert_eq!(read_annotations(&w.annotations).unwrap()[0].sample, 10);
    // With a fallback rate the same stream is recorded.
    let mut session = Session::new(Some(100.0));
    let mut rec = Recorder::new(dir.path(), "late2", "pwire");
    session.feed(&stream, Instant::now(), &mut rec).unwrap();
    let w = rec.finish().unwrap();
    assert_eq!(w.record_samples, 32);
}

#[test]
fn silence_and_undecodable_bytes_are_reported_sparingly() {
    let mut session = Session::new(None);
    let t0 = Instant::now();
    let at = |ms: u64| t0 + Duration::from_millis(ms);
    session.opened(t0);
    let mut events: Vec<Event> = Vec::new();
    session.idle(at(4000), &mut events).unwrap();
    assert!(events.is_empty());
    // Noise every 0.5 s from 4 s on: one quiet line, link lines 1 s apart.
    for k in 0..6 {
        session
            .feed(&[0x42, 0x42, 0], at(4000 + 500 * k), &mut events)
            .unwrap();
    }
    let quiet = events
        .iter()
        .filter(|e| matches!(e, Event::Quiet { .. }))
        .count();
    let damaged: Vec<u64> = events
        .iter()
        .filter_map(|e| match e {
            Event::Link(l) => Some(l.damaged),
            _ => None,
        })
        .collect();
    assert_eq!(quiet, 1);
    assert_eq!(damaged, [1, 3, 5]);
    // A good frame ends the silence; the next one is told again.
    let frame = bytes(&mut Encoder::new(), &[hello(None)]);
    session.feed(&frame, at(7000), &mut events).unwrap();
    session.idle(at(12_500), &mut events).unwrap();
    let quiet = events
        .iter()
        .filter(|e| matches!(e, Event::Quiet { .. }))
        .count();
    assert_eq!(quiet, 2);
}
