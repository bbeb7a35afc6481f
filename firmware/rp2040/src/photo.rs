//! The photodetector's ADC input as a [`PhotoSampler`].

use embassy_rp::adc::{self, Adc, Blocking, Channel};
use plethwire_board::PhotoSampler;

/// The RP2040's ADC reading one input, 12 bits. Its sampling time is fixed
/// (one conversion is 96 cycles of the 48 MHz ADC clock, 2 µs), so unlike
/// the STM32 board there is nothing to choose here; a front end with a high
/// output resistance needs a buffer or a capacitor at the pin instead.
pub struct Photo<'d> {
    adc: Adc<'d, Blocking>,
    channel: Channel<'d>,
}

impl<'d> Photo<'d> {
    /// Read `channel` with `adc`.
    pub fn new(adc: Adc<'d, Blocking>, channel: Channel<'d>) -> Self {
        Self { adc, channel }
    }
}

impl PhotoSampler for Photo<'_> {
    // The ADC flags a conversion it could not complete; the board counts
    // it as a failed conversion and the pipeline holds its last value.
    type Error = adc::Error;

    fn read(&mut self) -> Result<u16, adc::Error> {
        self.adc.blocking_read(&mut self.channel)
    }
}
