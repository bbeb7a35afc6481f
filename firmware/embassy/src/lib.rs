//! What plethwire's embassy-based real boards share, so that a board crate
//! is only its pin map and peripheral setup: [`board`], which sets up the
//! [`Board`]; [`run`], which runs its two loops (the timer-paced sampler
//! around [`Board::tick`], and the sender that empties the board's frame
//! queue into a UART while sampling goes on); the panic handler; and
//! [`firmware_version!`].
//!
//! The two loops run side by side on one executor (`join`), sharing the
//! board through a `RefCell`: they never hold it across an await, so a
//! borrow cannot fail.

#![no_std]

mod panic;

use core::cell::RefCell;
use core::convert::Infallible;

use embassy_futures::join::join;
use embassy_sync::blocking_mutex::raw::NoopRawMutex;
use embassy_sync::signal::Signal;
use embassy_time::{Instant, Timer};
use embedded_hal::delay::DelayNs;
use embedded_hal::digital::{OutputPin, StatefulOutputPin};
use embedded_hal::pwm::SetDutyCycle;
use plethwire_board::{Board, BoardConfig, BoardError, Hardware, PhotoSampler};
use plethwire_dsp::pipeline::BandSections;

/// Bytes per UART transfer: 5.6 ms of line at 115200 baud, so new frames
/// wait little behind a transfer in flight.
const CHUNK: usize = 64;

/// A [`Board`] with `config` on `hw`, running the filters `band` (the
/// board's build script designs them for its fixed rate, so no filter
/// design is linked in), ready for [`run`]. Panics, with a log line, if it
/// cannot be set up.
pub fn board<L, P, A, D>(
    config: BoardConfig,
    band: &BandSections,
    hw: Hardware<L, P, A, D>,
) -> RefCell<Board<L, P, A, D>>
where
    L: OutputPin,
    P: SetDutyCycle,
    A: PhotoSampler,
    D: DelayNs,
{
    match Board::with_band(config, band, hw) {
        Ok(board) => RefCell::new(board),
        // Not every HAL's PWM error has a defmt form; the only one a duty
        // can meet is being above the period, which the exposure
        // controller never asks for.
        Err(BoardError::Drive(_)) => defmt::panic!("board setup: the LED drive refused its duty"),
        Err(BoardError::Rate) => defmt::panic!("board setup: {} Hz", config.sample_rate_hz),
        Err(BoardError::Pipeline(e)) => defmt::panic!("board setup: {}", e),
    }
}

/// Run `board`: a sample at every deadline, `beat_led` toggled at every
/// beat, and the frames out through `write` (one UART transfer, by DMA on
/// the boards).
///
/// The board stays in the caller's frame (the main task's static storage):
/// moved into this future as well, it would cost a second copy of its
/// state handling, about 1 KiB of flash.
pub async fn run<L, P, A, D, const Q: usize, E>(
    board: &RefCell<Board<L, P, A, D, Q>>,
    beat_led: impl StatefulOutputPin<Error = Infallible>,
    write: impl AsyncFnMut(&[u8]) -> Result<(), E>,
) -> !
where
    L: OutputPin,
    P: SetDutyCycle,
    A: PhotoSampler,
    D: DelayNs,
    E: defmt::Format,
{
    let queued = Signal::new();
    join(
        sample(board, &queued, beat_led),
        send(board, &queued, write),
    )
    .await
    .0
}

/// Take a sample at every deadline, log what happened, toggle `beat_led`
/// at every beat, and wake the sender when there is something to send.
async fn sample<L, P, A, D, const Q: usize>(
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

/// Send whatever is queued through `write`; sleep on `queued` when nothing
/// is.
async fn send<L, P, A, D, const Q: usize, E>(
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
