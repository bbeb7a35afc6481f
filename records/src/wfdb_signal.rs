//! WFDB records: a header plus the signal files it names.
//!
//! Source: PhysioNet WFDB header and signal file format specifications
//! (header(5), signal(5)). Signals stored in the same file are consecutive
//! header lines naming that file; a frame of the file holds, for each of
//! them in order, its samples-per-frame samples.

use std::path::{Path, PathBuf};

use super::error::{Error, ErrorKind, Result};
use super::input::{read_span, regular_size};
use super::wfdb_format::{undo_differences, SignalFormat};
use super::wfdb_header::{Header, SignalSpec};
use super::{LoadedSignal, DEFAULT_SIGNAL};

mod blocks;
mod group;
mod open;
mod segments;
mod skew;

pub use blocks::{BlockSample, PhysicalBlocks};
use group::{check_length, Group};
use open::{check_skews, header_path_of};
pub use open::{RecordOptions, MAX_SAMPLES};
use segments::Segments;
use skew::apply_skew;

/// An opened WFDB record. Opening reads the header and checks that every
/// signal file exists and is long enough; samples are read on request.
#[derive(Debug, Clone)]
pub struct Record {
    header_path: PathBuf,
    dir: PathBuf,
    header: Header,
    frames: u64,
    groups: Vec<Group>,
    /// The segments of a multi-segment record (`groups` is then empty).
    segments: Option<Box<Segments>>,
    options: RecordOptions,
}

impl Record {
    /// Open the record at `path`, given as `dir/name` or `dir/name.hea`,
    /// with the default [`RecordOptions`].
    pub fn open(path: impl AsRef<Path>) -> Result<Record> {
        Record::open_with(path, &RecordOptions::default())
    }

    /// Open the record at `path` (`dir/name` or `dir/name.hea`) with `options`.
    pub fn open_with(path: impl AsRef<Path>, options: &RecordOptions) -> Result<Record> {
        let (header_path, dir) = header_path_of(path.as_ref())?;
        let header = Header::read(&header_path)?;
        Record::from_header_with(header, header_path, dir, options)
    }

    /// Build a record from an already parsed header whose signal files lie
    /// in `dir`, with the default [`RecordOptions`].
    pub fn from_header(header: Header, header_path: PathBuf, dir: PathBuf) -> Result<Record> {
        Record::from_header_with(header, header_path, dir, &RecordOptions::default())
    }

    /// [`from_header`](Self::from_header) with `options`. Signal files are
    /// looked at, not read: each must be a regular file long enough for
    /// the header's sample count. A multi-segment header opens its
    /// segments, which are then read as one record; its signals are those
    /// of its layout header or (fixed layout) its first segment.
    pub fn from_header_with(
        header: Header,
        header_path: PathBuf,
        dir: PathBuf,
        options: &RecordOptions,
    ) -> Result<Record> {
        if header.segments.is_some() {
            return Segments::open(header, header_path, dir, options);
        }
        let groups = Group::of_header(&header, &header_path, &dir, options)?;
        let mut frames = header.samples;
        for g in &groups {
            let size = regular_size(&g.path)?;
            let per_frame = g.frame_samples(&header);
            match frames {
                Some(n) => check_length(g, size, n, per_frame)?,
                None => {
                    let stored = g.format.samples_in(size.saturating_sub(g.byte_offset));
                    let n = stored.checked_div(per_frame).unwrap_or(0);
                    frames = Some(frames.map_or(n, |f: u64| f.min(n)));
                }
            }
        }
        let frames = frames.unwrap_or(0);
        check_skews(&header, &header_path, frames)?;
        Ok(Record {
            header_path,
            dir,
            header,
            frames,
            groups,
            segments: None,
            options: options.clone(),
        })
    }

    /// The parsed header.
    pub fn header(&self) -> &Header {
        &self.header
    }

    /// The header file's path.
    pub fn header_path(&self) -> &Path {
        &self.header_path
    }

    /// The folder holding the signal files.
    pub fn dir(&self) -> &Path {
        &self.dir
    }

    /// Sampling frequency in frames per second.
    pub fn fs(&self) -> f64 {
        self.header.fs
    }

    /// Sampling frequency of signal `index` (fs × its samples per frame).
    ///
    /// Panics if `index` is not below [`n_signals`](Self::n_signals).
    pub fn signal_fs(&self, index: usize) -> f64 {
        self.header.fs * self.header.signals[index].samples_per_frame as f64
    }

