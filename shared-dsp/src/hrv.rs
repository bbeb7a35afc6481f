//! Time-domain heart-rate variability of normal-to-normal (NN) intervals,
//! as defined by the Task Force of the European Society of Cardiology and
//! the North American Society of Pacing and Electrophysiology, "Heart rate
//! variability: standards of measurement, physiological interpretation and
//! clinical use", Eur Heart J 1996;17:354–381.
//!
//! Two forms compute the same numbers from the same data, bit for bit:
//! [`hrv`] over a slice of intervals, and [`HrvWindow`], a fixed-capacity
//! window of the most recent intervals that a beat pipeline feeds one
//! interval at a time and may query whenever it likes.
//!
//! # Definitions used here
//! * **NN interval**: an interval (ms) flagged good, finite and positive.
//!   Intervals flagged bad (ectopic beats, artefacts, missed detections) are
//!   left out of every statistic. A non-finite or non-positive interval is
//!   treated as bad whatever its flag says.
//! * **Successive difference**: `x[i+1] − x[i]`, formed only when intervals
//!   `i` and `i+1` are *both* NN and adjacent in the input. A bad interval
//!   therefore removes itself and the differences on either side of it; the
//!   NN intervals before and after it are not differenced across the gap,
//!   because that would mix two beats that did not follow each other.
//! * **SDNN**: the *sample* standard deviation of the NN intervals
//!   (denominator N − 1); needs at least 2 NN intervals.
//! * **RMSSD**: the root mean square of the successive differences; needs at
//!   least 1 difference.
//! * **NN50**: the number of successive differences whose magnitude exceeds
//!   50 ms (strictly). **pNN50** = NN50 divided by the number of successive
//!   differences (not by the number of intervals), in percent.
//! * **Mean NN** and **mean HR**: mean HR is `60000 / mean NN` in bpm, the
//!   beat rate over the time the NN intervals span (not the mean of
//!   per-beat rates, which is biased upwards by short intervals).
//!
//! Sums are accumulated in `f64` (cheap here, and it keeps SDNN of a long
//! window exact to f32 precision); the mean is taken first and the squared
//! deviations summed in a second pass, which avoids the cancellation of the
//! one-pass `Σx² − (Σx)²/N` formula.

use crate::math::sqrt;
use core::fmt;

/// Difference threshold of NN50 and pNN50, in ms (Task Force 1996).
pub const NN50_THRESHOLD_MS: f64 = 50.0;

/// Time-domain HRV statistics. Fields that need more data than was given
/// are `None`.
#[derive(Clone, Copy, Debug, PartialEq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct HrvStats {
    /// Number of NN intervals used.
    pub nn_count: usize,
    /// Number of successive differences formed (see the module rules).
    pub diff_count: usize,
    /// Mean NN interval, ms; needs 1 NN interval.
    pub mean_nn_ms: Option<f32>,
    /// Mean heart rate `60000 / mean NN`, bpm; needs 1 NN interval.
    pub mean_hr_bpm: Option<f32>,
    /// Sample standard deviation (N − 1) of the NN intervals, ms; needs 2.
    pub sdnn_ms: Option<f32>,
    /// Root mean square of successive differences, ms; needs 1 difference.
    pub rmssd_ms: Option<f32>,
    /// Number of successive differences larger than 50 ms in magnitude.
    pub nn50: usize,
    /// `100 · NN50 / diff_count`, percent; needs 1 difference.
    pub pnn50_percent: Option<f32>,
}

/// Why [`hrv`] refused its input.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum HrvError {
    /// The flag slice does not have one flag per interval.
    FlagCountMismatch {
        /// Number of intervals given.
        intervals: usize,
        /// Number of flags given.
        flags: usize,
    },
}

impl fmt::Display for HrvError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            HrvError::FlagCountMismatch { intervals, flags } => write!(
                f,
                "{intervals} intervals but {flags} good/bad flags; need one flag per interval"
            ),
        }
    }
}

#[cfg(feature = "std")]
impl std::error::Error for HrvError {}

/// HRV statistics of `intervals_ms`, optionally with one `good` flag per
/// interval (`None`: all good). See the module documentation for which
/// intervals and differences count.
///
/// Errors when `good` is given with a different length than `intervals_ms`.
pub fn hrv(intervals_ms: &[f32], good: Option<&[bool]>) -> Result<HrvStats, HrvError> {
    match good {
        None => Ok(stats_of(intervals_ms.iter().map(|&x| (x, true)))),
        Some(flags) if flags.len() == intervals_ms.len() => Ok(stats_of(
            intervals_ms.iter().copied().zip(flags.iter().copied()),
        )),
        Some(flags) => Err(HrvError::FlagCountMismatch {
            intervals: intervals_ms.len(),
            flags: flags.len(),
        }),
    }
}

/// The interval as an NN interval in f64, or `None` when it does not count.
#[inline]
fn nn(interval_ms: f32, good: bool) -> Option<f64> {
    (good && interval_ms.is_finite() && interval_ms > 0.0).then_some(interval_ms as f64)
}

