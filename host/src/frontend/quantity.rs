//! Component values as people write them, and numbers as a report prints
//! them.
//!
//! A resistance or capacitance is a plain number (`4700`, `2.2e-5`), a
//! number with an SI prefix (`4.7k`, `22u`, `100n`), or the resistor-code
//! form where the prefix stands for the decimal point (`4k7`, `2M2`, `4R7`),
//! optionally followed by its unit (`10kΩ`, `10k ohm`, `22uF`).

use serde::de::{self, Deserializer, Visitor};
use serde::Deserialize;
use std::fmt;

/// What a value measures; decides the unit suffix accepted after it.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Kind {
    /// Ohms: accepts `Ω`, `ohm`, `ohms` after the number.
    Resistance,
    /// Farads: accepts `F` after the number.
    Capacitance,
}

impl Kind {
    fn name(self) -> &'static str {
        match self {
            Kind::Resistance => "resistance",
            Kind::Capacitance => "capacitance",
        }
    }

    fn unit(self) -> &'static str {
        match self {
            Kind::Resistance => "Ω",
            Kind::Capacitance => "F",
        }
    }

    /// The values a real part takes, in its unit: 1 mΩ to 1 TΩ, 1 fF to
    /// 1 F. Beyond them a value is a typo, and products and ratios of
    /// such values overflow or vanish.
    pub fn range(self) -> (f64, f64) {
        match self {
            Kind::Resistance => (1e-3, 1e12),
            Kind::Capacitance => (1e-15, 1.0),
        }
    }

    /// [`Kind::range`] in words.
    fn range_text(self) -> &'static str {
        match self {
            Kind::Resistance => "1 mΩ and 1 TΩ",
            Kind::Capacitance => "1 fF and 1 F",
        }
    }

    /// More examples of how to write one, after the resistor's.
    fn examples(self) -> &'static str {
        match self {
            Kind::Resistance => "",
            Kind::Capacitance => ", 22u or 100n",
        }
    }

    fn strip_unit(self, text: &str) -> &str {
        let suffixes: &[&str] = match self {
            Kind::Resistance => &["ohms", "ohm", "Ω"],
            Kind::Capacitance => &["F"],
        };
        suffixes
            .iter()
            .find_map(|s| text.strip_suffix(s))
            .unwrap_or(text)
            .trim_end()
    }
}

/// The power of ten of an SI prefix letter (`R` is the resistor code's 1).
fn prefix(c: char) -> Option<i32> {
    Some(match c {
        'p' => -12,
        'n' => -9,
        'u' | 'µ' | 'μ' => -6,
        'm' => -3,
        'R' => 0,
        'k' | 'K' => 3,
        'M' => 6,
        'G' => 9,
        _ => return None,
    })
}

/// A resistance or capacitance that does not read; one line.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ValueError {
    /// The text is not a value of this kind.
    #[error("'{text}' is not a {}: write e.g. 4700, 4.7k or 4k7{}", .kind.name(), .kind.examples())]
    NotAValue {
        /// The text as given.
        text: String,
        /// What it should measure.
        kind: Kind,
    },
    /// The value is not a finite number above zero.
    #[error("a {} must be above 0 {}, not {}", .kind.name(), .kind.unit(), plain(*.value))]
    NotPositive {
        /// The value read.
        value: f64,
        /// What it measures.
        kind: Kind,
    },
    /// The value is above zero but no real part has it.
    #[error("a {} must be between {}, not {} {}", .kind.name(), .kind.range_text(), plain(*.value), .kind.unit())]
    OutOfRange {
        /// The value read.
        value: f64,
        /// What it measures.
        kind: Kind,
    },
}

/// Parse a resistance or capacitance, which must be a finite number above
/// zero within [`Kind::range`]; the error says what was wrong.
pub fn parse_value(text: &str, kind: Kind) -> Result<f64, ValueError> {
    let bad = || ValueError::NotAValue {
        text: text.to_owned(),
        kind,
    };
    let body = kind.strip_unit(text.trim());
    let number = match body.char_indices().find(|&(_, c)| prefix(c).is_some()) {
        None => body.parse::<f64>().map_err(|_| bad())?,
        Some((at, letter)) => {
            let (head, tail) = (body[..at].trim_end(), &body[at + letter.len_utf8()..]);
            let exponent = prefix(letter).unwrap_or(0);
            // `4k7`: the letter is the decimal point; `4.7k`: a suffix.
            let digits = if tail.is_empty() {
                head.to_owned()
            } else if tail.chars().all(|c| c.is_ascii_digit()) && !head.contains('.') {
                format!("{head}.{tail}")
            } else {
                return Err(bad());
            };
            if digits.is_empty() || digits.contains(['e', 'E']) {
                return Err(bad());
            }
            // Parsed as `470e-9`, so 470n is the double nearest 470 nF.
            format!("{digits}e{exponent}")
                .parse::<f64>()
                .map_err(|_| bad())?
        }
    };
    check_positive(number, kind)
}

