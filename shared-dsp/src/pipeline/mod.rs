//! The streaming beat pipeline: one sample in, at most one beat and one
//! state change out.
//!
//! Stages, all causal, with fixed memory and bounded work per sample:
//! input conditioning ([`condition`]: non-finite samples replaced and
//! counted, samples at the ADC rails marked) → the band's upper edge, a
//! Butterworth low-pass at 8 Hz, order 2, at the input rate → decimation to
//! the detector's rate (62.5 to 125 Hz, or the input rate when lower: the
//! band is far below) → the band's lower edge, a Butterworth high-pass at
//! 0.5 Hz, order 2, at the detector's rate (both [`crate::filter::Delta`]
//! sections, settled on the first sample so a DC offset does not ring) →
//! beat detector ([`Elgendi`] or [`Zong`]) → peak placed on the low-passed
//! signal →
//! interval, heart rate, per-beat quality ([`quality`]) → signal state
//! ([`state`]).
//!
//! ```
//! use plethwire_dsp::pipeline::{Config, Pipeline};
//! let mut p = Pipeline::new(Config::new(100.0))?;
//! for n in 0..1000 {
//!     let t = n as f32 / 100.0;
//!     let out = p.push(libm::sinf(2.0 * core::f32::consts::PI * 1.2 * t));
//!     if let Some(beat) = out.beat {
//!         assert!(beat.peak_index <= beat.emitted_at);
//!     }
//! }
//! # Ok::<(), plethwire_dsp::DesignError>(())
//! ```

pub mod condition;
mod elgendi;
pub mod events;
pub mod quality;
pub mod rate;
mod ring;
pub mod state;
mod zong;

pub use condition::Rails;
pub use elgendi::Elgendi;
pub use events::{BeatEvent, BeatFlags, Output, SignalState, StateEvent};
pub use ring::{Ring, RunningSum};
pub use zong::Zong;

use crate::design::{butterworth_highpass, butterworth_lowpass};
use crate::filter::{Cascade, Delta};
use crate::hrv::{HrvStats, HrvWindow};
use crate::math::{max_f32, min_f32};
use crate::DesignError;
use condition::Conditioner;
use quality::{Shape, Template};
use rate::Intervals;
use state::Monitor;

/// Lowest input sample rate accepted, Hz (a phone camera's rate).
pub const MIN_RATE_HZ: f32 = 25.0;
/// Highest input sample rate accepted, Hz.
pub const MAX_RATE_HZ: f32 = 1000.0;
/// The detector runs at the input rate divided by `floor(fs / 62.5)`, so at
/// 62.5 to 125 Hz (or the input rate when lower). Work at the input rate is
/// then one filter section and the conditioning; everything else runs at
/// the detector's rate.
pub const DETECTOR_BASE_HZ: f32 = 62.5;

/// A candidate below this fraction of the running peak level is dropped.
pub const SMALL_FRACTION: f32 = 0.4;
/// A candidate sooner than this fraction of the recent interval after the
/// last beat…
pub const EARLY_FRACTION: f32 = 0.6;
/// …is dropped when below this fraction of the running peak level.
pub const EARLY_LEVEL_FRACTION: f32 = 0.6;

/// A change of the smoothed input within [`STEP_S`] larger than this many
/// pulse heights is a step (finger placed or lifted, a knock): the filters
/// restart from the new level instead of ringing for seconds.
pub const STEP_FACTOR: f32 = 8.0;
/// Time over which a step is measured, seconds.
pub const STEP_S: f32 = 0.1;

/// Candidates dropped as small in a row after which the next is taken as
/// the new peak level.
pub const RELEVEL_AFTER: u32 = 6;

/// Intervals whose median is the reference for plausibility, peak search
/// and pulse windows.
pub const RECENT_INTERVALS: usize = 8;

/// Intervals kept for heart-rate variability (about two minutes at 60 bpm).
pub const HRV_INTERVALS: usize = 128;

/// Detector-rate samples kept for pulse shapes and clipping marks.
const SHAPE_RING: usize = 512;

