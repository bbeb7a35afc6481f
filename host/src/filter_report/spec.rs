//! What the user asked for: the filter stages in chain order, the sample
//! rate, and their translation into one [`Design`].

use plethwire_dsp::design::{
    butterworth_bandpass, butterworth_highpass, butterworth_lowpass, dc_blocker, notch,
};
use plethwire_dsp::{Design, DesignError};
use serde::Serialize;

use super::FilterDesignError;

/// Notch quality factor used when `--notch` gives only a centre.
pub const DEFAULT_NOTCH_QUALITY: f64 = 30.0;

/// Butterworth order used when none is given.
pub const DEFAULT_ORDER: usize = 2;

/// Frequencies worth reading off any pulse filter: the heart band's edges
/// and inside, a little below and above it, and both mains frequencies.
pub const USEFUL_FREQUENCIES_HZ: [f64; 9] = [0.1, 0.5, 1.0, 2.0, 3.7, 8.0, 20.0, 50.0, 60.0];

/// One stage of the chain.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum Stage {
    /// First-order DC blocker with its −3 dB corner at `corner_hz`.
    DcBlock {
        /// −3 dB corner, Hz.
        corner_hz: f64,
    },
    /// Butterworth high-pass.
    HighPass {
        /// −3 dB corner, Hz.
        corner_hz: f64,
        /// Butterworth order.
        order: usize,
    },
    /// Butterworth band-pass.
    BandPass {
        /// Lower −3 dB edge, Hz.
        low_hz: f64,
        /// Upper −3 dB edge, Hz.
        high_hz: f64,
        /// Order of the low-pass prototype (the band-pass has that many sections).
        order: usize,
    },
    /// Butterworth low-pass.
    LowPass {
        /// −3 dB corner, Hz.
        corner_hz: f64,
        /// Butterworth order.
        order: usize,
    },
    /// Second-order notch, e.g. for mains hum.
    Notch {
        /// Centre (zero) frequency, Hz.
        centre_hz: f64,
        /// Centre over −3 dB width.
        quality: f64,
    },
}

impl Stage {
    /// Design this stage alone at `sample_rate_hz`.
    pub fn design(&self, sample_rate_hz: f64) -> Result<Design, DesignError> {
        match *self {
            Stage::DcBlock { corner_hz } => dc_blocker(corner_hz, sample_rate_hz),
            Stage::HighPass { corner_hz, order } => {
                butterworth_highpass(order, corner_hz, sample_rate_hz)
            }
            Stage::BandPass {
                low_hz,
                high_hz,
                order,
            } => butterworth_bandpass(order, low_hz, high_hz, sample_rate_hz),
            Stage::LowPass { corner_hz, order } => {
                butterworth_lowpass(order, corner_hz, sample_rate_hz)
            }
            Stage::Notch { centre_hz, quality } => notch(centre_hz, quality, sample_rate_hz),
        }
    }

    /// A short human description, e.g. `Butterworth band-pass 0.5-8 Hz (order 2)`.
    pub fn describe(&self) -> String {
        match *self {
            Stage::DcBlock { corner_hz } => format!("DC blocker {corner_hz} Hz"),
            Stage::HighPass { corner_hz, order } => {
                format!("Butterworth high-pass {corner_hz} Hz (order {order})")
            }
            Stage::BandPass {
                low_hz,
                high_hz,
                order,
            } => format!("Butterworth band-pass {low_hz}-{high_hz} Hz (order {order})"),
            Stage::LowPass { corner_hz, order } => {
                format!("Butterworth low-pass {corner_hz} Hz (order {order})")
            }
            Stage::Notch { centre_hz, quality } => format!("notch {centre_hz} Hz (Q {quality})"),
        }
    }

    /// The stage's characteristic frequencies (corners, band edges, notch
    /// centre), Hz.
    pub fn corners_hz(&self) -> Vec<f64> {
        match *self {
            Stage::DcBlock { corner_hz }
            | Stage::HighPass { corner_hz, .. }
            | Stage::LowPass { corner_hz, .. } => vec![corner_hz],
            Stage::BandPass {
                low_hz, high_hz, ..
            } => vec![low_hz, high_hz],
            Stage::Notch { centre_hz, .. } => vec![centre_hz],
        }
    }
}

