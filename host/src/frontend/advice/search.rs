//! The parts advice may change, the E12 values it tries, and what the
//! front-end model predicts for each.

use super::super::circuit::{AmpStage, Circuit, Detector};
use super::super::findings::{node, stage_node};
use super::super::led::LedBudget;
use super::super::nodes::{levels, NodeLevel};
use super::super::transfer::Chain;

/// The E12 series, one decade, per IEC 60063 (preferred number series for
/// resistors and capacitors).
pub const E12: [f64; 12] = [1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2];

/// How far a single change may go: three decades either way.
const SPAN: f64 = 1e3;

/// A resistor advice may change.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(super) enum Part {
    /// The LED's series resistor (only a single one, not a parallel set).
    Led,
    /// The TIA's feedback resistor or the phototransistor's load.
    Detector,
    /// Stage `i`'s feedback resistor (inverting or non-inverting).
    StageRf(usize),
}

impl Part {
    /// Every part of `c` advice may change.
    pub(super) fn all(c: &Circuit) -> Vec<Part> {
        let mut out = Vec::new();
        if c.led.resistors_ohm.len() == 1 {
            out.push(Part::Led);
        }
        out.push(Part::Detector);
        for (i, s) in c.stages.iter().enumerate() {
            if matches!(
                s,
                AmpStage::Inverting { .. } | AmpStage::NonInverting { .. }
            ) {
                out.push(Part::StageRf(i));
            }
        }
        out
    }

    /// Its name for a person.
    pub(super) fn name(self, c: &Circuit) -> String {
        match (self, c.detector) {
            (Part::Led, _) => "LED resistor".to_owned(),
            (Part::Detector, Detector::Photodiode { .. }) => "feedback resistor".to_owned(),
            (Part::Detector, Detector::Phototransistor { .. }) => "load resistor".to_owned(),
            (Part::StageRf(i), _) => format!("stage {} feedback resistor", i + 1),
        }
    }

    /// The node whose headroom the change matters most for: the one it
    /// drives (the detector's for the LED, whose light it sets).
    pub(super) fn node(self) -> String {
        match self {
            Part::Led | Part::Detector => node::DETECTOR.to_owned(),
            Part::StageRf(i) => stage_node(i),
        }
    }

    /// Its value in `c`, ohms.
    pub(super) fn value(self, c: &Circuit) -> f64 {
        match self {
            Part::Led => c.led.resistors_ohm[0],
            Part::Detector => match c.detector {
                Detector::Photodiode { feedback_ohm, .. } => feedback_ohm,
                Detector::Phototransistor { load_ohm, .. } => load_ohm,
            },
            Part::StageRf(i) => match c.stages[i] {
                AmpStage::Inverting { rf_ohm, .. } | AmpStage::NonInverting { rf_ohm, .. } => {
                    rf_ohm
                }
                _ => unreachable!("Part::all takes only stages with a feedback resistor"),
            },
        }
    }

    /// `c` with this part at `ohm`.
    pub(super) fn with(self, c: &Circuit, ohm: f64) -> Circuit {
        let mut out = c.clone();
        match self {
            Part::Led => out.led.resistors_ohm[0] = ohm,
            Part::Detector => match &mut out.detector {
                Detector::Photodiode { feedback_ohm, .. } => *feedback_ohm = ohm,
                Detector::Phototransistor { load_ohm, .. } => *load_ohm = ohm,
            },
            Part::StageRf(i) => match &mut out.stages[i] {
                AmpStage::Inverting { rf_ohm, .. } | AmpStage::NonInverting { rf_ohm, .. } => {
                    *rf_ohm = ohm
                }
                _ => unreachable!("Part::all takes only stages with a feedback resistor"),
            },
        }
        out
    }
}

/// E12 values within [`SPAN`] of `ohm` (itself left out), nearest first
/// by ratio.
pub(super) fn candidates(ohm: f64) -> Vec<f64> {
    let first = (ohm / SPAN).log10().floor() as i32;
    let last = (ohm * SPAN).log10().ceil() as i32;
    let mut out: Vec<f64> = (first..=last)
        .flat_map(|d| E12.iter().map(move |m| round_e12(m * 10f64.powi(d))))
        .filter(|v| *v >= ohm / SPAN && *v <= ohm * SPAN && (v / ohm - 1.0).abs() > 1e-9)
        .collect();
    out.sort_by(|a, b| (a / ohm).ln().abs().total_cmp(&(b / ohm).ln().abs()));
    out
}

/// Rounds away the float error of `m × 10^d` (2.2 × 10⁶ is not exact).
fn round_e12(x: f64) -> f64 {
    let scale = 10f64.powi(x.log10().floor() as i32 - 1);
    (x / scale).round() * scale
}

/// What the model gives for a circuit whose photocurrents are those
/// measured, scaled to its LED current.
#[derive(Clone, Debug, PartialEq)]
pub(super) struct Prediction {
    /// Pulse at the ADC input, share of the range.
    pub pulse_share: f64,
    /// Steady level at the ADC input, share of the range.
    pub dc_share: f64,
    /// LED current, mA.
    pub led_ma: f64,
    /// Every node's levels.
    pub nodes: Vec<NodeLevel>,
}

/// Predicts `candidate`, where `measured` is the present circuit with its
/// pulse set to the measured photocurrents at `measured_led_ma`: the
/// photocurrents scale with the LED current (the light through the finger
/// is proportional to the light put in).
pub(super) fn predict(measured: &Circuit, measured_led_ma: f64, candidate: &Circuit) -> Prediction {
    let led_ma = LedBudget::of(&candidate.led).current_ma;
    let k = led_ma / measured_led_ma;
    let mut c = candidate.clone();
    c.pulse.change_ua = measured.pulse.change_ua.map(|p| p * k);
    c.pulse.dc_ua = measured.pulse.dc_ua.map(|d| d * k);
    let nodes = levels(&c, &Chain::of(&c));
    let last = nodes.last().expect("a chain has its detector at least");
    Prediction {
        pulse_share: last.swing_vpp.unwrap_or(0.0) / c.adc.reference_v,
        dc_share: last.steady_v / c.adc.reference_v,
        led_ma,
        nodes,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn e12_candidates_are_nearest_first_and_exact() {
        // IEC 60063: 1 MΩ's neighbours are 1.2 MΩ and 820 kΩ, then 680 kΩ
        // and 1.5 MΩ; by ratio 1.2 < 1 / 0.82 = 1.22 and 1 / 0.68 = 1.47 < 1.5.
        let c = candidates(1e6);
        assert_eq!(&c[..4], &[1.2e6, 820e3, 680e3, 1.5e6]);
        assert!(c.contains(&2.2e6) && c.contains(&1e9) && c.contains(&1e3));
        assert!(!c.contains(&1e6) && !c.iter().any(|v| *v > 1e9 || *v < 1e3));
    }
}
