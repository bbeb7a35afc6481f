//! Seconds of a simulated finger (DC plus a sine pulse under flickering
//! room light) through the whole board: the frames that leave it decode,
//! and their beats are the finger's.

mod common;

use std::cell::RefCell;
use std::rc::Rc;

use common::{decode, Adc, Drive, Finger, Led};
use embedded_hal_mock::eh1::delay::NoopDelay;
use plethwire_board::driver::DEFAULT_QUEUE_BYTES;
use plethwire_board::{Board, BoardConfig, DriveChange, Hardware};
use plethwire_dsp::pipeline::{BandSections, BeatEvent, Config, Pipeline, SignalState};
use plethwire_dsp::wire::{Message, Status};

const RATE: u32 = 250;
const TICK_HZ: u64 = 1_000_000;

type BenchBoard = Board<Led, Drive, Adc, NoopDelay>;

fn board(finger: &Rc<RefCell<Finger>>, initial_drive: f32) -> BenchBoard {
    let hw = Hardware {
        led: Led(finger.clone()),
        drive: Drive(finger.clone()),
        adc: Adc(finger.clone()),
        delay: NoopDelay::new(),
    };
    let mut config = BoardConfig::new(RATE, TICK_HZ);
    config.firmware_version = [0, 1, 0];
    config.exposure.initial_drive = initial_drive;
    Board::new(config, hw).unwrap()
}

/// What a run gave: bytes on the line, and the beats and drive changes
/// the board reported as it went.
struct Run {
    bytes: Vec<u8>,
    beats: Vec<BeatEvent>,
    changes: Vec<DriveChange>,
    /// The value pushed at each tick: `−(on − off)`, ADC counts.
    pushed: Vec<f32>,
    /// The most bytes the transmit queue held after a tick.
    most_queued: usize,
}

/// Run for `seconds`, sending at most `line_bytes_per_tick` (a 115200
/// baud line moves 46 bytes in 4 ms).
fn run(board: &mut BenchBoard, finger: &Rc<RefCell<Finger>>, seconds: u32) -> Run {
    let mut r = Run {
        bytes: Vec::new(),
        beats: Vec::new(),
        changes: Vec::new(),
        pushed: Vec::new(),
        most_queued: 0,
    };
    let mut line = [0u8; 46];
    board.start(0);
    for k in 0..RATE * seconds {
        finger.borrow_mut().t = f64::from(k) / f64::from(RATE);
        let report = board.tick(board.deadline());
        r.beats.extend(report.beat);
        r.changes.extend(report.drive);
        let s = report.sample.expect("the finger never fails a reading");
        r.pushed.push(-(s.value() as f32));
        r.most_queued = r.most_queued.max(board.queue().len());
        let n = board.queue_mut().pop_into(&mut line);
        r.bytes.extend_from_slice(&line[..n]);
    }
    let mut rest = [0u8; 1024];
    let n = board.queue_mut().pop_into(&mut rest);
    r.bytes.extend_from_slice(&rest[..n]);
    r
}

fn beats(messages: &[Message]) -> Vec<BeatEvent> {
    messages
        .iter()
        .filter_map(|m| match m {
            Message::Beat(b) => Some(*b),
            _ => None,
        })
        .collect()
}

