//! WFDB header files (`NAME.hea`): parsing and writing.
//!
//! Source: PhysioNet WFDB header file format specification, header(5) of
//! the WFDB Applications Guide. A header is a record line, then one signal
//! line per signal (or one segment line per segment of a multi-segment
//! record); `#` starts a comment line anywhere. Fields left out take the
//! defaults that specification gives, listed on each field below.

use std::fmt::Write as _;
use std::path::Path;

use super::error::{Error, ErrorKind, Result};
use super::input::read_all;
use super::wfdb_format::SignalFormat;

mod field_error;
mod fields;
mod limits;
mod time;
use fields::{parse_record_line, parse_segment_line, parse_signal_line, LineError};

/// Sampling frequency assumed when the record line gives none (header(5)).
pub const DEFAULT_FS: f64 = 250.0;
/// ADC gain (units per physical unit) assumed when missing or zero (header(5)).
pub const DEFAULT_GAIN: f64 = 200.0;
/// Physical units assumed when a signal line gives none (header(5)).
pub const DEFAULT_UNITS: &str = "mV";

/// Largest header file read: room for the 100 000 signal lines a header
/// may have, and long comments.
pub const MAX_HEADER_BYTES: u64 = 16 << 20;

/// A parsed header.
#[derive(Debug, Clone, PartialEq)]
pub struct Header {
    /// Record name (letters, digits and underscores).
    pub record_name: String,
    /// Number of segments, for a multi-segment record.
    pub segments: Option<usize>,
    /// Number of signals the record line states (for an ordinary record,
    /// the length of `signals`).
    pub n_signals: usize,
    /// Sampling frequency in frames per second ([`DEFAULT_FS`] if missing).
    pub fs: f64,
    /// Counter frequency, if given (defaults to `fs`).
    pub counter_freq: Option<f64>,
    /// Base counter value, if given (defaults to 0).
    pub base_counter: Option<f64>,
    /// Samples per signal (frames); `None` when missing or 0 ("unspecified").
    pub samples: Option<u64>,
    /// Time of day of the first sample, if given.
    pub base_time: Option<BaseTime>,
    /// Date of the first sample, if given.
    pub base_date: Option<BaseDate>,
    /// One entry per signal line. For a multi-segment record opened as a
    /// [`Record`](crate::Record): the whole record's signals, from its
    /// layout header or first segment.
    pub signals: Vec<SignalSpec>,
    /// One entry per segment line (multi-segment records only).
    pub segment_specs: Vec<SegmentSpec>,
    /// Text of every comment line, without the `#` and surrounding blanks.
    pub comments: Vec<String>,
}

/// One signal line.
#[derive(Debug, Clone, PartialEq)]
pub struct SignalSpec {
    /// Signal file name, relative to the header's folder.
    pub file_name: String,
    /// How samples are packed.
    pub format: SignalFormat,
    /// Samples of this signal in each frame (default 1).
    pub samples_per_frame: u32,
    /// Frames by which this signal lags the others in the file (default 0).
    pub skew: u32,
    /// Bytes to skip at the start of the signal file (default 0).
    pub byte_offset: u64,
    /// ADC units per physical unit ([`DEFAULT_GAIN`] if missing or 0).
    pub adc_gain: f64,
    /// Stored value that corresponds to physical zero (default: `adc_zero`).
    pub baseline: i32,
    /// Physical units ([`DEFAULT_UNITS`] if missing).
    pub units: String,
    /// ADC resolution in bits (default: [`SignalFormat::default_resolution`]).
    pub adc_resolution: u32,
    /// Stored value for the middle of the ADC range (default 0).
    pub adc_zero: i32,
    /// First sample's value (default: `adc_zero`); format 8 starts from it.
    pub initial_value: i32,
    /// 16-bit checksum of all samples, if given.
    pub checksum: Option<i32>,
    /// Block size in bytes (default 0; only matters for devices).
    pub block_size: u32,
    /// Signal description, e.g. `PLETH`; the rest of the line.
    pub description: Option<String>,
}

/// One segment line of a multi-segment record.
#[derive(Debug, Clone, PartialEq)]
pub struct SegmentSpec {
    /// Record name of the segment (`~` for a gap).
    pub name: String,
    /// Frames in the segment.
    pub samples: u64,
}

/// Time of day of a record's first sample (`HH:MM:SS`, `MM:SS` or `SS`,
/// seconds possibly fractional).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BaseTime {
    /// Hours, 0..=23.
    pub hours: u32,
    /// Minutes, 0..=59.
    pub minutes: u32,
    /// Seconds, 0 to under 60.
    pub seconds: f64,
}

/// Calendar date of a record's first sample (`DD/MM/YYYY`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct BaseDate {
    /// Day of the month, 1..=31.
    pub day: u32,
    /// Month, 1..=12.
    pub month: u32,
    /// Year.
    pub year: u32,
}

impl Header {
    /// Read and parse the header file at `path` (a regular file of at
    /// most [`MAX_HEADER_BYTES`]).
    pub fn read(path: &Path) -> Result<Header> {
        let bytes = read_all(path, "header", MAX_HEADER_BYTES)?;
        if bytes.is_empty() {
            return Err(Error::new(path, ErrorKind::Empty));
        }
        // Descriptions are free text; a stray non-UTF-8 byte must not stop
        // the numbers from being read.
        Header::parse(&String::from_utf8_lossy(&bytes), path)
    }

