//! The circuit as the budget sees it: checked component values of the LED
//! drive, the detector, each stage after it, the ADC, the pulse and the
//! amplifier rails. Values are in SI units (ohms, farads, volts); currents
//! of the signal are in microamperes, as datasheets of photodiodes give
//! them.

use serde::{Deserialize, Serialize};

use super::quantity::si;

/// The LED and what drives it: a supply through one or more resistors in
/// parallel.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct LedDrive {
    /// Supply of the LED, volts.
    pub supply_v: f64,
    /// Forward voltage of the LED at its working current, volts.
    pub forward_v: f64,
    /// The series resistors, all in parallel with each other, ohms.
    pub resistors_ohm: Vec<f64>,
    /// The LED's rated continuous current, milliamperes, if known.
    pub rated_ma: Option<f64>,
}

/// Where a phototransistor's load resistor sits, which decides the sign of
/// its gain.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Deserialize, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum LoadAt {
    /// Between emitter and ground, output at the emitter: rises with light.
    Emitter,
    /// Between supply and collector, output at the collector: falls with light.
    Collector,
}

/// The first stage: turns light into a voltage.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum Detector {
    /// A photodiode into a transimpedance amplifier (inverting).
    Photodiode {
        /// Feedback resistor, ohms.
        feedback_ohm: f64,
        /// Capacitor across it, farads, if fitted.
        feedback_f: Option<f64>,
    },
    /// A phototransistor working into a load resistor.
    Phototransistor {
        /// Load resistor, ohms.
        load_ohm: f64,
        /// Where the load sits.
        load_at: LoadAt,
        /// Capacitor across the load, farads, if fitted.
        load_f: Option<f64>,
    },
}

impl Detector {
    /// Gain from current to voltage below any pole, V/A (signed).
    pub fn gain_v_per_a(&self) -> f64 {
        match *self {
            Detector::Photodiode { feedback_ohm, .. } => -feedback_ohm,
            Detector::Phototransistor {
                load_ohm, load_at, ..
            } => match load_at {
                LoadAt::Emitter => load_ohm,
                LoadAt::Collector => -load_ohm,
            },
        }
    }

    /// One line for a person, e.g. `photodiode into a transimpedance
    /// amplifier, Rf 10 kΩ`.
    pub fn describe(&self) -> String {
        let cap = |c: Option<f64>, name: &str| {
            c.map(|c| format!(", {name} {}", si(c, "F")))
                .unwrap_or_default()
        };
        match *self {
            Detector::Photodiode {
                feedback_ohm,
                feedback_f,
            } => format!(
                "photodiode into a transimpedance amplifier, Rf {}{}",
                si(feedback_ohm, "Ω"),
                cap(feedback_f, "Cf")
            ),
            Detector::Phototransistor {
                load_ohm,
                load_at,
                load_f,
            } => format!(
                "phototransistor, load {} at the {}{}",
                si(load_ohm, "Ω"),
                match load_at {
                    LoadAt::Emitter => "emitter (output rises with light)",
                    LoadAt::Collector => "collector (output falls with light)",
                },
                cap(load_f, "C")
            ),
        }
    }
}

/// A stage after the detector, in signal order.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
// The same kind names as the circuit file's.
#[serde(tag = "kind", rename_all = "lowercase")]
pub enum AmpStage {
    /// Passive RC high-pass (AC coupling): series C, R to the bias.
    HighPass {
        /// Resistor, ohms.
        r_ohm: f64,
        /// Capacitor, farads.
        c_f: f64,
    },
    /// Passive RC low-pass: series R, C to the bias.
    LowPass {
        /// Resistor, ohms.
        r_ohm: f64,
        /// Capacitor, farads.
        c_f: f64,
    },
    /// Unity-gain buffer.
    Buffer,
    /// Inverting amplifier, gain −Rf/Rin; Cf across Rf adds a low-pass
    /// pole, Cin in series with Rin a high-pass.
    Inverting {
        /// Input resistor, ohms.
        rin_ohm: f64,
        /// Feedback resistor, ohms.
        rf_ohm: f64,
        /// Capacitor across Rf, farads.
        cf_f: Option<f64>,
        /// Capacitor in series with Rin, farads.
        cin_f: Option<f64>,
    },
    /// Non-inverting amplifier, gain 1 + Rf/Rin; Cf across Rf lets the gain
    /// fall to 1 above its pole, Cin in series with Rin (to the bias) makes
    /// the gain 1 at DC.
    NonInverting {
        /// Resistor from the inverting input to the bias, ohms.
        rin_ohm: f64,
        /// Feedback resistor, ohms.
        rf_ohm: f64,
        /// Capacitor across Rf, farads.
        cf_f: Option<f64>,
        /// Capacitor in series with Rin, farads.
        cin_f: Option<f64>,
    },
}

