//! A fixed-capacity ring of the most recent samples.

/// The last `N` values pushed, newest at age 0.
///
/// Hand-written rather than `heapless::HistoryBuf` (0.9.4), measured: the
/// pipeline's rings on a `HistoryBuf` (with a fill count beside it, read
/// by age through `recent_index` and `as_slice`) cost 480.5 instead of
/// 432.6 instructions per sample on bidmc01 at 125 Hz (+11 %) and 309.7
/// instead of 286.4 on cb0009 at 300 Hz (+8 %), counted on the emulated
/// board (`tests/tests/emulated_performance.rs`): its write compares and
/// wraps where this ring masks, and its newest index is a branch.
// `repr(C)`, the counter first: it stays within reach of short load
// offsets from the start of the ring, whatever its size.
#[derive(Clone, Copy, Debug)]
#[repr(C)]
pub struct Ring<const N: usize, T = f32> {
    // The pushes so far until N, then N plus the newest slot: one counter
    // is both the newest slot (`head % N`) and the fill (`min(head, N)`),
    // so a push updates one word and tests nothing.
    head: usize,
    data: [T; N],
}

impl<const N: usize, T: Copy + Default> Ring<N, T> {
    /// An empty ring.
    pub fn new() -> Self {
        const { assert!(N.is_power_of_two(), "a Ring's size is a power of two") };
        Self {
            head: 0,
            data: [T::default(); N],
        }
    }

    /// Append a value, forgetting the oldest once full.
    #[inline]
    pub fn push(&mut self, v: T) {
        self.head = advance::<N>(self.head);
        self.data[self.head % N] = v;
    }

    /// The ring to read, as a [`Trace`].
    #[inline]
    pub fn trace(&self) -> Trace<'_, N, T> {
        Trace::new(self.head, &self.data)
    }

    /// The value pushed `age` pushes ago (0 = newest); the default value
    /// (0) when older than what the ring holds.
    #[inline]
    pub fn at(&self, age: usize) -> T {
        self.trace().at(age)
    }

    /// [`Self::at`] for an `age` the caller keeps below `N` (a window
    /// fixed at construction, or an age below [`Self::len`]): no test of
    /// the age, one masked load. An age of `N` or more reads as `age % N`
    /// would.
    #[inline]
    pub fn at_within(&self, age: usize) -> T {
        self.trace().at_within(age)
    }

    /// How many values are held.
    pub fn len(&self) -> usize {
        self.trace().len()
    }

    /// Nothing pushed yet?
    pub fn is_empty(&self) -> bool {
        self.head == 0
    }

    /// Capacity.
    pub const fn capacity(&self) -> usize {
        N
    }
}

impl<const N: usize, T: Copy + Default> Default for Ring<N, T> {
    fn default() -> Self {
        Self::new()
    }
}

/// A ring's counter after one more push (from 0, the empty ring's), for
/// owners that keep several rings pushed together on one counter.
#[inline(always)]
pub const fn advance<const N: usize>(head: usize) -> usize {
    // Below N the count goes up by one; from N on, bit N stays set and the
    // low bits wrap: the newest slot is `head % N` either way (a mask, and
    // no bounds check).
    ((head + 1) & (2 * N - 1)) | (head & N)
}

/// A ring's values read by age: its counter (`advance`) and slots
/// (written at `head % N`), borrowed. `N` is a power of two.
#[derive(Clone, Copy, Debug)]
pub struct Trace<'a, const N: usize, T = f32> {
    head: usize,
    data: &'a [T; N],
}

impl<'a, const N: usize, T: Copy + Default> Trace<'a, N, T> {
    /// The ring of counter `head` and slots `data`.
    #[inline(always)]
    pub fn new(head: usize, data: &'a [T; N]) -> Self {
        Self { head, data }
    }

    /// As [`Ring::at`].
    #[inline]
    pub fn at(&self, age: usize) -> T {
        if age >= N {
            return T::default();
        }
        // A slot not yet written since `new` still holds the default, so
        // ages between `len()` and `N` need no test of their own. age < N,
        // so this cannot underflow.
        self.data[(self.head + N - age) % N]
    }

    /// As [`Ring::at_within`].
    #[inline]
    pub fn at_within(&self, age: usize) -> T {
        debug_assert!(age < N);
        // For a power-of-two N the wrapping difference's remainder is the
        // slot `age` back, as in `at`.
        self.data[self.head.wrapping_sub(age) % N]
    }