    /// Samples per signal (frames): the header's count, or when it gives
    /// none, what the shortest signal file holds.
    pub fn len(&self) -> usize {
        self.frames as usize
    }

    /// Whether the record holds no frames.
    pub fn is_empty(&self) -> bool {
        self.frames == 0
    }

    /// Number of signals.
    pub fn n_signals(&self) -> usize {
        self.header.signals.len()
    }

    /// The signal lines.
    pub fn signals(&self) -> &[SignalSpec] {
        &self.header.signals
    }

    /// Descriptions of the signals ("" where a line gives none).
    pub fn signal_names(&self) -> Vec<String> {
        self.header
            .signals
            .iter()
            .map(|s| s.description.clone().unwrap_or_default())
            .collect()
    }

    /// Index of the first signal whose description is `name`.
    pub fn signal_index(&self, name: &str) -> Option<usize> {
        self.header
            .signals
            .iter()
            .position(|s| s.description.as_deref() == Some(name))
    }

    /// Index of the signal named `name` ([`DEFAULT_SIGNAL`] when `None`);
    /// the error lists the names the record has.
    pub fn pick_signal(&self, name: Option<&str>) -> Result<usize> {
        let wanted = name.unwrap_or(DEFAULT_SIGNAL);
        self.signal_index(wanted).ok_or_else(|| {
            Error::new(
                &self.header_path,
                ErrorKind::NoSuchSignal {
                    wanted: wanted.to_string(),
                    available: self.signal_names(),
                },
            )
        })
    }

    /// Stored (digital) samples of signal `index`: `len() × samples per
    /// frame` values. Invalid samples keep their stored sentinel value.
    pub fn read_digital(&self, index: usize) -> Result<Vec<i32>> {
        if let Some(segments) = &self.segments {
            return segments.read_digital(self, index);
        }
        let (g, pos) = self.locate(index)?;
        let mut all = self.read_group(&self.groups[g])?;
        Ok(all.swap_remove(pos))
    }

    /// Stored samples of every signal, each file read once.
    pub fn read_all_digital(&self) -> Result<Vec<Vec<i32>>> {
        if self.segments.is_some() {
            return (0..self.n_signals())
                .map(|i| self.read_digital(i))
                .collect();
        }
        let mut out = vec![Vec::new(); self.n_signals()];
        for g in &self.groups {
            for (&s, samples) in g.signals.iter().zip(self.read_group(g)?) {
                out[s] = samples;
            }
        }
        Ok(out)
    }

    /// Physical values of signal `index`: (stored − baseline) / gain in
    /// f64, with the format's invalid-sample value turned into NaN, the
    /// same arithmetic and NaN rule as Python wfdb's `rdrecord` physical
    /// output.
    pub fn read_physical(&self, index: usize) -> Result<Vec<f64>> {
        if let Some(segments) = &self.segments {
            return segments.read_physical(self, index);
        }
        let digital = self.read_digital(index)?;
        Ok(self.to_physical(index, &digital))
    }

    /// Convert stored samples of signal `index` to physical values (see
    /// [`read_physical`](Self::read_physical)).
    ///
    /// Panics if `index` is not below [`n_signals`](Self::n_signals).
    pub fn to_physical(&self, index: usize, digital: &[i32]) -> Vec<f64> {
        let spec = &self.header.signals[index];
        let invalid = spec.format.invalid_value();
        let baseline = spec.baseline as f64;
        digital
            .iter()
            .map(|&d| {
                if Some(d) == invalid {
                    f64::NAN
                } else {
                    (d as f64 - baseline) / spec.adc_gain
                }
            })
            .collect()
    }

    /// Signal `name` (default [`DEFAULT_SIGNAL`]) in physical units, with
    /// its name, units and rate.
    pub fn load_signal(&self, name: Option<&str>) -> Result<LoadedSignal> {
        let index = self.pick_signal(name)?;
        let spec = &self.header.signals[index];
        Ok(LoadedSignal {
            name: spec.description.clone().unwrap_or_default(),
            units: Some(spec.units.clone()),
            fs: self.signal_fs(index),
            samples: self.read_physical(index)?,
        })
    }

