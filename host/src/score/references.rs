//! Reading a recording's references: which files to look for
//! ([`References`]) and the readers of each (reference beats, heart-rate
//! table, window table, strap R-R list, ECG R peaks).

use super::windows::{read_rate_windows, RateWindow};
use crate::ecg::{EcgReference, EcgStreamError, RecordSource};
use crate::output_guard::record_base;
use crate::replay::{Recording, ReplayError};
use plethwire_records::{
    annotation_path, read_annotations_in_samples, read_numerics, read_rr_intervals, Record,
};
use std::path::{Path, PathBuf};

/// What to compare against.
#[derive(Debug, Clone, PartialEq)]
pub struct References {
    /// Annotator of the reference beats (`<record>.<annotator>`).
    pub annotator: String,
    /// Suffix of the reference heart-rate table (`<record><suffix>`).
    pub rate_suffix: String,
    /// Column of that table holding the heart rate, bpm.
    pub rate_column: String,
    /// Suffix of the reference window table (`<record><suffix>`,
    /// `window_start_s,window_end_s,bpm`), used when it exists.
    pub window_suffix: String,
    /// Suffix of a chest strap's R-R interval list (`<record><suffix>`,
    /// `<record>` without `.csv` for a CSV recording).
    pub strap_suffix: String,
    /// ECG signal of the same WFDB record to score the pulses against
    /// ([`crate::ecg`]), if any.
    pub ecg: Option<String>,
    /// References the user named, which every recording must have (the
    /// others are used where their file exists).
    pub required: Vec<ReferenceKind>,
}

/// One kind of reference file beside a recording.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ReferenceKind {
    /// Reference beats, `<record>.<annotator>`.
    Beats,
    /// Heart-rate table, `<record><rate_suffix>`.
    Rate,
    /// Window table, `<record><window_suffix>`.
    Windows,
    /// Strap R-R list, `<record><strap_suffix>`.
    Strap,
}

impl ReferenceKind {
    /// Every kind, in the order the files are listed.
    pub const ALL: [ReferenceKind; 4] = [Self::Beats, Self::Rate, Self::Windows, Self::Strap];

    /// The option that names this kind's file.
    pub fn option(self) -> &'static str {
        match self {
            Self::Beats => "--reference",
            Self::Rate => "--rate-suffix",
            Self::Windows => "--window-suffix",
            Self::Strap => "--strap-suffix",
        }
    }

    /// The file of this kind for the recording at `path` (its name
    /// without `.csv` for a CSV recording), where [`RecordReferences`]
    /// reads it.
    ///
    /// [`RecordReferences`]: super::record_refs::RecordReferences
    pub fn file(self, path: &Path, refs: &References) -> PathBuf {
        let base = record_base(path);
        match self {
            Self::Beats => annotation_path(&base, &refs.annotator),
            Self::Rate => numerics_path(&base, &refs.rate_suffix),
            Self::Windows => numerics_path(&base, &refs.window_suffix),
            Self::Strap => numerics_path(&base, &refs.strap_suffix),
        }
    }
}

/// Suffix of the strap's R-R list unless told otherwise.
pub const DEFAULT_STRAP_SUFFIX: &str = ".rr.txt";

impl Default for References {
    fn default() -> Self {
        Self {
            annotator: "peak".into(),
            rate_suffix: "n.csv".into(),
            rate_column: "pulse_bpm".into(),
            window_suffix: "bpm.csv".into(),
            strap_suffix: DEFAULT_STRAP_SUFFIX.into(),
            ecg: None,
            required: Vec::new(),
        }
    }
}

/// The strap's R-R intervals (ms) for the recording at `path`, from
/// `<record><suffix>`, or `None` when that file does not exist.
pub fn strap_intervals(path: &Path, suffix: &str) -> Result<Option<Vec<f64>>, ReplayError> {
    let file = numerics_path(&record_base(path), suffix);
    if !file.exists() {
        return Ok(None);
    }
    Ok(Some(read_rr_intervals(&file)?))
}

