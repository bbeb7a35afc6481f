//! Choosing the channel with the clearest pulse among several: the colour
//! channels of a camera, or the LEDs of a sensor with more than one.
//!
//! Each channel is judged on its own samples (after resampling, if any):
//!
//! * **periodicity** `r`: the channel is band-passed to the heart band
//!   (Butterworth 0.5–4 Hz, order 2, run forward once), cut into 8 s
//!   windows (4 s apart, the first 2 s left out while the filter settles),
//!   and in each window the normalised autocorrelation
//!   `Σ x[n]·x[n+k] / Σ x[n]²` is maximised over the lags `k` of 30 to
//!   220 bpm (0.27 to 2 s); `r` is the median over the windows, 0 when it
//!   is negative. A pulse repeats at its beat interval, noise does not.
//!   Windows rather than the whole recording, so that a heart rate that
//!   changes does not smear the peak.
//! * **heart-band share** `h`: of the power the pipeline's 0.5 Hz high-pass
//!   lets through (same high-pass, order 2), the share that is left after
//!   the 4 Hz low-pass as well; 0 to 1. Drift and flicker above the band
//!   pull it down.
//! * **clipped share** `c`: the share of samples at the channel's own
//!   lowest or highest value and next to a sample with the same value (a
//!   flat run at an extreme, as a saturated colour or an empty channel
//!   gives); 0 to 1. A constant channel is all clipped.
//!
//! The figure is `r · h · (1 − c)`, 0 to 1; the highest wins (the first
//! listed on a tie). Missing samples (NaN) are held at the last good
//! value, as the pipeline's input stage does.

use serde::Serialize;

mod judge;
#[cfg(test)]
mod whole;

pub use judge::Judge;

use plethwire_records::LoadedSignal;

/// Heart band of the choice, Hz.
pub const BAND_HZ: (f64, f64) = (0.5, 4.0);
/// Heart rates whose intervals are searched for the autocorrelation peak, bpm.
pub const RATE_RANGE_BPM: (f64, f64) = (30.0, 220.0);
/// Window of the autocorrelation, seconds.
pub const WINDOW_S: f64 = 8.0;
/// Start of one window to the next, seconds.
pub const HOP_S: f64 = 4.0;
/// Left out at the start while the filters settle, seconds.
pub const SETTLE_S: f64 = 2.0;
/// The band-passed channel is taken down to at most this rate (every m-th
/// sample; the 4 Hz low-pass keeps aliasing small) before the
/// autocorrelation, which costs lags × samples.
pub const ANALYSIS_MAX_HZ: f64 = 50.0;

/// One channel's figures.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ChannelFigure {
    /// Channel name.
    pub name: String,
    /// `periodicity · heart_band_share · (1 − clipped_share)`, 0 to 1.
    pub figure: f64,
    /// Median over the windows of the autocorrelation peak, 0 to 1.
    pub periodicity: f64,
    /// The heart rate at the median window's peak lag, bpm.
    pub peak_rate_bpm: Option<f64>,
    /// Share of the above-0.5 Hz power inside the heart band, 0 to 1.
    pub heart_band_share: f64,
    /// Share of samples in flat runs at the channel's extremes, 0 to 1.
    pub clipped_share: f64,
}

/// The outcome of a choice.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ChannelChoice {
    /// Name of the chosen channel.
    pub chosen: String,
    /// Every candidate's figures, in the order given.
    pub candidates: Vec<ChannelFigure>,
}

/// Judge every signal and pick the one with the highest figure; `None`
/// for an empty list.
pub fn choose(signals: &[LoadedSignal]) -> Option<(usize, ChannelChoice)> {
    choose_among(signals.iter().map(judge).collect())
}

/// The candidate with the highest figure (the first listed on a tie) and
/// the choice; `None` for none.
pub fn choose_among(candidates: Vec<ChannelFigure>) -> Option<(usize, ChannelChoice)> {
    let mut best = 0;
    for (i, c) in candidates.iter().enumerate() {
        if c.figure > candidates[best].figure {
            best = i;
        }
    }
    let chosen = candidates.get(best)?.name.clone();
    Some((best, ChannelChoice { chosen, candidates }))
}

/// One signal's figures ([`Judge`] over all its samples).
pub fn judge(signal: &LoadedSignal) -> ChannelFigure {
    let mut j = Judge::new(&signal.name, signal.fs);
    j.push(&signal.samples);
    j.finish()
}

