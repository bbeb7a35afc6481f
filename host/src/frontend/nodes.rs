//! Every node of the chain against its own rails: the detector's output
//! and each stage's, at their DC level and with the pulse's swing on it,
//! and the photocurrent the detector takes before it saturates.
//!
//! The model (common practice for single-supply chains): the detector's
//! output with no light sits at its reference; every stage after it works
//! around the chain's bias (`adc.bias_v`), so a stage that passes DC with
//! gain g puts `bias + g·(input − bias)` out, and one that blocks DC puts
//! out the bias. The pulse swings each node by its mid-band gain from the
//! photocurrent in, the most any frequency gets, centred on the steady
//! level; a node spans that swing and its dark level (the board reads the
//! detector with the LED off as well as on).

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
        // The board samples with the LED off too, so the dark level is
        // reached as well; the pulse rides only on the steady level.
        let (low_v, high_v) = ((steady - half).min(dark), (steady + half).max(dark));
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
    // The error at the detector already gives its range.
    if !levels.first().is_some_and(|n| n.saturates) {
        out.push(Finding::new(
            Level::Note,
            node::DETECTOR,
            range.describe(&circuit.detector),
        ));
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frontend::circuit::AmpStage;
    use crate::frontend::test_circuit::circuit;

    /// A 1 MΩ TIA with its reference at 1.65 V on rails of 0 V to 3.3 V.
    fn tia_1m(dc_ua: f64) -> Circuit {
        let mut c = circuit(1.0, 0.02);
        c.detector = Detector::Photodiode {
            feedback_ohm: 1e6,
            feedback_f: None,
        };
        c.stages = vec![AmpStage::HighPass {
            r_ohm: 100e3,
            c_f: 4.7e-6,
        }];
        c.supplies.detector = Rails {
            low_v: 0.0,
            high_v: 3.3,
        };
        c.supplies.stages = vec![None];
        c.pulse.dc_ua = Some(dc_ua);
        c
    }

    #[test]
    fn the_tia_output_is_checked_against_its_own_rails() {
        // 2 µA into 1 MΩ below a 1.65 V reference: −0.35 V, under the
        // 0 V rail (Ohm's law), although the ADC sees only the AC part.
        let c = tia_1m(2.0);
        let chain = Chain::of(&c);
        let nodes = levels(&c, &chain);
        let tia = &nodes[0];
        assert!((tia.dark_v - 1.65).abs() < 1e-12);
        assert!((tia.steady_v + 0.35).abs() < 1e-12);
        assert!((tia.swing_vpp.unwrap() - 0.02).abs() < 1e-12);
        assert!((tia.low_v + 0.36).abs() < 1e-12 && (tia.high_v - 1.65).abs() < 1e-12);
        assert!(tia.saturates);
        // After the AC coupling: at the bias, passive, not saturating.
        assert_eq!(nodes[1].rails, None);
        assert!((nodes[1].steady_v - 1.65).abs() < 1e-12 && !nodes[1].saturates);

        let range = InputRange::of(&c);
        assert!((range.most_ua - 1.65).abs() < 1e-12);
        assert_eq!(range.rail_v, 0.0);
        assert!((range.given_ua.unwrap() - 2.01).abs() < 1e-12);
        let f = findings(&c, &nodes, &range);
        assert_eq!(
            (f[0].level, f[0].node.as_str()),
            (Level::Error, node::DETECTOR)
        );
        assert!(
            f[0].message.starts_with("saturates: detector output (photodiode into a transimpedance amplifier, Rf 1 MΩ) would go from -0.36 V to 1.65 V, beyond its rails 0 V to 3.3 V"),
            "{}",
            f[0].message
        );
        assert!(
            f[0].message.contains("takes 0 to 1.65 µA"),
            "{}",
            f[0].message
        );
        assert_eq!(f.len(), 1, "{f:?}");
        // 1 µA leaves room: 0.65 V ± 10 mV.
        let c = tia_1m(1.0);
        let nodes = levels(&c, &Chain::of(&c));
        assert!(!nodes[0].saturates);
        assert!(findings(&c, &nodes, &InputRange::of(&c))
            .iter()
            .all(|f| f.level != Level::Error));
    }

    #[test]
    fn each_gain_stage_is_checked_against_its_rails() {
        // −10 kΩ, buffer, −47: with a 2 µA steady current the TIA sits at
        // 1.65 − 0.02 = 1.63 V, the buffer the same, and the inverting
        // stage at 1.65 + 47 × 0.02 = 2.59 V: all inside 0 V to 5 V.
        let mut c = circuit(47.0, 0.1);
        c.pulse.dc_ua = Some(2.0);
        let nodes = levels(&c, &Chain::of(&c));
        assert!((nodes[0].steady_v - 1.63).abs() < 1e-12);
        assert!((nodes[1].steady_v - 1.63).abs() < 1e-12);
        assert!((nodes[2].steady_v - 2.59).abs() < 1e-12);
        assert!(nodes.iter().all(|n| !n.saturates));
        // The same stage on rails of 0 V to 2.5 V saturates; the others not.
        c.supplies.stages[1] = Some(Rails {
            low_v: 0.0,
            high_v: 2.5,
        });
        let nodes = levels(&c, &Chain::of(&c));
        let saturated: Vec<&str> = nodes
            .iter()
            .filter(|n| n.saturates)
            .map(|n| n.node.as_str())
            .collect();
        assert_eq!(saturated, ["stage 2 output"]);
        let f = findings(&c, &nodes, &InputRange::of(&c));
        assert_eq!(f[0].node, "stage 2 output");
        assert!(
            f[0].message.contains("lower the gain before it"),
            "{}",
            f[0].message
        );
    }

    #[test]
    fn a_phototransistor_starts_from_the_rail_its_load_returns_to() {
        // 10 kΩ at the emitter: 0 V dark, 100 µA gives 1 V; it takes
        // (5 V − 0 V) / 10 kΩ = 500 µA before reaching the 5 V rail.
        let mut c = circuit(1.0, 1.0);
        c.detector = Detector::Phototransistor {
            load_ohm: 10e3,
            load_at: crate::frontend::LoadAt::Emitter,
            load_f: None,
        };
        c.supplies.reference_v = 0.0;
        c.stages.clear();
        c.supplies.stages.clear();
        c.pulse.dc_ua = Some(100.0);
        let nodes = levels(&c, &Chain::of(&c));
        assert!((nodes[0].dark_v).abs() < 1e-12 && (nodes[0].steady_v - 1.0).abs() < 1e-12);
        assert!(!nodes[0].saturates);
        let range = InputRange::of(&c);
        assert!((range.most_ua - 500.0).abs() < 1e-9 && range.rail_v == 5.0);
        assert!(range
            .describe(&c.detector)
            .starts_with("the phototransistor's load takes 0 to 500 µA"));
        c.pulse.dc_ua = Some(600.0);
        assert!(levels(&c, &Chain::of(&c))[0].saturates);
    }
}
