//! Where the ECG cannot serve as a reference, by rules on the signal
//! alone, so a lead that fell off, or sat at the recorder's rails, does not
//! count the pulses found meanwhile as false (or its noise as beats).

/// Longest R-R gap still taken as ECG, seconds. A longer one is a lead-off
/// or unusable stretch, not a pause: sinus pauses over 3 s are rare
/// enough that pacing is considered (common practice).
pub const MAX_R_GAP_S: f64 = 3.0;
/// Shortest run at the signal's extreme value (or missing) taken as the
/// ECG at its rails, seconds: longer than any QRS, whose clipped top lasts
/// a few samples (common practice: QRS under 0.12 s).
pub const RAIL_RUN_S: f64 = 0.200;
/// How far from the median, in median absolute deviations, an extreme
/// must be to be a rail (common practice for outliers: a few MADs; 5 here
/// since QRS tops are outliers by nature and only their flat runs count).
pub const RAIL_MADS: f64 = 5.0;
/// Time left out either side of such a run, seconds: the R peaks next to
/// a saturated stretch are unreliable too.
pub const RAIL_MARGIN_S: f64 = 0.500;

/// Spans `(start, end)` of ECG sample times (end exclusive) where the
/// ECG is no reference: the union of [`gap_spans`] and [`rail_spans`].
pub fn unusable_spans(ecg: &[f64], r: &[u64], fs: f64, tol: u64) -> Vec<(u64, u64)> {
    let mut all = gap_spans(r, ecg.len() as u64, fs, tol);
    all.extend(rail_spans(ecg, fs));
    merged(all)
}

/// Before the first and after the last R peak of `r` (ascending), and
/// inside every gap longer than [`MAX_R_GAP_S`], in a recording of `len`
/// samples; each span stops `tol` samples short of the R peaks that bound
/// it, so their own pulses still count.
pub fn gap_spans(r: &[u64], len: u64, fs: f64, tol: u64) -> Vec<(u64, u64)> {
    let (Some(&first), Some(&last)) = (r.first(), r.last()) else {
        return if len > 0 { vec![(0, len)] } else { Vec::new() };
    };
    let max_gap = (MAX_R_GAP_S * fs).round() as u64;
    let mut spans = Vec::new();
    if first > tol {
        spans.push((0, first - tol));
    }
    for w in r.windows(2) {
        if w[1] - w[0] > max_gap {
            spans.push((w[0] + tol + 1, w[1] - tol));
        }
    }
    if last + tol + 1 < len {
        spans.push((last + tol + 1, len));
    }
    spans
}

/// Runs of at least [`RAIL_RUN_S`] at the signal's highest or lowest
/// finite value, or of non-finite samples, widened by [`RAIL_MARGIN_S`].
/// An extreme counts as a rail only when it lies more than
/// [`RAIL_MADS`] median absolute deviations from the median: a clean
/// ECG whose baseline is its lowest value has no rail.
pub fn rail_spans(ecg: &[f64], fs: f64) -> Vec<(u64, u64)> {
    let mut finite: Vec<f64> = ecg.iter().copied().filter(|v| v.is_finite()).collect();
    finite.sort_unstable_by(f64::total_cmp);
    let (Some(&lo), Some(&hi)) = (finite.first(), finite.last()) else {
        return merged(vec![(0, ecg.len() as u64)]);
    };
    let median = finite[finite.len() / 2];
    let mut dev: Vec<f64> = finite.iter().map(|v| (v - median).abs()).collect();
    dev.sort_unstable_by(f64::total_cmp);
    let mad = dev[dev.len() / 2];
    let far = |rail: f64| (rail - median).abs() > RAIL_MADS * mad;
    let (lo_rail, hi_rail) = (far(lo), far(hi));
    let at_rail = |v: f64| !v.is_finite() || (lo_rail && v == lo) || (hi_rail && v == hi);
    let (run, margin) = ((RAIL_RUN_S * fs) as usize, (RAIL_MARGIN_S * fs) as u64);
    let mut spans = Vec::new();
    let mut i = 0;
    while i < ecg.len() {
        let start = i;
        while i < ecg.len()
            && at_rail(ecg[i])
            && (i == start || ecg[i] == ecg[start] || !ecg[i].is_finite())
        {
            i += 1;
        }
        if i - start >= run.max(1) {
            let end = (i as u64 + margin).min(ecg.len() as u64);
            spans.push(((start as u64).saturating_sub(margin), end));
        }
        i = i.max(start + 1);
    }
    merged(spans)
}

/// Sorted, overlapping or touching spans joined.
pub(super) fn merged(mut spans: Vec<(u64, u64)>) -> Vec<(u64, u64)> {
    spans.retain(|&(a, b)| a < b);
    spans.sort_unstable();
    let mut out: Vec<(u64, u64)> = Vec::new();
    for (a, b) in spans {
        match out.last_mut() {
            Some(last) if a <= last.1 => last.1 = last.1.max(b),
            _ => out.push((a, b)),
        }
    }
    out
}

/// Whether sample `t` lies in one of `spans` (sorted, not overlapping).
pub fn in_spans(spans: &[(u64, u64)], t: u64) -> bool {
    let k = spans.partition_point(|&(_, end)| end <= t);
    spans.get(k).is_some_and(|&(start, _)| start <= t)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn gaps_over_three_seconds_and_the_edges_are_left_out() {
        // 100 Hz: beats every second, then 5 s without one.
        let r = [100, 200, 300, 800, 900];
        let spans = gap_spans(&r, 1000, 100.0, 15);
        assert_eq!(spans, vec![(0, 85), (316, 785), (916, 1000)]);
        assert!(in_spans(&spans, 0) && in_spans(&spans, 500) && in_spans(&spans, 999));
        assert!(!in_spans(&spans, 85) && !in_spans(&spans, 315) && !in_spans(&spans, 900));
        assert_eq!(gap_spans(&[], 50, 100.0, 15), vec![(0, 50)]);
    }

    #[test]
    fn runs_at_the_rails_are_left_out_but_clipped_r_tops_are_not() {
        // 100 Hz, rails at ±1: a clipped R top of 3 samples at 200, the
        // signal at the top rail from 500 to 530, missing from 800 to 825.
        let mut x: Vec<f64> = (0..1000).map(|i| 0.1 * ((i as f64) * 0.3).sin()).collect();
        x[200..203].fill(1.0);
        x[500..530].fill(1.0);
        x[800..825].fill(f64::NAN);
        x[900] = -1.0;
        assert_eq!(rail_spans(&x, 100.0), vec![(450, 580), (750, 875)]);
        let all = unusable_spans(&x, &[100, 300, 600, 900], 100.0, 15);
        assert_eq!(all, vec![(0, 85), (450, 580), (750, 875), (916, 1000)]);
        // A clean train on a baseline that is its lowest value: no rail.
        let mut clean = vec![0.0; 1000];
        for k in (50..1000).step_by(100) {
            clean[k] = 1.0;
        }
        assert!(rail_spans(&clean, 100.0).is_empty());
        assert_eq!(rail_spans(&[f64::NAN; 30], 100.0), vec![(0, 30)]);
    }
}
