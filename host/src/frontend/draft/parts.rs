//! The tables of a circuit file (`[led]`, `[detector]`, `[[stage]]`,
//! `[adc]`, `[pulse]`, `[rails]`) with every value optional, and the checks
//! that turn a detector or a stage into its circuit part.

use serde::de::{self, Deserializer, SeqAccess, Visitor};
use serde::Deserialize;
use std::fmt;

use super::{invalid, missing, CircuitTomlError};
use crate::frontend::circuit::{AmpStage, Detector, LoadAt};
use crate::frontend::quantity::{parse_value, Farads, Kind, Ohms};
use crate::frontend::FrontendError;

/// One resistor or a list of them in parallel.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Resistors(pub Vec<f64>);

impl<'de> Deserialize<'de> for Resistors {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct OneOrList;
        impl<'de> Visitor<'de> for OneOrList {
            type Value = Resistors;
            fn expecting(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
                f.write_str("a resistance or a list of resistances in parallel")
            }
            fn visit_i64<E: de::Error>(self, v: i64) -> Result<Resistors, E> {
                self.visit_f64(v as f64)
            }
            fn visit_u64<E: de::Error>(self, v: u64) -> Result<Resistors, E> {
                self.visit_f64(v as f64)
            }
            fn visit_f64<E: de::Error>(self, v: f64) -> Result<Resistors, E> {
                self.visit_str(&v.to_string())
            }
            fn visit_str<E: de::Error>(self, v: &str) -> Result<Resistors, E> {
                parse_value(v, Kind::Resistance)
                    .map(|r| Resistors(vec![r]))
                    .map_err(E::custom)
            }
            fn visit_seq<A: SeqAccess<'de>>(self, mut seq: A) -> Result<Resistors, A::Error> {
                let mut out = Vec::new();
                while let Some(Ohms(r)) = seq.next_element()? {
                    out.push(r);
                }
                if out.is_empty() {
                    return Err(de::Error::custom("the list of resistors is empty"));
                }
                Ok(Resistors(out))
            }
        }
        d.deserialize_any(OneOrList)
    }
}

/// Rails of one part, `[LOW, HIGH]` in the file or `LOW:HIGH` (how
/// `--stage` writes it), volts; checked when the draft resolves.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct RailsPair(pub f64, pub f64);

impl<'de> Deserialize<'de> for RailsPair {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct Pair;
        impl<'de> Visitor<'de> for Pair {
            type Value = RailsPair;
            fn expecting(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
                f.write_str("rails as [LOW, HIGH] in volts, such as [0, 3.3]")
            }
            fn visit_str<E: de::Error>(self, v: &str) -> Result<RailsPair, E> {
                let number = |t: &str| t.trim().parse::<f64>().ok();
                v.split_once(':')
                    .and_then(|(a, b)| Some(RailsPair(number(a)?, number(b)?)))
                    .ok_or_else(|| {
                        E::custom(format!("'{v}' is not LOW:HIGH in volts, such as 0:3.3"))
                    })
            }
            fn visit_seq<A: SeqAccess<'de>>(self, mut seq: A) -> Result<RailsPair, A::Error> {
                let low: Option<f64> = seq.next_element()?;
                let high: Option<f64> = seq.next_element()?;
                match (low, high, seq.next_element::<f64>()?) {
                    (Some(low), Some(high), None) => Ok(RailsPair(low, high)),
                    _ => Err(de::Error::custom("rails take two voltages, [LOW, HIGH]")),
                }
            }
        }
        d.deserialize_any(Pair)
    }
}

/// `[led]`.
#[derive(Clone, Debug, Default, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct LedDraft {
    /// LED supply, volts.
    pub supply_v: Option<f64>,
    /// LED forward voltage, volts.
    pub forward_v: Option<f64>,
    /// Series resistor, or a list of them in parallel.
    pub resistor: Option<Resistors>,
    /// How many of the one `resistor` are in parallel.
    pub parallel: Option<u32>,
    /// Rated LED current, mA.
    pub rated_ma: Option<f64>,
}

/// The detector kinds a file names.
#[derive(Clone, Copy, Debug, Deserialize, PartialEq, Eq)]
#[serde(rename_all = "snake_case")]
pub enum DetectorKind {
    /// Photodiode into a transimpedance amplifier.
    Photodiode,
    /// Phototransistor with a load resistor.
    Phototransistor,
}

