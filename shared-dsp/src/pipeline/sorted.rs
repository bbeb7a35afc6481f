//! Medians of recent intervals kept up to date one value at a time: the
//! values held in ascending order, so a median is read off rather than
//! selected again at every beat.
//!
//! Each gives bit for bit the median [`super::rate::median_of`] finds for
//! the same values (the tests check it). Values that compare equal are then
//! bitwise equal, except for NaN and ±0, which intervals never are; should
//! one come, the median is selected from the values as before.

use super::rate::median_of;

/// Up to `N` values, ascending. Never NaN or zero (the caller keeps those
/// out).
#[derive(Clone, Copy, Debug)]
pub struct Sorted<const N: usize> {
    v: [f32; N],
    len: usize,
}

impl<const N: usize> Sorted<N> {
    /// Empty.
    pub const fn new() -> Self {
        Self {
            v: [0.0; N],
            len: 0,
        }
    }

    /// Values held.
    pub fn len(&self) -> usize {
        self.len
    }

    /// Forget every value.
    pub fn clear(&mut self) {
        self.len = 0;
    }

    /// Take `x` (fewer than `N` held): from the top down past the larger
    /// ones, a few compares at the usual dozen values.
    pub fn insert(&mut self, x: f32) {
        let mut i = self.len.min(N - 1);
        while i > 0 && self.v[i - 1] > x {
            self.v[i] = self.v[i - 1];
            i -= 1;
        }
        self.v[i] = x;
        self.len = (self.len + 1).min(N);
    }

    /// Drop one value of the bits of `x`; false when none is held.
    pub fn remove(&mut self, x: f32) -> bool {
        let held = &self.v[..self.len];
        let Some(i) = held.iter().position(|v| v.to_bits() == x.to_bits()) else {
            return false;
        };
        self.v.copy_within(i + 1..self.len, i);
        self.len -= 1;
        true
    }

    /// The median: the middle value, or the mean of the two middle ones
    /// (the lower first, as [`median_of`] adds them).
    pub fn median(&self) -> Option<f32> {
        let n = self.len;
        if n == 0 {
            return None;
        }
        let upper = self.v[n / 2];
        Some(if n % 2 == 1 {
            upper
        } else {
            0.5 * (self.v[n / 2 - 1] + upper)
        })
    }
}

impl<const N: usize> Default for Sorted<N> {
    fn default() -> Self {
        Self::new()
    }
}

/// Can `x` be held by a [`Sorted`]?
pub fn sortable(x: f32) -> bool {
    // NaN compares with nothing; 0.0 and −0.0 compare equal with other
    // bits.
    !x.is_nan() && x != 0.0
}

/// The last `K` intervals and their median: the reference intervals of a
/// beat's plausibility (every interval since the last restart). Their
/// beats' peaks rise strictly within a run (an interval needs a peak after
/// the last one), so the intervals ending after the oldest of the last `K`
/// are exactly the last `K`.
#[derive(Clone, Copy, Debug)]
pub struct LastIntervals<const K: usize> {
    // A ring, `newest` the slot of the newest, `len` held.
    last: [f32; K],
    newest: usize,
    len: usize,
    // The held values that [`sortable`] accepts, ascending, and how many
    // held are not (then the median is selected).
    sorted: Sorted<K>,
    unsorted: usize,
}

impl<const K: usize> LastIntervals<K> {
    /// Empty.
    pub const fn new() -> Self {
        Self {
            last: [0.0; K],
            newest: 0,
            len: 0,
            sorted: Sorted::new(),
            unsorted: 0,
        }
    }

    /// Record an interval, forgetting the oldest once `K` are held.
    pub fn push(&mut self, ibi_ms: f32) {
        self.newest = (self.newest + 1) % K;
        if self.len == K {
            let old = self.last[self.newest];
            if sortable(old) {
                self.sorted.remove(old);
            } else {
                self.unsorted -= 1;
            }
        } else {
            self.len += 1;
        }
        self.last[self.newest] = ibi_ms;
        if sortable(ibi_ms) {
            self.sorted.insert(ibi_ms);
        } else {
            self.unsorted += 1;
        }
    }

    /// The interval `age` pushes ago (0 = the newest; `age < len`).
    fn at(&self, age: usize) -> f32 {
        self.last[(self.newest + K - age) % K]
    }

    /// Median of the intervals held (the last `K`).
    pub fn median(&self) -> Option<f32> {
        if self.unsorted == 0 {
            return self.sorted.median();
        }
        // Newest first, as `Intervals::median_since` takes them.
        let mut held = [0.0; K];
        for (age, v) in held[..self.len].iter_mut().enumerate() {
            *v = self.at(age);
        }
        Some(median_of(&mut held[..self.len]))
    }

    /// The longest of the last `count` intervals over the shortest; `None`
    /// when fewer are held (or `count` is 0). `count ≤ K`.
    pub fn spread(&self, count: usize) -> Option<f32> {
        if count == 0 || self.len < count {
            return None;
        }
        let (mut low, mut high) = (f32::INFINITY, 0.0f32);
        for age in 0..count {
            let v = self.at(age);
            low = crate::math::min_f32(low, v);
            high = crate::math::max_f32(high, v);
        }
        (low > 0.0).then(|| high / low)
    }

    /// Forget everything.
    pub fn clear(&mut self) {
        *self = Self::new();
    }
}

impl<const K: usize> Default for LastIntervals<K> {
    fn default() -> Self {
        Self::new()
    }
}

#[cfg(test)]
mod tests {
    use super::super::rate::Intervals;
    use super::*;

    /// Intervals from a small generator (xorshift), with repeats, and now
    /// and then a NaN or a zero.
    fn values(seed: u32, count: usize) -> std::vec::Vec<f32> {
        let mut s = seed;
        (0..count)
            .map(|k| {
                s ^= s << 13;
                s ^= s >> 17;
                s ^= s << 5;
                match (k % 97, s % 40) {
                    (13, _) => f32::NAN,
                    (50, _) => 0.0,
                    (_, r) => 300.0 + 25.0 * r as f32 + (s % 3) as f32 * 0.125,
                }
            })
            .collect()
    }

    #[test]
    fn the_last_intervals_median_is_the_selected_one_bit_for_bit() {
        let mut last = LastIntervals::<8>::new();
        let mut all = Intervals::new();
        for (k, v) in values(7, 600).into_iter().enumerate() {
            last.push(v);
            all.push(v, k as u64);
            let want = all.recent_median(8);
            assert_eq!(
                last.median().map(f32::to_bits),
                want.map(f32::to_bits),
                "{k}"
            );
            for count in 0..=8 {
                let want = all.recent_spread(count).map(f32::to_bits);
                assert_eq!(last.spread(count).map(f32::to_bits), want, "{k} {count}");
            }
            if k % 211 == 0 {
                last.clear();
                all.clear();
            }
        }
    }

    #[test]
    fn sorted_values_give_the_middle_and_refuse_what_they_do_not_hold() {
        let mut s = Sorted::<4>::new();
        for v in [900.0, 700.0, 800.0, 1000.0] {
            s.insert(v);
        }
        assert_eq!(s.median(), Some(850.0));
        assert!(!s.remove(750.0));
        assert!(s.remove(1000.0));
        assert_eq!((s.median(), s.len()), (Some(800.0), 3));
        s.clear();
        assert_eq!(s.median(), None);
    }
}
