//! Peak placement: where a candidate's systolic peak, foot-to-peak height,
//! onset and interval fiducial lie. The detector's peak (on the
//! band-passed signal) is moved to the smoothed signal's top near it, then
//! back by the low-pass's group delay to the input, where the input's own
//! first arrival at its top is the peak.

use super::ring::{History, Trace};
use crate::math::{max_f32, min_f32};
use core::cmp::Ordering;

/// Frequency at which the low-pass's group delay is taken to move peaks
/// and onsets back to where they are in the input, Hz: a pulse's
/// fundamental (72 bpm), where the systolic upstroke's energy is.
pub const DELAY_AT_HZ: f32 = 1.2;

/// Half-width of the search for the input's maximum around the
/// delay-compensated smoothed peak, seconds: the low-pass leans an
/// asymmetric pulse's peak later by up to ~30 ms beyond its group delay.
pub const PEAK_REFINE_S: f32 = 0.04;

/// The peak is where the input first comes within this fraction of the
/// pulse height of its maximum (about one ADC step of a typical pulse): a
/// flat or slowly rising top, common in finger pulses with a late
/// systolic shoulder, would otherwise put the peak at its far end.
pub const TOP_FRACTION: f32 = 0.005;

/// How far before the detector's peak the smoothed top is looked for,
/// seconds…
pub const SEARCH_BEFORE_S: f32 = 0.05;
/// …and how far after it (the band-pass moves a peak earlier by up to
/// ~100 ms)…
pub const SEARCH_AFTER_S: f32 = 0.25;
/// …but never more than this fraction of the recent interval after it
/// (never into the next pulse at fast rates).
pub const SEARCH_AFTER_IBI: f32 = 0.35;

/// The foot and the upstroke are looked for at most this fraction of an
/// interval before the peak.
pub const FOOT_BACK_IBI: f32 = 0.6;

/// The upstroke's fiducial is where it crosses this fraction of the
/// pulse's height below the peak (the 50 % amplitude point, common
/// practice for pulse timing).
pub const UPSTROKE_LEVEL: f32 = 0.5;

/// The interval assumed until one is measured, ms (75 bpm).
pub const DEFAULT_IBI_MS: f32 = 800.0;

/// What placement knows of the signal so far, at one detector sample.
#[derive(Clone, Copy, Debug)]
pub struct Look<'a, const S: usize, const I: usize> {
    /// The smoothed (low-passed) signal at the detector's rate.
    pub smoothed: Trace<'a, S>,
    /// The conditioned input.
    pub input: &'a History<I>,
    /// Detector index of the newest smoothed sample.
    pub now: u64,
    /// Detector samples since the last restart (`now` minus its index).
    pub since_restart: usize,
    /// Median of the recent intervals, ms.
    pub median_ibi_ms: Option<f32>,
}

/// The fixed quantities of peak placement.
#[derive(Clone, Copy, Debug)]
pub struct PeakPlacement {
    fd: f32,
    decim: u32,
    // Group delay of the low-pass near the pulse's fundamental, input
    // samples: subtracted so peaks and onsets are those of the input.
    lowpass_delay: f32,
    search_before: usize,
    search_after: usize,
    refine: usize,
}

impl PeakPlacement {
    /// Placement for input at `fs` decimated by `decim` to `fd`, after a
    /// second-order Butterworth low-pass at `corner_hz`.
    pub fn new(fs: f32, fd: f32, decim: u32, corner_hz: f32) -> Self {
        Self {
            fd,
            decim,
            lowpass_delay: butterworth2_delay_s(corner_hz, DELAY_AT_HZ) * fs,
            search_before: libm::roundf(SEARCH_BEFORE_S * fd) as usize,
            search_after: libm::roundf(SEARCH_AFTER_S * fd) as usize,
            refine: (libm::roundf(PEAK_REFINE_S * fs) as usize).max(1),
        }
    }

    /// Half-width of the input search around a peak, input samples.
    pub fn refine(&self) -> usize {
        self.refine
    }

    /// The input index of detector index `d` (its block's last sample).
    pub fn to_input(&self, d: u64) -> u64 {
        let k = self.decim as u64;
        d * k + k - 1
    }

    /// The onset at detector index `onset` as an input index, moved back by
    /// the low-pass's delay as the peak is; `None` unless it comes before
    /// the beat's own peak (after a restart or an artefact the detector's
    /// onset can belong to another wave).
    pub fn onset_index(&self, onset: u64, peak: u64) -> Option<u64> {
        let at = self.to_input(onset) as i64 - libm::roundf(self.lowpass_delay) as i64;
        (at >= 0 && (at as u64) < peak).then_some(at as u64)
    }