/// `[detector]`.
#[derive(Clone, Debug, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct DetectorDraft {
    /// Which detector.
    pub kind: DetectorKind,
    /// Photodiode: the transimpedance feedback resistor.
    pub feedback: Option<Ohms>,
    /// Photodiode: the capacitor across it.
    pub feedback_cap: Option<Farads>,
    /// Phototransistor: the load resistor.
    pub load: Option<Ohms>,
    /// Phototransistor: the capacitor across the load.
    pub load_cap: Option<Farads>,
    /// Phototransistor: where the load sits (default emitter).
    pub load_at: Option<LoadAt>,
    /// Photodiode: the TIA's reference (non-inverting input), volts
    /// (default: the chain's bias, `adc.bias_v`).
    pub reference_v: Option<f64>,
    /// The detector's own rails (default: `[rails]`).
    pub rails: Option<RailsPair>,
}

/// The stage kinds a file names.
#[derive(Clone, Copy, Debug, Deserialize, PartialEq, Eq)]
#[serde(rename_all = "snake_case")]
pub enum StageKind {
    /// RC high-pass.
    Highpass,
    /// RC low-pass.
    Lowpass,
    /// Unity buffer.
    Buffer,
    /// Inverting amplifier.
    Inverting,
    /// Non-inverting amplifier.
    Noninverting,
}

/// One `[[stage]]`, or one `--stage`.
#[derive(Clone, Debug, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct StageDraft {
    /// Which stage.
    pub kind: StageKind,
    /// RC stages: the resistor.
    pub r: Option<Ohms>,
    /// RC stages: the capacitor.
    pub c: Option<Farads>,
    /// Amplifiers: the input (or ground-leg) resistor.
    pub rin: Option<Ohms>,
    /// Amplifiers: the feedback resistor.
    pub rf: Option<Ohms>,
    /// Amplifiers: the capacitor across `rf`.
    pub cf: Option<Farads>,
    /// Amplifiers: the capacitor in series with `rin`.
    pub cin: Option<Farads>,
    /// Amplifiers and buffers: their own rails (default: `[rails]`).
    pub rails: Option<RailsPair>,
}

/// `[adc]`.
#[derive(Clone, Debug, Default, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct AdcDraft {
    /// Resolution, bits.
    pub bits: Option<u32>,
    /// Reference voltage, volts.
    pub reference_v: Option<f64>,
    /// The ADC input's level with no photocurrent, volts.
    pub bias_v: Option<f64>,
    /// Sample rate, Hz.
    pub rate_hz: Option<f64>,
}

/// `[pulse]`.
#[derive(Clone, Debug, Default, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct PulseDraft {
    /// Peak-to-peak photocurrent change of a heartbeat, µA.
    pub change_ua: Option<f64>,
    /// Steady photocurrent, µA.
    pub dc_ua: Option<f64>,
}

/// `[rails]`.
#[derive(Clone, Debug, Default, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct RailsDraft {
    /// Lower rail, volts.
    pub low_v: Option<f64>,
    /// Upper rail, volts.
    pub high_v: Option<f64>,
}

impl DetectorDraft {
    /// Check the keys for the kind.
    pub fn resolve(&self) -> Result<Detector, FrontendError> {
        let foreign = |name: &str, given: bool, kind: &str, takes: &str| {
            if given {
                Err(invalid(
                    format!("detector.{name}"),
                    format!("is not for a {kind} (it takes {takes})"),
                ))
            } else {
                Ok(())
            }
        };
        match self.kind {
            DetectorKind::Photodiode => {
                let takes = "feedback, feedback_cap, reference_v, rails";
                foreign("load", self.load.is_some(), "photodiode", takes)?;
                foreign("load_cap", self.load_cap.is_some(), "photodiode", takes)?;
                foreign("load_at", self.load_at.is_some(), "photodiode", takes)?;
                let Ohms(feedback_ohm) = self.feedback.ok_or_else(|| {
                    missing(
                        "the transimpedance feedback resistor",
                        "detector.feedback",
                        "--tia",
                    )
                })?;
                Ok(Detector::Photodiode {
                    feedback_ohm,
                    feedback_f: self.feedback_cap.map(|c| c.0),
                })
            }
            DetectorKind::Phototransistor => {
                let (kind, takes) = ("phototransistor", "load, load_cap, load_at, rails");
                foreign("feedback", self.feedback.is_some(), kind, takes)?;
                foreign("reference_v", self.reference_v.is_some(), kind, takes)?;
                foreign("feedback_cap", self.feedback_cap.is_some(), kind, takes)?;
                let Ohms(load_ohm) = self.load.ok_or_else(|| {
                    missing(
                        "the phototransistor's load resistor",
                        "detector.load",
                        "--phototransistor",
                    )
                })?;
                Ok(Detector::Phototransistor {
                    load_ohm,
                    load_at: self.load_at.unwrap_or(LoadAt::Emitter),
                    load_f: self.load_cap.map(|c| c.0),
                })
            }
        }
    }
}

