//! Scoring detected beats against a chest strap's list of R-R intervals,
//! recorded on a clock of its own.
//!
//! **Alignment.** The strap's intervals become beat times `b_0 = 0`,
//! `b_j = RR_0 + … + RR_(j−1)` (ms). For every whole-millisecond offset
//! `o` at which at least half of the strap's span lies inside the
//! recording (`−T/2 ≤ o ≤ D − T/2`, `T` the strap's total, `D` the
//! recording's length), each strap beat at `b_j + o` scores
//! `1 − (d/K)²` where `d` is the distance to the nearest detected peak and
//! `K` = [`ALIGN_KERNEL_MS`], 0 beyond it; the offset with the highest sum
//! wins. Counting beats within the ±150 ms matching window alone is nearly
//! as high one beat off on a steady rhythm (every beat is then off by its
//! interval's difference from the next, tens of ms); a score that rewards
//! closeness within a narrower `K` follows the sequence of intervals, not
//! only their number. The best whole millisecond is refined by a parabola through its
//! neighbours (at most ±0.5 ms). A photoplethysmogram's peak comes a pulse
//! arrival time (a few hundred ms) after the R wave; the offset takes that
//! in as well.
//!
//! **How well it is determined.** The *rival* is the best offset more than
//! 300 ms from the winner; `margin = 1 − rival/best`, 0 to 1. The offset is
//! called *determined* when the margin is at least [`DETERMINED_MARGIN`].
//!
//! **Figures**, at the chosen offset:
//!
//! * beats are matched one to one as mutual nearest neighbours within ±W;
//! * a *matched interval* is two successive strap beats matched to two
//!   successive detected beats of which the second carries an interval
//!   (`ibi_ms`); its error is `|IBI − RR|`. It is *good* when both of its
//!   detected beats are good (`flags.is_good()`). Median and 95th
//!   percentile (nearest rank: the `⌈0.95·n⌉`-th smallest) over all and
//!   over the good ones;
//! * the *span* is from the later of the first strap beat and our first
//!   beat to the earlier of the two last beats. The strap's figures use
//!   its intervals with both beats inside the span (all taken as normal),
//!   ours the normal-to-normal intervals (both beats good, as
//!   [`crate::replay::Replay::hrv`]) of our beats inside it; mean heart rate
//!   is `60000 / mean interval`, SDNN and RMSSD as `plethwire_dsp::hrv`
//!   (Task Force of the ESC and NASPE 1996).

use plethwire_dsp::hrv::hrv;
use plethwire_dsp::pipeline::BeatEvent;
use serde::Serialize;

use crate::replay::Replay;

/// Matching window, ms (ANSI/AAMI EC57 practice: ±150 ms).
pub const WINDOW_MS: f64 = 150.0;
/// Half-width of the alignment score's kernel, ms (our choice: half the
/// matching window, wider than the scatter of a pulse's arrival and of
/// 30 frames/s sampling, narrower than a typical beat-to-beat change).
pub const ALIGN_KERNEL_MS: f64 = 75.0;
/// The rival offset is the best one further than this from the winner, ms.
pub const RIVAL_DISTANCE_MS: i64 = 300;
/// Smallest margin for an offset to count as determined (our choice: a
/// rival at most 90 % as good).
pub const DETERMINED_MARGIN: f64 = 0.1;

/// The offset that puts the strap's beats on ours.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Alignment {
    /// Time of the strap's first beat on the recording's clock, ms.
    pub offset_ms: f64,
    /// The winning score (about the number of strap beats on a peak).
    pub score: f64,
    /// The best offset more than 300 ms from the winner, ms.
    pub rival_offset_ms: f64,
    /// Its score.
    pub rival_score: f64,
    /// `1 − rival_score / score`, 0 to 1.
    pub margin: f64,
    /// `margin ≥` [`DETERMINED_MARGIN`].
    pub determined: bool,
}

/// Beat times of an interval list: 0, then the running sums, ms.
pub fn beat_times(rr_ms: &[f64]) -> Vec<f64> {
    let mut t = Vec::with_capacity(rr_ms.len() + 1);
    let mut sum = 0.0;
    t.push(0.0);
    for r in rr_ms {
        sum += r;
        t.push(sum);
    }
    t
}

