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
//! ([`state`]). With an accelerometer ([`MotionPipeline`]: the pipeline and
//! a [`MotionTracker`]), beats that cannot be told apart from strong motion
//! are flagged too ([`motion`]); [`Pipeline::push`] itself judges against
//! [`NoMotion`], which is compiled away.
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
pub mod detector;
mod elgendi;
pub mod events;
pub mod motion;
pub mod quality;
pub mod rate;
mod ring;
pub mod scale;
pub mod state;
mod with_motion;
mod zong;

pub use condition::Rails;
pub use detector::{Candidate, Detector, DetectorKind};
pub use elgendi::Elgendi;
pub use events::{BeatEvent, BeatFlags, Output, SignalState, StateEvent};
pub use motion::{MotionReference, MotionTracker, NoMotion, Verdict};
pub use ring::{History, Ring, RunningSum};
pub use with_motion::MotionPipeline;
pub use zong::Zong;

use crate::design::{butterworth_highpass, butterworth_lowpass};
use crate::filter::{Cascade, Delta};
use crate::hrv::{HrvStats, HrvWindow};
use crate::math::{max_f32, min_f32};
use crate::DesignError;
use condition::Conditioner;
use detector::AnyDetector;
use quality::{Shape, Template};
use rate::Intervals;
use scale::{Change, Scale};
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
/// Premature beats in ICU records reach 20-45 % of the running level and
/// are real beats (scored against the ECG); below 30 % the synthetic
/// grid's slow pulses' late diastolic wave gets through.
pub const SMALL_FRACTION: f32 = 0.3;
/// A candidate sooner than this fraction of the recent interval after the
/// last beat…
pub const EARLY_FRACTION: f32 = 0.6;
/// …and sooner than this, ms, (a diastolic wave follows its systolic peak
/// within well under a second at any heart rate, common practice; a
/// median interval learnt while every other beat was missed must not make
/// those beats early for ever)…
pub const EARLY_MAX_MS: f32 = 1000.0;
/// …is dropped when below this fraction of the running peak level
/// (diastolic waves come early; premature beats that early are kept when
/// this large, and flagged by their interval). The gates were tuned on
/// every shared dataset, the synthetic grid and the recovery property at
/// once.
pub const EARLY_LEVEL_FRACTION: f32 = 0.35;

/// Time over which a step is measured, seconds (the size that makes a
/// step is in [`scale`]).
pub const STEP_S: f32 = 0.1;

/// Small candidates in a row, of like height, after which the last is
/// taken as a beat and as the new peak level: a level set by an artefact,
/// or a pulse that shrank, must not lock real pulses out for long.
pub const RELEVEL_AFTER: u32 = 2;

/// After a restart (a step, a collapse, silence), candidates below the
/// old peak level divided by this are not pulses (noise on a lifted
/// finger); while there is no signal the floor sinks (see
/// [`FLOOR_HALF_S`]), so it cannot lock a smaller pulse out for long.
pub const FLOOR_DIVISOR: f32 = 30.0;

/// Candidates below the level floor in a row, at a steady rate and of like
/// height, that are a pulse after all and lift the floor: noise is neither
/// steady nor of like height, a pulse smaller than the one the floor was
/// learnt from (or than an artefact taken for a pulse) is both.
pub const FLOOR_RUN: usize = 3;

/// A candidate below the floor counts towards such a run only when its
/// height is at least this many times the input's mean sample-to-sample
/// change (white noise's is about 1.1 standard deviations; a band-passed
/// noise bump is about as high, a pulse many times higher at any rate
/// from 25 Hz).
pub const SMOOTH_RATIO: f32 = 3.0;

/// Input time over which that change is measured, seconds…
pub const ROUGH_S: f32 = 0.5;
/// …and at most this many samples of it (white noise needs no more; the
/// work stays small at high rates).
pub const ROUGH_SAMPLES: usize = 64;

/// The intervals of such a run lie within this ratio of each other.
pub const FLOOR_RUN_STEADY: f32 = 1.2;

/// While there is no signal, the floor halves every this many seconds.
pub const FLOOR_HALF_S: f32 = 4.0;

/// Two small candidates are of like height when neither is more than this
/// many times the other.
pub const RELEVEL_LIKE: f32 = 2.0;

