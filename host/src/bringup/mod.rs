//! Bring-up checks of a new optical pulse sensor, each computed from one
//! block of samples as a number with a plain verdict and a one-line message:
//! perfusion index ([`perfusion`]), bits of pulse against the ADC step
//! ([`pulse_bits`]), heart-band signal-to-noise ([`snr`]), mains hum
//! ([`hum`]), clipped share ([`clipping`]), ambient share of the LED-on
//! level ([`ambient`]) and the settling of the LED drive loop
//! ([`settling`]). The periodogram they share is in [`spectrum`];
//! [`live`] runs them once a second over the last 10 s of a board's
//! samples, with the gauges and the advice of a circuit file.
//!
//! Every threshold is a named constant beside its check; where no source is
//! named it is `common practice` for optical pulse front ends, a starting
//! point for a builder rather than a clinical limit.

pub mod ambient;
pub mod clipping;
pub mod hum;
pub mod live;
pub mod perfusion;
pub mod pulse_bits;
pub mod settling;
pub mod snr;
pub mod spectrum;

/// How a check came out, in plain words; JSON writes it in snake_case
/// (`not_measurable`).
#[derive(Clone, Copy, Debug, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Verdict {
    /// Nothing to do.
    Clear,
    /// Works, but with little margin: worth a look.
    Borderline,
    /// Needs a change before the signal can be trusted.
    Trouble,
    /// The check cannot be made on this block (e.g. hum above Nyquist).
    NotMeasurable,
}

impl Verdict {
    /// The verdict as the terminal and JSON write it: `clear`,
    /// `borderline`, `trouble`, `not measurable`.
    pub fn name(self) -> &'static str {
        match self {
            Verdict::Clear => "clear",
            Verdict::Borderline => "borderline",
            Verdict::Trouble => "trouble",
            Verdict::NotMeasurable => "not measurable",
        }
    }
}

/// One check's outcome: the number (absent when it cannot be computed), the
/// verdict and one line in plain words.
#[derive(Clone, Debug, PartialEq, serde::Serialize)]
pub struct Check {
    /// The measured number, in the unit the check's doc names.
    pub value: Option<f64>,
    /// The verdict.
    pub verdict: Verdict,
    /// One line for the builder.
    pub message: String,
}

impl Check {
    fn new(value: Option<f64>, verdict: Verdict, message: String) -> Check {
        Check {
            value,
            verdict,
            message,
        }
    }
}

/// A bad parameter of a check, named.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum BringupError {
    /// A list that must hold values is empty or too short.
    #[error("{name} holds {len} values, at least {min} needed")]
    TooFew {
        /// The parameter.
        name: &'static str,
        /// How many it holds.
        len: usize,
        /// How many are needed.
        min: usize,
    },
    /// A value is NaN or infinite.
    #[error("{name} is not a finite number (at index {index})")]
    NotFinite {
        /// The parameter.
        name: &'static str,
        /// Where in the list (0 for a single value).
        index: usize,
    },
    /// A value outside what it may be.
    #[error("{name} is {value}, it must be {rule}")]
    OutOfRange {
        /// The parameter.
        name: &'static str,
        /// The value given.
        value: f64,
        /// What it must be, in words.
        rule: &'static str,
    },
}

/// Checks one value is finite and satisfies `ok`.
fn check_value(
    name: &'static str,
    value: f64,
    ok: bool,
    rule: &'static str,
) -> Result<f64, BringupError> {
    if !value.is_finite() {
        return Err(BringupError::NotFinite { name, index: 0 });
    }
    if !ok {
        return Err(BringupError::OutOfRange { name, value, rule });
    }
    Ok(value)
}

/// Checks a list has at least `min` values, all finite.
fn check_list(name: &'static str, values: &[f64], min: usize) -> Result<(), BringupError> {
    if values.len() < min {
        return Err(BringupError::TooFew {
            name,
            len: values.len(),
            min,
        });
    }
    match values.iter().position(|v| !v.is_finite()) {
        Some(index) => Err(BringupError::NotFinite { name, index }),
        None => Ok(()),
    }
}

/// The ADC's range in the samples' unit (codes or volts): its rails and the
/// size of one code. For a 12-bit ADC read in codes: low 0, high 4095,
/// step 1; read in volts at 3.3 V: low 0, high 3.3, step 3.3 / 4096.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct AdcRange {
    low: f64,
    high: f64,
    step: f64,
}

impl AdcRange {
    /// The range, checked: all finite, `low < high`, `0 < step <= high - low`.
    pub fn new(low: f64, high: f64, step: f64) -> Result<AdcRange, BringupError> {
        check_value("adc low", low, true, "finite")?;
        check_value("adc high", high, high > low, "above the ADC's low rail")?;
        let span = high - low;
        check_value(
            "adc step",
            step,
            step > 0.0 && step <= span,
            "above 0 and no more than the ADC span",
        )?;
        Ok(AdcRange { low, high, step })
    }

    /// The low rail.
    pub fn low(&self) -> f64 {
        self.low
    }

    /// The high rail.
    pub fn high(&self) -> f64 {
        self.high
    }

    /// One code.
    pub fn step(&self) -> f64 {
        self.step
    }
}

/// One block of input samples with its sample rate and ADC range, checked
/// once so each check can trust it.
#[derive(Clone, Copy, Debug)]
pub struct Block<'a> {
    samples: &'a [f64],
    rate_hz: f64,
    adc: AdcRange,
}

impl<'a> Block<'a> {
    /// The block, checked: at least two samples, all finite, the rate finite
    /// and above 0.
    pub fn new(samples: &'a [f64], rate_hz: f64, adc: AdcRange) -> Result<Block<'a>, BringupError> {
        check_list("samples", samples, 2)?;
        check_value("sample rate", rate_hz, rate_hz > 0.0, "above 0 Hz")?;
        Ok(Block {
            samples,
            rate_hz,
            adc,
        })
    }

    /// The samples.
    pub fn samples(&self) -> &'a [f64] {
        self.samples
    }

    /// The sample rate in Hz.
    pub fn rate_hz(&self) -> f64 {
        self.rate_hz
    }

    /// The ADC range.
    pub fn adc(&self) -> AdcRange {
        self.adc
    }

    /// The block's length in seconds.
    pub fn seconds(&self) -> f64 {
        self.samples.len() as f64 / self.rate_hz
    }

    /// Highest minus lowest sample.
    fn peak_to_peak(&self) -> f64 {
        let (lo, hi) = self
            .samples
            .iter()
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), &v| {
                (lo.min(v), hi.max(v))
            });
        hi - lo
    }

    /// The mean of the samples.
    fn mean(&self) -> f64 {
        self.samples.iter().sum::<f64>() / self.samples.len() as f64
    }
}

#[cfg(test)]
mod tests;
