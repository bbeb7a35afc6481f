//! A circuit for the unit tests: an LED of 5 V − 1.7 V over 470 Ω, a
//! −10 kΩ transimpedance with its reference at the 1.65 V bias, a unity
//! buffer and an inverting stage, all on rails of 0 V to 5 V.

use super::circuit::{Adc, AmpStage, Circuit, Detector, LedDrive, Pulse, Rails, Supplies};

/// The rails everything runs on.
pub const RAILS: Rails = Rails {
    low_v: 0.0,
    high_v: 5.0,
};

/// The circuit with an inverting last stage of gain −`last` and a pulse of
/// `pulse_ua` µA peak to peak, no steady photocurrent.
pub fn circuit(last: f64, pulse_ua: f64) -> Circuit {
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
        rails: RAILS,
        supplies: Supplies {
            detector: RAILS,
            reference_v: 1.65,
            reference_assumed: false,
            stages: vec![Some(RAILS), Some(RAILS)],
        },
    }
}
