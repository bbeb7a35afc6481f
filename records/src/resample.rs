//! Uneven frame times onto a uniform grid, by linear interpolation.
//!
//! Camera frames (and other loosely clocked sources) come at roughly a
//! steady rate with jitter and dropped frames. The pipeline needs one
//! sample every `1/fs` seconds, so each grid time `t0 + k/fs` (`t0` the
//! first frame's time, up to the last frame's time) takes the value on the
//! straight line between the two frames around it. Where those two frames
//! are more than [`Resampler::max_gap_s`] apart the grid sample is NaN, a
//! missing sample, which the pipeline counts as replaced: a line across a
//! long gap would invent a signal that was never seen.

use serde::Serialize;

mod walk;
pub use walk::GridWalk;

/// Longest gap between frames bridged by interpolation, seconds, by default.
///
/// 0.25 s is just under the shortest interval the pipeline accepts
/// (220 bpm: 0.273 s), so a bridged gap can shift a peak but can never
/// swallow a whole beat; longer gaps are left missing. At 30 frames/s it is
/// seven frames in a row lost.
pub const DEFAULT_MAX_GAP_S: f64 = 0.25;

/// A frame counts as resampled when its time is more than this many grid
/// periods from the nearest grid time.
pub const OFF_GRID_PERIODS: f64 = 0.25;

/// How to resample.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Resampler {
    /// Grid rate, Hz.
    pub fs: f64,
    /// Frames further apart than this (seconds) are not bridged.
    pub max_gap_s: f64,
}

/// What resampling did, for summaries.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct ResampleReport {
    /// Grid rate, Hz.
    pub grid_hz: f64,
    /// How the grid rate was chosen: `"given"` or `"median frame rate"`.
    pub grid_rate_from: &'static str,
    /// Frames read.
    pub frames: usize,
    /// Share of frames (0 to 1) whose time is more than a quarter grid
    /// period ([`OFF_GRID_PERIODS`]) from the nearest grid time: frames
    /// whose value reaches the pipeline only through interpolation.
    pub resampled_share: f64,
    /// Longest time between two successive frames, seconds.
    pub longest_gap_s: f64,
    /// Longest gap bridged by interpolation, seconds (longer ones left missing).
    pub max_gap_s: f64,
    /// Grid samples left missing (NaN) because they fall in a longer gap.
    pub missing_samples: usize,
}

/// The median of the steps between successive `times` (seconds, strictly
/// increasing, at least two) as a rate, Hz: the frame rate of a source
/// whose typical frame comes on time, unmoved by a few long gaps.
pub fn median_rate(times: &[f64]) -> f64 {
    let mut steps: Vec<f64> = times.windows(2).map(|w| w[1] - w[0]).collect();
    steps.sort_by(f64::total_cmp);
    let n = steps.len();
    let median = if n % 2 == 1 {
        steps[n / 2]
    } else {
        (steps[n / 2 - 1] + steps[n / 2]) / 2.0
    };
    1.0 / median
}

