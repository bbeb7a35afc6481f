//! The channel figures computed over the whole signal at once, the way
//! they were before [`super::Judge`] took the samples a block at a time:
//! the reference the streaming judge is held to, bit for bit.

use plethwire_dsp::design::{butterworth_bandpass, butterworth_highpass, Design};
use plethwire_dsp::filter::Biquad;
use plethwire_records::LoadedSignal;

use super::*;

/// One signal's figures, from all its samples at once.
pub(super) fn judge_whole(signal: &LoadedSignal) -> ChannelFigure {
    let held = hold_missing(&signal.samples);
    let clipped_share = clipped_share(&held);
    let fs = signal.fs;
    let (periodicity, peak_rate_bpm, heart_band_share) = match band_figures(&held, fs) {
        Some(f) => f,
        None => (0.0, None, 0.0),
    };
    ChannelFigure {
        name: signal.name.clone(),
        figure: periodicity * heart_band_share * (1.0 - clipped_share),
        periodicity,
        peak_rate_bpm,
        heart_band_share,
        clipped_share,
    }
}

/// Share of samples at the lowest or highest value with a neighbour of
/// the same value.
fn clipped_share(x: &[f64]) -> f64 {
    if x.is_empty() {
        return 0.0;
    }
    let lo = x.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = x.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let flat = |i: usize| (i > 0 && x[i - 1] == x[i]) || (i + 1 < x.len() && x[i + 1] == x[i]);
    let n = (0..x.len())
        .filter(|&i| (x[i] == lo || x[i] == hi) && flat(i))
        .count();
    n as f64 / x.len() as f64
}

/// Run `design`'s sections over `x` (transposed direct form II, f64),
/// starting from rest on `x`'s first value taken away.
fn filter(design: &Design, x: &[f64]) -> Vec<f64> {
    let x0 = x.first().copied().unwrap_or(0.0);
    let mut y: Vec<f64> = x.iter().map(|v| v - x0).collect();
    for s in design.sections() {
        let Biquad { b0, b1, b2, a1, a2 } = *s;
        let (mut z1, mut z2) = (0.0, 0.0);
        for v in y.iter_mut() {
            let out = b0 * *v + z1;
            z1 = b1 * *v - a1 * out + z2;
            z2 = b2 * *v - a2 * out;
            *v = out;
        }
    }
    y
}

/// (periodicity, rate at the peak, heart-band share), or `None` when the
/// recording is too short or the rate too low for the band.
fn band_figures(x: &[f64], fs: f64) -> Option<(f64, Option<f64>, f64)> {
    let band = butterworth_bandpass(2, BAND_HZ.0, BAND_HZ.1, fs).ok()?;
    let high = butterworth_highpass(2, BAND_HZ.0, fs).ok()?;
    let settle = (SETTLE_S * fs) as usize;
    if x.len() <= settle {
        return None;
    }
    let banded = filter(&band, x);
    let above = filter(&high, x);
    let power = |v: &[f64]| v[settle..].iter().map(|a| a * a).sum::<f64>();
    let above_power = power(&above);
    let share = if above_power > 0.0 {
        (power(&banded) / above_power).min(1.0)
    } else {
        0.0
    };
    let step = (fs / ANALYSIS_MAX_HZ).ceil().max(1.0) as usize;
    let ha = fs / step as f64;
    let y: Vec<f64> = banded[settle..].iter().step_by(step).copied().collect();
    let window = (WINDOW_S * ha) as usize;
    let hop = ((HOP_S * ha) as usize).max(1);
    let min_lag = ((60.0 / RATE_RANGE_BPM.1) * ha).floor().max(1.0) as usize;
    let max_lag = ((60.0 / RATE_RANGE_BPM.0) * ha).ceil() as usize;
    let mut peaks: Vec<(f64, usize)> = Vec::new();
    let mut start = 0;
    while start + window <= y.len() {
        peaks.push(autocorrelation_peak(
            &y[start..start + window],
            min_lag,
            max_lag,
        ));
        start += hop;
    }
    if peaks.is_empty() {
        // Shorter than one window: the whole of it.
        peaks.push(autocorrelation_peak(&y, min_lag, max_lag));
    }
    peaks.sort_by(|a, b| a.0.total_cmp(&b.0));
    let (r, lag) = peaks[peaks.len() / 2];
    let rate = (lag > 0).then(|| 60.0 * ha / lag as f64);
    Some((r.max(0.0), rate, share))
}

