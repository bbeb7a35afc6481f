//! A fixed-capacity ring of the most recent samples.

/// The last `N` values pushed, newest at age 0.
#[derive(Clone, Copy, Debug)]
pub struct Ring<const N: usize, T = f32> {
    data: [T; N],
    head: usize,
    filled: usize,
}

impl<const N: usize, T: Copy + Default> Ring<N, T> {
    /// An empty ring.
    pub fn new() -> Self {
        Self {
            data: [T::default(); N],
            head: 0,
            filled: 0,
        }
    }

    /// Append a value, forgetting the oldest once full.
    #[inline]
    pub fn push(&mut self, v: T) {
        self.head = if self.head + 1 == N { 0 } else { self.head + 1 };
        self.data[self.head] = v;
        if self.filled < N {
            self.filled += 1;
        }
    }

    /// The value pushed `age` pushes ago (0 = newest); the default value
    /// (0) when older than what the ring holds.
    #[inline]
    pub fn at(&self, age: usize) -> T {
        if age >= self.filled {
            return T::default();
        }
        let i = if age <= self.head {
            self.head - age
        } else {
            N + self.head - age
        };
        self.data[i]
    }

    /// How many values are held.
    pub fn len(&self) -> usize {
        self.filled
    }

    /// Nothing pushed yet?
    pub fn is_empty(&self) -> bool {
        self.filled == 0
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
