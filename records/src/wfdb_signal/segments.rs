//! Multi-segment WFDB records: a master header whose record line reads
//! `name/segments signals fs frames` and whose lines after it name one
//! segment each (`segment_name frames`), each segment an ordinary record
//! in the same folder.
//!
//! Source: PhysioNet WFDB header file format specification, header(5)
//! ("multi-segment records"), and how Python wfdb 4.x `rdrecord` joins
//! them (`MultiRecord.multi_to_single` in `wfdb/io/record.py`):
//!
//! * fixed layout: every segment has the same signals, in the same order;
//! * variable layout: the first segment line has length 0 and names the
//!   layout header, whose signal lines (file name `~`) list every signal
//!   of the record; a segment may hold any of them, matched by name;
//! * a segment named `~` is a gap (a null segment) holding no samples.
//!
//! Samples a segment does not hold are missing: NaN in physical values,
//! the format's invalid-sample value in stored ones, as for an invalid
//! sample in an ordinary record.

use std::path::{Path, PathBuf};

use super::{Record, RecordOptions};
use crate::error::{Error, ErrorKind, Result};
use crate::wfdb_header::{Header, SegmentSpec, SignalSpec};

/// The segments of a multi-segment record, in order.
#[derive(Debug, Clone)]
pub(crate) struct Segments {
    pub(super) parts: Vec<Part>,
}

/// One segment: its length and, unless it is a gap, its record and where
/// each of the record's signals lies in it.
#[derive(Debug, Clone)]
pub(super) struct Part {
    name: String,
    pub(super) frames: u64,
    pub(super) record: Option<Record>,
    /// For each signal of the whole record, its index in this segment.
    pub(super) map: Vec<Option<usize>>,
}

/// Name of a null segment or null signal file.
const NULL: &str = "~";

impl Segments {
    /// Open the multi-segment record whose master header is `header`
    /// (read from `header_path`, segments in `dir`), each segment opened
    /// with `options`.
    pub(crate) fn open(
        mut header: Header,
        header_path: PathBuf,
        dir: PathBuf,
        options: &RecordOptions,
    ) -> Result<Record> {
        let bad = |m: String| Error::new(&header_path, ErrorKind::Invalid(m));
        let specs = header.segment_specs.clone();
        let variable = specs.first().is_some_and(|s| s.samples == 0);
        let mut opened = Vec::with_capacity(specs.len());
        for (k, seg) in specs.iter().enumerate() {
            check_segment(k, seg, variable, &bad)?;
            let record = match (seg.name.as_str(), variable && k == 0) {
                (NULL, _) => None,
                (_, true) => None,
                (name, false) => Some(open_segment(
                    &dir,
                    name,
                    seg.samples,
                    &header,
                    options,
                    &bad,
                )?),
            };
            opened.push(record);
        }
        let signals = if variable {
            let layout = &specs[0];
            if layout.name == NULL {
                return Err(bad("the layout segment (length 0) may not be \"~\"".into()));
            }
            layout_signals(&dir.join(format!("{}.hea", layout.name)), &opened)?
        } else {
            let first = opened.iter().flatten().next().ok_or_else(|| {
                bad("every segment is a gap (\"~\"): the record has no signals".into())
            })?;
            first.signals().iter().map(record_level).collect()
        };
        if signals.len() != header.n_signals {
            return Err(bad(format!(
                "the record line says {} signals, its {} give {}",
                header.n_signals,
                if variable { "layout" } else { "segments" },
                signals.len()
            )));
        }
        let mut parts = Vec::with_capacity(specs.len());
        for (seg, record) in specs.iter().zip(opened) {
            let map = match &record {
                Some(r) => map_signals(r, &signals, variable, &seg.name, &bad)?,
                None => vec![None; signals.len()],
            };
            parts.push(Part {
                name: seg.name.clone(),
                frames: seg.samples,
                record,
                map,
            });
        }
        // Checked: each length is bounded, their sum need not be.
        let frames = parts
            .iter()
            .try_fold(0u64, |sum, p| sum.checked_add(p.frames))
            .ok_or_else(|| bad("the segments' lengths add up past any record".into()))?;
        if let Some(stated) = header.samples.filter(|&n| n != frames) {
            return Err(bad(format!(
                "the record line says {stated} frames, the segments hold {frames}"
            )));
        }
        header.signals = signals;
        Ok(Record {
            header_path,
            dir,
            header,
            frames,
            groups: Vec::new(),
            segments: Some(Box::new(Segments { parts })),
            options: options.clone(),
        })
    }