    /// Parse header text; `path` only names the file in errors.
    pub fn parse(text: &str, path: &Path) -> Result<Header> {
        let mut comments = Vec::new();
        let mut lines = Vec::new();
        for (i, raw) in text.split('\n').enumerate() {
            let line = raw.trim();
            if let Some(comment) = line.strip_prefix('#') {
                comments.push(comment.trim().to_string());
            } else if !line.is_empty() {
                lines.push((i + 1, line));
            }
        }
        let Some(&(record_line_no, record_line)) = lines.first() else {
            return Err(Error::new(
                path,
                ErrorKind::Syntax("no record line (only blanks and comments)".into()),
            ));
        };
        let (mut header, n_sig) = parse_record_line(record_line)
            .map_err(|e| Error::new(path, e.into_kind()).at_line(record_line_no))?;
        header.comments = comments;
        let body = &lines[1..];
        let wanted = header.segments.unwrap_or(n_sig);
        let what = if header.segments.is_some() {
            "segment"
        } else {
            "signal"
        };
        if body.len() < wanted {
            return Err(Error::new(
                path,
                ErrorKind::Syntax(format!(
                    "record line promises {wanted} {what} lines, found {}",
                    body.len()
                )),
            ));
        }
        if let Some(&(extra_no, _)) = body.get(wanted) {
            return Err(Error::syntax(
                path,
                extra_no,
                format!("unexpected line after the {wanted} {what} lines"),
            ));
        }
        for &(no, line) in body {
            if header.segments.is_some() {
                let seg = parse_segment_line(line)
                    .map_err(|e| Error::new(path, e.into_kind()).at_line(no))?;
                header.segment_specs.push(seg);
            } else {
                let sig = parse_signal_line(line).map_err(|e| match e {
                    LineError::Syntax(e) => Error::new(path, e.into_kind()).at_line(no),
                    LineError::Format(kind) => Error::new(path, kind).at_line(no),
                })?;
                header.signals.push(sig);
            }
        }
        Ok(header)
    }

    /// The header as text, in the layout of header(5). Defaults are written
    /// out, so reading the text back gives the same [`Header`] (except that
    /// a signal with a block size or description but no checksum gets
    /// checksum 0: the fields are positional).
    pub fn to_text(&self) -> String {
        let mut out = String::new();
        out.push_str(&self.record_name);
        if let Some(n) = self.segments {
            let _ = write!(out, "/{n}");
        }
        let n_sig = if self.segments.is_some() {
            self.n_signals
        } else {
            self.signals.len()
        };
        let _ = write!(out, " {n_sig} {}", self.fs);
        if let Some(cf) = self.counter_freq {
            let _ = write!(out, "/{cf}");
            if let Some(bc) = self.base_counter {
                let _ = write!(out, "({bc})");
            }
        }
        let _ = write!(out, " {}", self.samples.unwrap_or(0));
        if let Some(t) = self.base_time {
            let _ = write!(out, " {t}");
            if let Some(d) = self.base_date {
                let _ = write!(out, " {d}");
            }
        }
        out.push('\n');
        for seg in &self.segment_specs {
            let _ = writeln!(out, "{} {}", seg.name, seg.samples);
        }
        // A multi-segment record's signals live in its segments' headers.
        let signals = if self.segments.is_some() {
            &[][..]
        } else {
            &self.signals[..]
        };
        for s in signals {
            let _ = write!(out, "{} {}", s.file_name, s.format.code());
            if s.samples_per_frame != 1 {
                let _ = write!(out, "x{}", s.samples_per_frame);
            }
            if s.skew != 0 {
                let _ = write!(out, ":{}", s.skew);
            }
            if s.byte_offset != 0 {
                let _ = write!(out, "+{}", s.byte_offset);
            }
            let _ = write!(
                out,
                " {}({})/{} {} {} {}",
                s.adc_gain, s.baseline, s.units, s.adc_resolution, s.adc_zero, s.initial_value,
            );
            // Fields are positional: a block size or description needs a
            // checksum before it, so an unknown one is then written as 0.
            if s.checksum.is_some() || s.block_size != 0 || s.description.is_some() {
                let _ = write!(out, " {} {}", s.checksum.unwrap_or(0), s.block_size);
                if let Some(d) = &s.description {
                    let _ = write!(out, " {d}");
                }
            }
            out.push('\n');
        }
        for c in &self.comments {
            let _ = writeln!(out, "# {c}");
        }
        out
    }
}

impl std::fmt::Display for BaseTime {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let whole = self.seconds.trunc();
        write!(
            f,
            "{:02}:{:02}:{:02}",
            self.hours, self.minutes, whole as u32
        )?;
        // Microseconds, the finest a header holds; never rounded up into
        // the next second.
        let micros = (((self.seconds - whole) * 1e6).round() as u32).min(999_999);
        if micros > 0 {
            let digits = format!("{micros:06}");
            write!(f, ".{}", digits.trim_end_matches('0'))?;
        }
        Ok(())
    }
}

impl std::fmt::Display for BaseDate {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{:02}/{:02}/{:04}", self.day, self.month, self.year)
    }
}

#[cfg(test)]
mod tests;
