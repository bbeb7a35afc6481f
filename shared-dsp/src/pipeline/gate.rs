//! The candidate gate: which of the detector's candidates are systolic
//! peaks. A running peak level in the manner of the signal-peak level of
//! J. Pan, W. J. Tompkins, "A real-time QRS detection algorithm", IEEE
//! Trans. Biomed. Eng. 32(3):230–236, 1985 drops diastolic waves and small
//! bumps; two like small ones in a row set a new level (their search-back
//! idea); a floor after restarts, from the level of trusted pulses, keeps a
//! lifted finger's noise out, and a steady smooth run below it lifts it.

use super::rate;
use super::ring::History;
use crate::math::{max_f32, min_f32};

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

/// Small candidates in a row, of like height, after which the last is
/// taken as a beat and as the new peak level: a level set by an artefact,
/// or a pulse that shrank, must not lock real pulses out for long.
pub const RELEVEL_AFTER: u32 = 2;

/// Two small candidates are of like height when neither is more than this
/// many times the other.
pub const RELEVEL_LIKE: f32 = 2.0;

/// The level follows a larger pulse this fraction of the way at once (a
/// grown pulse soon sets the level; tuned with the gates above)…
pub const LEVEL_RISE: f32 = 0.5;
/// …and a smaller one this fraction (Pan and Tompkins' 1/8: one small
/// pulse must not open the gate to diastolic waves).
pub const LEVEL_FALL: f32 = 0.125;

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

/// The intervals of such a run lie within this ratio of each other.
pub const FLOOR_RUN_STEADY: f32 = 1.2;

/// While there is no signal, the floor halves every this many seconds.
pub const FLOOR_HALF_S: f32 = 4.0;

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

/// A trusted level that rose above the last one by more than this factor
/// must come from smooth pulses ([`SMOOTH_RATIO`]) to be trusted: band-passed
/// noise can look good (tuned with the gates above).
pub const TRUSTED_RISE: f32 = 1.5;

/// A candidate this soon after the last beat is the same pulse found
/// again, ms (three quarters of the shortest plausible interval).
pub const DUPLICATE_MS: f32 = 0.75 * rate::MIN_IBI_MS;

/// What the gate knows of the beats before a candidate.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Recent {
    /// Input index of the last beat's peak (since the last restart).
    pub last_peak: Option<u64>,
    /// Median of the recent intervals, ms.
    pub median_ibi_ms: Option<f32>,
}

/// The gate's levels.
#[derive(Clone, Copy, Debug)]
#[repr(C)]
pub struct CandidateGate {
    // Smallest candidate height that may count, set at a restart from the
    // trusted level (0: none), and the factor per detector sample that
    // halves it in FLOOR_HALF_S while there is no signal.
    level_floor: f32,
    floor_decay: f32,
    fs: f32,
    peak_level: Option<f32>,
    // Candidates dropped as small since the last accepted one, and the
    // height of the last of them.
    dropped_in_row: u32,
    dropped_height: f32,
    // The gate's level while the signal was good (trusted pulses), since
    // the last restart took it for the floor.
    trusted_level: Option<f32>,
    // The last candidates below the level floor in a row (input index of
    // the peak, height), oldest first, and how many are held (the count
    // first: no padding before the array).
    under_floor: usize,
    under: [(u64, f32); FLOOR_RUN],
}

impl CandidateGate {
    /// A gate for input at `fs` and a detector at `fd`, Hz.
    pub fn new(fs: f32, fd: f32) -> Self {
        Self {
            level_floor: 0.0,
            // 1 − ln 2 / n: halves in n samples to within 0.3 % (n ≥ 100).
            floor_decay: 1.0 - core::f32::consts::LN_2 / (FLOOR_HALF_S * fd),
            fs,
            peak_level: None,
            dropped_in_row: 0,
            dropped_height: 0.0,
            trusted_level: None,
            under: [(0, 0.0); FLOOR_RUN],
            under_floor: 0,
        }
    }

    /// One detector sample without a signal: the floor sinks. (Out of
    /// line: the caller's per-sample test is then only a branch.)
    #[cold]
    #[inline(never)]
    pub fn sink(&mut self) {
        self.level_floor *= self.floor_decay;
    }

