//! Parser for the emulated firmware's self-check report.
//!
//! The firmware prints numbers as IEEE-754 bit patterns, never as decimal
//! text, so the comparison with the host is exact and no formatting or
//! rounding on either side can hide (or invent) a difference. The format:
//!
//! ```text
//! plethwire-emulated selfcheck v2
//! section <i> <b0> <b1> <b2> <a1> <a2>      (f64 bits, 16 hex digits each)
//! sample <n> <x> <delta y> <df2t y>          (f32 bits, 8 hex digits each)
//! band <i> <13 numbers>                      (f32 bits: the band designed on the device)
//! built <i> <13 numbers>                     (f32 bits: the same band from build.rs)
//! end
//! ```
//!
//! A band's 13 numbers are [`BandBits`]'s. The parser is strict: indices
//! must count up from 0, all sections come before all samples, all samples
//! before the first band, each `built` right after the `band` of its
//! index, and `end` must be the last line. A report cut short
//! by a crash therefore fails to parse instead of comparing fewer numbers.

/// First line of a version-2 report.
pub const HEADER: &str = "plethwire-emulated selfcheck v2";

/// One designed second-order section, as printed by the firmware.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct SectionBits {
    /// Bits of `b0, b1, b2, a1, a2` (see [`f64::to_bits`]).
    pub coefficients: [u64; 5],
}

impl SectionBits {
    /// The coefficients `b0, b1, b2, a1, a2` as numbers.
    pub fn values(&self) -> [f64; 5] {
        self.coefficients.map(f64::from_bits)
    }
}

/// One input sample and both filter structures' outputs for it.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct SampleBits {
    /// Bits of the input `x` (see [`f32::to_bits`]).
    pub x: u32,
    /// Bits of the `Delta` cascade's output.
    pub delta: u32,
    /// Bits of the `Df2t` cascade's output.
    pub df2t: u32,
}

/// The pipeline's band (`plethwire_dsp::pipeline::BandSections`) as bits
/// of its `f32` numbers: the rate and the band's edges it is designed for,
/// then the low-pass's `c0, c1, c2, g1, g2` and the high-pass's.
pub type BandBits = [u32; 13];

/// A complete, well-formed self-check report.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct SelfCheck {
    /// Designed sections in cascade order.
    pub sections: Vec<SectionBits>,
    /// Samples in time order.
    pub samples: Vec<SampleBits>,
    /// The band designed on the device, one per rate.
    pub bands: Vec<BandBits>,
    /// The band designed by the build script for the same rates.
    pub built: Vec<BandBits>,
}

/// Why a self-check report does not parse; one line.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
pub enum SelfCheckError {
    /// The report is empty.
    #[error("empty report")]
    Empty,
    /// The first line is not [`HEADER`].
    #[error("line 1: expected {HEADER:?}, got {0:?}")]
    Header(String),
    /// A line is wrong.
    #[error("line {number}: {problem} in {text:?}")]
    Line {
        /// Its number, from 1.
        number: usize,
        /// The line.
        text: String,
        /// What is wrong with it.
        #[source]
        problem: LineProblem,
    },
    /// The report stops before its `end` line.
    #[error("report has no `end` line (firmware stopped early?)")]
    NoEnd,
}

/// What is wrong with one line of a report.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
pub enum LineProblem {
    /// Anything after `end`.
    #[error("text after `end`")]
    AfterEnd,
    /// A section after a sample.
    #[error("section after the first sample")]
    SectionAfterSample,
    /// A section or a sample after a band.
    #[error("section or sample after the first band")]
    AfterBand,
    /// A `built` record not right after the `band` of its index, or a
    /// `band` without its `built`.
    #[error("band and built records not in pairs")]
    UnpairedBand,
    /// A record type the format does not have.
    #[error("unknown record")]
    UnknownRecord,
    /// No index field.
    #[error("missing index")]
    MissingIndex,
    /// An index that does not count up from 0.
    #[error("index {field:?} where {expected} was due")]
    WrongIndex {
        /// The field as printed.
        field: String,
        /// The index due.
        expected: usize,
    },
    /// A value field is missing.
    #[error("missing value")]
    MissingValue,
    /// A value is not the right number of lowercase hex digits.
    #[error("{field:?} is not {digits} lowercase hex digits")]
    NotHex {
        /// The field as printed.
        field: String,
        /// The digits due.
        digits: usize,
    },
    /// A field after the last one.
    #[error("unexpected extra field {0:?}")]
    ExtraField(String),
}