    /// Check every signal that has a checksum in the header against its
    /// samples (sum of all samples modulo 2^16, header(5)). Headers write it
    /// signed or unsigned; both are accepted.
    ///
    /// The sums are over the samples as the file stores them: a skewed
    /// signal is summed before it is shifted into line, as the writer
    /// summed it.
    pub fn verify_checksums(&self) -> Result<()> {
        if let Some(segments) = &self.segments {
            return segments.verify_checksums();
        }
        let mut all = vec![Vec::new(); self.n_signals()];
        for g in &self.groups {
            for (&s, samples) in g.signals.iter().zip(self.read_group_stored(g)?) {
                all[s] = samples;
            }
        }
        for (i, (spec, samples)) in self.header.signals.iter().zip(&all).enumerate() {
            let Some(stated) = spec.checksum else {
                continue;
            };
            let actual = checksum(samples);
            if (stated as i64).rem_euclid(65536) != (actual as i64).rem_euclid(65536) {
                let g = &self.groups[self.locate(i)?.0];
                return Err(Error::new(
                    &g.path,
                    ErrorKind::Invalid(format!(
                        "checksum of signal {i} ({}) is {actual}, the header says {stated}",
                        spec.description.as_deref().unwrap_or("unnamed")
                    )),
                ));
            }
        }
        Ok(())
    }

    /// (group, position within the group) of signal `index`.
    fn locate(&self, index: usize) -> Result<(usize, usize)> {
        for (g, group) in self.groups.iter().enumerate() {
            if let Some(pos) = group.signals.iter().position(|&s| s == index) {
                return Ok((g, pos));
            }
        }
        Err(Error::new(
            &self.header_path,
            ErrorKind::Invalid(format!(
                "no signal {index}: the record has {}",
                self.n_signals()
            )),
        ))
    }

    /// Read one signal file and split it into its signals' samples, each
    /// skewed signal shifted into line.
    fn read_group(&self, g: &Group) -> Result<Vec<Vec<i32>>> {
        let mut out = self.read_group_stored(g)?;
        for (k, &s) in g.signals.iter().enumerate() {
            let spec = &self.header.signals[s];
            if spec.skew > 0 {
                apply_skew(&mut out[k], spec, &g.path)?;
            }
        }
        Ok(out)
    }

    /// Samples to read from the file of `g`: refused above the limit of
    /// [`RecordOptions::max_samples`] before any memory is taken.
    fn sample_count(&self, g: &Group, per_frame: u64) -> Result<u64> {
        let limit = self.options.max_samples;
        match self.frames.checked_mul(per_frame) {
            Some(n) if n <= limit => Ok(n),
            n => Err(Error::new(
                &g.path,
                ErrorKind::TooManySamples {
                    samples: n.unwrap_or(u64::MAX),
                    limit,
                },
            )),
        }
    }

    /// Read one signal file and split it into its signals' samples as
    /// stored (skew not applied).
    fn read_group_stored(&self, g: &Group) -> Result<Vec<Vec<i32>>> {
        let per_frame = g.frame_samples(&self.header);
        let count = self.sample_count(g, per_frame)?;
        // Only the bytes the samples use, whatever the file holds beyond.
        let bytes = read_span(&g.path, g.byte_offset, g.format.bytes_for(count))?;
        // Checked again: the file may have changed since the record was opened.
        let size = g.byte_offset.saturating_add(bytes.len() as u64);
        check_length(g, size, self.frames, per_frame)?;
        let mut stream = g.format.decode(&bytes, count as usize);
        let slots: Vec<usize> = g
            .signals
            .iter()
            .map(|&s| self.header.signals[s].samples_per_frame as usize)
            .collect();
        if g.format == SignalFormat::Diff8 {
            let initial: Vec<i32> = g
                .signals
                .iter()
                .map(|&s| self.header.signals[s].initial_value)
                .collect();
            undo_differences(&mut stream, &slots, &initial);
        }
        let mut out: Vec<Vec<i32>> = slots
            .iter()
            .map(|&n| Vec::with_capacity(n * self.frames as usize))
            .collect();
        for frame in stream.chunks_exact(per_frame as usize) {
            let mut at = 0;
            for (k, &n) in slots.iter().enumerate() {
                out[k].extend_from_slice(&frame[at..at + n]);
                at += n;
            }
        }
        Ok(out)
    }
}

/// The 16-bit checksum of a signal, as header(5) defines it: the sum of
/// all samples, kept to 16 bits, read as two's complement.
pub fn checksum(samples: &[i32]) -> i16 {
    samples
        .iter()
        .fold(0i16, |acc, &s| acc.wrapping_add(s as i16))
}

#[cfg(test)]
mod tests;
