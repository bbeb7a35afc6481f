//! A CSV recording's rate: given, or from its time column (named, or
//! found by name) in a unit given, named or guessed from the median frame
//! step (found in passes over the file, so a long one is never in memory
//! whole).

use super::feed::BLOCK_FRAMES;
use super::{InputInfo, ReplayError, Source};
use plethwire_dsp::pipeline::{MAX_RATE_HZ, MIN_RATE_HZ};
use plethwire_records::order_stat::select;
use plethwire_records::{ColumnRef, CsvBlocks, CsvSignalOptions, Rate, TimeUnit};
use std::path::Path;

/// A time column's name, its unit (`None`: to be guessed) and where the
/// unit came from.
type TimedColumn = (String, Option<TimeUnit>, &'static str);

const TIME_COLUMN_NAMES: [(&str, Option<TimeUnit>); 4] = [
    ("time", None),
    ("time_s", Some(TimeUnit::S)),
    ("time_ms", Some(TimeUnit::Ms)),
    ("time_us", Some(TimeUnit::Us)),
];

/// The rate of a CSV recording with columns `names`: the options to read
/// it with (a given rate, or a time column with its unit, measured or
/// guessed), how the samples are got so far, and the time column's name.
pub(super) fn csv_rate_options(
    path: &Path,
    source: &Source,
    names: &[String],
) -> Result<(CsvSignalOptions, InputInfo, Option<String>), ReplayError> {
    let fail = |m: String| ReplayError::Refused(format!("{}: {m}", path.display()));
    let given_unit = source
        .time_unit
        .as_deref()
        .map(TimeUnit::parse)
        .transpose()
        .map_err(|e| fail(e.to_string()))?;
    let time = time_column(source, names, given_unit).map_err(|e| fail(e.to_string()))?;
    let placeholder = ColumnRef::Index(0);
    let mut options = CsvSignalOptions::with_rate(placeholder, source.rate.unwrap_or(1.0));
    let mut input = InputInfo::default();
    let Some((column, unit, unit_from)) = time else {
        return Ok((options, input, None));
    };
    let unit = match unit {
        Some(u) => u,
        None => guess_unit(path, &column)?,
    };
    let time_ref = ColumnRef::Name(column.clone());
    options.rate = match source.rate {
        Some(fs) => Rate::Resample { time: time_ref, fs },
        None => Rate::FromTime(time_ref),
    };
    options.time_unit = unit;
    input.time_column = Some(column.clone());
    input.time_unit = Some(unit);
    input.time_unit_from = Some(unit_from);
    Ok((options, input, Some(column)))
}

/// Said after a rate outside the pipeline's that a time column gave.
pub(super) const MEASURED_RATE_HINT: &str =
    " (measured from the time column: check --time-unit, or give the grid rate with --rate)";

/// A CSV recording with neither a rate nor a time column.
#[derive(Debug, thiserror::Error)]
#[error("a CSV recording needs --rate HZ or --time-column NAME (no column named time, time_s, time_ms or time_us)")]
struct NoTimeColumn;

/// A CSV file's time column, its unit (`None`: to be guessed) and where the
/// unit came from; `None` when the rate is given and no time column named.
fn time_column(
    source: &Source,
    names: &[String],
    given_unit: Option<TimeUnit>,
) -> Result<Option<TimedColumn>, NoTimeColumn> {
    Ok(match (&source.time_column, source.rate) {
        (Some(t), _) => Some((t.clone(), Some(given_unit.unwrap_or_default()), {
            if given_unit.is_some() {
                "given"
            } else {
                "default"
            }
        })),
        (None, Some(_)) => None,
        (None, None) => {
            let found = names.iter().find_map(|n| {
                TIME_COLUMN_NAMES
                    .iter()
                    .find(|(t, _)| n.eq_ignore_ascii_case(t))
                    .map(|(_, unit)| (n.clone(), *unit))
            });
            let (column, unit) = found.ok_or(NoTimeColumn)?;
            Some(match (given_unit, unit) {
                (Some(u), _) => (column, Some(u), "given"),
                (None, Some(u)) => (column, Some(u), "column name"),
                (None, None) => (column, None, "guessed from the frame steps"),
            })
        }
    })
}

/// The unit of s, ms and us that puts the median step of `column` within
/// the pipeline's rates: the median of the steps that are above zero,
/// found in passes over the column (`plethwire_records::order_stat`), so
/// a long file is never in memory whole.
fn guess_unit(path: &Path, column: &str) -> Result<TimeUnit, ReplayError> {
    let options = CsvSignalOptions::with_rate(ColumnRef::Name(column.to_string()), 1.0);
    // Each step above zero of the column, in order, to `each`.
    let steps = |each: &mut dyn FnMut(f64)| -> plethwire_records::Result<()> {
        let mut blocks = CsvBlocks::open(path, std::slice::from_ref(&options.column), &options)?;
        let mut out = [Vec::new()];
        let mut before: Option<f64> = None;
        while blocks.read_into(BLOCK_FRAMES, &mut out)? {
            for &t in &out[0] {
                if let Some(d) = before.map(|b| t - b).filter(|d| *d > 0.0) {
                    each(d);
                }
                before = Some(t);
            }
        }
        Ok(())
    };
    let mut count = 0u64;
    steps(&mut |_| count += 1)?;
    let step = select(count / 2, |push| steps(push))?;
    [TimeUnit::S, TimeUnit::Ms, TimeUnit::Us]
        .into_iter()
        .find(|u| {
            step.is_some_and(|d| {
                let hz = 1.0 / (d * u.seconds());
                (f64::from(MIN_RATE_HZ)..=f64::from(MAX_RATE_HZ)).contains(&hz)
            })
        })
        .ok_or_else(|| {
            ReplayError::Refused(format!(
                "{}: column {column:?}: no time unit (s, ms, us) puts its median step within {MIN_RATE_HZ}-{MAX_RATE_HZ} Hz; give --time-unit and --rate",
                path.display()
            ))
        })
}
