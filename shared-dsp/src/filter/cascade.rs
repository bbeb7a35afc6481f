//! A fixed-length chain of sections with their state.

use super::{Biquad, Sample, Section};

/// `N` sections of structure `S` run one after the other, with their state.
///
/// Sized at compile time, so it lives in a `static` or on the stack with no
/// allocation; build one from a design with [`crate::Design::cascade`].
#[derive(Clone, Copy, Debug)]
pub struct Cascade<S: Section, const N: usize> {
    sections: [S; N],
    states: [S::State; N],
    // Sections in use; the rest are never run, so a cascade sized for the
    // largest design runs a smaller one exactly.
    active: usize,
}

impl<S: Section, const N: usize> Cascade<S, N> {
    /// A cascade of the given sections, state at rest (all zero).
    pub fn new(sections: [S; N]) -> Self {
        Self::with_active(sections, N)
    }

    /// A cascade that runs only the first `active` sections (at most `N`).
    pub fn with_active(sections: [S; N], active: usize) -> Self {
        Self {
            sections,
            states: [S::State::default(); N],
            active: active.min(N),
        }
    }

    /// Number of sections in use.
    pub fn active(&self) -> usize {
        self.active
    }

    /// Filter one sample through every section. Never fails: the input is
    /// sanitised first (see [`Sample::sanitize`]).
    #[inline]
    pub fn process(&mut self, x: S::Sample) -> S::Sample {
        let mut v = x.sanitize();
        // `active` is at most N; saying so here lets the compiler drop the
        // slice and bounds checks (a one-section cascade is then one test
        // and the section, on every sample it filters).
        for i in 0..self.active.min(N) {
            v = self.sections[i].process(&mut self.states[i], v);
        }
        v
    }

    /// Filter a block in place.
    pub fn process_block(&mut self, block: &mut [S::Sample]) {
        for v in block {
            *v = self.process(*v);
        }
    }

    /// Clear the state (as if the input had been zero forever).
    pub fn reset(&mut self) {
        self.states = [S::State::default(); N];
    }

    /// Set the state as if `x` had been the input forever, so a large DC
    /// offset at start-up does not ring through the filter. Returns the
    /// cascade's steady output for that input.
    pub fn settle(&mut self, x: S::Sample) -> S::Sample {
        let mut v = x.sanitize();
        let n = self.active;
        for (section, state) in self.sections[..n].iter().zip(self.states[..n].iter_mut()) {
            *state = section.steady_state(v);
            v = section.steady_output(v);
        }
        v
    }

    /// The sections in use.
    pub fn sections(&self) -> &[S] {
        &self.sections[..self.active]
    }

    /// The current state of every section in use.
    pub fn states(&self) -> &[S::State] {
        &self.states[..self.active]
    }

    /// The coefficients the cascade really implements, in double precision
    /// (unused slots hold pass-through sections).
    pub fn realised(&self) -> [Biquad<f64>; N] {
        core::array::from_fn(|i| {
            if i < self.active {
                self.sections[i].realised()
            } else {
                Biquad::identity()
            }
        })
    }
}
