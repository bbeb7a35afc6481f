//! Loading a recording: a WFDB record or a CSV file, its signal, time
//! column, polarity and accelerometer.

use super::csv_time::{csv_rate_options, MEASURED_RATE_HINT};
use crate::channel::{choose, ChannelChoice};
use crate::motion::{self, MotionSignals};
use plethwire_dsp::pipeline::check_sample_rate;
use plethwire_records::resample::ResampleReport;
use plethwire_records::{
    csv_column_names, read_csv_signals, ColumnRef, CsvSignalOptions, LoadedSignal, Record,
    RecordOptions, TimeUnit,
};
use serde::Serialize;
use std::path::{Path, PathBuf};

/// Where a recording's samples come from.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Source {
    /// Which signal: one name (WFDB signal, default `PLETH`, or CSV value
    /// column); a comma-separated list to choose among ([`crate::channel`]);
    /// `auto` to choose among all (a CSV's columns but the time column, a
    /// record's signals). For a CSV file `None` means `auto`.
    pub signal: Option<String>,
    /// CSV: the sample rate, Hz; with a time column, the rate of the
    /// uniform grid the rows are resampled onto.
    pub rate: Option<f64>,
    /// CSV: a column of times to take the rate from. Without it (and
    /// without `rate`) a column named `time`, `time_s`, `time_ms` or
    /// `time_us` (any case) is taken.
    pub time_column: Option<String>,
    /// CSV: the time column's unit, `s`, `ms` or `us` (default: seconds for
    /// a time column named on the command line; see [`load`]).
    pub time_unit: Option<String>,
    /// Which way the pulse points in the file.
    pub polarity: Polarity,
    /// Accelerometer signals (x, y, z in g) of the same recording, as the
    /// pipeline's motion reference ([`crate::motion`]); `None`: none.
    pub motion: Option<[String; 3]>,
    /// WFDB: how the record is opened (signal files outside its folder are
    /// refused unless these allow them).
    pub record_options: RecordOptions,
}

/// Which way a pulse points in the recorded signal.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Polarity {
    /// Up for WFDB signals and CSV columns in general; down for CSV columns
    /// named `R`, `G`, `B`, `red`, `green` or `blue` (any case): a camera's
    /// brightness, which falls as blood fills the finger with each beat.
    #[default]
    Auto,
    /// Systolic peaks are maxima (a pulse oximeter's plethysmogram).
    Up,
    /// Systolic peaks are minima (light through or off the finger): the
    /// signal is negated before the pipeline.
    Down,
}

/// Camera colour channel names, whose pulse points down.
pub(super) const COLOUR_CHANNELS: [&str; 6] = ["r", "g", "b", "red", "green", "blue"];

/// How the samples were got from the file, for summaries.
#[derive(Debug, Clone, Default, PartialEq, Serialize)]
pub struct InputInfo {
    /// The CSV time column used, if any.
    pub time_column: Option<String>,
    /// Its unit.
    pub time_unit: Option<TimeUnit>,
    /// Where the unit came from: `"given"`, `"default"`, `"column name"` or
    /// `"guessed from the frame steps"`.
    pub time_unit_from: Option<&'static str>,
    /// What resampling did, when the times were uneven or a grid rate given.
    pub resampled: Option<ResampleReport>,
    /// The channel choice, when there were several candidates.
    pub channel: Option<ChannelChoice>,
    /// Whether the signal was negated (its pulse pointed down).
    pub inverted: bool,
}

/// A loaded recording.
#[derive(Debug, Clone, PartialEq)]
pub struct Recording {
    /// Record name (file stem).
    pub name: String,
    /// The record's path without extension (WFDB) or the CSV file.
    pub path: PathBuf,
    /// The signal.
    pub signal: LoadedSignal,
    /// How it was got.
    pub input: InputInfo,
    /// The accelerometer, when one was asked for.
    pub motion: Option<MotionSignals>,
    /// How the record was opened; the same for any other signal read from
    /// it (an ECG reference).
    pub record_options: RecordOptions,
}

/// A recording that could not be loaded, replayed or scored; one line.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ReplayError {
    /// A recording or reference file that would not read.
    #[error(transparent)]
    Records(#[from] plethwire_records::Error),
    /// The accelerometer asked for would not load or does not fit.
    #[error(transparent)]
    Motion(#[from] motion::MotionLoadError),
    /// A recording refused for what it holds (the message names the file).
    #[error("{0}")]
    Refused(String),
}

pub(super) fn is_csv(path: &Path) -> bool {
    path.extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("csv"))
}

/// Load `path`: a WFDB record (`dir/name` or `dir/name.hea`) or a CSV file.
///
/// A CSV file needs a rate or a time column. A time column named by the
/// caller is in seconds unless `time_unit` says otherwise. When the caller
/// names neither, a column named `time`, `time_s`, `time_ms` or `time_us`
/// (any case) is the time column; its unit is `time_unit`, else the one in
/// its name, else (plain `time`) the one of s, ms and us that puts the
/// median frame rate within the pipeline's 25–1000 Hz (the three ranges
/// do not overlap, so at most one does). The grid rate must lie in that
/// range too.
pub fn load(path: &Path, source: &Source) -> Result<Recording, ReplayError> {
    let mut rec = load_as_recorded(path, source)?;
    let down = match source.polarity {
        Polarity::Up => false,
        Polarity::Down => true,
        Polarity::Auto => {
            is_csv(path)
                && COLOUR_CHANNELS
                    .iter()
                    .any(|c| rec.signal.name.eq_ignore_ascii_case(c))
        }
    };
    if down {
        rec.signal.samples.iter_mut().for_each(|x| *x = -*x);
        rec.input.inverted = true;
    }
    Ok(rec)
}

