//! One signal of a record read a block of frames at a time, so a long
//! recording never has to be in memory whole: the same values, in the same
//! order, as [`Record::read_physical`] gives at once.
//!
//! Each block is read from the signal file where it lies: for the packed
//! formats (212, 310, 311) from the start of the byte group that holds its
//! first sample; for format 8 in order from the start, keeping each
//! signal's running sum between blocks. A skewed signal's block is read
//! from the frames it was stored in; frames past the end of the record
//! are missing, as in the whole read.

use std::fs::File;
use std::io::{Read, Seek, SeekFrom};

use super::group::{check_length, Group};
use super::Record;
use crate::error::{Error, ErrorKind, Result};
use crate::input::{open_regular, regular_size};
use crate::wfdb_format::{undo_differences_from, SignalFormat};

mod convert;

pub use convert::BlockSample;
use convert::{Layout, Scale, Table16, TABLE16_FROM_SAMPLES};

/// Physical values of one signal of a [`Record`], a block at a time
/// ([`Record::physical_blocks`]). Each item holds the signal's samples of
/// at most the asked-for number of frames (fewer at the end of the record
/// and of each segment of a multi-segment record, never none).
#[derive(Debug)]
pub struct PhysicalBlocks<'a> {
    block_frames: u64,
    /// The pieces still to read, in order: a file's signal or a gap.
    pieces: std::vec::IntoIter<Piece<'a>>,
    current: Option<Cursor>,
    failed: bool,
}

/// A stretch of the record: `frames` frames of a signal of `record`, or
/// (no record) a gap of `frames` frames of `spf` missing samples each.
#[derive(Debug)]
struct Piece<'a> {
    frames: u64,
    spf: usize,
    source: Option<(&'a Record, usize)>,
}

impl Record {
    /// Signal `index` in physical units (as
    /// [`read_physical`](Self::read_physical) gives it), `block_frames`
    /// frames at a time (at least 1). Memory stays that of one block
    /// whatever the record's length; the record's sample limit
    /// ([`RecordOptions::max_samples`](super::RecordOptions)) applies to
    /// whole reads only.
    pub fn physical_blocks(&self, index: usize, block_frames: usize) -> Result<PhysicalBlocks<'_>> {
        let spec = self.header.signals.get(index).ok_or_else(|| {
            Error::new(
                &self.header_path,
                ErrorKind::Invalid(format!(
                    "no signal {index}: the record has {}",
                    self.n_signals()
                )),
            )
        })?;
        let spf = spec.samples_per_frame as usize;
        let pieces = match &self.segments {
            Some(segments) => segments
                .parts
                .iter()
                .map(|p| Piece {
                    frames: p.frames,
                    spf,
                    // A gap, or a segment without the signal, is missing.
                    source: p.record.as_ref().zip(p.map.get(index).copied().flatten()),
                })
                .collect(),
            None => vec![Piece {
                frames: self.frames,
                spf,
                source: Some((self, index)),
            }],
        };
        Ok(PhysicalBlocks {
            block_frames: block_frames.max(1) as u64,
            pieces: pieces.into_iter(),
            current: None,
            failed: false,
        })
    }
}

impl PhysicalBlocks<'_> {
    /// The next block into `out` (emptied first, its memory kept): `true`
    /// when a block was read, `false` at the end of the signal and after
    /// an error. The same values as [`Iterator::next`], as `T`; a replay
    /// that keeps one buffer allocates nothing per block.
    pub fn read_into<T: BlockSample>(&mut self, out: &mut Vec<T>) -> Result<bool> {
        out.clear();
        if self.failed {
            return Ok(false);
        }
        loop {
            if let Some(c) = &mut self.current {
                if c.next < c.end {
                    let n = self.block_frames.min(c.end - c.next);
                    let read = c.read(n, out);
                    self.failed = read.is_err();
                    return read.map(|()| true);
                }
            }
            let Some(piece) = self.pieces.next() else {
                return Ok(false);
            };
            match Cursor::open(&piece) {
                Ok(c) => self.current = Some(c),
                Err(e) => {
                    self.failed = true;
                    return Err(e);
                }
            }
        }
    }
}

impl Iterator for PhysicalBlocks<'_> {
    type Item = Result<Vec<f64>>;

    fn next(&mut self) -> Option<Self::Item> {
        let mut block = Vec::new();
        match self.read_into(&mut block) {
            Ok(true) => Some(Ok(block)),
            Ok(false) => None,
            Err(e) => Some(Err(e)),
        }
    }
}

/// Where the next block of one piece comes from.
#[derive(Debug)]
struct Cursor {
    next: u64,
    end: u64,
    /// `None` for a gap: every sample is missing.
    file: Option<FileSignal>,
    spf: usize,
}

/// One signal in one signal file of an ordinary record.
#[derive(Debug)]
struct FileSignal {
    file: File,
    group: Group,
    format: SignalFormat,
    /// Where the signal lies in the file's frames.
    layout: Layout,
    skew: u64,
    /// The record's frames (stored frames past them read as missing).
    frames: u64,
    scale: Scale,
    /// The 16-bit formats' values by stored word, for a long signal.
    table: Option<Table16>,
    /// Format 8: each signal's samples per frame and its running value.
    diff: Option<(Vec<usize>, Vec<i32>)>,
    /// The bytes of the last block, and (format 8 and the packed formats)
    /// its stored integers: kept, so a block allocates nothing.
    bytes: Vec<u8>,
    stream: Vec<i32>,
}

