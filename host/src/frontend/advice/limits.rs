//! The limits every suggestion is held to: the LED's current against its
//! rating and the board's `max_drive`, each node inside its rails; and the
//! measured pulse a clipped signal stands for.

use super::super::circuit::Circuit;
use super::super::led::LedBudget;
use super::super::quantity::{si, sig3};
use super::search::Prediction;
use super::Measured;

/// The LED current at `drive` (share of full drive) through the circuit's
/// LED drive model: drive × (supply − forward voltage) / resistance, mA.
pub fn drive_ma(circuit: &Circuit, drive: f64) -> f64 {
    drive * LedBudget::of(&circuit.led).current_ma
}

/// The pulse as a share of the range, at least the way from the DC to
/// the nearer rail and back when samples clipped (the measured one is cut).
pub(super) fn effective_pulse(m: &Measured) -> f64 {
    if m.clipped_share > 0.0 {
        m.pulse_share.max(2.0 * m.dc_share.min(1.0 - m.dc_share))
    } else {
        m.pulse_share
    }
}

/// Why the model refuses a prediction: the most the board may drive the
/// LED with it over the LED's rating, its current at the present drive
/// over the board's `max_drive` at the present resistor, or a node beyond
/// its rails.
pub(super) fn refusal(circuit: &Circuit, m: &Measured, p: &Prediction) -> Option<String> {
    let ma = |v: f64| si(v * 1e-3, "A");
    let (running, top) = (p.led_ma * drive_of(m), p.led_ma * cap_of(m));
    let rated = circuit.led.rated_ma.filter(|r| top > *r).map(|r| {
        if top > running {
            let most = ma(top);
            format!(
                "LED current {} ({most} at the board's most drive) is above its rated {}",
                ma(running),
                ma(r)
            )
        } else {
            format!("LED current {} is above its rated {}", ma(top), ma(r))
        }
    });
    let most = m.max_drive.map(|d| drive_ma(circuit, d));
    rated
        .or_else(|| {
            most.filter(|l| running > *l + 1e-9).map(|l| {
                format!(
                    "LED current {} is above the board's most drive {}",
                    ma(running),
                    ma(l)
                )
            })
        })
        .or_else(|| {
            p.nodes.iter().find(|n| n.saturates).map(|n| {
                format!(
                    "the {} would go from {} V to {} V, beyond its rails",
                    n.node,
                    sig3(n.low_v),
                    sig3(n.high_v)
                )
            })
        })
}

/// The board's cap, share of full drive (1 without one).
fn cap_of(m: &Measured) -> f64 {
    m.max_drive.unwrap_or(1.0)
}

/// The drive the levels were measured at (the cap when not known).
pub(super) fn drive_of(m: &Measured) -> f64 {
    m.led_drive.unwrap_or_else(|| cap_of(m))
}
