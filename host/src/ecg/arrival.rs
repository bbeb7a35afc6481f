//! Detected pulses against the R peaks of an ECG from the same record.
//!
//! A pulse reaches the sensor a pulse-arrival delay after its R peak; the
//! delay changes with effort and posture, so it is estimated locally: for
//! each R peak, over the R peaks within ±30 s (a 60 s window), the delay
//! in 150-1000 ms after an R peak, and within 200 ms of the whole record's
//! own such delay, at which the most R peaks have a detected pulse within
//! ±25 ms (the mode of the R-to-pulse offsets), refined to the median of
//! those offsets. A mode rather than the median of
//! "the next pulse after each R peak": spurious pulses spread evenly over
//! the offsets and missed ones push the next beat's pulse a whole interval
//! later, so neither moves the mode, while both pull a median. Each R peak
//! is then moved by its delay and the pulses are matched one to one within
//! ±150 ms (ANSI/AAMI EC57 practice, [`crate::matching::match_pairs`]).

use super::usable::{in_spans, unusable_spans};
use super::{r_peaks, EcgError};
use crate::matching::{match_pairs, MatchCounts, MATCH_WINDOW_S};
use serde::Serialize;

/// Offsets after an R peak a pulse may arrive at, seconds. The pulse
/// itself takes about 0.2-0.3 s to the finger at rest and hardly less than
/// 0.15 s anywhere (from memory); the
/// range reaches 1 s because bedside monitor recordings carry their own
/// lag between the ECG and pleth outputs (BIDMC: 0.6-0.7 s, measured with
/// this module), and the densest offset still picks a pulse's own R peak
/// over the one before, whose offsets spread with the R-R variability.
pub const DELAY_RANGE_S: (f64, f64) = (0.150, 1.000);
/// Span of R peaks each local delay is estimated over, seconds.
pub const DELAY_WINDOW_S: f64 = 60.0;
/// Half-width of the bin the offsets are counted in, seconds.
const BIN_HALF_S: f64 = 0.025;
/// How far a local delay may be from the record's, seconds: the delay
/// moves with effort by tens of ms (about 0.1 s from rest to a run, from
/// memory), and a bound keeps a regular rhythm's windows from switching
/// to the offset from the R peak before (one R-R interval away).
const LOCAL_REACH_S: f64 = 0.200;
/// Grid the delay is searched on, seconds.
const GRID_S: f64 = 0.005;
/// Fewest R peaks with a pulse in the winning bin for a local estimate;
/// with fewer the record's own estimate is used.
const MIN_PAIRS: usize = 8;
/// Delay used when a record has no R-to-pulse offset at all, seconds
/// (nothing can match then; from memory, as [`DELAY_RANGE_S`]).
const NOMINAL_DELAY_S: f64 = 0.25;

/// Pulses against the ECG's R peaks for one recording.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct EcgScore {
    /// The R peaks moved by their delay as the reference, the pulses out
    /// of unusable stretches as the detections.
    pub counts: MatchCounts,
    /// R peaks found in the ECG.
    pub r_peaks: usize,
    /// Median of matched pulse minus R peak, ms.
    pub delay_ms: Option<f64>,
    /// 25th and 75th percentile of the same, ms.
    pub delay_iqr_ms: Option<(f64, f64)>,
    /// ECG time left out ([`super::unusable_spans`]): before the first
    /// and after the last R peak, gaps of over 3 s between R peaks, and
    /// the ECG at its rails, seconds.
    pub excluded_s: f64,
    /// R peaks in that time, left out of the reference.
    pub excluded_r_peaks: usize,
    /// Pulses whose R peak would fall in that time, left out of the counts.
    pub excluded_pulses: usize,
}

/// Score `pulses` (sample indices at `fs`) against the R peaks of `ecg`
/// sampled at the same rate.
pub fn score_pulses(ecg: &[f64], fs: f64, pulses: &[u64]) -> Result<EcgScore, EcgError> {
    Ok(EcgReference::new(ecg, fs)?.score(pulses))
}

/// An ECG made ready as a beat reference once, so that several pulse
/// lists are scored against the very same R peaks and left-out time.
#[derive(Debug, Clone, PartialEq)]
pub struct EcgReference {
    /// Sample rate of the ECG and of the pulses scored against it, Hz.
    pub fs: f64,
    /// R peaks ([`r_peaks`]), ascending sample indices.
    pub r_peaks: Vec<u64>,
    /// ECG time it cannot vouch for ([`unusable_spans`]).
    pub unusable: Vec<(u64, u64)>,
}

