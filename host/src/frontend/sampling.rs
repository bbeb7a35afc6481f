//! The sample rate to run the ADC at, and the digital band-pass to follow
//! the analog chain, designed with plethwire-dsp as `plethwire filter`
//! would.
//!
//! Our rules: sample at least 10 times the chain's highest analog corner,
//! so the analog roll-off has done its work well before Nyquist, and at
//! least 25 Hz, so a 3.7 Hz pulse gets several samples per cycle; round up
//! to the next of 25, 50, 100, 200, 250, 500, 1000 Hz, and never above the
//! pipeline's top rate ([`MAX_RATE_HZ`]; its range is plethwire-dsp's
//! `check_sample_rate`). The
//! digital band-pass is a Butterworth of order 2 from 0.3 Hz (a second-order
//! edge there costs about half a dB at 0.5 Hz) to 8 Hz (room for the pulse's
//! harmonics, which carry its shape), its upper edge held at or below 0.4 of
//! the sample rate.

use plethwire_dsp::pipeline::{MAX_RATE_HZ as TOP_F32, MIN_RATE_HZ as LEAST_F32};
use plethwire_dsp::Design;
use serde::Serialize;

use super::findings::{node, Finding, Level};
use super::quantity::{round3, sig3};
use super::transfer::Chain;
use super::FrontendError;
use crate::filter_report::{FilterSpec, SectionCoefficients, Stage};

/// The lowest rate recommended, Hz: the pipeline's lowest.
const MIN_RATE_HZ: f64 = LEAST_F32 as f64;
/// The highest rate recommended, Hz: the pipeline's highest.
const MAX_RATE_HZ: f64 = TOP_F32 as f64;
/// The rate is at least this many times the highest analog corner.
pub const CORNER_FACTOR: f64 = 10.0;
/// The digital band-pass's lower edge, Hz.
pub const DIGITAL_LOW_HZ: f64 = 0.3;
/// The digital band-pass's upper edge where the rate allows, Hz.
pub const DIGITAL_HIGH_HZ: f64 = 8.0;
/// Butterworth order of the digital band-pass.
pub const DIGITAL_ORDER: usize = 2;
/// The digital upper edge stays at or below this fraction of the rate.
pub const HIGH_EDGE_OF_RATE: f64 = 0.4;

/// The sample rate advice.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct RateAdvice {
    /// The chain's highest pole, Hz, if it has one.
    pub highest_corner_hz: Option<f64>,
    /// The least rate the rule allows, Hz.
    pub minimum_hz: f64,
    /// The rule's rate rounded up to a usual one, at most the pipeline's
    /// top rate, Hz.
    pub recommended_hz: f64,
    /// The rate the report works with: the circuit's own, or the
    /// recommended one.
    pub used_hz: f64,
    /// The rule in words, with its numbers.
    pub rule: String,
}

/// The next usual ADC rate at or above `hz`: 1, 2, 2.5 or 5 times a power
/// of ten.
pub fn usual_rate_at_least(hz: f64) -> f64 {
    let mut decade = 10f64.powf(hz.log10().floor());
    loop {
        for m in [1.0, 2.0, 2.5, 5.0] {
            let r = m * decade;
            if r >= hz * (1.0 - 1e-12) {
                return r;
            }
        }
        decade *= 10.0;
    }
}

impl RateAdvice {
    /// Apply the rule to `chain`; `given_hz` is the circuit's own rate.
    pub fn of(chain: &Chain, given_hz: Option<f64>) -> Self {
        let highest_corner_hz = chain.highest_corner_hz();
        let from_corner = highest_corner_hz.map_or(0.0, |f| CORNER_FACTOR * f);
        let minimum_hz = from_corner.max(MIN_RATE_HZ);
        let recommended_hz = usual_rate_at_least(minimum_hz).min(MAX_RATE_HZ);
        let rule = match highest_corner_hz {
            Some(f) => format!(
                "at least {CORNER_FACTOR} × the highest analog corner ({} Hz) and at least {MIN_RATE_HZ} Hz: {} Hz",
                sig3(f),
                sig3(minimum_hz)
            ),
            None => format!("the chain has no corner; at least {MIN_RATE_HZ} Hz"),
        };
        let rule = if minimum_hz > MAX_RATE_HZ {
            format!("{rule}; held at the pipeline's highest, {MAX_RATE_HZ} Hz")
        } else {
            rule
        };
        Self {
            highest_corner_hz,
            minimum_hz,
            recommended_hz,
            used_hz: given_hz.unwrap_or(recommended_hz),
            rule,
        }
    }