    /// Stored samples of signal `index` of the whole record.
    pub(crate) fn read_digital(&self, rec: &Record, index: usize) -> Result<Vec<i32>> {
        let spec = self.signal(rec, index)?;
        let spf = spec.samples_per_frame as usize;
        let total = (rec.len() as u64).saturating_mul(spf as u64);
        if total > rec.options.max_samples {
            return Err(Error::new(
                &rec.header_path,
                ErrorKind::TooManySamples {
                    samples: total,
                    limit: rec.options.max_samples,
                },
            ));
        }
        let mut out = Vec::with_capacity(total as usize);
        for part in &self.parts {
            let n = part.frames as usize * spf;
            match (&part.record, part.map[index]) {
                (Some(seg), Some(j)) => {
                    let own = &seg.signals()[j];
                    if own.adc_gain != spec.adc_gain || own.baseline != spec.baseline {
                        return Err(self.refuse(
                            rec,
                            format!(
                                "signal {index} has gain {}({}) in segment {} and {}({}) in \
                                 the first that holds it: its stored values do not join \
                                 (physical values do)",
                                own.adc_gain, own.baseline, part.name, spec.adc_gain, spec.baseline
                            ),
                        ));
                    }
                    let (from, to) = (own.format.invalid_value(), spec.format.invalid_value());
                    let samples = seg.read_digital(j)?;
                    out.extend(samples[..n].iter().map(|&v| match to {
                        Some(to) if Some(v) == from => to,
                        _ => v,
                    }));
                }
                _ => {
                    let fill = spec.format.invalid_value().ok_or_else(|| {
                        self.refuse(
                            rec,
                            format!(
                                "signal {index} has no samples in segment {} and format 8 has \
                                 no invalid-sample value for them (physical values give NaN)",
                                part.name
                            ),
                        )
                    })?;
                    out.extend(std::iter::repeat_n(fill, n));
                }
            }
        }
        Ok(out)
    }

    /// Physical values of signal `index` of the whole record, each segment
    /// converted with its own gain and baseline; NaN where it is missing.
    pub(crate) fn read_physical(&self, rec: &Record, index: usize) -> Result<Vec<f64>> {
        let spf = self.signal(rec, index)?.samples_per_frame as usize;
        let mut out = Vec::with_capacity(rec.len() * spf);
        for part in &self.parts {
            let n = part.frames as usize * spf;
            match (&part.record, part.map[index]) {
                (Some(seg), Some(j)) => out.extend_from_slice(&seg.read_physical(j)?[..n]),
                _ => out.extend(std::iter::repeat_n(f64::NAN, n)),
            }
        }
        Ok(out)
    }

    /// Check every segment's checksums against its samples.
    pub(crate) fn verify_checksums(&self) -> Result<()> {
        for seg in self.parts.iter().filter_map(|p| p.record.as_ref()) {
            seg.verify_checksums()?;
        }
        Ok(())
    }

    /// Signal `index` of `rec`, or the error that it has none such.
    fn signal<'a>(&self, rec: &'a Record, index: usize) -> Result<&'a SignalSpec> {
        rec.signals().get(index).ok_or_else(|| {
            let n = rec.n_signals();
            self.refuse(rec, format!("no signal {index}: the record has {n}"))
        })
    }

    fn refuse(&self, rec: &Record, message: String) -> Error {
        Error::new(rec.header_path(), ErrorKind::Invalid(message))
    }
}

/// Segment `k` of the master header: a record name or `~`, and a length
/// of 0 only for the layout (first) segment of a variable layout.
fn check_segment(
    k: usize,
    seg: &SegmentSpec,
    variable: bool,
    bad: &dyn Fn(String) -> Error,
) -> Result<()> {
    let valid = seg.name == NULL
        || !seg.name.is_empty()
            && seg
                .name
                .chars()
                .all(|c| c.is_ascii_alphanumeric() || c == '_' || c == '-');
    if !valid {
        return Err(bad(format!(
            "segment name {:?} is neither a record name nor \"~\"",
            seg.name
        )));
    }
    if seg.samples == 0 && !(variable && k == 0) {
        return Err(bad(format!(
            "segment {k} ({}) has length 0; only the first (the layout) may",
            seg.name
        )));
    }
    Ok(())
}

