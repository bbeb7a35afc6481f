//! Fewer points for plotting, so a long recording does not make a huge
//! file, without hiding what a reader must see.
//!
//! * Traces and lines: each screen column keeps only the lowest and the
//!   highest sample that falls into it, in time order — at most two points per
//!   column, and every peak, trough and clipped flat top still drawn at its
//!   true height.
//! * Markers and scatter clouds: of the points falling into the same small
//!   cell of the plot, only the first is kept; the picture is the same,
//!   since they would be drawn on top of each other.

/// Points of one unbroken stretch of a trace.
pub type Segment = Vec<(f64, f64)>;

/// Samples `from..to` of `samples` (at `fs`) as `(time_s, value)` for a
/// plot `columns` wide: all of them when that is at most two per column,
/// else each column's minimum and maximum. Missing samples (NaN) break
/// the trace into segments.
pub fn trace(samples: &[f64], fs: f64, from: usize, to: usize, columns: usize) -> Vec<Segment> {
    let to = to.min(samples.len());
    let from = from.min(to);
    let mut t = Thinner::new(fs, from, to, columns);
    for (i, &v) in samples.iter().enumerate().take(to).skip(from) {
        t.push(i, v);
    }
    t.finish()
}

/// [`trace`] made while the samples stream past: fed every sample in
/// order, it keeps only the current column and the points kept so far,
/// and gives the same segments.
#[derive(Debug, Clone)]
pub struct Thinner {
    fs: f64,
    to: usize,
    per_column: usize,
    /// First sample of the current column.
    start: usize,
    lo: Option<(usize, f64)>,
    hi: Option<(usize, f64)>,
    broken: bool,
    current: Segment,
    segments: Vec<Segment>,
}

impl Thinner {
    /// A thinner of samples `from..to` (at `fs`) for a plot `columns` wide.
    pub fn new(fs: f64, from: usize, to: usize, columns: usize) -> Thinner {
        let from = from.min(to);
        Thinner {
            fs,
            to,
            per_column: (to - from).div_ceil(columns.max(1)).max(1),
            start: from,
            lo: None,
            hi: None,
            broken: false,
            current: Vec::new(),
            segments: Vec::new(),
        }
    }

    /// Sample `i` (each index once, in increasing order; those outside
    /// `from..to` are ignored) is `v`.
    pub fn push(&mut self, i: usize, v: f64) {
        if i < self.start || i >= self.to {
            return;
        }
        while i >= self.start + self.per_column {
            self.close_column();
            self.start += self.per_column;
        }
        if !v.is_finite() {
            if self.per_column <= 2 && !self.current.is_empty() {
                self.segments.push(std::mem::take(&mut self.current));
            } else {
                self.broken = true;
            }
            return;
        }
        if self.per_column <= 2 {
            self.current.push((i as f64 / self.fs, v));
            return;
        }
        if self.lo.is_none_or(|(_, l)| v < l) {
            self.lo = Some((i, v));
        }
        if self.hi.is_none_or(|(_, h)| v > h) {
            self.hi = Some((i, v));
        }
    }

    fn close_column(&mut self) {
        let time = |i: usize| i as f64 / self.fs;
        if let (Some(l), Some(h)) = (self.lo.take(), self.hi.take()) {
            let (a, b) = if l.0 <= h.0 { (l, h) } else { (h, l) };
            self.current.push((time(a.0), a.1));
            if b.0 != a.0 {
                self.current.push((time(b.0), b.1));
            }
        }
        if std::mem::take(&mut self.broken) && !self.current.is_empty() {
            self.segments.push(std::mem::take(&mut self.current));
        }
    }

    /// The segments, once every sample up to `to` has been pushed.
    pub fn finish(mut self) -> Vec<Segment> {
        if self.start < self.to {
            self.close_column();
        }
        if !self.current.is_empty() {
            self.segments.push(self.current);
        }
        self.segments
    }
}

