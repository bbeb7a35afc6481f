//! Helpers shared by the unit tests of the readers.

/// A small deterministic generator (xorshift64*) for the "random input
/// never panics" tests: reproducible from the seed, no dependency.
pub(crate) struct Rng(u64);

impl Rng {
    /// A generator started from `seed` (any value but 0 works; 0 is mapped).
    pub(crate) fn new(seed: u64) -> Rng {
        Rng(seed.max(1))
    }

    /// The next 64 random bits.
    pub(crate) fn next(&mut self) -> u64 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        self.0.wrapping_mul(0x2545_f491_4f6c_dd1d)
    }

    /// A value in `0..n` (`n` > 0).
    pub(crate) fn below(&mut self, n: usize) -> usize {
        (self.next() % n as u64) as usize
    }

    /// `n` random bytes.
    pub(crate) fn bytes(&mut self, n: usize) -> Vec<u8> {
        (0..n).map(|_| self.next() as u8).collect()
    }
}