/// A detected beat before bookkeeping, at the detector's rate.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Candidate {
    /// Detector-rate index of the systolic peak.
    pub peak: u64,
    /// Detector-rate index of the pulse onset, for detectors that find it.
    pub onset: Option<u64>,
    /// Band-passed value at the peak (the detector's own measure).
    pub amplitude: f32,
}

/// Which published beat detector runs.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum DetectorKind {
    /// Elgendi et al. 2013, two event-related moving averages (the default:
    /// it scores best on the shared recordings, see docs/accuracy.md).
    #[default]
    Elgendi,
    /// Zong et al. 2003, slope sum function; also gives the pulse onset.
    Zong,
}

/// Settings with defaults a sensor builder rarely needs to change.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Options {
    /// The beat detector.
    pub detector: DetectorKind,
    /// Band-pass lower edge, Hz.
    pub band_low_hz: f32,
    /// Band-pass upper edge, Hz.
    pub band_high_hz: f32,
    /// ADC rails, if known (`None`: detect flat tops at the extremes).
    pub rails: Option<(f32, f32)>,
    /// Window of the smoothed heart rate, seconds.
    pub hr_window_s: f32,
}

impl Default for Options {
    fn default() -> Self {
        Self {
            detector: DetectorKind::Elgendi,
            band_low_hz: 0.5,
            band_high_hz: 8.0,
            rails: None,
            hr_window_s: 12.0,
        }
    }
}

/// Pipeline configuration: the sample rate and the options.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Config {
    /// Input sample rate, 25 to 1000 Hz.
    pub sample_rate_hz: f32,
    /// Everything else.
    pub options: Options,
}

impl Config {
    /// Defaults for input at `sample_rate_hz`.
    pub fn new(sample_rate_hz: f32) -> Self {
        Self {
            sample_rate_hz,
            options: Options::default(),
        }
    }
}

// No allocation in this crate, so the detectors live inline; the size
// difference (a few hundred bytes) does not matter next to the rings.
#[allow(clippy::large_enum_variant)]
#[derive(Clone, Debug)]
enum Detector {
    Elgendi(Elgendi),
    Zong(Zong),
}

impl Detector {
    fn new(kind: DetectorKind, fd: f32) -> Self {
        match kind {
            DetectorKind::Elgendi => Self::Elgendi(Elgendi::new(fd)),
            DetectorKind::Zong => Self::Zong(Zong::new(fd)),
        }
    }

    fn push(&mut self, y: f32) -> Option<Candidate> {
        match self {
            Self::Elgendi(d) => d.push(y),
            Self::Zong(d) => d.push(y),
        }
    }
}

/// The streaming pipeline.
#[derive(Clone, Debug)]
#[repr(C)]
pub struct Pipeline {
    // Fields touched on every sample first (`repr(C)` keeps the order):
    // on Cortex-M a float load reaches only 1 KB past its base register,
    // so the filters' and counters' state must not sit behind the rings.
    config: Config,
    fs: f32,
    fd: f32,
    decim: u32,
    phase: u32,
    conditioner: Conditioner,
    // Upper band edge at the input rate; its output is also the smoothed
    // signal peaks are placed on.
    lowpass: Cascade<Delta, 1>,
    // Lower band edge at the detector's rate.
    highpass: Cascade<Delta, 1>,
    monitor: Monitor,
    mark: u8,
    started: bool,
    last_good: bool,
    search_before: usize,
    search_after: usize,
    // Detector samples over which a step is measured (STEP_S).
    step_lag: usize,
    // Median of the last RECENT_INTERVALS intervals, kept up to date per
    // beat so the per-sample path never sorts.
    recent_ibi: Option<f32>,
    n: u64,
    t: u64,
    last_peak: Option<u64>,
    // Sub-sample offset of the last peak, input samples.
    last_frac: f32,
    last_value: f32,
    peak_level: Option<f32>,
    // Clipped input samples since the last detector-rate sample.
    clipped_in_block: u32,
    // Candidates dropped as small since the last accepted one.
    dropped_in_row: u32,
    step_level: Option<f32>,
    restarts: u64,
    epoch: u64,
    detector: Detector,
    smoothed: Ring<SHAPE_RING>,
    banded: Ring<SHAPE_RING>,
    marks: Ring<SHAPE_RING, u8>,
    template: Template,
    intervals: Intervals,
    // Every interval, trusted or not: the reference for plausibility, so one
    // odd interval early on cannot lock every later beat out.
    all_intervals: Intervals,
    hrv: HrvWindow<HRV_INTERVALS>,
}

