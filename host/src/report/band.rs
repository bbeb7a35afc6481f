//! The pipeline's band-pass at the record's rate: its sections as the
//! board runs them, the band-passed signal, and its response.

use plethwire_dsp::design::{butterworth_highpass, butterworth_lowpass};
use plethwire_dsp::filter::{Biquad, Cascade, Delta};
use plethwire_dsp::pipeline::Config;
use plethwire_dsp::response::response;
use plethwire_dsp::DesignError;

/// Sections of the pipeline's band: a Butterworth low-pass and a
/// Butterworth high-pass, order 2 each (see `plethwire_dsp::pipeline`).
pub const BAND_ORDER: usize = 2;

/// The band-pass the pipeline builds from `config`.
#[derive(Clone, Debug)]
pub struct BandPass {
    /// Lower edge, Hz.
    pub low_hz: f64,
    /// Upper edge, Hz.
    pub high_hz: f64,
    /// Sample rate, Hz.
    pub fs: f64,
    cascade: Cascade<Delta, BAND_ORDER>,
}

impl BandPass {
    /// Design it as the pipeline does: same orders, edges and section
    /// structure ([`Delta`], `f32`). The pipeline runs the high-pass at its
    /// detector's rate (62.5 Hz or more) after decimation; here both run at
    /// the record's rate, which moves the 0.5 Hz corner's response by far
    /// less than a plot can show.
    pub fn new(config: &Config) -> Result<Self, DesignError> {
        let fs = f64::from(config.sample_rate_hz);
        let (low_hz, high_hz) = (
            f64::from(config.options.band_low_hz),
            f64::from(config.options.band_high_hz),
        );
        let cascade = butterworth_lowpass(2, high_hz, fs)?
            .then(&butterworth_highpass(2, low_hz, fs)?)?
            .cascade()?;
        Ok(Self {
            low_hz,
            high_hz,
            fs,
            cascade,
        })
    }

    /// The sections with their state at rest, to run a sample at a time.
    pub(super) fn cascade(&self) -> Cascade<Delta, BAND_ORDER> {
        self.cascade
    }

    /// The coefficients the board's sections really implement.
    pub fn sections(&self) -> Vec<Biquad<f64>> {
        self.cascade.realised().to_vec()
    }

    /// `samples[..to]` band-passed, settled on the first sample and with
    /// missing samples replaced by the last good one, as the pipeline's
    /// input stage does. (Restarts after steps in the input are not
    /// repeated here.)
    pub fn run(&self, samples: &[f64], to: usize) -> Vec<f64> {
        let mut c = self.cascade;
        let mut last = samples
            .iter()
            .copied()
            .find(|v| v.is_finite())
            .unwrap_or(0.0) as f32;
        c.settle(last);
        samples[..to.min(samples.len())]
            .iter()
            .map(|&x| {
                let x = x as f32;
                if x.is_finite() {
                    last = x;
                }
                f64::from(c.process(last))
            })
            .collect()
    }

    /// Gain (dB) and group delay (ms) at `frequency_hz`.
    pub fn at(&self, frequency_hz: f64) -> (f64, f64) {
        let r = response(&self.sections(), frequency_hz, self.fs);
        (r.magnitude_db, r.group_delay_s * 1000.0)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_band_passes_the_pulse_and_removes_the_level() {
        let b = BandPass::new(&Config::new(100.0)).unwrap();
        // -3.01 dB at both edges (Butterworth), about 0 dB between.
        assert!((b.at(0.5).0 + 3.01).abs() < 0.05, "{:?}", b.at(0.5));
        assert!((b.at(8.0).0 + 3.01).abs() < 0.05, "{:?}", b.at(8.0));
        assert!(b.at(2.0).0.abs() < 0.3);
        // A constant level of 1000 stays at rest: settled on the first sample.
        let out = b.run(&[1000.0; 500], 500);
        assert!(out.iter().all(|v| v.abs() < 1e-2), "{:?}", &out[..5]);
        // A 1.2 Hz sine comes through at nearly full size.
        let s: Vec<f64> = (0..2000)
            .map(|i| (2.0 * std::f64::consts::PI * 1.2 * i as f64 / 100.0).sin())
            .collect();
        let y = b.run(&s, 2000);
        let peak = y[1000..].iter().fold(0.0f64, |m, v| m.max(v.abs()));
        assert!((0.9..1.05).contains(&peak), "{peak}");
    }
}
