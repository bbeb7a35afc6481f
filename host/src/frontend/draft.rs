//! A circuit as far as it has been described: what the circuit file (TOML)
//! and the command-line options give, each value optional, merged and then
//! checked into a [`Circuit`]. The file's keys are the field names here;
//! see `examples/frontend-fingerclip.toml`.

use serde::Deserialize;
use std::path::Path;

use plethwire_dsp::pipeline::check_sample_rate;

use super::circuit::{Adc, Circuit, LedDrive, Pulse, Rails};
use super::limits::{self, Bounds};
use super::FrontendError;

mod parts;
mod supplies;

use parts::kind_name;
pub use parts::{
    AdcDraft, DetectorDraft, DetectorKind, LedDraft, PulseDraft, RailsDraft, RailsPair, Resistors,
    StageDraft, StageError, StageKind,
};
use supplies::ordered_rails;

/// ADC resolution when none is given: the 12-bit ADC of the STM32F411, the
/// board plethwire's firmware targets.
pub const DEFAULT_ADC_BITS: u32 = 12;
/// ADC reference when none is given, volts (the same board's supply).
pub const DEFAULT_ADC_REFERENCE_V: f64 = 3.3;

/// A whole circuit file, or what the options add to it.
#[derive(Clone, Debug, Default, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct Draft {
    /// A title for the report.
    pub name: Option<String>,
    /// `[led]`.
    #[serde(default)]
    pub led: LedDraft,
    /// `[detector]`.
    pub detector: Option<DetectorDraft>,
    /// `[[stage]]`, in signal order.
    #[serde(default, rename = "stage")]
    pub stages: Vec<StageDraft>,
    /// `[adc]`.
    #[serde(default)]
    pub adc: AdcDraft,
    /// `[pulse]`.
    #[serde(default)]
    pub pulse: PulseDraft,
    /// `[rails]`.
    #[serde(default)]
    pub rails: RailsDraft,
}

/// Circuit TOML that does not read as a circuit (TOML syntax, an unknown
/// key, a value of the wrong kind); one line.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
#[error("{shown}")]
pub struct CircuitTomlError {
    /// The line of the problem in the text, when known.
    pub line: Option<usize>,
    /// Where and what: `line N (`text`): message`, or the message alone.
    shown: String,
    /// The TOML reader's error (boxed: it is large).
    source: Box<toml::de::Error>,
}

impl CircuitTomlError {
    /// `source` as `line N (text): message`, on one line; `text` is what
    /// was read.
    fn at_line(text: &str, source: toml::de::Error) -> Self {
        let message = crate::messages::plain(source.message())
            .split_whitespace()
            .collect::<Vec<_>>()
            .join(" ");
        let Some(span) = source.span() else {
            return Self {
                line: None,
                shown: message,
                source: Box::new(source),
            };
        };
        let start = span.start.min(text.len());
        let line = text[..start].matches('\n').count() + 1;
        let quoted = match text.lines().nth(line - 1).unwrap_or("").trim() {
            t if !t.is_empty() && t.chars().count() <= 60 => format!(" (`{t}`)"),
            _ => String::new(),
        };
        Self {
            line: Some(line),
            shown: format!("line {line}{quoted}: {message}"),
            source: Box::new(source),
        }
    }

    /// `source`'s message alone, for text made up from other input (the
    /// line would mean nothing to the reader).
    fn without_line(source: toml::de::Error) -> Self {
        Self {
            line: None,
            shown: crate::messages::plain(source.message()),
            source: Box::new(source),
        }
    }
}

impl Draft {
    /// Read a circuit from TOML text; the error is one line.
    pub fn from_toml(text: &str) -> Result<Self, CircuitTomlError> {
        toml::from_str(text).map_err(|e| CircuitTomlError::at_line(text, e))
    }

