//! Options shared by the commands that run the beat pipeline.

use clap::{Args, ValueEnum};
use plethwire_dsp::pipeline::{Config, DetectorKind};

use crate::replay::Source;

/// The published detectors, as named on the command line.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum DetectorName {
    /// Elgendi et al. 2013, two event-related moving averages (default).
    Elgendi,
    /// Zong et al. 2003, slope sum function (also gives the onset).
    Zong,
}

impl From<DetectorName> for DetectorKind {
    fn from(d: DetectorName) -> Self {
        match d {
            DetectorName::Elgendi => DetectorKind::Elgendi,
            DetectorName::Zong => DetectorKind::Zong,
        }
    }
}

/// Where the samples come from and how the pipeline is set up.
#[derive(Args, Debug, Clone, PartialEq)]
pub struct PipelineOpts {
    /// WFDB signal to use [default: PLETH]; for CSV, the value column.
    #[arg(long, value_name = "NAME")]
    pub signal: Option<String>,

    /// CSV only: the sample rate, Hz.
    #[arg(long, value_name = "HZ")]
    pub rate: Option<f64>,

    /// CSV only: take the sample rate from this column of times (seconds).
    #[arg(long, value_name = "NAME", conflicts_with = "rate")]
    pub time_column: Option<String>,

    /// Beat detector.
    #[arg(long, value_enum, default_value = "elgendi")]
    pub detector: DetectorName,

    /// ADC rails LOW:HIGH in the signal's units, when known (samples there
    /// count as clipped) [default: found from flat tops at the extremes].
    #[arg(long, value_name = "LOW:HIGH", value_parser = parse_rails, allow_negative_numbers = true)]
    pub rails: Option<(f32, f32)>,
}

fn parse_rails(s: &str) -> Result<(f32, f32), String> {
    let (a, b) = s
        .split_once(':')
        .ok_or_else(|| format!("'{s}' is not LOW:HIGH"))?;
    let low: f32 = a
        .trim()
        .parse()
        .map_err(|_| format!("'{a}' is not a number"))?;
    let high: f32 = b
        .trim()
        .parse()
        .map_err(|_| format!("'{b}' is not a number"))?;
    if !(low.is_finite() && high.is_finite() && low < high) {
        return Err(format!("rails '{s}' must be two numbers, low below high"));
    }
    Ok((low, high))
}

impl PipelineOpts {
    /// The sample source.
    pub fn source(&self) -> Source {
        Source {
            signal: self.signal.clone(),
            rate: self.rate,
            time_column: self.time_column.clone(),
        }
    }

    /// The pipeline configuration at `fs`.
    pub fn config(&self, fs: f64) -> Config {
        let mut c = Config::new(fs as f32);
        c.options.detector = self.detector.into();
        c.options.rails = self.rails;
        c
    }
}