/// A line through `points` (time ordered) for a plot `columns` wide
/// spanning `x`: all of them when that is at most two per column, else
/// each column's lowest and highest point, in order.
pub fn line(points: &[(f64, f64)], x: (f64, f64), columns: usize) -> Vec<(f64, f64)> {
    let columns = columns.max(1);
    if points.len() <= 2 * columns {
        return points.to_vec();
    }
    let span = x.1 - x.0;
    let column = |t: f64| -> usize {
        if span > 0.0 {
            (((t - x.0) / span * columns as f64).floor().max(0.0) as usize).min(columns - 1)
        } else {
            0
        }
    };
    let mut out = Vec::new();
    let mut i = 0;
    while i < points.len() {
        let c = column(points[i].0);
        let mut j = i;
        let (mut lo, mut hi) = (i, i);
        while j < points.len() && column(points[j].0) == c {
            if points[j].1 < points[lo].1 {
                lo = j;
            }
            if points[j].1 > points[hi].1 {
                hi = j;
            }
            j += 1;
        }
        let (a, b) = (lo.min(hi), lo.max(hi));
        out.push(points[a]);
        if b != a {
            out.push(points[b]);
        }
        i = j;
    }
    out
}

/// Of `points`, the first in each of `cells.0 × cells.1` cells spanning
/// `x` × `y`, in the order given; a point outside the ranges counts in the
/// nearest edge cell (where the plot draws it).
pub fn scatter(
    points: &[(f64, f64)],
    x: (f64, f64),
    y: (f64, f64),
    cells: (usize, usize),
) -> Vec<(f64, f64)> {
    let (cx, cy) = (cells.0.max(1), cells.1.max(1));
    let cell = |v: f64, (lo, hi): (f64, f64), n: usize| -> usize {
        let span = hi - lo;
        if span.is_nan() || span <= 0.0 || !v.is_finite() {
            return 0;
        }
        (((v - lo) / span * n as f64).floor().max(0.0) as usize).min(n - 1)
    };
    let mut seen = vec![false; cx * cy];
    points
        .iter()
        .copied()
        .filter(|&(px, py)| {
            let k = cell(py, y, cy) * cx + cell(px, x, cx);
            !std::mem::replace(&mut seen[k], true)
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_long_trace_keeps_every_extreme() {
        // 10 000 samples of a slow sine with one spike, into 100 columns.
        let mut s: Vec<f64> = (0..10_000).map(|i| (i as f64 / 800.0).sin()).collect();
        s[4321] = 9.0;
        let t = trace(&s, 100.0, 0, s.len(), 100);
        assert_eq!(t.len(), 1);
        assert!(t[0].len() <= 200, "{}", t[0].len());
        let max = t[0].iter().map(|p| p.1).fold(f64::MIN, f64::max);
        assert_eq!(max, 9.0);
        let spike = t[0].iter().find(|p| p.1 == 9.0).unwrap();
        assert_eq!(spike.0, 43.21);
        let min = t[0].iter().map(|p| p.1).fold(f64::MAX, f64::min);
        let true_min = s.iter().copied().fold(f64::MAX, f64::min);
        assert_eq!(min, true_min);
        assert!(t[0].windows(2).all(|w| w[0].0 < w[1].0), "time order");
    }

    #[test]
    fn a_short_trace_is_kept_whole_and_breaks_at_gaps() {
        let s = [1.0, 2.0, f64::NAN, 4.0, 5.0];
        let t = trace(&s, 1.0, 0, 5, 100);
        assert_eq!(
            t,
            vec![vec![(0.0, 1.0), (1.0, 2.0)], vec![(3.0, 4.0), (4.0, 5.0)]]
        );
        assert_eq!(
            trace(&s, 1.0, 3, 5, 100),
            vec![vec![(3.0, 4.0), (4.0, 5.0)]]
        );
    }

    /// The whole-slice thinning [`trace`] was before it streamed, kept
    /// as the oracle the streaming one must equal.
    fn trace_in_one_go(
        samples: &[f64],
        fs: f64,
        from: usize,
        to: usize,
        columns: usize,
    ) -> Vec<Segment> {
        let to = to.min(samples.len());
        let from = from.min(to);
        let n = to - from;
        let columns = columns.max(1);
        let per_column = n.div_ceil(columns).max(1);
        let mut segments: Vec<Segment> = Vec::new();
        let mut current: Segment = Vec::new();
        let time = |i: usize| i as f64 / fs;
        let mut start = from;
        while start < to {
            let end = (start + per_column).min(to);
            let mut lo: Option<(usize, f64)> = None;
            let mut hi: Option<(usize, f64)> = None;
            let mut broken = false;
            for (i, &v) in samples.iter().enumerate().take(end).skip(start) {
                if !v.is_finite() {
                    if per_column <= 2 && !current.is_empty() {
                        segments.push(std::mem::take(&mut current));
                    } else {
                        broken = true;
                    }
                    continue;
                }
                if per_column <= 2 {
                    current.push((time(i), v));
                    continue;
                }
                if lo.is_none_or(|(_, l)| v < l) {
                    lo = Some((i, v));
                }
                if hi.is_none_or(|(_, h)| v > h) {
                    hi = Some((i, v));
                }
            }
            if let (Some(l), Some(h)) = (lo, hi) {
                let (a, b) = if l.0 <= h.0 { (l, h) } else { (h, l) };
                current.push((time(a.0), a.1));
                if b.0 != a.0 {
                    current.push((time(b.0), b.1));
                }
            }
            if broken && !current.is_empty() {
                segments.push(std::mem::take(&mut current));
            }
            start = end;
        }
        if !current.is_empty() {
            segments.push(current);
        }
        segments
    }

    #[test]
    fn streaming_thinning_equals_thinning_in_one_go() {
        let mut seed = 0x7417_u64;
        let mut next = || {
            seed ^= seed << 13;
            seed ^= seed >> 7;
            seed ^= seed << 17;
            seed
        };
        for n in [0usize, 1, 2, 3, 5, 99, 100, 101, 999, 4321] {
            let s: Vec<f64> = (0..n)
                .map(|_| match next() % 40 {
                    0 => f64::NAN,
                    k => (k as f64).sin() * 10.0,
                })
                .collect();
            for columns in [1usize, 2, 3, 7, 50, 100, 1000, 5000] {
                for (from, to) in [(0, n), (n / 3, n), (n / 4, n / 2), (0, n + 5)] {
                    let want = trace_in_one_go(&s, 250.0, from, to, columns);
                    assert_eq!(
                        trace(&s, 250.0, from, to, columns),
                        want,
                        "{n} {columns} {from} {to}"
                    );
                    // Fed one sample at a time, from before `from` to past `to`.
                    let to_c = to.min(n);
                    let mut t = Thinner::new(250.0, from.min(to_c), to_c, columns);
                    s.iter().enumerate().for_each(|(i, &v)| t.push(i, v));
                    let got = t.finish();
                    let same = got.iter().map(Vec::len).eq(want.iter().map(Vec::len))
                        && got
                            .iter()
                            .flatten()
                            .zip(want.iter().flatten())
                            .all(|(a, b)| {
                                a.0.to_bits() == b.0.to_bits() && a.1.to_bits() == b.1.to_bits()
                            });
                    assert!(same, "{n} {columns} {from} {to}");
                }
            }
        }
    }

    #[test]
    fn a_long_line_keeps_its_extremes_per_column() {
        let p: Vec<(f64, f64)> = (0..1000).map(|i| (i as f64, (i % 7) as f64)).collect();
        let l = line(&p, (0.0, 1000.0), 10);
        assert_eq!(l.len(), 20);
        assert!(l.iter().all(|q| q.1 == 0.0 || q.1 == 6.0));
        assert!(l.windows(2).all(|w| w[0].0 < w[1].0), "time order");
        assert_eq!(line(&p[..15], (0.0, 1000.0), 10), p[..15].to_vec());
    }

    #[test]
    fn overlapping_markers_are_drawn_once() {
        let p = [(0.1, 0.1), (0.15, 0.12), (0.9, 0.9), (0.1, 0.1), (5.0, 5.0)];
        let kept = scatter(&p, (0.0, 1.0), (0.0, 1.0), (10, 10));
        assert_eq!(kept, vec![(0.1, 0.1), (0.9, 0.9)]);
    }
}
