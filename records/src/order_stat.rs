//! An exact order statistic (the k-th smallest value: a median, a
//! quantile) of a sequence too long to hold, found in a few passes over
//! it in a fixed amount of memory.
//!
//! Each pass counts the values into 32 768 buckets (256 KiB) by the next
//! 15 bits of their order-preserving key (the bit pattern of the `f64`,
//! arranged so that integer order is [`f64::total_cmp`] order), keeping
//! only the values that share the bits already known. The bucket holding
//! the wanted rank fixes 15 more bits; at most five passes fix all 64,
//! and a pass ends the search early when every value still in the
//! running is one and the same (values of a 16-bit converter: three
//! passes). The result is the very value a sort would put at
//! that rank, bit for bit.

/// Key bits counted per pass (the last pass counts the 4 left).
const BUCKET_BITS: u32 = 15;

/// How a pass ended.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Pass {
    /// The value at the rank: no further pass is needed.
    Known(f64),
    /// Push the same values again (any order) and end another pass.
    Again,
    /// The pass held no value at the rank: `values` were pushed in all.
    TooFew {
        /// Values pushed in the pass.
        values: u64,
    },
}

/// The `rank`-th smallest (0-based, in [`f64::total_cmp`] order, so NaN
/// sorts after +infinity and -0 before +0) of a sequence pushed whole and
/// unchanged once per pass ([`OrderStat::push`], [`OrderStat::end_pass`]).
#[derive(Debug, Clone)]
pub struct OrderStat {
    rank: u64,
    /// Key bits fixed so far (the high `known` bits of `prefix`).
    prefix: u64,
    known: u32,
    /// Values of earlier passes' groups below the running group.
    below: u64,
    counts: Vec<u64>,
    /// This pass: values pushed, and the least and greatest key in the
    /// running group.
    pushed: u64,
    least: u64,
    greatest: u64,
    found: Option<f64>,
}

/// The order-preserving key of `v`: unsigned integer order is
/// [`f64::total_cmp`] order.
fn key(v: f64) -> u64 {
    let bits = v.to_bits();
    if bits >> 63 == 1 {
        !bits
    } else {
        bits | 1 << 63
    }
}

/// The value whose key is `k`.
fn value(k: u64) -> f64 {
    f64::from_bits(if k >> 63 == 1 { k & !(1 << 63) } else { !k })
}

impl OrderStat {
    /// Look for the value at `rank` (0 is the smallest).
    pub fn new(rank: u64) -> OrderStat {
        OrderStat {
            rank,
            prefix: 0,
            known: 0,
            below: 0,
            counts: vec![0; 1 << BUCKET_BITS],
            pushed: 0,
            least: u64::MAX,
            greatest: 0,
            found: None,
        }
    }

    /// The rank looked for.
    pub fn rank(&self) -> u64 {
        self.rank
    }

    /// One value of the sequence, in this pass.
    pub fn push(&mut self, v: f64) {
        self.pushed += 1;
        if self.found.is_some() {
            return;
        }
        let k = key(v);
        if self.known > 0 && k >> (64 - self.known) != self.prefix >> (64 - self.known) {
            return;
        }
        self.least = self.least.min(k);
        self.greatest = self.greatest.max(k);
        let bits = self.bits();
        let shift = 64 - self.known - bits;
        self.counts[((k >> shift) & ((1 << bits) - 1)) as usize] += 1;
    }

    /// Every value of [`OrderStat::push`]`(v)` for `v` in `values`.
    pub fn push_all(&mut self, values: &[f64]) {
        values.iter().for_each(|&v| self.push(v));
    }

    /// End a pass: the value when it is known, else whether to go again.
    pub fn end_pass(&mut self) -> Pass {
        let pushed = std::mem::take(&mut self.pushed);
        if let Some(v) = self.found {
            return Pass::Known(v);
        }
        if pushed <= self.rank {
            self.reset_pass();
            return Pass::TooFew { values: pushed };
        }
        // Every value still in the running is one value: it is the answer
        // (the rank lies in the group, which the counts below confirm).
        if self.least == self.greatest {
            let v = value(self.least);
            self.found = Some(v);
            return Pass::Known(v);
        }
        let mut before = self.below;
        let mut bucket = 0;
        for (b, &n) in self.counts.iter().enumerate() {
            if before + n > self.rank {
                bucket = b as u64;
                break;
            }
            before += n;
        }
        self.below = before;
        self.known += self.bits();
        self.prefix |= bucket << (64 - self.known);
        if self.known == 64 {
            let v = value(self.prefix);
            self.found = Some(v);
            return Pass::Known(v);
        }
        self.reset_pass();
        Pass::Again
    }