impl EcgReference {
    /// R peaks and unusable time of `ecg` sampled at `fs` Hz.
    pub fn new(ecg: &[f64], fs: f64) -> Result<Self, EcgError> {
        let r = r_peaks(ecg, fs)?;
        let tol = (MATCH_WINDOW_S * fs).round() as u64;
        Ok(Self {
            fs,
            unusable: unusable_spans(ecg, &r, fs, tol),
            r_peaks: r,
        })
    }

    /// `pulses` (sample indices at [`Self::fs`]) against these R peaks, as
    /// [`score_against_r_peaks`].
    pub fn score(&self, pulses: &[u64]) -> EcgScore {
        score_against_r_peaks(&self.r_peaks, &self.unusable, self.fs, pulses)
    }

    /// The R peaks `pulses` miss, as [`missed_beats`].
    pub fn missed(&self, pulses: &[u64]) -> Vec<MissedBeat> {
        missed_beats(&self.r_peaks, &self.unusable, self.fs, pulses)
    }
}

/// Score `pulses` against known R peaks (`r`, ascending) at `fs` Hz,
/// leaving out the ECG time `unusable` (sorted spans of sample indices,
/// end exclusive): the R peaks in it, and the pulses whose R peak, their
/// time less the local delay, would fall in it.
pub fn score_against_r_peaks(
    r: &[u64],
    unusable: &[(u64, u64)],
    fs: f64,
    pulses: &[u64],
) -> EcgScore {
    let p = Pairing::new(r, unusable, fs, pulses);
    // Each matched reference back to its R peak: shifted is ascending.
    let mut offsets_ms: Vec<f64> = p
        .pairs
        .iter()
        .filter_map(|&(s, q)| {
            let k = p.kept[p.shifted.binary_search(&s).ok()?];
            Some((q as f64 - r[k] as f64) * 1000.0 / fs)
        })
        .collect();
    offsets_ms.sort_unstable_by(f64::total_cmp);
    let excluded_s = unusable.iter().map(|&(a, b)| (b - a) as f64 / fs).sum();
    EcgScore {
        counts: MatchCounts {
            tp: p.pairs.len(),
            fp: p.scored - p.pairs.len(),
            fn_: p.shifted.len() - p.pairs.len(),
        },
        r_peaks: r.len(),
        delay_ms: quantile(&offsets_ms, 0.5),
        delay_iqr_ms: quantile(&offsets_ms, 0.25).zip(quantile(&offsets_ms, 0.75)),
        excluded_s,
        excluded_r_peaks: r.len() - p.kept.len(),
        excluded_pulses: pulses.len() - p.scored,
    }
}

/// An R peak no pulse matched.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct MissedBeat {
    /// Which R peak (index into the R peaks given).
    pub r: usize,
    /// Where its pulse was due: the R peak moved by the local delay,
    /// sample index.
    pub due: u64,
}

/// The R peaks scored (outside `unusable`) that no pulse of `pulses`
/// matched, as [`score_against_r_peaks`] pairs them.
pub fn missed_beats(
    r: &[u64],
    unusable: &[(u64, u64)],
    fs: f64,
    pulses: &[u64],
) -> Vec<MissedBeat> {
    let p = Pairing::new(r, unusable, fs, pulses);
    let matched: std::collections::HashSet<u64> = p.pairs.iter().map(|&(s, _)| s).collect();
    p.kept
        .iter()
        .zip(&p.shifted)
        .filter(|(_, s)| !matched.contains(s))
        .map(|(&k, &due)| MissedBeat { r: k, due })
        .collect()
}

/// R peaks moved by their local delays and matched to the pulses.
struct Pairing {
    // Indices of the R peaks outside the unusable time, and those R peaks
    // moved by their delays (ascending).
    kept: Vec<usize>,
    shifted: Vec<u64>,
    // Pulses whose R peak lies outside the unusable time.
    scored: usize,
    pairs: Vec<(u64, u64)>,
}

impl Pairing {
    fn new(r: &[u64], unusable: &[(u64, u64)], fs: f64, pulses: &[u64]) -> Self {
        let mut pulses = pulses.to_vec();
        pulses.sort_unstable();
        let tol = (MATCH_WINDOW_S * fs).round() as u64;
        let delays: Vec<u64> = local_delays(r, &pulses, fs)
            .iter()
            .map(|d| (d * fs).round() as u64)
            .collect();
        let kept: Vec<usize> = (0..r.len())
            .filter(|&k| !in_spans(unusable, r[k]))
            .collect();
        let shifted: Vec<u64> = kept.iter().map(|&k| r[k] + delays[k]).collect();
        let all_shifted: Vec<u64> = r.iter().zip(&delays).map(|(a, b)| a + b).collect();
        let scored: Vec<u64> = pulses
            .iter()
            .copied()
            .filter(|&p| match nearest(&all_shifted, p) {
                Some(k) => !in_spans(unusable, p.saturating_sub(delays[k])),
                None => false,
            })
            .collect();
        let pairs = match_pairs(&shifted, &scored, tol);
        Self {
            kept,
            shifted,
            scored: scored.len(),
            pairs,
        }
    }
}

