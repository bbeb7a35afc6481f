//! The board driver against mocks and a bench finger: frames, counters,
//! exposure changes, lost samples and a full transmit queue.

mod common;

use common::{decode, Adc, Drive, Finger, Led, FULL_SCALE, PWM_MAX};
use embedded_hal_mock::eh1::delay::{CheckedDelay, NoopDelay, Transaction as DelayTx};
use embedded_hal_mock::eh1::digital::{Mock as PinMock, State, Transaction as PinTx};
use embedded_hal_mock::eh1::pwm::{Mock as PwmMock, Transaction as PwmTx};
use plethwire_board::{Board, BoardConfig, Hardware, PhotoSampler};
use plethwire_dsp::wire::{Decoder, Message, Status};

const TICK_HZ: u64 = 1_000_000;

/// An ADC whose LED-on reading is always the same fraction of full scale
/// and whose LED-off reading is 0.
struct Constant {
    level: f32,
    lit_next: bool,
}

impl PhotoSampler for Constant {
    type Error = core::convert::Infallible;
    fn read(&mut self) -> Result<u16, Self::Error> {
        // Readings alternate on, off (the ambient module's order).
        let lit = self.lit_next;
        self.lit_next = !lit;
        Ok(if lit {
            (self.level * FULL_SCALE as f32) as u16
        } else {
            0
        })
    }
}

/// Run `board` for `n` deadlines, collecting the transmitted bytes.
fn run<L, P, A, D, const Q: usize>(board: &mut Board<L, P, A, D, Q>, n: usize, out: &mut Vec<u8>)
where
    L: embedded_hal::digital::OutputPin,
    P: embedded_hal::pwm::SetDutyCycle,
    A: PhotoSampler,
    D: embedded_hal::delay::DelayNs,
{
    let mut buf = [0u8; 64];
    for _ in 0..n {
        board.tick(board.deadline());
        loop {
            let k = board.queue_mut().pop_into(&mut buf);
            if k == 0 {
                break;
            }
            out.extend_from_slice(&buf[..k]);
        }
    }
}

fn statuses(messages: &[Message]) -> Vec<Status> {
    messages
        .iter()
        .filter_map(|m| match m {
            Message::Status(s) => Some(*s),
            _ => None,
        })
        .collect()
}

#[test]
fn every_led_change_sets_the_pwm_and_sends_a_status() {
    // 100 Hz, dark finger (DC 0.2): one step up per second of hold time.
    let n = 250;
    let mut led_tx = Vec::new();
    let mut delay_tx = Vec::new();
    for _ in 0..n {
        led_tx.extend([PinTx::set(State::High), PinTx::set(State::Low)]);
        delay_tx.extend([DelayTx::delay_ns(250_000), DelayTx::delay_ns(250_000)]);
    }
    let drive = PwmMock::new(&[
        PwmTx::max_duty_cycle(1000),
        PwmTx::set_duty_cycle(250),
        PwmTx::set_duty_cycle(312),
        PwmTx::set_duty_cycle(390),
    ]);
    let hw = Hardware {
        led: PinMock::new(&led_tx),
        drive,
        adc: Constant {
            level: 0.2,
            lit_next: true,
        },
        delay: CheckedDelay::new(&delay_tx),
    };
    let mut config = BoardConfig::new(100, TICK_HZ);
    config.settle_ns = 250_000;
    config.status_period_s = 60;
    let mut board: Board<_, _, _, _> = Board::new(config, hw).unwrap();
    board.start(0);
    let mut bytes = Vec::new();
    let mut changes = Vec::new();
    let mut buf = [0u8; 64];
    for _ in 0..n {
        let r = board.tick(board.deadline());
        changes.extend(r.drive);
        while let k @ 1.. = board.queue_mut().pop_into(&mut buf) {
            bytes.extend_from_slice(&buf[..k]);
        }
    }
    assert_eq!(
        changes.iter().map(|c| (c.from, c.to)).collect::<Vec<_>>(),
        [(250, 312), (312, 390)]
    );
    let (messages, _) = decode(&bytes);
    assert!(matches!(messages[0], Message::Hello(h) if h.sample_rate_hz == 100.0));
    let drives: Vec<u16> = statuses(&messages).iter().map(|s| s.led_drive).collect();
    // Initial status, then one per change: 250, 312 and 390 of 1000.
    assert_eq!(drives, [16_383, 20_446, 25_558]);
    let mut hw = board.into_hardware();
    hw.led.done();
    hw.drive.done();
    hw.delay.done();
}

