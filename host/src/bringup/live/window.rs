//! The samples of the last [`WINDOW_S`], gaps bridged.

use std::collections::VecDeque;

use super::{BRIDGE_S, WINDOW_S};

/// The samples of the last [`WINDOW_S`], at the block rate: the input,
/// and the band-passed trace beside it (used once it spans the window).
#[derive(Clone, Debug, Default)]
pub(super) struct Window {
    pub(super) raw: VecDeque<f64>,
    filtered: VecDeque<f64>,
    /// Input sample number after the newest sample, and the stride.
    pub(super) next: Option<(i64, u64)>,
    pub(super) rate_hz: f64,
}

impl Window {
    fn capacity(&self, stride: u64) -> usize {
        (WINDOW_S * self.rate_hz / stride as f64).ceil() as usize
    }

    /// Adds `raw` from input sample `start`, every `stride`-th input
    /// sample; bridges short gaps, starts afresh after long ones, a
    /// restart or a new rate.
    pub(super) fn push(
        &mut self,
        start: i64,
        raw: &[f32],
        filtered: &[f32],
        stride: u64,
        rate_hz: f64,
    ) {
        let bridge = (BRIDGE_S * rate_hz) as i64;
        let held = match self.next {
            Some((next, s)) if s == stride && rate_hz == self.rate_hz => {
                let gap = start - next;
                (0..=bridge)
                    .contains(&gap)
                    .then_some((gap as u64 / stride) as usize)
            }
            _ => None,
        };
        if held.is_none() {
            self.raw.clear();
            self.filtered.clear();
        }
        let held = held.unwrap_or(0);
        self.rate_hz = rate_hz;
        extend(&mut self.raw, raw, held);
        // The band-passed trace counts only once it spans the window.
        if filtered.len() == raw.len() {
            extend(&mut self.filtered, filtered, held);
        } else {
            self.filtered.clear();
        }
        let end = start + (raw.len() as u64 * stride) as i64;
        self.next = Some((end, stride));
        let cap = self.capacity(stride);
        for ring in [&mut self.raw, &mut self.filtered] {
            while ring.len() > cap {
                ring.pop_front();
            }
        }
    }

    /// The band-passed trace, when it spans the whole window.
    pub(super) fn filtered(&self) -> Option<Vec<f64>> {
        (self.filtered.len() == self.raw.len()).then(|| self.filtered.iter().copied().collect())
    }

    /// The block rate, Hz.
    pub(super) fn block_rate(&self) -> f64 {
        self.rate_hz / self.next.map_or(1, |(_, s)| s) as f64
    }
}

/// Adds `values` to `ring` after `held` copies of its last value (a gap
/// bridged); a non-finite value is held at the last good one, as the
/// pipeline does.
fn extend(ring: &mut VecDeque<f64>, values: &[f32], held: usize) {
    if let Some(&last) = ring.back() {
        ring.extend(std::iter::repeat_n(last, held));
    }
    for &v in values {
        let v = f64::from(v);
        match (v.is_finite(), ring.back()) {
            (true, _) => ring.push_back(v),
            (false, Some(&last)) => ring.push_back(last),
            (false, None) => {}
        }
    }
}
