//! Recording a session: the beats as a WFDB annotation file, and the
//! samples, when the board sends them, as a format-16 WFDB record with
//! two signals, `PLETH` (raw) and `PLETH filtered` (see [`super::scale`]).
//! Sample numbers come from the board's frames, so a gap in them (frames
//! lost, port away) is stored as invalid samples at the right place, up to
//! [`MAX_GAP_S`]; the session has already refused numbers no board could
//! reach, and every sum here is checked besides, so no value from the wire
//! makes a writer loop or a sum wrap.
//!
//! A board above 500 Hz sends every `stride`-th sample (wire format 2,
//! `docs/wire-format.md`). The record then runs at `rate / stride`: its
//! sample `k` is the board's sample `k · stride` (counted from the
//! record's start), and the annotations are written in the record's
//! samples too: every sample and every beat's peak goes to the record
//! sample nearest its time ([`nearest`], ties down), so a beat's time
//! (sample over the record's rate) stays the board's within half a record
//! sample, and a beat sits on the very sample that holds its peak. The
//! stride is fixed once per recording, at the hello (`wire::sample_stride`
//! of its rate, the rule boards follow) or else at the first block's own;
//! beats that come before either wait for it. A block of a finer stride
//! than the record's lands two samples on one record sample: the second
//! counts as repeated.
//!
//! [`Recorder::flush`] brings the files up to date while the session runs:
//! the samples flushed and a header that counts them (see
//! [`RecordWriter::checkpoint`]), the beats appended ([`BeatFile`]).

use plethwire_dsp::wire::{sample_stride, SampleBlock};
use serde::Serialize;
use std::io;
use std::path::{Path, PathBuf};

use super::beat_file::BeatFile;
use super::event::{Event, Sink};
use super::fields::detector_name;
use super::scale::{Scale, INVALID};
use super::timeline::{FASTEST_HZ, MAX_GAP_S};
use plethwire_records::{annotation_path, NewSignal, RecordWriter};

/// Seconds of samples to look at before choosing a scale, when the hello
/// gives no rails.
pub const SCALE_AFTER_S: f64 = 2.0;

/// What became of the samples.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize)]
pub struct SampleCounts {
    /// Samples written (both signals), gap fill excluded.
    pub recorded: u64,
    /// Samples missing from the board's numbering (lost frames, the port
    /// away), stored as invalid.
    pub missing: u64,
    /// Values past the 16-bit range, stored at the limit.
    pub clipped: u64,
    /// Non-finite values, stored as invalid.
    pub not_finite: u64,
    /// Samples before the record's first sample (joined a running board).
    pub before_record: u64,
    /// Samples at places already written (not stored again).
    pub repeated: u64,
    /// Samples more than [`MAX_GAP_S`] past the record's end, which no
    /// real gap explains (not stored).
    pub far_off: u64,
}

/// The record sample nearest board sample `at` (counted from the
/// record's start) when the record keeps every `stride`-th: `at / stride`
/// rounded to the nearest, ties down.
pub fn nearest(at: u64, stride: u64) -> u64 {
    let stride = stride.max(1);
    at / stride + u64::from(2 * (at % stride) > stride)
}

/// What [`Recorder::finish`] wrote.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Written {
    /// The beat annotation file.
    pub annotations: PathBuf,
    /// Beats in it.
    pub beats_annotated: u64,
    /// Beats whose peak lies before the record's first sample.
    pub beats_before_record: u64,
    /// Beats more than [`MAX_GAP_S`] past anything recorded (not annotated).
    pub beats_far_off: u64,
    /// The record's header, when samples arrived.
    pub record: Option<PathBuf>,
    /// Frames (samples per signal) in the record, gap fill included.
    pub record_samples: u64,
    /// The record's sample rate, Hz: the board's over the stride.
    pub rate_hz: Option<f64>,
    /// Board samples per record sample (1 unless the board sent every
    /// `stride`-th sample).
    pub stride: u64,
    /// The scale the samples were stored with.
    pub scale: Option<Scale>,
    /// What became of the samples.
    pub samples: SampleCounts,
}

struct Open {
    writer: RecordWriter,
    scale: Scale,
}

/// Takes a session's events and writes its files.
pub struct Recorder {
    dir: PathBuf,
    name: String,
    rails: Option<Scale>,
    beats: BeatFile,
    beats_before: u64,
    beats_far_off: u64,
    /// The furthest record sample taken so far (beats and samples).
    horizon: u64,
    /// The board's sample rate.
    rate: Option<f64>,
    /// Board samples per record sample, once fixed.
    stride: Option<u64>,
    /// Beats (board samples) that came before the stride was fixed.
    pending_beats: Vec<u64>,
    pending: Vec<(i64, SampleBlock)>,
    pending_samples: u64,
    open: Option<Open>,
    counts: SampleCounts,
    comments: Vec<String>,
}

