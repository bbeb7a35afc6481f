//! The time base of a CSV file's time column measured in passes over the
//! file, never holding its rows: the same rate, fit, refusals and
//! resampling report, bit for bit, as the whole read
//! ([`super::time_base::on_time_base`]) gives.
//!
//! Pass 1 reads every cell of the value columns and the time column (so
//! a bad cell is refused where the whole read refuses it), counts the
//! rows and sums the times; pass 2 the least-squares sums, pass 3 the
//! worst distance from the fitted grid. Uneven times then take the
//! median frame step ([`crate::order_stat`], a few passes) unless a grid
//! rate is given, and one last pass walks the grid for the report.
//! Sums run in file order, as the whole read's do, so they round alike.

use super::table::Table;
use super::time_base::{check_grid, time_cell};
use super::{value_cell, CsvSignalOptions, TimeBase};
use crate::error::{Error, ErrorKind, Result};
use crate::order_stat::select;
use crate::resample::{GridWalk, Resampler};
use std::path::Path;

/// A timed CSV file measured: its time base, and the walk onto the grid
/// (not yet started) when its rows are resampled.
#[derive(Debug, Clone)]
pub(super) struct Measured {
    /// The time base, with the resampling report when resampled.
    pub(super) base: TimeBase,
    /// Data rows.
    pub(super) rows: u64,
    /// The grid walk, `None` when the rows are the samples.
    pub(super) walk: Option<GridWalk>,
}

/// The time cell of column `tc` of each row of `path`, in order, to `each`.
fn time_pass(
    path: &Path,
    options: &CsvSignalOptions,
    tc: usize,
    mut each: impl FnMut(usize, f64),
) -> Result<()> {
    let mut table = Table::open(path, options.header)?;
    let mut cells = Vec::new();
    while let Some(no) = table.next_row_into(path, &mut cells)? {
        each(no, time_cell(path, &table, no, tc, &cells[tc], options)?);
    }
    Ok(())
}

/// What pass 1 learnt.
struct FirstPass {
    rows: u64,
    sum: f64,
    first: f64,
    last: f64,
    /// The first time that does not increase: (line, time, time before).
    disorder: Option<(usize, f64, f64)>,
}

/// Pass 1: every cell of `cols` and `tc` read as the whole read reads
/// them, row by row, the first bad one refused.
fn first_pass(
    path: &Path,
    options: &CsvSignalOptions,
    cols: &[usize],
    tc: usize,
) -> Result<FirstPass> {
    let mut table = Table::open(path, options.header)?;
    let mut p = FirstPass {
        rows: 0,
        sum: 0.0,
        first: 0.0,
        last: 0.0,
        disorder: None,
    };
    let mut cells = Vec::new();
    while let Some(no) = table.next_row_into(path, &mut cells)? {
        for &col in cols {
            value_cell(path, &table, no, col, &cells[col], options.empty_as_nan)?;
        }
        let t = time_cell(path, &table, no, tc, &cells[tc], options)?;
        if p.rows == 0 {
            p.first = t;
        } else if t <= p.last && p.disorder.is_none() {
            p.disorder = Some((no, t, p.last));
        }
        p.sum += t;
        p.last = t;
        p.rows += 1;
    }
    if p.rows == 0 {
        return Err(Error::new(path, ErrorKind::Syntax("no data rows".into())));
    }
    Ok(p)
}

/// Measure the time column `tc` (named `column`) of `path` for the value
/// columns `cols`: uniform rows keep their own rate unless a `grid` rate
/// is given; uneven ones are resampled onto `grid` or the median frame
/// rate.
pub(super) fn measure(
    path: &Path,
    options: &CsvSignalOptions,
    (cols, tc, column): (&[usize], usize, &str),
    grid: Option<f64>,
) -> Result<Measured> {
    let in_column =
        |m: String| Error::new(path, ErrorKind::Invalid(format!("column {column:?}: {m}")));
    let p = first_pass(path, options, cols, tc)?;
    if p.rows < 2 {
        return Err(in_column(
            "at least two rows are needed to measure the sample rate".into(),
        ));
    }
    if let Some((no, t, before)) = p.disorder {
        let what = if t == before { "repeats" } else { "goes back" };
        return Err(in_column(format!(
            "time {t} s {what} (row before: {before} s); times must increase"
        ))
        .at_line(no));
    }
    let n = p.rows as f64;
    let k_mean = (n - 1.0) / 2.0;
    let t_mean = p.sum / n;
    let (mut skt, mut skk, mut k) = (0.0, 0.0, 0u64);
    time_pass(path, options, tc, |_, t| {
        let dk = k as f64 - k_mean;
        skt += dk * (t - t_mean);
        skk += dk * dk;
        k += 1;
    })?;
    let period = skt / skk;
    if !(period.is_finite() && period > 0.0 && (1.0 / period).is_finite()) {
        return Err(in_column(format!(
            "times from {} s to {} s give no finite sample rate",
            p.first, p.last
        )));
    }
    let grid_start = t_mean - period * k_mean;
    let (mut worst, mut k) = (0.0f64, 0u64);
    time_pass(path, options, tc, |_, t| {
        worst = worst.max(((t - (grid_start + k as f64 * period)) / period).abs());
        k += 1;
    })?;
    let mut base = TimeBase {
        fs: 1.0 / period,
        start_s: p.first,
        max_deviation: worst,
        unit: options.time_unit,
        resampled: None,
    };
    if worst <= options.tolerance && grid.is_none() {
        return Ok(Measured {
            base,
            rows: p.rows,
            walk: None,
        });
    }
    let fs = match grid {
        Some(fs) => fs,
        None => median_rate(path, options, tc, p.rows)?,
    };
    check_grid(path, fs, p.last - p.first, p.rows)?;
    let resampler = Resampler {
        fs,
        max_gap_s: options.max_gap_s,
    };
    let fresh = GridWalk::new(resampler, p.rows, p.first, p.last);
    let mut walk = fresh.clone();
    time_pass(path, options, tc, |_, t| {
        walk.push(t, &[]);
        while walk.take(usize::MAX, &mut []) > 0 {}
    })?;
    let mut report = walk.report();
    if grid.is_none() {
        report.grid_rate_from = "median frame rate";
    }
    base.fs = fs;
    base.resampled = Some(report);
    Ok(Measured {
        base,
        rows: p.rows,
        walk: Some(fresh),
    })
}

/// The median of the `rows - 1` steps between successive times, as a
/// rate (as [`crate::resample::median_rate`] gives it): the lower middle
/// step by [`select`], and for an even count the next one up in one more
/// pass (the same value again, or the least one above it).
fn median_rate(path: &Path, options: &CsvSignalOptions, tc: usize, rows: u64) -> Result<f64> {
    let steps = rows - 1;
    let each_step = |push: &mut dyn FnMut(f64)| {
        let mut before = None;
        time_pass(path, options, tc, |_, t| {
            if let Some(b) = before {
                push(t - b);
            }
            before = Some(t);
        })
    };
    let lower = select((steps - 1) / 2, each_step)?.expect("the rank lies among the steps");
    if steps % 2 == 1 {
        return Ok(1.0 / lower);
    }
    let (mut at_most, mut above) = (0u64, f64::INFINITY);
    each_step(&mut |d| {
        if d.total_cmp(&lower).is_le() {
            at_most += 1;
        } else if d.total_cmp(&above).is_lt() {
            above = d;
        }
    })?;
    let upper = if at_most > steps / 2 { lower } else { above };
    Ok(1.0 / ((lower + upper) / 2.0))
}