/// A value must be above zero (a resistor of 0 Ω divides by zero, and a
/// negative part does not exist) and within [`Kind::range`].
fn check_positive(value: f64, kind: Kind) -> Result<f64, ValueError> {
    let (least, most) = kind.range();
    if !(value.is_finite() && value > 0.0) {
        Err(ValueError::NotPositive { value, kind })
    } else if !(least..=most).contains(&value) {
        Err(ValueError::OutOfRange { value, kind })
    } else {
        Ok(value)
    }
}

/// Deserialise a value given as a TOML number or string.
struct ValueVisitor(Kind);

impl Visitor<'_> for ValueVisitor {
    type Value = f64;

    fn expecting(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "a {} as a number or a string such as \"4.7k\"",
            self.0.name()
        )
    }

    fn visit_i64<E: de::Error>(self, v: i64) -> Result<f64, E> {
        check_positive(v as f64, self.0).map_err(E::custom)
    }

    fn visit_u64<E: de::Error>(self, v: u64) -> Result<f64, E> {
        check_positive(v as f64, self.0).map_err(E::custom)
    }

    fn visit_f64<E: de::Error>(self, v: f64) -> Result<f64, E> {
        check_positive(v, self.0).map_err(E::custom)
    }

    fn visit_str<E: de::Error>(self, v: &str) -> Result<f64, E> {
        parse_value(v, self.0).map_err(E::custom)
    }
}

/// A resistance in ohms, above zero, read from a number or a string.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Ohms(pub f64);

impl<'de> Deserialize<'de> for Ohms {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        d.deserialize_any(ValueVisitor(Kind::Resistance)).map(Ohms)
    }
}

/// A capacitance in farads, above zero, read from a number or a string.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Farads(pub f64);

impl<'de> Deserialize<'de> for Farads {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        d.deserialize_any(ValueVisitor(Kind::Capacitance))
            .map(Farads)
    }
}

/// `x` with three significant digits, trailing zeros dropped: 7.02, 470,
/// 0.723.
pub fn sig3(x: f64) -> String {
    if x == 0.0 || !x.is_finite() {
        return format!("{}", x + 0.0);
    }
    let magnitude = x.abs().log10().floor() as i32;
    let decimals = (2 - magnitude).max(0) as usize;
    let s = format!("{x:.decimals$}");
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_owned()
    } else {
        s
    }
}

/// `x` as given, in full, but in exponent form when very large or very
/// small: `470`, `0.25`, `1e308`, `1e-320`.
pub fn plain(x: f64) -> String {
    let a = x.abs();
    if a != 0.0 && a.is_finite() && !(1e-4..1e9).contains(&a) {
        format!("{x:e}")
    } else {
        format!("{x}")
    }
}

/// `x` rounded to the three significant digits [`sig3`] prints.
pub fn round3(x: f64) -> f64 {
    sig3(x).parse().unwrap_or(x)
}

/// `x` in `unit` with an SI prefix and three significant digits:
/// `si(4.7e6, "Ω")` is `4.7 MΩ`, `si(0.0211, "A")` is `21.1 mA`.
pub fn si(x: f64, unit: &str) -> String {
    const PREFIXES: [&str; 8] = ["p", "n", "µ", "m", "", "k", "M", "G"];
    if x == 0.0 || !x.is_finite() {
        return format!("{} {unit}", x + 0.0);
    }
    let mut group = ((x.abs().log10() / 3.0).floor() as i32).clamp(-4, 3);
    let mut mantissa = x / 1000f64.powi(group);
    // Rounding to three digits can carry into the next prefix (999.7 → 1000).
    if sig3(mantissa).trim_start_matches('-') == "1000" && group < 3 {
        group += 1;
        mantissa /= 1000.0;
    }
    format!(
        "{} {}{unit}",
        sig3(mantissa),
        PREFIXES[(group + 4) as usize]
    )
}