    /// A warning when the rule asks for more than the pipeline takes, or
    /// when the circuit's own rate is below the rule.
    pub fn findings(&self) -> Vec<Finding> {
        let mut out = Vec::new();
        if self.minimum_hz > MAX_RATE_HZ {
            out.push(Finding::new(
                Level::Warning,
                node::SAMPLING,
                format!(
                    "the rule asks for {} Hz, above the {MAX_RATE_HZ} Hz the pipeline takes: \
                     recommended {MAX_RATE_HZ} Hz; add a low-pass at or below {} Hz before the ADC",
                    sig3(self.minimum_hz),
                    MAX_RATE_HZ / CORNER_FACTOR
                ),
            ));
        }
        if self.used_hz < self.recommended_hz.min(self.minimum_hz) * (1.0 - 1e-12) {
            let why = match self.highest_corner_hz {
                Some(f) if CORNER_FACTOR * f > MIN_RATE_HZ => {
                    format!(
                        "{CORNER_FACTOR} × the highest analog corner, {} Hz",
                        sig3(f)
                    )
                }
                _ => "the least rate for the heart band".to_owned(),
            };
            out.push(Finding::new(
                Level::Warning,
                node::SAMPLING,
                format!(
                    "the sample rate {} Hz is below the rule's {} Hz ({why}): recommended {} Hz",
                    self.used_hz,
                    sig3(self.minimum_hz),
                    self.recommended_hz
                ),
            ));
        }
        out
    }
}

/// The recommended digital band-pass at one rate.
#[derive(Clone, Debug, Serialize)]
pub struct DigitalFilter {
    /// Sample rate, Hz.
    pub rate_hz: f64,
    /// Lower −3 dB edge, Hz.
    pub low_hz: f64,
    /// Upper −3 dB edge, Hz.
    pub high_hz: f64,
    /// Butterworth order.
    pub order: usize,
    /// The `plethwire filter` command that designs it for the board.
    pub command: String,
    /// Its sections, scipy form.
    pub sections: Vec<SectionCoefficients>,
    /// The design itself (not serialised).
    #[serde(skip)]
    pub design: Design,
}

impl DigitalFilter {
    /// Design the band-pass for `rate_hz`; refused when the rate leaves no
    /// room above the heart band.
    pub fn for_rate(rate_hz: f64) -> Result<Self, FrontendError> {
        // Three digits, so the printed command designs exactly this filter.
        let high_hz = round3(DIGITAL_HIGH_HZ.min(HIGH_EDGE_OF_RATE * rate_hz));
        let heart_top = super::band::HEART_BAND_HZ.1;
        if high_hz <= heart_top {
            return Err(FrontendError::RateTooLow {
                rate_hz,
                least_hz: heart_top / HIGH_EDGE_OF_RATE,
            });
        }
        let stage = Stage::BandPass {
            low_hz: DIGITAL_LOW_HZ,
            high_hz,
            order: DIGITAL_ORDER,
        };
        let design = FilterSpec::new(rate_hz, vec![stage])
            .and_then(|spec| spec.design())
            .map_err(FrontendError::Digital)?;
        let order = if DIGITAL_ORDER == crate::filter_report::DEFAULT_ORDER {
            String::new()
        } else {
            format!(" --order {DIGITAL_ORDER}")
        };
        Ok(Self {
            rate_hz,
            low_hz: DIGITAL_LOW_HZ,
            high_hz,
            order: DIGITAL_ORDER,
            command: format!(
                "plethwire filter --rate {rate_hz} --band {DIGITAL_LOW_HZ}:{}{order}",
                sig3(high_hz)
            ),
            sections: design.sections().iter().map(Into::into).collect(),
            design,
        })
    }