/// Distance from `t` to the nearest of `sorted`, ms (infinite when empty).
fn nearest(sorted: &[f64], t: f64) -> (usize, f64) {
    let i = sorted.partition_point(|&p| p < t);
    let mut best = (0, f64::INFINITY);
    for k in [i.wrapping_sub(1), i] {
        if let Some(&p) = sorted.get(k) {
            if (p - t).abs() < best.1 {
                best = (k, (p - t).abs());
            }
        }
    }
    best
}

/// The alignment score of every whole-millisecond offset `lo..=hi`: for
/// each, the sum over strap beats (in order) of the kernel of the
/// distance to the nearest peak. Only offsets within the kernel of some
/// peak add anything, so each strap beat visits, for each peak, the few
/// offsets that put it within [`ALIGN_KERNEL_MS`] of that peak, and adds
/// there when that peak is the nearest (the first of equally near ones):
/// the same sums as evaluating every offset, at a small part of the cost.
fn scores_over(strap: &[f64], peaks: &[f64], lo: i64, hi: i64) -> Vec<f64> {
    let mut scores = vec![0.0; (hi - lo + 1) as usize];
    let dist = |k: Option<usize>, t: f64| {
        k.and_then(|k| peaks.get(k))
            .map_or(f64::INFINITY, |&p| (p - t).abs())
    };
    for &b in strap {
        for (i, &p) in peaks.iter().enumerate() {
            let first = ((p - b - ALIGN_KERNEL_MS).floor() as i64).max(lo);
            let last = ((p - b + ALIGN_KERNEL_MS).ceil() as i64).min(hi);
            for o in first..=last {
                let t = b + o as f64;
                let here = (p - t).abs();
                let nearest = here < dist(i.checked_sub(1), t) && here <= dist(Some(i + 1), t);
                let d = here / ALIGN_KERNEL_MS;
                if nearest && d < 1.0 {
                    scores[(o - lo) as usize] += 1.0 - d * d;
                }
            }
        }
    }
    scores
}

/// Align strap beat times `strap` (from [`beat_times`]) to detected peak
/// times `peaks` (ms, sorted) of a recording `duration_ms` long; `None`
/// when either has no beats.
pub fn align(strap: &[f64], peaks: &[f64], duration_ms: f64) -> Option<Alignment> {
    let total = *strap.last()?;
    if peaks.is_empty() {
        return None;
    }
    let lo = (-total / 2.0).floor() as i64;
    let hi = ((duration_ms - total / 2.0).ceil() as i64).max(lo);
    let scores = scores_over(strap, peaks, lo, hi);
    let (bi, &best) = scores
        .iter()
        .enumerate()
        .max_by(|a, b| a.1.total_cmp(b.1).then(b.0.cmp(&a.0)))?;
    let best_o = lo + bi as i64;
    let (ri, &rival) = scores
        .iter()
        .enumerate()
        .filter(|(i, _)| (lo + *i as i64 - best_o).abs() > RIVAL_DISTANCE_MS)
        .max_by(|a, b| a.1.total_cmp(b.1))
        .unwrap_or((bi, &0.0));
    let refine = match (bi.checked_sub(1).map(|i| scores[i]), scores.get(bi + 1)) {
        (Some(a), Some(&c)) => {
            let curvature = a - 2.0 * best + c;
            if curvature < 0.0 {
                (0.5 * (a - c) / curvature).clamp(-0.5, 0.5)
            } else {
                0.0
            }
        }
        _ => 0.0,
    };
    let margin = if best > 0.0 { 1.0 - rival / best } else { 0.0 };
    Some(Alignment {
        offset_ms: best_o as f64 + refine,
        score: best,
        rival_offset_ms: (lo + ri as i64) as f64,
        rival_score: rival,
        margin,
        determined: margin >= DETERMINED_MARGIN,
    })
}

/// `|IBI − RR|` over a set of matched intervals.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct IntervalAgreement {
    /// Matched intervals.
    pub count: usize,
    /// Median, ms.
    pub median_abs_ms: Option<f64>,
    /// 95th percentile (nearest rank), ms.
    pub p95_abs_ms: Option<f64>,
}

impl IntervalAgreement {
    fn of(mut errors: Vec<f64>) -> Self {
        errors.sort_by(f64::total_cmp);
        let n = errors.len();
        let rank =
            |q: f64| (n > 0).then(|| errors[((q * n as f64).ceil() as usize).clamp(1, n) - 1]);
        Self {
            count: n,
            median_abs_ms: (n > 0).then(|| {
                if n % 2 == 1 {
                    errors[n / 2]
                } else {
                    (errors[n / 2 - 1] + errors[n / 2]) / 2.0
                }
            }),
            p95_abs_ms: rank(0.95),
        }
    }
}