#[test]
fn status_comes_every_period() {
    let finger = Finger::new(5000.0);
    let hw = Hardware {
        led: Led(finger.clone()),
        drive: Drive(finger.clone()),
        adc: Adc(finger.clone()),
        delay: NoopDelay::new(),
    };
    let mut config = BoardConfig::new(250, TICK_HZ);
    config.status_period_s = 2;
    let mut board: Board<_, _, _, _> = Board::new(config, hw).unwrap();
    board.start(0);
    let mut bytes = Vec::new();
    run(&mut board, 250 * 10, &mut bytes);
    let (messages, dec) = decode(&bytes);
    // At start, then after 2, 4, 6, 8 and 10 s.
    assert_eq!(statuses(&messages).len(), 6);
    assert_eq!(dec.stats().lost_frames, 0);
    assert_eq!(board.counters().samples, 2500);
}

#[test]
fn missed_ticks_are_counted_and_keep_their_place() {
    let finger = Finger::new(5000.0);
    let hw = Hardware {
        led: Led(finger.clone()),
        drive: Drive(finger.clone()),
        adc: Adc(finger.clone()),
        delay: NoopDelay::new(),
    };
    let mut board: Board<_, _, _, _> = Board::new(BoardConfig::new(250, TICK_HZ), hw).unwrap();
    board.start(1000);
    let mut bytes = Vec::new();
    run(&mut board, 10, &mut bytes);
    // Wake 3.5 periods late: samples 10, 11 and 12 are lost, 13 is taken.
    let late = board.deadline() + 3 * 4000 + 2000;
    let r = board.tick(late);
    let due = r.due.unwrap();
    assert_eq!((due.index, due.missed, due.late_ticks), (13, 3, 2000));
    assert!(r.sample.is_some());
    assert_eq!(board.counters().missed_ticks, 3);
    assert_eq!(board.status().adc_overruns, 3);
    assert_eq!(board.pipeline().rejected_samples(), 3, "placeholders");
    assert_eq!(board.pipeline().samples(), 14, "indices stay true time");
    assert_eq!(board.deadline(), 1000 + 14 * 4000);
}

#[test]
fn a_failed_conversion_is_an_overrun_and_no_sample() {
    let finger = Finger::new(5000.0);
    // Read 7 is the LED-on reading of sample 3; read 10 the off reading of 5.
    finger.borrow_mut().failing_reads = vec![7, 10];
    let hw = Hardware {
        led: Led(finger.clone()),
        drive: Drive(finger.clone()),
        adc: Adc(finger.clone()),
        delay: NoopDelay::new(),
    };
    let mut board: Board<_, _, _, _> = Board::new(BoardConfig::new(250, TICK_HZ), hw).unwrap();
    board.start(0);
    let taken: Vec<bool> = (0..8)
        .map(|_| board.tick(board.deadline()).sample.is_some())
        .collect();
    assert_eq!(taken, [true, true, true, false, true, false, true, true]);
    assert!(!finger.borrow().lit, "LED off after the failures");
    let c = board.counters();
    assert_eq!((c.adc_errors, c.samples, c.missed_ticks), (2, 6, 0));
    assert_eq!(board.status().adc_overruns, 2);
    assert_eq!(board.pipeline().samples(), 8);
    assert_eq!(board.status().rejected_samples, 2);
}

