//! The signal excerpt's two traces (the input and the band-passed input),
//! thinned while the recording streams past, so a report of a long record
//! never holds its samples: what is kept is one column's extremes per
//! screen column ([`Thinner`]), each beat's value within the excerpt, and
//! the band-pass's state.

use super::band::{BandPass, BAND_ORDER};
use super::excerpt::Excerpt;
use super::thin::{Segment, Thinner};
use crate::plot::theme::WIDTH;
use plethwire_dsp::filter::{Cascade, Delta};
use plethwire_dsp::pipeline::BeatEvent;
use std::collections::BTreeMap;

/// Screen columns of the excerpt's plot area (the figure less its axis
/// labels).
pub const TRACE_COLUMNS: usize = WIDTH as usize - 90;

/// The excerpt's traces, ready to draw.
#[derive(Debug, Clone, PartialEq)]
pub struct ExcerptTraces {
    /// The stretch they show.
    pub excerpt: Excerpt,
    /// Samples in the whole recording.
    pub samples: u64,
    /// The input, thinned.
    pub raw: Vec<Segment>,
    /// The band-passed input, thinned.
    pub banded: Vec<Segment>,
    /// Finite values of the input and of the band-passed input at the
    /// beats' peaks within the excerpt.
    pub(super) raw_at: BTreeMap<u64, f64>,
    pub(super) banded_at: BTreeMap<u64, f64>,
}

impl ExcerptTraces {
    /// The traces of `samples` (a whole recording at `fs`) over `excerpt`.
    pub fn of_samples(
        samples: &[f64],
        fs: f64,
        excerpt: Excerpt,
        band: &BandPass,
        beats: &[BeatEvent],
    ) -> ExcerptTraces {
        let mut b = TraceBuilder::new(fs, samples.len() as u64, excerpt, band, beats);
        b.push(samples);
        b.finish()
    }
}

/// Makes [`ExcerptTraces`] from a recording fed a block at a time.
#[derive(Debug, Clone)]
pub struct TraceBuilder {
    excerpt: Excerpt,
    samples: u64,
    to: usize,
    /// Next sample's index.
    at: usize,
    raw: Thinner,
    banded: Thinner,
    /// Beat peaks within the excerpt, sorted, and the next one to meet.
    peaks: Vec<u64>,
    next_peak: usize,
    raw_at: BTreeMap<u64, f64>,
    banded_at: BTreeMap<u64, f64>,
    /// The band-pass, once settled on the recording's first finite sample;
    /// until then the count of samples before it.
    cascade: Cascade<Delta, BAND_ORDER>,
    last: Option<f32>,
    waiting: usize,
}

impl TraceBuilder {
    /// A builder for a recording of `samples` samples at `fs`, showing
    /// `excerpt` with `beats` marked, band-passed by `band`.
    pub fn new(
        fs: f64,
        samples: u64,
        excerpt: Excerpt,
        band: &BandPass,
        beats: &[BeatEvent],
    ) -> TraceBuilder {
        let (from, to) = excerpt.samples(fs, samples as usize);
        let mut peaks: Vec<u64> = beats
            .iter()
            .map(|b| b.peak_index)
            .filter(|&p| (from as u64..to as u64).contains(&p))
            .collect();
        peaks.sort_unstable();
        peaks.dedup();
        TraceBuilder {
            excerpt,
            samples,
            to,
            at: 0,
            raw: Thinner::new(fs, from, to, TRACE_COLUMNS),
            banded: Thinner::new(fs, from, to, TRACE_COLUMNS),
            peaks,
            next_peak: 0,
            raw_at: BTreeMap::new(),
            banded_at: BTreeMap::new(),
            cascade: band.cascade(),
            last: None,
            waiting: 0,
        }
    }

    /// Whether more samples would change anything: the excerpt is not
    /// passed yet, or the band-pass still waits for a finite sample.
    pub fn wants_more(&self) -> bool {
        self.at < self.to || self.last.is_none()
    }

    /// The next samples of the recording.
    pub fn push(&mut self, block: &[f64]) {
        for &v in block {
            let i = self.at;
            self.at += 1;
            self.raw.push(i, v);
            let beat = self.peaks.get(self.next_peak) == Some(&(i as u64));
            if beat {
                self.next_peak += 1;
                if v.is_finite() {
                    self.raw_at.insert(i as u64, v);
                }
            }
            if self.last.is_none() {
                if !v.is_finite() {
                    self.waiting += 1;
                    continue;
                }
                // Settled on the first finite sample, as BandPass::run does;
                // the samples before it read as that one.
                let first = v as f32;
                self.cascade.settle(first);
                self.last = Some(first);
                for k in i - self.waiting..i {
                    let beat = self.peaks.binary_search(&(k as u64)).is_ok();
                    self.band_pass(k, first, beat);
                }
            }
            self.band_pass(i, v as f32, beat);
        }
    }

