//! One column of a CSV file as a signal.
//!
//! The text follows RFC 4180 (comma-separated, optional double quotes with
//! `""` for a quote inside), one record per line: a quoted field may not
//! span lines. Blanks around a field are ignored; `\r\n` line ends and a
//! leading byte-order mark are accepted.
//!
//! Cells of the value column must be numbers. The text `nan` (any case)
//! is read as NaN, a missing sample; an empty cell is an error unless
//! [`CsvSignalOptions::empty_as_nan`] is set, when it too becomes NaN.
//! Time cells must be finite numbers, always, in the [`TimeUnit`] given
//! (seconds by default), and must increase from row to row: a time that
//! goes back or repeats is refused with its line, since two frames at one
//! instant, or out of order, leave no way to know which came first.
//!
//! Times that are uniform (every row within [`CsvSignalOptions::tolerance`]
//! periods of a fitted grid) give the rate and the rows are the samples.
//! Uneven times (camera frames) are resampled onto a uniform grid by linear
//! interpolation ([`super::resample`]): at a given rate
//! ([`Rate::Resample`]) or at the median frame rate.

use std::path::Path;

mod blocks;
mod table;
mod time_base;
mod time_passes;

pub use blocks::CsvBlocks;
pub use table::MAX_ROWS;
pub(crate) use table::{parse_cell, Table};
pub use time_base::{MAX_GRID_SAMPLES_PER_ROW, MAX_TIME_S};

use super::error::{Error, ErrorKind, Result, UnknownTimeUnit};
use super::resample::{ResampleReport, DEFAULT_MAX_GAP_S};
use super::LoadedSignal;
use serde::Serialize;

/// Most samples a resampling grid may hold (a rate or unit given wrongly
/// would otherwise ask for memory without end).
pub const MAX_GRID_SAMPLES: f64 = 1e8;

/// The unit of a time column.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum TimeUnit {
    /// Seconds (the default).
    #[default]
    S,
    /// Milliseconds.
    Ms,
    /// Microseconds.
    Us,
}

impl TimeUnit {
    /// Seconds in one of this unit.
    pub fn seconds(self) -> f64 {
        match self {
            TimeUnit::S => 1.0,
            TimeUnit::Ms => 1e-3,
            TimeUnit::Us => 1e-6,
        }
    }

    /// The unit's name: `s`, `ms` or `us`.
    pub fn name(self) -> &'static str {
        match self {
            TimeUnit::S => "s",
            TimeUnit::Ms => "ms",
            TimeUnit::Us => "us",
        }
    }

    /// Parse `s`, `ms` or `us`.
    pub fn parse(text: &str) -> std::result::Result<TimeUnit, UnknownTimeUnit> {
        match text {
            "s" => Ok(TimeUnit::S),
            "ms" => Ok(TimeUnit::Ms),
            "us" => Ok(TimeUnit::Us),
            other => Err(UnknownTimeUnit(other.to_string())),
        }
    }
}

/// A column, by header name or by 0-based position.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum ColumnRef {
    /// The column whose header cell is this text.
    Name(String),
    /// The column at this position, 0 being the first.
    Index(usize),
}

/// Where the sample rate comes from.
#[derive(Debug, Clone, PartialEq)]
pub enum Rate {
    /// Known: samples per second.
    Given(f64),
    /// From a column of times: measured when they are uniform, else the
    /// median frame rate, with the rows resampled onto that grid.
    FromTime(ColumnRef),
    /// From a column of times, the rows always resampled onto a grid at
    /// `fs` Hz.
    Resample {
        /// The time column.
        time: ColumnRef,
        /// Grid rate, Hz.
        fs: f64,
    },
}

