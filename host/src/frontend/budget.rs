//! The signal budget at the ADC: how far one pulse swings the output, where
//! that swing sits against the ADC's input range and the amplifier rails,
//! and how much photocurrent one ADC step stands for.

use serde::Serialize;

use super::circuit::Circuit;
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
    /// The output leaves the amplifier rails.
    pub rails_clip: bool,
}

impl Swing {
    /// The swing of the circuit's pulse, if it gives one.
    pub fn of(circuit: &Circuit, chain: &Chain, adc: &AdcBudget) -> Option<Self> {
        let pulse_ua = circuit.pulse.change_ua?;
        let swing_vpp = chain.midband_v_per_ua().abs() * pulse_ua;
        let dc_shift_v = circuit
            .pulse
            .dc_ua
            .zip(chain.transfer.dc_gain())
            .map(|(dc_ua, gain)| gain * dc_ua * 1e-6);
        let centre_v = circuit.adc.bias_v + dc_shift_v.unwrap_or(0.0);
        let (low_v, high_v) = (centre_v - swing_vpp / 2.0, centre_v + swing_vpp / 2.0);
        let rails = &circuit.rails;
        Some(Self {
            pulse_ua,
            swing_vpp,
            dc_shift_v,
            centre_v,
            low_v,
            high_v,
            codes: swing_vpp / (adc.lsb_mv * 1e-3),
            adc_clips: low_v < 0.0 || high_v > circuit.adc.reference_v,
            rails_clip: low_v < rails.low_v || high_v > rails.high_v,
        })
    }

    /// Warnings about clipping and about a pulse too small for the ADC.
    pub fn warnings(&self, circuit: &Circuit) -> Vec<String> {
        let mut out = Vec::new();
        let span = format!(
            "the output swings from {} V to {} V ({} V p-p around {} V)",
            sig3(self.low_v),
            sig3(self.high_v),
            sig3(self.swing_vpp),
            sig3(self.centre_v)
        );
        if self.adc_clips {
            let reference = circuit.adc.reference_v;
            let cause = if self.swing_vpp > reference {
                "the swing alone is wider than the range: lower the gain or the LED current"
            } else {
                "move the bias or lower the gain"
            };
            out.push(format!(
                "clipping: {span}, beyond the ADC input range 0 V to {} V; {cause}",
                sig3(reference)
            ));
        }
        if self.rails_clip {
            let r = &circuit.rails;
            out.push(format!(
                "clipping: {span}, beyond the amplifier rails {} V to {} V",
                sig3(r.low_v),
                sig3(r.high_v)
            ));
        }
        if self.codes < MIN_PULSE_CODES {
            out.push(format!(
                "the pulse spans only {} ADC codes (fewer than {MIN_PULSE_CODES}): raise the gain or the LED current",
                sig3(self.codes)
            ));
        }
        out
    }