impl StageDraft {
    /// Read one stage from TOML text (the keys of a `[[stage]]` table),
    /// as the command line's `--stage` does; the error is one line.
    pub fn from_toml(text: &str) -> Result<Self, CircuitTomlError> {
        toml::from_str(text).map_err(CircuitTomlError::without_line)
    }

    /// Check the keys for the kind; the error names the key, without
    /// saying which stage (the caller knows).
    pub fn resolve(&self) -> Result<AmpStage, StageError> {
        let given = [
            ("r", self.r.is_some()),
            ("c", self.c.is_some()),
            ("rin", self.rin.is_some()),
            ("rf", self.rf.is_some()),
            ("cf", self.cf.is_some()),
            ("cin", self.cin.is_some()),
            ("rails", self.rails.is_some()),
        ];
        // A passive RC stage has no supply of its own to saturate at.
        let takes: &[&str] = match self.kind {
            StageKind::Highpass | StageKind::Lowpass => &["r", "c"],
            StageKind::Buffer => &["rails"],
            StageKind::Inverting | StageKind::Noninverting => &["rin", "rf", "cf", "cin", "rails"],
        };
        if let Some(&(key, _)) = given.iter().find(|(k, g)| *g && !takes.contains(k)) {
            let list = if takes.is_empty() {
                "no values".to_owned()
            } else {
                takes.join(", ")
            };
            return Err(StageError::DoesNotTake { key, takes: list });
        }
        let need_r = |v: Option<Ohms>, key| v.map(|o| o.0).ok_or(StageError::Missing(key));
        let need_c = |v: Option<Farads>, key| v.map(|f| f.0).ok_or(StageError::Missing(key));
        Ok(match self.kind {
            StageKind::Highpass => AmpStage::HighPass {
                r_ohm: need_r(self.r, "r")?,
                c_f: need_c(self.c, "c")?,
            },
            StageKind::Lowpass => AmpStage::LowPass {
                r_ohm: need_r(self.r, "r")?,
                c_f: need_c(self.c, "c")?,
            },
            StageKind::Buffer => AmpStage::Buffer,
            StageKind::Inverting => AmpStage::Inverting {
                rin_ohm: need_r(self.rin, "rin")?,
                rf_ohm: need_r(self.rf, "rf")?,
                cf_f: self.cf.map(|c| c.0),
                cin_f: self.cin.map(|c| c.0),
            },
            StageKind::Noninverting => AmpStage::NonInverting {
                rin_ohm: need_r(self.rin, "rin")?,
                rf_ohm: need_r(self.rf, "rf")?,
                cf_f: self.cf.map(|c| c.0),
                cin_f: self.cin.map(|c| c.0),
            },
        })
    }
}

/// A stage whose keys do not fit its kind; one line, without saying which
/// stage.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
pub enum StageError {
    /// A key the kind does not take.
    #[error("does not take {key} (it takes {takes})")]
    DoesNotTake {
        /// The key given.
        key: &'static str,
        /// The keys the kind takes, in words.
        takes: String,
    },
    /// A key the kind needs.
    #[error("missing {0}")]
    Missing(&'static str),
}

/// A stage kind as the file spells it.
pub(super) fn kind_name(kind: StageKind) -> &'static str {
    match kind {
        StageKind::Highpass => "highpass",
        StageKind::Lowpass => "lowpass",
        StageKind::Buffer => "buffer",
        StageKind::Inverting => "inverting",
        StageKind::Noninverting => "noninverting",
    }
}
