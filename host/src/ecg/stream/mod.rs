//! [`EcgReference`] from an ECG read a block at a time, several times over,
//! so its memory does not grow with the recording's length: only with its
//! R peaks and QRS candidates (and a few rings of seconds). The R peaks
//! and unusable time are the very ones [`EcgReference::new`] gives on the
//! whole signal, bit for bit and index for index.
//!
//! The passes over the signal: an overview (length, first finite value,
//! extremes); the QRS pass (sanitising, the band-pass, the stages and the
//! decision rules of J. Pan and W. J. Tompkins, "A real-time QRS
//! detection algorithm", IEEE Trans. Biomed. Eng. 32(3):230-236, 1985);
//! the placing of each R peak on the ECG; the median and the median
//! absolute deviation (exact, [`plethwire_records::order_stat`], a few
//! passes each); the runs at the rails. The band-pass's backward run
//! starts from a look-ahead and is checked bit for bit at every block
//! boundary (module `band`); when it does not settle, it runs from the
//! true end through a temporary file (module `spill`, 8 bytes a sample on
//! disk, a block in memory).

mod band;
mod energy;
mod rails;
mod spill;
mod tail;
#[cfg(test)]
mod tests;

use super::arrival::EcgReference;
use super::pan_tompkins::Placer;
use super::usable::{gap_spans, merged};
use super::{check_rate, EcgError};
use crate::matching::MATCH_WINDOW_S;
use plethwire_records::Record;
use tail::Tail;

/// An ECG that can be read from its start, a block of samples at a time,
/// as often as asked, the same samples each time.
pub trait EcgSource {
    /// Hand every block of the signal, in order, to `sink`; the first
    /// error (of the reading or of `sink`) ends the pass.
    fn each_block(
        &mut self,
        sink: &mut dyn FnMut(&[f64]) -> Result<(), EcgStreamError>,
    ) -> Result<(), EcgStreamError>;
}

/// Samples held in memory, handed on `block` at a time (tests, and
/// callers that have the signal anyway).
#[derive(Debug, Clone, Copy)]
pub struct SliceSource<'a> {
    /// The signal.
    pub samples: &'a [f64],
    /// Samples per block (at least 1).
    pub block: usize,
}

impl EcgSource for SliceSource<'_> {
    fn each_block(
        &mut self,
        sink: &mut dyn FnMut(&[f64]) -> Result<(), EcgStreamError>,
    ) -> Result<(), EcgStreamError> {
        self.samples.chunks(self.block.max(1)).try_for_each(sink)
    }
}

/// Signal `index` of a WFDB record in physical units
/// ([`Record::physical_blocks`]), `block_frames` frames at a time.
#[derive(Debug)]
pub struct RecordSource<'a> {
    record: &'a Record,
    index: usize,
    block_frames: usize,
    buf: Vec<f64>,
}

impl<'a> RecordSource<'a> {
    /// Signal `index` of `record`, read `block_frames` frames at a time.
    pub fn new(record: &'a Record, index: usize, block_frames: usize) -> Self {
        Self {
            record,
            index,
            block_frames,
            buf: Vec::new(),
        }
    }
}

impl EcgSource for RecordSource<'_> {
    fn each_block(
        &mut self,
        sink: &mut dyn FnMut(&[f64]) -> Result<(), EcgStreamError>,
    ) -> Result<(), EcgStreamError> {
        let mut blocks = self.record.physical_blocks(self.index, self.block_frames)?;
        while blocks.read_into(&mut self.buf)? {
            sink(&self.buf)?;
        }
        Ok(())
    }
}

