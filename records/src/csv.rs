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

use super::error::{Error, ErrorKind, Result};
use super::resample::{median_rate, ResampleReport, Resampler, DEFAULT_MAX_GAP_S};
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

    /// Parse `s`, `ms` or `us`; anything else is a one-line message.
    pub fn parse(text: &str) -> std::result::Result<TimeUnit, String> {
        match text {
            "s" => Ok(TimeUnit::S),
            "ms" => Ok(TimeUnit::Ms),
            "us" => Ok(TimeUnit::Us),
            other => Err(format!(
                "unknown time unit {} (use s, ms or us)",
                super::error::quoted(other)
            )),
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

/// The rows of a CSV file, split into cells.
pub(super) struct Table {
    /// Header cells, when the file has a header.
    pub names: Option<Vec<String>>,
    /// (1-based line number, cells) of each data row; blank lines are skipped.
    pub rows: Vec<(usize, Vec<String>)>,
}

impl Table {
    /// Read `path`; with `header`, its first non-blank line names the columns.
    pub(super) fn read(path: &Path, header: bool) -> Result<Table> {
        let bytes = std::fs::read(path).map_err(|e| Error::from_io(path, "read", &e))?;
        let bytes = bytes.strip_prefix(b"\xEF\xBB\xBF").unwrap_or(&bytes);
        if bytes.iter().all(|b| b.is_ascii_whitespace()) {
            return Err(Error::new(path, ErrorKind::Empty));
        }
        let mut names = None;
        let mut rows = Vec::new();
        for (i, raw) in bytes.split(|&b| b == b'\n').enumerate() {
            let no = i + 1;
            let text =
                std::str::from_utf8(raw).map_err(|_| Error::syntax(path, no, "not UTF-8 text"))?;
            let text = text.strip_suffix('\r').unwrap_or(text);
            if text.trim().is_empty() {
                continue;
            }
            let cells = split_line(text).map_err(|m| Error::syntax(path, no, m))?;
            if header && names.is_none() {
                names = Some(cells);
                continue;
            }
            let width = match &names {
                Some(n) => Some(n.len()),
                None => rows.first().map(|(_, r): &(usize, Vec<String>)| r.len()),
            };
            if let Some(w) = width {
                if cells.len() != w {
                    return Err(Error::syntax(
                        path,
                        no,
                        format!("{} fields, expected {w}", cells.len()),
                    ));
                }
            }
            rows.push((no, cells));
        }
        Ok(Table { names, rows })
    }

    /// Position of `column`, or an error listing the columns there are.
    pub(super) fn find(&self, path: &Path, column: &ColumnRef) -> Result<usize> {
        let width = self
            .names
            .as_ref()
            .map(Vec::len)
            .or_else(|| self.rows.first().map(|(_, r)| r.len()))
            .unwrap_or(0);
        let found = match column {
            ColumnRef::Index(i) => Some(*i).filter(|&i| i < width),
            ColumnRef::Name(n) => self
                .names
                .as_ref()
                .and_then(|names| names.iter().position(|c| c == n)),
        };
        found.ok_or_else(|| {
            Error::new(
                path,
                ErrorKind::NoSuchSignal {
                    wanted: match column {
                        ColumnRef::Name(n) => n.clone(),
                        ColumnRef::Index(i) => format!("#{i}"),
                    },
                    available: (0..width).map(|i| self.name(i)).collect(),
                },
            )
        })
    }

    /// Header text of column `i`, or `#i` without a header.
    pub(super) fn name(&self, i: usize) -> String {
        self.names
            .as_ref()
            .and_then(|n| n.get(i).cloned())
            .unwrap_or_else(|| format!("#{i}"))
    }
}

/// Split one line into cells.
fn split_line(line: &str) -> std::result::Result<Vec<String>, String> {
    let mut cells = Vec::new();
    let mut chars = line.chars().peekable();
    loop {
        while chars.peek().is_some_and(|c| *c == ' ' || *c == '\t') {
            chars.next();
        }
        let mut cell = String::new();
        if chars.peek() == Some(&'"') {
            chars.next();
            loop {
                match chars.next() {
                    Some('"') if chars.peek() == Some(&'"') => {
                        chars.next();
                        cell.push('"');
                    }
                    Some('"') => break,
                    Some(c) => cell.push(c),
                    None => {
                        return Err(format!(
                            "field {} opens a quote it never closes",
                            cells.len() + 1
                        ))
                    }
                }
            }
            while chars.peek().is_some_and(|c| *c == ' ' || *c == '\t') {
                chars.next();
            }
            match chars.next() {
                None => {
                    cells.push(cell);
                    return Ok(cells);
                }
                Some(',') => cells.push(cell),
                Some(c) => {
                    return Err(format!(
                        "field {}: {c:?} after the closing quote",
                        cells.len() + 1
                    ))
                }
            }
        } else {
            loop {
                match chars.next() {
                    None => {
                        cells.push(cell.trim_end().to_string());
                        return Ok(cells);
                    }
                    Some(',') => break,
                    Some(c) => cell.push(c),
                }
            }
            cells.push(cell.trim_end().to_string());
        }
    }
}

/// A cell's number: `Ok(None)` for an empty cell, NaN for `nan`.
pub(super) fn parse_cell(text: &str) -> std::result::Result<Option<f64>, ()> {
    if text.is_empty() {
        return Ok(None);
    }
    if text.eq_ignore_ascii_case("nan") {
        return Ok(Some(f64::NAN));
    }
    match text.parse::<f64>() {
        Ok(v) if v.is_finite() => Ok(Some(v)),
        _ => Err(()),
    }
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
    let table = Table::read(path, true)?;
    Ok(table.names.unwrap_or_default())
}

/// Read `columns` of the CSV file at `path` (in place of
/// `options.column`) on one time base: every column is resampled onto the
/// same grid when the times are uneven.
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
    let table = Table::read(path, options.header)?;
    let cols = columns
        .iter()
        .map(|c| table.find(path, c))
        .collect::<Result<Vec<usize>>>()?;
    if table.rows.is_empty() {
        return Err(Error::new(path, ErrorKind::Syntax("no data rows".into())));
    }
    let mut values: Vec<Vec<f64>> = Vec::with_capacity(cols.len());
    for &col in &cols {
        values.push(read_values(path, &table, col, options.empty_as_nan)?);
    }
    let (time_col, grid) = match &options.rate {
        Rate::Given(fs) => {
            if !(fs.is_finite() && *fs > 0.0) {
                return Err(Error::new(
                    path,
                    ErrorKind::Invalid(format!("sample rate {fs} must be above 0")),
                ));
            }
            return Ok(CsvSignals {
                signals: named(&table, &cols, values, *fs),
                time: None,
            });
        }
        Rate::FromTime(t) => (t, None),
        Rate::Resample { time, fs } => {
            if !(fs.is_finite() && *fs > 0.0) {
                return Err(Error::new(
                    path,
                    ErrorKind::Invalid(format!("grid rate {fs} must be above 0")),
                ));
            }
            (time, Some(*fs))
        }
    };
    let tc = table.find(path, time_col)?;
    let mut times = Vec::with_capacity(table.rows.len());
    for (no, cells) in &table.rows {
        match parse_cell(&cells[tc]) {
            Ok(Some(t)) if t.is_finite() => times.push((*no, t * options.time_unit.seconds())),
            _ => return Err(not_number(path, &table, *no, tc, &cells[tc])),
        }
    }
    let in_column = |(line, m): (Option<usize>, String)| {
        let e = Error::new(
            path,
            ErrorKind::Invalid(format!("column {:?}: {m}", table.name(tc))),
        );
        match line {
            Some(l) => e.at_line(l),
            None => e,
        }
    };
    let fit = time_fit(&times).map_err(in_column)?;
    let uniform = fit.max_deviation <= options.tolerance;
    if uniform && grid.is_none() {
        let base = TimeBase {
            unit: options.time_unit,
            resampled: None,
            ..fit
        };
        return Ok(CsvSignals {
            signals: named(&table, &cols, values, base.fs),
            time: Some(base),
        });
    }
    let seconds: Vec<f64> = times.iter().map(|&(_, t)| t).collect();
    let fs = grid.unwrap_or_else(|| median_rate(&seconds));
    let span = seconds[seconds.len() - 1] - seconds[0];
    if span * fs > MAX_GRID_SAMPLES {
        return Err(Error::new(
            path,
            ErrorKind::Invalid(format!(
                "a grid at {fs:.6} Hz over {span} s would hold more than {MAX_GRID_SAMPLES} samples"
            )),
        ));
    }
    let resampler = Resampler {
        fs,
        max_gap_s: options.max_gap_s,
    };
    let slices: Vec<&[f64]> = values.iter().map(Vec::as_slice).collect();
    let (values, mut report) = resampler.run(&seconds, &slices);
    if grid.is_none() {
        report.grid_rate_from = "median frame rate";
    }
    Ok(CsvSignals {
        signals: named(&table, &cols, values, fs),
        time: Some(TimeBase {
            fs,
            unit: options.time_unit,
            resampled: Some(report),
            ..fit
        }),
    })
}

/// The error for a cell of a number column that is not a number.
fn not_number(path: &Path, table: &Table, no: usize, col: usize, text: &str) -> Error {
    Error::new(
        path,
        ErrorKind::NotANumber {
            column: table.name(col),
            text: text.to_string(),
        },
    )
    .at_line(no)
}

/// The numbers of column `col`.
fn read_values(path: &Path, table: &Table, col: usize, empty_as_nan: bool) -> Result<Vec<f64>> {
    let mut samples = Vec::with_capacity(table.rows.len());
    for (no, cells) in &table.rows {
        let text = &cells[col];
        let v = match parse_cell(text) {
            Ok(Some(v)) => v,
            Ok(None) if empty_as_nan => f64::NAN,
            Ok(None) => {
                return Err(Error::new(
                    path,
                    ErrorKind::Invalid(format!("column {:?}: empty cell", table.name(col))),
                )
                .at_line(*no))
            }
            Err(()) => return Err(not_number(path, table, *no, col, text)),
        };
        samples.push(v);
    }
    Ok(samples)
}

/// Columns `cols` with their `values` as signals at `fs`.
fn named(table: &Table, cols: &[usize], values: Vec<Vec<f64>>, fs: f64) -> Vec<LoadedSignal> {
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

/// Fit a uniform grid to `times` ((line, seconds) pairs) by least
/// squares; refuse times that do not increase.
fn time_fit(times: &[(usize, f64)]) -> std::result::Result<TimeBase, (Option<usize>, String)> {
    if times.len() < 2 {
        return Err((
            None,
            "at least two rows are needed to measure the sample rate".into(),
        ));
    }
    for w in times.windows(2) {
        if w[1].1 <= w[0].1 {
            let what = if w[1].1 == w[0].1 {
                "repeats"
            } else {
                "goes back"
            };
            return Err((
                Some(w[1].0),
                format!(
                    "time {} s {what} (row before: {} s); times must increase",
                    w[1].1, w[0].1
                ),
            ));
        }
    }
    // Least squares rather than first-to-last: rounding of the two end
    // times would otherwise bias the rate.
    let n = times.len() as f64;
    let k_mean = (n - 1.0) / 2.0;
    let t_mean = times.iter().map(|&(_, t)| t).sum::<f64>() / n;
    let (mut skt, mut skk) = (0.0, 0.0);
    for (k, &(_, t)) in times.iter().enumerate() {
        let dk = k as f64 - k_mean;
        skt += dk * (t - t_mean);
        skk += dk * dk;
    }
    let period = skt / skk;
    let grid_start = t_mean - period * k_mean;
    let worst = times
        .iter()
        .enumerate()
        .map(|(k, &(_, t))| ((t - (grid_start + k as f64 * period)) / period).abs())
        .fold(0.0f64, f64::max);
    Ok(TimeBase {
        fs: 1.0 / period,
        start_s: times[0].1,
        max_deviation: worst,
        unit: TimeUnit::S,
        resampled: None,
    })
}

#[cfg(test)]
mod tests;