    /// A recent interval in detector samples, [`DEFAULT_IBI_MS`] until one
    /// is known.
    fn period(&self, ibi_ms: Option<f32>) -> f32 {
        ibi_ms.unwrap_or(DEFAULT_IBI_MS) * self.fd / 1000.0
    }

    /// The systolic peak on the smoothed signal near the detector's peak
    /// at detector index `detected`, as a detector index.
    pub fn locate<const S: usize, const I: usize>(&self, look: &Look<S, I>, detected: u64) -> u64 {
        let age = (look.now - detected) as usize;
        let after = look.median_ibi_ms.map_or(self.search_after, |m| {
            (libm::roundf(SEARCH_AFTER_IBI * m * self.fd / 1000.0) as usize).min(self.search_after)
        });
        let newest = age.saturating_sub(after);
        let oldest = (age + self.search_before)
            .min(look.smoothed.len().saturating_sub(1))
            .min(look.since_restart);
        // The first of the highest; (half-open ranges: an inclusive one
        // tests for its end twice).
        let none = (f32::NEG_INFINITY, age.min(oldest));
        let best_age = if oldest >= newest {
            // Every age here is at most `len − 1`: read as runs of slots.
            let ages = look.smoothed.ages(newest, oldest + 1).zip(newest..);
            ages.fold(none, |(b, ba), (v, a)| if v > b { (v, a) } else { (b, ba) })
                .1
        } else if look.smoothed.at(newest) > none.0 {
            newest
        } else {
            none.1
        };
        look.now - best_age as u64
    }

    /// Foot-to-peak height on the smoothed input of the peak at detector
    /// index `peak_d`: the lowest point since the last beat's peak (input
    /// index `last_peak`, at most [`FOOT_BACK_IBI`] of an interval back).
    /// Unlike the band-passed value it does not ride with baseline wander,
    /// and a diastolic wave measures only its rise from the dicrotic notch.
    pub fn height<const S: usize, const I: usize>(
        &self,
        look: &Look<S, I>,
        peak_d: u64,
        last_peak: Option<u64>,
    ) -> f32 {
        let age = (look.now - peak_d) as usize;
        let mut back = libm::roundf(FOOT_BACK_IBI * self.period(look.median_ibi_ms)) as usize;
        if let Some(last) = last_peak {
            let last_age = look.now.saturating_sub(last / self.decim as u64) as usize;
            if last_age > age {
                back = back.min(last_age - age);
            }
        }
        let oldest = (age + back)
            .min(look.smoothed.len().saturating_sub(1))
            .min(look.since_restart);
        let mut foot = f32::INFINITY;
        if oldest >= age {
            // Every age here is at most `len − 1`: read as runs of slots.
            foot = look.smoothed.ages(age, oldest + 1).fold(foot, min_f32);
        } else {
            foot = min_f32(foot, look.smoothed.at(age));
        }
        look.smoothed.at(age) - foot
    }

    /// Where the peak lies in the input, as an input index: the smoothed
    /// signal's peak at detector index `peak_d` moved back by the
    /// low-pass's group delay; then the input's own maximum within
    /// [`PEAK_REFINE_S`] of there, and the first sample before it within
    /// [`TOP_FRACTION`] of `height` of it. `n` is the input index of the
    /// newest sample. Beyond the input ring (slow events at 1 kHz) the
    /// compensated smoothed peak stands.
    pub fn on_input<const I: usize>(
        &self,
        input: &History<I>,
        peak_d: u64,
        height: f32,
        n: u64,
    ) -> u64 {
        let guess = self.to_input(peak_d) as f32 - self.lowpass_delay;
        // Age of the guess in input samples (the newest input is age 0).
        let age = n as f32 - guess;
        let held = (n + 1).min(I as u64);
        let newest = libm::roundf(age) as i64 - self.refine as i64;
        let oldest = libm::roundf(age) as i64 + self.refine as i64;
        if newest < 1 || oldest + 1 >= held as i64 {
            return (libm::roundf(guess) as i64).max(0) as u64;
        }
        let (newest, oldest) = (newest as usize, oldest as usize);
        let mut best = f32::NEG_INFINITY;
        let mut best_age = oldest;
        for a in (newest..=oldest).rev() {
            let v = input.at(n - a as u64);
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
            if input.at(n - a as u64) >= level {
                at = a;
                break;
            }
        }
        n - at as u64
    }

