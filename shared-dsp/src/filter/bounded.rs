//! One section and its state, for inputs the caller keeps in range.

use super::Section;

/// A single section with its state and no sanitising of its input: for a
/// signal the caller has already made finite and bounded (the pipeline's
/// conditioner replaces every sample beyond
/// [`crate::pipeline::condition::INPUT_LIMIT`]), where [`super::Cascade`]'s
/// test of each sample and its loop over sections would be paid on every
/// sample for nothing. A stable section fed bounded input gives bounded
/// output, so a chain of these stays in range too.
#[derive(Clone, Copy, Debug)]
pub struct Bounded<S: Section> {
    section: S,
    state: S::State,
}

impl<S: Section> Bounded<S> {
    /// `section`, its state at rest (all zero).
    pub fn new(section: S) -> Self {
        Self {
            section,
            state: S::State::default(),
        }
    }

    /// Filter one sample, which the caller keeps finite and bounded.
    #[inline(always)]
    pub fn process(&mut self, x: S::Sample) -> S::Sample {
        self.section.process(&mut self.state, x)
    }

    /// Set the state as if `x` had been the input forever; returns the
    /// steady output.
    pub fn settle(&mut self, x: S::Sample) -> S::Sample {
        self.state = self.section.steady_state(x);
        self.section.steady_output(x)
    }

    /// The state (after the last sample).
    #[inline(always)]
    pub fn state(&self) -> &S::State {
        &self.state
    }

    /// The section.
    pub fn section(&self) -> &S {
        &self.section
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::design::butterworth_lowpass;
    use crate::filter::{Cascade, Delta};

    #[test]
    fn in_range_it_gives_what_a_one_section_cascade_gives() {
        // Two implementations of the same section, checked against each
        // other bit for bit (common practice: a refactor's check).
        let mut cascade: Cascade<Delta, 1> = butterworth_lowpass(2, 8.0, 125.0)
            .unwrap()
            .cascade()
            .unwrap();
        let mut bare = Bounded::new(cascade.sections()[0]);
        assert_eq!(cascade.settle(3.0).to_bits(), bare.settle(3.0).to_bits());
        for n in 0..500 {
            let x = 3.0 + libm::sinf(n as f32 * 0.3) + (n % 7) as f32 * 0.01;
            assert_eq!(cascade.process(x).to_bits(), bare.process(x).to_bits());
        }
    }
}