/// What [`read_csv_signal`] reads.
#[derive(Debug, Clone, PartialEq)]
pub struct CsvSignalOptions {
    /// The value column.
    pub column: ColumnRef,
    /// The sample rate, or the time column to measure it from.
    pub rate: Rate,
    /// Whether the first line names the columns (default `true`). Without
    /// a header, columns can only be picked by index.
    pub header: bool,
    /// Largest distance allowed between a time cell and the uniform grid
    /// fitted to the times (least squares), as a fraction of the sample
    /// period (default 0.25: times rounded to a few decimals still pass, a
    /// dropped or repeated sample does not).
    pub tolerance: f64,
    /// Read empty value cells as NaN instead of refusing them (default `false`).
    pub empty_as_nan: bool,
    /// Unit of the time column (default seconds).
    pub time_unit: TimeUnit,
    /// When resampling, frames further apart than this (seconds) are not
    /// bridged: the grid samples between them are NaN (default
    /// [`DEFAULT_MAX_GAP_S`]).
    pub max_gap_s: f64,
}

impl CsvSignalOptions {
    /// Read `column` at a known `fs`.
    pub fn with_rate(column: ColumnRef, fs: f64) -> CsvSignalOptions {
        CsvSignalOptions {
            column,
            rate: Rate::Given(fs),
            header: true,
            tolerance: 0.25,
            empty_as_nan: false,
            time_unit: TimeUnit::S,
            max_gap_s: DEFAULT_MAX_GAP_S,
        }
    }

    /// Read `column`, measuring the rate from the seconds in `time`.
    pub fn with_time(column: ColumnRef, time: ColumnRef) -> CsvSignalOptions {
        CsvSignalOptions {
            rate: Rate::FromTime(time),
            ..CsvSignalOptions::with_rate(column, 1.0)
        }
    }
}

/// How a time column turned out.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TimeBase {
    /// Sample rate: 1 / the step of the least-squares line through the
    /// times, or the grid rate when resampled.
    pub fs: f64,
    /// Time of the first row, in seconds.
    pub start_s: f64,
    /// Largest distance of a time from the fitted grid, in sample periods
    /// (of the least-squares grid, resampled or not).
    pub max_deviation: f64,
    /// The unit the times were read in.
    pub unit: TimeUnit,
    /// What resampling did, when the rows were resampled.
    pub resampled: Option<ResampleReport>,
}

/// A signal read from CSV, with the time base when it was measured.
#[derive(Debug, Clone, PartialEq)]
pub struct CsvSignal {
    /// The signal; its name is the column's header text (or `#index`).
    pub signal: LoadedSignal,
    /// The measured time base, for [`Rate::FromTime`] and [`Rate::Resample`].
    pub time: Option<TimeBase>,
}

/// Several columns of one CSV file on one time base.
#[derive(Debug, Clone, PartialEq)]
pub struct CsvSignals {
    /// The signals, in the order asked for.
    pub signals: Vec<LoadedSignal>,
    /// The measured time base, for [`Rate::FromTime`] and [`Rate::Resample`].
    pub time: Option<TimeBase>,
}

/// Read one column of the CSV file at `path` as a signal.
pub fn read_csv_signal(path: impl AsRef<Path>, options: &CsvSignalOptions) -> Result<CsvSignal> {
    let mut read = read_csv_signals(path, std::slice::from_ref(&options.column), options)?;
    Ok(CsvSignal {
        signal: read.signals.remove(0),
        time: read.time,
    })
}

/// The header names of the CSV file at `path` (its first non-blank line).
pub fn csv_column_names(path: impl AsRef<Path>) -> Result<Vec<String>> {
    let path = path.as_ref();
    let table = Table::open(path, true)?;
    Ok(table.names.unwrap_or_default())
}