    /// Sample `i`, `x`, through the band-pass (a missing sample read as the
    /// last good one), into the banded trace; kept when it is a beat's.
    fn band_pass(&mut self, i: usize, x: f32, beat: bool) {
        if i >= self.to {
            return;
        }
        if x.is_finite() {
            self.last = Some(x);
        }
        let y = f64::from(self.cascade.process(self.last.unwrap_or(x)));
        self.banded.push(i, y);
        if beat && y.is_finite() {
            self.banded_at.insert(i as u64, y);
        }
    }

    /// The traces.
    pub fn finish(mut self) -> ExcerptTraces {
        if self.last.is_none() {
            // Not one finite sample: the band-pass rests at 0, as in
            // BandPass::run.
            self.cascade.settle(0.0);
            self.last = Some(0.0);
            for k in 0..self.waiting {
                let beat = self.peaks.binary_search(&(k as u64)).is_ok();
                self.band_pass(k, f32::NAN, beat);
            }
        }
        ExcerptTraces {
            excerpt: self.excerpt,
            samples: self.samples,
            raw: self.raw.finish(),
            banded: self.banded.finish(),
            raw_at: self.raw_at,
            banded_at: self.banded_at,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::report::thin::trace;
    use plethwire_dsp::pipeline::{BeatFlags, Config};

    fn beat(peak: u64) -> BeatEvent {
        BeatEvent {
            peak_index: peak,
            onset_index: None,
            emitted_at: peak + 40,
            ibi_ms: None,
            hr_bpm: None,
            hr_smoothed_bpm: None,
            amplitude: 1.0,
            quality: 1.0,
            flags: BeatFlags(0),
        }
    }

    /// What the excerpt plot drew before it streamed: the whole samples
    /// and the band-passed ones up to the excerpt's end, thinned at once.
    fn in_one_go(
        s: &[f64],
        fs: f64,
        e: Excerpt,
        band: &BandPass,
        beats: &[BeatEvent],
    ) -> ExcerptTraces {
        let (from, to) = e.samples(fs, s.len());
        let banded = band.run(s, to);
        let at = |values: &[f64]| -> BTreeMap<u64, f64> {
            beats
                .iter()
                .filter(|b| (from as u64..to as u64).contains(&b.peak_index))
                .filter_map(|b| {
                    let v = values.get(b.peak_index as usize).copied()?;
                    v.is_finite().then_some((b.peak_index, v))
                })
                .collect()
        };
        ExcerptTraces {
            excerpt: e,
            samples: s.len() as u64,
            raw: trace(s, fs, from, to, TRACE_COLUMNS),
            banded: trace(&banded, fs, from, to, TRACE_COLUMNS),
            raw_at: at(s),
            banded_at: at(&banded),
        }
    }

    #[test]
    fn traces_made_a_block_at_a_time_equal_those_made_at_once() {
        let fs = 100.0;
        let band = BandPass::new(&Config::new(fs as f32)).unwrap();
        let wave = |i: usize| 1000.0 + (i as f64 * 0.07).sin() * 30.0 + (i % 13) as f64;
        let n = 20_000;
        let plain: Vec<f64> = (0..n).map(wave).collect();
        let mut gappy = plain.clone();
        gappy[..250].fill(f64::NAN); // before the first finite sample
        gappy[9_000..9_040].fill(f64::NAN);
        let none = vec![f64::NAN; 3_000];
        let beats: Vec<BeatEvent> = [5, 120, 4_000, 9_010, 9_500, 9_700, 15_000, 19_990]
            .iter()
            .map(|&p| beat(p))
            .collect();
        let excerpts = [
            (0.0, 20.0),
            (85.0, 20.0),
            (0.0, 200.0),
            (199.0, 30.0),
            (1.0, 0.5),
        ];
        for s in [&plain, &gappy, &none] {
            for (start_s, length_s) in excerpts {
                let e = Excerpt { start_s, length_s };
                let want = in_one_go(s, fs, e, &band, &beats);
                assert_eq!(ExcerptTraces::of_samples(s, fs, e, &band, &beats), want);
                for block in [1, 7, 250, 4096] {
                    let mut b = TraceBuilder::new(fs, s.len() as u64, e, &band, &beats);
                    for chunk in s.chunks(block) {
                        if !b.wants_more() {
                            break;
                        }
                        b.push(chunk);
                    }
                    assert_eq!(
                        b.finish(),
                        want,
                        "{start_s}:{length_s} in blocks of {block}"
                    );
                }
            }
        }
    }
}
