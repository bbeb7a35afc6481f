//! Recent intervals: plausibility and the smoothed heart rate.

use super::sorted::{sortable, Sorted};

/// Intervals held (enough for 12 s at 220 bpm).
pub const HISTORY: usize = 64;
/// Shortest plausible interval, ms (230 bpm; the range of interest is 30
/// to 220 bpm, common practice).
pub const MIN_IBI_MS: f32 = 60_000.0 / 230.0;
/// Longest plausible interval, ms (28 bpm).
pub const MAX_IBI_MS: f32 = 60_000.0 / 28.0;
/// An interval more than this far from the recent median, as a ratio, is
/// flagged (an ectopic beat, a missed or an extra detection).
pub const MAX_RATIO: f32 = 1.4;

/// Good intervals with the input index of the beat that ended each.
#[derive(Clone, Copy, Debug)]
pub struct Intervals {
    ibi: [f32; HISTORY],
    at: [u64; HISTORY],
    head: usize,
    len: usize,
    // Pushes so far (wrapping), and as of the last `median_since_kept`,
    // whose window's values `sorted` holds.
    pushes: usize,
    synced: usize,
    // How many of the newest end in order (each at or after the one
    // before): over them the window's test is monotone in age.
    ordered: usize,
    sorted: Sorted<HISTORY>,
}

impl Intervals {
    /// Empty.
    pub const fn new() -> Self {
        Self {
            ibi: [0.0; HISTORY],
            at: [0; HISTORY],
            head: 0,
            len: 0,
            pushes: 0,
            synced: 0,
            ordered: 0,
            sorted: Sorted::new(),
        }
    }

    /// Record a good interval ending at input index `at`.
    pub fn push(&mut self, ibi_ms: f32, at: u64) {
        let in_order = self.len > 0 && at >= self.at[self.head];
        self.ordered = if in_order {
            (self.ordered + 1).min(HISTORY)
        } else {
            1
        };
        self.head = (self.head + 1) % HISTORY;
        self.ibi[self.head] = ibi_ms;
        self.at[self.head] = at;
        self.len = (self.len + 1).min(HISTORY);
        self.pushes = self.pushes.wrapping_add(1);
    }

    /// Median of the good intervals that ended after input index `since`,
    /// with how many there were.
    pub fn median_since(&self, since: u64) -> Option<(f32, usize)> {
        // A vector, not a zeroed array: only the values taken are written
        // (twice per beat, 256 bytes cleared each time otherwise).
        let mut held: heapless::Vec<f32, HISTORY> = heapless::Vec::new();
        for k in 0..self.len {
            let i = (self.head + HISTORY - k) % HISTORY;
            if self.at[i] < since {
                break;
            }
            // At most `len` ≤ HISTORY values: never full.
            let _ = held.push(self.ibi[i]);
        }
        let n = held.len();
        if n == 0 {
            return None;
        }
        Some((median_of(held.as_mut_slice()), n))
    }

    /// [`Self::median_since`], the same value bit for bit, from the values
    /// of the last call kept in order (`sorted::Sorted`): a beat adds one and
    /// the window's start drops one or two, instead of all of them being
    /// copied and selected again (once per beat, the dearest part of a
    /// beat's bookkeeping).
    pub fn median_since_kept(&mut self, since: u64) -> Option<(f32, usize)> {
        // The same span as `median_since` finds, without scanning it all:
        // start at the last span's end (plus the pushes since), kept
        // within the newest that end in order, where "ended after `since`"
        // holds up to one age and not beyond; step down while the age
        // before fails (then every age below passes), then up as
        // `median_since` scans.
        let at = |age: usize| self.at[(self.head + HISTORY - age) % HISTORY];
        let fresh = self.pushes.wrapping_sub(self.synced);
        let mut k = (self.sorted.len() + fresh).min(self.ordered.min(self.len));
        while k > 0 && at(k - 1) < since {
            k -= 1;
        }
        while k < self.len && at(k) >= since {
            k += 1;
        }
        if k == 0 {
            return None;
        }
        // The kept values are those of the `sorted.len()` newest as of
        // `synced` pushes, i.e. of the ages below `held` now.
        self.synced = self.pushes;
        let mut held = self.sorted.len() + fresh;
        if held > self.len {
            // Some have been overwritten since: start again.
            self.sorted.clear();
            held = 0;
        } else {
            for age in 0..fresh {
                let v = self.value(age);
                if !sortable(v) {
                    return self.median_unkept(since);
                }
                self.sorted.insert(v);
            }
        }
        while held > k {
            held -= 1;
            let v = self.value(held);
            self.sorted.remove(v);
        }
        while held < k {
            let v = self.value(held);
            if !sortable(v) {
                return self.median_unkept(since);
            }
            self.sorted.insert(v);
            held += 1;
        }
        self.sorted.median().map(|m| (m, k))
    }