/// The local pulse-arrival delay of each R peak in `r` (ascending) given
/// the detected `pulses` (ascending), seconds: see the module comment.
pub fn local_delays(r: &[u64], pulses: &[u64], fs: f64) -> Vec<f64> {
    let offsets = offsets_after(r, pulses, fs);
    let whole = mode_delay(&offsets, 0..r.len(), DELAY_RANGE_S);
    let fallback = whole.map_or(NOMINAL_DELAY_S, |(d, _)| d);
    let reach = (
        (fallback - LOCAL_REACH_S).max(DELAY_RANGE_S.0),
        (fallback + LOCAL_REACH_S).min(DELAY_RANGE_S.1),
    );
    let half = (DELAY_WINDOW_S / 2.0 * fs) as u64;
    let (mut lo, mut hi) = (0, 0);
    r.iter()
        .map(|&ri| {
            while r[lo] + half < ri {
                lo += 1;
            }
            while hi < r.len() && r[hi] <= ri + half {
                hi += 1;
            }
            match mode_delay(&offsets, lo..hi, reach) {
                Some((d, n)) if n >= MIN_PAIRS => d,
                _ => fallback,
            }
        })
        .collect()
}

/// Index of the value of `sorted` nearest `x`.
fn nearest(sorted: &[u64], x: u64) -> Option<usize> {
    let k = sorted.partition_point(|&v| v < x);
    [k.checked_sub(1), (k < sorted.len()).then_some(k)]
        .into_iter()
        .flatten()
        .min_by_key(|&i| sorted[i].abs_diff(x))
}

/// For each R peak, the offsets (seconds) of every pulse within
/// [`DELAY_RANGE_S`] after it.
fn offsets_after(r: &[u64], pulses: &[u64], fs: f64) -> Vec<Vec<f64>> {
    let lo = (DELAY_RANGE_S.0 * fs).round() as u64;
    let hi = (DELAY_RANGE_S.1 * fs).round() as u64;
    r.iter()
        .map(|&ri| {
            let start = pulses.partition_point(|&p| p < ri + lo);
            pulses[start..]
                .iter()
                .take_while(|&&p| p <= ri + hi)
                .map(|&p| (p - ri) as f64 / fs)
                .collect()
        })
        .collect()
}

/// The densest delay in `limits` (seconds) over the R peaks `range`: the
/// grid delay at which the most R peaks have an offset within
/// ±[`BIN_HALF_S`], then the median of each such R peak's offset closest
/// to it; with that count.
fn mode_delay(
    offsets: &[Vec<f64>],
    range: std::ops::Range<usize>,
    limits: (f64, f64),
) -> Option<(f64, usize)> {
    let steps = ((limits.1 - limits.0) / GRID_S).round() as usize + 1;
    let grid = |k: usize| limits.0 + k as f64 * GRID_S;
    let mut counts = vec![0usize; steps];
    for o in &offsets[range.clone()] {
        for (k, c) in counts.iter_mut().enumerate() {
            if o.iter().any(|x| (x - grid(k)).abs() <= BIN_HALF_S) {
                *c += 1;
            }
        }
    }
    let best = counts.iter().copied().max().filter(|&n| n > 0)?;
    // The middle of the run of best bins, so a plateau is not cut at an edge.
    let first = counts.iter().position(|&c| c == best)?;
    let run = counts[first..].iter().take_while(|&&c| c == best).count();
    let centre = grid(first + run / 2);
    let mut near: Vec<f64> = offsets[range]
        .iter()
        .filter_map(|o| {
            o.iter()
                .copied()
                .filter(|x| (x - centre).abs() <= BIN_HALF_S)
                .min_by(|a, b| (a - centre).abs().total_cmp(&(b - centre).abs()))
        })
        .collect();
    near.sort_unstable_by(f64::total_cmp);
    Some((quantile(&near, 0.5)?, best))
}

/// Quantile `q` of sorted `v` with linear interpolation between order
/// statistics (numpy's default).
fn quantile(v: &[f64], q: f64) -> Option<f64> {
    if v.is_empty() {
        return None;
    }
    let pos = q * (v.len() - 1) as f64;
    let (i, frac) = (pos.floor() as usize, pos - pos.floor());
    let next = v[(i + 1).min(v.len() - 1)];
    Some(v[i] + frac * (next - v[i]))
}

#[cfg(test)]
mod tests;