    /// Read a circuit file.
    pub fn load(path: &Path) -> Result<Self, FrontendError> {
        let shown = path.display().to_string();
        let text = std::fs::read_to_string(path).map_err(|source| FrontendError::Unreadable {
            path: shown.clone(),
            source,
        })?;
        Self::from_toml(&text).map_err(|source| FrontendError::BadFile {
            path: shown,
            source,
        })
    }

    /// `self` with every value that `over` gives replaced by it. Given
    /// stages or a detector replace the whole list or detector; given
    /// resistors bring their own count in parallel.
    pub fn overlaid(mut self, over: Draft) -> Draft {
        self.name = over.name.or(self.name);
        let (l, o) = (&mut self.led, over.led);
        l.supply_v = o.supply_v.or(l.supply_v);
        l.forward_v = o.forward_v.or(l.forward_v);
        if o.resistor.is_some() {
            l.resistor = o.resistor;
            l.parallel = o.parallel;
        } else {
            l.parallel = o.parallel.or(l.parallel);
        }
        l.rated_ma = o.rated_ma.or(l.rated_ma);
        self.detector = over.detector.or(self.detector);
        if !over.stages.is_empty() {
            self.stages = over.stages;
        }
        let (a, o) = (&mut self.adc, over.adc);
        a.bits = o.bits.or(a.bits);
        a.reference_v = o.reference_v.or(a.reference_v);
        a.bias_v = o.bias_v.or(a.bias_v);
        a.rate_hz = o.rate_hz.or(a.rate_hz);
        self.pulse.change_ua = over.pulse.change_ua.or(self.pulse.change_ua);
        self.pulse.dc_ua = over.pulse.dc_ua.or(self.pulse.dc_ua);
        self.rails.low_v = over.rails.low_v.or(self.rails.low_v);
        self.rails.high_v = over.rails.high_v.or(self.rails.high_v);
        self
    }
}

pub(super) fn missing(
    what: &'static str,
    key: &'static str,
    option: &'static str,
) -> FrontendError {
    FrontendError::Missing { what, key, option }
}

pub(super) fn invalid(key: impl Into<String>, reason: impl Into<String>) -> FrontendError {
    FrontendError::Invalid {
        key: key.into(),
        reason: reason.into(),
    }
}

/// `v` within `bounds`, or which key is wrong.
fn bounded(v: f64, key: &str, bounds: Bounds) -> Result<f64, FrontendError> {
    bounds
        .check(v)
        .map_err(|source| FrontendError::OutOfBounds {
            key: key.to_owned(),
            source,
        })
}

impl Draft {
    /// Check everything and fill in the defaults: ADC of
    /// [`DEFAULT_ADC_BITS`] at [`DEFAULT_ADC_REFERENCE_V`], bias at half the
    /// reference, the board's rails from 0 V to the LED supply and every
    /// amplifier's rails the board's, a TIA's reference at the bias, one
    /// resistor. Every value is held to [`limits`].
    pub fn resolve(&self) -> Result<Circuit, FrontendError> {
        let led = self.resolve_led()?;
        let detector = self
            .detector
            .as_ref()
            .ok_or_else(|| missing("the detector", "[detector]", "--tia or --phototransistor"))?
            .resolve()?;
        if self.stages.len() > limits::MAX_STAGES {
            return Err(invalid(
                "[[stage]]",
                format!(
                    "lists {} stages; a chain takes at most {}",
                    self.stages.len(),
                    limits::MAX_STAGES
                ),
            ));
        }
        let stages = self
            .stages
            .iter()
            .enumerate()
            .map(|(i, s)| {
                s.resolve().map_err(|source| FrontendError::Stage {
                    stage: format!("stage {} ({})", i + 1, kind_name(s.kind)),
                    source,
                })
            })
            .collect::<Result<Vec<_>, _>>()?;
        let adc = self.resolve_adc()?;
        let rails = self.resolve_rails(led.supply_v)?;
        let supplies = self.resolve_supplies(rails, &detector, &stages, adc.bias_v)?;
        let p = &self.pulse;
        Ok(Circuit {
            name: self.name.clone(),
            led,
            detector,
            stages,
            adc,
            pulse: Pulse {
                change_ua: p
                    .change_ua
                    .map(|v| bounded(v, "pulse.change_ua", limits::PULSE_UA))
                    .transpose()?,
                dc_ua: p
                    .dc_ua
                    .map(|v| bounded(v, "pulse.dc_ua", limits::DC_UA))
                    .transpose()?,
            },
            rails,
            supplies,
        })
    }

