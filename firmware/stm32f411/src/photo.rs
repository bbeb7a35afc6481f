//! The photodetector's ADC channel as a [`PhotoSampler`].

use core::convert::Infallible;

use embassy_stm32::adc::{Adc, SampleTime};
use embassy_stm32::peripherals::{ADC1, PA1};
use embassy_stm32::Peri;
use plethwire_board::PhotoSampler;

/// Sampling time per conversion: 144 ADC cycles (5.8 µs at 25 MHz) let the
/// sample capacitor charge through a front end's output resistor of up to
/// some tens of kΩ; the conversion adds 12 cycles.
const SAMPLE_TIME: SampleTime = SampleTime::CYCLES144;

/// ADC1 reading PA1 (channel 1), 12 bits.
pub struct Photo<'d> {
    adc: Adc<'d, ADC1>,
    pin: Peri<'d, PA1>,
}

impl<'d> Photo<'d> {
    /// Read `pin` with `adc`.
    pub fn new(adc: Adc<'d, ADC1>, pin: Peri<'d, PA1>) -> Self {
        Self { adc, pin }
    }
}

impl PhotoSampler for Photo<'_> {
    // One software-started conversion that is read before the next starts
    // cannot overrun: lost samples on this board are missed ticks.
    type Error = Infallible;

    fn read(&mut self) -> Result<u16, Infallible> {
        Ok(self.adc.blocking_read(&mut self.pin, SAMPLE_TIME))
    }
}