/// Reference beats of the record at `record` (path without
/// extension): the beat annotations of `<record>.<annotator>` as sample
/// indices of the scored signal, sampled at `fs` (a signal with several
/// samples per frame counts its own samples, not frames), or `None` when
/// that file does not exist.
pub fn reference_beats(
    record: &Path,
    annotator: &str,
    fs: f64,
) -> Result<Option<Vec<u64>>, ReplayError> {
    let ann = annotation_path(record, annotator);
    if !ann.exists() {
        return Ok(None);
    }
    Ok(Some(
        read_annotations_in_samples(&ann, fs)?
            .iter()
            .filter(|a| a.is_beat())
            .map(|a| a.sample.max(0) as u64)
            .collect(),
    ))
}

/// A heart-rate series: `(time_s, bpm)`, `None` for seconds without a
/// value.
pub type RateSeries = Vec<(f64, Option<f64>)>;

/// The reference heart-rate series of the record at `record`:
/// `(time_s, bpm)` from column `refs.rate_column` of
/// `<record><refs.rate_suffix>`, or `None` when that table does not
/// exist. A table without the column is an error.
pub fn reference_rate(record: &Path, refs: &References) -> Result<Option<RateSeries>, ReplayError> {
    let table = numerics_path(record, &refs.rate_suffix);
    if !table.exists() {
        return Ok(None);
    }
    let n = read_numerics(&table)?;
    let column = n.column(&refs.rate_column).ok_or_else(|| {
        ReplayError::Refused(format!(
            "{}: no column '{}' (columns: {})",
            table.display(),
            refs.rate_column,
            n.names.join(", ")
        ))
    })?;
    Ok(Some(
        n.time_s
            .iter()
            .copied()
            .zip(column.iter().copied())
            .collect(),
    ))
}

/// The reference window table `<record><suffix>` of the record at
/// `record`, or `None` when it does not exist.
pub fn reference_windows(
    record: &Path,
    suffix: &str,
) -> Result<Option<Vec<RateWindow>>, ReplayError> {
    let table = numerics_path(record, suffix);
    if !table.exists() {
        return Ok(None);
    }
    read_rate_windows(&table).map(Some)
}

/// The R peaks of signal `name` of the WFDB record `rec` was loaded from,
/// which must have the pulse signal's rate.
pub fn load_ecg(rec: &Recording, name: &str) -> Result<EcgReference, ReplayError> {
    if rec
        .path
        .extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("csv"))
    {
        return Err(ReplayError::Refused(format!(
            "{}: --ecg needs a WFDB record, not a CSV file",
            rec.path.display()
        )));
    }
    let record = Record::open_with(&rec.path, &rec.record_options)?;
    let index = record.pick_signal(Some(name))?;
    let fs = record.signal_fs(index);
    if fs != rec.signal.fs {
        return Err(ReplayError::Refused(format!(
            "{}: ECG signal '{name}' is at {fs} Hz, the pulse signal '{}' at {} Hz; they must be the same",
            rec.path.display(),
            rec.signal.name,
            rec.signal.fs
        )));
    }
    // Read a block at a time, several times over: memory does not grow
    // with the record's length.
    let mut source = RecordSource::new(&record, index, ECG_BLOCK_FRAMES);
    EcgReference::streamed(&mut source, fs).map_err(|e| match e {
        EcgStreamError::Read(e) => ReplayError::Records(e),
        e => ReplayError::Refused(format!("{}: {e}", rec.path.display())),
    })
}

/// Frames of the ECG read at a time.
const ECG_BLOCK_FRAMES: usize = 1 << 12;

pub(crate) fn numerics_path(record: &Path, suffix: &str) -> PathBuf {
    let mut name = record.file_name().unwrap_or_default().to_os_string();
    name.push(suffix);
    record.with_file_name(name)
}
