//! Advice that names the part: from the levels measured at the ADC (the DC
//! level and the pulse, each as a share of the ADC range) and the circuit
//! file, a single resistor change to an E12 value (IEC 60063) and what it
//! would give, each checked through the front-end model before it is
//! offered: every node inside its rails, the LED current within its rating
//! and the board's most drive.
//!
//! The model scales the measured levels: the photocurrents follow the LED
//! current, the pulse at the ADC follows the chain's mid-band gain, and
//! the DC level follows the chain's DC gain (an AC-coupled chain keeps
//! its bias whatever the light).
//!
//! The LED's current is the circuit's full-drive current, (supply −
//! forward voltage) / resistor, times the board's drive (its PWM duty into
//! the current source): a suggestion runs at the present drive, must stay
//! within the board's `max_drive` at the present resistor (the most
//! current the builder allowed), and the most the board may drive with it
//! (full drive times `max_drive`) must stay within the LED's rating.

mod limits;
mod search;
#[cfg(test)]
mod tests;

pub use limits::drive_ma;
pub use search::E12;

use super::circuit::Circuit;
use super::led::LedBudget;
use super::quantity::{si, sig3};
use super::transfer::Chain;
use limits::{drive_of, effective_pulse, refusal};
use search::{candidates, predict, Part, Prediction};

/// The least pulse worth having, share of the ADC range: 1 % leaves some
/// 40 codes at 12 bits (common practice).
pub const PULSE_LEAST_SHARE: f64 = 0.01;
/// The DC level at the ADC input should sit inside this window, share of
/// the range, to leave room for the pulse and for drift (common practice).
pub const DC_WINDOW: (f64, f64) = (0.10, 0.90);
/// A pulse whose band (DC ± half the pulse) comes this close to either end
/// of the ADC range, share of the range, leaves no room for a stronger beat
/// or a drift (common practice).
pub const RAIL_MARGIN: f64 = 0.05;
/// How far an AC-coupled chain's measured DC may sit from its bias,
/// share of the range, before the circuit file is taken not to match.
pub const BIAS_TOLERANCE: f64 = 0.05;

/// What the board measured at its ADC input.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Measured {
    /// The steady (DC) level, share of the ADC range (0 to 1).
    pub dc_share: f64,
    /// The pulse, peak to peak, share of the ADC range (0 to 1).
    pub pulse_share: f64,
    /// Share of samples at an ADC rail (0 to 1): a clipped pulse is at
    /// least as large as the way to the nearer rail.
    pub clipped_share: f64,
    /// The LED drive the levels were measured at, share of full drive
    /// (0 to 1], as the board's status reports it; `None`: not known,
    /// taken as `max_drive` (the worst case).
    pub led_drive: Option<f64>,
    /// The board's cap on its LED drive, share of full drive (0 to 1]
    /// (`ExposureConfig::max_drive`); `None`: no cap, full drive.
    pub max_drive: Option<f64>,
}

impl Measured {
    /// Levels with nothing clipped, the drive not known and no cap.
    pub fn levels(dc_share: f64, pulse_share: f64) -> Measured {
        Measured {
            dc_share,
            pulse_share,
            clipped_share: 0.0,
            led_drive: None,
            max_drive: None,
        }
    }
}

/// Why there is no advice: the measurements do not fit the circuit.
#[derive(Debug, PartialEq, thiserror::Error)]
pub enum AdviceError {
    /// A share of the ADC range outside 0 to 1 (or not finite).
    #[error("{parameter} is {value}: it must be a share of the ADC range, 0 to 1")]
    Share {
        /// Which measurement.
        parameter: &'static str,
        /// Its value.
        value: f64,
    },
    /// A drive that is not a share of full drive above 0.
    #[error("{parameter} is {value}: it must be a share of full drive, above 0 and at most 1")]
    Drive {
        /// `led_drive` or `max_drive`.
        parameter: &'static str,
        /// Its value.
        value: f64,
    },
    /// A pulse was measured but the chain has no gain to carry one.
    #[error("pulse_share is {0} but the circuit's mid-band gain is zero")]
    NoGain(f64),
    /// The measured DC cannot come from this circuit.
    #[error("dc_share is {measured}: the circuit gives {expected} ({why})")]
    DcMismatch {
        /// The measured share.
        measured: f64,
        /// What the circuit gives, share of the range.
        expected: f64,
        /// Why they differ, in words.
        why: &'static str,
    },
}