#[test]
fn a_75_bpm_finger_gives_75_bpm_beat_frames() {
    // 5000 counts at full drive, a quarter of it: DC 0.38, in the window.
    let finger = Finger::new(5000.0);
    let mut board = board(&finger, 0.25);
    let r = run(&mut board, &finger, 20);
    let (messages, dec) = decode(&r.bytes);
    assert_eq!(dec.stats().damaged, 0);
    assert_eq!(dec.stats().lost_frames, 0);
    assert_eq!(board.queue().dropped(), 0, "a 115200 baud line keeps up");
    assert!(r.changes.is_empty(), "DC in the window: {:?}", r.changes);
    match messages[0] {
        Message::Hello(h) => {
            assert_eq!(h.firmware_version, [0, 1, 0]);
            assert_eq!(h.sample_rate_hz, 250.0);
        }
        ref m => panic!("first frame {m:?}"),
    }
    let sent = beats(&messages);
    assert_eq!(sent, r.beats, "every beat on the wire, bit for bit");
    // 25 pulses in 20 s; the first may go to the filters' start.
    assert!((23..=25).contains(&sent.len()), "{} beats", sent.len());
    for b in &sent[3..] {
        let ibi = b.ibi_ms.unwrap();
        assert!((ibi - 800.0).abs() < 8.0, "interval {ibi} ms");
        assert!(b.flags.is_good(), "{b:?}");
    }
    let hr = sent.last().unwrap().hr_smoothed_bpm.unwrap();
    assert!((hr - 75.0).abs() < 0.5, "{hr} bpm");
    assert!(messages
        .iter()
        .any(|m| matches!(m, Message::State(s) if s.state == SignalState::Good)));
    // Peaks where the finger's light is lowest (the board inverts), at
    // t = 0.2 s + k · 0.8 s; uninverted they would be 0.4 s away. The
    // pipeline's light smoothing delays them by some 20 ms.
    for b in &sent[3..] {
        let t = b.peak_index as f64 / 250.0;
        let phase = ((t - 0.2) / 0.8).rem_euclid(1.0);
        let off = phase.min(1.0 - phase) * 0.8;
        assert!(off < 0.05, "peak {t:.3} s is {off:.3} s from the pulse");
    }
}

#[test]
fn a_dim_start_is_steered_into_the_window_and_beats_follow() {
    // 2 % of full drive: DC 0.10, far below the window.
    let finger = Finger::new(6000.0);
    let mut board = board(&finger, 0.02);
    let r = run(&mut board, &finger, 30);
    let (messages, _) = decode(&r.bytes);
    assert!(!r.changes.is_empty());
    assert!(r.changes.iter().all(|c| c.to > c.from));
    let dc = board.exposure().dc_level();
    assert!((0.3..=0.7).contains(&dc), "DC {dc}");
    // Every change has its status frame, carrying the new drive.
    let drives: Vec<u16> = messages
        .iter()
        .filter_map(|m| match m {
            Message::Status(s) => Some(s.led_drive),
            _ => None,
        })
        .collect();
    for c in &r.changes {
        let expected = (u32::from(c.to) * 65_535 / u32::from(common::PWM_MAX)) as u16;
        assert!(drives.contains(&expected), "{c:?} not reported");
    }
    // Once the drive stopped moving, the beats are good and at 75 bpm.
    let settled = sent_after(&messages, 20.0);
    assert!(settled.len() >= 10, "{} beats", settled.len());
    for b in &settled {
        assert!(b.flags.is_good(), "{b:?}");
        assert!((b.ibi_ms.unwrap() - 800.0).abs() < 8.0);
    }
}

fn sent_after(messages: &[Message], seconds: f64) -> Vec<BeatEvent> {
    beats(messages)
        .into_iter()
        .filter(|b| b.peak_index as f64 / 250.0 > seconds)
        .collect()
}

