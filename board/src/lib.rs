//! `plethwire-board`: everything a pulse-sensor board does that is not
//! register access, so that it runs and is tested on the PC.
//!
//! A board crate under `firmware/` sets up clocks and peripherals, wraps
//! them in the embedded-hal 1.0 traits (and [`PhotoSampler`] for the ADC,
//! which embedded-hal 1.0 does not cover), hands them to a [`Board`] and
//! then only does two things: call [`Board::tick`] when the timer reaches
//! [`Board::deadline`], and move bytes from [`Board::queue`] to the UART.
//!
//! * [`ambient`]: one sample = LED on → settle → read → LED off → settle →
//!   read; the sample is the difference, so room light and its mains
//!   flicker cancel.
//! * [`exposure`]: LED drive (PWM duty) stepped so the DC level of the
//!   LED-on reading stays away from the ADC rails, with a dead band and a
//!   hold time so it does not hunt.
//! * [`schedule`]: sample deadlines computed from the timer's count (no
//!   drift), and missed ticks counted.
//! * [`queue`]: a fixed byte queue of encoded frames for the UART, counting
//!   frames dropped when it is full.
//! * [`driver`]: the [`Board`] that ties these to the beat pipeline and the
//!   wire format (`plethwire_dsp::wire`).
#![cfg_attr(not(test), no_std)]

pub mod ambient;
pub mod driver;
pub mod exposure;
pub mod queue;
pub mod schedule;

pub use ambient::{AmbientCanceller, AmbientSample, SampleError};
pub use driver::{Board, BoardConfig, BoardError, Counters, Hardware, TickReport};
pub use exposure::{DriveChange, Exposure, ExposureConfig};
pub use queue::FrameQueue;
pub use schedule::{Due, Schedule};

/// One ADC channel reading the photodetector's front end.
///
/// embedded-hal 1.0 has no ADC trait; a board implements this over its
/// HAL's ADC (one blocking conversion per call).
pub trait PhotoSampler {
    /// Why a conversion failed (an overrun, a timeout).
    type Error;

    /// Convert once and return the reading in ADC counts, 0 to full scale.
    fn read(&mut self) -> Result<u16, Self::Error>;
}
