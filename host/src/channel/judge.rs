//! One channel's figures computed as its samples come, a block at a time,
//! so a choice among the signals of a long recording never holds one
//! whole: the missing-sample hold, the clipped share, both filters and
//! the power sums run sample by sample in the order the whole-signal
//! computation takes them (the same bits), and of the band-passed
//! signal only the last autocorrelation window is kept, with one peak
//! per window (one number every [`HOP_S`] seconds).

use std::collections::VecDeque;

use plethwire_dsp::design::{butterworth_bandpass, butterworth_highpass, Design};
use plethwire_dsp::filter::Biquad;

use super::{autocorrelation_peak, ChannelFigure, ANALYSIS_MAX_HZ, BAND_HZ, HOP_S};
use super::{RATE_RANGE_BPM, SETTLE_S, WINDOW_S};

/// A channel being judged: [`Judge::push`] its samples in order, then
/// [`Judge::finish`] gives what [`super::judge`] gives for them all.
#[derive(Debug, Clone)]
pub struct Judge {
    name: String,
    /// Leading non-finite samples, waiting for the first finite value.
    leading: u64,
    /// The last value held (`None` before the first finite sample).
    held: Option<f64>,
    clip: Clip,
    /// `None` when the heart band cannot be designed at the rate.
    bands: Option<Bands>,
}

/// Flat runs at the extremes, counted as they come: each sample is
/// judged when the next one is known; a sample equal to a new extreme
/// starts its count again.
#[derive(Debug, Clone, Default)]
struct Clip {
    judged: u64,
    before: Option<f64>,
    pending: Option<f64>,
    lo: f64,
    hi: f64,
    /// Flat samples equal to `lo`, to `hi`.
    at_lo: u64,
    at_hi: u64,
}

impl Clip {
    fn push(&mut self, x: f64) {
        if let Some(b) = self.pending {
            self.judge(b, self.before == Some(b) || x == b);
        }
        self.before = self.pending;
        self.pending = Some(x);
    }

    fn judge(&mut self, b: f64, flat: bool) {
        if self.judged == 0 || b < self.lo {
            (self.lo, self.at_lo) = (b, 0);
        }
        if self.judged == 0 || b > self.hi {
            (self.hi, self.at_hi) = (b, 0);
        }
        if flat {
            self.at_lo += u64::from(b == self.lo);
            self.at_hi += u64::from(b == self.hi);
        }
        self.judged += 1;
    }

    /// Share of samples in flat runs at the lowest or highest value.
    fn share(mut self) -> f64 {
        let Some(b) = self.pending else {
            return 0.0;
        };
        // The last sample has no next one.
        self.judge(b, self.before == Some(b));
        let n = if self.lo == self.hi {
            self.at_lo // a constant channel: every flat sample once
        } else {
            self.at_lo + self.at_hi
        };
        n as f64 / self.judged as f64
    }
}

/// One filter of the judge: sections run in turn on each sample
/// (transposed direct form II, f64), from rest on the first value taken
/// away.
#[derive(Debug, Clone)]
struct Cascade {
    sections: Vec<(Biquad<f64>, f64, f64)>,
}

impl Cascade {
    fn new(design: &Design) -> Cascade {
        let sections = design.sections().iter().map(|s| (*s, 0.0, 0.0)).collect();
        Cascade { sections }
    }

    #[inline]
    fn step(&mut self, mut v: f64) -> f64 {
        for (s, z1, z2) in &mut self.sections {
            let Biquad { b0, b1, b2, a1, a2 } = *s;
            let out = b0 * v + *z1;
            *z1 = b1 * v - a1 * out + *z2;
            *z2 = b2 * v - a2 * out;
            v = out;
        }
        v
    }
}

/// The heart band's figures, as the samples come.
#[derive(Debug, Clone)]
struct Bands {
    band: Cascade,
    high: Cascade,
    first: Option<f64>,
    /// Samples filtered; those before `settle` are left out.
    n: usize,
    settle: usize,
    band_power: f64,
    above_power: f64,
    /// Every `step`-th band-passed sample after the settling is analysed,
    /// at `analysis_hz`.
    step: usize,
    analysis_hz: f64,
    window: usize,
    hop: usize,
    lags: (usize, usize),
    /// Analysed samples from the start of the next window on (all of
    /// them while there has been no window), and their count so far.
    kept: VecDeque<f64>,
    analysed: usize,
    next_start: usize,
    peaks: Vec<(f64, usize)>,
}