/// One figure, ours and the strap's.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Versus {
    /// From our beats.
    pub ours: Option<f64>,
    /// From the strap's intervals.
    pub strap: Option<f64>,
}

/// A recording scored against a strap's R-R list.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StrapScore {
    /// Intervals in the strap's list.
    pub strap_intervals: usize,
    /// The offset and how well it is determined.
    pub alignment: Alignment,
    /// Start and end of the span both cover, s on the recording's clock.
    pub span_s: (f64, f64),
    /// Strap beats matched one to one to a detected beat.
    pub matched_beats: usize,
    /// Over every matched interval.
    pub intervals_all: IntervalAgreement,
    /// Over the matched intervals whose two beats are good.
    pub intervals_good: IntervalAgreement,
    /// Mean heart rate over the span, bpm.
    pub mean_hr_bpm: Versus,
    /// RMSSD over the span, ms.
    pub rmssd_ms: Versus,
    /// SDNN over the span, ms.
    pub sdnn_ms: Versus,
}

/// Score `run` against the strap's intervals `rr_ms`; `None` when either
/// has no beats.
pub fn score_strap(run: &Replay, rr_ms: &[f64]) -> Option<StrapScore> {
    let mut beats: Vec<BeatEvent> = run.beats.clone();
    beats.sort_by_key(|b| b.peak_index);
    let peaks: Vec<f64> = beats
        .iter()
        .map(|b| b.peak_index as f64 * 1000.0 / run.fs)
        .collect();
    let strap = beat_times(rr_ms);
    let duration_ms = run.samples as f64 * 1000.0 / run.fs;
    let alignment = align(&strap, &peaks, duration_ms)?;
    let placed: Vec<f64> = strap.iter().map(|b| b + alignment.offset_ms).collect();
    // Mutual nearest neighbours within the window.
    let matched: Vec<Option<usize>> = placed
        .iter()
        .enumerate()
        .map(|(j, &t)| {
            let (i, d) = nearest(&peaks, t);
            (d <= WINDOW_MS && nearest(&placed, peaks[i]).0 == j).then_some(i)
        })
        .collect();
    let (mut all, mut good) = (Vec::new(), Vec::new());
    for j in 0..rr_ms.len() {
        if let (Some(a), Some(b)) = (matched[j], matched[j + 1]) {
            if b == a + 1 {
                if let Some(ibi) = beats[b].ibi_ms {
                    let e = (f64::from(ibi) - rr_ms[j]).abs();
                    all.push(e);
                    if beats[a].flags.is_good() && beats[b].flags.is_good() {
                        good.push(e);
                    }
                }
            }
        }
    }
    let start = placed[0].max(peaks[0]);
    let end = placed[placed.len() - 1].min(peaks[peaks.len() - 1]);
    let strap_in: Vec<f32> = (0..rr_ms.len())
        .filter(|&j| placed[j] >= start && placed[j + 1] <= end)
        .map(|j| rr_ms[j] as f32)
        .collect();
    let strap_hrv = hrv(&strap_in, None).unwrap_or_default();
    let ours_in = Replay {
        beats: beats
            .iter()
            .zip(&peaks)
            .filter(|(_, &p)| p >= start && p <= end)
            .map(|(b, _)| *b)
            .collect(),
        ..run.clone()
    };
    let ours_hrv = ours_in.hrv();
    let f = |v: Option<f32>| v.map(f64::from);
    Some(StrapScore {
        strap_intervals: rr_ms.len(),
        alignment,
        span_s: (start / 1000.0, end / 1000.0),
        matched_beats: matched.iter().flatten().count(),
        intervals_all: IntervalAgreement::of(all),
        intervals_good: IntervalAgreement::of(good),
        mean_hr_bpm: Versus {
            ours: f(ours_hrv.mean_hr_bpm),
            strap: f(strap_hrv.mean_hr_bpm),
        },
        rmssd_ms: Versus {
            ours: f(ours_hrv.rmssd_ms),
            strap: f(strap_hrv.rmssd_ms),
        },
        sdnn_ms: Versus {
            ours: f(ours_hrv.sdnn_ms),
            strap: f(strap_hrv.sdnn_ms),
        },
    })
}

#[cfg(test)]
mod tests;
