//! The signal budget at the ADC: how far one pulse swings the output, where
//! that swing sits against the ADC's input range, and how much photocurrent
//! one ADC step stands for. Each node against its rails is in
//! [`super::nodes`].

use serde::Serialize;

use super::circuit::Circuit;
use super::findings::{node, Finding, Level};
use super::nodes::NodeLevel;
use super::quantity::sig3;
use super::transfer::Chain;

/// Fewer codes than this across a pulse make a coarse, noisy waveform
/// (our rule: about 4 bits of pulse shape).
pub const MIN_PULSE_CODES: f64 = 16.0;

/// The ADC's resolution against the chain.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct AdcBudget {
    /// One step, millivolts.
    pub lsb_mv: f64,
    /// One step as photocurrent at mid-band, µA.
    pub lsb_ua: f64,
    /// The whole input range as photocurrent at mid-band, µA.
    pub full_scale_ua: f64,
}

impl AdcBudget {
    /// LSB = reference / 2^bits; in photocurrent, divided by the mid-band
    /// transimpedance.
    pub fn of(circuit: &Circuit, chain: &Chain) -> Self {
        let adc = &circuit.adc;
        let lsb_v = adc.reference_v / 2f64.powi(adc.bits as i32);
        let v_per_ua = chain.midband_v_per_ua().abs();
        Self {
            lsb_mv: lsb_v * 1e3,
            lsb_ua: lsb_v / v_per_ua,
            full_scale_ua: adc.reference_v / v_per_ua,
        }
    }
}

/// Where one pulse puts the output.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct Swing {
    /// The photocurrent change, µA peak to peak.
    pub pulse_ua: f64,
    /// The output change at mid-band gain (the most any frequency gets),
    /// volts peak to peak.
    pub swing_vpp: f64,
    /// The steady output shift from the DC photocurrent, volts; `None`
    /// when the chain blocks DC or no DC photocurrent was given.
    pub dc_shift_v: Option<f64>,
    /// The level the swing is centred on, volts.
    pub centre_v: f64,
    /// Lowest output, volts.
    pub low_v: f64,
    /// Highest output, volts.
    pub high_v: f64,
    /// ADC codes across the swing.
    pub codes: f64,
    /// The output leaves the ADC's input range.
    pub adc_clips: bool,
}

impl Swing {
    /// The swing of the circuit's pulse at the ADC input, the chain's
    /// last node `adc_in`, if the circuit gives a pulse.
    pub fn of(
        circuit: &Circuit,
        chain: &Chain,
        adc: &AdcBudget,
        adc_in: &NodeLevel,
    ) -> Option<Self> {
        let pulse_ua = circuit.pulse.change_ua?;
        let swing_vpp = chain.midband_v_per_ua().abs() * pulse_ua;
        let dc_shift_v = circuit
            .pulse
            .dc_ua
            .zip(chain.transfer.dc_gain())
            .map(|_| adc_in.steady_v - adc_in.dark_v);
        let centre_v = adc_in.steady_v;
        let (low_v, high_v) = (centre_v - swing_vpp / 2.0, centre_v + swing_vpp / 2.0);
        Some(Self {
            pulse_ua,
            swing_vpp,
            dc_shift_v,
            centre_v,
            low_v,
            high_v,
            codes: swing_vpp / (adc.lsb_mv * 1e-3),
            adc_clips: low_v < 0.0 || high_v > circuit.adc.reference_v,
        })
    }

    /// Clipping at the ADC (an error) and a pulse too small for it.
    pub fn findings(&self, circuit: &Circuit) -> Vec<Finding> {
        let mut out = Vec::new();
        if self.adc_clips {
            let reference = circuit.adc.reference_v;
            let cause = if self.swing_vpp > reference {
                "the swing alone is wider than the range: lower the gain or the LED current"
            } else {
                "move the bias or lower the gain"
            };
            out.push(Finding::new(
                Level::Error,
                node::ADC,
                format!(
                    "clipping: the output swings from {} V to {} V ({} V p-p around {} V), beyond the ADC input range 0 V to {} V; {cause}",
                    sig3(self.low_v),
                    sig3(self.high_v),
                    sig3(self.swing_vpp),
                    sig3(self.centre_v),
                    sig3(reference)
                ),
            ));
        }
        if self.codes < MIN_PULSE_CODES {
            out.push(Finding::new(
                Level::Warning,
                node::ADC,
                format!(
                    "the pulse spans only {} ADC codes (fewer than {MIN_PULSE_CODES}): raise the gain or the LED current",
                    sig3(self.codes)
                ),
            ));
        }
        out
    }
}