impl Bands {
    fn new(fs: f64) -> Option<Bands> {
        let band = butterworth_bandpass(2, BAND_HZ.0, BAND_HZ.1, fs).ok()?;
        let high = butterworth_highpass(2, BAND_HZ.0, fs).ok()?;
        let step = (fs / ANALYSIS_MAX_HZ).ceil().max(1.0) as usize;
        let ha = fs / step as f64;
        let window = (WINDOW_S * ha) as usize;
        Some(Bands {
            band: Cascade::new(&band),
            high: Cascade::new(&high),
            first: None,
            n: 0,
            settle: (SETTLE_S * fs) as usize,
            band_power: 0.0,
            above_power: 0.0,
            step,
            analysis_hz: ha,
            window,
            hop: ((HOP_S * ha) as usize).max(1),
            lags: (
                ((60.0 / RATE_RANGE_BPM.1) * ha).floor().max(1.0) as usize,
                ((60.0 / RATE_RANGE_BPM.0) * ha).ceil() as usize,
            ),
            kept: VecDeque::with_capacity(window + 1),
            analysed: 0,
            next_start: 0,
            peaks: Vec::new(),
        })
    }

    fn push(&mut self, x: f64) {
        let x0 = *self.first.get_or_insert(x);
        let (b, h) = (self.band.step(x - x0), self.high.step(x - x0));
        let i = self.n;
        self.n += 1;
        if i < self.settle {
            return;
        }
        self.band_power += b * b;
        self.above_power += h * h;
        if (i - self.settle) % self.step != 0 {
            return;
        }
        // `kept` holds the analysed samples from `next_start` on.
        if self.analysed >= self.next_start {
            self.kept.push_back(b);
        }
        self.analysed += 1;
        if self.kept.len() == self.window {
            let (lo, hi) = self.lags;
            let w = self.kept.make_contiguous();
            self.peaks.push(autocorrelation_peak(w, lo, hi));
            self.next_start += self.hop;
            self.kept.drain(..self.hop.min(self.window));
        }
    }

    /// (periodicity, rate at the peak, heart-band share), `None` when
    /// the recording was too short.
    fn finish(mut self) -> Option<(f64, Option<f64>, f64)> {
        if self.n <= self.settle {
            return None;
        }
        let share = if self.above_power > 0.0 {
            (self.band_power / self.above_power).min(1.0)
        } else {
            0.0
        };
        if self.peaks.is_empty() {
            // Shorter than one window: the whole of it.
            let (lo, hi) = self.lags;
            let all = self.kept.make_contiguous();
            self.peaks.push(autocorrelation_peak(all, lo, hi));
        }
        self.peaks.sort_by(|a, b| a.0.total_cmp(&b.0));
        let (r, lag) = self.peaks[self.peaks.len() / 2];
        let rate = (lag > 0).then(|| 60.0 * self.analysis_hz / lag as f64);
        Some((r.max(0.0), rate, share))
    }
}

impl Judge {
    /// A judge of the channel `name` sampled at `fs` Hz.
    pub fn new(name: &str, fs: f64) -> Judge {
        Judge {
            name: name.to_string(),
            leading: 0,
            held: None,
            clip: Clip::default(),
            bands: Bands::new(fs),
        }
    }

    /// The next samples, in order; a missing one (NaN) is held at the
    /// last good value (the first good one for a leading run).
    pub fn push(&mut self, samples: &[f64]) {
        for &v in samples {
            if v.is_finite() {
                if self.held.is_none() {
                    // The leading run takes the first finite value.
                    for _ in 0..std::mem::take(&mut self.leading) {
                        self.take(v);
                    }
                }
                self.held = Some(v);
            }
            match self.held {
                Some(h) => self.take(h),
                None => self.leading += 1,
            }
        }
    }

    fn take(&mut self, x: f64) {
        self.clip.push(x);
        if let Some(b) = &mut self.bands {
            b.push(x);
        }
    }

    /// The channel's figures.
    pub fn finish(mut self) -> ChannelFigure {
        // No finite sample at all: zeros.
        for _ in 0..std::mem::take(&mut self.leading) {
            self.take(0.0);
        }
        let clipped_share = self.clip.share();
        let (periodicity, peak_rate_bpm, heart_band_share) = self
            .bands
            .and_then(Bands::finish)
            .unwrap_or((0.0, None, 0.0));
        ChannelFigure {
            name: self.name,
            figure: periodicity * heart_band_share * (1.0 - clipped_share),
            periodicity,
            peak_rate_bpm,
            heart_band_share,
            clipped_share,
        }
    }
}