/// A frequency as heart rate: beats per minute.
pub fn bpm(hz: f64) -> f64 {
    hz * 60.0
}

#[cfg(test)]
mod tests {
    use super::*;

    fn ohms(t: &str) -> f64 {
        parse_value(t, Kind::Resistance).unwrap()
    }

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() <= 1e-12 * b.abs()
    }

    #[test]
    fn prefixes_suffixes_and_resistor_codes() {
        assert!(close(ohms("470"), 470.0));
        assert!(close(ohms("4.7k"), 4700.0));
        assert!(close(ohms("4k7"), 4700.0));
        assert!(close(ohms("2M2"), 2.2e6));
        assert!(close(ohms("4R7"), 4.7));
        assert!(close(ohms("10 kΩ"), 1e4));
        assert!(close(ohms("10k ohm"), 1e4));
        assert!(close(ohms("1e3"), 1e3));
        let c = |t: &str| parse_value(t, Kind::Capacitance).unwrap();
        assert!(close(c("22u"), 22e-6));
        assert!(close(c("22µF"), 22e-6));
        assert!(close(c("100n"), 100e-9));
        assert!(close(c("4p7"), 4.7e-12));
        assert!(close(c("1e-6"), 1e-6));
        // The nearest double, as if written in full.
        assert_eq!(c("470n"), 470e-9);
        assert_eq!(ohms("4k7"), 4.7e3);
    }

    #[test]
    fn nonsense_and_non_positive_values_are_refused() {
        for bad in ["", "k", "4.7k7", "1.2.3", "ten", "4k7k", "1e3k", "22uF"] {
            assert!(parse_value(bad, Kind::Resistance).is_err(), "{bad:?}");
        }
        assert!(parse_value("10kΩ", Kind::Capacitance).is_err());
        let e = parse_value("-470", Kind::Resistance).unwrap_err();
        assert_eq!(e.to_string(), "a resistance must be above 0 Ω, not -470");
        let e = parse_value("22uF", Kind::Resistance).unwrap_err();
        assert_eq!(
            e.to_string(),
            "'22uF' is not a resistance: write e.g. 4700, 4.7k or 4k7"
        );
        let e = parse_value("ten", Kind::Capacitance).unwrap_err();
        assert_eq!(
            e.to_string(),
            "'ten' is not a capacitance: write e.g. 4700, 4.7k or 4k7, 22u or 100n"
        );
        assert!(parse_value("0", Kind::Capacitance).is_err());
        // Above zero but no real part: refused, naming the range.
        let e = parse_value("1e-320", Kind::Resistance).unwrap_err();
        assert_eq!(
            e.to_string(),
            "a resistance must be between 1 mΩ and 1 TΩ, not 1e-320 Ω"
        );
        assert!(parse_value("1e308", Kind::Resistance).is_err());
        assert!(parse_value("2", Kind::Capacitance).is_err());
        assert!(parse_value("1p", Kind::Capacitance).is_ok());
        assert!(parse_value("inf", Kind::Resistance).is_err());
    }

    #[test]
    fn numbers_print_with_three_significant_digits() {
        assert_eq!(sig3(7.021_276), "7.02");
        assert_eq!(sig3(21.063_83), "21.1");
        assert_eq!(sig3(470.0), "470");
        assert_eq!(sig3(0.723_43), "0.723");
        assert_eq!(sig3(-3.0103), "-3.01");
        assert_eq!(sig3(4.7), "4.7");
        assert_eq!(sig3(0.0), "0");
        assert_eq!(si(4.7e6, "Ω"), "4.7 MΩ");
        assert_eq!(si(0.021_063_8, "A"), "21.1 mA");
        assert_eq!(si(-1e4, "V/A"), "-10 kV/A");
        assert_eq!(si(22e-6, "F"), "22 µF");
        assert_eq!(si(999.7, "Ω"), "1 kΩ");
        assert_eq!(si(0.0, "V"), "0 V");
    }

    #[test]
    fn heart_rate_of_a_frequency() {
        // 1.171 Hz × 60 s/min = 70.26 bpm (common practice).
        assert_eq!(format!("{:.1}", bpm(1.171)), "70.3");
    }
}
