//! The fields of header lines, one parser each (header(5)).

use super::field_error::{malformed, FieldError};
use super::{limits, time};
use super::{Header, SegmentSpec, SignalSpec, DEFAULT_FS, DEFAULT_GAIN, DEFAULT_UNITS};
use crate::error::ErrorKind;
use crate::wfdb_format::{FormatProblem, SignalFormat};

/// A signal line's problem: bad text, or a format code we cannot use.
pub(super) enum LineError {
    Syntax(FieldError),
    Format(ErrorKind),
}

impl From<FieldError> for LineError {
    fn from(e: FieldError) -> LineError {
        LineError::Syntax(e)
    }
}

/// Parse `text` as a number of type `T`, naming `field` on failure.
fn number<T: std::str::FromStr>(text: &str, field: &'static str) -> Result<T, FieldError> {
    text.parse::<T>().map_err(|_| malformed(field, text))
}

/// A number of frames, at most [`limits::MAX_FRAMES`].
fn frames(text: &str, field: &'static str) -> Result<u64, FieldError> {
    let n = number::<u64>(text, field)?;
    limits::at_most(n, limits::MAX_FRAMES, field, "at most 1e15 frames")
}

/// A finite positive frequency.
fn frequency(text: &str, field: &'static str) -> Result<f64, FieldError> {
    let v: f64 = number(text, field)?;
    if !(v.is_finite() && v > 0.0) {
        return Err(FieldError::NotAboveZero {
            field,
            text: text.to_owned(),
        });
    }
    limits::frequency(v, field, text)?;
    Ok(v)
}

/// The record line: `name[/segments] signals [fs[/counter[(base)]] [samples [time [date]]]]`.
/// Also returns the number of signals the line states.
pub(super) fn parse_record_line(line: &str) -> Result<(Header, usize), FieldError> {
    let fields: Vec<&str> = line.split_whitespace().collect();
    if fields.len() < 2 {
        return Err(FieldError::RecordLineTooShort);
    }
    if fields.len() > 6 {
        return Err(FieldError::RecordLineTooLong(fields.len()));
    }
    let (name, segments) = match fields[0].split_once('/') {
        Some((name, n)) => (name, Some(number::<usize>(n, "number of segments")?)),
        None => (fields[0], None),
    };
    if name.is_empty()
        || !name
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || c == '_' || c == '-')
    {
        return Err(malformed("record name", name));
    }
    let n_sig: usize = number(fields[1], "number of signals")?;
    // Guard the allocation against absurd counts in damaged files.
    if n_sig > 100_000 {
        return Err(FieldError::TooManySignals(n_sig));
    }
    let mut fs = DEFAULT_FS;
    let mut counter_freq = None;
    let mut base_counter = None;
    if let Some(&f) = fields.get(2) {
        let (fs_text, rest) = match f.split_once('/') {
            Some((a, b)) => (a, Some(b)),
            None => (f, None),
        };
        fs = frequency(fs_text, "sampling frequency")?;
        if let Some(rest) = rest {
            let (cf_text, base) = match rest.split_once('(') {
                Some((a, b)) => {
                    let b = b
                        .strip_suffix(')')
                        .ok_or_else(|| FieldError::BaseCounterUnclosed(b.to_owned()))?;
                    (a, Some(b))
                }
                None => (rest, None),
            };
            counter_freq = Some(frequency(cf_text, "counter frequency")?);
            base_counter = match base {
                Some(b) => Some(number::<f64>(b, "base counter value")?)
                    .filter(|v| v.is_finite())
                    .ok_or_else(|| malformed("base counter value", b))
                    .map(Some)?,
                None => None,
            };
        }
    }
    let samples = match fields.get(3) {
        Some(s) => Some(frames(s, "number of samples")?).filter(|&n| n > 0),
        None => None,
    };
    let base_time = fields.get(4).map(|t| time::parse_time(t)).transpose()?;
    let base_date = fields.get(5).map(|d| time::parse_date(d)).transpose()?;
    let header = Header {
        record_name: name.to_string(),
        segments,
        n_signals: n_sig,
        fs,
        counter_freq,
        base_counter,
        samples,
        base_time,
        base_date,
        signals: Vec::new(),
        segment_specs: Vec::new(),
        comments: Vec::new(),
    };
    Ok((header, n_sig))
}

/// A segment line: `name samples`.
pub(super) fn parse_segment_line(line: &str) -> Result<SegmentSpec, FieldError> {
    let fields: Vec<&str> = line.split_whitespace().collect();
    if fields.len() != 2 {
        return Err(FieldError::SegmentLine);
    }
    Ok(SegmentSpec {
        name: fields[0].to_string(),
        samples: frames(fields[1], "segment length")?,
    })
}

/// Split off the first whitespace-separated field of `text`.
fn next_field(text: &str) -> Option<(&str, &str)> {
    let text = text.trim_start();
    if text.is_empty() {
        return None;
    }
    let end = text.find(char::is_whitespace).unwrap_or(text.len());
    Some((&text[..end], &text[end..]))
}

