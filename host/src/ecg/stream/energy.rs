//! The stages after the band-pass over a stream, with the same bits as
//! [`crate::ecg::stages`]: the centred derivative (edges clamped), its
//! square, the centred moving average from the same running sum, the
//! local maxima and the candidates of Pan and Tompkins' rules (J. Pan,
//! W. J. Tompkins, IEEE Trans. Biomed. Eng. 32(3):230-236, 1985), fed to
//! the very rules the whole-array detector uses.

use super::tail::Tail;
use crate::ecg::decisions::{learning_len, refractory, steepest, Candidate, Decisions};
use crate::ecg::pan_tompkins::stage_widths;
use std::collections::VecDeque;

/// Band values in, QRS sample indices out.
pub(super) struct StreamEnergy {
    fs: f64,
    len: usize,
    step: usize,
    half: usize,
    refractory: usize,
    band: Tail,
    slope: Tail,
    /// Running sums of the squared slope: `prefix[j]` = sum of the first `j`.
    prefix: Tail,
    /// Next energy index to compute.
    next: usize,
    last_energy: f64,
    /// A local maximum still open: the first sample of a rising flat top.
    open: Option<Candidate>,
    /// Local maxima within the refractory period of the oldest undecided one.
    maxima: VecDeque<Candidate>,
    undecided: usize,
    learn: Vec<f64>,
    learn_len: usize,
    /// Candidates waiting for the learning period to end.
    waiting: Vec<Candidate>,
    rules: Option<Decisions>,
}

impl StreamEnergy {
    /// For a band-passed signal of `len` samples at `fs` Hz.
    pub(super) fn new(fs: f64, len: usize) -> Self {
        let (step, width) = stage_widths(fs);
        let mut prefix = Tail::default();
        prefix.push(0.0);
        Self {
            fs,
            len,
            step,
            half: width / 2,
            refractory: refractory(fs),
            band: Tail::default(),
            slope: Tail::default(),
            prefix,
            next: 0,
            last_energy: 0.0,
            open: None,
            maxima: VecDeque::new(),
            undecided: 0,
            learn: Vec::new(),
            learn_len: learning_len(fs, len),
            waiting: Vec::new(),
            rules: (len == 0).then(|| Decisions::new(&[], fs)),
        }
    }

    /// The next band value.
    pub(super) fn push(&mut self, v: f64) {
        self.band.push(v);
        let k2 = 2 * self.step;
        // Slope `d` needs the band up to `d + 2 step` (clamped at the end).
        while self.slope.end() < self.band.end()
            && self.band.end() > (self.slope.end() + k2).min(self.len - 1)
        {
            let d = self.slope.end();
            self.push_slope(d);
            self.band.keep_from((d + 1).saturating_sub(k2));
        }
    }

    fn push_slope(&mut self, d: usize) {
        let at = |i: isize| self.band.at(i.clamp(0, self.len as isize - 1) as usize);
        let (i, k) = (d as isize, self.step as isize);
        let s = (2.0 * at(i + 2 * k) + at(i + k) - at(i - k) - 2.0 * at(i - 2 * k)) / 8.0;
        self.slope.push(s);
        let sum = self.prefix.last().unwrap_or(0.0) + s * s;
        self.prefix.push(sum);
        // Energy `g` needs the sums up to `g + half + 1` (clamped).
        while self.next < self.len && self.prefix.end() > (self.next + self.half + 1).min(self.len)
        {
            self.push_energy();
        }
    }

    fn push_energy(&mut self) {
        let g = self.next;
        let lo = g.saturating_sub(self.half);
        let hi = (g + self.half + 1).min(self.len);
        let e = (self.prefix.at(hi) - self.prefix.at(lo)) / (hi - lo) as f64;
        self.next += 1;
        self.prefix.keep_from(self.next.saturating_sub(self.half));
        if self.learn.len() < self.learn_len {
            self.learn.push(e);
            if self.learn.len() == self.learn_len {
                self.start_rules();
            }
        }
        self.maximum_step(g, e);
        self.last_energy = e;
        self.slope.keep_from((g + 1).saturating_sub(self.half));
    }

    /// [`crate::ecg::stages::local_maxima`] one sample at a time.
    fn maximum_step(&mut self, g: usize, e: f64) {
        if let Some(open) = self.open {
            if e == open.v {
                return;
            }
            if e < open.v {
                self.push_maximum(open);
            }
            self.open = None;
        }
        if g >= 1 && e > self.last_energy {
            let window = g.saturating_sub(self.half)..(g + self.half + 1).min(self.len);
            let steep = steepest(window.map(|i| self.slope.at(i)));
            self.open = Some(Candidate { p: g, v: e, steep });
        }
    }

    fn push_maximum(&mut self, m: Candidate) {
        self.maxima.push_back(m);
        while self.undecided < self.maxima.len()
            && m.p - self.maxima[self.undecided].p > self.refractory
        {
            self.decide();
        }
    }

    /// Whether the oldest undecided maximum is a candidate (every maximum
    /// within the refractory period either side is below it), then the
    /// maxima too far back to matter forgotten.
    fn decide(&mut self) {
        let k = self.undecided;
        let c = self.maxima[k];
        let r = self.refractory;
        let before = self.maxima.range(..k).rev().take_while(|q| c.p - q.p <= r);
        let after = self.maxima.range(k + 1..).take_while(|q| q.p - c.p <= r);
        let largest = before
            .chain(after)
            .all(|q| q.v < c.v || (q.v == c.v && q.p > c.p));
        if largest {
            match &mut self.rules {
                Some(rules) => rules.push(c),
                None => self.waiting.push(c),
            }
        }
        self.undecided += 1;
        while self.undecided < self.maxima.len()
            && self.maxima[0].p + r < self.maxima[self.undecided].p
        {
            self.maxima.pop_front();
            self.undecided -= 1;
        }
    }

    fn start_rules(&mut self) {
        let mut rules = Decisions::new(&self.learn, self.fs);
        for c in self.waiting.drain(..) {
            rules.push(c);
        }
        self.rules = Some(rules);
    }

    /// The QRS sample indices, ascending, once every band value is in.
    pub(super) fn finish(mut self) -> Vec<usize> {
        debug_assert_eq!(self.next, self.len, "every energy computed");
        while self.undecided < self.maxima.len() {
            self.decide();
        }
        if self.rules.is_none() {
            self.start_rules();
        }
        let len = self.len;
        self.rules.take().map(|r| r.finish(len)).unwrap_or_default()
    }
}
