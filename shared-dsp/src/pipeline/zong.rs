//! Pulse onsets by the slope sum function.
//!
//! W. Zong, T. Heldt, G. B. Moody, R. G. Mark, "An open-source algorithm to
//! detect onset of arterial blood pressure pulses", Computers in Cardiology
//! 30:259–262, 2003. The slope sum function (SSF) adds the positive first
//! differences of the signal over a 128 ms window, so it peaks on each
//! pulse's upstroke. A beat is detected where the SSF rises through an
//! adaptive threshold outside a refractory period; the onset is where the
//! SSF first rose above a small fraction of that pulse's SSF maximum,
//! searched back from the crossing. Parameters (from memory of the paper,
//! adapted from arterial pressure to the PPG): threshold 3 × mean SSF over
//! the first seconds, then 60 % of the running average of recent pulses'
//! SSF maxima; refractory 250 ms; onset at 1 % of the local maximum.
//!
//! The systolic peak, which the paper does not locate, is taken as the
//! band-passed signal's maximum from the onset until the pulse has turned
//! down (at least [`PEAK_SEARCH_S`] or half an interval after the crossing,
//! whichever is shorter, and at most the longer of the refractory period
//! and 60 % of an interval); the pipeline then places it on the input.

use super::detector::{Candidate, Detector};
use super::ring::{Ring, RunningSum};
use crate::math::max_f32;

/// SSF window, seconds (Zong et al. 2003).
pub const WINDOW_S: f32 = 0.128;
/// Refractory period after a detection, seconds (Zong et al. 2003).
pub const REFRACTORY_S: f32 = 0.25;
/// Threshold as a fraction of recent SSF maxima (Zong et al. 2003).
pub const THRESHOLD_FRACTION: f32 = 0.6;
/// Onset: where the SSF first exceeds this fraction of the pulse's SSF
/// maximum (Zong et al. 2003).
pub const ONSET_FRACTION: f32 = 0.01;
/// Learning period for the initial threshold, seconds.
pub const LEARN_S: f32 = 3.0;
/// How long after the crossing to look for the pulse's SSF maximum and
/// how far back to look for the onset, seconds.
pub const SEARCH_S: f32 = 0.15;
/// Where to look for the systolic peak after the onset, seconds.
pub const PEAK_SEARCH_S: f32 = 0.3;
/// Without a beat for this long the threshold halves, seconds (so the
/// detector recovers from a large artefact).
pub const DECAY_S: f32 = 2.5;

/// The threshold's base while learning is this many times the mean slope
/// sum (Zong et al. 2003, from memory).
pub const LEARN_MULTIPLE: f32 = 3.0;
/// Weight of a new pulse in the running averages of SSF maxima and of the
/// interval (our choice: about the last four pulses).
pub const AVERAGE_WEIGHT: f32 = 0.25;
/// When lost, the running SSF maximum is multiplied by this at least
/// (halved, as [`DECAY_S`] says).
pub const DECAY_FACTOR: f32 = 0.5;
/// A gap longer than this many intervals is a missed beat, not an
/// interval to learn (our choice).
pub const GAP_LIMIT: f32 = 2.5;
/// The interval assumed at the start, seconds (75 bpm).
pub const START_INTERVAL_S: f32 = 0.8;
/// The systolic peak is looked for at most this fraction of the interval
/// after the crossing…
pub const PEAK_SPAN_IBI: f32 = 0.5;
/// …and the pulse waited for to turn down at most this fraction of it
/// (the next pulse's crossing cannot come sooner).
pub const LONGEST_WAIT_IBI: f32 = 0.6;

const RING: usize = 256;

/// Causal slope-sum detector state, at the detector's rate.
// `repr(C)`, rings last, as for `Elgendi`.
#[derive(Clone, Debug)]
#[repr(C)]
pub struct Zong {
    window: usize,
    refractory: u64,
    search: usize,
    peak_search: usize,
    learn: u64,
    decay: u64,
    ssf: RunningSum,
    last_y: f32,
    learn_sum: f32,
    max_avg: f32,
    threshold: f32,
    t: u64,
    last_beat: Option<u64>,
    last_change: u64,
    interval: f32,
    pending: Option<u64>,
    // Largest band-passed value since the pending crossing.
    top: f32,
    rises: Ring<RING>,
    ssf_hist: Ring<RING>,
    filtered: Ring<RING>,
    // The rate it was built for, to start again at ([`Detector::reset`]).
    fs_hz: f32,
}