    /// After a restart: the trusted level (if any) sets the floor, and the
    /// level is learnt again. The sensor is likely the same after a restart
    /// and so is the pulse's size within a wide margin: candidates far
    /// below the level of the last trusted pulses (noise on a lifted
    /// finger) cannot set a new one. Only trusted pulses set the floor, and
    /// only once: an artefact's level never does, and the floor then only
    /// sinks until pulses are trusted again.
    pub fn restart(&mut self) {
        if let Some(level) = self.trusted_level.take() {
            self.level_floor = max_f32(level / FLOOR_DIVISOR, self.level_floor);
        }
        self.peak_level = None;
        self.dropped_in_row = 0;
    }

    /// Drop what is not a systolic peak: a bump much smaller than recent
    /// beats, or a small one soon after a beat (the diastolic wave, which
    /// gets a block of its own when the heart is slow); the level follows
    /// what is kept. `peak` is the candidate's input index, `a` its
    /// height; `rough` the input's roughness ([`roughness`]), worked out
    /// only when needed.
    pub fn accept(&mut self, peak: u64, a: f32, recent: Recent, rough: impl Fn() -> f32) -> bool {
        if a.is_nan() || a <= 0.0 {
            return false;
        }
        if a < self.level_floor {
            return self.below_floor(peak, a, rough);
        }
        self.under_floor = 0;
        let Some(level) = self.peak_level else {
            self.peak_level = Some(a);
            self.dropped_in_row = 0;
            return true;
        };
        let since_ms = recent
            .last_peak
            .map(|p| peak.saturating_sub(p) as f32 * 1000.0 / self.fs);
        if since_ms.is_some_and(|s| s < DUPLICATE_MS) {
            // The same pulse found twice (its top is placed on the input,
            // so two candidates can land on it), or faster than any heart.
            return false;
        }
        let early = match (since_ms, recent.median_ibi_ms) {
            (Some(s), Some(m)) => s < EARLY_FRACTION * m && s < EARLY_MAX_MS,
            _ => false,
        };
        let small = a < SMALL_FRACTION * level;
        let too_small_for_early = early && a < EARLY_LEVEL_FRACTION * level;
        if small || too_small_for_early {
            return self.small(a, early, rough);
        }
        self.dropped_in_row = 0;
        // Follow a larger pulse quickly, a smaller one slowly.
        let rate = if a > level { LEVEL_RISE } else { LEVEL_FALL };
        self.peak_level = Some(level + rate * (a - level));
        true
    }