/// The files of record `name` in `dir`, with beat annotator `annotator`.
pub fn session_files(dir: &Path, name: &str, annotator: &str) -> Vec<PathBuf> {
    vec![
        dir.join(format!("{name}.hea")),
        dir.join(format!("{name}.dat")),
        annotation_path(&dir.join(name), annotator),
        summary_path(dir, name),
    ]
}

/// Path of the summary of record `name` in `dir`.
pub fn summary_path(dir: &Path, name: &str) -> PathBuf {
    dir.join(format!("{name}.session.json"))
}

impl Recorder {
    /// A recorder for record `name` in `dir`; nothing is written before
    /// the first [`Recorder::flush`] (the annotations) or the first
    /// samples (the record).
    pub fn new(dir: &Path, name: &str, annotator: &str) -> Self {
        Self {
            dir: dir.to_path_buf(),
            name: name.to_string(),
            rails: None,
            beats: BeatFile::new(&annotation_path(&dir.join(name), annotator)),
            beats_before: 0,
            beats_far_off: 0,
            horizon: 0,
            rate: None,
            stride: None,
            pending_beats: Vec::new(),
            pending: Vec::new(),
            pending_samples: 0,
            open: None,
            counts: SampleCounts::default(),
            comments: Vec::new(),
        }
    }

    /// Add a line to the record header's comments.
    pub fn comment(&mut self, text: &str) -> io::Result<()> {
        let line = text.replace(['\n', '\r'], " ");
        if let Some(open) = self.open.as_mut() {
            open.writer.comment(&line).map_err(other)?;
        }
        self.comments.push(line);
        Ok(())
    }

    /// The record's rate: the board's over the stride.
    fn record_rate(&self) -> Option<f64> {
        Some(self.rate? / self.stride.unwrap_or(1) as f64)
    }

    /// Record samples that make the longest gap filled.
    fn max_gap(&self) -> u64 {
        (MAX_GAP_S * self.record_rate().unwrap_or(FASTEST_HZ)).ceil() as u64
    }

    /// Fix the record's stride (once), and place the beats that waited.
    fn fix_stride(&mut self, stride: u64) {
        if self.stride.is_some() {
            return;
        }
        self.stride = Some(stride.max(1));
        for peak in std::mem::take(&mut self.pending_beats) {
            self.beat(peak);
        }
    }

    /// A beat at board sample `peak`, annotated at the record's sample
    /// nearest to it.
    fn beat(&mut self, peak: u64) {
        let Some(stride) = self.stride else {
            self.pending_beats.push(peak);
            return;
        };
        let peak = nearest(peak, stride);
        if peak > self.horizon.saturating_add(self.max_gap()) {
            self.beats_far_off += 1;
            return;
        }
        self.horizon = self.horizon.max(peak);
        self.beats.push(peak);
    }

    fn samples(&mut self, start: i64, block: SampleBlock, rate_hz: f64) -> io::Result<()> {
        self.rate.get_or_insert(rate_hz);
        self.fix_stride(u64::from(block.stride));
        if self.open.is_none() {
            self.pending.push((start, block));
            self.pending_samples += u64::from(block.count);
            let rate = self.record_rate().unwrap_or(rate_hz);
            let enough = self.pending_samples as f64 >= SCALE_AFTER_S * rate;
            if self.rails.is_some() || enough {
                self.start_record()?;
            }
            return Ok(());
        }
        self.write_block(start, &block)
    }

    fn start_record(&mut self) -> io::Result<()> {
        let Some(rate) = self.record_rate() else {
            return Ok(());
        };
        let scale = self.rails.unwrap_or_else(|| {
            Scale::from_samples(
                self.pending
                    .iter()
                    .flat_map(|(_, b)| b.raw[..usize::from(b.count)].to_vec()),
            )
        });
        let signals = [
            NewSignal::new("PLETH", "NU", scale.gain, scale.raw_baseline),
            NewSignal::new("PLETH filtered", "NU", scale.gain, 0),
        ];
        let mut writer =
            RecordWriter::create(&self.dir, &self.name, rate, &signals).map_err(other)?;
        for c in &self.comments {
            writer.comment(c).map_err(other)?;
        }
        self.open = Some(Open { writer, scale });
        for (start, block) in std::mem::take(&mut self.pending) {
            self.write_block(start, &block)?;
        }
        // A header as soon as there are samples: the record reads from now on.
        if let Some(open) = self.open.as_mut().filter(|o| o.writer.frames() > 0) {
            open.writer.checkpoint().map_err(other)?;
        }
        Ok(())
    }