/// Parse a report; the error names the offending line (1-based) and why.
pub fn parse(text: &str) -> Result<SelfCheck, SelfCheckError> {
    let mut lines = text.lines().enumerate().map(|(i, l)| (i + 1, l.trim_end()));
    match lines.next() {
        Some((_, HEADER)) => {}
        Some((_, other)) => return Err(SelfCheckError::Header(other.to_owned())),
        None => return Err(SelfCheckError::Empty),
    }
    let mut report = SelfCheck::default();
    let mut ended = false;
    for (number, line) in lines {
        let at = |problem: LineProblem| SelfCheckError::Line {
            number,
            text: line.to_owned(),
            problem,
        };
        if ended {
            return Err(at(LineProblem::AfterEnd));
        }
        let mut fields = line.split(' ');
        match fields.next() {
            Some("section" | "sample") if !report.bands.is_empty() => {
                return Err(at(LineProblem::AfterBand));
            }
            Some("section") => {
                if !report.samples.is_empty() {
                    return Err(at(LineProblem::SectionAfterSample));
                }
                expect_index(fields.next(), report.sections.len()).map_err(at)?;
                let mut coefficients = [0u64; 5];
                for c in &mut coefficients {
                    *c = hex_field(fields.next(), 16).map_err(at)?;
                }
                no_more(fields).map_err(at)?;
                report.sections.push(SectionBits { coefficients });
            }
            Some("sample") => {
                expect_index(fields.next(), report.samples.len()).map_err(at)?;
                let mut bits = [0u32; 3];
                for b in &mut bits {
                    // 8 hex digits always fit in u32.
                    *b = hex_field(fields.next(), 8).map_err(at)? as u32;
                }
                no_more(fields).map_err(at)?;
                let [x, delta, df2t] = bits;
                report.samples.push(SampleBits { x, delta, df2t });
            }
            Some(record @ ("band" | "built")) => {
                let band = record == "band";
                if band != (report.built.len() == report.bands.len()) {
                    return Err(at(LineProblem::UnpairedBand));
                }
                let list = if band {
                    &mut report.bands
                } else {
                    &mut report.built
                };
                expect_index(fields.next(), list.len()).map_err(at)?;
                let mut bits = [0u32; 13];
                for b in &mut bits {
                    // 8 hex digits always fit in u32.
                    *b = hex_field(fields.next(), 8).map_err(at)? as u32;
                }
                no_more(fields).map_err(at)?;
                list.push(bits);
            }
            Some("end") => {
                no_more(fields).map_err(at)?;
                if report.built.len() != report.bands.len() {
                    return Err(at(LineProblem::UnpairedBand));
                }
                ended = true;
            }
            _ => return Err(at(LineProblem::UnknownRecord)),
        }
    }
    if !ended {
        return Err(SelfCheckError::NoEnd);
    }
    Ok(report)
}

/// Check that an index field is the decimal number `expected`.
fn expect_index(field: Option<&str>, expected: usize) -> Result<(), LineProblem> {
    let field = field.ok_or(LineProblem::MissingIndex)?;
    match field.parse::<usize>() {
        Ok(i) if i == expected => Ok(()),
        _ => Err(LineProblem::WrongIndex {
            field: field.to_owned(),
            expected,
        }),
    }
}

/// Parse exactly `digits` lowercase hex digits (at most 16).
fn hex_field(field: Option<&str>, digits: usize) -> Result<u64, LineProblem> {
    let field = field.ok_or(LineProblem::MissingValue)?;
    let not_hex = || LineProblem::NotHex {
        field: field.to_owned(),
        digits,
    };
    let well_formed = field.len() == digits
        && field
            .bytes()
            .all(|b| b.is_ascii_digit() || (b'a'..=b'f').contains(&b));
    if !well_formed {
        return Err(not_hex());
    }
    // At most 16 checked hex digits always fit in u64.
    u64::from_str_radix(field, 16).map_err(|_| not_hex())
}

