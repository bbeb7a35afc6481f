//! Options shared by the commands that run the beat pipeline.

use crate::values;
use clap::builder::PossibleValue;
use clap::{Args, ValueEnum};
use plethwire_dsp::pipeline::{Config, DetectorKind};

use plethwire::motion::parse_motion_names;
use plethwire::replay::{Polarity, Source};
use plethwire_records::RecordOptions;

/// Which way the pulse points, as named on the command line.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum PolarityName {
    /// Down for CSV columns R, G, B, red, green, blue (camera brightness), up otherwise.
    Auto,
    /// Systolic peaks are maxima.
    Up,
    /// Systolic peaks are minima: the signal is negated.
    Down,
}

/// A published detector as named on the command line: names, help and the
/// list come from [`DetectorKind`] (`cli_name`, `display_name`, `ALL`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct DetectorName(pub DetectorKind);

/// Every detector, for clap.
const DETECTOR_NAMES: [DetectorName; DetectorKind::ALL.len()] = {
    let mut names = [DetectorName(DetectorKind::ALL[0]); DetectorKind::ALL.len()];
    let mut i = 0;
    while i < names.len() {
        names[i] = DetectorName(DetectorKind::ALL[i]);
        i += 1;
    }
    names
};

impl ValueEnum for DetectorName {
    fn value_variants<'a>() -> &'a [Self] {
        &DETECTOR_NAMES
    }

    fn to_possible_value(&self) -> Option<PossibleValue> {
        let help = if self.0 == DetectorKind::default() {
            format!("{} (default)", self.0.display_name())
        } else {
            self.0.display_name().to_string()
        };
        Some(PossibleValue::new(self.0.cli_name()).help(help))
    }
}

impl std::fmt::Display for DetectorName {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.0.cli_name())
    }
}

impl From<DetectorName> for DetectorKind {
    fn from(d: DetectorName) -> Self {
        d.0
    }
}

/// Where the samples come from and how the pipeline is set up.
#[derive(Args, Debug, Clone, PartialEq)]
pub struct PipelineOpts {
    /// Signal to use: a WFDB signal or CSV column; a list NAME,NAME,... to
    /// choose the clearest pulse among; or `auto` to choose among all
    /// [default: PLETH for WFDB, auto for CSV (all columns but the time)].
    #[arg(long, value_name = "NAME")]
    pub signal: Option<String>,

    /// CSV only: the sample rate, Hz; with a time column, the rate of the
    /// uniform grid the rows are resampled onto [default: the median frame
    /// rate when the times are uneven].
    #[arg(long, value_name = "HZ", value_parser = values::hz)]
    pub rate: Option<f64>,

    /// CSV only: take the sample times from this column [default: a column
    /// named time, time_s, time_ms or time_us when --rate is not given].
    #[arg(long, value_name = "NAME")]
    pub time_column: Option<String>,

    /// CSV only: unit of the time column, s, ms or us [default: s for
    /// --time-column; for a column found by name, the unit its name says,
    /// or for plain `time` the one that makes the frame rate 25-1000 Hz].
    #[arg(long, value_name = "UNIT")]
    pub time_unit: Option<String>,

    /// Which way the pulse points in the file.
    #[arg(long, value_enum, default_value = "auto")]
    pub polarity: PolarityName,

    /// Beat detector.
    #[arg(long, value_enum, default_value_t = DetectorName(DetectorKind::default()))]
    pub detector: DetectorName,

    /// ADC rails LOW:HIGH in the signal's units, when known (samples there
    /// count as clipped) [default: found from flat tops at the extremes].
    #[arg(long, value_name = "LOW:HIGH", value_parser = values::signal_rails, allow_negative_numbers = true)]
    pub rails: Option<(f32, f32)>,

    /// WFDB only: read signal files that the header names outside the
    /// record's folder (`../x`, an absolute path) [default: refused].
    #[arg(long)]
    pub allow_outside_signal_files: bool,
}

/// The accelerometer of the commands that replay recordings on the PC.
#[derive(Args, Debug, Clone, PartialEq, Default)]
pub struct MotionOpts {
    /// Accelerometer signals X,Y,Z of the same recording (WFDB signals or
    /// CSV columns, in g, at the pulse signal's rate) as a motion
    /// reference: beats that strong motion makes untrustworthy are flagged
    /// (motion flag) [default: none].
    #[arg(long, value_name = "X,Y,Z", value_parser = parse_motion_names)]
    pub motion: Option<[String; 3]>,
}

impl PipelineOpts {
    /// The sample source.
    pub fn source(&self) -> Source {
        Source {
            signal: self.signal.clone(),
            rate: self.rate,
            time_column: self.time_column.clone(),
            time_unit: self.time_unit.clone(),
            polarity: match self.polarity {
                PolarityName::Auto => Polarity::Auto,
                PolarityName::Up => Polarity::Up,
                PolarityName::Down => Polarity::Down,
            },
            motion: None,
            record_options: RecordOptions {
                allow_outside_folder: self.allow_outside_signal_files,
                ..RecordOptions::default()
            },
        }
    }

    /// The sample source with the accelerometer of `motion`.
    pub fn source_with(&self, motion: &MotionOpts) -> Source {
        Source {
            motion: motion.motion.clone(),
            ..self.source()
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