    /// Where the upstroke before the smoothed peak at detector index
    /// `peak_d` crosses [`UPSTROKE_LEVEL`] of the pulse's `height` below
    /// that peak, as an input index and a sub-sample offset (input samples,
    /// from linear interpolation between the two samples around the
    /// crossing). The interval fiducial: the upstroke is steepest about
    /// there, so noise moves the crossing least, less than it moves the
    /// peak or the point of steepest rise, both found where the slope or
    /// the curvature is flattest.
    pub fn upstroke<const S: usize, const I: usize>(
        &self,
        look: &Look<S, I>,
        peak_d: u64,
        height: f32,
    ) -> (u64, f32) {
        let smoothed = look.smoothed;
        let age = (look.now - peak_d) as usize;
        let mid = smoothed.at(age) - UPSTROKE_LEVEL * height;
        let period = self.period(look.median_ibi_ms);
        let back = (libm::roundf(FOOT_BACK_IBI * period) as usize).max(1);
        let oldest = (age + back)
            .min(smoothed.len().saturating_sub(1))
            .min(look.since_restart.saturating_sub(1));
        // The first age after the peak's below `mid` (a + 1 ≤ oldest ≤
        // len − 1: read as runs of slots); at most `oldest`.
        let under_mid = |v: f32| matches!(v.partial_cmp(&mid), None | Some(Ordering::Less));
        let above_mid = smoothed.ages(age + 1, oldest + 1).position(under_mid);
        let a = age + above_mid.unwrap_or(oldest.saturating_sub(age));
        // Samples a + 1 (below mid) and a (at or above it), when found.
        let (below, above) = (smoothed.at(a + 1), smoothed.at(a));
        let frac = if a < oldest && above > below {
            (mid - below) / (above - below)
        } else {
            1.0
        };
        // From sample a + 1 forward by `frac` of a detector sample.
        let d = self.decim as f32;
        (
            self.to_input(look.now.saturating_sub((a + 1) as u64)),
            frac * d,
        )
    }
}

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

#[cfg(test)]
mod tests {
    use super::super::ring::Ring;
    use super::*;

    #[test]
    fn the_group_delay_is_the_textbook_one_at_dc() {
        // At ω = 0, τ = √2 / ωc for a second-order Butterworth (the
        // derivative of its phase; common practice).
        let wc = 2.0 * core::f32::consts::PI * 8.0;
        let tau = butterworth2_delay_s(8.0, 0.0);
        assert!((tau - core::f32::consts::SQRT_2 / wc).abs() < 1e-7, "{tau}");
    }

    /// A half-sine pulse on the smoothed ring, peaking at detector index
    /// 40, 20 samples wide, from 0 to 1 over a flat 0.
    fn pulse_ring() -> Ring<256> {
        let mut r = Ring::new();
        for t in 0..60u64 {
            let phase = (t as f32 - 30.0) / 20.0;
            let v = if (0.0..=1.0).contains(&phase) {
                libm::sinf(core::f32::consts::PI * phase)
            } else {
                0.0
            };
            r.push(v);
        }
        r
    }

    #[test]
    fn the_smoothed_top_height_and_upstroke_of_a_pulse() {
        let smoothed = pulse_ring();
        let input = History::<512>::new();
        let p = PeakPlacement::new(100.0, 100.0, 1, 8.0);
        let look = Look {
            smoothed: smoothed.trace(),
            input: &input,
            now: 59,
            since_restart: 59,
            median_ibi_ms: Some(1000.0),
        };
        // The detector's peak a little early: the top is found at 40.
        assert_eq!(p.locate(&look, 37), 40);
        assert!((p.height(&look, 40, None) - 1.0).abs() < 1e-6);
        // The 50 % crossing of a half-sine is a sixth of its width in:
        // 30 + 20/6 ≈ 33.33, i.e. sample 33 and a third of one.
        let (at, frac) = p.upstroke(&look, 40, 1.0);
        assert_eq!(at, 33);
        assert!((frac - 1.0 / 3.0).abs() < 0.02, "{frac}");
    }

    #[test]
    fn the_input_peak_is_the_first_arrival_at_a_flat_top() {
        let mut input = History::<512>::new();
        // A top flat from 98 to 110 at 1.0.
        for n in 0..200u64 {
            let v = if (98..=110).contains(&n) { 1.0 } else { 0.0 };
            input.put(n, v);
        }
        // fs 100, decim 1: a guess near 100 once the delay is taken off.
        let p = PeakPlacement::new(100.0, 100.0, 1, 8.0);
        let delay = libm::roundf(p.lowpass_delay) as u64;
        assert_eq!(p.on_input(&input, 100 + delay, 1.0, 199), 98);
        assert_eq!(p.onset_index(50 + delay, 100), Some(50));
        assert_eq!(p.onset_index(100 + delay, 100), None);
    }
}
