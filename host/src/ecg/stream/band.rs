//! The zero-phase band-pass ([`crate::ecg::stages::band_passed`]) over a
//! stream, with the same bits.
//!
//! The forward pass is causal and exact. The backward pass cannot start at
//! the true end, so each block `[a, b)` is run backward from `b + margin`
//! (or the end) from rest: a stable filter forgets its start, and the two
//! runs reach the same state long before `b`. That is checked, not
//! assumed: at `b` the state of this block's run is compared, bit for bit,
//! with the state the next block's run has there. Equal at every boundary
//! means, by induction from the last block (run from the true end), every
//! output equals the whole-array one; a difference is an error
//! ([`Unsettled`]), never a silently different result: the caller then
//! runs the backward pass from the true end through a file
//! ([`super::spill`]).

use super::tail::Tail;
use crate::ecg::stages::BAND_HZ;
use plethwire_dsp::design::butterworth_bandpass;
use plethwire_dsp::filter::Biquad;

/// The backward run of a block did not reach the state of the next
/// block's run within the margin.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) struct Unsettled;

pub(super) type State = Vec<(f64, f64)>;

/// The sections of the band-pass at `fs` Hz (an accepted rate).
pub(super) fn sections(fs: f64) -> Vec<Biquad<f64>> {
    butterworth_bandpass(2, BAND_HZ.0, BAND_HZ.1, fs)
        .expect("5-15 Hz band-pass exists for every accepted rate")
        .sections()
        .to_vec()
}

/// One step of a biquad in transposed direct form II (as the whole-array
/// band-pass runs it).
fn step(s: &Biquad<f64>, z: &mut (f64, f64), x: f64) -> f64 {
    let out = s.b0 * x + z.0;
    z.0 = s.b1 * x - s.a1 * out + z.1;
    z.1 = s.b2 * x - s.a2 * out;
    out
}

pub(super) fn cascade(sections: &[Biquad<f64>], state: &mut State, x: f64) -> f64 {
    sections
        .iter()
        .zip(state.iter_mut())
        .fold(x, |v, (s, z)| step(s, z, v))
}

fn same_bits(a: &State, b: &State) -> bool {
    a.iter()
        .zip(b)
        .all(|(p, q)| p.0.to_bits() == q.0.to_bits() && p.1.to_bits() == q.1.to_bits())
}

/// The band-pass of a stream of `len` samples, given one sample at a
/// time, handing on its output in order.
pub(super) struct StreamBand {
    sections: Vec<Biquad<f64>>,
    forward: State,
    /// Forward outputs from `next` on.
    ahead: Tail,
    /// First sample whose band value is still to come.
    next: usize,
    len: usize,
    block: usize,
    margin: usize,
    /// The backward state the last block's run had at `next`.
    boundary: Option<State>,
    scratch: Vec<f64>,
}

impl StreamBand {
    /// For `len` samples at `fs` Hz (an accepted rate), output in blocks
    /// of `block` samples, each run backward from `margin` samples on.
    pub(super) fn new(fs: f64, len: usize, block: usize, margin: usize) -> Self {
        let sections = sections(fs);
        Self {
            forward: vec![(0.0, 0.0); sections.len()],
            sections,
            // A block and its look-ahead, and the sample that completes them.
            ahead: Tail::with_capacity(block.max(1) + margin + 1),
            next: 0,
            len,
            block: block.max(1),
            margin,
            boundary: None,
            scratch: Vec::new(),
        }
    }

    /// Take the next sample; hand every band value now known to `out`.
    pub(super) fn push(&mut self, x: f64, out: &mut impl FnMut(f64)) -> Result<(), Unsettled> {
        let y = cascade(&self.sections, &mut self.forward, x);
        self.ahead.push(y);
        while self.next < self.len {
            let b = (self.next + self.block).min(self.len);
            let e = (b + self.margin).min(self.len);
            if self.ahead.end() < e {
                break;
            }
            self.run_block(b, e)?;
            self.scratch.iter().rev().for_each(|&v| out(v));
            self.ahead.keep_from(b);
            self.next = b;
        }
        Ok(())
    }

    /// Backward from `e` to `self.next`; the outputs of `next..b` into
    /// `scratch`, last first.
    fn run_block(&mut self, b: usize, e: usize) -> Result<(), Unsettled> {
        let mut z: State = vec![(0.0, 0.0); self.sections.len()];
        self.scratch.clear();
        let mut at_b = None;
        for i in (self.next..e).rev() {
            let v = cascade(&self.sections, &mut z, self.ahead.at(i));
            if i >= b {
                if i == b {
                    at_b = Some(z.clone());
                }
                continue;
            }
            self.scratch.push(v);
            if i == self.next {
                if let Some(before) = &self.boundary {
                    if !same_bits(before, &z) {
                        return Err(Unsettled);
                    }
                }
            }
        }
        self.boundary = at_b;
        Ok(())
    }
}
