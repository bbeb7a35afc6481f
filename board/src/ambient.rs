//! Ambient-light cancelling: each sample is a reading with the LED on minus
//! a reading with it off, taken a few hundred microseconds apart.
//!
//! Room light (and its flicker at twice the mains frequency) reaches the
//! photodetector in both readings and cancels in the difference; only the
//! LED's light, which the finger's blood volume modulates, remains. The
//! off reading is kept as the ambient level (a lot of it eats into the
//! ADC's range even though it cancels).

use embedded_hal::delay::DelayNs;
use embedded_hal::digital::OutputPin;

use crate::PhotoSampler;

/// Default settle time after switching the LED, ns: five time constants of
/// a front end whose low-pass corner is at 2.7 kHz or above (τ ≤ 59 µs).
/// A slower front end needs a longer settle time (5·τ = 5 / (2π·f_c)).
pub const DEFAULT_SETTLE_NS: u32 = 300_000;

/// The two readings of one sample, ADC counts.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct AmbientSample {
    /// Reading with the LED on: LED light plus ambient light.
    pub on: u16,
    /// Reading with the LED off: ambient light alone.
    pub off: u16,
}

impl AmbientSample {
    /// The LED's own light, `on − off`, ADC counts. Negative only when the
    /// ambient light rose between the two readings.
    pub fn value(&self) -> i32 {
        i32::from(self.on) - i32::from(self.off)
    }

    /// The ambient level (the LED-off reading), ADC counts.
    pub fn ambient(&self) -> u16 {
        self.off
    }

    /// Is a reading at an ADC rail, so the difference is not the light?
    /// The LED-on reading counts at either rail; the LED-off reading only
    /// at the top one, because 0 is what a dark room normally reads.
    pub fn clipped(&self, full_scale: u16) -> bool {
        self.on == 0 || self.on >= full_scale || self.off >= full_scale
    }
}

/// Why no sample came out.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum SampleError<A, L> {
    /// The ADC failed a conversion (an overrun on most parts).
    Adc(A),
    /// The LED could not be switched.
    Led(L),
}

/// Takes ambient-cancelled samples with a fixed settle time.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct AmbientCanceller {
    settle_ns: u32,
}

impl Default for AmbientCanceller {
    fn default() -> Self {
        Self::new(DEFAULT_SETTLE_NS)
    }
}

impl AmbientCanceller {
    /// Wait `settle_ns` after each switch of the LED before reading.
    pub fn new(settle_ns: u32) -> Self {
        Self { settle_ns }
    }

    /// The settle time, ns.
    pub fn settle_ns(&self) -> u32 {
        self.settle_ns
    }

