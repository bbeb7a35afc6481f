//! The pipeline's settings and why a setting is refused.

use super::DetectorKind;
use crate::math::max_f32;
use crate::DesignError;
use core::fmt;

/// Lowest input sample rate accepted, Hz (a phone camera's rate). With
/// [`MAX_RATE_HZ`], the one sample-rate range of plethwire: the pipeline,
/// the host's recording loaders and `plethwire frontend` refuse a rate
/// outside it with [`SampleRateError`]'s message, `plethwire filter`
/// warns with it.
pub const MIN_RATE_HZ: f32 = 25.0;
/// Highest input sample rate accepted, Hz.
pub const MAX_RATE_HZ: f32 = 1000.0;

/// The sample-rate range in words: `the sample rate must be between 25 and
/// 1000 Hz`, the message every refusal of a rate outside it starts with.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct RateRange;

impl fmt::Display for RateRange {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "the sample rate must be between {MIN_RATE_HZ} and {MAX_RATE_HZ} Hz"
        )
    }
}

/// A sample rate outside [`MIN_RATE_HZ`] to [`MAX_RATE_HZ`] (or not a
/// number): [`RateRange`]'s words and the rate given.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SampleRateError {
    /// The rate refused, Hz.
    pub rate_hz: f64,
}

impl fmt::Display for SampleRateError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let a = self.rate_hz.abs();
        // A measured rate far out (a time column in the wrong unit) reads
        // better in exponent form than as hundreds of digits.
        if a.is_finite() && a != 0.0 && !(1e-3..1e9).contains(&a) {
            write!(f, "{RateRange}, not {:e} Hz", self.rate_hz)
        } else {
            write!(f, "{RateRange}, not {} Hz", self.rate_hz)
        }
    }
}

#[cfg(feature = "std")]
impl std::error::Error for SampleRateError {}

/// `rate_hz` if it lies in [`MIN_RATE_HZ`] to [`MAX_RATE_HZ`], ends
/// included; the one check of the range.
pub fn check_sample_rate(rate_hz: f64) -> Result<f64, SampleRateError> {
    if (f64::from(MIN_RATE_HZ)..=f64::from(MAX_RATE_HZ)).contains(&rate_hz) {
        Ok(rate_hz)
    } else {
        Err(SampleRateError { rate_hz })
    }
}
/// The detector runs at the input rate divided by `floor(fs / 62.5)`, so at
/// 62.5 to 125 Hz (or the input rate when lower). Work at the input rate is
/// then one filter section and the conditioning; everything else runs at
/// the detector's rate.
pub const DETECTOR_BASE_HZ: f32 = 62.5;

/// The signal state is decided on every `floor(fd / 31.25)`-th detector
/// sample (at least every one), so 31.25 to 62.5 times a second: it
/// follows seconds of beats and clipping, and deciding it at the
/// detector's full rate cost a tenth of the pipeline at 125 Hz.
pub const STATE_BASE_HZ: f32 = 31.25;

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
        if check_sample_rate(f64::from(self.sample_rate_hz)).is_err() {
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

    /// Detector samples per decision of the signal state:
    /// `floor(fd / STATE_BASE_HZ)`, at least 1.
    pub(super) fn state_every(&self) -> u32 {
        let fd = self.sample_rate_hz / self.decimation() as f32;
        max_f32(libm::floorf(fd / STATE_BASE_HZ), 1.0) as u32
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
    /// The band's sections handed to [`super::Pipeline::with_band`] were
    /// designed for another sample rate or other band edges.
    BandMismatch,
}

impl fmt::Display for PipelineError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::SampleRate => write!(f, "{RateRange}"),
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
            Self::BandMismatch => f.write_str(
                "the band's filters were designed for another sample rate or other band edges",
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
    fn the_range_is_checked_once_with_one_message() {
        for ok in [25.0, 62.5, 1000.0] {
            assert_eq!(check_sample_rate(ok), Ok(ok));
        }
        for bad in [5.0, 24.999, 1000.001, 2000.0, 0.0, -25.0, f64::INFINITY] {
            assert_eq!(
                check_sample_rate(bad),
                Err(SampleRateError { rate_hz: bad })
            );
        }
        assert!(check_sample_rate(f64::NAN).is_err());
        assert_eq!(
            SampleRateError { rate_hz: 2000.0 }.to_string(),
            "the sample rate must be between 25 and 1000 Hz, not 2000 Hz"
        );
        assert_eq!(
            SampleRateError { rate_hz: 1e308 }.to_string(),
            "the sample rate must be between 25 and 1000 Hz, not 1e308 Hz"
        );
        // The pipeline's refusal is the same words.
        let e = Pipeline::new(Config::new(2000.0)).err().unwrap();
        assert_eq!(
            e.to_string(),
            "the sample rate must be between 25 and 1000 Hz"
        );
        assert!(Pipeline::new(Config::new(f32::NAN)).is_err());
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