impl Zong {
    /// A detector running at `fs_hz` (at most ~250 Hz: the rings hold the
    /// search windows).
    pub fn new(fs_hz: f32) -> Self {
        let n = |s: f32| (libm::roundf(s * fs_hz) as usize).max(1);
        Self {
            fs_hz,
            window: n(WINDOW_S),
            refractory: n(REFRACTORY_S) as u64,
            search: n(SEARCH_S),
            peak_search: n(PEAK_SEARCH_S).min(RING - 1),
            learn: n(LEARN_S) as u64,
            decay: n(DECAY_S) as u64,
            rises: Ring::new(),
            ssf_hist: Ring::new(),
            filtered: Ring::new(),
            ssf: RunningSum::default(),
            last_y: 0.0,
            learn_sum: 0.0,
            max_avg: 0.0,
            threshold: f32::INFINITY,
            t: 0,
            last_beat: None,
            last_change: 0,
            interval: START_INTERVAL_S * fs_hz,
            pending: None,
            top: f32::NEG_INFINITY,
        }
    }

    /// The rate it runs at, Hz.
    pub fn rate_hz(&self) -> f32 {
        self.fs_hz
    }

    /// Samples between a systolic peak and the earliest moment it can be
    /// reported, at most.
    pub fn delay(&self) -> usize {
        self.peak_search
    }
}

impl Detector for Zong {
    /// Feed one band-passed sample.
    fn process(&mut self, y: f32) -> Option<Candidate> {
        let rise = max_f32(y - self.last_y, 0.0);
        self.last_y = y;
        self.rises.push(rise);
        self.ssf.add(rise);
        self.ssf.add(-self.rises.at(self.window));
        let ssf = max_f32(self.ssf.get(), 0.0);
        self.ssf_hist.push(ssf);
        self.filtered.push(y);
        let t = self.t;
        self.t += 1;

        if t < self.learn {
            self.learn_sum += ssf;
            if self.last_beat.is_none() {
                // Threshold base 3 × mean SSF; the threshold proper is the
                // usual fraction of it, set from the whole learning period
                // at its end. Until then, and until a first beat, it
                // follows the mean so far, so a pulse is found while the
                // detector still learns (after a restart, waiting the whole
                // period would lose the first pulses at slow rates).
                let mean = self.learn_sum / (t + 1) as f32;
                self.max_avg = LEARN_MULTIPLE * mean;
                self.threshold = THRESHOLD_FRACTION * self.max_avg;
            }
            if t < self.window as u64 {
                // The slope sum is not yet over a whole window.
                return None;
            }
        }
        if t - self.last_change > self.decay && self.pending.is_none() {
            // Lost, or the threshold learnt from an artefact: lower the bar
            // so the detector can pick the pulse up, at once to what the
            // slope sum since would have taught it from the start (by
            // halving alone, a threshold a thousand times too high would
            // take half a minute).
            // Since the last beat's own upstroke (its refractory period)
            // only: that beat may be the artefact that set the bar.
            let since = t.saturating_sub(self.last_change + self.refractory) as usize;
            let held = self.ssf_hist.len().min(since).max(1);
            let mut sum = 0.0;
            for a in 0..held {
                sum += self.ssf_hist.at(a);
            }
            let relearnt = LEARN_MULTIPLE * sum / held as f32;
            self.max_avg = (DECAY_FACTOR * self.max_avg).min(relearnt);
            if t < self.learn {
                // Still learning: the mean so far goes on from here, not
                // from the artefact that came first.
                self.learn_sum = self.max_avg / LEARN_MULTIPLE * (t + 1) as f32;
            }
            self.threshold = THRESHOLD_FRACTION * self.max_avg;
            self.last_change = t;
        }
        if let Some(cross) = self.pending {
            // Wait until the peak search after the crossing is complete
            // and the pulse has turned down (a slow pulse's upstroke can
            // outlast the search), but never past the longest wait.
            let waited = t - cross;
            self.top = max_f32(self.top, y);
            let turned = y < self.top;
            if waited < self.peak_span() as u64 || (!turned && waited < self.longest_wait()) {
                return None;
            }
            self.pending = None;
            return self.finish(t, cross);
        }
        let refractory = self.last_beat.is_some_and(|b| t - b < self.refractory);
        let crossed = ssf > self.threshold && self.ssf_hist.at(1) <= self.threshold;
        if crossed && !refractory {
            self.pending = Some(t);
            self.top = y;
        }
        None
    }