/// A level at the ADC input that wants changing.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Problem {
    /// The pulse is below [`PULSE_LEAST_SHARE`].
    PulseSmall(f64),
    /// The pulse comes within [`RAIL_MARGIN`] of a rail, or clipped.
    PulseLarge(f64),
    /// The DC is above the window.
    DcHigh(f64),
    /// The DC is below the window.
    DcLow(f64),
}

impl Problem {
    /// In words: `pulse is 0.6 % of the ADC range`.
    pub fn describe(&self) -> String {
        match *self {
            Problem::PulseSmall(s) => format!("pulse is {} of the ADC range", pct(s)),
            Problem::PulseLarge(s) => format!(
                "pulse is {} of the ADC range and reaches within {} of a rail",
                pct(s),
                pct(RAIL_MARGIN)
            ),
            Problem::DcHigh(s) | Problem::DcLow(s) => format!("DC sits at {} of range", pct(s)),
        }
    }
}

/// One part change and what the model says it gives.
#[derive(Clone, Debug, PartialEq)]
pub struct Suggestion {
    /// The part, e.g. `feedback resistor`.
    pub part: String,
    /// Its present value, ohms.
    pub from_ohm: f64,
    /// The E12 value to fit, ohms.
    pub to_ohm: f64,
    /// The pulse it gives, share of the ADC range.
    pub pulse_share: f64,
    /// The DC level it gives, share of the ADC range.
    pub dc_share: f64,
    /// The LED current it gives at the present drive, mA.
    pub led_ma: f64,
    /// The node the part drives.
    pub node: String,
    /// How far the pulse at that node stays inside its rails, volts.
    pub headroom_v: f64,
}

/// A change that would fix the levels but that the model refuses.
#[derive(Clone, Debug, PartialEq)]
pub struct Refusal {
    /// The part.
    pub part: String,
    /// The value that would fix the levels, ohms.
    pub to_ohm: f64,
    /// Why it is refused, e.g. `LED current 66 mA is above its rated 50 mA`.
    pub reason: String,
}

/// The advice for one circuit and one measurement.
#[derive(Clone, Debug, PartialEq)]
pub struct Advice {
    /// What wants changing; empty when the levels are fine.
    pub problems: Vec<Problem>,
    /// Each part whose single change fixes every problem, checked.
    pub suggestions: Vec<Suggestion>,
    /// For each part, the nearest fix that the checks refused.
    pub refused: Vec<Refusal>,
}

impl Advice {
    /// One line per suggestion; with problems but no suggestion, the plain
    /// note that no single part change fixes it; nothing when all is well.
    pub fn lines(&self) -> Vec<String> {
        if self.problems.is_empty() {
            return Vec::new();
        }
        let problems: Vec<String> = self.problems.iter().map(Problem::describe).collect();
        let problems = problems.join(", ");
        if self.suggestions.is_empty() {
            return vec![format!(
                "{problems}: no single part change fixes it within the rails and the LED's rating"
            )];
        }
        self.suggestions
            .iter()
            .map(|s| {
                format!(
                    "{problems}: {} {} → {} gives a pulse of {} and DC at {}, LED {}, \
                     and keeps the {} {} V inside its rails",
                    s.part,
                    si(s.from_ohm, "Ω"),
                    si(s.to_ohm, "Ω"),
                    pct(s.pulse_share),
                    pct(s.dc_share),
                    si(s.led_ma * 1e-3, "A"),
                    s.node,
                    sig3(s.headroom_v)
                )
            })
            .collect()
    }
}

/// A share as a percentage for a person: `0.6 %`, `92 %`.
fn pct(share: f64) -> String {
    let p = share * 100.0;
    if p < 10.0 {
        format!("{p:.1} %")
    } else {
        format!("{p:.0} %")
    }
}

/// The advice for `circuit` given what the board measured; see the
/// module's doc for the model.
pub fn advise(circuit: &Circuit, m: &Measured) -> Result<Advice, AdviceError> {
    let m = &Measured {
        pulse_share: effective_pulse(m),
        ..*m
    };
    let (measured, led_ma) = calibrate(circuit, m)?;
    let now = predict(&measured, led_ma, &measured);
    let problems = problems_of(&now);
    let mut advice = Advice {
        problems,
        suggestions: Vec::new(),
        refused: Vec::new(),
    };
    if advice.problems.is_empty() {
        return Ok(advice);
    }
    for part in Part::all(circuit) {
        let from_ohm = part.value(circuit);
        for to_ohm in candidates(from_ohm) {
            let p = predict(&measured, led_ma, &part.with(&measured, to_ohm));
            if !problems_of(&p).is_empty() {
                continue;
            }
            match refusal(circuit, m, &p) {
                Some(reason) => {
                    // Only the nearest refused fix is kept; farther ones
                    // are tried in case they pass.
                    if !advice.refused.iter().any(|r| r.part == part.name(circuit)) {
                        advice.refused.push(Refusal {
                            part: part.name(circuit),
                            to_ohm,
                            reason,
                        });
                    }
                }
                None => {
                    advice
                        .suggestions
                        .push(suggestion(circuit, part, to_ohm, &p, drive_of(m)));
                    break;
                }
            }
        }
    }
    Ok(advice)
}

