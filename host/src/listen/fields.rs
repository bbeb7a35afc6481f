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
    /// Bits of the board's ADC (0: no real ADC, e.g. the emulated board).
    pub adc_bits: u8,
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
            adc_bits: h.adc_bits,
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
    /// The LED-off reading's slow average, fraction of ADC full scale;
    /// absent when the board did not measure it.
    pub ambient_level: Option<f32>,
    /// Which of `led_drive`, `dc_level`, `ambient_level` the board
    /// measured (the others are 0 on the wire).
    pub measured: Vec<&'static str>,
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
            ambient_level: s.ambient_level_measured(),
            measured: [
                (Status::MEASURED_LED_DRIVE, "led_drive"),
                (Status::MEASURED_DC_LEVEL, "dc_level"),
                (Status::MEASURED_AMBIENT_LEVEL, "ambient_level"),
            ]
            .into_iter()
            .filter(|(bit, _)| s.measured & bit != 0)
            .map(|(_, name)| name)
            .collect(),
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
    /// Bytes read from the port.
    pub bytes: u64,
    /// Of the damaged, frames of another wire format version.
    pub foreign_version: u64,
    /// The version of the last of them.
    pub last_foreign_version: Option<u8>,
}

impl From<DecodeStats> for LinkFields {
    fn from(s: DecodeStats) -> Self {
        Self {
            frames: s.frames,
            damaged: s.damaged,
            crc_errors: s.crc_errors,
            dropped_bytes: s.dropped_bytes,
            lost_frames: s.lost_frames,
            bytes: s.bytes,
            foreign_version: s.foreign_version,
            last_foreign_version: s.last_foreign_version,
        }
    }
}

/// The detector's command-line name ([`DetectorKind::cli_name`]).
pub fn detector_name(d: DetectorKind) -> &'static str {
    d.cli_name()
}