/// [`load`] without the polarity.
fn load_as_recorded(path: &Path, source: &Source) -> Result<Recording, ReplayError> {
    let stem = path
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_default();
    if is_csv(path) {
        return load_csv(path, stem, source);
    }
    let record = if path.extension().is_some_and(|e| e == "hea") {
        path.with_extension("")
    } else {
        path.to_path_buf()
    };
    let opened = Record::open_with(&record, &source.record_options)?;
    let (signal, channel) = match wanted_signals(source.signal.as_deref()) {
        Wanted::One(name) => (opened.load_signal(name)?, None),
        Wanted::Among(names) => {
            let names = names.unwrap_or_else(|| opened.signal_names());
            let signals = names
                .iter()
                .map(|n| opened.load_signal(Some(n)))
                .collect::<plethwire_records::Result<Vec<_>>>()?;
            pick(path, signals)?
        }
    };
    let motion = match &source.motion {
        Some(names) => Some(motion::load_wfdb(path, &opened, names, &signal)?),
        None => None,
    };
    Ok(Recording {
        name: stem,
        path: record,
        signal,
        input: InputInfo {
            channel,
            ..InputInfo::default()
        },
        motion,
        record_options: source.record_options.clone(),
    })
}

/// The signals asked for.
pub(super) enum Wanted<'a> {
    /// One by name (`None`: the reader's default).
    One(Option<&'a str>),
    /// A choice among these (`None`: all there are).
    Among(Option<Vec<String>>),
}

pub(super) fn wanted_signals(spec: Option<&str>) -> Wanted<'_> {
    match spec {
        None => Wanted::One(None),
        Some(s) if s.trim().eq_ignore_ascii_case("auto") => Wanted::Among(None),
        Some(s) if s.contains(',') => Wanted::Among(Some(
            s.split(',')
                .map(|n| n.trim().to_string())
                .filter(|n| !n.is_empty())
                .collect(),
        )),
        Some(s) => Wanted::One(Some(s)),
    }
}

/// The chosen signal among `signals` and the choice.
fn pick(
    path: &Path,
    mut signals: Vec<LoadedSignal>,
) -> Result<(LoadedSignal, Option<ChannelChoice>), ReplayError> {
    if signals.len() == 1 {
        return Ok((signals.remove(0), None));
    }
    let (i, choice) = choose(&signals).ok_or_else(|| {
        ReplayError::Refused(format!("{}: no signals to choose from", path.display()))
    })?;
    Ok((signals.swap_remove(i), Some(choice)))
}

/// The value columns of a CSV recording with columns `names` and time
/// column `time`: the one or several named, else all but the time column.
fn value_columns(
    path: &Path,
    source: &Source,
    names: &[String],
    time: Option<&str>,
) -> Result<Vec<ColumnRef>, ReplayError> {
    let values: Vec<String> = match wanted_signals(source.signal.as_deref()) {
        Wanted::One(Some(n)) => vec![n.to_string()],
        Wanted::Among(Some(list)) => list,
        Wanted::One(None) | Wanted::Among(None) => names
            .iter()
            .filter(|n| time.is_none_or(|t| *n != t))
            .cloned()
            .collect(),
    };
    if values.is_empty() {
        return Err(ReplayError::Refused(format!(
            "{}: no value column besides the time column",
            path.display()
        )));
    }
    Ok(values.into_iter().map(ColumnRef::Name).collect())
}

/// How to read the CSV recording at `path`: the options (the first value
/// column as their column), the value columns, how the samples are got so
/// far, and the time column's name.
pub(super) fn csv_plan(
    path: &Path,
    source: &Source,
) -> Result<(CsvSignalOptions, Vec<ColumnRef>, InputInfo, Option<String>), ReplayError> {
    let names = csv_column_names(path)?;
    let (options, input, time) = csv_rate_options(path, source, &names)?;
    let columns = value_columns(path, source, &names, time.as_deref())?;
    let options = CsvSignalOptions {
        column: columns[0].clone(),
        ..options
    };
    Ok((options, columns, input, time))
}

fn load_csv(path: &Path, name: String, source: &Source) -> Result<Recording, ReplayError> {
    let fail = |m: String| ReplayError::Refused(format!("{}: {m}", path.display()));
    let (options, columns, mut input, time) = csv_plan(path, source)?;
    let read = read_csv_signals(path, &columns, &options)?;
    input.resampled = read.time.and_then(|t| t.resampled);
    let fs = read.signals[0].fs;
    // The pipeline's range, checked here rather than in the records crate:
    // its CSV reader also serves motion and reference columns at other rates.
    if let Err(mut e) = check_sample_rate(fs) {
        // A measured rate to 4 decimals, unless that would round it into the range.
        let shown = (fs * 1e4).round() / 1e4;
        if check_sample_rate(shown).is_err() {
            e.rate_hz = shown;
        }
        let hint = if time.is_some() {
            MEASURED_RATE_HINT
        } else {
            ""
        };
        return Err(fail(format!("{e}{hint}")));
    }
    let (signal, channel) = pick(path, read.signals)?;
    input.channel = channel;
    let motion = match &source.motion {
        Some(names) => Some(motion::load_csv(path, names, &options, &signal)?),
        None => None,
    };
    Ok(Recording {
        name,
        path: path.to_path_buf(),
        signal,
        input,
        motion,
        record_options: source.record_options.clone(),
    })
}