    /// The filter's gain at `f_hz`, dB (−∞ at Nyquist, where it has zeros).
    pub fn gain_db(&self, f_hz: f64) -> f64 {
        plethwire_dsp::response::response(self.design.sections(), f_hz, self.rate_hz).magnitude_db
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frontend::circuit::AmpStage;
    use plethwire_dsp::design::butterworth_bandpass;

    #[test]
    fn usual_rates() {
        assert_eq!(usual_rate_at_least(25.0), 25.0);
        assert_eq!(usual_rate_at_least(33.9), 50.0);
        assert_eq!(usual_rate_at_least(154.0), 200.0);
        assert_eq!(usual_rate_at_least(201.0), 250.0);
        assert_eq!(usual_rate_at_least(251.0), 500.0);
        assert_eq!(usual_rate_at_least(600.0), 1000.0);
        assert_eq!(usual_rate_at_least(100.0), 100.0);
    }

    #[test]
    fn the_advice_stays_within_the_pipeline_range() {
        use crate::frontend::test_circuit::circuit;
        // No capacitor anywhere: no corner, the least rate.
        let chain = Chain::of(&circuit(47.0, 1.0));
        let advice = RateAdvice::of(&chain, None);
        assert_eq!(advice.recommended_hz, 25.0);
        // A 2 kHz corner asks for 20 kHz: held at the pipeline's 1000 Hz,
        // with a warning.
        let mut c = circuit(47.0, 1.0);
        c.stages.push(AmpStage::LowPass {
            r_ohm: 1e3,
            c_f: 1.0 / (2.0 * std::f64::consts::PI * 2e3 * 1e3),
        });
        let advice = RateAdvice::of(&Chain::of(&c), None);
        assert!((advice.minimum_hz - 20e3).abs() < 1e-6);
        assert_eq!(advice.recommended_hz, 1000.0);
        assert_eq!(advice.used_hz, 1000.0);
        assert!(advice
            .rule
            .ends_with("held at the pipeline's highest, 1000 Hz"));
        let f = advice.findings();
        assert_eq!(f.len(), 1, "{f:?}");
        assert!(f[0]
            .message
            .contains("above the 1000 Hz the pipeline takes"));
        // A rate given below the rule warns.
        let advice = RateAdvice::of(&Chain::of(&c), Some(500.0));
        assert!(advice.findings()[1]
            .message
            .starts_with("the sample rate 500 Hz is below"));
    }

    #[test]
    fn the_digital_filter_is_the_one_plethwire_filter_designs() {
        let f = DigitalFilter::for_rate(50.0).unwrap();
        assert_eq!(f.command, "plethwire filter --rate 50 --band 0.3:8");
        let direct = butterworth_bandpass(2, 0.3, 8.0, 50.0).unwrap();
        assert_eq!(f.design.sections(), direct.sections());
        // Its −3 dB edges are where they were asked for (the design's
        // pre-warping puts them there exactly).
        assert!((f.gain_db(0.3) + 3.0103).abs() < 1e-3);
        assert!((f.gain_db(8.0) + 3.0103).abs() < 1e-3);
    }

    #[test]
    fn a_low_rate_lowers_the_upper_edge_or_is_refused() {
        let f = DigitalFilter::for_rate(12.0).unwrap();
        assert!((f.high_hz - 4.8).abs() < 1e-12);
        assert_eq!(f.command, "plethwire filter --rate 12 --band 0.3:4.8");
        match DigitalFilter::for_rate(9.0) {
            Err(FrontendError::RateTooLow { least_hz, .. }) => {
                assert!((least_hz - 9.25).abs() < 1e-12)
            }
            other => panic!("{other:?}"),
        }
    }
}
