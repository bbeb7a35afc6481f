//! Where the ECG cannot serve as a reference: a signal-based rule, so a
//! lead that fell off (flat, or noise the detector does not take for QRS)
//! does not count the pulses found meanwhile as false.

/// Longest R-R gap still taken as ECG, seconds. A longer one is a lead-off
/// or unusable stretch, not a pause: sinus pauses over 3 s are rare
/// enough that pacing is considered (common practice).
pub const MAX_R_GAP_S: f64 = 3.0;

/// Spans `(start, end)` of sample times in which detected pulses are left
/// out of the score, given the R peaks already moved by the arrival delay
/// (`shifted`, ascending), the recording's length `len` and the matching
/// tolerance `tol` (samples): before the first and after the last R peak,
/// and inside every gap longer than [`MAX_R_GAP_S`]; each span stops `tol`
/// short of the R peaks that bound it, so their own pulses still count.
pub fn unusable_spans(shifted: &[u64], len: u64, fs: f64, tol: u64) -> Vec<(u64, u64)> {
    let (Some(&first), Some(&last)) = (shifted.first(), shifted.last()) else {
        return if len > 0 { vec![(0, len)] } else { Vec::new() };
    };
    let max_gap = (MAX_R_GAP_S * fs).round() as u64;
    let mut spans = Vec::new();
    if first > tol {
        spans.push((0, first - tol));
    }
    for w in shifted.windows(2) {
        if w[1] - w[0] > max_gap {
            spans.push((w[0] + tol + 1, w[1] - tol));
        }
    }
    if last + tol + 1 < len {
        spans.push((last + tol + 1, len));
    }
    spans
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
        let spans = unusable_spans(&r, 1000, 100.0, 15);
        assert_eq!(spans, vec![(0, 85), (316, 785), (916, 1000)]);
        assert!(in_spans(&spans, 0) && in_spans(&spans, 500) && in_spans(&spans, 999));
        assert!(!in_spans(&spans, 85) && !in_spans(&spans, 315) && !in_spans(&spans, 900));
        assert_eq!(unusable_spans(&[], 50, 100.0, 15), vec![(0, 50)]);
    }
}
