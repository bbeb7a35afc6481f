//! Settling of the LED drive loop: the time since the drive last changed by
//! more than a tolerance, and whether that is long enough to call it
//! settled.

use super::{check_list, check_value, BringupError, Check, Verdict};

/// A drive unchanged this long has settled: a few beats at a resting heart
/// rate see the same exposure (`common practice`).
pub const SETTLED_AFTER_S: f64 = 2.0;

/// The loop's settling.
#[derive(Clone, Debug, PartialEq)]
pub struct Settling {
    /// Seconds from the last change larger than the tolerance to the last
    /// drive value (the whole series' span when there is none).
    pub since_change_s: f64,
    /// Whether `since_change_s` is at least [`SETTLED_AFTER_S`].
    pub settled: bool,
    /// The same as a check: clear when settled, borderline while it moves.
    pub check: Check,
}

/// The settling of a series of LED drive values taken at `rate_hz`, a step
/// counting as a change when it exceeds `tolerance` (in the drive's unit).
/// Errors on fewer than two values, a value not finite, a rate not above 0
/// or a negative tolerance.
pub fn drive_settling(
    drive: &[f64],
    rate_hz: f64,
    tolerance: f64,
) -> Result<Settling, BringupError> {
    check_list("LED drive values", drive, 2)?;
    check_value("drive rate", rate_hz, rate_hz > 0.0, "above 0 Hz")?;
    check_value("drive tolerance", tolerance, tolerance >= 0.0, "0 or more")?;
    let last = drive.len() - 1;
    // The index of the last value that differs from the one before it.
    let changed_at = (1..=last)
        .rev()
        .find(|&i| (drive[i] - drive[i - 1]).abs() > tolerance)
        .unwrap_or(0);
    let since_change_s = (last - changed_at) as f64 / rate_hz;
    let settled = since_change_s >= SETTLED_AFTER_S;
    let check = if settled {
        let message = format!("LED drive steady for {since_change_s:.1} s: settled");
        Check::new(Some(since_change_s), Verdict::Clear, message)
    } else {
        let message = format!("LED drive changed {since_change_s:.1} s ago: still adjusting");
        Check::new(Some(since_change_s), Verdict::Borderline, message)
    };
    Ok(Settling {
        since_change_s,
        settled,
        check,
    })
}
