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
//! Time cells must be finite numbers, always.

use std::path::Path;

use super::error::{Error, ErrorKind, Result};
use super::LoadedSignal;

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
    /// Measured from a column of times in seconds, which must be uniform.
    FromTime(ColumnRef),
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
    /// Sample rate: 1 / the step of the least-squares line through the times.
    pub fs: f64,
    /// Time of the first row, in seconds.
    pub start_s: f64,
    /// Largest distance of a time from the fitted grid, in sample periods.
    pub max_deviation: f64,
}

/// A signal read from CSV, with the time base when it was measured.
#[derive(Debug, Clone, PartialEq)]
pub struct CsvSignal {
    /// The signal; its name is the column's header text (or `#index`).
    pub signal: LoadedSignal,
    /// The measured time base, for [`Rate::FromTime`].
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
    let path = path.as_ref();
    if !options.header {
        if let ColumnRef::Name(_) = &options.column {
            return Err(Error::new(
                path,
                ErrorKind::Invalid(
                    "columns of a file without a header can only be picked by index".into(),
                ),
            ));
        }
    }
    let table = Table::read(path, options.header)?;
    let col = table.find(path, &options.column)?;
    if table.rows.is_empty() {
        return Err(Error::new(path, ErrorKind::Syntax("no data rows".into())));
    }
    let not_number = |no: usize, i: usize, text: &str| {
        Error::new(
            path,
            ErrorKind::NotANumber {
                column: table.name(i),
                text: text.to_string(),
            },
        )
        .at_line(no)
    };
    let mut samples = Vec::with_capacity(table.rows.len());
    for (no, cells) in &table.rows {
        let text = &cells[col];
        let v = match parse_cell(text) {
            Ok(Some(v)) => v,
            Ok(None) if options.empty_as_nan => f64::NAN,
            Ok(None) => {
                return Err(Error::new(
                    path,
                    ErrorKind::Invalid(format!("column {:?}: empty cell", table.name(col))),
                )
                .at_line(*no))
            }
            Err(()) => return Err(not_number(*no, col, text)),
        };
        samples.push(v);
    }
    let (fs, time) = match &options.rate {
        Rate::Given(fs) => {
            if !(fs.is_finite() && *fs > 0.0) {
                return Err(Error::new(
                    path,
                    ErrorKind::Invalid(format!("sample rate {fs} must be above 0")),
                ));
            }
            (*fs, None)
        }
        Rate::FromTime(time_col) => {
            let tc = table.find(path, time_col)?;
            let mut times = Vec::with_capacity(table.rows.len());
            for (no, cells) in &table.rows {
                match parse_cell(&cells[tc]) {
                    Ok(Some(t)) if t.is_finite() => times.push((*no, t)),
                    _ => return Err(not_number(*no, tc, &cells[tc])),
                }
            }
            let base = time_base(&times, options.tolerance).map_err(|(line, m)| {
                let e = Error::new(
                    path,
                    ErrorKind::Invalid(format!("column {:?}: {m}", table.name(tc))),
                );
                match line {
                    Some(l) => e.at_line(l),
                    None => e,
                }
            })?;
            (base.fs, Some(base))
        }
    };
    Ok(CsvSignal {
        signal: LoadedSignal {
            name: table.name(col),
            units: None,
            fs,
            samples,
        },
        time,
    })
}

/// Fit a uniform grid to `times` ((line, seconds) pairs) by least squares
/// and check every time lies within `tolerance` periods of it.
fn time_base(
    times: &[(usize, f64)],
    tolerance: f64,
) -> std::result::Result<TimeBase, (Option<usize>, String)> {
    if times.len() < 2 {
        return Err((
            None,
            "at least two rows are needed to measure the sample rate".into(),
        ));
    }
    for w in times.windows(2) {
        if w[1].1 <= w[0].1 {
            return Err((
                Some(w[1].0),
                format!("time {} does not follow {}", w[1].1, w[0].1),
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
    let mut worst = (0.0f64, times[0].0);
    for (k, &(line, t)) in times.iter().enumerate() {
        let off = ((t - (grid_start + k as f64 * period)) / period).abs();
        if off > worst.0 {
            worst = (off, line);
        }
    }
    // Written so that a NaN tolerance or deviation fails too.
    let within = matches!(
        worst.0.partial_cmp(&tolerance),
        Some(std::cmp::Ordering::Less | std::cmp::Ordering::Equal)
    );
    if !within {
        return Err((
            Some(worst.1),
            format!(
                "times are not uniform: {:.3} sample periods off the grid of {:.6} Hz (tolerance {tolerance})",
                worst.0,
                1.0 / period
            ),
        ));
    }
    Ok(TimeBase {
        fs: 1.0 / period,
        start_s: times[0].1,
        max_deviation: worst.0,
    })
}

#[cfg(test)]
mod tests;