    /// Key bits this pass counts.
    fn bits(&self) -> u32 {
        BUCKET_BITS.min(64 - self.known)
    }

    fn reset_pass(&mut self) {
        self.counts.iter_mut().for_each(|n| *n = 0);
        self.least = u64::MAX;
        self.greatest = 0;
    }
}

/// The value at `rank` of the sequence `pass` hands to its argument, one
/// value at a time, each time it is called (the same values each time):
/// `Ok(None)` when the sequence is shorter than `rank + 1`; the first
/// error of a pass ends the search.
pub fn select<E>(
    rank: u64,
    mut pass: impl FnMut(&mut dyn FnMut(f64)) -> Result<(), E>,
) -> Result<Option<f64>, E> {
    let mut stat = OrderStat::new(rank);
    loop {
        pass(&mut |v| stat.push(v))?;
        match stat.end_pass() {
            Pass::Known(v) => return Ok(Some(v)),
            Pass::TooFew { .. } => return Ok(None),
            Pass::Again => {}
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn by_sorting(values: &[f64], rank: usize) -> f64 {
        let mut v = values.to_vec();
        v.sort_by(f64::total_cmp);
        v[rank]
    }

    fn by_passes(values: &[f64], rank: u64) -> (Option<f64>, usize) {
        let mut passes = 0;
        let got = select::<()>(rank, |push| {
            passes += 1;
            values.iter().for_each(|&v| push(v));
            Ok(())
        })
        .unwrap();
        (got, passes)
    }

    /// A pseudo-random sequence (xorshift), spread over many exponents.
    fn scattered(n: usize, seed: u64) -> Vec<f64> {
        let mut s = seed;
        (0..n)
            .map(|_| {
                s ^= s << 13;
                s ^= s >> 7;
                s ^= s << 17;
                let m = (s >> 11) as f64 / (1u64 << 53) as f64;
                let e = ((s & 63) as i32) - 32;
                if s & 64 == 0 {
                    m * 2f64.powi(e)
                } else {
                    -m * 2f64.powi(e)
                }
            })
            .collect()
    }

    #[test]
    fn every_rank_is_the_sorted_value() {
        for (n, seed) in [(1, 1), (2, 7), (101, 3), (1000, 11)] {
            let v = scattered(n, seed);
            for rank in [0, n / 3, n / 2, n - 1] {
                let (got, _) = by_passes(&v, rank as u64);
                assert_eq!(
                    got.map(f64::to_bits),
                    Some(by_sorting(&v, rank).to_bits()),
                    "n {n} rank {rank}"
                );
            }
        }
    }

    #[test]
    fn ties_signs_zeros_and_infinities() {
        let v = [
            0.0,
            -0.0,
            3.0,
            3.0,
            f64::INFINITY,
            f64::NEG_INFINITY,
            -3.0,
            3.0,
            1e-310,
            -1e-310,
        ];
        for rank in 0..v.len() {
            let (got, _) = by_passes(&v, rank as u64);
            assert_eq!(
                got.map(f64::to_bits),
                Some(by_sorting(&v, rank).to_bits()),
                "rank {rank}"
            );
        }
    }

    #[test]
    fn values_near_each_other_take_all_five_passes_and_no_more() {
        // Keys that differ only in the last bits: every 16-bit step needed.
        let v: Vec<f64> = (0..50)
            .map(|k| f64::from_bits(1.0f64.to_bits() + k))
            .collect();
        let (got, passes) = by_passes(&v, 25);
        assert_eq!(got, Some(v[25]));
        assert_eq!(passes, 5);
        // One repeated value is known after the first pass.
        assert_eq!(by_passes(&[2.5; 40], 13), (Some(2.5), 1));
    }

    #[test]
    fn values_of_a_16_bit_converter_take_three_passes() {
        // Physical values (code - baseline) / gain of pseudo-random codes.
        let v: Vec<f64> = scattered(5000, 5)
            .iter()
            .map(|x| ((x.to_bits() >> 7) % 65_536) as f64 - 32_768.0)
            .map(|code| (code - 1_000.0) / 200.0)
            .collect();
        for rank in [0, 1234, 2500, 4999] {
            let (got, passes) = by_passes(&v, rank);
            assert_eq!(got, Some(by_sorting(&v, rank as usize)));
            assert!(passes <= 3, "rank {rank}: {passes} passes");
        }
    }

    #[test]
    fn too_short_a_sequence_has_no_such_rank() {
        assert_eq!(by_passes(&[1.0, 2.0], 2).0, None);
        assert_eq!(by_passes(&[], 0).0, None);
        let mut s = OrderStat::new(5);
        s.push_all(&[1.0, 2.0]);
        assert_eq!(s.end_pass(), Pass::TooFew { values: 2 });
    }
}
