//! Beat bookkeeping: a gated beat's interval, its flags (interval
//! plausibility, clipping, replaced samples, template correlation
//! ([`super::quality`]), motion), the template, the smoothed heart rate and
//! the HRV window.

use super::conditioning::{MARK_CLIPPED, MARK_REJECTED};
use super::events::{BeatEvent, BeatFlags};
use super::motion::{self, MotionReference};
use super::placement::DEFAULT_IBI_MS;
use super::quality::{Shape, Template};
use super::rate::{self, Intervals};
use super::ring::Trace;
use super::sorted::LastIntervals;
use super::traces::SHAPE_RING;
use crate::hrv::{HrvStats, HrvWindow};
use crate::math::{max_f32, min_f32};

/// Intervals whose median is the reference for plausibility, peak search
/// and pulse windows.
pub const RECENT_INTERVALS: usize = 8;

// The steadiness under motion is judged on the reference intervals, which
// hold only the last RECENT_INTERVALS.
const _: () = assert!(motion::STEADY_INTERVALS <= RECENT_INTERVALS);

/// Intervals kept for heart-rate variability (about two minutes at 60 bpm).
pub const HRV_INTERVALS: usize = 128;

/// A pulse's window for its shape and marks starts this fraction of an
/// interval before its peak…
pub const WINDOW_BEFORE_IBI: f32 = 0.3;
/// …and ends this fraction after it.
pub const WINDOW_AFTER_IBI: f32 = 0.2;

/// Milliseconds in a minute: heart rate in bpm is this over the interval
/// in ms.
const MS_PER_MINUTE: f32 = 60_000.0;

/// A beat as judged, before it is recorded.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Judged {
    /// Interval from the last beat, ms.
    pub ibi: Option<f32>,
    /// Why it is not trusted, if at all.
    pub flags: BeatFlags,
    /// Correlation with the template.
    pub quality: f32,
}

/// Where a beat lies: its peak and interval fiducial (input index and
/// sub-sample offset), and the input and detector indices it is judged at.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct At {
    /// Input index of the peak.
    pub peak: u64,
    /// Input index and sub-sample offset of the upstroke's crossing.
    pub fiducial: (u64, f32),
    /// Input index of the newest sample.
    pub n: u64,
    /// Detector samples since the last restart.
    pub since_restart: usize,
}

/// Intervals, template, heart rate and HRV.
// `repr(C)`: the scalars first, the histories after them.
#[derive(Clone, Debug)]
#[repr(C)]
pub struct BeatBook {
    // Median of the last RECENT_INTERVALS intervals, kept up to date per
    // beat so the per-sample path never sorts.
    recent_ibi: Option<f32>,
    // Input index of the last beat's peak, and of its upstroke's crossing
    // with its sub-sample offset (the interval fiducial), input samples;
    // `last_at` is meaningful while `last_peak` is `Some` (both are set by
    // every beat).
    last_peak: Option<u64>,
    last_at: u64,
    last_frac: f32,
    fs: f32,
    fd: f32,
    decim: u32,
    // The smoothed heart rate's window, seconds.
    hr_window_s: f32,
    last_good: bool,
    // The last beat was good and had an interval (since the last restart).
    last_timed_good: bool,
    template: Template,
    // Good intervals, for the heart rate.
    intervals: Intervals,
    // Every interval, trusted or not: the reference for plausibility, so one
    // odd interval early on cannot lock every later beat out.
    all_intervals: LastIntervals<RECENT_INTERVALS>,
    hrv: HrvWindow<HRV_INTERVALS>,
}

impl BeatBook {
    /// Bookkeeping for input at `fs` decimated by `decim` to `fd`, the
    /// heart rate over `hr_window_s`.
    pub fn new(fs: f32, fd: f32, decim: u32, hr_window_s: f32) -> Self {
        Self {
            recent_ibi: None,
            last_peak: None,
            last_at: 0,
            last_frac: 0.0,
            last_good: false,
            last_timed_good: false,
            fs,
            fd,
            decim,
            hr_window_s,
            template: Template::new(),
            intervals: Intervals::new(),
            all_intervals: LastIntervals::new(),
            hrv: HrvWindow::new(),
        }
    }

    /// Median of the recent intervals, ms.
    #[inline(always)]
    pub fn recent_ibi(&self) -> Option<f32> {
        self.recent_ibi
    }

    /// Input index of the last beat's peak since the last restart.
    pub fn last_peak(&self) -> Option<u64> {
        self.last_peak
    }