    fn write_block(&mut self, start: i64, block: &SampleBlock) -> io::Result<()> {
        let max_gap = self.max_gap();
        let stride = self.stride.unwrap_or(1);
        let Some(open) = self.open.as_mut() else {
            return Ok(());
        };
        let c = &mut self.counts;
        let mut horizon = self.horizon;
        for i in 0..usize::from(block.count).min(block.raw.len()) {
            // Board sample, then record sample.
            let at = match start.checked_add(i as i64 * i64::from(block.stride)) {
                Some(at) if at < 0 => {
                    c.before_record += 1;
                    continue;
                }
                Some(at) => nearest(at as u64, stride),
                None => {
                    c.far_off += 1;
                    continue;
                }
            };
            let next = open.writer.frames();
            if at < next {
                c.repeated += 1;
                continue;
            }
            if at - next > max_gap {
                c.far_off += 1;
                continue;
            }
            for _ in next..at {
                open.writer.push_frame(&[INVALID, INVALID]).map_err(other)?;
                c.missing += 1;
            }
            let (raw, filtered) = (block.raw[i], block.filtered[i]);
            let (r, rc) = open.scale.store_raw(raw);
            let (f, fc) = open.scale.store_filtered(filtered);
            c.clipped += u64::from(rc) + u64::from(fc);
            c.not_finite += u64::from(!raw.is_finite()) + u64::from(!filtered.is_finite());
            open.writer.push_frame(&[r, f]).map_err(other)?;
            c.recorded += 1;
            horizon = horizon.max(at);
        }
        self.horizon = horizon;
        Ok(())
    }

    /// Bring the files up to date: the samples so far with a header
    /// that counts them, the beats so far.
    pub fn flush(&mut self) -> io::Result<()> {
        if let Some(open) = self.open.as_mut() {
            open.writer.checkpoint().map_err(other)?;
        }
        self.beats.flush()
    }

    /// What the files hold (as of the last flush, for the record).
    pub fn written(&self) -> Written {
        Written {
            annotations: self.beats.path().to_path_buf(),
            beats_annotated: self.beats.count() as u64,
            beats_before_record: self.beats_before,
            beats_far_off: self.beats_far_off,
            record: self
                .open
                .as_ref()
                .map(|_| self.dir.join(format!("{}.hea", self.name))),
            record_samples: self.open.as_ref().map_or(0, |o| o.writer.frames()),
            rate_hz: self.record_rate(),
            stride: self.stride.unwrap_or(1),
            scale: self.open.as_ref().map(|o| o.scale),
            samples: self.counts,
        }
    }

    /// Write what is still open: the record's header, the annotations.
    pub fn finish(mut self) -> io::Result<Written> {
        // No hello and no samples: the beats are in board samples.
        self.fix_stride(1);
        if self.open.is_none() && !self.pending.is_empty() {
            self.start_record()?;
        }
        self.flush()?;
        Ok(self.written())
    }
}

impl Sink for Recorder {
    fn event(&mut self, event: &Event) -> io::Result<()> {
        match event {
            Event::Hello(h) => {
                self.fix_stride(u64::from(sample_stride(h.sample_rate_hz)));
                if let Some((lo, hi)) = h.options.rails {
                    self.rails = self.rails.or(Scale::from_rails(lo, hi));
                }
                let [a, b, c] = h.firmware_version;
                self.comment(&format!(
                    "board: firmware {a}.{b}.{c}, {} Hz, {} detector, band {}-{} Hz",
                    h.sample_rate_hz,
                    detector_name(h.options.detector),
                    h.options.band_low_hz,
                    h.options.band_high_hz
                ))?;
            }
            Event::Beat(b) => match b.peak {
                Some(p) => self.beat(p),
                None => self.beats_before += 1,
            },
            Event::Samples {
                start,
                block,
                rate_hz,
            } => self.samples(*start, *block, *rate_hz)?,
            Event::Restart { sample } => self.comment(&format!(
                "the board restarted; its new run starts at sample {sample}"
            ))?,
            _ => {}
        }
        Ok(())
    }
}

fn other(e: plethwire_records::Error) -> io::Error {
    io::Error::other(e.to_string())
}
