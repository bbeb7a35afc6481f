//! R peaks of an ECG by the method of J. Pan and W. J. Tompkins, "A
//! real-time QRS detection algorithm", IEEE Trans. Biomed. Eng.
//! 32(3):230-236, 1985, run offline on a whole recording.
//!
//! Stages ([`super::stages`]): 5-15 Hz band-pass (zero phase here), the
//! paper's five-point derivative, squaring, 150 ms moving-window
//! integration. Decisions on the peaks of the integrated signal, as in the
//! paper: SPKI/NPKI running levels (1/8 of each new peak), THR1 = NPKI +
//! ¼(SPKI − NPKI), THR2 = ½THR1; a 200 ms refractory period; a peak within
//! 360 ms of the last QRS whose steepest slope is under half that QRS's is
//! a T wave; when no QRS came within 166 % of the RR average (the average
//! of the last eight intervals within 92-116 % of it), the largest skipped
//! peak above THR2 since the last QRS is taken (search-back, SPKI updated
//! with ¼ of it). The R peak is then placed on the ECG itself: the largest
//! deviation from the local median within ±100 ms, either sign.

use super::stages::{band_passed, derivative, integrated, local_maxima, sanitised, INTEGRATION_S};
use super::{check_rate, EcgError};

/// Refractory period after a QRS, seconds (Pan and Tompkins 1985).
const REFRACTORY_S: f64 = 0.200;
/// A peak this soon after a QRS is checked for a T wave, seconds (paper).
const T_WAVE_S: f64 = 0.360;
/// Search-back limit, share of the RR average (paper: RR MISSED LIMIT).
const MISSED_SHARE: f64 = 1.66;
/// Limits of a regular interval, shares of the RR average (paper).
const REGULAR_SHARE: (f64, f64) = (0.92, 1.16);
/// Training period for the first levels, seconds (paper: 2 s).
const LEARNING_S: f64 = 2.0;
/// Half-width of the window the R peak is placed in, seconds.
const PLACE_HALF_S: f64 = 0.100;
/// Half-width of the window whose median is the local baseline, seconds.
const BASELINE_HALF_S: f64 = 0.250;

/// Sample indices of the R peaks of `ecg` (any polarity) sampled at `fs`
/// Hz (100 to 1000), ascending. Non-finite samples are held at the last
/// finite value; a flat signal has no R peaks.
pub fn r_peaks(ecg: &[f64], fs: f64) -> Result<Vec<u64>, EcgError> {
    check_rate(fs)?;
    let x = sanitised(ecg);
    let band = band_passed(&x, fs);
    // The paper's derivative taps are 5 ms apart (200 Hz).
    let slope = derivative(&band, ((fs / 200.0).round() as usize).max(1));
    let squared: Vec<f64> = slope.iter().map(|d| d * d).collect();
    let width = ((INTEGRATION_S * fs).round() as usize) | 1;
    let energy = integrated(&squared, width);
    let qrs = Decisions::new(&energy, &slope, fs, width / 2).run();
    Ok(place(&x, &qrs, fs))
}

/// The paper's decision rules over the peaks of the integrated signal.
struct Decisions<'a> {
    energy: &'a [f64],
    slope: &'a [f64],
    fs: f64,
    half: usize,
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
    skipped: Vec<(usize, f64)>,
    found: Vec<usize>,
}