    /// The values of ages `from..to` (`to ≤ N`, and `to ≤ len()` for only
    /// values pushed), newest first, read as at most two runs of slots with
    /// no index arithmetic per value (a loop over it costs what a loop over
    /// a slice does, used with `fold`, `position` and the like); empty when
    /// `to ≤ from`.
    #[inline]
    pub fn ages(&self, from: usize, to: usize) -> impl Iterator<Item = T> + 'a {
        let count = to.max(from) - from;
        debug_assert!(count <= N);
        // Age a is slot (head − a) mod N: the ages run down the slots from
        // `first`, past slot 0 to slot N − 1 at most once.
        let first = self.head.wrapping_sub(from) % N;
        let data: &'a [T; N] = self.data;
        let (upper, lower) = if count <= first + 1 {
            (&data[first + 1 - count..first + 1], &data[..0])
        } else {
            (&data[..first + 1], &data[N - (count - first - 1)..])
        };
        upper.iter().rev().chain(lower.iter().rev()).copied()
    }

    /// How many values are held.
    #[inline]
    pub fn len(&self) -> usize {
        if self.head >= N {
            N
        } else {
            self.head
        }
    }

    /// Nothing pushed yet?
    pub fn is_empty(&self) -> bool {
        self.head == 0
    }
}

/// A running sum with compensated (Kahan) addition, so adding and later
/// removing the same values leaves no drift even after hours of samples.
#[derive(Clone, Copy, Debug, Default)]
pub struct RunningSum {
    sum: f32,
    carry: f32,
}

impl RunningSum {
    /// Add `v` (negative to remove a value).
    #[inline]
    pub fn add(&mut self, v: f32) {
        let y = v - self.carry;
        let t = self.sum + y;
        self.carry = (t - self.sum) - y;
        self.sum = t;
    }

    /// The sum, with the part still held in the compensation.
    #[inline]
    pub fn get(&self) -> f32 {
        self.sum - self.carry
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ages_count_back_from_the_newest() {
        let mut r = Ring::<4>::new();
        for v in 1..=6 {
            r.push(v as f32);
        }
        assert_eq!([r.at(0), r.at(1), r.at(2), r.at(3)], [6.0, 5.0, 4.0, 3.0]);
        assert_eq!(r.at(4), 0.0);
    }

    #[test]
    fn the_count_stays_full_and_the_ages_right_after_many_wraps() {
        let mut r = Ring::<4>::new();
        for v in 1..=4 * 1000 + 3 {
            r.push(v as f32);
            assert_eq!(r.len(), (v as usize).min(4));
        }
        let newest = (4 * 1000 + 3) as f32;
        for age in 0..4 {
            assert_eq!(r.at(age), newest - age as f32);
            assert_eq!(r.at_within(age), r.at(age));
        }
        assert_eq!(r.at(4), 0.0);
    }

    #[test]
    fn runs_of_ages_read_as_ages_one_by_one() {
        let mut r = Ring::<8, u32>::new();
        for v in 1..=21 {
            r.push(v);
            let t = r.trace();
            for from in 0..=8 {
                for to in 0..=8 {
                    let runs: std::vec::Vec<u32> = t.ages(from, to).collect();
                    let one_by_one: std::vec::Vec<u32> = (from..to).map(|a| t.at(a)).collect();
                    assert_eq!(runs, one_by_one, "{v}: {from}..{to}");
                }
            }
        }
    }

    #[test]
    fn ages_not_yet_pushed_read_as_default() {
        let mut r = Ring::<8, u8>::new();
        r.push(7);
        r.push(9);
        assert_eq!(r.len(), 2);
        let ages: [u8; 9] = core::array::from_fn(|a| r.at(a));
        assert_eq!(ages, [9, 7, 0, 0, 0, 0, 0, 0, 0]);
    }

    #[test]
    fn running_sum_returns_to_zero() {
        let mut s = RunningSum::default();
        let vals: [f32; 5] = [1e3, 1e-3, 7.25, 1e-7, 3.5e2];
        for _ in 0..10_000 {
            for v in vals {
                s.add(v);
            }
            for v in vals {
                s.add(-v);
            }
        }
        // Within two ulps of the largest value, after 200 000 additions
        // (plain f32 summation drifts by ~1e-2 here).
        assert!(s.get().abs() <= 2.0 * 1e3 * f32::EPSILON, "{}", s.get());
    }
}

/// The last `N` input samples, kept by their sample index: the caller's
/// own running count places each value, so a push is one store (this runs
/// on every input sample, at up to 1 kHz on the chip). `N` is a power of
/// two.
#[derive(Clone, Copy, Debug)]
pub struct History<const N: usize> {
    data: [f32; N],
}

impl<const N: usize> History<N> {
    const MASK: usize = {
        assert!(N.is_power_of_two(), "History's size must be a power of two");
        N - 1
    };

    /// An empty history.
    pub fn new() -> Self {
        Self { data: [0.0; N] }
    }

    /// Keep `v` as the sample of index `index`.
    #[inline]
    pub fn put(&mut self, index: u64, v: f32) {
        self.data[index as usize & Self::MASK] = v;
    }

    /// The sample kept for index `index`: the caller keeps `index` among
    /// the last `N` put (older ones have been overwritten).
    #[inline]
    pub fn at(&self, index: u64) -> f32 {
        self.data[index as usize & Self::MASK]
    }
}

impl<const N: usize> Default for History<N> {
    fn default() -> Self {
        Self::new()
    }
}
