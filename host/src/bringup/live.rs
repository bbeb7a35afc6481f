//! The bring-up checks, live: fed what `plethwire listen` decodes (the
//! hello, the sample blocks, the status frames; `LiveChecks::event`, in
//! `listen`, takes its events), [`LiveChecks`] keeps the
//! last [`WINDOW_S`] of input samples and the LED drive's history, and
//! once every [`REPORT_EVERY_S`] of samples gives a [`Report`]: the seven
//! checks, the gauges and, with a circuit file, the advice that names the
//! part (`frontend::advice`).
//!
//! The ADC range is decided from what the board says, never guessed
//! (`report.rs`): a real ADC of `adc_bits` bits reads the ambient-cancelled
//! input `−(on − off)` in codes from 0 to 2^bits − 1; the emulated board
//! (no ADC, a recording fed through it) has only the hello's rails, and
//! with none the checks that need a range say they cannot be made. The
//! pulse (perfusion's AC, the bits, the gauges) is the peak to peak of the
//! band-passed trace the board sends beside the input, so the input's
//! slow drift does not count as pulse; without that trace, the input's.
//!
//! Time is the board's sample numbers, not the wall clock, so a report
//! comes once a second of input at the live rate and the same stream
//! always gives the same reports.

mod fit;
mod report;
#[cfg(test)]
mod tests;
mod window;

pub use fit::{circuit_mismatch, MISMATCH_NOTE};
pub use report::{CheckLine, Gauges, Report, CHECK_NAMES};

use crate::frontend::Circuit;
use plethwire_dsp::wire::{Hello, SampleBlock, Status};
use window::Window;

/// Seconds of samples the checks look back on.
pub const WINDOW_S: f64 = 10.0;
/// Seconds of samples between two reports.
pub const REPORT_EVERY_S: f64 = 1.0;
/// A gap in the samples (lost frames) up to this long is bridged by
/// holding the last value; a longer one starts the window afresh.
pub const BRIDGE_S: f64 = 1.0;

/// What the board's hello says about its input.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct BoardInfo {
    /// Input sample rate, Hz.
    pub rate_hz: Option<f64>,
    /// The input's rails `(low, high)` in input units, when known.
    pub rails: Option<(f64, f64)>,
    /// Bits of its ADC: `Some(0)` no ADC (the emulated board fed a
    /// recording), `None` not said (no hello yet).
    pub adc_bits: Option<u8>,
}

impl BoardInfo {
    /// From a hello.
    pub fn of(h: &Hello) -> BoardInfo {
        BoardInfo {
            rate_hz: Some(f64::from(h.sample_rate_hz)),
            rails: h
                .options
                .rails
                .map(|(lo, hi)| (f64::from(lo), f64::from(hi))),
            adc_bits: Some(h.adc_bits),
        }
    }
}

/// What one status frame measured; `None` where the board did not
/// measure it.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct Levels {
    /// LED drive, share of full drive (0 to 1).
    pub led_drive: Option<f64>,
    /// DC level of the LED-on reading, share of ADC full scale.
    pub dc_level: Option<f64>,
    /// The LED-off reading's slow average, share of ADC full scale.
    pub ambient_level: Option<f64>,
    /// Readings at the ADC's rails since the board started.
    pub clipped_samples: Option<u32>,
}

impl Levels {
    /// From a status frame, each field only where its measured bit is set.
    pub fn of(s: &Status) -> Levels {
        Levels {
            led_drive: s.led_drive_measured().map(|d| f64::from(d) / 65_535.0),
            dc_level: s.dc_level_measured().map(f64::from),
            ambient_level: s.ambient_level_measured().map(f64::from),
            clipped_samples: Some(s.clipped_samples),
        }
    }
}

/// Input samples between two block samples.
fn stride(b: &SampleBlock) -> u64 {
    u64::from(b.stride.max(1))
}

/// One LED drive seen, at an input sample number.
#[derive(Clone, Copy, Debug, PartialEq)]
struct DriveSeen {
    at: i64,
    drive: f64,
}

/// Keeps the entries from the last one before `from` on.
fn keep_from<T>(list: &mut Vec<T>, from: i64, at: impl Fn(&T) -> i64) {
    let old = list.iter().filter(|d| at(d) < from).count();
    list.drain(..old.saturating_sub(1));
}

/// The live checks of one listening session.
#[derive(Debug)]
pub struct LiveChecks {
    board: BoardInfo,
    window: Window,
    levels: Option<Levels>,
    /// The drive's changes (and the first drive seen), oldest first.
    drives: Vec<DriveSeen>,
    /// The board's count of clipped readings at each status.
    clip_counts: Vec<(i64, u32)>,
    circuit: Option<Circuit>,
    max_drive: Option<f64>,
    next_report: Option<i64>,
    latest: Option<Report>,
}

impl LiveChecks {
    /// Checks with no circuit: no advice.
    pub fn new() -> LiveChecks {
        LiveChecks {
            board: BoardInfo::default(),
            window: Window::default(),
            levels: None,
            drives: Vec::new(),
            clip_counts: Vec::new(),
            circuit: None,
            max_drive: None,
            next_report: None,
            latest: None,
        }
    }