    /// The HRV window.
    pub fn hrv(&self) -> &HrvWindow<HRV_INTERVALS> {
        &self.hrv
    }

    /// HRV over the whole window.
    pub fn hrv_stats(&self) -> HrvStats {
        self.hrv.stats()
    }

    /// After a restart: no last beat, no template, no reference intervals.
    /// (The heart-rate and HRV history stay: they hold only beats already
    /// reported.)
    pub fn restart(&mut self) {
        self.last_peak = None;
        self.last_good = false;
        self.last_timed_good = false;
        self.template.reset();
        self.all_intervals.clear();
        self.recent_ibi = None;
    }

    /// The interval from the last beat to the one at `at`, ms.
    fn interval(&self, at: &At) -> Option<f32> {
        let (fid, frac) = at.fiducial;
        match self.last_peak {
            Some(p) if at.peak > p && fid > self.last_at => {
                Some(((fid - self.last_at) as f32 + frac - self.last_frac) * 1000.0 / self.fs)
            }
            _ => None,
        }
    }

    /// Judge the beat at `at`: its interval and flags, its shape against
    /// the template (from `banded` and `marks`, into `shape`), and against
    /// `motion`. The interval joins the reference intervals.
    // The shape is written where the caller keeps it: returned by value
    // with the verdict, its 68 bytes (132 with 32 points) were copied twice per beat.
    pub fn judge<M: MotionReference>(
        &mut self,
        at: &At,
        banded: Trace<'_, SHAPE_RING>,
        marks: Trace<'_, SHAPE_RING, u8>,
        motion: &M,
        shape: &mut Option<Shape>,
    ) -> Judged {
        let mut flags = 0u8;
        let median = self.recent_ibi;
        let ibi = self.interval(at);
        match ibi {
            None => flags |= BeatFlags::NO_INTERVAL,
            Some(i) if !rate::plausible(i, median) => flags |= BeatFlags::IMPLAUSIBLE_INTERVAL,
            Some(_) => {}
        }
        // Until good intervals exist, the last interval sets the window:
        // a fixed guess would span several pulses at fast rates, and no
        // pulse would ever match (so none would ever be good).
        let period = median.or(ibi).unwrap_or(DEFAULT_IBI_MS) * self.fd / 1000.0;
        if let Some(i) = ibi {
            self.all_intervals.push(i);
            self.recent_ibi = self.all_intervals.median();
        }
        // The refined peak's age in detector samples, and the window.
        let age = (at.n - at.peak) as f32 / self.decim as f32;
        let from = min_f32(
            min_f32(
                age + WINDOW_BEFORE_IBI * period,
                (banded.len().max(2) - 2) as f32,
            ),
            at.since_restart as f32,
        );
        let to = max_f32(age - WINDOW_AFTER_IBI * period, 0.0);
        // The window's marks together, then their bits once. Every age
        // read here and by the shape is below `banded.len() − 1` (`from`
        // is), and the marks ring is as full: no age test per read.
        let window = (libm::floorf(to) as usize)..(libm::ceilf(from) as usize + 1);
        let marked = marks.ages(window.start, window.end).fold(0u8, |m, v| m | v);
        if marked & MARK_CLIPPED != 0 {
            flags |= BeatFlags::CLIPPED;
        }
        if marked & MARK_REJECTED != 0 {
            flags |= BeatFlags::INPUT_REJECTED;
        }
        *shape = Shape::capture(|a| banded.at_within(a), from, to);
        let quality = match shape {
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
            let spread = self.all_intervals.spread(motion::STEADY_INTERVALS);
            if motion.judge(ibi, spread).flags() {
                flags |= BeatFlags::MOTION;
            }
        }
        Judged {
            ibi,
            flags: BeatFlags(flags),
            quality,
        }
    }

