//! The circuit file against what the board reports, and the advice the
//! front-end model gives from the gauges (`frontend::advice`).

use super::report::Gauges;
use super::BoardInfo;
use crate::frontend::advice::{advise, Measured};
use crate::frontend::{si, Circuit};

/// The start of the warning when the circuit file does not fit the board.
pub const MISMATCH_NOTE: &str = "the circuit file does not match the board";

/// Why `circuit` cannot be the board's front end, if it cannot: another
/// ADC width than the hello's `adc_bits`, or rails that are neither the
/// circuit's ADC codes (0 to 2^bits − 1) nor its volts (0 to the
/// reference). Nothing to say before the hello.
pub fn circuit_mismatch(circuit: &Circuit, board: &BoardInfo) -> Option<String> {
    let bits = circuit.adc.bits;
    if let Some(b) = board.adc_bits.filter(|b| *b > 0) {
        if u32::from(b) != bits {
            return Some(format!(
                "{MISMATCH_NOTE}: its ADC has {bits} bits, the board says {b}"
            ));
        }
    }
    let (lo, hi) = board.rails?;
    let codes = 2f64.powi(bits as i32) - 1.0;
    let volts = circuit.adc.reference_v;
    let near = |a: f64, b: f64, tol: f64| (a - b).abs() <= tol;
    // Half a code either way, or 1 % of the reference.
    let as_codes = near(lo, 0.0, 0.5) && near(hi, codes, 0.5);
    let as_volts = near(lo, 0.0, 0.01 * volts) && near(hi, volts, 0.01 * volts);
    (!as_codes && !as_volts).then(|| {
        format!(
            "{MISMATCH_NOTE}: the board's rails {lo} to {hi} are neither the {bits}-bit ADC's \
             codes (0 to {codes}) nor its 0 to {volts} V"
        )
    })
}

/// The advice lines for the gauges of one report: the suggestions, the
/// changes refused and why, or why there is no advice.
pub(super) fn advice(
    circuit: &Circuit,
    board: &BoardInfo,
    g: &Gauges,
    max_drive: Option<f64>,
) -> Vec<String> {
    if let Some(why) = circuit_mismatch(circuit, board) {
        return vec![format!("no advice: {why}")];
    }
    let (Some(dc), Some(pulse)) = (g.dc, g.pulse_share) else {
        return vec![
            "no advice: the DC level and the pulse against the ADC range are not known".to_string(),
        ];
    };
    let m = Measured {
        dc_share: dc.clamp(0.0, 1.0),
        pulse_share: pulse.clamp(0.0, 1.0),
        clipped_share: g.clipped.unwrap_or(0.0).clamp(0.0, 1.0),
        led_drive: g
            .led_drive
            .filter(|d| *d > 0.0 && *d <= 1.0)
            .map(|d| match max_drive {
                // A board at its cap reports it rounded to 1/65535.
                Some(max) if d > max && d - max <= 1.0 / 65_535.0 => max,
                _ => d,
            }),
        max_drive,
    };
    let a = match advise(circuit, &m) {
        Ok(a) => a,
        Err(e) => return vec![format!("no advice: {e}")],
    };
    let mut lines = a.lines();
    if lines.is_empty() {
        lines.push(format!(
            "nothing to change: pulse {:.1} % of the ADC range, DC at {:.0} %",
            m.pulse_share * 100.0,
            m.dc_share * 100.0
        ));
    }
    lines.extend(
        a.refused
            .iter()
            .map(|r| format!("not {} → {}: {}", r.part, si(r.to_ohm, "Ω"), r.reason)),
    );
    lines
}