#[test]
fn a_full_queue_drops_frames_and_counts_them() {
    let finger = Finger::new(5000.0);
    let hw = Hardware {
        led: Led(finger.clone()),
        drive: Drive(finger.clone()),
        adc: Adc(finger.clone()),
        delay: NoopDelay::new(),
    };
    let mut config = BoardConfig::new(250, TICK_HZ);
    config.status_period_s = 1;
    // Hello (40 bytes) and a status (37) do not both fit in 64, and a
    // sample block (148) never does.
    let mut board: Board<_, _, _, _, 64> = Board::new(config, hw).unwrap();
    board.start(0);
    assert_eq!(board.queue().dropped(), 1);
    // Nobody drains the queue for 3 s: three more statuses are dropped
    // (beats too, if any came).
    for _ in 0..750 {
        board.tick(board.deadline());
    }
    let dropped = board.queue().dropped();
    assert!(dropped >= 4, "{dropped}");
    assert_eq!(board.status().dropped_frames, dropped);
    // Drain, then the next status gets through and carries the count; the
    // host sees the same number as gaps in the sequence.
    let mut bytes = Vec::new();
    let mut buf = [0u8; 64];
    let k = board.queue_mut().pop_into(&mut buf);
    bytes.extend_from_slice(&buf[..k]);
    run(&mut board, 250, &mut bytes);
    let (messages, _) = decode(&bytes);
    assert!(matches!(messages[0], Message::Hello(_)));
    // Every frame dropped before the last status is a gap in the sequence
    // numbers before it, and that status carries their count.
    let mut dec = Decoder::new();
    let frames: Vec<_> = bytes.iter().filter_map(|&b| dec.push(b)?.ok()).collect();
    let (at, last) = frames
        .iter()
        .enumerate()
        .rev()
        .find_map(|(i, f)| match f.message {
            Message::Status(s) => Some((i, (f.seq, s))),
            _ => None,
        })
        .unwrap();
    let (seq, status) = last;
    assert_eq!(u32::from(seq) - at as u32, status.dropped_frames);
    assert!(
        status.dropped_frames > dropped,
        "the blocks of the last second"
    );
    assert_eq!(board.status().dropped_frames, board.queue().dropped());
}

#[test]
fn clipped_readings_are_counted() {
    let finger = Finger::new(20_000.0);
    let hw = Hardware {
        led: Led(finger.clone()),
        drive: Drive(finger.clone()),
        adc: Adc(finger.clone()),
        delay: NoopDelay::new(),
    };
    let mut config = BoardConfig::new(250, TICK_HZ);
    config.exposure.initial_drive = 1.0;
    let mut board: Board<_, _, _, _> = Board::new(config, hw).unwrap();
    board.start(0);
    let mut bytes = Vec::new();
    run(&mut board, 100, &mut bytes);
    // Full drive gives 20 000 counts: every reading at the top rail, and
    // no change yet (the hold time has not passed).
    assert_eq!(board.counters().clipped, 100);
    assert_eq!(board.status().clipped_samples, 100);
    assert_eq!(finger.borrow().duty, PWM_MAX);
    // After the hold time the drive halves, and halves again, until the
    // readings leave the rail.
    run(&mut board, 1000, &mut bytes);
    assert!(
        finger.borrow().duty <= PWM_MAX / 4,
        "{}",
        finger.borrow().duty
    );
    let clipped = board.counters().clipped;
    run(&mut board, 500, &mut bytes);
    assert_eq!(board.counters().clipped, clipped, "no more clipping");
}

#[test]
fn unpaceable_rates_are_refused() {
    let finger = Finger::new(5000.0);
    let hw = || Hardware {
        led: Led(finger.clone()),
        drive: Drive(finger.clone()),
        adc: Adc(finger.clone()),
        delay: NoopDelay::new(),
    };
    for rate in [0, 10, 2000] {
        let r = Board::<_, _, _, _>::new(BoardConfig::new(rate, TICK_HZ), hw());
        assert!(
            matches!(r, Err(plethwire_board::BoardError::Rate)),
            "{rate}"
        );
    }
    assert!(Board::<_, _, _, _>::new(BoardConfig::new(250, TICK_HZ), hw()).is_ok());
}
