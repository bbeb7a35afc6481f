//! Ambient share of the LED-on level: how much of what the detector sees
//! with the LED on is room light, ambient / LED-on, both levels measured
//! from the zero-light level in the same unit.

use super::{check_value, BringupError, Check, Verdict};

/// Up to this share (10 %) room light costs little range (`common
/// practice`).
pub const CLEAR_AT_MOST: f64 = 0.10;
/// Above this share (50 %) room light takes most of the range and its
/// flicker rides on the pulse (`common practice`).
pub const TROUBLE_ABOVE: f64 = 0.50;

/// The ambient share (0 to 1, or more when the LED-on level is below the
/// ambient one) with its verdict. Errors when a level is not finite, the
/// ambient level is negative or the LED-on level not above 0.
pub fn ambient_share(ambient: f64, led_on: f64) -> Result<Check, BringupError> {
    check_value("ambient level", ambient, ambient >= 0.0, "0 or more")?;
    check_value("LED-on level", led_on, led_on > 0.0, "above 0")?;
    let share = ambient / led_on;
    let (verdict, advice) = if share <= CLEAR_AT_MOST {
        (Verdict::Clear, "room light is small")
    } else if share <= TROUBLE_ABOVE {
        (Verdict::Borderline, "some room light: cover the sensor")
    } else {
        (
            Verdict::Trouble,
            "room light dominates: cover the sensor, dim the lamp",
        )
    };
    Ok(Check::new(
        Some(share),
        verdict,
        format!(
            "ambient is {:.0} % of the LED-on level: {advice}",
            share * 100.0
        ),
    ))
}
