//! The time base of a CSV file's rows: the rate fitted to a time column,
//! or a uniform grid the rows are resampled onto.

use super::table::{parse_cell, Table};
use super::MAX_GRID_SAMPLES;
use super::{named, not_number, CsvSignalOptions, CsvSignals, TimeBase, TimeUnit};
use crate::error::{Error, ErrorKind, Result};
use crate::resample::{median_rate, Resampler};
use std::path::Path;

/// Most grid samples resampling makes for each row of the file: a camera
/// at 1 frame a second put on a 1000 Hz grid.
pub const MAX_GRID_SAMPLES_PER_ROW: f64 = 1000.0;

/// Largest time, in seconds from zero, a time cell may hold: over 30 000
/// years, past any clock a recording carries (Unix time in microseconds
/// is about 1.7e9 s), and far from where f64 steps lose the sample period.
pub const MAX_TIME_S: f64 = 1e12;

/// The time, in seconds, in cell `text` of time column `col` on line `no`.
pub(super) fn time_cell(
    path: &Path,
    table: &Table,
    no: usize,
    col: usize,
    text: &str,
    options: &CsvSignalOptions,
) -> Result<f64> {
    match parse_cell(text) {
        Ok(Some(t)) if t.is_finite() => {
            let seconds = t * options.time_unit.seconds();
            if seconds.abs() > MAX_TIME_S {
                return Err(Error::new(
                    path,
                    ErrorKind::Implausible {
                        field: "time",
                        value: text.to_string(),
                        expected: format!("times lie within {MAX_TIME_S:e} s of zero"),
                    },
                )
                .at_line(no));
            }
            Ok(seconds)
        }
        _ => Err(not_number(path, table, no, col, text)),
    }
}

/// Columns `cols` of `table` with their `values` on the time base of
/// column `tc`, whose times are (line, seconds) pairs: the rows' own
/// rate when the times are uniform (and no `grid` rate is asked for),
/// else resampled onto a uniform grid.
pub(super) fn on_time_base(
    path: &Path,
    table: &Table,
    cols: &[usize],
    values: Vec<Vec<f64>>,
    (tc, times): (usize, &[(usize, f64)]),
    grid: Option<f64>,
    options: &CsvSignalOptions,
) -> Result<CsvSignals> {
    let fit = time_fit(path, &table.name(tc), times)?;
    let uniform = fit.max_deviation <= options.tolerance;
    if uniform && grid.is_none() {
        let base = TimeBase {
            unit: options.time_unit,
            resampled: None,
            ..fit
        };
        return Ok(CsvSignals {
            signals: named(table, cols, values, base.fs),
            time: Some(base),
        });
    }
    let seconds: Vec<f64> = times.iter().map(|&(_, t)| t).collect();
    let fs = grid.unwrap_or_else(|| median_rate(&seconds));
    let span = seconds[seconds.len() - 1] - seconds[0];
    check_grid(path, fs, span, seconds.len() as u64)?;
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
        signals: named(table, cols, values, fs),
        time: Some(TimeBase {
            fs,
            unit: options.time_unit,
            resampled: Some(report),
            ..fit
        }),
    })
}

/// Fit a uniform grid to `times` ((line, seconds) pairs) of `column` by
/// least squares; refuse times that do not increase.
fn time_fit(path: &Path, column: &str, times: &[(usize, f64)]) -> Result<TimeBase> {
    let in_column =
        |m: String| Error::new(path, ErrorKind::Invalid(format!("column {column:?}: {m}")));
    if times.len() < 2 {
        return Err(in_column(
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
            return Err(in_column(format!(
                "time {} s {what} (row before: {} s); times must increase",
                w[1].1, w[0].1
            ))
            .at_line(w[1].0));
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
    if !(period.is_finite() && period > 0.0 && (1.0 / period).is_finite()) {
        return Err(in_column(format!(
            "times from {} s to {} s give no finite sample rate",
            times[0].1,
            times[times.len() - 1].1
        )));
    }
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

/// Refuse a grid at `fs` Hz over `span` seconds of `rows` rows that
/// would be too large, as the whole read does.
pub(super) fn check_grid(path: &Path, fs: f64, span: f64, rows: u64) -> Result<()> {
    // Bounded by the rows there are too: three rows spread over days
    // must not fill a grid of tens of millions of samples.
    let per_row = rows as f64 * MAX_GRID_SAMPLES_PER_ROW;
    if span * fs > MAX_GRID_SAMPLES || span * fs > per_row {
        return Err(Error::new(
            path,
            ErrorKind::Invalid(format!(
                "a grid at {fs:.6} Hz over {span} s would hold {:.0} samples for {rows} rows, more than {} (at most {MAX_GRID_SAMPLES_PER_ROW} a row, {MAX_GRID_SAMPLES} in all)",
                span * fs,
                per_row.min(MAX_GRID_SAMPLES),
            )),
        ));
    }
    Ok(())
}