    fn reset(&mut self) {
        // In place, as `Elgendi`'s: the settings stay, every learnt value
        // goes back to `new`'s (`reset_equals_new` checks the two).
        self.ssf = RunningSum::default();
        self.last_y = 0.0;
        self.learn_sum = 0.0;
        self.max_avg = 0.0;
        self.threshold = f32::INFINITY;
        self.t = 0;
        self.last_beat = None;
        self.last_change = 0;
        self.interval = START_INTERVAL_S * self.fs_hz;
        self.pending = None;
        self.top = f32::NEG_INFINITY;
        self.rises = Ring::new();
        self.ssf_hist = Ring::new();
        self.filtered = Ring::new();
    }
}

impl Zong {
    /// How long after the onset the systolic peak is looked for: at most
    /// [`PEAK_SEARCH_S`], and never into the next pulse at fast rates.
    fn peak_span(&self) -> usize {
        // Waiting no longer than the refractory period means the wait can
        // never hide the next pulse's crossing.
        let cap = self.peak_search.min(self.refractory as usize);
        (libm::roundf(PEAK_SPAN_IBI * self.interval) as usize).clamp(1, cap)
    }

    /// The longest wait after a crossing for the pulse to turn down: the
    /// refractory period, or 60 % of the recent interval when longer
    /// (the next pulse's crossing cannot come sooner), within the rings.
    fn longest_wait(&self) -> u64 {
        let cap = (RING / 2) as u64;
        (libm::roundf(LONGEST_WAIT_IBI * self.interval) as u64)
            .max(self.refractory)
            .min(cap)
    }

    fn finish(&mut self, now: u64, cross: u64) -> Option<Candidate> {
        let age_cross = (now - cross) as usize;
        // The pulse's SSF maximum from the crossing until the pulse turned
        // down: a crossing early on the foot (a threshold learnt too low)
        // still measures the whole upstroke, so the threshold comes back
        // up instead of staying low.
        let mut ssf_max = 0.0f32;
        for a in 0..=age_cross {
            ssf_max = max_f32(ssf_max, self.ssf_hist.at(a));
        }
        // Onset: back from the crossing to where the SSF was still below
        // 1 % of that maximum.
        let floor = ONSET_FRACTION * ssf_max;
        let oldest = (age_cross + self.search).min(self.ssf_hist.len().saturating_sub(1));
        let mut onset_age = oldest;
        for a in age_cross..=oldest {
            if self.ssf_hist.at(a) < floor {
                onset_age = a;
                break;
            }
        }
        // Systolic peak: the band-passed maximum after the onset.
        let mut best = f32::NEG_INFINITY;
        let mut best_age = age_cross;
        for a in 0..=onset_age {
            let v = self.filtered.at(a);
            if v > best {
                best = v;
                best_age = a;
            }
        }
        if self.last_beat.is_none() {
            // The first pulse's maximum is the best guess of recent
            // pulses' maxima (the learnt mean is only a start).
            self.max_avg = ssf_max;
        } else {
            self.max_avg += AVERAGE_WEIGHT * (ssf_max - self.max_avg);
        }
        self.threshold = THRESHOLD_FRACTION * self.max_avg;
        if let Some(last) = self.last_beat {
            let gap = (cross - last) as f32;
            if gap < GAP_LIMIT * self.interval {
                self.interval += AVERAGE_WEIGHT * (gap - self.interval);
            }
        }
        self.last_beat = Some(cross);
        self.last_change = cross;
        Some(Candidate {
            peak: now - best_age as u64,
            onset: Some(now - onset_age as u64),
            amplitude: best,
            uncertain: false,
        })
    }
}
