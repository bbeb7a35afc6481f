//! The last stretch of a stream of values, addressed by their index in
//! the whole stream: what each streamed stage keeps of its input.

use std::collections::VecDeque;

/// Values `start..start + len` of a stream.
#[derive(Debug, Default)]
pub(super) struct Tail {
    start: usize,
    values: VecDeque<f64>,
}

impl Tail {
    /// Room for `n` values before any allocation: a stage that knows how
    /// many it keeps takes no more.
    pub(super) fn with_capacity(n: usize) -> Self {
        Self {
            start: 0,
            values: VecDeque::with_capacity(n),
        }
    }

    /// Append the stream's next value.
    pub(super) fn push(&mut self, v: f64) {
        self.values.push_back(v);
    }

    /// One past the index of the last value pushed.
    pub(super) fn end(&self) -> usize {
        self.start + self.values.len()
    }

    /// Value `i` of the stream; panics when it is no longer (or not yet)
    /// kept, which would be a bug in the stage.
    pub(super) fn at(&self, i: usize) -> f64 {
        self.values[i - self.start]
    }

    /// The last value pushed.
    pub(super) fn last(&self) -> Option<f64> {
        self.values.back().copied()
    }

    /// Forget the values before index `i`.
    pub(super) fn keep_from(&mut self, i: usize) {
        let drop = i.saturating_sub(self.start).min(self.values.len());
        self.values.drain(..drop);
        self.start += drop;
    }

    /// Values `range` (all kept) as one slice.
    pub(super) fn slice(&mut self, range: std::ops::Range<usize>) -> &[f64] {
        let (lo, hi) = (range.start - self.start, range.end - self.start);
        &self.values.make_contiguous()[lo..hi]
    }
}