/// A signal line: `file format[xspf][:skew][+offset] [gain[(baseline)][/units]
/// [resolution [zero [initial [checksum [blocksize [description]]]]]]]`.
pub(super) fn parse_signal_line(line: &str) -> Result<SignalSpec, LineError> {
    let (file_name, rest) = next_field(line).ok_or(FieldError::EmptySignalLine)?;
    let (format_text, mut rest) = next_field(rest).ok_or(FieldError::NoFormat)?;
    let (format, samples_per_frame, skew, byte_offset) = parse_format_field(format_text)?;

    // The numeric fields that follow are each optional, but only from the
    // right: take them in order while they are there.
    let mut take = || -> Option<&str> {
        let (field, after) = next_field(rest)?;
        rest = after;
        Some(field)
    };
    let gain_field = take();
    let GainField {
        gain: adc_gain,
        baseline,
        units,
    } = match gain_field {
        Some(g) => parse_gain_field(g)?,
        None => GainField {
            gain: DEFAULT_GAIN,
            baseline: None,
            units: None,
        },
    };
    let adc_resolution = match take() {
        Some(t) => number::<u32>(t, "ADC resolution")?,
        None => format.default_resolution(),
    };
    limits::at_most(
        adc_resolution.into(),
        limits::MAX_RESOLUTION_BITS.into(),
        "ADC resolution",
        "at most 32 bits",
    )?;
    let adc_zero = match take() {
        Some(t) => number::<i32>(t, "ADC zero")?,
        None => 0,
    };
    let initial_value = match take() {
        Some(t) => number::<i32>(t, "initial value")?,
        None => adc_zero,
    };
    let checksum = take().map(|t| number::<i32>(t, "checksum")).transpose()?;
    let block_size = match take() {
        Some(t) => number::<u32>(t, "block size")?,
        None => 0,
    };
    let description = Some(rest.trim())
        .filter(|d| !d.is_empty())
        .map(str::to_string);
    Ok(SignalSpec {
        file_name: file_name.to_string(),
        format,
        samples_per_frame,
        skew,
        byte_offset,
        adc_gain,
        baseline: baseline.unwrap_or(adc_zero),
        units: units.unwrap_or_else(|| DEFAULT_UNITS.to_string()),
        adc_resolution,
        adc_zero,
        initial_value,
        checksum,
        block_size,
        description,
    })
}

/// `format[xspf][:skew][+offset]`, the modifiers in that order.
fn parse_format_field(text: &str) -> Result<(SignalFormat, u32, u32, u64), LineError> {
    let (rest, offset) = match text.split_once('+') {
        Some((a, b)) => (a, Some(b)),
        None => (text, None),
    };
    let (rest, skew) = match rest.split_once(':') {
        Some((a, b)) => (a, Some(b)),
        None => (rest, None),
    };
    let (code_text, spf) = match rest.split_once('x') {
        Some((a, b)) => (a, Some(b)),
        None => (rest, None),
    };
    if code_text.is_empty() || !code_text.bytes().all(|b| b.is_ascii_digit()) {
        return Err(malformed("signal format", text).into());
    }
    let code: u32 = match code_text.parse() {
        Ok(c) => c,
        Err(_) => {
            return Err(LineError::Format(ErrorKind::UnknownFormat(
                code_text.into(),
            )))
        }
    };
    let format = match SignalFormat::from_code(code) {
        Ok(f) => f,
        Err(FormatProblem::Unknown) => {
            return Err(LineError::Format(ErrorKind::UnknownFormat(
                code.to_string(),
            )))
        }
        Err(FormatProblem::Unsupported(what)) => {
            return Err(LineError::Format(ErrorKind::Unsupported(what.into())))
        }
    };
    // 0 samples per frame means 1, as in the WFDB library.
    let spf = match spf {
        Some(s) => number::<u32>(s, "samples per frame")?.max(1),
        None => 1,
    };
    if spf > 1_000_000 {
        return Err(FieldError::TooManySamplesPerFrame(spf).into());
    }
    let skew = skew
        .map(|s| number::<u32>(s, "skew"))
        .transpose()?
        .unwrap_or(0);
    let offset = offset
        .map(|s| number::<u64>(s, "byte offset"))
        .transpose()?
        .unwrap_or(0);
    Ok((format, spf, skew, offset))
}

/// The parts of a `gain[(baseline)][/units]` field.
struct GainField {
    gain: f64,
    baseline: Option<i32>,
    units: Option<String>,
}

/// `gain[(baseline)][/units]`; a gain of 0 means [`DEFAULT_GAIN`].
fn parse_gain_field(text: &str) -> Result<GainField, FieldError> {
    let (left, units) = match text.split_once('/') {
        Some((a, u)) => (a, Some(u.to_string())),
        None => (text, None),
    };
    let (gain_text, baseline) = match left.split_once('(') {
        Some((g, b)) => {
            let b = b
                .strip_suffix(')')
                .ok_or_else(|| FieldError::BaselineUnclosed(text.to_owned()))?;
            (g, Some(number::<i32>(b, "baseline")?))
        }
        None => (left, None),
    };
    let gain: f64 = number(gain_text, "ADC gain")?;
    if !gain.is_finite() {
        return Err(malformed("ADC gain", gain_text));
    }
    let gain = if gain == 0.0 { DEFAULT_GAIN } else { gain };
    limits::gain(gain, gain_text)?;
    Ok(GainField {
        gain,
        baseline,
        units,
    })
}