// Per detector-rate sample: bit 0 clipped, bit 1 replaced (not a number).
const MARK_CLIPPED: u8 = 1;
const MARK_REJECTED: u8 = 2;

impl Pipeline {
    /// A pipeline for `config`; refuses rates outside 25 to 1000 Hz and
    /// bands the design refuses.
    pub fn new(config: Config) -> Result<Self, DesignError> {
        let fs = config.sample_rate_hz;
        if !(MIN_RATE_HZ..=MAX_RATE_HZ).contains(&fs) {
            return Err(DesignError::InvalidSampleRate);
        }
        let o = &config.options;
        if !(o.hr_window_s.is_finite() && o.hr_window_s > 0.0) {
            return Err(DesignError::NonPositiveCorner);
        }
        let decim = max_f32(libm::floorf(fs / DETECTOR_BASE_HZ), 1.0) as u32;
        let fd = fs / decim as f32;
        let fs64 = fs as f64;
        if o.band_low_hz.partial_cmp(&o.band_high_hz) != Some(core::cmp::Ordering::Less) {
            return Err(DesignError::BandEdgesReversed);
        }
        // The band as a low-pass at the input rate and a high-pass at the
        // detector's rate: a band-pass of the same four poles, but only one
        // section runs per input sample. The low-pass also keeps the
        // pulse's shape for placing peaks, without ADC noise or steps.
        let lowpass = butterworth_lowpass(2, o.band_high_hz as f64, fs64)?.cascade()?;
        let highpass = butterworth_highpass(2, o.band_low_hz as f64, fd as f64)?.cascade()?;
        let rails = match o.rails {
            Some((low, high)) => Rails::Known { low, high },
            None => Rails::Auto,
        };
        let detector = Detector::new(o.detector, fd);
        Ok(Self {
            config,
            fs,
            fd,
            decim,
            phase: 0,
            conditioner: Conditioner::new(rails, fs),
            lowpass,
            highpass,
            smoothed: Ring::new(),
            banded: Ring::new(),
            marks: Ring::new(),
            mark: 0,
            detector,
            search_before: libm::roundf(0.05 * fd) as usize,
            search_after: libm::roundf(0.25 * fd) as usize,
            step_lag: (libm::roundf(STEP_S * fd) as usize).max(1),
            template: Template::new(),
            intervals: Intervals::new(),
            all_intervals: Intervals::new(),
            recent_ibi: None,
            monitor: Monitor::new(fs),
            n: 0,
            t: 0,
            started: false,
            last_peak: None,
            last_frac: 0.0,
            last_good: false,
            last_value: 0.0,
            peak_level: None,
            clipped_in_block: 0,
            dropped_in_row: 0,
            step_level: None,
            restarts: 0,
            epoch: 0,
            hrv: HrvWindow::new(),
        })
    }

    /// The configuration.
    pub fn config(&self) -> &Config {
        &self.config
    }

    /// Input samples seen.
    pub fn samples(&self) -> u64 {
        self.n
    }

    /// Non-finite input samples replaced so far.
    pub fn rejected_samples(&self) -> u64 {
        self.conditioner.rejected()
    }

    /// Input samples marked clipped so far.
    pub fn clipped_samples(&self) -> u64 {
        self.conditioner.clipped()
    }

    /// The signal's current state.
    pub fn state(&self) -> SignalState {
        self.monitor.state()
    }

    /// Time-domain HRV (Task Force of the ESC and NASPE 1996) over the last
    /// [`HRV_INTERVALS`] intervals. An interval counts as normal-to-normal
    /// only when the beats at both its ends are good.
    pub fn hrv(&self) -> HrvStats {
        self.hrv.stats()
    }

    /// As [`Self::hrv`], over the newest intervals spanning `span_ms`.
    pub fn hrv_recent(&self, span_ms: f32) -> HrvStats {
        self.hrv.stats_recent_ms(span_ms)
    }