/// Notes on the DC level: blocked, unknown where it matters, or assumed.
pub fn dc_notes(circuit: &Circuit, chain: &Chain) -> Vec<Finding> {
    let mut out = Vec::new();
    match (circuit.pulse.dc_ua, chain.transfer.dc_gain()) {
        (Some(dc), None) => out.push(Finding::new(
            Level::Note,
            node::ADC,
            format!(
                "the steady photocurrent ({} µA) is blocked by the AC coupling before the ADC",
                sig3(dc)
            ),
        )),
        (None, _) => out.push(Finding::new(
            Level::Note,
            node::DETECTOR,
            "no steady photocurrent given (pulse.dc_ua, --dc-ua): every DC-coupled node is placed as if there were none",
        )),
        _ => {}
    }
    let s = &circuit.supplies;
    if s.reference_assumed {
        out.push(Finding::new(
            Level::Note,
            node::DETECTOR,
            format!(
                "no detector.reference_v (--tia-ref) given: the TIA's reference is taken as the bias, {} V",
                sig3(s.reference_v)
            ),
        ));
    }
    if circuit.adc.bias_assumed && (s.reference_assumed || !circuit.stages.is_empty()) {
        out.push(Finding::new(
            Level::Note,
            node::ADC,
            format!(
                "no adc.bias_v (--bias) given: the bias the stages work around is taken as {} V, half the ADC reference",
                sig3(circuit.adc.bias_v)
            ),
        ));
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frontend::circuit::AmpStage;
    use crate::frontend::nodes::levels;
    use crate::frontend::test_circuit::circuit;

    fn swing(c: &Circuit) -> (Chain, Swing) {
        let chain = Chain::of(c);
        let adc = AdcBudget::of(c, &chain);
        let nodes = levels(c, &chain);
        let s = Swing::of(c, &chain, &adc, nodes.last().unwrap()).unwrap();
        (chain, s)
    }

    #[test]
    fn transimpedance_of_the_whole_chain() {
        // −10 kΩ × 1 × −470 = 4.7 MΩ, 4.7 V per µA; with −47, 470 kΩ
        // (common practice: gains of stages in series multiply).
        let c = circuit(470.0, 1.0);
        let chain = Chain::of(&c);
        assert!((chain.midband_v_per_a - 4.7e6).abs() < 1e-6);
        assert!((chain.midband_v_per_ua() - 4.7).abs() < 1e-12);
        let c = circuit(47.0, 1.0);
        let (chain, s) = swing(&c);
        assert!((chain.midband_v_per_a - 470e3).abs() < 1e-6);
        assert!((s.swing_vpp - 0.470).abs() < 1e-12, "1 µA gives 470 mV");
        assert!(!s.adc_clips);
        assert!(s.findings(&c).is_empty());
    }

    #[test]
    fn lsb_in_photocurrent() {
        let c = circuit(47.0, 1.0);
        let chain = Chain::of(&c);
        let adc = AdcBudget::of(&c, &chain);
        // 3.3 V / 4096 = 0.806 mV; over 0.47 V/µA, 1.71 nA.
        assert!((adc.lsb_mv - 3.3 / 4096.0 * 1e3).abs() < 1e-12);
        assert!((adc.lsb_ua - 3.3 / 4096.0 / 0.47).abs() < 1e-12);
        assert!((adc.full_scale_ua - 3.3 / 0.47).abs() < 1e-12);
    }

    #[test]
    fn a_swing_wider_than_the_adc_range_is_an_error_at_the_adc() {
        // 1 µA at 4.7 V/µA is 4.7 V p-p, wider than 3.3 V.
        let c = circuit(470.0, 1.0);
        let (_, s) = swing(&c);
        assert!(s.adc_clips);
        let f = s.findings(&c);
        assert_eq!((f[0].level, f[0].node.as_str()), (Level::Error, node::ADC));
        assert!(
            f[0].message
                .starts_with("clipping: the output swings from -0.7 V to 4 V"),
            "{f:?}"
        );
        assert!(f[0].message.contains("wider than the range"), "{f:?}");
    }

    #[test]
    fn dc_photocurrent_shifts_a_dc_coupled_output() {
        let mut c = circuit(47.0, 0.1);
        c.pulse.dc_ua = Some(2.0);
        let (chain, s) = swing(&c);
        // 2 µA × 0.47 V/µA = 0.94 V above the 1.65 V bias.
        assert!((s.dc_shift_v.unwrap() - 0.94).abs() < 1e-12);
        assert!((s.centre_v - 2.59).abs() < 1e-12);
        assert!(dc_notes(&c, &chain).is_empty());
        c.stages.insert(
            0,
            AmpStage::HighPass {
                r_ohm: 1e6,
                c_f: 1e-6,
            },
        );
        c.supplies.stages.insert(0, None);
        let (chain, s) = swing(&c);
        assert_eq!(s.dc_shift_v, None);
        assert!((s.centre_v - 1.65).abs() < 1e-12);
        assert!(dc_notes(&c, &chain)[0]
            .message
            .contains("blocked by the AC coupling"));
    }

    #[test]
    fn a_tiny_pulse_warns_that_it_spans_few_codes() {
        let c = circuit(47.0, 0.01);
        let (_, s) = swing(&c);
        // 4.7 mV over 0.806 mV steps: 5.83 codes.
        assert!((s.codes - 5.833).abs() < 1e-3);
        let f = s.findings(&c);
        assert_eq!(f[0].level, Level::Warning);
        assert!(f[0]
            .message
            .starts_with("the pulse spans only 5.83 ADC codes"));
    }
}