/// Read `columns` of the CSV file at `path` (in place of
/// `options.column`) on one time base: every column is resampled onto the
/// same grid when the times are uneven. The file is read a line at a
/// time and reading stops at the first error.
pub fn read_csv_signals(
    path: impl AsRef<Path>,
    columns: &[ColumnRef],
    options: &CsvSignalOptions,
) -> Result<CsvSignals> {
    let path = path.as_ref();
    if !options.header && columns.iter().any(|c| matches!(c, ColumnRef::Name(_))) {
        return Err(Error::new(
            path,
            ErrorKind::Invalid(
                "columns of a file without a header can only be picked by index".into(),
            ),
        ));
    }
    // The time column, if any, and the rate given: the samples' own, or
    // the grid's when resampling.
    let (time, grid) = match &options.rate {
        Rate::Given(fs) => (None, Some(positive_rate(path, "sample rate", *fs)?)),
        Rate::FromTime(t) => (Some(t), None),
        Rate::Resample { time, fs } => (Some(time), Some(positive_rate(path, "grid rate", *fs)?)),
    };
    let mut table = Table::open(path, options.header)?;
    let cols = columns
        .iter()
        .map(|c| table.find(path, c))
        .collect::<Result<Vec<usize>>>()?;
    let time_col = time.map(|t| table.find(path, t)).transpose()?;
    let mut values: Vec<Vec<f64>> = vec![Vec::new(); cols.len()];
    let mut times = Vec::new();
    let mut rows = 0usize;
    while let Some((no, cells)) = table.next_row(path)? {
        rows += 1;
        for (column, &col) in values.iter_mut().zip(&cols) {
            column.push(value_cell(
                path,
                &table,
                no,
                col,
                &cells[col],
                options.empty_as_nan,
            )?);
        }
        if let Some(tc) = time_col {
            times.push((
                no,
                time_base::time_cell(path, &table, no, tc, &cells[tc], options)?,
            ));
        }
    }
    if rows == 0 {
        return Err(Error::new(path, ErrorKind::Syntax("no data rows".into())));
    }
    match time_col {
        None => Ok(CsvSignals {
            signals: named(&table, &cols, values, grid.unwrap_or(0.0)),
            time: None,
        }),
        Some(tc) => {
            time_base::on_time_base(path, &table, &cols, values, (tc, &times), grid, options)
        }
    }
}

/// `fs` when it is a finite number above 0; `what` names it in the error.
fn positive_rate(path: &Path, what: &str, fs: f64) -> Result<f64> {
    if fs.is_finite() && fs > 0.0 {
        Ok(fs)
    } else {
        Err(Error::new(
            path,
            ErrorKind::Invalid(format!("{what} {fs} must be above 0")),
        ))
    }
}

/// The error for a cell of a number column that is not a number.
pub(super) fn not_number(path: &Path, table: &Table, no: usize, col: usize, text: &str) -> Error {
    Error::new(
        path,
        ErrorKind::NotANumber {
            column: table.name(col),
            text: text.to_string(),
        },
    )
    .at_line(no)
}

/// The number in cell `text` of value column `col` on line `no`.
fn value_cell(
    path: &Path,
    table: &Table,
    no: usize,
    col: usize,
    text: &str,
    empty_as_nan: bool,
) -> Result<f64> {
    match parse_cell(text) {
        Ok(Some(v)) => Ok(v),
        Ok(None) if empty_as_nan => Ok(f64::NAN),
        Ok(None) => Err(Error::new(
            path,
            ErrorKind::Invalid(format!("column {:?}: empty cell", table.name(col))),
        )
        .at_line(no)),
        Err(()) => Err(not_number(path, table, no, col, text)),
    }
}

/// Columns `cols` with their `values` as signals at `fs`.
pub(super) fn named(
    table: &Table,
    cols: &[usize],
    values: Vec<Vec<f64>>,
    fs: f64,
) -> Vec<LoadedSignal> {
    cols.iter()
        .zip(values)
        .map(|(&c, samples)| LoadedSignal {
            name: table.name(c),
            units: None,
            fs,
            samples,
        })
        .collect()
}

#[cfg(test)]
mod tests;
#[cfg(test)]
mod timed_tests;
