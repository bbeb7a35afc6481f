//! Input conditioning: reject what is not a number, mark what is clipped.

/// How the ADC's rails are known.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Rails {
    /// The input range is known: samples at or beyond it are clipped.
    Known {
        /// Lowest value the ADC can give, input units.
        low: f32,
        /// Highest value the ADC can give, input units.
        high: f32,
    },
    /// Unknown: a sample is clipped when it repeats the highest (or lowest)
    /// value seen so far for at least [`PLATEAU_S`] (a flat top at an
    /// extreme is how a saturated front end looks).
    Auto,
}

/// Shortest flat run at an extreme that counts as clipping, seconds.
pub const PLATEAU_S: f32 = 0.02;

/// Largest input magnitude taken; beyond it a sample is replaced like one
/// that is not a number. (The limit [`crate::filter::Sample::sanitize`]
/// keeps filters within: the pipeline's filters then need no test of
/// their own, and squares of what they give stay finite in `f32`.)
pub const INPUT_LIMIT: f32 = 1e18;

/// What conditioning made of one sample.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Conditioned {
    /// The value to filter (the last good value when the input was not
    /// finite).
    pub value: f32,
    /// The input was not finite, or beyond [`INPUT_LIMIT`], and was
    /// replaced.
    pub rejected: bool,
    /// The sample is at the rails.
    pub clipped: bool,
}

/// Conditioning state.
#[derive(Clone, Copy, Debug)]
pub struct Conditioner {
    rails: Rails,
    plateau: u32,
    // The last finite sample; NaN before the first (so no run starts
    // there, and a replaced sample before any is 0).
    last: f32,
    max: f32,
    min: f32,
    run: u32,
    rejected: u64,
    clipped: u64,
}

impl Conditioner {
    /// Conditioning for `rails` at `fs_hz`.
    pub fn new(rails: Rails, fs_hz: f32) -> Self {
        Self {
            rails,
            plateau: (libm::ceilf(PLATEAU_S * fs_hz) as u32).max(3),
            last: f32::NAN,
            max: f32::NEG_INFINITY,
            min: f32::INFINITY,
            run: 0,
            rejected: 0,
            clipped: 0,
        }
    }

    /// Condition one sample.
    #[inline(always)]
    pub fn push(&mut self, x: f32) -> Conditioned {
        match self.rails {
            Rails::Known { low, high } => {
                // One comparison: NaN fails it too.
                #[allow(clippy::neg_cmp_op_on_partial_ord)]
                if !(x.abs() <= INPUT_LIMIT) {
                    return self.replace();
                }
                self.accept(x, x <= low || x >= high)
            }
            Rails::Auto => {
                // Within the extremes seen so far, which only taken samples
                // set: finite, within `INPUT_LIMIT` and no new extreme, in
                // two comparisons (NaN fails them). Nearly every sample
                // after the first seconds.
                if x <= self.max && x >= self.min {
                    // A run of equal values counts whether or not it sits
                    // at an extreme: a constant value that is not the
                    // maximum or the minimum cannot become one without
                    // changing, so only runs at an extreme ever reach the
                    // test of the extremes.
                    let clipped = if x == self.last {
                        self.run += 1;
                        self.run >= self.plateau && (x == self.max || x == self.min)
                    } else {
                        self.run = 1;
                        false
                    };
                    self.accept(x, clipped)
                } else {
                    self.push_outside(x)
                }
            }
        }
    }

    /// [`Self::push`] with automatic rails of a sample beyond the extremes
    /// seen so far: a new extreme (never clipped: it differs from the last
    /// sample, which lies within the old ones), or one to replace.
    #[inline(always)]
    fn push_outside(&mut self, x: f32) -> Conditioned {
        #[allow(clippy::neg_cmp_op_on_partial_ord)]
        if !(x.abs() <= INPUT_LIMIT) {
            return self.replace();
        }
        // A tie keeps the old extreme (the same number, and only compared
        // with `==`).
        if x > self.max {
            self.max = x;
        }
        if x < self.min {
            self.min = x;
        }
        self.run = 1;
        self.accept(x, false)
    }

    /// Take `x`, `clipped` or not.
    #[inline(always)]
    fn accept(&mut self, x: f32, clipped: bool) -> Conditioned {
        self.last = x;
        if clipped {
            self.clipped += 1;
        }
        Conditioned {
            value: x,
            rejected: false,
            clipped,
        }
    }

    /// A sample not taken: counted, the last taken value in its place.
    fn replace(&mut self) -> Conditioned {
        self.rejected += 1;
        Conditioned {
            value: self.last_value(),
            rejected: true,
            clipped: false,
        }
    }

    /// The last finite sample, 0 before the first.
    #[inline]
    pub fn last_value(&self) -> f32 {
        if self.last.is_nan() {
            0.0
        } else {
            self.last
        }
    }

    /// Non-finite samples rejected so far.
    pub fn rejected(&self) -> u64 {
        self.rejected
    }

    /// Samples marked clipped so far.
    pub fn clipped(&self) -> u64 {
        self.clipped
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn non_finite_samples_are_replaced_and_counted() {
        let mut c = Conditioner::new(Rails::Auto, 100.0);
        c.push(1.5);
        let r = c.push(f32::NAN);
        assert!(r.rejected && r.value == 1.5);
        c.push(f32::INFINITY);
        let r = c.push(-2e18);
        assert!(r.rejected && r.value == 1.5);
        assert!(!c.push(-1e18).rejected);
        assert_eq!(c.rejected(), 3);
    }

    #[test]
    fn known_rails_mark_samples_at_or_beyond() {
        let mut c = Conditioner::new(
            Rails::Known {
                low: 0.0,
                high: 1.0,
            },
            100.0,
        );
        assert!(c.push(1.0).clipped && c.push(-0.1).clipped && !c.push(0.5).clipped);
    }

    #[test]
    fn a_flat_top_at_the_maximum_is_clipping_but_a_short_repeat_is_not() {
        let mut c = Conditioner::new(Rails::Auto, 300.0); // plateau: 6 samples
        for v in [0.0, 1.0, 2.0, 2.0, 2.0, 1.0] {
            assert!(!c.push(v).clipped);
        }
        let flags: [bool; 8] = core::array::from_fn(|_| c.push(2.0).clipped);
        assert_eq!(flags, [false, false, false, false, false, true, true, true]);
    }
}