/// The circuit with its pulse set to the photocurrents that give the
/// measured levels, and its LED current, mA.
fn calibrate(circuit: &Circuit, m: &Measured) -> Result<(Circuit, f64), AdviceError> {
    let shares = [
        ("dc_share", m.dc_share),
        ("pulse_share", m.pulse_share),
        ("clipped_share", m.clipped_share),
    ];
    for (parameter, value) in shares {
        if !(0.0..=1.0).contains(&value) {
            return Err(AdviceError::Share { parameter, value });
        }
    }
    for (parameter, value) in [("led_drive", m.led_drive), ("max_drive", m.max_drive)] {
        if let Some(value) = value.filter(|d| !(*d > 0.0 && *d <= 1.0)) {
            return Err(AdviceError::Drive { parameter, value });
        }
    }
    let range_v = circuit.adc.reference_v;
    let v_per_ua = Chain::of(circuit).midband_v_per_ua().abs();
    if v_per_ua == 0.0 && m.pulse_share > 0.0 {
        return Err(AdviceError::NoGain(m.pulse_share));
    }
    let mut c = circuit.clone();
    c.pulse.change_ua = Some(if v_per_ua > 0.0 {
        m.pulse_share * range_v / v_per_ua
    } else {
        0.0
    });
    // The ADC's DC is a + b·I_dc; b is zero when a coupling blocks DC.
    let led_ma = LedBudget::of(&c.led).current_ma;
    let dc_at = |ua: f64| {
        let mut t = c.clone();
        t.pulse.dc_ua = Some(ua);
        predict(&t, led_ma, &t).dc_share
    };
    let (a, b) = (dc_at(0.0), dc_at(1.0) - dc_at(0.0));
    if b.abs() < 1e-12 {
        if (m.dc_share - a).abs() > BIAS_TOLERANCE {
            return Err(AdviceError::DcMismatch {
                measured: m.dc_share,
                expected: a,
                why: "the chain is AC-coupled, so the ADC input sits at its bias",
            });
        }
    } else {
        let dc_ua = (m.dc_share - a) / b;
        if dc_ua < 0.0 {
            return Err(AdviceError::DcMismatch {
                measured: m.dc_share,
                expected: a,
                why: "with no light at all; light can only move it the other way",
            });
        }
        c.pulse.dc_ua = Some(dc_ua);
    }
    Ok((c, led_ma))
}

/// What is wrong with the levels a prediction gives.
fn problems_of(p: &Prediction) -> Vec<Problem> {
    let mut out = Vec::new();
    let half = p.pulse_share / 2.0;
    if p.pulse_share < PULSE_LEAST_SHARE {
        out.push(Problem::PulseSmall(p.pulse_share));
    } else if p.dc_share - half < RAIL_MARGIN || p.dc_share + half > 1.0 - RAIL_MARGIN {
        out.push(Problem::PulseLarge(p.pulse_share));
    }
    if p.dc_share > DC_WINDOW.1 {
        out.push(Problem::DcHigh(p.dc_share));
    } else if p.dc_share < DC_WINDOW.0 {
        out.push(Problem::DcLow(p.dc_share));
    }
    out
}

/// The suggestion for a checked prediction.
fn suggestion(
    circuit: &Circuit,
    part: Part,
    to_ohm: f64,
    p: &Prediction,
    drive: f64,
) -> Suggestion {
    let node = part.node();
    let headroom_v = p
        .nodes
        .iter()
        .find(|n| n.node == node)
        // The pulse about the steady level; the dark level (LED off) may
        // sit on a rail by design, as a phototransistor's does.
        .and_then(|n| {
            let half = n.swing_vpp.unwrap_or(0.0) / 2.0;
            n.rails
                .map(|r| (n.steady_v - half - r.low_v).min(r.high_v - n.steady_v - half))
        })
        .unwrap_or(f64::INFINITY);
    Suggestion {
        part: part.name(circuit),
        from_ohm: part.value(circuit),
        to_ohm,
        pulse_share: p.pulse_share,
        dc_share: p.dc_share,
        led_ma: p.led_ma * drive,
        node,
        headroom_v,
    }
}