    fn resolve_led(&self) -> Result<LedDrive, FrontendError> {
        let l = &self.led;
        let supply_v = l
            .supply_v
            .ok_or_else(|| missing("the LED supply voltage", "led.supply_v", "--supply"))?;
        let supply_v = bounded(supply_v, "led.supply_v", limits::SUPPLY_V)?;
        let forward_v = l
            .forward_v
            .ok_or_else(|| missing("the LED forward voltage", "led.forward_v", "--led-vf"))?;
        let forward_v = bounded(forward_v, "led.forward_v", limits::SUPPLY_V)?;
        let Resistors(listed) = l
            .resistor
            .clone()
            .ok_or_else(|| missing("the LED series resistor", "led.resistor", "--led-r"))?;
        let resistors_ohm = match (listed.as_slice(), l.parallel) {
            (_, Some(n)) if !(1..=limits::MAX_PARALLEL).contains(&n) => {
                return Err(invalid(
                    "led.parallel",
                    format!("must be 1 to {}, not {n}", limits::MAX_PARALLEL),
                ))
            }
            ([one], n) => vec![*one; n.unwrap_or(1) as usize],
            (_, Some(_)) => {
                return Err(invalid(
                    "led.parallel",
                    "goes with one resistor value; a list of resistors is already in parallel",
                ))
            }
            (many, None) => many.to_vec(),
        };
        let rated_ma = l
            .rated_ma
            .map(|v| bounded(v, "led.rated_ma", limits::RATED_MA))
            .transpose()?;
        if supply_v <= forward_v {
            return Err(FrontendError::LedOff {
                supply_v,
                forward_v,
            });
        }
        Ok(LedDrive {
            supply_v,
            forward_v,
            resistors_ohm,
            rated_ma,
        })
    }

    fn resolve_adc(&self) -> Result<Adc, FrontendError> {
        let a = &self.adc;
        let bits = a.bits.unwrap_or(DEFAULT_ADC_BITS);
        if !(1..=32).contains(&bits) {
            return Err(invalid("adc.bits", format!("must be 1 to 32, not {bits}")));
        }
        let reference_v = bounded(
            a.reference_v.unwrap_or(DEFAULT_ADC_REFERENCE_V),
            "adc.reference_v",
            limits::ADC_REFERENCE_V,
        )?;
        Ok(Adc {
            bits,
            reference_v,
            bias_v: bounded(
                a.bias_v.unwrap_or(reference_v / 2.0),
                "adc.bias_v",
                limits::LEVEL_V,
            )?,
            bias_assumed: a.bias_v.is_none(),
            rate_hz: a
                .rate_hz
                .map(|v| {
                    check_sample_rate(v).map_err(|source| FrontendError::Rate {
                        key: "adc.rate_hz",
                        source,
                    })
                })
                .transpose()?,
        })
    }

    fn resolve_rails(&self, supply_v: f64) -> Result<Rails, FrontendError> {
        let low_v = bounded(
            self.rails.low_v.unwrap_or(0.0),
            "rails.low_v",
            limits::LEVEL_V,
        )?;
        let high_v = bounded(
            self.rails.high_v.unwrap_or(supply_v),
            "rails.high_v",
            limits::LEVEL_V,
        )?;
        ordered_rails("rails", low_v, high_v)
    }
}

#[cfg(test)]
mod tests;