    /// LED on → settle → read → LED off → settle → read. `led` high means
    /// lit. The LED is off when this returns, whatever failed.
    pub fn sample<L, A, D>(
        &self,
        led: &mut L,
        adc: &mut A,
        delay: &mut D,
    ) -> Result<AmbientSample, SampleError<A::Error, L::Error>>
    where
        L: OutputPin,
        A: PhotoSampler,
        D: DelayNs,
    {
        if let Err(e) = led.set_high() {
            // A half-switched driver must not be left lit.
            let _ = led.set_low();
            return Err(SampleError::Led(e));
        }
        delay.delay_ns(self.settle_ns);
        let on = adc.read();
        let switched_off = led.set_low();
        let on = on.map_err(SampleError::Adc)?;
        switched_off.map_err(SampleError::Led)?;
        delay.delay_ns(self.settle_ns);
        let off = adc.read().map_err(SampleError::Adc)?;
        Ok(AmbientSample { on, off })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use core::cell::Cell;
    use core::convert::Infallible;
    use embedded_hal::digital::ErrorType;
    use embedded_hal_mock::eh1::delay::{CheckedDelay, Transaction as DelayTx};
    use embedded_hal_mock::eh1::digital::{Mock as PinMock, State, Transaction as PinTx};
    use embedded_hal_mock::eh1::MockError;
    use std::io::ErrorKind;
    use std::rc::Rc;
    use std::vec::Vec;

    /// The ADC's answers, one per call, in order.
    struct Script(Vec<Result<u16, ()>>);

    impl PhotoSampler for Script {
        type Error = ();
        fn read(&mut self) -> Result<u16, ()> {
            assert!(!self.0.is_empty(), "more ADC reads than expected");
            self.0.remove(0)
        }
    }

    #[test]
    fn mocks_see_on_settle_read_off_settle_read() {
        let mut led = PinMock::new(&[PinTx::set(State::High), PinTx::set(State::Low)]);
        let mut delay =
            CheckedDelay::new(&[DelayTx::delay_ns(300_000), DelayTx::delay_ns(300_000)]);
        let mut adc = Script(vec![Ok(2900), Ok(400)]);
        let s = AmbientCanceller::new(300_000)
            .sample(&mut led, &mut adc, &mut delay)
            .unwrap();
        assert_eq!(s, AmbientSample { on: 2900, off: 400 });
        assert_eq!(s.value(), 2500);
        assert_eq!(s.ambient(), 400);
        assert!(adc.0.is_empty());
        led.done();
        delay.done();
    }

    /// Everything the three devices were asked, in one order.
    #[derive(Clone, Copy, Debug, PartialEq)]
    enum Step {
        On,
        Off,
        Wait(u32),
        Read(u16),
    }

    /// A light model: the ADC reads ambient, plus the LED's light when the
    /// LED is lit at the moment of the read.
    struct Bench {
        lit: Rc<Cell<bool>>,
        log: Rc<std::cell::RefCell<Vec<Step>>>,
    }
    struct Led(Bench);
    struct Adc(Bench);
    struct Wait(Bench);

    impl ErrorType for Led {
        type Error = Infallible;
    }
    impl OutputPin for Led {
        fn set_high(&mut self) -> Result<(), Infallible> {
            self.0.lit.set(true);
            self.0.log.borrow_mut().push(Step::On);
            Ok(())
        }
        fn set_low(&mut self) -> Result<(), Infallible> {
            self.0.lit.set(false);
            self.0.log.borrow_mut().push(Step::Off);
            Ok(())
        }
    }
    impl PhotoSampler for Adc {
        type Error = Infallible;
        fn read(&mut self) -> Result<u16, Infallible> {
            let v = 700 + if self.0.lit.get() { 1800 } else { 0 };
            self.0.log.borrow_mut().push(Step::Read(v));
            Ok(v)
        }
    }
    impl DelayNs for Wait {
        fn delay_ns(&mut self, ns: u32) {
            self.0.log.borrow_mut().push(Step::Wait(ns));
        }
    }

    #[test]
    fn readings_interleave_with_the_led_and_subtract_the_ambient() {
        let lit = Rc::new(Cell::new(false));
        let log = Rc::new(std::cell::RefCell::new(Vec::new()));
        let bench = || Bench {
            lit: lit.clone(),
            log: log.clone(),
        };
        let (mut led, mut adc, mut wait) = (Led(bench()), Adc(bench()), Wait(bench()));
        let s = AmbientCanceller::new(5_000)
            .sample(&mut led, &mut adc, &mut wait)
            .unwrap();
        assert_eq!(
            *log.borrow(),
            [
                Step::On,
                Step::Wait(5_000),
                Step::Read(2500),
                Step::Off,
                Step::Wait(5_000),
                Step::Read(700)
            ]
        );
        assert_eq!(s.value(), 1800, "the LED's light alone");
        assert_eq!(s.ambient(), 700);
        assert!(!lit.get(), "LED left off");
    }

    #[test]
    fn a_failed_on_reading_switches_the_led_off_and_reads_no_more() {
        let mut led = PinMock::new(&[PinTx::set(State::High), PinTx::set(State::Low)]);
        let mut delay = CheckedDelay::new(&[DelayTx::delay_ns(1_000)]);
        let mut adc = Script(vec![Err(())]);
        let r = AmbientCanceller::new(1_000).sample(&mut led, &mut adc, &mut delay);
        assert_eq!(r, Err(SampleError::Adc(())));
        led.done();
        delay.done();
    }

    #[test]
    fn a_failed_off_reading_is_an_error_too() {
        let mut led = PinMock::new(&[PinTx::set(State::High), PinTx::set(State::Low)]);
        let mut delay = CheckedDelay::new(&[DelayTx::delay_ns(1_000), DelayTx::delay_ns(1_000)]);
        let mut adc = Script(vec![Ok(3000), Err(())]);
        let r = AmbientCanceller::new(1_000).sample(&mut led, &mut adc, &mut delay);
        assert_eq!(r, Err(SampleError::Adc(())));
        led.done();
        delay.done();
    }

    #[test]
    fn a_pin_that_will_not_switch_on_is_switched_off_again() {
        let mut led = PinMock::new(&[
            PinTx::set(State::High).with_error(MockError::Io(ErrorKind::NotConnected)),
            PinTx::set(State::Low),
        ]);
        let mut delay = CheckedDelay::new(&[]);
        let mut adc = Script(vec![]);
        let r = AmbientCanceller::new(1_000).sample(&mut led, &mut adc, &mut delay);
        assert!(matches!(r, Err(SampleError::Led(_))));
        led.done();
        delay.done();
    }

    #[test]
    fn clipping_is_a_rail_on_the_lit_reading_or_a_saturated_room() {
        let fs = 4095;
        let s = |on, off| AmbientSample { on, off };
        assert!(!s(2000, 0).clipped(fs), "a dark room reads 0");
        assert!(!s(2000, 300).clipped(fs));
        assert!(s(4095, 300).clipped(fs));
        assert!(s(0, 0).clipped(fs));
        assert!(s(4095, 4095).clipped(fs));
        assert_eq!(s(1000, 1200).value(), -200);
    }
}