    /// Checks that give advice through `circuit` (the circuit file), with
    /// the board's cap on its LED drive, share of full drive
    /// (`ExposureConfig::max_drive`), when known.
    pub fn with_circuit(circuit: Circuit, max_drive: Option<f64>) -> LiveChecks {
        LiveChecks {
            circuit: Some(circuit),
            max_drive,
            ..LiveChecks::new()
        }
    }

    /// A sample block as the board sent it, its first sample at record
    /// sample `start`; returns a report when one is due. (`listen`'s
    /// events go in through `LiveChecks::event`, in `listen`.)
    pub fn sample_block(
        &mut self,
        start: i64,
        block: &SampleBlock,
        rate_hz: f64,
    ) -> Option<Report> {
        let n = usize::from(block.count).min(block.raw.len());
        let (raw, filtered) = (&block.raw[..n], &block.filtered[..n]);
        self.samples_with(start, raw, filtered, stride(block), rate_hz)
    }

    /// What the board's hello said.
    pub fn board(&mut self, info: BoardInfo) {
        self.board = info;
    }

    /// What a status frame measured, at the newest sample.
    pub fn status(&mut self, levels: Levels) {
        let at = self.window.next.map_or(0, |(at, _)| at);
        // Only the entry before the window and those in it matter.
        let from = at - (WINDOW_S * self.window.rate_hz) as i64;
        if let Some(drive) = levels.led_drive {
            if self.drives.last().is_none_or(|d| d.drive != drive) {
                self.drives.push(DriveSeen { at, drive });
            }
            keep_from(&mut self.drives, from, |d| d.at);
        }
        if let Some(n) = levels.clipped_samples {
            // A count that fell: the board restarted.
            if self.clip_counts.last().is_some_and(|(_, last)| n < *last) {
                self.clip_counts.clear();
            }
            self.clip_counts.push((at, n));
            keep_from(&mut self.clip_counts, from, |c| c.0);
        }
        self.levels = Some(levels);
    }

    /// The board's clipped share over the statuses of the window, when
    /// they span at least a second.
    fn board_clipped(&self) -> Option<f64> {
        let (&(a, n0), &(b, n1)) = (self.clip_counts.first()?, self.clip_counts.last()?);
        let span = b - a;
        (span as f64 >= self.window.rate_hz).then(|| (f64::from(n1 - n0) / span as f64).min(1.0))
    }

    /// Input samples `raw` from record sample `start`, one every `stride`
    /// input samples at `rate_hz`, without their band-passed trace;
    /// returns a report when one is due.
    pub fn samples(
        &mut self,
        start: i64,
        raw: &[f32],
        stride: u64,
        rate_hz: f64,
    ) -> Option<Report> {
        self.samples_with(start, raw, &[], stride, rate_hz)
    }

    /// As [`LiveChecks::samples`], with the band-passed trace the board
    /// sends beside the input (`filtered`, as long as `raw`): the pulse is
    /// then its peak to peak, free of the input's slow drift.
    pub fn samples_with(
        &mut self,
        start: i64,
        raw: &[f32],
        filtered: &[f32],
        stride: u64,
        rate_hz: f64,
    ) -> Option<Report> {
        if raw.is_empty() || !rate_hz.is_finite() || rate_hz <= 0.0 {
            return None;
        }
        let stride = stride.max(1);
        self.window.push(start, raw, filtered, stride, rate_hz);
        let (end, _) = self.window.next?;
        let every = (REPORT_EVERY_S * rate_hz).round() as i64;
        let due = *self.next_report.get_or_insert(start + every);
        if end < due && end >= due - 2 * every {
            return None;
        }
        self.next_report = Some(end + every);
        let report = self.report(end);
        self.latest = Some(report.clone());
        Some(report)
    }

    /// The latest report, if any.
    pub fn latest(&self) -> Option<&Report> {
        self.latest.as_ref()
    }

    fn report(&self, end: i64) -> Report {
        let samples: Vec<f64> = self.window.raw.iter().copied().collect();
        let filtered = self.window.filtered();
        let rate = self.window.block_rate();
        let facts = report::Facts {
            samples: &samples,
            filtered: filtered.as_deref(),
            rate_hz: rate,
            end_s: end as f64 / self.window.rate_hz,
            board: self.board,
            levels: self.levels.unwrap_or_default(),
            status_seen: self.levels.is_some(),
            board_clipped: self.board_clipped(),
            settling: self.settling_series(end, rate),
        };
        let mut r = Report::of(&facts);
        if let Some(c) = &self.circuit {
            r.advice = fit::advice(c, &self.board, &r.gauges, self.max_drive);
            r.mismatch = circuit_mismatch(c, &self.board);
        }
        r
    }

    /// The LED drive held between the status frames, at the block rate,
    /// from the first drive seen (or the window's start) to `end`.
    fn settling_series(&self, end: i64, rate: f64) -> Vec<f64> {
        let Some(first) = self.drives.first() else {
            return Vec::new();
        };
        let step = (self.window.rate_hz / rate).max(1.0) as i64;
        let from = first
            .at
            .max(end - (WINDOW_S * self.window.rate_hz) as i64 - step);
        let mut k = 0;
        (0..=(end - from) / step)
            .map(|i| {
                let at = from + i * step;
                while k + 1 < self.drives.len() && self.drives[k + 1].at <= at {
                    k += 1;
                }
                self.drives[k].drive
            })
            .collect()
    }
}

impl Default for LiveChecks {
    fn default() -> Self {
        LiveChecks::new()
    }
}