/// Open segment `name` of a record whose master header is `master`; it
/// must be an ordinary record at the master's rate holding at least
/// `frames` frames.
fn open_segment(
    dir: &Path,
    name: &str,
    frames: u64,
    master: &Header,
    options: &RecordOptions,
    bad: &dyn Fn(String) -> Error,
) -> Result<Record> {
    let path = dir.join(name);
    let header = Header::read(&path.with_extension("hea"))?;
    if header.segments.is_some() {
        return Err(bad(format!(
            "segment {name} is itself a multi-segment record"
        )));
    }
    let record = Record::from_header_with(
        header,
        dir.join(format!("{name}.hea")),
        dir.to_path_buf(),
        options,
    )?;
    if record.fs() != master.fs {
        return Err(bad(format!(
            "segment {name} runs at {} frames per second, the record at {}",
            record.fs(),
            master.fs
        )));
    }
    if (record.len() as u64) < frames {
        return Err(bad(format!(
            "segment {name} holds {} frames, the record's header gives it {frames}",
            record.len()
        )));
    }
    Ok(record)
}

/// A segment's signal line as the whole record's: checksums belong to the
/// segments, so none is kept.
fn record_level(spec: &SignalSpec) -> SignalSpec {
    SignalSpec {
        checksum: None,
        ..spec.clone()
    }
}

/// The signals of a variable-layout record: names, units and samples per
/// frame from the layout header at `path`; format, gain and baseline from
/// the first segment that holds the signal (as Python wfdb takes them).
fn layout_signals(path: &Path, opened: &[Option<Record>]) -> Result<Vec<SignalSpec>> {
    let bytes = std::fs::read(path).map_err(|e| Error::from_io(path, "read", &e))?;
    let text = null_formats_readable(&String::from_utf8_lossy(&bytes));
    let layout = Header::parse(&text, path)?;
    let mut out = Vec::with_capacity(layout.signals.len());
    for spec in &layout.signals {
        let held = opened.iter().flatten().find_map(|r| {
            let j = r.signal_index(spec.description.as_deref()?)?;
            Some(r.signals()[j].clone())
        });
        out.push(match held {
            Some(seg) => SignalSpec {
                samples_per_frame: spec.samples_per_frame,
                description: spec.description.clone(),
                ..record_level(&seg)
            },
            None => record_level(spec),
        });
    }
    Ok(out)
}

/// A layout header's signals store nothing, and their format code is
/// usually 0, which a signal line of an ordinary record may not have: read
/// it as 16 so the other fields parse (it is replaced by the segments'
/// format, or, for a signal no segment holds, only sets the invalid-sample
/// value of its missing samples).
fn null_formats_readable(text: &str) -> String {
    let line_of = |line: &str| -> String {
        let trimmed = line.trim_start();
        let Some(after) = trimmed.strip_prefix(NULL) else {
            return line.to_string();
        };
        let lead = line.len() - trimmed.len();
        let format = after.trim_start();
        let gap = after.len() - format.len();
        let code_end = format
            .find(|c: char| !c.is_ascii_digit())
            .unwrap_or(format.len());
        if gap == 0 || &format[..code_end] != "0" {
            return line.to_string();
        }
        format!(
            "{}{NULL}{}16{}",
            &line[..lead],
            &after[..gap],
            &format[code_end..]
        )
    };
    text.split_inclusive('\n').map(line_of).collect()
}

/// Where each of the record's `signals` lies in segment `seg`: by position
/// in a fixed layout (the same number of signals; names are not compared,
/// nor does Python wfdb compare them), by name in a variable one. Samples
/// per frame must agree.
fn map_signals(
    seg: &Record,
    signals: &[SignalSpec],
    variable: bool,
    name: &str,
    bad: &dyn Fn(String) -> Error,
) -> Result<Vec<Option<usize>>> {
    let map: Vec<Option<usize>> = if variable {
        signals
            .iter()
            .map(|s| s.description.as_deref().and_then(|d| seg.signal_index(d)))
            .collect()
    } else {
        if seg.n_signals() != signals.len() {
            return Err(bad(format!(
                "segment {name} has {} signals, the first has {} (a fixed layout needs the same)",
                seg.n_signals(),
                signals.len()
            )));
        }
        (0..signals.len()).map(Some).collect()
    };
    for (i, j) in map.iter().enumerate() {
        let Some(j) = *j else { continue };
        let (own, whole) = (&seg.signals()[j], &signals[i]);
        if own.samples_per_frame != whole.samples_per_frame {
            return Err(bad(format!(
                "signal {i} has {} samples per frame in segment {name}, {} in the record",
                own.samples_per_frame, whole.samples_per_frame
            )));
        }
    }
    Ok(map)
}

#[cfg(test)]
mod tests;