    /// The interval pushed `age` pushes ago (`age < HISTORY`).
    fn value(&self, age: usize) -> f32 {
        self.ibi[(self.head + HISTORY - age) % HISTORY]
    }

    /// A NaN or a zero among the window's values: selected as
    /// [`Self::median_since`] does, the kept values forgotten.
    #[cold]
    fn median_unkept(&mut self, since: u64) -> Option<(f32, usize)> {
        self.sorted.clear();
        self.synced = self.pushes;
        self.median_since(since)
    }

    /// Median of the last `count` good intervals (fewer if not held).
    pub fn recent_median(&self, count: usize) -> Option<f32> {
        if self.len == 0 {
            return None;
        }
        let k = count.min(self.len);
        let oldest = (self.head + HISTORY + 1 - k) % HISTORY;
        self.median_since(self.at[oldest]).map(|(m, _)| m)
    }

    /// The longest of the last `count` intervals over the shortest;
    /// `None` when fewer are held (or `count` is 0).
    pub fn recent_spread(&self, count: usize) -> Option<f32> {
        if count == 0 || self.len < count {
            return None;
        }
        let (mut low, mut high) = (f32::INFINITY, 0.0f32);
        for k in 0..count {
            let v = self.ibi[(self.head + HISTORY - k) % HISTORY];
            low = crate::math::min_f32(low, v);
            high = crate::math::max_f32(high, v);
        }
        (low > 0.0).then(|| high / low)
    }

    /// Number held.
    pub fn len(&self) -> usize {
        self.len
    }

    /// None held?
    pub fn is_empty(&self) -> bool {
        self.len == 0
    }

    /// Forget everything.
    pub fn clear(&mut self) {
        *self = Self::new();
    }
}

impl Default for Intervals {
    fn default() -> Self {
        Self::new()
    }
}

/// The median of `v` (not empty), `v` reordered.
pub(crate) fn median_of(v: &mut [f32]) -> f32 {
    let n = v.len();
    // The middle value by selection rather than a sort: the same values
    // (the median of a set does not depend on how it is found), for about
    // half the work at the 15 to 20 intervals of 12 s.
    let upper = select(v, n / 2);
    if n % 2 == 1 {
        upper
    } else {
        // The values before the selected one are the n/2 smallest: the
        // lower middle value is the largest of them.
        let mut lower = v[0];
        for &x in &v[1..n / 2] {
            if x > lower {
                lower = x;
            }
        }
        0.5 * (lower + upper)
    }
}

/// The `k`-th smallest of `v` (from 0; `k < v.len()`), `v` reordered so
/// that the `k` values before it are the `k` smallest: C. A. R. Hoare's
/// selection ("Algorithm 65: Find", Comm. ACM 4(7):321–322, 1961), with
/// the middle element as the pivot and a single-ended partition.
fn select(v: &mut [f32], k: usize) -> f32 {
    let (mut lo, mut hi) = (0, v.len() - 1);
    // The k-th smallest stays within lo..=hi; what lies before lo is no
    // larger than anything in it, what lies after hi no smaller.
    while lo < hi {
        v.swap(lo + (hi - lo) / 2, hi);
        let pivot = v[hi];
        let mut store = lo;
        for i in lo..hi {
            if v[i] < pivot {
                v.swap(i, store);
                store += 1;
            }
        }
        v.swap(store, hi);
        match k.cmp(&store) {
            core::cmp::Ordering::Equal => return v[k],
            core::cmp::Ordering::Less => hi = store - 1,
            core::cmp::Ordering::Greater => lo = store + 1,
        }
    }
    v[k]
}