/// The one implementation behind both forms, over `(interval, good)` pairs
/// in time order; walks them twice (mean first, then deviations).
fn stats_of<I>(items: I) -> HrvStats
where
    I: Iterator<Item = (f32, bool)> + Clone,
{
    let mut nn_count = 0usize;
    let mut sum = 0.0f64;
    let mut diff_count = 0usize;
    let mut sum_sq_diff = 0.0f64;
    let mut nn50 = 0usize;
    // The previous interval when it was NN; a bad one resets it to None so
    // no difference is formed across it.
    let mut prev: Option<f64> = None;
    for (x, good) in items.clone() {
        let Some(x) = nn(x, good) else {
            prev = None;
            continue;
        };
        nn_count += 1;
        sum += x;
        if let Some(p) = prev {
            let d = x - p;
            diff_count += 1;
            sum_sq_diff += d * d;
            if d.abs() > NN50_THRESHOLD_MS {
                nn50 += 1;
            }
        }
        prev = Some(x);
    }

    let mut stats = HrvStats {
        nn_count,
        diff_count,
        nn50,
        ..HrvStats::default()
    };
    if nn_count >= 1 {
        let mean = sum / nn_count as f64;
        stats.mean_nn_ms = Some(mean as f32);
        stats.mean_hr_bpm = Some((60_000.0 / mean) as f32);
        if nn_count >= 2 {
            let ss: f64 = items
                .filter_map(|(x, good)| nn(x, good))
                .map(|x| (x - mean) * (x - mean))
                .sum();
            stats.sdnn_ms = Some(sqrt(ss / (nn_count - 1) as f64) as f32);
        }
    }
    if diff_count >= 1 {
        stats.rmssd_ms = Some(sqrt(sum_sq_diff / diff_count as f64) as f32);
        stats.pnn50_percent = Some((100.0 * nn50 as f64 / diff_count as f64) as f32);
    }
    stats
}

/// The last `N` intervals with their good flags, for HRV over a sliding
/// window on a board: no allocation, `push` is O(1), and every query walks
/// at most `N` intervals twice, so its cost is bounded by the capacity.
///
/// A query gives exactly the numbers [`hrv`] gives on the same intervals in
/// the same order (the same code computes both).
#[derive(Clone, Debug)]
pub struct HrvWindow<const N: usize> {
    intervals_ms: [f32; N],
    good: [bool; N],
    /// Index of the oldest interval.
    start: usize,
    len: usize,
}

impl<const N: usize> Default for HrvWindow<N> {
    fn default() -> Self {
        Self::new()
    }
}

impl<const N: usize> HrvWindow<N> {
    /// Refuses `N = 0` at compile time.
    const CAPACITY_IS_POSITIVE: () = assert!(N > 0, "an HrvWindow needs a capacity of at least 1");

    /// An empty window.
    pub const fn new() -> Self {
        #[allow(clippy::let_unit_value)]
        let () = Self::CAPACITY_IS_POSITIVE;
        Self {
            intervals_ms: [0.0; N],
            good: [false; N],
            start: 0,
            len: 0,
        }
    }

    /// The capacity `N`.
    pub const fn capacity(&self) -> usize {
        N
    }

    /// Number of intervals held (good and bad), at most `N`.
    pub const fn len(&self) -> usize {
        self.len
    }

    /// Whether no interval is held.
    pub const fn is_empty(&self) -> bool {
        self.len == 0
    }

    /// Forget every interval, e.g. after the finger was lifted: intervals
    /// on either side of such a break are then never differenced.
    pub fn clear(&mut self) {
        self.start = 0;
        self.len = 0;
    }

    /// Append the newest interval (ms) and whether it is a good (NN) one;
    /// when the window is full the oldest interval drops out.
    pub fn push(&mut self, interval_ms: f32, good: bool) {
        let slot = (self.start + self.len) % N;
        self.intervals_ms[slot] = interval_ms;
        self.good[slot] = good;
        if self.len < N {
            self.len += 1;
        } else {
            self.start = (self.start + 1) % N;
        }
    }

    /// The held `(interval_ms, good)` pairs, oldest first.
    pub fn iter(&self) -> impl Iterator<Item = (f32, bool)> + Clone + '_ {
        (0..self.len).map(move |k| {
            let i = (self.start + k) % N;
            (self.intervals_ms[i], self.good[i])
        })
    }

    /// HRV statistics of every held interval.
    pub fn stats(&self) -> HrvStats {
        stats_of(self.iter())
    }

    /// HRV statistics of the newest intervals whose durations add up to at
    /// most `span_ms` (e.g. 300 000 for the Task Force's 5-minute
    /// short-term recording), limited to what the window holds.
    ///
    /// Bad intervals still occupy time and count towards the span;
    /// non-finite or non-positive ones count as zero duration.
    pub fn stats_recent_ms(&self, span_ms: f32) -> HrvStats {
        let span = span_ms as f64;
        let mut total = 0.0f64;
        let mut take = 0usize;
        for k in (0..self.len).rev() {
            let x = self.intervals_ms[(self.start + k) % N];
            total += if x.is_finite() && x > 0.0 {
                x as f64
            } else {
                0.0
            };
            if total > span {
                break;
            }
            take += 1;
        }
        stats_of(self.iter().skip(self.len - take))
    }
}

#[cfg(test)]
mod tests;