/// Frequency at which the low-pass's group delay is taken to move peaks
/// and onsets back to where they are in the input, Hz: a pulse's
/// fundamental (72 bpm), where the systolic upstroke's energy is.
pub const DELAY_AT_HZ: f32 = 1.2;

/// A candidate this soon after the last beat is the same pulse found
/// again, ms (three quarters of the shortest plausible interval).
pub const DUPLICATE_MS: f32 = 0.75 * rate::MIN_IBI_MS;

/// Group delay, seconds, of a second-order Butterworth low-pass with
/// corner `corner_hz` at `at_hz`: for H(s) = ωc² / (s² + √2·ωc·s + ωc²),
/// τ(ω) = √2·ωc·(ωc² + ω²) / ((ωc² − ω²)² + 2·ωc²·ω²) (the analog
/// prototype; the bilinear transform changes it by far less than a sample
/// at corners well below the sample rate, and no trigonometry is needed on
/// the chip).
fn butterworth2_delay_s(corner_hz: f32, at_hz: f32) -> f32 {
    let wc = 2.0 * core::f32::consts::PI * corner_hz;
    let w = 2.0 * core::f32::consts::PI * at_hz;
    let (wc2, w2) = (wc * wc, w * w);
    core::f32::consts::SQRT_2 * wc * (wc2 + w2) / ((wc2 - w2) * (wc2 - w2) + 2.0 * wc2 * w2)
}

/// Intervals whose median is the reference for plausibility, peak search
/// and pulse windows.
pub const RECENT_INTERVALS: usize = 8;

/// Intervals kept for heart-rate variability (about two minutes at 60 bpm).
pub const HRV_INTERVALS: usize = 128;

/// Detector-rate samples kept for pulse shapes and clipping marks (2 s at
/// 125 Hz: a 30 bpm pulse's foot and shape, at the latest it is judged).
const SHAPE_RING: usize = 256;

/// Input samples kept to place each peak on the input itself (0.5 s at
/// 1000 Hz, 2 s at 250 Hz: longer than an event's latency at the usual
/// rates; beyond it the delay-compensated smoothed peak stands).
const INPUT_RING: usize = 512;

/// Half-width of the search for the input's maximum around the
/// delay-compensated smoothed peak, seconds: the low-pass leans an
/// asymmetric pulse's peak later by up to ~30 ms beyond its group delay.
pub const PEAK_REFINE_S: f32 = 0.04;

