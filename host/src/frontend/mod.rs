//! `plethwire frontend`'s engine: the budget of an analog front end from
//! LED to ADC, free of command-line concerns.
//!
//! A [`Draft`] (a circuit file, options, or both merged) resolves into a
//! checked [`Circuit`]; [`FrontendReport::build`] works out the LED current,
//! the chain's transfer function as poles and zeros with its mid-band
//! transimpedance, whether it passes the heart band, the swing of a pulse
//! against the ADC range and the rails, the ADC step in photocurrent, a
//! sample rate and the digital band-pass to follow; [`human_report`] and
//! [`write_svg`] render it. [`advice`] turns levels measured at the ADC
//! into a single part change, checked through the same model.
//!
//! ```
//! use plethwire::frontend::{Draft, FrontendReport};
//! let draft = Draft::from_toml(r#"
//!     [led]
//!     supply_v = 5.0
//!     forward_v = 1.7
//!     resistor = "470"
//!     [detector]
//!     kind = "photodiode"
//!     feedback = "10k"
//!     [[stage]]
//!     kind = "lowpass"
//!     r = "47k"
//!     c = "1u"
//! "#).unwrap();
//! let report = FrontendReport::build(&draft.resolve()?)?;
//! assert!((report.led.current_ma - 7.02).abs() < 0.01);
//! // A 3.39 Hz corner costs 3.4 dB at 3.7 Hz, the band's upper edge.
//! assert!(!report.heart_band.passes && report.heart_band.high_edge.fails);
//! # Ok::<(), plethwire::frontend::FrontendError>(())
//! ```

pub mod advice;
mod band;
mod budget;
mod circuit;
mod draft;
mod findings;
mod led;
pub mod limits;
mod nodes;
mod phase;
mod plot;
mod quantity;
mod render;
mod report;
mod sampling;
#[cfg(test)]
mod test_circuit;
mod transfer;

pub use band::{check_band, BandCheck, Loss, ALLOWED_LOSS_DB, HEART_BAND_HZ};
pub use budget::{AdcBudget, Swing, MIN_PULSE_CODES};
pub use circuit::{Adc, AmpStage, Circuit, Detector, LedDrive, LoadAt, Pulse, Rails, Supplies};
pub use draft::{
    AdcDraft, CircuitTomlError, DetectorDraft, DetectorKind, Draft, LedDraft, PulseDraft,
    RailsDraft, RailsPair, Resistors, StageDraft, StageError, StageKind, DEFAULT_ADC_BITS,
    DEFAULT_ADC_REFERENCE_V,
};
pub use findings::{node, stage_node, Finding, Level};
pub use led::{parallel_ohm, LedBudget};
pub use nodes::{InputRange, NodeLevel};
pub use plot::{render_svg, write_svg, PLOT_RANGE_HZ};
pub use quantity::{bpm, parse_value, plain, si, sig3, Farads, Kind, Ohms, ValueError};
pub use render::human_report;
pub use report::{FrontendReport, ResponseRow, TABLE_FREQUENCIES_HZ};
pub use sampling::{
    usual_rate_at_least, DigitalFilter, RateAdvice, CORNER_FACTOR, DIGITAL_HIGH_HZ, DIGITAL_LOW_HZ,
    DIGITAL_ORDER,
};
pub use transfer::{Block, Chain, Factored};

use crate::filter_report::FilterDesignError;
use limits::OutOfBounds;
use plethwire_dsp::pipeline::SampleRateError;

/// Printed with every human-readable report and in the command's help.
pub const CAUTIONS: [&str; 4] = [
    "plethwire is not a medical device and not for diagnosis; its numbers are engineering estimates.",
    "Infrared LEDs: the light is invisible and the eye does not blink at it; check the LED and its \
     drive current against IEC 62471 (photobiological safety of lamps and LEDs).",
    "While someone is wired to the sensor, run it from a battery or connect it to a mains-powered \
     computer only through a USB isolator, following IEC 60601-1 practice.",
    "Local regulations and qualified practice decide what you may build and use on people.",
];

/// Why there is no report.
#[derive(Debug, thiserror::Error)]
pub enum FrontendError {
    /// The circuit file could not be read.
    #[error("cannot read the circuit file {path}: {source}")]
    Unreadable {
        /// The file.
        path: String,
        /// The system's reason.
        source: std::io::Error,
    },
    /// The circuit file is not a valid circuit (TOML syntax, an unknown key,
    /// a value of the wrong kind).
    #[error("circuit file {path}, {source}")]
    BadFile {
        /// The file.
        path: String,
        /// Where and what, one line.
        source: CircuitTomlError,
    },
    /// A value that is needed was given neither in the file nor as an option.
    #[error("missing {what}: give {key} in the circuit file or {option}")]
    Missing {
        /// What it is, in words.
        what: &'static str,
        /// Its key in the circuit file.
        key: &'static str,
        /// The option that gives it.
        option: &'static str,
    },
    /// A value or a combination of values is not allowed.
    #[error("{key} {reason}")]
    Invalid {
        /// The key (or stage) concerned.
        key: String,
        /// What is wrong with it.
        reason: String,
    },
    /// A value outside what a sensor front end can have.
    #[error("{key} {source}")]
    OutOfBounds {
        /// The key concerned.
        key: String,
        /// The bounds and the value.
        source: OutOfBounds,
    },
    /// The sample rate is outside the pipeline's range.
    #[error("{key}: {source}")]
    Rate {
        /// The key concerned.
        key: &'static str,
        /// The range and the rate.
        source: SampleRateError,
    },
    /// A number the report works out is not finite: the circuit's values
    /// are out of all proportion.
    #[error("the {what} works out to {value}: check the circuit's values")]
    NotFinite {
        /// Which quantity.
        what: String,
        /// Its value.
        value: f64,
    },
    /// A stage's keys do not fit its kind.
    #[error("{stage} {source}")]
    Stage {
        /// Which stage: `stage N (kind)`.
        stage: String,
        /// What is wrong with it.
        source: StageError,
    },
    /// The LED's supply is not above its forward voltage: no current flows.
    #[error("the LED cannot light: its supply ({supply_v} V) is not above its forward voltage ({forward_v} V)")]
    LedOff {
        /// Supply, volts.
        supply_v: f64,
        /// Forward voltage, volts.
        forward_v: f64,
    },
    /// The sample rate leaves no room for a band-pass above the heart band.
    #[error(
        "a sample rate of {rate_hz} Hz leaves no room above the heart band (up to {} Hz): use at least {least_hz} Hz",
        HEART_BAND_HZ.1
    )]
    RateTooLow {
        /// The rate, Hz.
        rate_hz: f64,
        /// The least rate that works, Hz.
        least_hz: f64,
    },
    /// The digital band-pass could not be designed.
    #[error("cannot design the digital band-pass: {0}")]
    Digital(#[source] FilterDesignError),
}
