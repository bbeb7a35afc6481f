//! The command line's value parsers: numbers, positive numbers, frequency
//! bands and rails, shared by the subcommands. Each returns the one-line
//! message clap prints after the option's name.

/// `text` as a finite number, or `None`.
fn finite_number(text: &str) -> Option<f64> {
    text.parse::<f64>().ok().filter(|v| v.is_finite())
}

/// `LOW:HIGH` split at its colon; `missing` is the message without one.
fn low_high(text: &str, missing: impl FnOnce() -> String) -> Result<(&str, &str), String> {
    text.split_once(':').ok_or_else(missing)
}

/// A frequency in hertz (a finite number; its range is checked where it
/// is used).
pub(crate) fn hz(text: &str) -> Result<f64, String> {
    finite_number(text.trim())
        .ok_or_else(|| "expected a number of hertz, such as 250 or 0.5".to_owned())
}

/// A whole number from `low` to `high` (blanks around it allowed).
pub(crate) fn whole_in<T: Whole>(
    low: T,
    high: T,
) -> impl Fn(&str) -> Result<T, String> + Clone + Send + Sync + 'static {
    move |text| {
        whole(
            text,
            low,
            Some(high),
            format!("a whole number from {low} to {high}"),
        )
    }
}

/// A whole number of `low` or more (blanks around it allowed).
pub(crate) fn whole_from<T: Whole>(
    low: T,
) -> impl Fn(&str) -> Result<T, String> + Clone + Send + Sync + 'static {
    move |text| whole(text, low, None, format!("a whole number, {low} or more"))
}

/// What [`whole_in`] and [`whole_from`] parse.
pub(crate) trait Whole:
    Copy + PartialOrd + std::fmt::Display + std::str::FromStr + Send + Sync + 'static
{
}
impl Whole for u32 {}
impl Whole for u64 {}

fn whole<T: Whole>(text: &str, low: T, high: Option<T>, expected: String) -> Result<T, String> {
    let v: T = text
        .trim()
        .parse()
        .map_err(|_| format!("expected {expected}"))?;
    if v < low || high.is_some_and(|h| v > h) {
        return Err(format!("expected {expected}, not {v}"));
    }
    Ok(v)
}

/// A band `LOW:HIGH` in hertz.
pub(crate) fn band_hz(text: &str) -> Result<(f64, f64), String> {
    let (low, high) = low_high(text, || {
        "expected LOW:HIGH in hertz, such as 0.5:8".to_owned()
    })?;
    Ok((hz(low)?, hz(high)?))
}

/// A finite number (blanks around it allowed).
pub(crate) fn number(text: &str) -> Result<f64, String> {
    finite_number(text.trim()).ok_or_else(|| "expected a number, such as 5 or 1.7".to_owned())
}

/// A finite number of 0 or more (blanks around it allowed).
pub(crate) fn non_negative(text: &str) -> Result<f64, String> {
    let v = number(text)?;
    if v >= 0.0 {
        Ok(v)
    } else {
        Err(format!("expected a number of 0 or more, not {v}"))
    }
}

/// A number above 0, written exactly (no blanks).
pub(crate) fn positive_exact(text: &str) -> Result<f64, String> {
    finite_number(text)
        .filter(|v| *v > 0.0)
        .ok_or_else(|| "expected a number above 0".into())
}

/// A number of seconds above 0, written exactly (no blanks).
pub(crate) fn positive_seconds(text: &str) -> Result<f64, String> {
    finite_number(text)
        .filter(|v| *v > 0.0)
        .ok_or_else(|| format!("'{text}' is not a positive number of seconds"))
}

/// Supply rails `LOW:HIGH` in volts, low below high.
pub(crate) fn rails_v(text: &str) -> Result<(f64, f64), String> {
    let (low, high) = low_high(text, || {
        "expected LOW:HIGH in volts, such as 0:3.3".to_owned()
    })?;
    let (low, high) = (number(low)?, number(high)?);
    if low < high {
        Ok((low, high))
    } else {
        Err(format!(
            "the low rail ({low} V) must be below the high one ({high} V)"
        ))
    }
}

/// A signal's rails `LOW:HIGH` in its own units, low below high.
pub(crate) fn signal_rails(text: &str) -> Result<(f32, f32), String> {
    let (a, b) = low_high(text, || format!("'{text}' is not LOW:HIGH"))?;
    let low: f32 = a
        .trim()
        .parse()
        .map_err(|_| format!("'{a}' is not a number"))?;
    let high: f32 = b
        .trim()
        .parse()
        .map_err(|_| format!("'{b}' is not a number"))?;
    if !(low.is_finite() && high.is_finite() && low < high) {
        return Err(format!(
            "rails '{text}' must be two numbers, low below high"
        ));
    }
    Ok((low, high))
}

/// An emulated core by its name (`m4f`, `m0`).
pub(crate) fn core(text: &str) -> Result<plethwire::emulate::Core, String> {
    plethwire::emulate::Core::from_name(text.trim()).ok_or_else(|| {
        let names: Vec<&str> = plethwire::emulate::Core::ALL
            .iter()
            .map(|c| c.name())
            .collect();
        format!("expected one of {}", names.join(", "))
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rails_must_be_ordered() {
        assert_eq!(rails_v("0:3.3"), Ok((0.0, 3.3)));
        assert_eq!(rails_v("-2.5:2.5"), Ok((-2.5, 2.5)));
        assert!(rails_v("3.3:0").is_err());
        assert!(rails_v("3.3").is_err());
        assert_eq!(signal_rails("0:4095"), Ok((0.0, 4095.0)));
        assert_eq!(
            signal_rails("5:1").unwrap_err(),
            "rails '5:1' must be two numbers, low below high"
        );
    }

    #[test]
    fn positive_numbers_refuse_zero_and_text() {
        assert_eq!(number(" 2.5 "), Ok(2.5));
        assert_eq!(
            positive_exact("x").unwrap_err(),
            "expected a number above 0"
        );
        assert!(positive_exact(" 2").is_err());
        assert_eq!(
            positive_seconds("-1").unwrap_err(),
            "'-1' is not a positive number of seconds"
        );
        assert_eq!(band_hz("0.5:8"), Ok((0.5, 8.0)));
        assert!(hz("1e400").is_err() && hz("nan").is_err());
        let bits = whole_in(1u32, 32);
        assert_eq!(bits(" 12 "), Ok(12));
        assert_eq!(
            bits("x").unwrap_err(),
            "expected a whole number from 1 to 32"
        );
        assert_eq!(
            bits("40").unwrap_err(),
            "expected a whole number from 1 to 32, not 40"
        );
        assert!(bits("-1").is_err());
        assert_eq!(
            whole_from(1u64)("0").unwrap_err(),
            "expected a whole number, 1 or more, not 0"
        );
        assert!(band_hz("8").is_err());
    }
}
