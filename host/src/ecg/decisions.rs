//! The decision rules of J. Pan and W. J. Tompkins, "A real-time QRS
//! detection algorithm", IEEE Trans. Biomed. Eng. 32(3):230-236, 1985,
//! over the candidate peaks of the integrated signal, one at a time, so
//! the whole-array detector ([`super::r_peaks`]) and the streamed one
//! ([`super::stream`]) take the very same decisions.

/// Refractory period after a QRS, seconds (Pan and Tompkins 1985).
pub(super) const REFRACTORY_S: f64 = 0.200;
/// A peak this soon after a QRS is checked for a T wave, seconds (paper).
const T_WAVE_S: f64 = 0.360;
/// Search-back limit, share of the RR average (paper: RR MISSED LIMIT).
const MISSED_SHARE: f64 = 1.66;
/// Limits of a regular interval, shares of the RR average (paper).
const REGULAR_SHARE: (f64, f64) = (0.92, 1.16);
/// Training period for the first levels, seconds (paper: 2 s).
pub(super) const LEARNING_S: f64 = 2.0;

/// The refractory period at `fs` Hz, samples.
pub(super) fn refractory(fs: f64) -> usize {
    (REFRACTORY_S * fs).round() as usize
}

/// Samples of the integrated signal the start levels are learnt from.
pub(super) fn learning_len(fs: f64, len: usize) -> usize {
    len.min((LEARNING_S * fs) as usize)
}

/// A peak of the integrated signal that is the largest within the
/// refractory period either side, with what the rules need of it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct Candidate {
    /// Sample index.
    pub p: usize,
    /// The integrated signal there.
    pub v: f64,
    /// Steepest derivative within the integration window around it.
    pub steep: f64,
}

/// Steepest of `slopes` (the derivative over the integration window).
pub(super) fn steepest(slopes: impl Iterator<Item = f64>) -> f64 {
    slopes.fold(0.0, |m, d| m.max(d.abs()))
}

/// The paper's decision rules, fed the candidates in order.
pub(super) struct Decisions {
    fs: f64,
    refractory: usize,
    spki: f64,
    npki: f64,
    /// Last QRS (the start before the first), its steepest slope.
    last: usize,
    /// Where the search-back interval is counted from: the last QRS, or
    /// the last search-back that found nothing.
    timer: usize,
    last_slope: f64,
    recent_rr: Vec<f64>,
    regular_rr: Vec<f64>,
    /// Peaks below THR1 since the last QRS, for the search-back.
    skipped: Vec<Candidate>,
    found: Vec<usize>,
}

impl Decisions {
    /// Start levels from `learn`, the integrated signal's first
    /// [`LEARNING_S`] (or all of it when shorter).
    pub(super) fn new(learn: &[f64], fs: f64) -> Self {
        let max = learn.iter().copied().fold(0.0, f64::max);
        let mean = learn.iter().sum::<f64>() / learn.len().max(1) as f64;
        Self {
            fs,
            refractory: refractory(fs),
            // Start levels from the learning period (common practice: a
            // quarter of its largest peak, half of its mean).
            spki: 0.25 * max,
            npki: 0.5 * mean,
            last: 0,
            timer: 0,
            last_slope: 0.0,
            recent_rr: Vec::new(),
            regular_rr: Vec::new(),
            skipped: Vec::new(),
            found: Vec::new(),
        }
    }

    fn thr1(&self) -> f64 {
        self.npki + 0.25 * (self.spki - self.npki)
    }

    /// The rules on the next candidate (later than every one before).
    pub(super) fn push(&mut self, c: Candidate) {
        self.search_back(c.p);
        let since = c.p - self.last;
        if !self.found.is_empty() && since <= self.refractory {
            return;
        }
        if c.v > self.thr1() {
            let t_wave = !self.found.is_empty()
                && (since as f64) < T_WAVE_S * self.fs
                && c.steep < 0.5 * self.last_slope;
            if t_wave {
                self.npki = 0.125 * c.v + 0.875 * self.npki;
            } else {
                self.spki = 0.125 * c.v + 0.875 * self.spki;
                self.accept(c);
            }
        } else {
            self.npki = 0.125 * c.v + 0.875 * self.npki;
            self.skipped.push(c);
        }
    }

    /// The QRS sample indices, ascending, once the signal of `len`
    /// samples has ended.
    pub(super) fn finish(mut self, len: usize) -> Vec<usize> {
        self.search_back(len);
        self.found
    }

    fn accept(&mut self, c: Candidate) {
        if !self.found.is_empty() {
            let rr = (c.p - self.last) as f64;
            let average = mean(&self.regular_rr).or(mean(&self.recent_rr));
            push_last8(&mut self.recent_rr, rr);
            let regular =
                average.is_none_or(|a| rr >= REGULAR_SHARE.0 * a && rr <= REGULAR_SHARE.1 * a);
            if regular {
                push_last8(&mut self.regular_rr, rr);
            }
        }
        self.last_slope = c.steep;
        self.last = c.p;
        self.timer = c.p;
        self.found.push(c.p);
        self.skipped.retain(|q| q.p > c.p);
    }

    /// While no QRS came within the search-back limit before `now`, take
    /// the largest skipped peak above THR2. When there is none the signal
    /// level has dropped (or the start levels were high): SPKI is halved,
    /// our addition to the paper, so detection recovers.
    fn search_back(&mut self, now: usize) {
        loop {
            let average = mean(&self.regular_rr)
                .or(mean(&self.recent_rr))
                .unwrap_or(self.fs);
            let limit = (MISSED_SHARE * average) as usize;
            if now <= self.timer + limit {
                return;
            }
            let thr2 = 0.5 * self.thr1();
            let floor = if self.found.is_empty() {
                0
            } else {
                self.last + self.refractory
            };
            let best = self
                .skipped
                .iter()
                .filter(|q| q.p > floor && q.p < now && q.v > thr2)
                .max_by(|a, b| a.v.total_cmp(&b.v))
                .copied();
            match best {
                Some(q) => {
                    self.spki = 0.25 * q.v + 0.75 * self.spki;
                    self.accept(q);
                }
                None => {
                    self.spki *= 0.5;
                    // Wait another interval before trying again.
                    self.timer = now;
                    return;
                }
            }
        }
    }
}

fn mean(v: &[f64]) -> Option<f64> {
    (!v.is_empty()).then(|| v.iter().sum::<f64>() / v.len() as f64)
}

fn push_last8(v: &mut Vec<f64>, x: f64) {
    if v.len() == 8 {
        v.remove(0);
    }
    v.push(x);
}