impl<'a> Decisions<'a> {
    fn new(energy: &'a [f64], slope: &'a [f64], fs: f64, half: usize) -> Self {
        let learn = &energy[..energy.len().min((LEARNING_S * fs) as usize)];
        let max = learn.iter().copied().fold(0.0, f64::max);
        let mean = learn.iter().sum::<f64>() / learn.len().max(1) as f64;
        Self {
            energy,
            slope,
            fs,
            half,
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

    fn run(mut self) -> Vec<usize> {
        let refractory = (REFRACTORY_S * self.fs).round() as usize;
        for p in self.candidates(refractory) {
            self.search_back(p, refractory);
            let v = self.energy[p];
            let since = p - self.last;
            if !self.found.is_empty() && since <= refractory {
                continue;
            }
            if v > self.thr1() {
                let s = self.steepest(p);
                let t_wave = !self.found.is_empty()
                    && (since as f64) < T_WAVE_S * self.fs
                    && s < 0.5 * self.last_slope;
                if t_wave {
                    self.npki = 0.125 * v + 0.875 * self.npki;
                } else {
                    self.spki = 0.125 * v + 0.875 * self.spki;
                    self.accept(p);
                }
            } else {
                self.npki = 0.125 * v + 0.875 * self.npki;
                self.skipped.push((p, v));
            }
        }
        self.search_back(self.energy.len(), refractory);
        self.found
    }

    /// Local maxima of the integrated signal that are the largest within
    /// the refractory period either side (one peak per complex).
    fn candidates(&self, refractory: usize) -> Vec<usize> {
        let maxima = local_maxima(self.energy);
        let e = self.energy;
        maxima
            .iter()
            .enumerate()
            .filter(|&(k, &p)| {
                let before = maxima[..k]
                    .iter()
                    .rev()
                    .take_while(|&&q| p - q <= refractory);
                let after = maxima[k + 1..].iter().take_while(|&&q| q - p <= refractory);
                before
                    .chain(after)
                    .all(|&q| e[q] < e[p] || (e[q] == e[p] && q > p))
            })
            .map(|(_, &p)| p)
            .collect()
    }

    /// Steepest derivative within the integration window around `p`.
    fn steepest(&self, p: usize) -> f64 {
        let lo = p.saturating_sub(self.half);
        let hi = (p + self.half + 1).min(self.slope.len());
        self.slope[lo..hi].iter().fold(0.0, |m, d| m.max(d.abs()))
    }

    fn accept(&mut self, p: usize) {
        if !self.found.is_empty() {
            let rr = (p - self.last) as f64;
            let average = mean(&self.regular_rr).or(mean(&self.recent_rr));
            push_last8(&mut self.recent_rr, rr);
            let regular =
                average.is_none_or(|a| rr >= REGULAR_SHARE.0 * a && rr <= REGULAR_SHARE.1 * a);
            if regular {
                push_last8(&mut self.regular_rr, rr);
            }
        }
        self.last_slope = self.steepest(p);
        self.last = p;
        self.timer = p;
        self.found.push(p);
        self.skipped.retain(|&(q, _)| q > p);
    }

    /// While no QRS came within the search-back limit before `now`, take
    /// the largest skipped peak above THR2. When there is none the signal
    /// level has dropped (or the start levels were high): SPKI is halved,
    /// our addition to the paper, so detection recovers.
    fn search_back(&mut self, now: usize, refractory: usize) {
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
                self.last + refractory
            };
            let best = self
                .skipped
                .iter()
                .filter(|&&(q, v)| q > floor && q < now && v > thr2)
                .max_by(|a, b| a.1.total_cmp(&b.1))
                .copied();
            match best {
                Some((q, v)) => {
                    self.spki = 0.25 * v + 0.75 * self.spki;
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

/// Move each detection to the largest deviation of the ECG from its local
/// median within ±[`PLACE_HALF_S`]; of two landing within the refractory
/// period, the larger deviation stays.
fn place(x: &[f64], qrs: &[usize], fs: f64) -> Vec<u64> {
    let half = (PLACE_HALF_S * fs).round() as usize;
    let base_half = (BASELINE_HALF_S * fs).round() as usize;
    let refractory = (REFRACTORY_S * fs).round() as u64;
    let mut out: Vec<(u64, f64)> = Vec::new();
    for &p in qrs {
        let window = |h: usize| p.saturating_sub(h)..(p + h + 1).min(x.len());
        let mut around: Vec<f64> = x[window(base_half)].to_vec();
        around.sort_unstable_by(f64::total_cmp);
        let baseline = around[around.len() / 2];
        let Some((r, dev)) = window(half)
            .map(|i| (i as u64, (x[i] - baseline).abs()))
            .max_by(|a, b| a.1.total_cmp(&b.1))
        else {
            continue;
        };
        match out.last_mut() {
            Some(last) if r <= last.0 + refractory => {
                if dev > last.1 {
                    *last = (r, dev);
                }
            }
            _ => out.push((r, dev)),
        }
    }
    out.into_iter().map(|(r, _)| r).collect()
}

#[cfg(test)]
mod tests {
    use super::super::test_ecg::{ecg_train, TestEcg};
    use super::*;

    fn check(opts: &TestEcg) {
        let (ecg, truth) = ecg_train(opts);
        let found = r_peaks(&ecg, opts.fs).unwrap();
        let tol = (0.010 * opts.fs).ceil() as u64;
        assert_eq!(found.len(), truth.len(), "{opts:?}: {found:?} vs {truth:?}");
        for (f, t) in found.iter().zip(&truth) {
            assert!(f.abs_diff(*t) <= tol, "{opts:?}: {f} vs {t}");
        }
    }

    #[test]
    fn finds_every_r_peak_at_any_rate_and_polarity() {
        for fs in [100.0, 125.0, 250.0, 360.0, 500.0, 1000.0] {
            for inverted in [false, true] {
                check(&TestEcg {
                    fs,
                    inverted,
                    ..TestEcg::default()
                });
            }
        }
    }

    #[test]
    fn fast_slow_and_tall_t_waves() {
        check(&TestEcg {
            bpm: 170.0,
            ..TestEcg::default()
        });
        check(&TestEcg {
            bpm: 40.0,
            ..TestEcg::default()
        });
        // T waves 60 % of the R wave: the slope test keeps them out.
        check(&TestEcg {
            t_wave: 0.6,
            ..TestEcg::default()
        });
    }

    #[test]
    fn search_back_recovers_small_beats() {
        // Every fifth QRS at 0.45 of the height (a fifth of the energy):
        // below THR1 and above THR2 once the
        // levels have learnt the tall ones, found by the search-back.
        check(&TestEcg {
            small_every: 5,
            ..TestEcg::default()
        });
    }

    #[test]
    fn bad_samples_and_rates_do_not_panic() {
        let (mut ecg, truth) = ecg_train(&TestEcg::default());
        for v in &mut ecg[1000..1100] {
            *v = f64::NAN;
        }
        ecg[2000] = f64::INFINITY;
        let found = r_peaks(&ecg, 250.0).unwrap();
        assert!(
            found.len() + 2 >= truth.len(),
            "{} of {}",
            found.len(),
            truth.len()
        );
        assert!(r_peaks(&[f64::NAN; 5000], 250.0).unwrap().is_empty());
        assert!(r_peaks(&[1.5; 5000], 250.0).unwrap().is_empty());
        assert!(r_peaks(&[], 250.0).unwrap().is_empty());
        assert_eq!(r_peaks(&ecg, 50.0), Err(EcgError::UnsupportedRate(50.0)));
        assert!(r_peaks(&ecg, f64::NAN).is_err());
    }
}
