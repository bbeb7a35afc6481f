//! What plethwire's embassy-based real boards share, so that a board crate
//! is only its pin map and peripheral setup: [`sample`], the timer-paced
//! loop around [`Board::tick`]; [`send`], which empties the board's frame
//! queue into a UART while sampling goes on; the panic handler; and
//! [`firmware_version!`].
//!
//! Each board runs the two loops side by side on one executor
//! (`embassy_futures::join`), sharing the board through a `RefCell`: they
//! never hold it across an await, so a borrow cannot fail.

#![no_std]

mod panic;

use core::cell::RefCell;
use core::convert::Infallible;

use embassy_sync::blocking_mutex::raw::NoopRawMutex;
use embassy_sync::signal::Signal;
use embassy_time::{Instant, Timer};
use embedded_hal::delay::DelayNs;
use embedded_hal::digital::{OutputPin, StatefulOutputPin};
use embedded_hal::pwm::SetDutyCycle;
use plethwire_board::{Board, PhotoSampler};

/// Bytes per UART transfer: 5.6 ms of line at 115200 baud, so new frames
/// wait little behind a transfer in flight.
const CHUNK: usize = 64;

/// Take a sample at every deadline, log what happened, toggle `beat_led`
/// at every beat, and wake the sender when there is something to send.
pub async fn sample<L, P, A, D, const Q: usize>(
    board: &RefCell<Board<L, P, A, D, Q>>,
    queued: &Signal<NoopRawMutex, ()>,
    mut beat_led: impl StatefulOutputPin<Error = Infallible>,
) -> !
where
    L: OutputPin,
    P: SetDutyCycle,
    A: PhotoSampler,
    D: DelayNs,
{
    board.borrow_mut().start(Instant::now().as_ticks());
    loop {
        let at = board.borrow().deadline();
        // The timer paces: deadlines come from the schedule, not from the
        // time this loop takes.
        Timer::at(Instant::from_ticks(at)).await;
        let report = board.borrow_mut().tick(Instant::now().as_ticks());
        if let Some(due) = report.due.filter(|d| d.missed > 0) {
            defmt::warn!(
                "{} sample ticks missed before sample {}",
                due.missed,
                due.index
            );
        }
        if let Some(c) = report.drive {
            defmt::info!("LED drive {} -> {} (DC level {})", c.from, c.to, c.dc_level);
        }
        if let Some(s) = report.state {
            defmt::info!("signal {} -> {}", s.previous, s.state);
        }
        if let Some(b) = report.beat {
            match beat_led.toggle() {
                Ok(()) => {}
                Err(never) => match never {},
            }
            defmt::debug!(
                "beat at {}: {} bpm, flags {}",
                b.peak_index,
                b.hr_bpm,
                b.flags
            );
        }
        if !board.borrow().queue().is_empty() {
            queued.signal(());
        }
    }
}

/// Send whatever is queued through `write` (one UART transfer, by DMA on
/// the boards); sleep on `queued` when nothing is.
pub async fn send<L, P, A, D, const Q: usize, E>(
    board: &RefCell<Board<L, P, A, D, Q>>,
    queued: &Signal<NoopRawMutex, ()>,
    mut write: impl AsyncFnMut(&[u8]) -> Result<(), E>,
) -> !
where
    L: OutputPin,
    P: SetDutyCycle,
    A: PhotoSampler,
    D: DelayNs,
    E: defmt::Format,
{
    let mut chunk = [0u8; CHUNK];
    loop {
        // The borrow ends before the await: the sampler needs the board
        // while the transfer runs.
        let n = board.borrow_mut().queue_mut().pop_into(&mut chunk);
        if n == 0 {
            queued.wait().await;
            continue;
        }
        if let Err(e) = write(&chunk[..n]).await {
            defmt::warn!("UART transmit failed: {}", e);
        }
    }
}

/// The calling crate's package version as the `[major, minor, patch]` that
/// `Hello` reports, worked out and checked at compile time (a constant, so
/// no parsing code is linked).
#[macro_export]
macro_rules! firmware_version {
    () => {{
        const VERSION: [u8; 3] = [
            $crate::version_part(env!("CARGO_PKG_VERSION_MAJOR")),
            $crate::version_part(env!("CARGO_PKG_VERSION_MINOR")),
            $crate::version_part(env!("CARGO_PKG_VERSION_PATCH")),
        ];
        VERSION
    }};
}

/// A version component ("0" to "255") as a number, at compile time; for
/// [`firmware_version!`].
#[doc(hidden)]
pub const fn version_part(s: &str) -> u8 {
    let b = s.as_bytes();
    let mut i = 0;
    let mut v: u32 = 0;
    while i < b.len() {
        assert!(b[i].is_ascii_digit(), "version parts are numbers");
        v = v * 10 + (b[i] - b'0') as u32;
        i += 1;
    }
    assert!(v <= 255, "version parts fit in a byte");
    v as u8
}