/// The peak is where the input first comes within this fraction of the
/// pulse height of its maximum (about one ADC step of a typical pulse): a
/// flat or slowly rising top, common in finger pulses with a late
/// systolic shoulder, would otherwise put the peak at its far end.
pub const TOP_FRACTION: f32 = 0.005;

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
    scale: Scale,
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
    // Input index of the last beat's smoothed peak, for intervals.
    last_at: Option<u64>,
    // Sub-sample offset of the last upstroke (interval fiducial), input samples.
    last_frac: f32,
    // Group delay of the low-pass near the pulse's fundamental, input
    // samples: subtracted so peaks and onsets are those of the input.
    lowpass_delay: f32,
    last_value: f32,
    peak_level: Option<f32>,
    // Clipped input samples since the last detector-rate sample.
    clipped_in_block: u32,
    // Candidates dropped as small since the last accepted one, and the
    // height of the last of them.
    dropped_in_row: u32,
    dropped_height: f32,
    // Detector index after which, without a beat or a restart since, the
    // pipeline starts afresh; and that span (twice the silence limit).
    lost_at: u64,
    lost_after: u64,
    // The last candidates below the level floor in a row (input index of
    // the peak, height), oldest first, and how many are held.
    under: [(u64, f32); FLOOR_RUN],
    under_floor: usize,
    // Detector index of the last restart.
    restarted_at: u64,
    // Smallest candidate height that may count, set at a restart from the
    // trusted level (0: none).
    level_floor: f32,
    // The gate's level while the signal was good (trusted pulses), since
    // the last restart took it for the floor.
    trusted_level: Option<f32>,
    // The last beat was good and had an interval (since the last restart).
    last_timed_good: bool,
    // Factor per detector sample that halves the floor in FLOOR_HALF_S.
    floor_decay: f32,
    restarts: u64,
    epoch: u64,
    detector: AnyDetector,
    smoothed: Ring<SHAPE_RING>,
    banded: Ring<SHAPE_RING>,
    marks: Ring<SHAPE_RING, u8>,
    template: Template,
    intervals: Intervals,
    // Every interval, trusted or not: the reference for plausibility, so one
    // odd interval early on cannot lock every later beat out.
    all_intervals: Intervals,
    hrv: HrvWindow<HRV_INTERVALS>,
    input: History<INPUT_RING>,
    refine: usize,
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
        let lowpass_delay = butterworth2_delay_s(o.band_high_hz, DELAY_AT_HZ) * fs;
        // Whole detector samples: `t - since > lost_after` is then the same
        // test as against the exact span.
        let lost_after = libm::floorf(2.0 * state::SILENCE_S * fd) as u64;
        let highpass = butterworth_highpass(2, o.band_low_hz as f64, fd as f64)?.cascade()?;
        let rails = match o.rails {
            Some((low, high)) => Rails::Known { low, high },
            None => Rails::Auto,
        };
        let detector = AnyDetector::new(o.detector, fd);
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
            scale: Scale::new(fd),
            n: 0,
            t: 0,
            started: false,
            last_peak: None,
            last_at: None,
            last_frac: 0.0,
            lowpass_delay,
            last_good: false,
            last_value: 0.0,
            peak_level: None,
            clipped_in_block: 0,
            dropped_in_row: 0,
            dropped_height: 0.0,
            lost_at: lost_after,
            lost_after,
            restarted_at: 0,
            level_floor: 0.0,
            trusted_level: None,
            last_timed_good: false,
            under: [(0, 0.0); FLOOR_RUN],
            under_floor: 0,
            // 1 − ln 2 / n: halves in n samples to within 0.3 % (n ≥ 100).
            floor_decay: 1.0 - core::f32::consts::LN_2 / (FLOOR_HALF_S * fd),
            restarts: 0,
            epoch: 0,
            hrv: HrvWindow::new(),
            input: History::new(),
            refine: (libm::roundf(PEAK_REFINE_S * fs) as usize).max(1),
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
        self.push_with(x, &NoMotion)
    }

    /// [`Self::push`], a beat it completes judged against `motion` too
    /// ([`BeatFlags::MOTION`]). The motion never changes which beats are
    /// found or their intervals, only their flags (and so the smoothed heart
    /// rate, HRV and signal state, which follow good beats).
    #[inline(always)]
    pub fn push_with<M: MotionReference>(&mut self, x: f32, motion: &M) -> Output {
        let c = self.conditioner.push(x);
        if !self.started {
            // Start as if this value had always been there: no transient.
            let rest = self.lowpass.settle(c.value);
            self.highpass.settle(rest);
            self.started = true;
        }
        self.last_value = c.value;
        self.input.put(self.n, c.value);
        let mut s = self.lowpass.process(c.value);
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
        let jump = if self.smoothed.len() >= self.step_lag {
            s - self.smoothed.at(self.step_lag - 1)
        } else {
            0.0
        };
        let change = self.scale.push(s, jump);
        // Without a beat for twice the silence limit (longer than any
        // detector needs to learn its threshold), start afresh, and again
        // each time that passes: whatever an artefact taught the filters
        // and thresholds is forgotten (the finger may also be back elsewhere).
        let lost = self.t > self.lost_at;
        if self.monitor.state() == SignalState::NoSignal {
            // Without pulses the floor sinks, halving every FLOOR_HALF_S: a
            // pulse much smaller than the old one is found within seconds.
            self.level_floor *= self.floor_decay;
        }
        let y = if change != Change::None || lost {
            if change == Change::Step {
                // The input has jumped: the low-pass starts at the new
                // level too, so no part of its step response, of whatever
                // size, reaches the detector or the pulse measures.
                s = self.lowpass.settle(c.value);
            }
            self.restart(s, change)
        } else {
            self.highpass.process(s)
        };
        self.smoothed.push(s);
        self.banded.push(y);
        self.marks.push(self.mark);
        self.mark = 0;
        let now = self.t;
        self.t += 1;
        if let Some(mut cand) = self.detector.process(y) {
            // Detectors count from their own start; make indices global.
            cand.peak += self.epoch;
            cand.onset = cand.onset.map(|o| o + self.epoch);
            let peak_d = self.locate_peak(now, cand.peak);
            let height = self.pulse_height(now, peak_d);
            let peak = self.input_peak(peak_d, height, n);
            if self.accept(peak, height) {
                // Intervals run between the upstrokes' 50 % crossings
                // (sub-sample, on the smoothed input): the low-pass's delay
                // cancels, and the crossing wanders less with noise than a
                // top does.
                let fid = self.upstroke(now, peak_d, height);
                out.beat = Some(self.beat(&cand, peak, fid, height, n, motion));
            }
        }
        out
    }

    /// Start the high-pass, the detector and every level learnt from the
    /// signal again from low-passed level `s`; returns the band-passed
    /// output at rest. (The heart-rate and HRV history stay: they hold only
    /// beats already reported.)
    // Rare: kept out of the per-sample path's code.
    #[cold]
    #[inline(never)]
    fn restart(&mut self, s: f32, change: Change) -> f32 {
        // The sensor is likely the same after a restart and so is the
        // pulse's size within a wide margin: candidates far below the
        // level of the last trusted pulses (noise on a lifted finger)
        // cannot set a new one. Only trusted pulses set the floor, and
        // only once: an artefact's level never does, and the floor then
        // only sinks until pulses are trusted again.
        if let Some(level) = self.trusted_level.take() {
            self.level_floor = max_f32(level / FLOOR_DIVISOR, self.level_floor);
        }
        let rest = self.highpass.settle(s);
        self.detector.reset();
        self.epoch = self.t;
        self.restarted_at = self.t;
        self.lost_at = self.t + self.lost_after;
        self.peak_level = None;
        self.dropped_in_row = 0;
        self.last_peak = None;
        self.last_good = false;
        self.last_timed_good = false;
        self.template.reset();
        self.all_intervals.clear();
        self.recent_ibi = None;
        match change {
            // The history held the step.
            Change::Step => self.scale.forget(),
            // The history held the artefact, but its last second is the
            // quiet signal after it: kept as the reference, no second
            // after the restart is blind to a step.
            Change::Collapse => self.scale.keep_quiet(),
            // After a silence the history is the signal's own.
            Change::None => {}
        }
        self.restarts += 1;
        rest
    }

    /// Detector samples since the last restart at detector index `now`:
    /// the oldest age of the rings that holds this signal, not what came
    /// before the restart (a step, an artefact).
    fn since_restart(&self, now: u64) -> usize {
        (now - self.restarted_at) as usize
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
        if a < self.level_floor {
            return self.below_floor(peak, a);
        }
        self.under_floor = 0;
        let Some(level) = self.peak_level else {
            self.peak_level = Some(a);
            self.dropped_in_row = 0;
            return true;
        };
        let since_ms = self
            .last_peak
            .map(|p| peak.saturating_sub(p) as f32 * 1000.0 / self.fs);
        if since_ms.is_some_and(|s| s < DUPLICATE_MS) {
            // The same pulse found twice (its top is placed on the input,
            // so two candidates can land on it), or faster than any heart.
            return false;
        }
        let median = self.recent_ibi;
        let early = match (since_ms, median) {
            (Some(s), Some(m)) => s < EARLY_FRACTION * m && s < EARLY_MAX_MS,
            _ => false,
        };
        let small = a < SMALL_FRACTION * level;
        let too_small_for_early = early && a < EARLY_LEVEL_FRACTION * level;
        if small || too_small_for_early {
            // A level set by an artefact, or a pulse that shrank, would
            // lock every real pulse out: small candidates of like height in
            // a row, none of them early, set a new level (the search-back
            // idea of Pan and Tompkins).
            let like = self.dropped_in_row > 0
                && a * RELEVEL_LIKE >= self.dropped_height
                && a <= RELEVEL_LIKE * self.dropped_height;
            if early {
                return false;
            }
            if a < SMOOTH_RATIO * self.roughness() {
                // Noise, not a smaller pulse: it neither counts towards a
                // new level nor breaks a run of pulses that does.
                return false;
            }
            self.dropped_in_row = if like { self.dropped_in_row + 1 } else { 1 };
            self.dropped_height = a;
            if self.dropped_in_row >= RELEVEL_AFTER {
                self.dropped_in_row = 0;
                self.peak_level = Some(a);
                return true;
            }
            return false;
        }
        self.dropped_in_row = 0;
        // Follow a larger pulse quickly (half the way), a smaller one
        // slowly (an eighth), so one small pulse does not open the gate to
        // diastolic waves and a grown pulse soon sets the level.
        let rate = if a > level { 0.5 } else { 0.125 };
        self.peak_level = Some(level + rate * (a - level));
        true
    }

    /// A candidate below the level floor: kept with the ones below it
    /// before; when the last [`FLOOR_RUN`] are a steady pulse (plausible
    /// intervals within [`FLOOR_RUN_STEADY`] of each other, heights within
    /// [`RELEVEL_LIKE`]), the floor is lifted and the candidate taken as a
    /// beat and as the new level.
    fn below_floor(&mut self, peak: u64, a: f32) -> bool {
        if a < SMOOTH_RATIO * self.roughness() {
            // As rough as the input's sample-to-sample noise: no pulse.
            return false;
        }
        if self.under_floor > 0 {
            let last = self.under[self.under_floor - 1].0;
            if peak.saturating_sub(last) as f32 * 1000.0 / self.fs > rate::MAX_IBI_MS {
                // Longer than any interval since the last: no run.
                self.under_floor = 0;
            }
        }
        if self.under_floor > 0 {
            let top = self.under[..self.under_floor]
                .iter()
                .fold(0.0f32, |m, &(_, h)| max_f32(m, h));
            if a * RELEVEL_LIKE < top {
                // A diastolic wave or a bump between pulses: it neither
                // counts nor breaks the run.
                return false;
            }
            if a > RELEVEL_LIKE * top {
                // A larger pulse starts a run of its own.
                self.under_floor = 0;
            }
        }
        if self.under_floor == FLOOR_RUN {
            self.under.copy_within(1.., 0);
            self.under_floor -= 1;
        }
        self.under[self.under_floor] = (peak, a);
        self.under_floor += 1;
        if self.under_floor < FLOOR_RUN {
            return false;
        }
        let (mut short, mut long) = (f32::INFINITY, 0.0f32);
        let (mut low, mut high) = (f32::INFINITY, 0.0f32);
        for w in self.under.windows(2) {
            let ms = w[1].0.saturating_sub(w[0].0) as f32 * 1000.0 / self.fs;
            short = min_f32(short, ms);
            long = max_f32(long, ms);
        }
        for &(_, h) in &self.under {
            low = min_f32(low, h);
            high = max_f32(high, h);
        }
        let steady = short >= rate::MIN_IBI_MS
            && long <= rate::MAX_IBI_MS
            && long <= FLOOR_RUN_STEADY * short;
        if !(steady && high <= RELEVEL_LIKE * low) {
            return false;
        }
        self.level_floor = 0.0;
        self.under_floor = 0;
        self.peak_level = Some(a);
        self.dropped_in_row = 0;
        true
    }

    /// Mean absolute difference between successive input samples over the
    /// last [`ROUGH_S`] (the input ring's newest part): white noise's
    /// measure, which a smooth pulse of the same height far exceeds.
    fn roughness(&self) -> f32 {
        let n = (libm::roundf(ROUGH_S * self.fs) as usize)
            .min(ROUGH_SAMPLES)
            .min((self.n.min(INPUT_RING as u64) as usize).saturating_sub(1));
        if n == 0 {
            return 0.0;
        }
        // The newest input sample has index `self.n - 1` (pushed already).
        let newest = self.n - 1;
        let mut sum = 0.0;
        for a in 0..n as u64 {
            sum += libm::fabsf(self.input.at(newest - a) - self.input.at(newest - a - 1));
        }
        sum / n as f32
    }

    /// At the end of a recording: feed the last value again for long
    /// enough to close any beat still open, and hand over the beats whose
    /// tops lie wholly within the recording. A live stream never calls this.
    pub fn finish(&mut self, emit: impl FnMut(BeatEvent)) {
        self.finish_by(emit, |p, v| p.push(v));
    }

    /// [`Self::finish`], the beats it closes judged against `motion` as it
    /// stands at the end.
    pub fn finish_with<M: MotionReference>(&mut self, motion: &M, emit: impl FnMut(BeatEvent)) {
        self.finish_by(emit, |p, v| p.push_with(v, motion));
    }

    fn finish_by(
        &mut self,
        mut emit: impl FnMut(BeatEvent),
        mut push: impl FnMut(&mut Self, f32) -> Output,
    ) {
        let end = self.n;
        let flush = (1.5 * self.fs) as u64;
        let v = self.last_value;
        // A peak whose top reaches the end may be an upstroke cut short.
        let whole_before = end.saturating_sub(self.refine as u64);
        // The held value looks like a signal that stopped; a restart it
        // causes is not one of the recording's.
        let restarts = self.restarts;
        for _ in 0..flush {
            if let Some(b) = push(self, v).beat {
                if b.peak_index < whole_before {
                    emit(b);
                }
            }
        }
        self.restarts = restarts;
    }

    /// The onset at detector index `onset` as an input index, moved back by
    /// the low-pass's delay as the peak is; `None` unless it comes before
    /// the beat's own peak (after a restart or an artefact the detector's
    /// onset can belong to another wave).
    fn onset_index(&self, onset: u64, peak: u64) -> Option<u64> {
        let at = self.to_input(onset) as i64 - libm::roundf(self.lowpass_delay) as i64;
        (at >= 0 && (at as u64) < peak).then_some(at as u64)
    }

    fn to_input(&self, detector_index: u64) -> u64 {
        let k = self.decim as u64;
        detector_index * k + k - 1
    }

    /// Where the peak lies in the input, as an input index: the smoothed
    /// signal's peak at detector index `peak_d` moved back by the
    /// low-pass's group delay; then the input's own
    /// maximum within [`PEAK_REFINE_S`] of there, and the first sample
    /// before it within [`TOP_FRACTION`] of `height` of it. `n` is the
    /// input index of the newest sample. Beyond
    /// the input ring (slow events at 1 kHz) the compensated smoothed peak
    /// stands.
    fn input_peak(&self, peak_d: u64, height: f32, n: u64) -> u64 {
        let guess = self.to_input(peak_d) as f32 - self.lowpass_delay;
        // Age of the guess in input samples (the newest input is age 0).
        let age = n as f32 - guess;
        let held = (n + 1).min(INPUT_RING as u64);
        let newest = libm::roundf(age) as i64 - self.refine as i64;
        let oldest = libm::roundf(age) as i64 + self.refine as i64;
        if newest < 1 || oldest + 1 >= held as i64 {
            return (libm::roundf(guess) as i64).max(0) as u64;
        }
        let (newest, oldest) = (newest as usize, oldest as usize);
        let mut best = f32::NEG_INFINITY;
        let mut best_age = oldest;
        for a in (newest..=oldest).rev() {
            let v = self.input.at(n - a as u64);
            if v > best {
                best = v;
                best_age = a;
            }
        }
        // The top is where the input first comes within TOP_FRACTION of
        // the pulse height of that maximum.
        let level = best - TOP_FRACTION * max_f32(height, 0.0);
        let mut at = best_age;
        for a in (best_age..=oldest).rev() {
            if self.input.at(n - a as u64) >= level {
                at = a;
                break;
            }
        }
        n - at as u64
    }

    /// Where the upstroke before the smoothed peak at detector index
    /// `peak_d` crosses half the pulse's `height` below that peak, as an
    /// input index and a sub-sample offset (input samples, from linear
    /// interpolation between the two samples around the crossing). The
    /// interval fiducial: the upstroke is steepest about there, so noise
    /// moves the crossing least, less than it moves the peak or the point
    /// of steepest rise, both found where the slope or the curvature is
    /// flattest (the 50 % amplitude point, common practice for pulse
    /// timing).
    fn upstroke(&self, now: u64, peak_d: u64, height: f32) -> (u64, f32) {
        let age = (now - peak_d) as usize;
        let mid = self.smoothed.at(age) - 0.5 * height;
        let period = self.recent_ibi.unwrap_or(800.0) * self.fd / 1000.0;
        let back = (libm::roundf(0.6 * period) as usize).max(1);
        let oldest = (age + back)
            .min(self.smoothed.len().saturating_sub(1))
            .min(self.since_restart(now).saturating_sub(1));
        let mut a = age;
        while a < oldest && self.smoothed.at(a + 1) >= mid {
            a += 1;
        }
        // Samples a + 1 (below mid) and a (at or above it), when found.
        let (below, above) = (self.smoothed.at(a + 1), self.smoothed.at(a));
        let frac = if a < oldest && above > below {
            (mid - below) / (above - below)
        } else {
            1.0
        };
        // From sample a + 1 forward by `frac` of a detector sample.
        let d = self.decim as f32;
        (self.to_input(now.saturating_sub((a + 1) as u64)), frac * d)
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
        let oldest = (age + back)
            .min(self.smoothed.len().saturating_sub(1))
            .min(self.since_restart(now));
        let mut foot = f32::INFINITY;
        for a in age..=oldest.max(age) {
            foot = min_f32(foot, self.smoothed.at(a));
        }
        self.smoothed.at(age) - foot
    }

    fn beat<M: MotionReference>(
        &mut self,
        cand: &Candidate,
        peak: u64,
        (at, frac): (u64, f32),
        height: f32,
        n: u64,
        motion: &M,
    ) -> BeatEvent {
        let mut flags = 0u8;
        let median = self.recent_ibi;
        let ibi = match (self.last_peak, self.last_at) {
            (Some(p), Some(last_at)) if peak > p && at > last_at => {
                Some(((at - last_at) as f32 + frac - self.last_frac) * 1000.0 / self.fs)
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
        // The refined peak's age in detector samples.
        let age = (n - peak) as f32 / self.decim as f32;
        let since = self.since_restart(self.t - 1) as f32;
        let from = min_f32(
            min_f32(age + 0.3 * period, (self.banded.len().max(2) - 2) as f32),
            since,
        );
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

        if M::JUDGES {
            let spread = self.all_intervals.recent_spread(motion::STEADY_INTERVALS);
            if motion.judge(ibi, spread).flags() {
                flags |= BeatFlags::MOTION;
            }
        }
        let beat_flags = BeatFlags(flags);
        // The template follows every clean pulse, even one that correlates
        // poorly, as the paper's window average does: a slowly changing pulse
        // shape must not lock the template out.
        // (A motion flag leaves it alone: it says nothing of the shape, and
        // the motion must not change what the PPG alone finds.)
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
        // Trusted: good with an interval, after a beat good with an
        // interval since the last restart, while the signal is good (the
        // state outlives a restart: the first two beats after one never
        // set the level the floor comes from).
        let timed_good = beat_flags.is_good() && ibi.is_some();
        let trusted = timed_good && self.last_timed_good;
        self.last_timed_good = timed_good;
        if trusted && self.monitor.state() == SignalState::Good {
            // A level first set or raised by half must come from smooth
            // pulses, not band-passed noise that looked good (measured only
            // then: it costs a pass over the input ring).
            let raised = match (self.trusted_level, self.peak_level) {
                (Some(t), Some(l)) => l > 1.5 * t,
                _ => true,
            };
            if !raised || height >= SMOOTH_RATIO * self.roughness() {
                self.trusted_level = self.peak_level;
            }
            // The pulse is back and trusted: the floor, which only guards
            // the time without one, has done its work (left in place, a
            // pulse just around it would lose every other beat).
            self.level_floor = 0.0;
        }
        match ibi {
            Some(i) => self.hrv.push(i, beat_flags.is_good() && self.last_good),
            // No interval (signal lost, filters restarted): a bad entry, so
            // no successive difference is formed across the gap.
            None if !self.hrv.is_empty() => self.hrv.push(f32::NAN, false),
            None => {}
        }
        self.last_good = beat_flags.is_good();
        self.last_peak = Some(peak);
        self.lost_at = self.t + self.lost_after;
        self.last_at = Some(at);
        self.last_frac = frac;
        let window = (self.config.options.hr_window_s * self.fs) as u64;
        let smoothed = self
            .intervals
            .median_since(peak.saturating_sub(window))
            .map(|(m, _)| 60_000.0 / m);
        BeatEvent {
            peak_index: peak,
            onset_index: cand.onset.and_then(|o| self.onset_index(o, peak)),
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
        let oldest = (age + self.search_before)
            .min(self.smoothed.len().saturating_sub(1))
            .min(self.since_restart(now));
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