#[cfg(test)]
mod tests {
    use super::*;
    use plethwire_synth::{generate, HrSchedule, SynthOptions};

    /// The figures' bits, so two computations are told apart by any bit.
    fn bits(f: &ChannelFigure) -> Vec<u64> {
        let rate = f.peak_rate_bpm.map_or(u64::MAX, f64::to_bits);
        [f.figure, f.periodicity, f.heart_band_share, f.clipped_share]
            .iter()
            .map(|v| v.to_bits())
            .chain([rate])
            .collect()
    }

    fn pulse(fs: f64, seconds: f64) -> Vec<f64> {
        let s = generate(&SynthOptions {
            sample_rate_hz: fs,
            duration_s: seconds,
            hr: HrSchedule::constant(68.0),
            hr_variability_sd_ms: 30.0,
            ..SynthOptions::default()
        })
        .unwrap();
        s.samples.iter().map(|&v| f64::from(v)).collect()
    }

    #[test]
    fn the_streaming_judge_equals_the_whole_signal_figures_bit_for_bit() {
        let mut cases: Vec<(String, f64, Vec<f64>)> = Vec::new();
        for fs in [12.0, 30.0, 125.0, 300.0, 500.0] {
            for seconds in [0.5, 1.9, 2.5, 9.0, 75.0] {
                cases.push((format!("pulse {fs} Hz {seconds} s"), fs, pulse(fs, seconds)));
            }
            let mut gaps = pulse(fs, 40.0);
            let n = gaps.len();
            for k in (0..n / 10).chain(n / 2..n / 2 + n / 20).chain(n - 3..n) {
                gaps[k] = f64::NAN;
            }
            cases.push((format!("gaps {fs}"), fs, gaps));
            // A pulse against the top of the range (flat runs at the top).
            let clipped = pulse(fs, 40.0).iter().map(|v| (v * 3.0).min(0.5)).collect();
            cases.push((format!("clipped {fs}"), fs, clipped));
        }
        cases.push(("empty".into(), 30.0, Vec::new()));
        cases.push(("one".into(), 30.0, vec![2.0]));
        cases.push(("constant".into(), 30.0, vec![4.0; 900]));
        cases.push(("all missing".into(), 30.0, vec![f64::NAN; 900]));
        cases.push((
            "signed zeros".into(),
            30.0,
            vec![0.0, -0.0, 1.0, -0.0, 0.0, 1.0],
        ));
        let mut compared = 0;
        for (what, fs, samples) in &cases {
            let signal = LoadedSignal {
                name: what.clone(),
                units: None,
                fs: *fs,
                samples: samples.clone(),
            };
            let want = judge_whole(&signal);
            for block in [1, 7, 4096, usize::MAX] {
                let mut j = Judge::new(what, *fs);
                for chunk in samples.chunks(block.min(samples.len().max(1))) {
                    j.push(chunk);
                }
                let got = j.finish();
                assert_eq!(
                    bits(&got),
                    bits(&want),
                    "{what}, blocks of {block}: {got:?} {want:?}"
                );
                assert_eq!(got.name, want.name);
                compared += 1;
            }
        }
        assert_eq!(compared, cases.len() * 4);
        // Some cases go through the windows, some are too short for them.
        assert!(cases.iter().any(|(w, ..)| w.starts_with("pulse 125 Hz 75")));
    }
}
