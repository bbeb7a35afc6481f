//! A finger on a bench, for the board's tests: an LED whose light reaches
//! the ADC only while it is switched on, scaled by the PWM drive and
//! modulated by a sine pulse, on top of flickering room light.

#![allow(dead_code)] // each test binary uses its own part of the bench

use std::cell::RefCell;
use std::convert::Infallible;
use std::f64::consts::PI;
use std::rc::Rc;

use embedded_hal::digital::{ErrorType, OutputPin};
use embedded_hal::pwm::{ErrorType as PwmErrorType, SetDutyCycle};
use plethwire_board::PhotoSampler;
use plethwire_dsp::wire::{Decoder, Message};

/// ADC full scale of the bench, counts.
pub const FULL_SCALE: u16 = 4095;
/// PWM full duty of the bench, counts.
pub const PWM_MAX: u16 = 5000;

/// The bench's state and what it has seen.
#[derive(Debug)]
pub struct Finger {
    /// Time of the current sample, s (set by the test before each tick).
    pub t: f64,
    /// LED switched on.
    pub lit: bool,
    /// PWM duty, counts.
    pub duty: u16,
    /// ADC counts the LED gives at full drive through the finger.
    pub light_full: f64,
    /// Room light, counts, and its flicker amplitude at 100 Hz.
    pub ambient: f64,
    /// Flicker amplitude, counts.
    pub flicker: f64,
    /// Fraction of the light the pulse takes away at its peak.
    pub pulse_depth: f64,
    /// Pulse rate, Hz.
    pub pulse_hz: f64,
    /// Reads so far.
    pub reads: usize,
    /// Reads (by number, from 0) that fail.
    pub failing_reads: Vec<usize>,
}

impl Finger {
    /// A finger at 75 bpm, a 2 % pulse, 300 counts of room light.
    pub fn new(light_full: f64) -> Rc<RefCell<Self>> {
        Rc::new(RefCell::new(Self {
            t: 0.0,
            lit: false,
            duty: 0,
            light_full,
            ambient: 300.0,
            flicker: 60.0,
            pulse_depth: 0.02,
            pulse_hz: 1.25,
            reads: 0,
            failing_reads: Vec::new(),
        }))
    }

    /// What the ADC reads now.
    pub fn reading(&self) -> u16 {
        let room = self.ambient + self.flicker * (2.0 * PI * 100.0 * self.t).sin();
        let pulse = 0.5 + 0.5 * (2.0 * PI * self.pulse_hz * self.t).sin();
        let led = if self.lit {
            self.light_full * f64::from(self.duty) / f64::from(PWM_MAX)
                * (1.0 - self.pulse_depth * pulse)
        } else {
            0.0
        };
        (room + led).round().clamp(0.0, f64::from(FULL_SCALE)) as u16
    }
}

/// The LED switch.
pub struct Led(pub Rc<RefCell<Finger>>);
/// The LED drive.
pub struct Drive(pub Rc<RefCell<Finger>>);
/// The ADC.
pub struct Adc(pub Rc<RefCell<Finger>>);

impl ErrorType for Led {
    type Error = Infallible;
}

impl OutputPin for Led {
    fn set_high(&mut self) -> Result<(), Infallible> {
        self.0.borrow_mut().lit = true;
        Ok(())
    }
    fn set_low(&mut self) -> Result<(), Infallible> {
        self.0.borrow_mut().lit = false;
        Ok(())
    }
}

impl PwmErrorType for Drive {
    type Error = Infallible;
}

impl SetDutyCycle for Drive {
    fn max_duty_cycle(&self) -> u16 {
        PWM_MAX
    }
    fn set_duty_cycle(&mut self, duty: u16) -> Result<(), Infallible> {
        self.0.borrow_mut().duty = duty;
        Ok(())
    }
}

impl PhotoSampler for Adc {
    type Error = ();
    fn read(&mut self) -> Result<u16, ()> {
        let mut f = self.0.borrow_mut();
        let n = f.reads;
        f.reads += 1;
        if f.failing_reads.contains(&n) {
            return Err(());
        }
        Ok(f.reading())
    }
}

/// Decode a byte stream; every frame must be intact.
pub fn decode(bytes: &[u8]) -> (Vec<Message>, Decoder) {
    let mut dec = Decoder::new();
    let messages = bytes
        .iter()
        .filter_map(|&b| dec.push(b))
        .map(|r| r.expect("an intact frame").message)
        .collect();
    (messages, dec)
}
