//! The ECG recorded beside a pulse signal as a beat reference: R peaks
//! found by Pan and Tompkins ([`r_peaks`]), and detected pulses scored
//! against them once each R peak is moved by the pulse-arrival delay
//! ([`score_pulses`]), leaving out the ECG time it cannot vouch for by
//! rules on the signal alone ([`unusable_spans`]: no R peak for over 3 s,
//! the ECG at its rails).
//!
//! Everything here runs offline on the PC, on a whole recording or
//! ([`stream`]) on one read a block at a time, several times over, with
//! the same results; it is a reference for the streaming pipeline, not
//! part of it.

mod arrival;
mod decisions;
mod pan_tompkins;
pub mod stages;
pub mod stream;
#[cfg(test)]
mod test_ecg;
mod usable;

pub use arrival::{
    local_delays, missed_beats, score_against_r_peaks, score_pulses, EcgReference, EcgScore,
    MissedBeat,
};
pub use pan_tompkins::r_peaks;
pub use stream::{BandBlocks, EcgSource, EcgStreamError, RecordSource, SliceSource};
pub use usable::{
    gap_spans, rail_spans, unusable_spans, MAX_R_GAP_S, RAIL_MADS, RAIL_MARGIN_S, RAIL_RUN_S,
};

use std::fmt;

/// Lowest ECG sample rate the R-peak detector accepts, Hz.
pub const MIN_RATE_HZ: f64 = 100.0;
/// Highest ECG sample rate the R-peak detector accepts, Hz.
pub const MAX_RATE_HZ: f64 = 1000.0;

/// Why an ECG could not be processed.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum EcgError {
    /// The sample rate is outside [`MIN_RATE_HZ`]..=[`MAX_RATE_HZ`] or not
    /// a finite number.
    UnsupportedRate(f64),
}

impl fmt::Display for EcgError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            EcgError::UnsupportedRate(fs) => write!(
                f,
                "ECG sample rate {fs} Hz is outside the R-peak detector's {MIN_RATE_HZ}-{MAX_RATE_HZ} Hz"
            ),
        }
    }
}

impl std::error::Error for EcgError {}

fn check_rate(fs: f64) -> Result<(), EcgError> {
    if fs.is_finite() && (MIN_RATE_HZ..=MAX_RATE_HZ).contains(&fs) {
        Ok(())
    } else {
        Err(EcgError::UnsupportedRate(fs))
    }
}