/// Why a streamed ECG reference could not be made.
#[derive(Debug, thiserror::Error)]
pub enum EcgStreamError {
    /// The signal's rate is not one the detector takes.
    #[error(transparent)]
    Ecg(#[from] EcgError),
    /// The signal would not read.
    #[error(transparent)]
    Read(#[from] plethwire_records::Error),
    /// A later pass read another number of samples (or of finite
    /// samples) than the first.
    #[error("the ECG changed while it was read: {first} samples at first, then {now}")]
    Changed {
        /// Samples (finite samples) in the first pass.
        first: u64,
        /// The same in the pass that differed.
        now: u64,
    },
    /// The backward band-pass runs did not reach the same state within
    /// the look-ahead, and going through a file was not allowed.
    #[error("the backward band-pass did not settle within {margin_s} s of look-ahead")]
    Unsettled {
        /// The look-ahead, seconds.
        margin_s: f64,
    },
    /// The temporary file of the band-pass's backward run failed.
    #[error("the band-pass's temporary file: {0}")]
    Spill(#[source] std::io::Error),
}

/// How the backward band-pass is split into blocks.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BandBlocks {
    /// Samples each backward run hands on, seconds of signal.
    pub block_s: f64,
    /// Look-ahead each backward run starts from, seconds of signal.
    pub margin_s: f64,
    /// When the runs did not settle: run the backward pass from the true
    /// end through a temporary file (8 bytes a sample) rather than fail.
    pub spill: bool,
}

impl Default for BandBlocks {
    /// 60 s blocks and look-ahead. Two runs of the 5-15 Hz band-pass from
    /// different states reach the same bits within 7 s at 125 Hz and
    /// 48 s at 1000 Hz (largest of about 800 starts on a 300 s invented
    /// train each, measured while writing this): the last bits take a
    /// while to agree, longer at higher rates. A held, flat stretch
    /// keeps them apart; then the file is used.
    fn default() -> Self {
        Self {
            block_s: 60.0,
            margin_s: 60.0,
            spill: true,
        }
    }
}

/// What the first pass learns of the signal.
#[derive(Debug, Clone, Copy)]
pub(super) struct Overview {
    len: usize,
    /// The first finite sample (0 when there is none).
    first: f64,
    finite: u64,
    /// Smallest and largest finite sample (`total_cmp` order).
    lo: f64,
    hi: f64,
}

/// Every sample of a pass over `source`, checked to be `len` in all.
fn each_sample(
    source: &mut dyn EcgSource,
    len: usize,
    mut f: impl FnMut(f64) -> Result<(), EcgStreamError>,
) -> Result<(), EcgStreamError> {
    let mut n = 0usize;
    source.each_block(&mut |block| {
        n += block.len();
        if n > len {
            return Err(EcgStreamError::Changed {
                first: len as u64,
                now: n as u64,
            });
        }
        block.iter().try_for_each(|&v| f(v))
    })?;
    if n != len {
        return Err(EcgStreamError::Changed {
            first: len as u64,
            now: n as u64,
        });
    }
    Ok(())
}

fn overview(source: &mut dyn EcgSource) -> Result<Overview, EcgStreamError> {
    let mut o = Overview {
        len: 0,
        first: 0.0,
        finite: 0,
        lo: f64::INFINITY,
        hi: f64::NEG_INFINITY,
    };
    source.each_block(&mut |block| {
        o.len += block.len();
        for &v in block.iter().filter(|v| v.is_finite()) {
            if o.finite == 0 {
                o.first = v;
            }
            o.finite += 1;
            o.lo = o.lo.min_by_total(v);
            o.hi = o.hi.max_by_total(v);
        }
        Ok(())
    })?;
    Ok(o)
}

/// The smaller and larger of two values in [`f64::total_cmp`] order.
trait TotalOrder {
    fn min_by_total(self, v: f64) -> f64;
    fn max_by_total(self, v: f64) -> f64;
}

impl TotalOrder for f64 {
    fn min_by_total(self, v: f64) -> f64 {
        if v.total_cmp(&self).is_lt() {
            v
        } else {
            self
        }
    }
    fn max_by_total(self, v: f64) -> f64 {
        if v.total_cmp(&self).is_gt() {
            v
        } else {
            self
        }
    }
}

impl EcgReference {
    /// R peaks and unusable time of the ECG `source` reads, sampled at
    /// `fs` Hz: the same as [`EcgReference::new`] on the whole signal, in
    /// memory that does not grow with its length.
    pub fn streamed(source: &mut dyn EcgSource, fs: f64) -> Result<Self, EcgStreamError> {
        Self::streamed_with(source, fs, BandBlocks::default())
    }

    /// As [`EcgReference::streamed`], with the band-pass split as `blocks`
    /// says.
    pub fn streamed_with(
        source: &mut dyn EcgSource,
        fs: f64,
        blocks: BandBlocks,
    ) -> Result<Self, EcgStreamError> {
        check_rate(fs)?;
        let o = overview(source)?;
        let mut stages = energy::StreamEnergy::new(fs, o.len);
        band_pass(source, fs, &o, blocks, &mut |i, b| {
            if i == 0 {
                // From the first again after the look-ahead runs failed.
                stages = energy::StreamEnergy::new(fs, o.len);
            }
            stages.push(b)
        })?;
        let qrs = stages.finish();
        let r = place_pass(source, fs, &o, &qrs)?;
        let tol = (MATCH_WINDOW_S * fs).round() as u64;
        let mut spans = gap_spans(&r, o.len as u64, fs, tol);
        spans.extend(rails::rail_spans(source, fs, &o)?);
        Ok(Self {
            fs,
            unusable: merged(spans),
            r_peaks: r,
        })
    }
}

/// The band-pass of the sanitised signal (as [`super::stages::sanitised`]
/// and [`super::stages::band_passed`]) to `out` with each sample's index:
/// from look-ahead runs, or when they do not settle (and `blocks` allows)
/// through a file, handing them on again from index 0.
fn band_pass(
    source: &mut dyn EcgSource,
    fs: f64,
    o: &Overview,
    blocks: BandBlocks,
    out: &mut dyn FnMut(usize, f64),
) -> Result<(), EcgStreamError> {
    let block = ((blocks.block_s * fs).round() as usize).max(1);
    let margin = (blocks.margin_s * fs).round() as usize;
    let mut band = band::StreamBand::new(fs, o.len, block, margin);
    let (mut last, mut i) = (o.first, 0);
    let pass = each_sample(source, o.len, |v| {
        if v.is_finite() {
            last = v;
        }
        band.push(last - o.first, &mut |b| {
            out(i, b);
            i += 1;
        })
        .map_err(|band::Unsettled| EcgStreamError::Unsettled {
            margin_s: blocks.margin_s,
        })
    });
    match pass {
        Err(EcgStreamError::Unsettled { .. }) if blocks.spill => {
            let mut i = 0;
            spill::spilled_band(source, fs, o, &mut |b| {
                out(i, b);
                i += 1;
            })
        }
        other => other,
    }
}

/// Each QRS placed on the sanitised ECG, from a ring around it.
fn place_pass(
    source: &mut dyn EcgSource,
    fs: f64,
    o: &Overview,
    qrs: &[usize],
) -> Result<Vec<u64>, EcgStreamError> {
    let mut placer = Placer::new(fs);
    let mut x = Tail::default();
    let mut k = 0;
    let mut last = o.first;
    each_sample(source, o.len, |v| {
        if v.is_finite() {
            last = v;
        }
        x.push(last - o.first);
        while let Some(&p) = qrs.get(k) {
            let w = placer.window(p, o.len);
            if x.end() < w.end {
                break;
            }
            placer.add(p, x.slice(w.clone()), w.start);
            k += 1;
        }
        let keep = qrs
            .get(k)
            .map_or(x.end(), |&p| placer.window(p, o.len).start);
        x.keep_from(keep);
        Ok(())
    })?;
    Ok(placer.finish())
}

/// Hand the band-passed ECG (as [`super::stages::band_passed`] gives it on
/// the sanitised whole signal, bit for bit) to `f` with each value's
/// sample index, in order; when the look-ahead runs do not settle and
/// `blocks` allows the file, the values already handed on are handed on
/// again from the first, from the file.
pub fn for_each_band_value(
    source: &mut dyn EcgSource,
    fs: f64,
    blocks: BandBlocks,
    mut f: impl FnMut(usize, f64),
) -> Result<(), EcgStreamError> {
    check_rate(fs)?;
    let o = overview(source)?;
    band_pass(source, fs, &o, blocks, &mut f)
}
