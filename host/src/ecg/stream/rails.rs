//! [`crate::ecg::rail_spans`] over a stream: the median and the median
//! absolute deviation of the finite samples found exactly
//! ([`plethwire_records::order_stat::select`]), then one pass for the
//! runs at the rails.

use super::{each_sample, EcgSource, EcgStreamError, Overview};
use crate::ecg::usable::merged;
use crate::ecg::{RAIL_MADS, RAIL_MARGIN_S, RAIL_RUN_S};
use plethwire_records::order_stat::select;

/// The value at `rank` of the finite samples, each mapped by `f`.
fn finite_rank(
    source: &mut dyn EcgSource,
    o: &Overview,
    rank: u64,
    f: impl Fn(f64) -> f64,
) -> Result<f64, EcgStreamError> {
    let mut seen = 0u64;
    let found = select(rank, |push| {
        seen = 0;
        each_sample(source, o.len, |v| {
            if v.is_finite() {
                seen += 1;
                push(f(v));
            }
            Ok(())
        })
    })?;
    // The overview counted the finite samples: fewer now is a changed file.
    found.ok_or(EcgStreamError::Changed {
        first: o.finite,
        now: seen,
    })
}

/// Runs at the rails, widened, as the whole-array `rail_spans` finds them.
pub(super) fn rail_spans(
    source: &mut dyn EcgSource,
    fs: f64,
    o: &Overview,
) -> Result<Vec<(u64, u64)>, EcgStreamError> {
    if o.finite == 0 {
        return Ok(merged(vec![(0, o.len as u64)]));
    }
    let rank = o.finite / 2;
    let median = finite_rank(source, o, rank, |v| v)?;
    let mad = finite_rank(source, o, rank, |v| (v - median).abs())?;
    let far = |rail: f64| (rail - median).abs() > RAIL_MADS * mad;
    let mut scan = RailScan {
        lo: o.lo,
        hi: o.hi,
        lo_rail: far(o.lo),
        hi_rail: far(o.hi),
        run: ((RAIL_RUN_S * fs) as usize).max(1),
        margin: (RAIL_MARGIN_S * fs) as u64,
        len: o.len as u64,
        at: 0,
        open: None,
        spans: Vec::new(),
    };
    each_sample(source, o.len, |v| {
        scan.push(v);
        Ok(())
    })?;
    Ok(scan.finish())
}

/// The runs of samples at one rail (or missing), one sample at a time.
struct RailScan {
    lo: f64,
    hi: f64,
    lo_rail: bool,
    hi_rail: bool,
    run: usize,
    margin: u64,
    len: u64,
    /// Index of the next sample.
    at: u64,
    /// The run under way: its first sample's index and value.
    open: Option<(u64, f64)>,
    spans: Vec<(u64, u64)>,
}

impl RailScan {
    fn at_rail(&self, v: f64) -> bool {
        !v.is_finite() || (self.lo_rail && v == self.lo) || (self.hi_rail && v == self.hi)
    }

    fn push(&mut self, v: f64) {
        let i = self.at;
        self.at += 1;
        if let Some((_, first)) = self.open {
            // A run goes on at its own value, or through missing samples.
            if self.at_rail(v) && (v == first || !v.is_finite()) {
                return;
            }
            self.close(i);
        }
        if self.at_rail(v) {
            self.open = Some((i, v));
        }
    }

    fn close(&mut self, end: u64) {
        if let Some((start, _)) = self.open.take() {
            if end - start >= self.run as u64 {
                let stop = (end + self.margin).min(self.len);
                self.spans.push((start.saturating_sub(self.margin), stop));
            }
        }
    }

    fn finish(mut self) -> Vec<(u64, u64)> {
        self.close(self.len);
        merged(self.spans)
    }
}
