//! Every node of the chain against its own rails: the detector's output
//! and each stage's, at their DC level and with the pulse's swing on it,
//! and the photocurrent the detector takes before it saturates.
//!
//! The model (common practice for single-supply chains): the detector's
//! output with no light sits at its reference; every stage after it works
//! around the chain's bias (`adc.bias_v`), so a stage that passes DC with
//! gain g puts `bias + g·(input − bias)` out, and one that blocks DC puts
//! out the bias. The pulse swings each node by its mid-band gain from the
//! photocurrent in, the most any frequency gets, centred on the DC level.

use serde::Serialize;

use super::circuit::{Circuit, Detector, Rails};
use super::findings::{node, stage_node, Finding, Level};
use super::quantity::{si, sig3};
use super::transfer::Chain;

/// One node's levels.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct NodeLevel {
    /// Its name, as findings give it.
    pub node: String,
    /// The block whose output it is.
    pub block: String,
    /// The rails it saturates at; `None` for a passive RC stage.
    pub rails: Option<Rails>,
    /// Its level with no photocurrent, volts.
    pub dark_v: f64,
    /// Its level with the steady photocurrent (the dark level when none
    /// is given), volts.
    pub steady_v: f64,
    /// The pulse's swing here, volts peak to peak, if a pulse is given.
    pub swing_vpp: Option<f64>,
    /// Lowest level, volts.
    pub low_v: f64,
    /// Highest level, volts.
    pub high_v: f64,
    /// It leaves its rails.
    pub saturates: bool,
}

/// The photocurrent the detector takes before its output reaches a rail.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct InputRange {
    /// The most photocurrent, µA.
    pub most_ua: f64,
    /// The rail the output reaches at `most_ua`, volts.
    pub rail_v: f64,
    /// The photocurrent the circuit gives at most (steady plus half the
    /// pulse), µA, if known.
    pub given_ua: Option<f64>,
}

impl InputRange {
    /// From the detector's reference, rails and gain: its output moves
    /// from the reference towards the rail its gain's sign points at.
    pub fn of(circuit: &Circuit) -> Self {
        let s = &circuit.supplies;
        let gain = circuit.detector.gain_v_per_a();
        let rail_v = if gain < 0.0 {
            s.detector.low_v
        } else {
            s.detector.high_v
        };
        let p = &circuit.pulse;
        let given_ua = match (p.dc_ua, p.change_ua) {
            (None, None) => None,
            (dc, change) => Some(dc.unwrap_or(0.0) + change.unwrap_or(0.0) / 2.0),
        };
        Self {
            most_ua: ((rail_v - s.reference_v) / gain * 1e6).max(0.0),
            rail_v,
            given_ua,
        }
    }

    /// One line: `the TIA takes 0 to 1.65 µA of photocurrent before its
    /// output reaches its 0 V rail`.
    pub fn describe(&self, detector: &Detector) -> String {
        let who = match detector {
            Detector::Photodiode { .. } => "the TIA",
            Detector::Phototransistor { .. } => "the phototransistor's load",
        };
        format!(
            "{who} takes 0 to {} of photocurrent before its output reaches its {} V rail",
            si(self.most_ua * 1e-6, "A"),
            sig3(self.rail_v)
        )
    }
}

/// The levels of every node, detector first, the last one the ADC input.
pub fn levels(circuit: &Circuit, chain: &Chain) -> Vec<NodeLevel> {
    let s = &circuit.supplies;
    let bias = circuit.adc.bias_v;
    let dc_a = circuit.pulse.dc_ua.unwrap_or(0.0) * 1e-6;
    let mut out = Vec::with_capacity(chain.blocks.len());
    let (mut dark, mut steady, mut gain) = (0.0, 0.0, 1.0);
    for (i, block) in chain.blocks.iter().enumerate() {
        gain *= block.gain;
        let dc_gain = block.transfer.dc_gain();
        (dark, steady) = match (i, dc_gain) {
            (0, g) => (s.reference_v, s.reference_v + g.unwrap_or(0.0) * dc_a),
            (_, None) => (bias, bias),
            (_, Some(g)) => (bias + g * (dark - bias), bias + g * (steady - bias)),
        };
        let rails = if i == 0 {
            Some(s.detector)
        } else {
            s.stages[i - 1]
        };
        let swing_vpp = circuit.pulse.change_ua.map(|p| (gain * p * 1e-6).abs());
        let half = swing_vpp.unwrap_or(0.0) / 2.0;
        let (low_v, high_v) = (steady.min(dark) - half, steady.max(dark) + half);
        out.push(NodeLevel {
            node: if i == 0 {
                node::DETECTOR.to_owned()
            } else {
                stage_node(i - 1)
            },
            block: block.description.clone(),
            rails,
            dark_v: dark,
            steady_v: steady,
            swing_vpp,
            low_v,
            high_v,
            saturates: rails.is_some_and(|r| low_v < r.low_v || high_v > r.high_v),
        });
    }
    out
}

/// An error for each node that leaves its rails, and the detector's
/// input range as a note.
pub fn findings(circuit: &Circuit, levels: &[NodeLevel], range: &InputRange) -> Vec<Finding> {
    let mut out = Vec::new();
    for (i, n) in levels.iter().enumerate() {
        let Some(r) = n.rails.filter(|_| n.saturates) else {
            continue;
        };
        let hint = if i == 0 {
            format!(
                "; {}{}: lower the resistor or move the reference away from that rail",
                range.describe(&circuit.detector),
                range
                    .given_ua
                    .map(|g| format!(", and gets up to {}", si(g * 1e-6, "A")))
                    .unwrap_or_default()
            )
        } else {
            "; lower the gain before it or move the bias".to_owned()
        };
        out.push(Finding::new(
            Level::Error,
            &n.node,
            format!(
                "saturates: {} ({}) would go from {} V to {} V, beyond its rails {} V to {} V{hint}",
                n.node,
                n.block,
                sig3(n.low_v),
                sig3(n.high_v),
                sig3(r.low_v),
                sig3(r.high_v)
            ),
        ));
    }
    out.push(Finding::new(
        Level::Note,
        node::DETECTOR,
        range.describe(&circuit.detector),
    ));
    out
}