    /// The detector's rate, Hz.
    pub fn detector_rate_hz(&self) -> f32 {
        self.fd
    }

    /// Feed one input sample. Never fails.
    pub fn push(&mut self, x: f32) -> Output {
        let c = self.conditioner.push(x);
        if !self.started {
            // Start as if this value had always been there: no transient.
            let rest = self.lowpass.settle(c.value);
            self.highpass.settle(rest);
            self.started = true;
        }
        self.last_value = c.value;
        let s = self.lowpass.process(c.value);
        if c.clipped {
            self.mark |= MARK_CLIPPED;
            self.clipped_in_block += 1;
        }
        if c.rejected {
            self.mark |= MARK_REJECTED;
        }
        let n = self.n;
        self.n += 1;
        self.phase += 1;
        if self.phase < self.decim {
            return Output::default();
        }
        self.phase = 0;
        let mut out = Output {
            beat: None,
            state: self
                .monitor
                .block(n, self.clipped_in_block, self.decim, self.recent_ibi),
        };
        self.clipped_in_block = 0;
        if let Some(e) = out.state {
            if e.state == SignalState::NoSignal {
                // The finger may come back elsewhere: start afresh.
                self.template.reset();
                self.last_peak = None;
                self.last_good = false;
            }
        }
        let y = if self.is_step(s) {
            self.restart(s)
        } else {
            self.highpass.process(s)
        };
        self.smoothed.push(s);
        self.banded.push(y);
        self.marks.push(self.mark);
        self.mark = 0;
        let now = self.t;
        self.t += 1;
        if let Some(mut cand) = self.detector.push(y) {
            // Detectors count from their own start; make indices global.
            cand.peak += self.epoch;
            cand.onset = cand.onset.map(|o| o + self.epoch);
            let peak_d = self.locate_peak(now, cand.peak);
            let height = self.pulse_height(now, peak_d);
            if self.accept(self.to_input(peak_d), height) {
                out.beat = Some(self.beat(&cand, peak_d, height, now, n));
            }
        }
        out
    }

    /// Has the smoothed input jumped by many pulse heights?
    fn is_step(&self, s: f32) -> bool {
        let lag = self.step_lag;
        // The last known pulse height, kept across restarts so the step
        // back (finger replaced) is caught as well as the step away.
        match self.step_level {
            Some(level) if self.smoothed.len() > lag => {
                (s - self.smoothed.at(lag - 1)).abs() > STEP_FACTOR * level
            }
            _ => false,
        }
    }

    /// Start the high-pass and the detector again from low-passed level
    /// `s`; returns the band-passed output at rest.
    fn restart(&mut self, s: f32) -> f32 {
        let rest = self.highpass.settle(s);
        self.detector = Detector::new(self.config.options.detector, self.fd);
        self.epoch = self.t;
        self.peak_level = None;
        self.last_peak = None;
        self.last_good = false;
        self.template.reset();
        self.restarts += 1;
        rest
    }

    /// Times the filters restarted after a step in the input.
    pub fn restarts(&self) -> u64 {
        self.restarts
    }

