//! The pipeline's settings and why a setting is refused.

use super::DetectorKind;
use crate::math::max_f32;
use crate::DesignError;
use core::fmt;

/// Lowest input sample rate accepted, Hz (a phone camera's rate).
pub const MIN_RATE_HZ: f32 = 25.0;
/// Highest input sample rate accepted, Hz.
pub const MAX_RATE_HZ: f32 = 1000.0;
/// The detector runs at the input rate divided by `floor(fs / 62.5)`, so at
/// 62.5 to 125 Hz (or the input rate when lower). Work at the input rate is
/// then one filter section and the conditioning; everything else runs at
/// the detector's rate.
pub const DETECTOR_BASE_HZ: f32 = 62.5;

/// Settings with defaults a sensor builder rarely needs to change.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Options {
    /// The beat detector.
    pub detector: DetectorKind,
    /// Band-pass lower edge, Hz.
    pub band_low_hz: f32,
    /// Band-pass upper edge, Hz.
    pub band_high_hz: f32,
    /// ADC rails, if known (`None`: detect flat tops at the extremes).
    pub rails: Option<(f32, f32)>,
    /// Window of the smoothed heart rate, seconds.
    pub hr_window_s: f32,
}

impl Default for Options {
    fn default() -> Self {
        Self {
            detector: DetectorKind::Elgendi,
            band_low_hz: 0.5,
            band_high_hz: 8.0,
            rails: None,
            hr_window_s: 12.0,
        }
    }
}

/// Pipeline configuration: the sample rate and the options.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Config {
    /// Input sample rate, 25 to 1000 Hz.
    pub sample_rate_hz: f32,
    /// Everything else.
    pub options: Options,
}

impl Config {
    /// Defaults for input at `sample_rate_hz`.
    pub fn new(sample_rate_hz: f32) -> Self {
        Self {
            sample_rate_hz,
            options: Options::default(),
        }
    }

    /// The checks that need no filter design: the rate, the heart-rate
    /// window and the order of the band's edges.
    pub(super) fn check(&self) -> Result<(), PipelineError> {
        if !(MIN_RATE_HZ..=MAX_RATE_HZ).contains(&self.sample_rate_hz) {
            return Err(PipelineError::SampleRate);
        }
        let o = &self.options;
        if !(o.hr_window_s.is_finite() && o.hr_window_s > 0.0) {
            return Err(PipelineError::HrWindow);
        }
        if o.band_low_hz.partial_cmp(&o.band_high_hz) != Some(core::cmp::Ordering::Less) {
            return Err(PipelineError::BandEdgesReversed);
        }
        Ok(())
    }

    /// Input samples per detector sample: `floor(fs / DETECTOR_BASE_HZ)`,
    /// at least 1.
    pub(super) fn decimation(&self) -> u32 {
        max_f32(libm::floorf(self.sample_rate_hz / DETECTOR_BASE_HZ), 1.0) as u32
    }
}

/// Which pipeline setting was refused.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum PipelineError {
    /// `sample_rate_hz` is outside [`MIN_RATE_HZ`] to [`MAX_RATE_HZ`].
    SampleRate,
    /// `hr_window_s` is not a positive finite number of seconds.
    HrWindow,
    /// `band_low_hz` is not below `band_high_hz`.
    BandEdgesReversed,
    /// The band's lower edge (`band_low_hz`, a high-pass at the detector's
    /// rate) cannot be designed.
    BandLow(DesignError),
    /// The band's upper edge (`band_high_hz`, a low-pass at the input rate)
    /// cannot be designed.
    BandHigh(DesignError),
    /// The accelerometer's rate is outside what
    /// [`super::MotionTracker`] takes.
    MotionRate,
}

impl fmt::Display for PipelineError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::SampleRate => write!(
                f,
                "the sample rate must be between {MIN_RATE_HZ} and {MAX_RATE_HZ} Hz"
            ),
            Self::HrWindow => {
                f.write_str("the heart-rate window must be a positive number of seconds")
            }
            Self::BandEdgesReversed => {
                f.write_str("the band's low edge must be below its high edge")
            }
            Self::BandLow(e) => write!(f, "the band's low edge: {e}"),
            Self::BandHigh(e) => write!(f, "the band's high edge: {e}"),
            Self::MotionRate => write!(
                f,
                "the accelerometer's rate must be between {} and {} Hz",
                super::motion::MIN_MOTION_RATE_HZ,
                super::motion::MAX_MOTION_RATE_HZ
            ),
        }
    }
}

#[cfg(feature = "std")]
impl std::error::Error for PipelineError {
    fn source(&self) -> Option<&(dyn std::error::Error + 'static)> {
        match self {
            Self::BandLow(e) | Self::BandHigh(e) => Some(e),
            _ => None,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::super::Pipeline;
    use super::*;
    use std::string::ToString;

    #[test]
    fn a_bad_heart_rate_window_is_named_as_such() {
        for bad in [0.0, -3.0, f32::NAN, f32::INFINITY] {
            let mut c = Config::new(125.0);
            c.options.hr_window_s = bad;
            let e = Pipeline::new(c).err();
            assert_eq!(e, Some(PipelineError::HrWindow), "{bad}");
            let text = e.unwrap().to_string();
            assert!(text.contains("heart-rate window"), "{text}");
            assert!(!text.contains("corner"), "{text}");
        }
    }

    #[test]
    fn each_refusal_names_its_setting() {
        let refused = |f: fn(&mut Config)| {
            let mut c = Config::new(125.0);
            f(&mut c);
            Pipeline::new(c).err()
        };
        assert_eq!(
            refused(|c| c.sample_rate_hz = 20.0),
            Some(PipelineError::SampleRate)
        );
        assert_eq!(
            refused(|c| c.options.band_low_hz = 9.0),
            Some(PipelineError::BandEdgesReversed)
        );
        assert_eq!(
            refused(|c| c.options.band_low_hz = -1.0),
            Some(PipelineError::BandLow(DesignError::NonPositiveCorner))
        );
        assert_eq!(
            refused(|c| c.options.band_high_hz = 70.0),
            Some(PipelineError::BandHigh(DesignError::CornerAtOrAboveNyquist))
        );
        assert!(refused(|_| {}).is_none());
    }
}
