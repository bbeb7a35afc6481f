//! The base time and date fields of a record line (header(5)).

use super::field_error::{malformed, FieldError};
use super::{BaseDate, BaseTime};

/// `HH:MM:SS`, `MM:SS` or `SS`, seconds with an optional fraction.
pub(super) fn parse_time(text: &str) -> Result<BaseTime, FieldError> {
    let bad = || malformed("base time", text);
    let parts: Vec<&str> = text.split(':').collect();
    if parts.len() > 3 {
        return Err(bad());
    }
    let int = |s: &str, max: u32| -> Result<u32, FieldError> {
        if s.is_empty() || s.len() > 2 || !s.bytes().all(|b| b.is_ascii_digit()) {
            return Err(bad());
        }
        let v: u32 = s.parse().map_err(|_| bad())?;
        if v > max {
            return Err(bad());
        }
        Ok(v)
    };
    let secs_text = parts[parts.len() - 1];
    let (whole, frac) = secs_text.split_once('.').unwrap_or((secs_text, ""));
    let whole = int(whole, 59)?;
    if !frac.bytes().all(|b| b.is_ascii_digit()) || frac.len() > 6 {
        return Err(bad());
    }
    let seconds = if frac.is_empty() {
        whole as f64
    } else {
        format!("{whole}.{frac}").parse().map_err(|_| bad())?
    };
    let minutes = if parts.len() >= 2 {
        int(parts[parts.len() - 2], 59)?
    } else {
        0
    };
    let hours = if parts.len() == 3 {
        int(parts[0], 23)?
    } else {
        0
    };
    Ok(BaseTime {
        hours,
        minutes,
        seconds,
    })
}

/// `DD/MM/YYYY`.
pub(super) fn parse_date(text: &str) -> Result<BaseDate, FieldError> {
    let bad = || malformed("base date", text);
    let parts: Vec<&str> = text.split('/').collect();
    if parts.len() != 3
        || parts
            .iter()
            .any(|p| p.is_empty() || !p.bytes().all(|b| b.is_ascii_digit()))
    {
        return Err(bad());
    }
    let day: u32 = parts[0].parse().map_err(|_| bad())?;
    let month: u32 = parts[1].parse().map_err(|_| bad())?;
    let year: u32 = parts[2].parse().map_err(|_| bad())?;
    if !(1..=31).contains(&day) || !(1..=12).contains(&month) || parts[2].len() > 4 {
        return Err(bad());
    }
    Ok(BaseDate { day, month, year })
}