    /// Record a judged beat at `at` with its `shape`: the template learns
    /// it if clean, a good interval joins the heart rate, the HRV window
    /// takes the interval. Returns whether the beat is trusted: good with
    /// an interval, after a beat good with an interval since the last
    /// restart.
    pub fn record(&mut self, at: &At, judged: &Judged, shape: Option<&Shape>) -> bool {
        let good = judged.flags.is_good();
        // The template follows every clean pulse, even one that correlates
        // poorly, as the paper's window average does: a slowly changing
        // pulse shape must not lock the template out. (A motion flag
        // leaves it alone: it says nothing of the shape, and the motion
        // must not change what the PPG alone finds.)
        let unclean =
            BeatFlags::CLIPPED | BeatFlags::INPUT_REJECTED | BeatFlags::IMPLAUSIBLE_INTERVAL;
        if judged.flags.0 & unclean == 0 {
            if let Some(s) = shape {
                self.template.learn(s);
            }
        }
        if good {
            if let Some(i) = judged.ibi {
                self.intervals.push(i, at.peak);
            }
        }
        let timed_good = good && judged.ibi.is_some();
        let trusted = timed_good && self.last_timed_good;
        self.last_timed_good = timed_good;
        match judged.ibi {
            Some(i) => self.hrv.push(i, good && self.last_good),
            // No interval (signal lost, filters restarted): a bad entry, so
            // no successive difference is formed across the gap.
            None if !self.hrv.is_empty() => self.hrv.push(f32::NAN, false),
            None => {}
        }
        self.last_good = good;
        self.last_peak = Some(at.peak);
        self.last_at = at.fiducial.0;
        self.last_frac = at.fiducial.1;
        trusted
    }

    /// The beat's event: `judged` at `at`, of `amplitude`, with its
    /// `onset` (input index).
    pub fn event(
        &mut self,
        at: &At,
        judged: &Judged,
        amplitude: f32,
        onset: Option<u64>,
    ) -> BeatEvent {
        let window = (self.hr_window_s * self.fs) as u64;
        let smoothed = self
            .intervals
            .median_since_kept(at.peak.saturating_sub(window))
            .map(|(m, _)| MS_PER_MINUTE / m);
        BeatEvent {
            peak_index: at.peak,
            onset_index: onset,
            emitted_at: at.n,
            ibi_ms: judged.ibi,
            hr_bpm: judged.ibi.map(|i| MS_PER_MINUTE / i),
            hr_smoothed_bpm: smoothed,
            amplitude,
            quality: judged.quality,
            flags: judged.flags,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::super::motion::NoMotion;
    use super::super::ring::Ring;
    use super::*;

    /// A pulse of period 50 detector samples on the banded ring, newest
    /// peak at age 10.
    fn rings() -> (Ring<SHAPE_RING>, Ring<SHAPE_RING, u8>) {
        let mut banded = Ring::new();
        let mut marks = Ring::new();
        for t in 0..200u32 {
            let phase = (t as f32 - 189.0) / 50.0;
            banded.push(libm::cosf(2.0 * core::f32::consts::PI * phase));
            marks.push(0);
        }
        (banded, marks)
    }

    fn at(peak: u64, fid: u64) -> At {
        At {
            peak,
            fiducial: (fid, 0.25),
            n: peak + 10,
            since_restart: 200,
        }
    }

    #[test]
    fn intervals_run_between_fiducials_and_the_rate_follows_good_beats() {
        let (banded, marks) = rings();
        let mut book = BeatBook::new(50.0, 50.0, 1, 12.0);
        let mut events = std::vec::Vec::new();
        for k in 0..6u64 {
            let a = at(50 * k + 100, 50 * k + 90);
            let mut shape = None;
            let j = book.judge(&a, banded.trace(), marks.trace(), &NoMotion, &mut shape);
            let trusted = book.record(&a, &j, shape.as_ref());
            events.push((book.event(&a, &j, 1.0, None), trusted));
        }
        let (first, trusted) = events[0];
        assert!(first.flags.has(BeatFlags::NO_INTERVAL) && !trusted);
        for (e, _) in &events[1..] {
            // 50 samples at 50 Hz.
            assert_eq!(e.ibi_ms, Some(1000.0));
            assert!(e.flags.is_good(), "{:?}", e.flags);
        }
        assert_eq!(events[5].0.hr_smoothed_bpm, Some(60.0));
        assert!(events[2].1 && !events[1].1);
        assert_eq!(book.recent_ibi(), Some(1000.0));
        book.restart();
        assert_eq!((book.recent_ibi(), book.last_peak()), (None, None));
    }

    #[test]
    fn a_clipped_sample_in_the_window_flags_the_beat() {
        let (banded, mut marks) = rings();
        marks.push(MARK_CLIPPED);
        let mut book = BeatBook::new(50.0, 50.0, 1, 12.0);
        // The newest sample is in the window of a peak one sample old.
        let a = At {
            n: 101,
            ..at(100, 90)
        };
        let j = book.judge(&a, banded.trace(), marks.trace(), &NoMotion, &mut None);
        assert!(j.flags.has(BeatFlags::CLIPPED));
    }
}
