//! The streaming beat pipeline: one sample in, at most one beat and one
//! state change out.
//!
//! [`Pipeline`] is the wiring of named stages, each a struct of its own
//! with its own state, all causal, with fixed memory and bounded work per
//! sample:
//!
//! | stage | module | rate | what |
//! |---|---|---|---|
//! | conditioning | [`conditioning`] ([`condition`]) | input | non-finite samples replaced and counted, samples at the ADC rails marked; the band's upper edge, a Butterworth low-pass at 8 Hz, order 2 (also the smoothed signal peaks are placed on); decimation to the detector's rate (62.5 to 125 Hz, or the input rate when lower) |
//! | band and step restart | [`restart`] ([`scale`]) | detector | the band's lower edge, a Butterworth high-pass at 0.5 Hz, order 2 (both [`crate::filter::Delta`] sections, settled on the first sample so a DC offset does not ring); steps and collapses against the signal's own range, and silence, restart the stages |
//! | signal state | [`state`] | detector | good, no signal, saturated, noisy, with hysteresis |
//! | detector | [`detector`] ([`Elgendi`], [`Zong`]) | detector | candidates, through the [`Detector`] trait |
//! | peak placement | [`placement`] | per candidate | the smoothed top, the input's own top, foot-to-peak height, the upstroke's 50 % crossing |
//! | candidate gate | [`gate`] | per candidate | running peak level, diastolic waves and noise dropped, the floor after restarts |
//! | beat bookkeeping | [`bookkeeping`] ([`rate`], [`quality`]) | per beat | interval, flags, template, smoothed heart rate, HRV |
//!
//! The rings the stages look back on are in [`traces`]. With an
//! accelerometer ([`MotionPipeline`]: the pipeline and a
//! [`MotionTracker`]), beats that cannot be told apart from strong motion
//! are flagged too ([`motion`]); [`Pipeline::push`] itself judges against
//! [`NoMotion`], which is compiled away. Settings and their refusals
//! ([`PipelineError`]) are in [`settings`].
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
//! # Ok::<(), plethwire_dsp::pipeline::PipelineError>(())
//! ```

pub mod band;
mod block;
pub mod bookkeeping;
pub mod condition;
pub mod conditioning;
pub mod detector;
mod elgendi;
pub mod events;
pub mod gate;
pub mod motion;
pub mod placement;
pub mod quality;
pub mod rate;
pub mod restart;
mod ring;
pub mod scale;
pub mod settings;
mod sorted;
pub mod state;
pub mod traces;
mod with_motion;
mod zong;

pub use band::{BandSections, BandSource};
pub use bookkeeping::{HRV_INTERVALS, RECENT_INTERVALS};
pub use condition::Rails;
pub use detector::{Candidate, Detector, DetectorKind};
pub use elgendi::{BlockWidth, Elgendi};
pub use events::{BeatEvent, BeatFlags, Output, SignalState, StateEvent};
pub use motion::{MotionReference, MotionTracker, NoMotion, Verdict};
pub use ring::{History, Ring, RunningSum, Trace};
pub use settings::{
    check_sample_rate, Config, Options, PipelineError, RateRange, SampleRateError,
    DETECTOR_BASE_HZ, MAX_RATE_HZ, MIN_RATE_HZ,
};
pub use with_motion::MotionPipeline;
pub use zong::Zong;

use crate::hrv::HrvStats;
use bookkeeping::{At, BeatBook};
use conditioning::{Block, Conditioning};
use detector::AnyDetector;
use gate::{CandidateGate, Recent};
use placement::{Look, PeakPlacement};
use restart::{BandRestart, Restart};
use state::Monitor;
use traces::Traces;

/// At the end of a recording the last value is held this long, seconds,
/// to close the beats still open (longer than any detector's latency).
pub const FLUSH_S: f32 = 1.5;

/// The streaming pipeline: the wiring of its stages.
#[derive(Clone, Debug)]
#[repr(C)]
pub struct Pipeline {
    // Stages touched on every sample first (`repr(C)` keeps the order):
    // on Cortex-M a float load reaches only 1 KB past its base register,
    // so the filters' and counters' state must not sit behind the rings;
    // the detector's scalars come before its rings, the bookkeeping's
    // before its histories; the rings written at the detector's rate
    // before the bookkeeping, read once per beat (their counters then
    // stay within a load's reach of the base).
    n: u64,
    t: u64,
    // Detector samples until the signal state is next decided, and the
    // spacing of those decisions (`Config::state_every`); input samples
    // clipped since the last one.
    state_in: u32,
    state_every: u32,
    clipped_since: u32,
    conditioning: Conditioning,
    band: BandRestart,
    monitor: Monitor,
    gate: CandidateGate,
    placement: PeakPlacement,
    detector: AnyDetector,
    traces: Traces,
    book: BeatBook,
    config: Config,
}