    /// Notes on the DC level: blocked, or unknown where it matters.
    pub fn notes(&self, circuit: &Circuit, chain: &Chain) -> Vec<String> {
        let mut out = Vec::new();
        match (circuit.pulse.dc_ua, chain.transfer.dc_gain()) {
            (Some(dc), None) => out.push(format!(
                "the steady photocurrent ({} µA) is blocked by the AC coupling",
                sig3(dc)
            )),
            (None, Some(gain)) => out.push(format!(
                "the chain passes DC ({} V/µA): give the steady photocurrent (pulse.dc_ua, --dc-ua) to place the output",
                sig3(gain * 1e-6)
            )),
            _ => {}
        }
        if circuit.adc.bias_assumed && chain.transfer.dc_gain().is_some() {
            // A DC-coupled output starts from the detector's own level
            // (ground for an emitter load, the supply for a collector load).
            out.push(format!(
                "no adc.bias_v (--bias) given: the output with no light is taken as {} V, half the reference",
                sig3(circuit.adc.bias_v)
            ));
        }
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frontend::circuit::{Adc, AmpStage, Detector, LedDrive, Pulse, Rails};

    /// A −10 kΩ transimpedance, a unity buffer and an inverting stage of
    /// gain −`last`.
    fn circuit(last: f64, pulse_ua: f64) -> Circuit {
        Circuit {
            name: None,
            led: LedDrive {
                supply_v: 5.0,
                forward_v: 1.7,
                resistors_ohm: vec![470.0],
                rated_ma: None,
            },
            detector: Detector::Photodiode {
                feedback_ohm: 10e3,
                feedback_f: None,
            },
            stages: vec![
                AmpStage::Buffer,
                AmpStage::Inverting {
                    rin_ohm: 1e3,
                    rf_ohm: last * 1e3,
                    cf_f: None,
                    cin_f: None,
                },
            ],
            adc: Adc {
                bits: 12,
                reference_v: 3.3,
                bias_v: 1.65,
                bias_assumed: false,
                rate_hz: None,
            },
            pulse: Pulse {
                change_ua: Some(pulse_ua),
                dc_ua: None,
            },
            rails: Rails {
                low_v: 0.0,
                high_v: 5.0,
            },
        }
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
        let chain = Chain::of(&c);
        assert!((chain.midband_v_per_a - 470e3).abs() < 1e-6);
        let adc = AdcBudget::of(&c, &chain);
        let s = Swing::of(&c, &chain, &adc).unwrap();
        assert!((s.swing_vpp - 0.470).abs() < 1e-12, "1 µA gives 470 mV");
        assert!(!s.adc_clips && !s.rails_clip);
        assert!(s.warnings(&c).is_empty());
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
    fn a_swing_wider_than_the_adc_range_warns_of_clipping() {
        // 1 µA at 4.7 V/µA is 4.7 V p-p, wider than 3.3 V.
        let c = circuit(470.0, 1.0);
        let chain = Chain::of(&c);
        let adc = AdcBudget::of(&c, &chain);
        let s = Swing::of(&c, &chain, &adc).unwrap();
        assert!(s.adc_clips && s.rails_clip);
        let w = s.warnings(&c);
        assert!(
            w[0].starts_with("clipping: the output swings from -0.7 V to 4 V"),
            "{w:?}"
        );
        assert!(w[0].contains("wider than the range"), "{w:?}");
        assert!(
            w[1].contains("beyond the amplifier rails 0 V to 5 V"),
            "{w:?}"
        );
    }

    #[test]
    fn dc_photocurrent_shifts_a_dc_coupled_output() {
        let mut c = circuit(47.0, 0.1);
        c.pulse.dc_ua = Some(2.0);
        let chain = Chain::of(&c);
        let adc = AdcBudget::of(&c, &chain);
        let s = Swing::of(&c, &chain, &adc).unwrap();
        // 2 µA × 0.47 V/µA = 0.94 V above the 1.65 V bias.
        assert!((s.dc_shift_v.unwrap() - 0.94).abs() < 1e-12);
        assert!((s.centre_v - 2.59).abs() < 1e-12);
        assert!(s.notes(&c, &chain).is_empty());
        c.stages.insert(
            0,
            AmpStage::HighPass {
                r_ohm: 1e6,
                c_f: 1e-6,
            },
        );
        let chain = Chain::of(&c);
        let s = Swing::of(&c, &chain, &adc).unwrap();
        assert_eq!(s.dc_shift_v, None);
        assert!(s.notes(&c, &chain)[0].contains("blocked by the AC coupling"));
    }

    #[test]
    fn a_tiny_pulse_warns_that_it_spans_few_codes() {
        let c = circuit(47.0, 0.01);
        let chain = Chain::of(&c);
        let adc = AdcBudget::of(&c, &chain);
        let s = Swing::of(&c, &chain, &adc).unwrap();
        // 4.7 mV over 0.806 mV steps: 5.83 codes.
        assert!((s.codes - 5.833).abs() < 1e-3);
        assert!(s.warnings(&c)[0].starts_with("the pulse spans only 5.83 ADC codes"));
    }
}