/// Is `ibi_ms` plausible given the recent median (if any)?
pub fn plausible(ibi_ms: f32, median_ms: Option<f32>) -> bool {
    if !(MIN_IBI_MS..=MAX_IBI_MS).contains(&ibi_ms) {
        return false;
    }
    match median_ms {
        Some(m) => ibi_ms <= m * MAX_RATIO && ibi_ms >= m / MAX_RATIO,
        None => true,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn median_of_a_window() {
        let mut h = Intervals::new();
        for (i, v) in [800.0, 900.0, 700.0, 1000.0, 850.0].into_iter().enumerate() {
            h.push(v, i as u64 * 100);
        }
        assert_eq!(h.median_since(0), Some((850.0, 5)));
        assert_eq!(h.median_since(250), Some((925.0, 2)));
        assert_eq!(h.recent_median(3), Some(850.0));
        // The last three: 700, 1000, 850.
        assert_eq!(h.recent_spread(3), Some(1000.0 / 700.0));
        assert_eq!(h.recent_spread(1), Some(1.0));
        assert_eq!(h.recent_spread(6), None);
        assert_eq!(h.recent_spread(0), None);
    }

    #[test]
    fn selection_gives_the_sorted_value_and_the_smaller_ones_before_it() {
        // Every k of a few orders with repeats, against the sorted copy.
        let base: [f32; 9] = [
            812.0, 640.0, 640.0, 1010.0, 700.5, 812.0, 300.0, 955.0, 701.0,
        ];
        let mut sorted = base;
        sorted.sort_by(|a, b| a.partial_cmp(b).unwrap());
        for rot in 0..base.len() {
            for k in 0..base.len() {
                let mut v = base;
                v.rotate_left(rot);
                assert_eq!(select(&mut v, k), sorted[k], "rot {rot}, k {k}");
                assert!(v[..k].iter().all(|x| *x <= sorted[k]));
                let mut before = v[..k].to_vec();
                before.sort_by(|a, b| a.partial_cmp(b).unwrap());
                assert_eq!(before, sorted[..k]);
            }
        }
        // Even counts: the mean of the two middle values.
        let mut h = Intervals::new();
        for (i, v) in [900.0, 700.0, 800.0, 1000.0].into_iter().enumerate() {
            h.push(v, i as u64);
        }
        assert_eq!(h.median_since(0), Some((850.0, 4)));
    }

    #[test]
    fn the_kept_median_is_the_selected_one_bit_for_bit() {
        // Windows that start later, start earlier, skip pushes (no query
        // after some) and reach
        // past what is held, over intervals with repeats and now and then
        // a NaN or a zero (xorshift, a fixed seed); ends not always in
        // order, as across a restart.
        let mut h = Intervals::new();
        let mut s = 99u32;
        let mut at = 0u64;
        for k in 0..3000u32 {
            s ^= s << 13;
            s ^= s >> 17;
            s ^= s << 5;
            let v = match k % 89 {
                17 => f32::NAN,
                40 => 0.0,
                _ => 400.0 + 20.0 * (s % 30) as f32,
            };
            at = if s % 53 == 0 {
                at.saturating_sub(30)
            } else {
                at + 10 + u64::from(s % 7)
            };
            h.push(v, at);
            for _ in 0..(s % 3) {
                s ^= s << 13;
                s ^= s >> 17;
                s ^= s << 5;
                let since = at.saturating_sub(u64::from(s % 900));
                let want = h.median_since(since).map(|(m, n)| (m.to_bits(), n));
                let got = h.median_since_kept(since).map(|(m, n)| (m.to_bits(), n));
                assert_eq!(got, want, "push {k}, since {since}");
            }
        }
    }

    #[test]
    fn plausibility_limits() {
        assert!(plausible(800.0, None));
        assert!(!plausible(200.0, None));
        assert!(!plausible(3000.0, None));
        assert!(!plausible(1200.0, Some(800.0)));
        assert!(plausible(1000.0, Some(800.0)));
    }
}
