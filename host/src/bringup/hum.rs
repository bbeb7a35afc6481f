//! Mains hum at 50 and 60 Hz, as its power against the heart band's, in
//! dB. The power at each hum frequency comes from the Goertzel recurrence
//! ([`super::spectrum::goertzel_power`]): a sine of amplitude A at exactly
//! that frequency over whole cycles gives 2 |X|² / N² = A² / 2.

use super::snr::band_powers;
use super::spectrum::goertzel_power;
use super::{Block, BringupError, Check, Verdict};

/// The mains frequencies checked (Hz).
pub const MAINS_HZ: [f64; 2] = [50.0, 60.0];
/// Hum this far below the pulse is taken out by the band-pass with room to
/// spare (`common practice`).
pub const CLEAR_BELOW_DB: f64 = -20.0;
/// Hum as strong as the pulse or more (`common practice`).
pub const TROUBLE_FROM_DB: f64 = 0.0;

/// One mains frequency's check.
#[derive(Clone, Debug, PartialEq)]
pub struct HumCheck {
    /// The mains frequency (Hz).
    pub mains_hz: f64,
    /// The hum's power against the heart band's, in dB.
    pub check: Check,
}

/// The hum at each of [`MAINS_HZ`]; not measurable where the frequency is
/// not below Nyquist. An error when the block is shorter than
/// [`super::snr::MIN_SECONDS`].
pub fn mains_hum(block: &Block) -> Result<Vec<HumCheck>, BringupError> {
    let (heart, _) = band_powers(block)?;
    let x = block.samples();
    let n = x.len() as f64;
    let mean = x.iter().sum::<f64>() / n;
    let centred: Vec<f64> = x.iter().map(|v| v - mean).collect();
    let nyquist = block.rate_hz() / 2.0;
    let one = |mains_hz: f64| {
        if mains_hz >= nyquist {
            let message = format!(
                "{mains_hz:.0} Hz hum: not measurable at this rate ({:.0} Hz)",
                block.rate_hz()
            );
            return Check::new(None, Verdict::NotMeasurable, message);
        }
        if heart <= 0.0 {
            let message = format!("{mains_hz:.0} Hz hum: no pulse to compare it with");
            return Check::new(None, Verdict::NotMeasurable, message);
        }
        let power = 2.0 * goertzel_power(&centred, mains_hz, block.rate_hz()) / (n * n);
        let db = 10.0 * (power.max(f64::MIN_POSITIVE) / heart).log10();
        let (verdict, advice) = if db < CLEAR_BELOW_DB {
            (Verdict::Clear, "well below the pulse")
        } else if db < TROUBLE_FROM_DB {
            (
                Verdict::Borderline,
                "noticeable: shorten the wires, run from a battery",
            )
        } else {
            (
                Verdict::Trouble,
                "stronger than the pulse: shield the sensor, run from a battery",
            )
        };
        let message = format!("{mains_hz:.0} Hz hum {db:.1} dB against the pulse: {advice}");
        Check::new(Some(db), verdict, message)
    };
    Ok(MAINS_HZ
        .iter()
        .map(|&mains_hz| HumCheck {
            mains_hz,
            check: one(mains_hz),
        })
        .collect())
}
