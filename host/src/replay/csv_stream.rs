//! A CSV recording at a given rate (`--rate`, no time column) streamed a
//! block of rows at a time ([`plethwire_records::CsvBlocks`]): one pass
//! over the file first reads every cell of the wanted columns (so a bad
//! cell is refused before any replay, as the whole read refuses it),
//! counts the rows and judges each column when there are several
//! ([`crate::channel::Judge`]); the replay reads the chosen column again.
//! A CSV file with a time column is read whole ([`super::load`]).

use std::path::{Path, PathBuf};

use plethwire_dsp::pipeline::check_sample_rate;
use plethwire_records::{
    csv_column_names, ColumnRef, CsvBlocks, CsvSignalOptions, LoadedSignal, TimeUnit,
};

use super::feed::BLOCK_FRAMES;
use super::load::{wanted_signals, Wanted, COLOUR_CHANNELS};
use super::{InputInfo, Polarity, Recording, ReplayError, Source};
use crate::channel::{choose_among, Judge};

/// The column of a CSV file a streamed replay reads.
#[derive(Debug)]
pub(super) struct CsvColumn {
    pub(super) path: PathBuf,
    pub(super) column: ColumnRef,
    pub(super) options: CsvSignalOptions,
    pub(super) negate: bool,
}

/// The recording, its column and its rows, when `path` (a CSV file) is
/// replayed at a given rate without a time column or an accelerometer;
/// `None` otherwise (read whole). Refused as [`super::load`] refuses it.
pub(super) fn open_csv(
    path: &Path,
    source: &Source,
) -> Result<Option<(Recording, CsvColumn, u64)>, ReplayError> {
    let (Some(rate), None, None) = (source.rate, &source.time_column, &source.motion) else {
        return Ok(None);
    };
    let fail = |m: String| ReplayError::Refused(format!("{}: {m}", path.display()));
    if let Some(unit) = &source.time_unit {
        TimeUnit::parse(unit).map_err(|e| fail(e.to_string()))?;
    }
    let names = csv_column_names(path)?;
    let values: Vec<String> = match wanted_signals(source.signal.as_deref()) {
        Wanted::One(Some(n)) => vec![n.to_string()],
        Wanted::Among(Some(list)) => list,
        Wanted::One(None) | Wanted::Among(None) => names,
    };
    if values.is_empty() {
        return Err(fail("no value column besides the time column".into()));
    }
    let columns: Vec<ColumnRef> = values.into_iter().map(ColumnRef::Name).collect();
    let options = CsvSignalOptions::with_rate(columns[0].clone(), rate);
    let mut blocks = CsvBlocks::open(path, &columns, &options)?;
    let (fs, names) = (blocks.fs(), blocks.names());
    let mut judges: Vec<Judge> = names.iter().map(|n| Judge::new(n, fs)).collect();
    let several = judges.len() > 1;
    let mut out = vec![Vec::new(); columns.len()];
    let mut rows = 0u64;
    while blocks.read_into(BLOCK_FRAMES, &mut out)? {
        rows += out[0].len() as u64;
        if several {
            judges.iter_mut().zip(&out).for_each(|(j, b)| j.push(b));
        }
    }
    check_rate(fs).map_err(fail)?;
    let (index, channel) = if several {
        let figures = judges.into_iter().map(Judge::finish).collect();
        let (i, choice) = choose_among(figures).expect("several candidates");
        (i, Some(choice))
    } else {
        (0, None)
    };
    let name = names[index].clone();
    let negate = match source.polarity {
        Polarity::Up => false,
        Polarity::Down => true,
        Polarity::Auto => COLOUR_CHANNELS.iter().any(|c| name.eq_ignore_ascii_case(c)),
    };
    let head = Recording {
        name: path
            .file_stem()
            .map(|s| s.to_string_lossy().into_owned())
            .unwrap_or_default(),
        path: path.to_path_buf(),
        signal: LoadedSignal {
            name,
            units: None,
            fs,
            samples: Vec::new(),
        },
        input: InputInfo {
            channel,
            inverted: negate,
            ..InputInfo::default()
        },
        motion: None,
        record_options: source.record_options.clone(),
    };
    let column = CsvColumn {
        path: path.to_path_buf(),
        column: columns[index].clone(),
        options,
        negate,
    };
    Ok(Some((head, column, rows)))
}

/// The pipeline's range for a CSV rate, shown as the whole read shows it:
/// to 4 decimals unless that rounds it in.
fn check_rate(fs: f64) -> Result<(), String> {
    check_sample_rate(fs).map_err(|mut e| {
        let shown = (fs * 1e4).round() / 1e4;
        if check_sample_rate(shown).is_err() {
            e.rate_hz = shown;
        }
        e.to_string()
    })?;
    Ok(())
}

impl CsvColumn {
    /// The column's values, `BLOCK_FRAMES` rows at a time, negated when
    /// asked, to `each` for as long as it answers `true`.
    pub(super) fn blocks(&self, mut each: impl FnMut(&[f64]) -> bool) -> Result<(), ReplayError> {
        let mut blocks = CsvBlocks::open(
            &self.path,
            std::slice::from_ref(&self.column),
            &self.options,
        )?;
        let mut out = [Vec::new()];
        while blocks.read_into(BLOCK_FRAMES, &mut out)? {
            if self.negate {
                out[0].iter_mut().for_each(|x| *x = -*x);
            }
            if !each(&out[0]) {
                break;
            }
        }
        Ok(())
    }
}
