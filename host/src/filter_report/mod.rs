//! `plethwire filter`'s engine, free of any command-line concerns: turn a
//! [`FilterSpec`] into a [`FilterReport`] (designed sections, what the
//! board's `f32` cascade really implements, and a response table), render it
//! as text (a Rust `const` block, JSON, a table) and draw its response as an
//! SVG.
//!
//! ```
//! use plethwire::filter_report::{FilterReport, FilterSpec, Stage};
//! let spec = FilterSpec::new(100.0, vec![Stage::BandPass { low_hz: 0.5, high_hz: 8.0, order: 2 }])?;
//! let report = FilterReport::build(&spec, None, "PULSE_FILTER", "example")?;
//! assert_eq!(report.coefficients.sections.len(), 2);
//! # Ok::<(), plethwire::filter_report::FilterDesignError>(())
//! ```

mod const_block;
mod plot;
mod render;
mod report;
mod spec;

pub use const_block::{check_const_name, rust_const_block, ConstNameError};
pub use plot::{render_svg, write_svg};
pub use render::{human_report, response_table};
pub use report::{
    on_a_zero, BoardFilter, CoefficientSet, FilterReport, ResponsePoint, ResponseRow,
    SectionCoefficients, BOARD_STRUCTURE, ZERO_PROXIMITY,
};
pub use spec::{
    FilterSpec, Stage, DEFAULT_NOTCH_QUALITY, DEFAULT_ORDER, MAX_DESIGN_RATE_HZ,
    USEFUL_FREQUENCIES_HZ,
};

use plethwire_dsp::design::MAX_SECTIONS;
use plethwire_dsp::DesignError;
use std::fmt;

/// Why a filter could not be designed or its report made (drawing the
/// plot fails with a [`crate::plot::PlotError`] instead).
#[derive(Clone, Debug, PartialEq)]
pub enum FilterDesignError {
    /// The spec holds no stage at all.
    NothingToDesign,
    /// The sample rate is not a positive finite number.
    BadSampleRate {
        /// The rate given, Hz.
        sample_rate_hz: f64,
    },
    /// The sample rate is above [`MAX_DESIGN_RATE_HZ`]: no ADC of a pulse
    /// sensor samples that fast.
    RateTooHigh {
        /// The rate given, Hz.
        sample_rate_hz: f64,
    },
    /// The DSP library refused to design one stage.
    Refused {
        /// Which stage, as [`Stage::describe`] puts it.
        stage: String,
        /// The library's reason.
        reason: DesignError,
        /// The rate it was designed for, Hz (to quote Nyquist).
        sample_rate_hz: f64,
    },
    /// A notch exactly at Nyquist, where mains hum lands when the rate is
    /// twice its frequency: no second-order notch exists there.
    NotchAtNyquist {
        /// The notch centre, Hz.
        centre_hz: f64,
        /// The sample rate, Hz.
        sample_rate_hz: f64,
        /// An earlier stage whose zeros already null Nyquist, if any.
        nulled_by: Option<String>,
    },
    /// The stages together need more sections than a design holds.
    TooManySections {
        /// Sections the chain would need.
        needed: usize,
    },
    /// A section is stable in `f64` but not once rounded for the board.
    NotStableOnBoard {
        /// Index of the section, from 0.
        section: usize,
        /// The library's reason.
        reason: DesignError,
    },
    /// A response frequency outside 0..=Nyquist.
    FrequencyOutOfRange {
        /// The frequency asked for, Hz.
        frequency_hz: f64,
        /// Nyquist, Hz.
        nyquist_hz: f64,
    },
}

impl fmt::Display for FilterDesignError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::NothingToDesign => f.write_str("nothing to design: no filter stage was given"),
            Self::BadSampleRate { sample_rate_hz } => write!(
                f,
                "sample rate {sample_rate_hz} Hz refused: {}",
                DesignError::InvalidSampleRate
            ),
            Self::RateTooHigh { sample_rate_hz } => write!(
                f,
                "sample rate {sample_rate_hz} Hz refused: filters are designed at up to {MAX_DESIGN_RATE_HZ} Hz"
            ),
            Self::Refused {
                stage,
                reason,
                sample_rate_hz,
            } => {
                write!(f, "cannot design the {stage}: {reason}")?;
                if *reason == DesignError::CornerAtOrAboveNyquist {
                    write!(f, ", {} Hz here", sample_rate_hz / 2.0)?;
                }
                Ok(())
            }
            Self::NotchAtNyquist {
                centre_hz,
                sample_rate_hz,
                nulled_by,
            } => {
                write!(
                    f,
                    "no notch can sit at {centre_hz} Hz: that is Nyquist at {sample_rate_hz} Hz sampling"
                )?;
                match nulled_by {
                    Some(stage) => write!(f, ", and the {stage} already has its zeros there"),
                    None => f.write_str("; a low-pass or band-pass has its zeros there"),
                }
            }
            Self::TooManySections { needed } => write!(
                f,
                "the chain needs {needed} sections but a design holds at most {MAX_SECTIONS}"
            ),
            Self::NotStableOnBoard { section, reason } => write!(
                f,
                "section {section} is stable in f64 but not once rounded to f32 for the board: {reason}"
            ),
            Self::FrequencyOutOfRange {
                frequency_hz,
                nyquist_hz,
            } => write!(
                f,
                "cannot evaluate the response at {frequency_hz} Hz: use 0 Hz up to Nyquist ({nyquist_hz} Hz)"
            ),
        }
    }
}

impl std::error::Error for FilterDesignError {
    fn source(&self) -> Option<&(dyn std::error::Error + 'static)> {
        match self {
            Self::Refused { reason, .. } | Self::NotStableOnBoard { reason, .. } => Some(reason),
            _ => None,
        }
    }
}