/// The samples with every non-finite value replaced by the last finite
/// one before it (the first finite one for a leading run; zeros when there
/// is none).
pub fn hold_missing(x: &[f64]) -> Vec<f64> {
    let mut last = x.iter().copied().find(|v| v.is_finite()).unwrap_or(0.0);
    x.iter()
        .map(|&v| {
            if v.is_finite() {
                last = v;
            }
            last
        })
        .collect()
}

/// Highest normalised autocorrelation over `min_lag..=max_lag` and its
/// lag: `Σ x[n]·x[n+k] / √(Σ x[n]² · Σ x[n+k]²)`, each sum over the
/// `N − k` overlapping samples, so a perfectly periodic window scores 1
/// whatever its lag (0, 0 when there is no signal).
fn autocorrelation_peak(x: &[f64], min_lag: usize, max_lag: usize) -> (f64, usize) {
    let mut best = (f64::NEG_INFINITY, 0);
    for k in min_lag..=max_lag.min(x.len().saturating_sub(1)) {
        let (a, b) = (&x[..x.len() - k], &x[k..]);
        let ea: f64 = a.iter().map(|v| v * v).sum();
        let eb: f64 = b.iter().map(|v| v * v).sum();
        if ea <= 0.0 || eb <= 0.0 {
            continue;
        }
        let r = a.iter().zip(b).map(|(p, q)| p * q).sum::<f64>() / (ea * eb).sqrt();
        if r > best.0 {
            best = (r, k);
        }
    }
    if best.1 == 0 {
        (0.0, 0)
    } else {
        best
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use plethwire_synth::{generate, HrSchedule, SynthOptions};

    fn signal(name: &str, fs: f64, samples: Vec<f64>) -> LoadedSignal {
        LoadedSignal {
            name: name.into(),
            units: None,
            fs,
            samples,
        }
    }

    #[test]
    fn the_pulse_beats_noise_and_a_clipped_channel() {
        let fs = 30.0;
        let pulse = generate(&SynthOptions {
            sample_rate_hz: fs,
            duration_s: 60.0,
            hr: HrSchedule::constant(72.0),
            ..SynthOptions::default()
        })
        .unwrap()
        .samples
        .iter()
        .map(|&v| f64::from(v))
        .collect::<Vec<f64>>();
        let n = pulse.len();
        // Uniform noise from xorshift64* (seed 7): reproducible, no dependency.
        let mut state = 7u64;
        let noise: Vec<f64> = (0..n)
            .map(|_| {
                state ^= state >> 12;
                state ^= state << 25;
                state ^= state >> 27;
                let bits = state.wrapping_mul(0x2545_f491_4f6c_dd1d);
                (bits % 1_000_000) as f64 / 1e6 - 0.5
            })
            .collect();
        // Saturated: the same pulse (scaled to 0..1) pushed against the
        // top of the range, as a red channel at full scale; only the
        // troughs come below 255.
        let lo = pulse.iter().copied().fold(f64::INFINITY, f64::min);
        let hi = pulse.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        let clipped: Vec<f64> = pulse
            .iter()
            .map(|v| (245.0 + 20.0 * (v - lo) / (hi - lo)).min(255.0))
            .collect();
        let empty = vec![0.0; n];
        let signals = [
            signal("noise", fs, noise),
            signal("clipped", fs, clipped),
            signal("pulse", fs, pulse.iter().map(|v| 100.0 + v).collect()),
            signal("empty", fs, empty),
        ];
        let (i, choice) = choose(&signals).unwrap();
        assert_eq!(choice.chosen, "pulse", "{choice:#?}");
        assert_eq!(i, 2);
        let f = &choice.candidates;
        assert!(f[2].periodicity > 0.8, "{f:#?}");
        assert!((f[2].peak_rate_bpm.unwrap() - 72.0).abs() < 4.0, "{f:#?}");
        assert!(f[0].periodicity < 0.5, "{f:#?}");
        assert!(f[1].clipped_share > 0.3, "{f:#?}");
        assert_eq!(f[3].clipped_share, 1.0);
        assert_eq!(f[3].figure, 0.0);
        assert!(f[2].figure > 4.0 * f[0].figure, "{f:#?}");
        assert!(f[2].figure > f[1].figure + 0.2, "{f:#?}");
    }
}