/// The fastest rate a filter is designed for, Hz: a thousand times the
/// pipeline's top rate, past any pulse sensor's ADC, where a heart-band
/// corner is a millionth of the rate and the sections' poles crowd `z = 1`.
pub const MAX_DESIGN_RATE_HZ: f64 = 1e6;

/// A whole request: stages in the order they are applied, and the rate.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct FilterSpec {
    /// Sample rate, Hz.
    pub sample_rate_hz: f64,
    /// Stages, first applied first.
    pub stages: Vec<Stage>,
}

impl FilterSpec {
    /// A spec with at least one stage.
    pub fn new(sample_rate_hz: f64, stages: Vec<Stage>) -> Result<Self, FilterDesignError> {
        if stages.is_empty() {
            return Err(FilterDesignError::NothingToDesign);
        }
        Ok(Self {
            sample_rate_hz,
            stages,
        })
    }

    /// Half the sample rate, Hz.
    pub fn nyquist_hz(&self) -> f64 {
        self.sample_rate_hz / 2.0
    }

    /// The stages joined in chain order, e.g.
    /// `DC blocker 0.3 Hz, then notch 50 Hz (Q 30)`.
    pub fn describe_stages(&self) -> String {
        let parts: Vec<String> = self.stages.iter().map(Stage::describe).collect();
        parts.join(", then ")
    }

    /// Design every stage and chain them. The first refusal wins; a bad
    /// sample rate is reported as such rather than against a stage.
    pub fn design(&self) -> Result<Design, FilterDesignError> {
        if self.sample_rate_hz > MAX_DESIGN_RATE_HZ {
            return Err(FilterDesignError::RateTooHigh {
                sample_rate_hz: self.sample_rate_hz,
            });
        }
        let mut parts = Vec::with_capacity(self.stages.len());
        for stage in &self.stages {
            match stage.design(self.sample_rate_hz) {
                Ok(d) => parts.push(d),
                Err(DesignError::InvalidSampleRate) => {
                    return Err(FilterDesignError::BadSampleRate {
                        sample_rate_hz: self.sample_rate_hz,
                    })
                }
                Err(DesignError::CornerAtOrAboveNyquist) if self.is_notch_at_nyquist(stage) => {
                    return Err(FilterDesignError::NotchAtNyquist {
                        centre_hz: self.nyquist_hz(),
                        sample_rate_hz: self.sample_rate_hz,
                        nulled_by: self
                            .stages
                            .iter()
                            .find(|s| matches!(s, Stage::LowPass { .. } | Stage::BandPass { .. }))
                            .map(Stage::describe),
                    })
                }
                Err(reason) => {
                    return Err(FilterDesignError::Refused {
                        stage: stage.describe(),
                        reason,
                        sample_rate_hz: self.sample_rate_hz,
                    })
                }
            }
        }
        let needed: usize = parts.iter().map(Design::len).sum();
        let mut parts = parts.iter();
        let mut chain = parts
            .next()
            .ok_or(FilterDesignError::NothingToDesign)?
            .clone();
        for part in parts {
            chain = chain
                .then(part)
                .map_err(|_| FilterDesignError::TooManySections { needed })?;
        }
        Ok(chain)
    }

    fn is_notch_at_nyquist(&self, stage: &Stage) -> bool {
        matches!(stage, Stage::Notch { centre_hz, .. } if *centre_hz == self.nyquist_hz())
    }

