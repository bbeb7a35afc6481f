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

use super::decisions::{learning_len, refractory, steepest, Candidate, Decisions, REFRACTORY_S};
use super::stages::{band_passed, derivative, integrated, local_maxima, sanitised, INTEGRATION_S};
use super::{check_rate, EcgError};

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
    let (step, width) = stage_widths(fs);
    let slope = derivative(&band, step);
    let squared: Vec<f64> = slope.iter().map(|d| d * d).collect();
    let energy = integrated(&squared, width);
    let half = width / 2;
    let mut rules = Decisions::new(&energy[..learning_len(fs, energy.len())], fs);
    for p in candidates(&energy, refractory(fs)) {
        let window = p.saturating_sub(half)..(p + half + 1).min(slope.len());
        rules.push(Candidate {
            p,
            v: energy[p],
            steep: steepest(slope[window].iter().copied()),
        });
    }
    let qrs = rules.finish(energy.len());
    let mut placer = Placer::new(fs);
    for &p in &qrs {
        let w = placer.window(p, x.len());
        placer.add(p, &x[w.clone()], w.start);
    }
    Ok(placer.finish())
}

/// The derivative's tap spacing and the integration window (odd), samples
/// at `fs` Hz. The paper's derivative taps are 5 ms apart (200 Hz).
pub(super) fn stage_widths(fs: f64) -> (usize, usize) {
    let step = ((fs / 200.0).round() as usize).max(1);
    (step, ((INTEGRATION_S * fs).round() as usize) | 1)
}

/// Local maxima of the integrated signal `e` that are the largest within
/// the refractory period either side (one peak per complex).
fn candidates(e: &[f64], refractory: usize) -> Vec<usize> {
    let maxima = local_maxima(e);
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

/// Moves each detection to the largest deviation of the ECG from its local
/// median within ±`PLACE_HALF_S` (100 ms); of two landing within the
/// refractory period, the larger deviation stays.
pub(super) struct Placer {
    half: usize,
    base_half: usize,
    refractory: u64,
    out: Vec<(u64, f64)>,
}

impl Placer {
    pub(super) fn new(fs: f64) -> Self {
        Self {
            half: (PLACE_HALF_S * fs).round() as usize,
            base_half: (BASELINE_HALF_S * fs).round() as usize,
            refractory: (REFRACTORY_S * fs).round() as u64,
            out: Vec::new(),
        }
    }

    /// The samples detection `p` of a signal of `len` samples needs.
    pub(super) fn window(&self, p: usize, len: usize) -> std::ops::Range<usize> {
        p.saturating_sub(self.base_half)..(p + self.base_half + 1).min(len)
    }

    /// Place detection `p` (later than those before) on `around`, the
    /// sanitised ECG over [`Self::window`], which starts at sample `from`.
    pub(super) fn add(&mut self, p: usize, around: &[f64], from: usize) {
        let mut sorted = around.to_vec();
        sorted.sort_unstable_by(f64::total_cmp);
        let baseline = sorted[sorted.len() / 2];
        let near = p.saturating_sub(self.half)..(p + self.half + 1).min(from + around.len());
        let Some((r, dev)) = near
            .map(|i| (i as u64, (around[i - from] - baseline).abs()))
            .max_by(|a, b| a.1.total_cmp(&b.1))
        else {
            return;
        };
        match self.out.last_mut() {
            Some(last) if r <= last.0 + self.refractory => {
                if dev > last.1 {
                    *last = (r, dev);
                }
            }
            _ => self.out.push((r, dev)),
        }
    }

    /// The R peaks, ascending.
    pub(super) fn finish(self) -> Vec<u64> {
        self.out.into_iter().map(|(r, _)| r).collect()
    }
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