#[test]
fn at_250_hz_a_115200_baud_line_carries_every_sample_and_drops_nothing() {
    let finger = Finger::new(5000.0);
    let mut board = board(&finger, 0.25);
    let seconds = 60;
    let r = run(&mut board, &finger, seconds);
    let (messages, dec) = decode(&r.bytes);
    let stats = dec.stats();
    assert_eq!((stats.damaged, stats.lost_frames), (0, 0));
    assert_eq!(board.queue().dropped(), 0);
    assert_eq!(board.status().dropped_frames, 0);
    // The line: 46 bytes a tick is 11 520 B/s, 115200 baud at 8N1 (ten
    // bits a byte, common practice). Every byte counted by the decoder.
    let per_s = stats.bytes as f64 / f64::from(seconds);
    assert_eq!(stats.bytes, r.bytes.len() as u64);
    let share = per_s / 11_520.0;
    println!(
        "{per_s:.0} B/s on the line, {:.1} % of 115200 baud",
        share * 100.0
    );
    assert!(share < 0.70, "{per_s} B/s: less than 30 % headroom");
    // docs/wire-format.md: about 2.4 kB/s at 250 Hz, blocks and beats.
    assert!((2300.0..2600.0).contains(&per_s), "{per_s} B/s");
    println!("at most {} bytes queued", r.most_queued);
    assert!(
        r.most_queued < DEFAULT_QUEUE_BYTES,
        "the queue filled up: {}",
        r.most_queued
    );
    // Every input sample is in the blocks, in order, exactly as pushed,
    // with the band-passed value of a pipeline fed the same values.
    let mut pipeline = Pipeline::new(Config {
        sample_rate_hz: 250.0,
        options: board.pipeline().config().options,
    })
    .unwrap();
    let mut next = 0u64;
    for m in &messages {
        let Message::Samples(b) = m else { continue };
        assert_eq!((b.first_index, b.stride, b.count), (next, 1, 16));
        for i in 0..16 {
            let x = r.pushed[next as usize + i];
            pipeline.push(x);
            assert_eq!(b.raw[i].to_bits(), x.to_bits());
            assert_eq!(b.filtered[i].to_bits(), pipeline.band_passed().to_bits());
        }
        next += 16;
    }
    // All but the block the last 4 samples of 15 000 leave open.
    assert_eq!(next, 250 * 60 / 16 * 16);
    // Status: drive, DC and ambient measured; the room's 300 counts of
    // light (common::Finger) of 4095.
    let last = messages
        .iter()
        .rev()
        .find_map(|m| match m {
            Message::Status(s) => Some(*s),
            _ => None,
        })
        .unwrap();
    assert_eq!(last.measured, Status::MEASURED_ALL);
    assert!(
        (last.ambient_level - 300.0 / 4095.0).abs() < 0.01,
        "{last:?}"
    );
    match messages[0] {
        Message::Hello(h) => assert_eq!(h.adc_bits, 12),
        ref m => panic!("first frame {m:?}"),
    }
}

#[test]
fn a_board_on_filters_designed_at_build_time_sends_the_same_bytes() {
    // What a board's build script does for its fixed rate.
    let band = BandSections::design(&Config::new(RATE as f32)).unwrap();
    let finger = Finger::new(5000.0);
    let mut designed = board(&finger, 0.25);
    let reference = run(&mut designed, &finger, 20);
    let finger = Finger::new(5000.0);
    let hw = Hardware {
        led: Led(finger.clone()),
        drive: Drive(finger.clone()),
        adc: Adc(finger.clone()),
        delay: NoopDelay::new(),
    };
    let mut config = BoardConfig::new(RATE, TICK_HZ);
    config.firmware_version = [0, 1, 0];
    config.exposure.initial_drive = 0.25;
    let mut given: BenchBoard = Board::with_band(config, &band, hw).unwrap();
    let r = run(&mut given, &finger, 20);
    assert!(
        reference.beats.len() > 20,
        "{} beats",
        reference.beats.len()
    );
    assert_eq!(r.beats, reference.beats);
    assert_eq!(r.bytes, reference.bytes, "every frame, byte for byte");
}

#[test]
fn a_board_refuses_filters_designed_for_another_rate() {
    let band = BandSections::design(&Config::new(125.0)).unwrap();
    let finger = Finger::new(5000.0);
    let hw = Hardware {
        led: Led(finger.clone()),
        drive: Drive(finger.clone()),
        adc: Adc(finger.clone()),
        delay: NoopDelay::new(),
    };
    let refused = BenchBoard::with_band(BoardConfig::new(RATE, TICK_HZ), &band, hw).err();
    assert_eq!(
        refused.map(|e| format!("{e:?}")),
        Some("Pipeline(BandMismatch)".to_string())
    );
}