impl AmpStage {
    /// The gain the stage is built for, between its corners (signed).
    pub fn gain(&self) -> f64 {
        match *self {
            AmpStage::HighPass { .. } | AmpStage::LowPass { .. } | AmpStage::Buffer => 1.0,
            AmpStage::Inverting {
                rin_ohm, rf_ohm, ..
            } => -rf_ohm / rin_ohm,
            AmpStage::NonInverting {
                rin_ohm, rf_ohm, ..
            } => 1.0 + rf_ohm / rin_ohm,
        }
    }

    /// The stage's name as the circuit file spells it.
    pub fn kind(&self) -> &'static str {
        match self {
            AmpStage::HighPass { .. } => "highpass",
            AmpStage::LowPass { .. } => "lowpass",
            AmpStage::Buffer => "buffer",
            AmpStage::Inverting { .. } => "inverting",
            AmpStage::NonInverting { .. } => "noninverting",
        }
    }

    /// One line for a person, e.g. `inverting amplifier, Rin 1 kΩ, Rf 470 kΩ`.
    pub fn describe(&self) -> String {
        let opt = |c: Option<f64>, name: &str| {
            c.map(|c| format!(", {name} {}", si(c, "F")))
                .unwrap_or_default()
        };
        match *self {
            AmpStage::HighPass { r_ohm, c_f } => format!(
                "RC high-pass (AC coupling), R {}, C {}",
                si(r_ohm, "Ω"),
                si(c_f, "F")
            ),
            AmpStage::LowPass { r_ohm, c_f } => {
                format!("RC low-pass, R {}, C {}", si(r_ohm, "Ω"), si(c_f, "F"))
            }
            AmpStage::Buffer => "unity-gain buffer".to_owned(),
            AmpStage::Inverting {
                rin_ohm,
                rf_ohm,
                cf_f,
                cin_f,
            }
            | AmpStage::NonInverting {
                rin_ohm,
                rf_ohm,
                cf_f,
                cin_f,
            } => format!(
                "{} amplifier, Rin {}, Rf {}{}{}",
                if matches!(self, AmpStage::Inverting { .. }) {
                    "inverting"
                } else {
                    "non-inverting"
                },
                si(rin_ohm, "Ω"),
                si(rf_ohm, "Ω"),
                opt(cf_f, "Cf"),
                opt(cin_f, "Cin")
            ),
        }
    }
}

/// The ADC the chain feeds.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct Adc {
    /// Resolution, bits.
    pub bits: u32,
    /// Reference voltage: the input range is 0 to this, volts.
    pub reference_v: f64,
    /// The ADC input's level with no photocurrent, volts: for an
    /// AC-coupled chain the bias its last coupling returns to.
    pub bias_v: f64,
    /// `bias_v` was not given and is half the reference.
    pub bias_assumed: bool,
    /// The sample rate to use, Hz; `None` takes the recommended one.
    pub rate_hz: Option<f64>,
}

/// The signal at the detector.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct Pulse {
    /// Peak-to-peak photocurrent change of one heartbeat, µA.
    pub change_ua: Option<f64>,
    /// Steady photocurrent under it, µA; matters only where the chain
    /// passes DC.
    pub dc_ua: Option<f64>,
}

/// The amplifiers' supply rails.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct Rails {
    /// Lower rail, volts.
    pub low_v: f64,
    /// Upper rail, volts.
    pub high_v: f64,
}

/// Each amplifier's supply rails and the detector's reference: where each
/// node's output saturates.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Supplies {
    /// The detector's rails: a transimpedance amplifier's, or the supply a
    /// phototransistor works between.
    pub detector: Rails,
    /// The detector's output with no photocurrent, volts: a TIA's
    /// reference (its non-inverting input); a phototransistor's low rail
    /// (emitter load) or high rail (collector load).
    pub reference_v: f64,
    /// A TIA's `reference_v` was not given and is the chain's bias.
    pub reference_assumed: bool,
    /// Each stage's rails, in signal order; `None` for a passive RC stage,
    /// which cannot saturate by itself.
    pub stages: Vec<Option<Rails>>,
}

/// A whole front end, checked.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Circuit {
    /// A title, if given.
    pub name: Option<String>,
    /// The LED drive.
    pub led: LedDrive,
    /// The detector stage.
    pub detector: Detector,
    /// The stages after the detector, in signal order.
    pub stages: Vec<AmpStage>,
    /// The ADC.
    pub adc: Adc,
    /// The pulse at the detector.
    pub pulse: Pulse,
    /// The board's amplifier rails, every stage's unless it has its own.
    pub rails: Rails,
    /// Each node's rails and the detector's reference.
    pub supplies: Supplies,
}