impl Pipeline {
    /// A pipeline for `config`; refuses rates outside 25 to 1000 Hz, a
    /// heart-rate window that is not a positive number of seconds, and
    /// bands the design refuses. Designs the band's filters
    /// ([`BandSections::design`]) and runs [`Self::with_band`].
    // Out of line: inlined into a board's start-up task it costs flash.
    #[inline(never)]
    pub fn new(config: Config) -> Result<Self, PipelineError> {
        Self::with_band(config, &BandSections::design(&config)?)
    }

    /// A pipeline for `config` that runs `band`, designed already (on the
    /// PC, by a board's build script): no filter design runs here, and a
    /// board that only calls this links none. The same checks as
    /// [`Self::new`], and [`PipelineError::BandMismatch`] when `band` was
    /// designed for another rate or other band edges. With
    /// `BandSections::design(&config)` it is the pipeline [`Self::new`]
    /// builds.
    #[inline(never)]
    pub fn with_band(config: Config, band: &BandSections) -> Result<Self, PipelineError> {
        config.check()?;
        if !band.fits(&config) {
            return Err(PipelineError::BandMismatch);
        }
        let fs = config.sample_rate_hz;
        let decim = config.decimation();
        let fd = fs / decim as f32;
        let o = &config.options;
        // The band as a low-pass at the input rate and a high-pass at the
        // detector's rate: a band-pass of the same four poles, but only one
        // section runs per input sample. The low-pass also keeps the
        // pulse's shape for placing peaks, without ADC noise or steps.
        let conditioning = Conditioning::with_lowpass(&config, decim, band.lowpass);
        let band = BandRestart::with_highpass(fd, band.highpass);
        Ok(Self {
            n: 0,
            t: 0,
            state_in: 1,
            state_every: config.state_every(),
            clipped_since: 0,
            conditioning,
            band,
            monitor: Monitor::new(fs),
            gate: CandidateGate::new(fs, fd),
            placement: PeakPlacement::new(fs, fd, decim, o.band_high_hz),
            detector: AnyDetector::new(o.detector, fd),
            book: BeatBook::new(fs, fd, decim, o.hr_window_s),
            traces: Traces::new(),
            config,
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
        self.conditioning.rejected()
    }

    /// Input samples marked clipped so far.
    pub fn clipped_samples(&self) -> u64 {
        self.conditioning.clipped()
    }

    /// The signal's current state.
    pub fn state(&self) -> SignalState {
        self.monitor.state()
    }

    /// Time-domain HRV (Task Force of the ESC and NASPE 1996) over the last
    /// [`HRV_INTERVALS`] intervals. An interval counts as normal-to-normal
    /// only when the beats at both its ends are good.
    pub fn hrv(&self) -> HrvStats {
        self.book.hrv_stats()
    }

    /// As [`Self::hrv`], over the newest intervals spanning `span_ms`.
    pub fn hrv_recent(&self, span_ms: f32) -> HrvStats {
        self.book.hrv().stats_recent_ms(span_ms)
    }

    /// The detector's rate, Hz.
    pub fn detector_rate_hz(&self) -> f32 {
        self.config.sample_rate_hz / self.conditioning.decimation() as f32
    }

    /// The band-passed value the detector saw most recently (0 before its
    /// first sample). The detector runs at [`Self::detector_rate_hz`], so
    /// between its samples this holds the last one. Read from the ring
    /// the pipeline keeps anyway: it adds nothing to [`Self::push`].
    #[inline]
    pub fn band_passed(&self) -> f32 {
        self.traces.banded().at(0)
    }

    /// Times the filters restarted after a step in the input.
    pub fn restarts(&self) -> u64 {
        self.band.restarts()
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
        self.input_sample(x);
        let n = self.n - 1;
        let Some(block) = self.conditioning.block() else {
            return Output::default();
        };
        // Read back, not kept from `input_sample`: kept, it would be saved
        // to the stack on every sample for the few that get here.
        let smoothed = self.conditioning.last_smoothed();
        // The signal state is decided on every `state_every`-th detector
        // sample, over the input samples since the last decision.
        self.clipped_since += block.clipped;
        self.state_in -= 1;
        let mut out = Output::default();
        if self.state_in == 0 {
            self.state_in = self.state_every;
            out.state = self.monitor.block(
                n,
                self.clipped_since,
                self.state_every * self.conditioning.decimation(),
            );
            self.clipped_since = 0;
        }
        let y = self.band_pass(smoothed, block);
        let now = self.t;
        self.t += 1;
        if let Some(mut cand) = self.detector.process(y) {
            // Detectors count from their own start; make indices global.
            let epoch = self.band.epoch();
            cand.peak += epoch;
            cand.onset = cand.onset.map(|o| o + epoch);
            out.beat = self.candidate(&cand, now, n, motion);
        }
        out
    }

    /// The input-rate part of a sample: conditioned, low-passed, kept.
    #[inline(always)]
    fn input_sample(&mut self, x: f32) {
        let c = self.conditioning.push(x, self.n == 0);
        if let Some(rest) = c.first_rest {
            self.band.start(rest);
        }
        self.traces.input.put(self.n, c.value);
        self.n += 1;
    }

    /// The detector-rate part before the detector: the step judgement, a
    /// restart or the high-pass, the signal-state floor, the rings.
    /// Returns the band-passed value.
    #[inline(always)]
    fn band_pass(&mut self, mut s: f32, block: Block) -> f32 {
        let why = self.band.judge(s, self.traces.smoothed(), self.t);
        if self.monitor.state() == SignalState::NoSignal {
            // Without pulses the floor sinks: a pulse much smaller than the
            // old one is found within seconds.
            self.gate.sink();
        }
        let y = match why {
            None => self.band.filter(s),
            Some(why) => {
                if why == Restart::Step {
                    // The input has jumped: the low-pass starts at the new
                    // level too, so no part of its step response, of
                    // whatever size, reaches the detector or the pulse
                    // measures.
                    s = self.conditioning.settle(self.conditioning.last_value());
                }
                self.restart(s, why)
            }
        };
        self.traces.push(s, y, block.mark);
        y
    }

    /// Start the high-pass, the detector and every level learnt from the
    /// signal again from low-passed level `s`; returns the band-passed
    /// output at rest. (The heart-rate and HRV history stay: they hold only
    /// beats already reported.)
    // Rare: kept out of the per-sample path's code.
    #[cold]
    #[inline(never)]
    fn restart(&mut self, s: f32, why: Restart) -> f32 {
        self.gate.restart();
        let rest = self.band.restart(s, why, self.t);
        self.detector.reset();
        self.book.restart();
        self.monitor.median(self.book.recent_ibi());
        rest
    }

    /// A candidate at detector index `now` (input index `n`): placed,
    /// gated, and if it passes, a beat.
    // Once per candidate: out of line, so the per-sample path that calls
    // it keeps its registers (inlined, its spills cost every sample).
    #[inline(never)]
    fn candidate<M: MotionReference>(
        &mut self,
        cand: &Candidate,
        now: u64,
        n: u64,
        motion: &M,
    ) -> Option<BeatEvent> {
        let look = Look {
            smoothed: self.traces.smoothed(),
            input: &self.traces.input,
            now,
            since_restart: self.band.since_restart(now),
            median_ibi_ms: self.book.recent_ibi(),
        };
        let peak_d = self.placement.locate(&look, cand.peak);
        let height = self.placement.height(&look, peak_d, self.book.last_peak());
        let peak = self.placement.on_input(look.input, peak_d, height, n);
        let recent = Recent {
            last_peak: self.book.last_peak(),
            median_ibi_ms: look.median_ibi_ms,
        };
        let (input, seen, fs) = (&self.traces.input, self.n, self.config.sample_rate_hz);
        let rough = || gate::roughness(input, seen, fs);
        if !self.gate.accept(peak, height, recent, rough) {
            return None;
        }
        // Intervals run between the upstrokes' 50 % crossings (sub-sample,
        // on the smoothed input): the low-pass's delay cancels, and the
        // crossing wanders less with noise than a top does.
        let fiducial = self.placement.upstroke(&look, peak_d, height);
        let at = At {
            peak,
            fiducial,
            n,
            since_restart: look.since_restart,
        };
        Some(self.beat(cand, &at, height, motion))
    }

    /// Judge and record the beat at `at`, of foot-to-peak `height`.
    fn beat<M: MotionReference>(
        &mut self,
        cand: &Candidate,
        at: &At,
        height: f32,
        motion: &M,
    ) -> BeatEvent {
        let traces = &self.traces;
        let mut shape = None;
        let mut judged = self
            .book
            .judge(at, traces.banded(), traces.marks(), motion, &mut shape);
        if cand.uncertain {
            judged.flags.0 |= BeatFlags::NARROW;
        }
        let trusted = self.book.record(at, &judged, shape.as_ref());
        let good = judged.flags.is_good();
        self.monitor.beat(at.peak, good);
        self.monitor.median(self.book.recent_ibi());
        // Trusted while the signal is good (the state outlives a restart:
        // the first two beats after one never set the level the floor
        // comes from).
        if trusted && self.monitor.state() == SignalState::Good {
            let (input, seen, fs) = (&traces.input, self.n, self.config.sample_rate_hz);
            self.gate
                .trusted(height, || gate::roughness(input, seen, fs));
        }
        self.band.beat(self.t);
        let onset = cand
            .onset
            .and_then(|o| self.placement.onset_index(o, at.peak));
        self.book.event(at, &judged, height, onset)
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
        let flush = (FLUSH_S * self.config.sample_rate_hz) as u64;
        let v = self.conditioning.last_value();
        // A peak whose top reaches the end may be an upstroke cut short.
        let whole_before = end.saturating_sub(self.placement.refine() as u64);
        // The held value looks like a signal that stopped; a restart it
        // causes is not one of the recording's.
        let restarts = self.band.restarts();
        for _ in 0..flush {
            if let Some(b) = push(self, v).beat {
                if b.peak_index < whole_before {
                    emit(b);
                }
            }
        }
        self.band.set_restarts(restarts);
    }
}