    /// Drop what is not a systolic peak: a bump much smaller than recent
    /// beats, or a small one soon after a beat (the diastolic wave, which
    /// gets a block of its own when the heart is slow). In the manner of the
    /// signal-peak level of J. Pan, W. J. Tompkins, "A real-time QRS
    /// detection algorithm", IEEE Trans. Biomed. Eng. 32(3):230–236, 1985
    /// (running level updated by 1/8 of each accepted peak).
    fn accept(&mut self, peak: u64, a: f32) -> bool {
        if a.is_nan() || a <= 0.0 {
            return false;
        }
        let Some(level) = self.peak_level else {
            self.peak_level = Some(a);
            self.step_level = Some(a);
            self.dropped_in_row = 0;
            return true;
        };
        let since_ms = self
            .last_peak
            .map(|p| peak.saturating_sub(p) as f32 * 1000.0 / self.fs);
        let median = self.recent_ibi;
        let early = match (since_ms, median) {
            (Some(s), Some(m)) => s < EARLY_FRACTION * m,
            _ => false,
        };
        let small = a < SMALL_FRACTION * level;
        let too_small_for_early = early && a < EARLY_LEVEL_FRACTION * level;
        if small || too_small_for_early {
            // A level set by an artefact would lock every real pulse out:
            // after a run of small ones in a row, take this one as the new
            // level (the search-back idea of Pan and Tompkins).
            self.dropped_in_row += 1;
            if small && !early && self.dropped_in_row >= RELEVEL_AFTER {
                // The step reference stays: a lower one would take pulses
                // for steps.
                self.dropped_in_row = 0;
                self.peak_level = Some(a);
                return true;
            }
            return false;
        }
        self.dropped_in_row = 0;
        // Follow the level both ways, but let one huge artefact move it
        // only by a bounded step.
        self.peak_level = Some(level + 0.125 * (min_f32(a, 4.0 * level) - level));
        self.step_level = self.peak_level;
        true
    }

    /// At the end of a recording: feed the last value again for long
    /// enough to close any beat still open, and hand over the beats whose
    /// peaks lie within the recording. A live stream never calls this.
    pub fn finish(&mut self, mut emit: impl FnMut(BeatEvent)) {
        let end = self.n;
        let flush = (1.5 * self.fs) as u64;
        let v = self.last_value;
        for _ in 0..flush {
            if let Some(b) = self.push(v).beat {
                if b.peak_index < end {
                    emit(b);
                }
            }
        }
    }

    fn to_input(&self, detector_index: u64) -> u64 {
        let k = self.decim as u64;
        detector_index * k + k - 1
    }

    /// Where between samples the peak at `age` lies, in detector samples
    /// (−½ to ½, later positive), from the parabola through it and its two
    /// neighbours: at 25–50 Hz a whole-sample peak would put up to ±20 ms of
    /// jitter into every interval.
    fn peak_offset(&self, age: usize) -> f32 {
        if age == 0 || age + 1 >= self.smoothed.len() {
            return 0.0;
        }
        let (older, mid, newer) = (
            self.smoothed.at(age + 1),
            self.smoothed.at(age),
            self.smoothed.at(age - 1),
        );
        let curvature = older - 2.0 * mid + newer;
        if curvature < 0.0 {
            (0.5 * (older - newer) / curvature).clamp(-0.5, 0.5)
        } else {
            0.0
        }
    }

    /// Foot-to-peak height on the smoothed input: the lowest point since
    /// the last beat's peak (at most 60 % of an interval back). Unlike the
    /// band-passed value it does not ride with baseline wander, and a
    /// diastolic wave measures only its rise from the dicrotic notch.
    fn pulse_height(&self, now: u64, peak_d: u64) -> f32 {
        let age = (now - peak_d) as usize;
        let period = self.recent_ibi.unwrap_or(800.0) * self.fd / 1000.0;
        let mut back = libm::roundf(0.6 * period) as usize;
        if let Some(last) = self.last_peak {
            let last_age = now.saturating_sub(last / self.decim as u64) as usize;
            if last_age > age {
                back = back.min(last_age - age);
            }
        }
        let oldest = (age + back).min(self.smoothed.len().saturating_sub(1));
        let mut foot = f32::INFINITY;
        for a in age..=oldest.max(age) {
            foot = min_f32(foot, self.smoothed.at(a));
        }
        self.smoothed.at(age) - foot
    }