    /// The default frequencies for the response table: the useful set plus
    /// every corner, sorted, without repeats, and only those strictly
    /// between 0 and Nyquist.
    pub fn default_frequencies_hz(&self) -> Vec<f64> {
        let nyquist = self.nyquist_hz();
        let mut all: Vec<f64> = USEFUL_FREQUENCIES_HZ
            .iter()
            .copied()
            .chain(self.stages.iter().flat_map(Stage::corners_hz))
            .filter(|&f| f > 0.0 && f < nyquist)
            .collect();
        all.sort_by(f64::total_cmp);
        all.dedup();
        all
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn spec(rate: f64, stages: Vec<Stage>) -> FilterSpec {
        FilterSpec::new(rate, stages).expect("non-empty")
    }

    #[test]
    fn no_stage_is_refused() {
        assert_eq!(
            FilterSpec::new(100.0, vec![]),
            Err(FilterDesignError::NothingToDesign)
        );
    }

    #[test]
    fn default_frequencies_add_corners_and_stop_below_nyquist() {
        let s = spec(
            100.0,
            vec![
                Stage::DcBlock { corner_hz: 0.3 },
                Stage::BandPass {
                    low_hz: 0.5,
                    high_hz: 12.0,
                    order: 2,
                },
            ],
        );
        assert_eq!(
            s.default_frequencies_hz(),
            vec![0.1, 0.3, 0.5, 1.0, 2.0, 3.7, 8.0, 12.0, 20.0]
        );
    }

    #[test]
    fn chain_order_and_length_follow_the_stages() {
        let s = spec(
            250.0,
            vec![
                Stage::DcBlock { corner_hz: 0.2 },
                Stage::LowPass {
                    corner_hz: 10.0,
                    order: 4,
                },
                Stage::Notch {
                    centre_hz: 50.0,
                    quality: DEFAULT_NOTCH_QUALITY,
                },
            ],
        );
        let d = s.design().expect("valid");
        assert_eq!(d.len(), 1 + 2 + 1);
        let dc = dc_blocker(0.2, 250.0).unwrap();
        let nt = notch(50.0, 30.0, 250.0).unwrap();
        assert_eq!(d.sections()[0], dc.sections()[0]);
        assert_eq!(d.sections()[3], nt.sections()[0]);
    }

    #[test]
    fn refusals_name_the_stage_or_the_rate() {
        let reversed = spec(
            100.0,
            vec![Stage::BandPass {
                low_hz: 8.0,
                high_hz: 0.5,
                order: 2,
            }],
        );
        match reversed.design() {
            Err(FilterDesignError::Refused { stage, reason, .. }) => {
                assert!(stage.contains("band-pass 8-0.5 Hz"), "{stage}");
                assert_eq!(reason, DesignError::BandEdgesReversed);
            }
            other => panic!("expected a refusal, got {other:?}"),
        }
        for absurd in [1.5e6, 1e308, f64::INFINITY] {
            let fast = spec(absurd, vec![Stage::DcBlock { corner_hz: 0.5 }]);
            assert_eq!(
                fast.design(),
                Err(FilterDesignError::RateTooHigh {
                    sample_rate_hz: absurd
                })
            );
        }
        let negative = spec(-5.0, vec![Stage::DcBlock { corner_hz: 0.5 }]);
        assert_eq!(
            negative.design(),
            Err(FilterDesignError::BadSampleRate {
                sample_rate_hz: -5.0
            })
        );
    }

    #[test]
    fn a_notch_at_nyquist_names_the_stage_that_nulls_it() {
        let notch = Stage::Notch {
            centre_hz: 50.0,
            quality: 30.0,
        };
        let band = Stage::BandPass {
            low_hz: 0.5,
            high_hz: 8.0,
            order: 2,
        };
        let err = spec(100.0, vec![band, notch]).design().unwrap_err();
        assert_eq!(
            err.to_string(),
            "no notch can sit at 50 Hz: that is Nyquist at 100 Hz sampling, and the \
             Butterworth band-pass 0.5-8 Hz (order 2) already has its zeros there"
        );
        let alone = spec(100.0, vec![notch]).design().unwrap_err();
        assert!(matches!(
            alone,
            FilterDesignError::NotchAtNyquist {
                nulled_by: None,
                ..
            }
        ));
        let above = spec(90.0, vec![notch]).design().unwrap_err();
        assert!(
            matches!(above, FilterDesignError::Refused { .. }),
            "{above}"
        );
    }

    #[test]
    fn too_many_sections_reports_the_count() {
        let s = spec(
            1000.0,
            vec![
                Stage::HighPass {
                    corner_hz: 0.5,
                    order: 8,
                },
                Stage::BandPass {
                    low_hz: 0.5,
                    high_hz: 8.0,
                    order: 8,
                },
                Stage::Notch {
                    centre_hz: 50.0,
                    quality: 30.0,
                },
            ],
        );
        assert_eq!(
            s.design(),
            Err(FilterDesignError::TooManySections { needed: 4 + 8 + 1 })
        );
    }
}