    /// A small candidate of height `a`: a level set by an artefact, or a
    /// pulse that shrank, would lock every real pulse out, so small
    /// candidates of like height in a row, none of them early, set a new
    /// level (the search-back idea of Pan and Tompkins).
    fn small(&mut self, a: f32, early: bool, rough: impl Fn() -> f32) -> bool {
        let like = self.dropped_in_row > 0
            && a * RELEVEL_LIKE >= self.dropped_height
            && a <= RELEVEL_LIKE * self.dropped_height;
        if early {
            return false;
        }
        if a < SMOOTH_RATIO * rough() {
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
        false
    }

    /// A candidate below the level floor: kept with the ones below it
    /// before; when the last [`FLOOR_RUN`] are a steady pulse (plausible
    /// intervals within [`FLOOR_RUN_STEADY`] of each other, heights within
    /// [`RELEVEL_LIKE`]), the floor is lifted and the candidate taken as a
    /// beat and as the new level.
    fn below_floor(&mut self, peak: u64, a: f32, rough: impl Fn() -> f32) -> bool {
        if a < SMOOTH_RATIO * rough() {
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
        if self.under_floor < FLOOR_RUN || !self.run_is_steady() {
            return false;
        }
        self.level_floor = 0.0;
        self.under_floor = 0;
        self.peak_level = Some(a);
        self.dropped_in_row = 0;
        true
    }

    /// Are the held candidates below the floor a steady pulse: plausible
    /// intervals within [`FLOOR_RUN_STEADY`] of each other, heights within
    /// [`RELEVEL_LIKE`]?
    fn run_is_steady(&self) -> bool {
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
        steady && high <= RELEVEL_LIKE * low
    }

    /// A trusted beat of `height` (good, with an interval, after another,
    /// while the signal is good): its level may set the floor of the next
    /// restart, and the floor, which only guards the time without a pulse,
    /// has done its work (left in place, a pulse just around it would lose
    /// every other beat).
    pub fn trusted(&mut self, height: f32, rough: impl Fn() -> f32) {
        // A level first set or raised by half must come from smooth
        // pulses, not band-passed noise that looked good (measured only
        // then: it costs a pass over the input ring).
        let raised = match (self.trusted_level, self.peak_level) {
            (Some(t), Some(l)) => l > TRUSTED_RISE * t,
            _ => true,
        };
        if !raised || height >= SMOOTH_RATIO * rough() {
            self.trusted_level = self.peak_level;
        }
        self.level_floor = 0.0;
    }
}

/// Mean absolute difference between successive input samples over the
/// last [`ROUGH_S`] of `input` (whose newest sample has index `n - 1`, `n`
/// of them seen, at `fs`): white noise's measure, which a smooth pulse of
/// the same height far exceeds.
// Out of line: called from the gate and from bookkeeping, rarely.
#[inline(never)]
pub fn roughness<const N: usize>(input: &History<N>, n: u64, fs: f32) -> f32 {
    let count = (libm::roundf(ROUGH_S * fs) as usize)
        .min(ROUGH_SAMPLES)
        .min((n.min(N as u64) as usize).saturating_sub(1));
    if count == 0 {
        return 0.0;
    }
    let newest = n - 1;
    let mut sum = 0.0;
    for a in 0..count as u64 {
        sum += libm::fabsf(input.at(newest - a) - input.at(newest - a - 1));
    }
    sum / count as f32
}

#[cfg(test)]
mod tests {
    use super::*;

    const FS: f32 = 125.0;

    fn none() -> Recent {
        Recent {
            last_peak: None,
            median_ibi_ms: None,
        }
    }

    #[test]
    fn a_diastolic_wave_is_dropped_and_the_next_pulse_kept() {
        let mut g = CandidateGate::new(FS, 62.5);
        assert!(g.accept(100, 1.0, none(), || 0.0));
        let recent = Recent {
            last_peak: Some(100),
            median_ibi_ms: Some(800.0),
        };
        // 300 ms later at a third of the level: early and small.
        assert!(!g.accept(137, 0.33, recent, || 0.0));
        // 800 ms later at the level: a beat.
        assert!(g.accept(200, 0.9, recent, || 0.0));
        // The same pulse again 40 ms on: a duplicate.
        let again = Recent {
            last_peak: Some(200),
            ..recent
        };
        assert!(!g.accept(205, 0.9, again, || 0.0));
    }

    #[test]
    fn two_like_small_pulses_set_a_new_level() {
        let mut g = CandidateGate::new(FS, 62.5);
        assert!(g.accept(0, 10.0, none(), || 0.0));
        let at = |p: u64| Recent {
            last_peak: Some(p),
            median_ibi_ms: Some(800.0),
        };
        assert!(!g.accept(100, 1.0, at(0), || 0.0));
        assert!(g.accept(200, 1.1, at(0), || 0.0));
        // The level is now the small pulse's: the next like one passes.
        assert!(g.accept(300, 1.0, at(200), || 0.0));
    }

    #[test]
    fn after_a_restart_the_floor_keeps_noise_out_until_a_steady_run_lifts_it() {
        let mut g = CandidateGate::new(FS, 62.5);
        assert!(g.accept(0, 30.0, none(), || 0.0));
        g.trusted(30.0, || 0.0);
        g.restart();
        // Floor 1.0: a rough bump below it is no pulse.
        assert!(!g.accept(100, 0.5, none(), || 1.0));
        // Three smooth pulses below it, 800 ms apart, of like height.
        assert!(!g.accept(200, 0.5, none(), || 0.01));
        assert!(!g.accept(300, 0.5, none(), || 0.01));
        assert!(g.accept(400, 0.55, none(), || 0.01));
    }

    #[test]
    fn roughness_is_the_mean_step_of_the_newest_input() {
        let mut h = History::<512>::new();
        for k in 0..200u64 {
            h.put(k, if k % 2 == 0 { 1.0 } else { -1.0 });
        }
        assert_eq!(roughness(&h, 200, 100.0), 2.0);
        assert_eq!(roughness(&h, 1, 100.0), 0.0);
    }
}