    fn beat(&mut self, cand: &Candidate, peak_d: u64, height: f32, now: u64, n: u64) -> BeatEvent {
        let peak = self.to_input(peak_d);
        let frac = self.peak_offset((now - peak_d) as usize) * self.decim as f32;
        let mut flags = 0u8;
        let median = self.recent_ibi;
        let ibi = match self.last_peak {
            Some(p) if peak > p => {
                Some(((peak - p) as f32 + frac - self.last_frac) * 1000.0 / self.fs)
            }
            _ => None,
        };
        match ibi {
            None => flags |= BeatFlags::NO_INTERVAL,
            Some(i) if !rate::plausible(i, median) => flags |= BeatFlags::IMPLAUSIBLE_INTERVAL,
            Some(_) => {}
        }
        // The pulse's window: 30 % of an interval before the peak, 20 % after.
        // Until good intervals exist, the last interval sets the window:
        // a fixed guess would span several pulses at fast rates, and no
        // pulse would ever match (so none would ever be good).
        let period = median.or(ibi).unwrap_or(800.0) * self.fd / 1000.0;
        if let Some(i) = ibi {
            self.all_intervals.push(i, peak);
            self.recent_ibi = self.all_intervals.recent_median(RECENT_INTERVALS);
        }
        let age = (now - peak_d) as f32;
        let from = min_f32(age + 0.3 * period, (self.banded.len().max(2) - 2) as f32);
        let to = max_f32(age - 0.2 * period, 0.0);
        for a in (libm::floorf(to) as usize)..=(libm::ceilf(from) as usize) {
            let m = self.marks.at(a);
            if m & MARK_CLIPPED != 0 {
                flags |= BeatFlags::CLIPPED;
            }
            if m & MARK_REJECTED != 0 {
                flags |= BeatFlags::INPUT_REJECTED;
            }
        }
        let shape = Shape::capture(|a| self.banded.at(a), from, to);
        let quality = match &shape {
            Some(s) => {
                let (r, low) = self.template.judge(s);
                if low {
                    flags |= BeatFlags::LOW_CORRELATION;
                }
                r
            }
            None => {
                flags |= BeatFlags::LOW_CORRELATION;
                0.0
            }
        };
        let beat_flags = BeatFlags(flags);
        // The template follows every clean pulse, even one that correlates
        // poorly, as the paper's window average does: a slowly changing pulse
        // shape must not lock the template out.
        let clean = flags
            & (BeatFlags::CLIPPED | BeatFlags::INPUT_REJECTED | BeatFlags::IMPLAUSIBLE_INTERVAL)
            == 0;
        if clean {
            if let Some(s) = &shape {
                self.template.learn(s);
            }
        }
        if beat_flags.is_good() {
            if let Some(i) = ibi {
                self.intervals.push(i, peak);
            }
        }
        self.monitor.beat(peak, beat_flags.is_good());
        match ibi {
            Some(i) => self.hrv.push(i, beat_flags.is_good() && self.last_good),
            // No interval (signal lost, filters restarted): a bad entry, so
            // no successive difference is formed across the gap.
            None if !self.hrv.is_empty() => self.hrv.push(f32::NAN, false),
            None => {}
        }
        self.last_good = beat_flags.is_good();
        self.last_peak = Some(peak);
        self.last_frac = frac;
        let window = (self.config.options.hr_window_s * self.fs) as u64;
        let smoothed = self
            .intervals
            .median_since(peak.saturating_sub(window))
            .map(|(m, _)| 60_000.0 / m);
        BeatEvent {
            peak_index: peak,
            onset_index: cand.onset.map(|o| self.to_input(o)),
            emitted_at: n,
            ibi_ms: ibi,
            hr_bpm: ibi.map(|i| 60_000.0 / i),
            hr_smoothed_bpm: smoothed,
            amplitude: height,
            quality,
            flags: beat_flags,
        }
    }

    /// The systolic peak on the smoothed signal near the detector's peak:
    /// the band-pass moves a peak earlier by up to ~100 ms.
    fn locate_peak(&self, now: u64, detected: u64) -> u64 {
        let age = (now - detected) as usize;
        // Never reach into the next pulse at fast rates.
        let after = self
            .all_intervals
            .recent_median(8)
            .map_or(self.search_after, |m| {
                (libm::roundf(0.35 * m * self.fd / 1000.0) as usize).min(self.search_after)
            });
        let newest = age.saturating_sub(after);
        let oldest = (age + self.search_before).min(self.smoothed.len().saturating_sub(1));
        let mut best_age = age.min(oldest);
        let mut best = f32::NEG_INFINITY;
        for a in newest..=oldest.max(newest) {
            let v = self.smoothed.at(a);
            if v > best {
                best = v;
                best_age = a;
            }
        }
        now - best_age as u64
    }
}
