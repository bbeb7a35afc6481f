//! The board's messages as JSON objects, with our own field names; shared
//! by the JSON event lines and the session summary.

use plethwire_dsp::pipeline::DetectorKind;
use plethwire_dsp::wire::{DecodeStats, Hello, Status};
use serde::Serialize;

/// A hello.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct HelloFields {
    /// `major.minor.patch`.
    pub firmware: String,
    /// Input sample rate, Hz.
    pub sample_rate_hz: f32,
    /// `elgendi` or `zong`.
    pub detector: &'static str,
    /// Band-pass lower edge, Hz.
    pub band_low_hz: f32,
    /// Band-pass upper edge, Hz.
    pub band_high_hz: f32,
    /// Window of the median heart rate, s.
    #[serde(rename = "median_hr_window_s")]
    pub hr_window_s: f32,
    /// ADC rails `[low, high]` in input units, when the board knows them.
    pub rails: Option<[f32; 2]>,
}

impl From<&Hello> for HelloFields {
    fn from(h: &Hello) -> Self {
        let [a, b, c] = h.firmware_version;
        Self {
            firmware: format!("{a}.{b}.{c}"),
            sample_rate_hz: h.sample_rate_hz,
            detector: detector_name(h.options.detector),
            band_low_hz: h.options.band_low_hz,
            band_high_hz: h.options.band_high_hz,
            hr_window_s: h.options.hr_window_s,
            rails: h.options.rails.map(|(lo, hi)| [lo, hi]),
        }
    }
}

/// A status message.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct StatusFields {
    /// LED drive as a fraction of full (0 to 1).
    pub led_drive: f32,
    /// LED drive as sent, in 1/65535.
    pub led_drive_code: u16,
    /// DC level of the LED-on reading, fraction of ADC full scale.
    pub dc_level: f32,
    /// Samples at the ADC rails since power-up.
    pub clipped_samples: u32,
    /// Missed sample ticks or failed ADC reads since power-up.
    pub adc_overruns: u32,
    /// Frames the board could not send since power-up.
    pub dropped_frames: u32,
    /// Non-finite samples the pipeline replaced since power-up.
    #[serde(rename = "replaced_samples")]
    pub rejected_samples: u32,
}

impl From<&Status> for StatusFields {
    fn from(s: &Status) -> Self {
        Self {
            led_drive: f32::from(s.led_drive) / 65_535.0,
            led_drive_code: s.led_drive,
            dc_level: s.dc_level,
            clipped_samples: s.clipped_samples,
            adc_overruns: s.adc_overruns,
            dropped_frames: s.dropped_frames,
            rejected_samples: s.rejected_samples,
        }
    }
}

/// The decoder's counters.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
pub struct LinkFields {
    /// Frames decoded.
    pub frames: u64,
    /// Damaged chunks between delimiters.
    pub damaged: u64,
    /// Of those, CRC mismatches.
    pub crc_errors: u64,
    /// Bytes thrown away with them.
    pub dropped_bytes: u64,
    /// Frames missing by their sequence numbers.
    pub lost_frames: u64,
}

impl From<DecodeStats> for LinkFields {
    fn from(s: DecodeStats) -> Self {
        Self {
            frames: s.frames,
            damaged: s.damaged,
            crc_errors: s.crc_errors,
            dropped_bytes: s.dropped_bytes,
            lost_frames: s.lost_frames,
        }
    }
}

/// The detector's command-line name ([`DetectorKind::cli_name`]).
pub fn detector_name(d: DetectorKind) -> &'static str {
    d.cli_name()
}
