//! The ranges outside which a header's values make no physical sense.

use super::field_error::FieldError;

/// Lowest and highest sampling or counter frequency taken, Hz: a frame in
/// 12 days to a gigahertz, beyond any recording.
const FREQUENCY_HZ: (f64, f64) = (1e-6, 1e9);
/// Most frames a header may state: 30 years at 1 MHz.
pub(super) const MAX_FRAMES: u64 = 1_000_000_000_000_000;
/// Smallest and largest ADC gain (units per physical unit) taken, in size.
const GAIN: (f64, f64) = (1e-12, 1e12);
/// Most bits an ADC resolution may state: the widest format stores 32.
pub(super) const MAX_RESOLUTION_BITS: u32 = 32;

/// `value` of `field` unless it is above `max`.
pub(super) fn at_most(
    value: u64,
    max: u64,
    field: &'static str,
    expected: &'static str,
) -> Result<u64, FieldError> {
    if value > max {
        return Err(FieldError::Implausible {
            field,
            text: value.to_string(),
            expected,
        });
    }
    Ok(value)
}

/// A frequency `v` (the text `text` of `field`) inside [`FREQUENCY_HZ`].
pub(super) fn frequency(v: f64, field: &'static str, text: &str) -> Result<(), FieldError> {
    if (FREQUENCY_HZ.0..=FREQUENCY_HZ.1).contains(&v) {
        return Ok(());
    }
    Err(FieldError::Implausible {
        field,
        text: text.to_owned(),
        expected: "from 1e-6 to 1e9 Hz",
    })
}

/// An ADC gain (read from `text`) whose size lies inside [`GAIN`];
/// negative gains are taken (an inverted signal).
pub(super) fn gain(gain: f64, text: &str) -> Result<(), FieldError> {
    if (GAIN.0..=GAIN.1).contains(&gain.abs()) {
        return Ok(());
    }
    Err(FieldError::Implausible {
        field: "ADC gain",
        text: text.to_owned(),
        expected: "its size from 1e-12 to 1e12 units per physical unit",
    })
}