impl Cursor {
    fn open(piece: &Piece<'_>) -> Result<Cursor> {
        let file = match piece.source {
            Some((rec, index)) => Some(FileSignal::open(rec, index)?),
            None => None,
        };
        Ok(Cursor {
            next: 0,
            end: piece.frames,
            file,
            spf: piece.spf,
        })
    }

    /// The next `n` frames' samples of the signal into `out` (empty).
    fn read<T: BlockSample>(&mut self, n: u64, out: &mut Vec<T>) -> Result<()> {
        let from = self.next;
        self.next += n;
        match &mut self.file {
            Some(f) => f.read(from, n, out),
            None => {
                out.resize(n as usize * self.spf, T::MISSING);
                Ok(())
            }
        }
    }
}

impl FileSignal {
    fn open(rec: &Record, index: usize) -> Result<FileSignal> {
        let (g, _) = rec.locate(index)?;
        let group = rec.groups[g].clone();
        let spec = &rec.header.signals[index];
        let spf_of = |s: usize| rec.header.signals[s].samples_per_frame as usize;
        let at = group
            .signals
            .iter()
            .take_while(|&&s| s != index)
            .map(|&s| spf_of(s))
            .sum();
        let diff = (group.format == SignalFormat::Diff8).then(|| {
            let slots = group.signals.iter().map(|&s| spf_of(s)).collect();
            let initial = group
                .signals
                .iter()
                .map(|&s| rec.header.signals[s].initial_value)
                .collect();
            (slots, initial)
        });
        if diff.is_some() && spec.skew > 0 && rec.frames > 0 {
            return Err(Error::new(
                &group.path,
                ErrorKind::Unsupported(
                    "skew in format 8, which has no invalid-sample value for the frames past \
                     the end"
                        .into(),
                ),
            ));
        }
        let (file, _) = open_regular(&group.path)?;
        let scale = Scale::new(
            spec.format.invalid_value(),
            spec.baseline as f64,
            spec.adc_gain,
        );
        let samples = rec.frames.saturating_mul(u64::from(spec.samples_per_frame));
        // Only for a signal alone in its file: beside others its reading
        // costs more than its conversion, and several tables add up.
        let alone = group.signals.len() == 1;
        let table = (alone && samples >= TABLE16_FROM_SAMPLES)
            .then(|| Table16::new(group.format, &scale))
            .flatten();
        Ok(FileSignal {
            file,
            format: group.format,
            layout: Layout {
                per_frame: group.frame_samples(&rec.header) as usize,
                at,
                spf: spec.samples_per_frame as usize,
            },
            skew: u64::from(spec.skew),
            frames: rec.frames,
            scale,
            table,
            diff,
            group,
            bytes: Vec::new(),
            stream: Vec::new(),
        })
    }

    /// Physical values of the signal in record frames `from..from + n`,
    /// into `out` (empty).
    fn read<T: BlockSample>(&mut self, from: u64, n: u64, out: &mut Vec<T>) -> Result<()> {
        // Stored frames: skewed by `skew`, none past the record's end.
        let lo = (from + self.skew).min(self.frames);
        let hi = (from + n + self.skew).min(self.frames);
        let want = n as usize * self.layout.spf;
        out.reserve(want);
        if let Some((skip, count)) = self.fetch(lo, hi)? {
            let scale = (&self.scale, self.table.as_ref());
            let fixed = self.diff.is_none()
                && convert::fixed_width(self.format, &self.bytes, self.layout, scale, out);
            if !fixed {
                self.stream.clear();
                self.format
                    .decode_into(&self.bytes, count, &mut self.stream);
                let stream = &mut self.stream[skip..];
                if let Some((slots, running)) = &mut self.diff {
                    undo_differences_from(stream, slots, running);
                }
                convert::from_stream(stream, self.layout, &self.scale, out);
            }
        }
        out.resize(want, T::MISSING);
        Ok(())
    }

    /// Read the bytes of stored frames `lo..hi` into `self.bytes`: from
    /// the start of the byte group that holds the first sample. `None`
    /// when there are none; else the samples before the first one in the
    /// bytes, and the samples the bytes hold from their start. The
    /// fixed-width formats start on the first sample (no samples before).
    fn fetch(&mut self, lo: u64, hi: u64) -> Result<Option<(usize, usize)>> {
        let per = self.layout.per_frame as u64;
        let (first, last) = (lo * per, hi * per);
        if first == last {
            return Ok(None);
        }
        // Packed formats start on the byte group holding the first sample.
        let group = match self.format {
            SignalFormat::Fmt212 => 2,
            SignalFormat::Fmt310 | SignalFormat::Fmt311 => 3,
            _ => 1,
        };
        let start = first - first % group;
        let offset = self.group.byte_offset + self.format.bytes_for(start);
        let len = self.format.bytes_for(last - start);
        // `resize` writes only the bytes it adds: nothing once a block's worth.
        self.bytes.resize(len as usize, 0);
        let path = &self.group.path;
        let io = |e: std::io::Error| Error::from_io(path, "read", &e);
        self.file.seek(SeekFrom::Start(offset)).map_err(io)?;
        if let Err(e) = self.file.read_exact(&mut self.bytes) {
            // The file may have shrunk since the record was opened.
            let size = regular_size(path)?;
            check_length(&self.group, size, self.frames, per)?;
            return Err(io(e));
        }
        Ok(Some(((first - start) as usize, (last - start) as usize)))
    }
}

#[cfg(test)]
mod tests;
