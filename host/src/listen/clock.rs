//! Wall-clock times as text (UTC), for the summary and default record
//! names; no time-zone database needed.

use std::time::{SystemTime, UNIX_EPOCH};

/// Year, month, day and seconds into the day of `t`, UTC (times before
/// 1970 count as 1970-01-01).
fn parts(t: SystemTime) -> (i64, u32, u32, u64, u32) {
    let since = t.duration_since(UNIX_EPOCH).unwrap_or_default();
    let secs = since.as_secs();
    let (y, m, d) = civil_from_days((secs / 86_400) as i64);
    (y, m, d, secs % 86_400, since.subsec_millis())
}

/// Gregorian date of day `z` after 1970-01-01, by H. Hinnant's
/// `civil_from_days` ("chrono-Compatible Low-Level Date Algorithms").
fn civil_from_days(z: i64) -> (i64, u32, u32) {
    let z = z + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z.rem_euclid(146_097);
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = (doy - (153 * mp + 2) / 5 + 1) as u32;
    let m = if mp < 10 { mp + 3 } else { mp - 9 } as u32;
    let y = yoe + era * 400 + i64::from(m <= 2);
    (y, m, d)
}

/// `t` as ISO 8601 UTC with milliseconds, e.g. `2026-03-15T14:22:33.120Z`.
pub fn utc_text(t: SystemTime) -> String {
    let (y, m, d, s, ms) = parts(t);
    format!(
        "{y:04}-{m:02}-{d:02}T{:02}:{:02}:{:02}.{ms:03}Z",
        s / 3600,
        s / 60 % 60,
        s % 60
    )
}

/// Default record name for a session started at `t`:
/// `session_YYYYMMDD_HHMMSS` (UTC), letters, digits and underscores only
/// as WFDB record names must be.
pub fn record_name(t: SystemTime) -> String {
    let (y, m, d, s, _) = parts(t);
    format!(
        "session_{y:04}{m:02}{d:02}_{:02}{:02}{:02}",
        s / 3600,
        s / 60 % 60,
        s % 60
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::time::Duration;

    fn at(secs: u64, ms: u64) -> SystemTime {
        UNIX_EPOCH + Duration::from_secs(secs) + Duration::from_millis(ms)
    }

    #[test]
    fn known_dates() {
        // `date -u -d @...` (GNU coreutils) for each value.
        assert_eq!(utc_text(at(0, 0)), "1970-01-01T00:00:00.000Z");
        assert_eq!(utc_text(at(951_782_400, 5)), "2000-02-29T00:00:00.005Z");
        assert_eq!(utc_text(at(1_709_251_199, 999)), "2024-02-29T23:59:59.999Z");
        assert_eq!(utc_text(at(4_102_444_800, 0)), "2100-01-01T00:00:00.000Z");
        assert_eq!(
            record_name(at(1_773_584_553, 700)),
            "session_20260315_142233"
        );
    }
}
