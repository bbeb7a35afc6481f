//! Signal-to-noise in the heart band: the power from 0.5 to 3.7 Hz
//! (30–220 bpm) against the power at every other frequency above DC, in dB,
//! from the block's periodogram ([`super::spectrum::periodogram`]): its
//! heart-band bins alone and the total from Parseval's theorem, so a 10 s
//! block costs some 33 bins' work instead of all of them.

use super::spectrum::{band_power_of, centred, power_above_dc};
use super::{Block, BringupError, Check, Verdict};

/// The heart band's low edge: 30 bpm (`common practice`).
pub const HEART_LOW_HZ: f64 = 0.5;
/// The heart band's high edge: 220 bpm (`common practice`).
pub const HEART_HIGH_HZ: f64 = 3.7;
/// The shortest block the spectral checks take: four periods of the band's
/// low edge, so its bins are 0.125 Hz apart at most and a slow pulse shows
/// a few cycles.
pub const MIN_SECONDS: f64 = 8.0;
/// Below this the pulse hardly stands out of the noise (`common practice`).
pub const TROUBLE_BELOW_DB: f64 = 3.0;
/// Below this beats are found but noise moves them (`common practice`).
pub const BORDERLINE_BELOW_DB: f64 = 10.0;

/// The powers in and out of the heart band (unit²), with the mean removed.
pub(super) fn band_powers(block: &Block) -> Result<(f64, f64), BringupError> {
    if block.seconds() < MIN_SECONDS {
        return Err(BringupError::OutOfRange {
            name: "block length (s)",
            value: block.seconds(),
            rule: "at least 8 s for the spectral checks",
        });
    }
    let x = centred(block.samples());
    let heart = band_power_of(&x, block.rate_hz(), HEART_LOW_HZ, HEART_HIGH_HZ);
    // Every bin but DC: the mean is not noise.
    let total = power_above_dc(&x);
    Ok((heart, (total - heart).max(0.0)))
}

/// The heart band's signal-to-noise in dB with its verdict. An error when
/// the block is shorter than [`MIN_SECONDS`].
pub fn heart_snr(block: &Block) -> Result<Check, BringupError> {
    let (heart, rest) = band_powers(block)?;
    if heart <= 0.0 {
        return Ok(Check::new(
            None,
            Verdict::Trouble,
            "no power in the heart band: no pulse".to_string(),
        ));
    }
    if rest <= 0.0 {
        return Ok(Check::new(
            None,
            Verdict::Clear,
            "no power outside the heart band".to_string(),
        ));
    }
    let db = 10.0 * (heart / rest).log10();
    let (verdict, advice) = if db < TROUBLE_BELOW_DB {
        (
            Verdict::Trouble,
            "noise as strong as the pulse: shield the sensor, keep still",
        )
    } else if db < BORDERLINE_BELOW_DB {
        (
            Verdict::Borderline,
            "noisy: check the shielding and the supply",
        )
    } else {
        (Verdict::Clear, "a clean pulse")
    };
    Ok(Check::new(
        Some(db),
        verdict,
        format!("heart band {db:.1} dB above the rest: {advice}"),
    ))
}