/// Reject trailing fields.
fn no_more<'a>(mut fields: impl Iterator<Item = &'a str>) -> Result<(), LineProblem> {
    match fields.next() {
        None => Ok(()),
        Some(extra) => Err(LineProblem::ExtraField(extra.to_owned())),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const GOOD: &str = "plethwire-emulated selfcheck v2\n\
        section 0 3ff0000000000000 0000000000000000 bff0000000000000 c000000000000000 3fe0000000000000\n\
        sample 0 3f000000 3f800000 bf800000\n\
        sample 1 00000001 80000000 7fc00000\n\
        end\n";

    #[test]
    fn parses_a_well_formed_report() {
        let r = parse(GOOD).unwrap();
        assert_eq!(r.sections.len(), 1);
        assert_eq!(r.sections[0].values(), [1.0, 0.0, -1.0, -2.0, 0.5]);
        assert_eq!(
            r.samples,
            vec![
                SampleBits {
                    x: 0x3f00_0000,
                    delta: 0x3f80_0000,
                    df2t: 0xbf80_0000
                },
                SampleBits {
                    x: 1,
                    delta: 0x8000_0000,
                    df2t: 0x7fc0_0000
                },
            ]
        );
    }

    #[test]
    fn rejects_a_truncated_report() {
        let cut = GOOD.replace("end\n", "");
        assert!(parse(&cut).unwrap_err().to_string().contains("no `end`"));
    }

    #[test]
    fn rejects_a_wrong_header() {
        let other = GOOD.replace("v2", "v1");
        assert!(parse(&other).unwrap_err().to_string().starts_with("line 1"));
        assert!(parse("").is_err());
    }

    #[test]
    fn rejects_skipped_or_repeated_indices() {
        let skipped = GOOD.replace("sample 1 ", "sample 2 ");
        assert!(parse(&skipped).unwrap_err().to_string().contains("line 4"));
        let repeated = GOOD.replace("sample 1 ", "sample 0 ");
        assert!(parse(&repeated).is_err());
    }

    #[test]
    fn rejects_malformed_numbers() {
        // Upper case, short, and too many fields are all format drift.
        for bad in [
            GOOD.replace("3f000000", "3F000000"),
            GOOD.replace("3f000000", "3f00000"),
            GOOD.replace("bf800000\n", "bf800000 00000000\n"),
            GOOD.replace("section 0 3ff0000000000000", "section 0 3ff00000"),
        ] {
            assert!(parse(&bad).is_err(), "accepted:\n{bad}");
        }
    }

    const BAND: &str = "437a0000 3f000000 41000000 3c109b4a 3cd8e8f0 3d109b4a 3d109b4a \
        3e7d6c66 3f770f8c bf770f8c 00000000 3b1fdea8 3d8c87c3";

    #[test]
    fn parses_bands_and_their_built_twins_in_order() {
        let text = GOOD.replace(
            "end\n",
            &format!("band 0 {BAND}\nbuilt 0 {BAND}\nband 1 {BAND}\nbuilt 1 {BAND}\nend\n"),
        );
        let r = parse(&text).unwrap();
        assert_eq!((r.bands.len(), r.built.len()), (2, 2));
        assert_eq!(r.bands[1][0], 0x437a_0000);
        assert_eq!(r.built[0][12], 0x3d8c_87c3);
        for bad in [
            // A built record before its band, a band without its built
            // twin, a sample after the bands, a short band.
            format!("built 0 {BAND}\nend\n"),
            format!("band 0 {BAND}\nband 1 {BAND}\nend\n"),
            format!("band 0 {BAND}\nend\n"),
            format!("band 0 {BAND}\nbuilt 0 {BAND}\nsample 2 00000000 00000000 00000000\nend\n"),
            "band 0 437a0000 3f000000\nend\n".to_string(),
        ] {
            let text = GOOD.replace("end\n", &bad);
            assert!(parse(&text).is_err(), "accepted:\n{text}");
        }
    }

    #[test]
    fn rejects_misordered_or_trailing_records() {
        let late_section = GOOD.replace(
            "end\n",
            "section 1 0000000000000000 0000000000000000 0000000000000000 0000000000000000 0000000000000000\nend\n",
        );
        assert!(parse(&late_section)
            .unwrap_err()
            .to_string()
            .contains("after the first sample"));
        let trailing = format!("{GOOD}sample 2 00000000 00000000 00000000\n");
        assert!(parse(&trailing)
            .unwrap_err()
            .to_string()
            .contains("after `end`"));
        let noise = GOOD.replace("end\n", "hello\nend\n");
        assert_eq!(
            parse(&noise).unwrap_err().to_string(),
            "line 5: unknown record in \"hello\""
        );
    }
}