impl Resampler {
    /// Resample every column of `values` (each as long as `times`, seconds,
    /// strictly increasing, at least two) onto the grid; NaN values stay
    /// NaN wherever they take part in an interpolation.
    pub fn run(&self, times: &[f64], values: &[&[f64]]) -> (Vec<Vec<f64>>, ResampleReport) {
        let period = 1.0 / self.fs;
        let t0 = times[0];
        let span = times[times.len() - 1] - t0;
        // A tiny allowance so that a grid time equal to the last frame's
        // time is not lost to rounding.
        let n = (span / period + 1e-9).floor() as usize + 1;
        let mut out: Vec<Vec<f64>> = values.iter().map(|_| Vec::with_capacity(n)).collect();
        let mut missing = 0;
        let mut i = 0; // times[i] <= t < times[i + 1]
        for k in 0..n {
            let t = t0 + k as f64 * period;
            while i + 2 < times.len() && times[i + 1] <= t {
                i += 1;
            }
            let (ta, tb) = (times[i], times[i + 1]);
            let bridged = tb - ta <= self.max_gap_s;
            // Past the last frame by rounding only: take the last frame.
            let w = ((t - ta) / (tb - ta)).clamp(0.0, 1.0);
            let on_frame = w == 0.0 || w == 1.0;
            if !bridged && !on_frame {
                missing += 1;
            }
            for (col, v) in out.iter_mut().zip(values) {
                col.push(if bridged || on_frame {
                    v[i] + w * (v[i + 1] - v[i])
                } else {
                    f64::NAN
                });
            }
        }
        let off_grid = times
            .iter()
            .filter(|&&t| {
                let k = ((t - t0) / period).round();
                ((t - t0) / period - k).abs() > OFF_GRID_PERIODS
            })
            .count();
        let longest_gap_s = times.windows(2).map(|w| w[1] - w[0]).fold(0.0, f64::max);
        let report = ResampleReport {
            grid_hz: self.fs,
            grid_rate_from: "given",
            frames: times.len(),
            resampled_share: off_grid as f64 / times.len() as f64,
            longest_gap_s,
            max_gap_s: self.max_gap_s,
            missing_samples: missing,
        };
        (out, report)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn known_uneven_times_give_known_values() {
        // Frames at 0, 0.1, 0.25, 0.3 s of a line v = 10 t (+ 1 at 0.3 s),
        // onto a 20 Hz grid: 0, 0.05, ..., 0.3.
        let times = [0.0, 0.1, 0.25, 0.3];
        let v = [0.0, 1.0, 2.5, 4.0];
        let r = Resampler {
            fs: 20.0,
            max_gap_s: 0.25,
        };
        let (out, rep) = r.run(&times, &[&v]);
        let want = [0.0, 0.5, 1.0, 1.5, 2.0, 2.5, 4.0];
        assert_eq!(out[0].len(), want.len());
        for (got, want) in out[0].iter().zip(want) {
            assert!((got - want).abs() < 1e-12, "{:?}", out[0]);
        }
        // 0.25 s is on the grid (k = 5), every frame is: nothing resampled.
        assert_eq!(rep.resampled_share, 0.0);
        assert!((rep.longest_gap_s - 0.15).abs() < 1e-12);
        assert_eq!(rep.missing_samples, 0);
    }

    #[test]
    fn frames_off_the_grid_are_counted() {
        // A 10 Hz grid; the frame at 0.14 s is 0.4 periods off, 0.21 s 0.1.
        let times = [0.0, 0.14, 0.21, 0.3];
        let v = [0.0; 4];
        let (_, rep) = Resampler {
            fs: 10.0,
            max_gap_s: 1.0,
        }
        .run(&times, &[&v]);
        assert_eq!(rep.resampled_share, 0.25);
    }

    #[test]
    fn a_long_gap_becomes_missing_samples() {
        // 0.4 s without a frame between 0.1 and 0.5 s; 10 Hz grid.
        let times = [0.0, 0.1, 0.5, 0.6];
        let v = [1.0, 2.0, 6.0, 7.0];
        let (out, rep) = Resampler {
            fs: 10.0,
            max_gap_s: 0.25,
        }
        .run(&times, &[&v]);
        let out = &out[0];
        assert_eq!(out.len(), 7);
        assert_eq!(&out[..2], &[1.0, 2.0]);
        assert!(out[2..5].iter().all(|x| x.is_nan()), "{out:?}");
        assert!((out[5] - 6.0).abs() < 1e-12 && (out[6] - 7.0).abs() < 1e-12);
        assert_eq!(rep.missing_samples, 3);
        assert!((rep.longest_gap_s - 0.4).abs() < 1e-12);
    }

    #[test]
    fn median_rate_ignores_a_few_gaps() {
        let times = [0.0, 0.033, 0.066, 0.3, 0.333];
        assert!((median_rate(&times) - 1.0 / 0.033).abs() < 1e-6);
    }
}
