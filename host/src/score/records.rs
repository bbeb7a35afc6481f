//! Scoring whole recordings: beats against a reference annotation file,
//! heart rate against a reference numerics table, per record and pooled.

use super::record_refs::RecordReferences;
use super::strap::StrapScore;
use super::timing::PeakTiming;
use super::windows::{read_rate_windows, ReplayWindows};
use super::{MatchCounts, RateError};
use crate::ecg::{EcgReference, EcgScore};
use crate::replay::{
    load, replay_recording, InputInfo, Recording, Replay, ReplayError, Source, Summary,
};
use plethwire_dsp::pipeline::Config;
use plethwire_records::read_rr_intervals;
use plethwire_records::{annotation_path, read_annotations, read_numerics, read_wfdb_signal};
use serde::Serialize;
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
        }
    }
}

/// One recording's score.
#[derive(Debug, Clone, Serialize)]
pub struct RecordScore {
    /// Record name.
    pub record: String,
    /// Beat comparison, when reference beats exist.
    pub beats: Option<MatchCounts>,
    /// Reference beats.
    pub reference_beats: Option<usize>,
    /// Heart-rate comparison, when a reference series exists.
    pub heart_rate: Option<RateError>,
    /// The replay's summary.
    pub summary: Summary,
    /// Offsets of our matched peaks from the reference beats.
    pub peak_timing: Option<PeakTiming>,
    /// Heart rate in the reference windows, when a window table exists.
    pub windows: Option<ReplayWindows>,
    /// The signal scored (the chosen one, when there was a choice).
    pub signal: String,
    /// How the samples were got (time column, resampling, channel choice).
    pub input: InputInfo,
    /// Against a chest strap's R-R list, when one exists.
    pub strap: Option<StrapScore>,
    /// Pulses against the ECG's R peaks, when an ECG signal was named.
    pub ecg: Option<EcgScore>,
}

/// Scores of several recordings and their pooled totals.
#[derive(Debug, Clone, Serialize)]
pub struct Scores {
    /// Per record, in the order scored.
    pub records: Vec<RecordScore>,
    /// Beat counts summed over the records that have reference beats.
    pub pooled_beats: Option<MatchCounts>,
    /// Heart-rate error pooled over every compared second.
    pub pooled_heart_rate: Option<RateError>,
    /// Peak timing over the matched pairs of every record together.
    pub pooled_peak_timing: Option<PeakTiming>,
    /// Window figures summed over the records that have a window table.
    pub pooled_windows: Option<ReplayWindows>,
    /// Counts against the ECG's R peaks summed over the records.
    pub pooled_ecg: Option<MatchCounts>,
}

impl Scores {
    /// `records` and their pooled totals.
    pub fn pooled(records: Vec<RecordScore>) -> Self {
        let mut pooled_beats: Option<MatchCounts> = None;
        let mut pooled_heart_rate: Option<RateError> = None;
        let mut pooled_ecg: Option<MatchCounts> = None;
        for r in &records {
            if let Some(e) = &r.ecg {
                pooled_ecg
                    .get_or_insert_with(MatchCounts::default)
                    .add(&e.counts);
            }
            if let Some(b) = &r.beats {
                pooled_beats.get_or_insert_with(MatchCounts::default).add(b);
            }
            if let Some(h) = &r.heart_rate {
                pooled_heart_rate
                    .get_or_insert_with(RateError::default)
                    .add(h);
            }
        }
        let timings: Vec<&PeakTiming> = records
            .iter()
            .filter_map(|r| r.peak_timing.as_ref())
            .collect();
        let pooled_peak_timing = (!timings.is_empty()).then(|| PeakTiming::pooled(timings));
        let mut pooled_windows: Option<ReplayWindows> = None;
        for w in records.iter().filter_map(|r| r.windows.as_ref()) {
            pooled_windows
                .get_or_insert_with(ReplayWindows::default)
                .add(w);
        }
        Scores {
            records,
            pooled_beats,
            pooled_heart_rate,
            pooled_peak_timing,
            pooled_windows,
            pooled_ecg,
        }
    }
}

/// Every recording in `paths`: records and files as given, folders
/// expanded to the WFDB records whose headers they hold and the CSV files
/// they hold (sorted by name).
pub fn expand(paths: &[PathBuf]) -> Result<Vec<PathBuf>, ReplayError> {
    let mut out = Vec::new();
    for p in paths {
        if p.is_dir() {
            let entries = std::fs::read_dir(p).map_err(|e| {
                ReplayError(format!("{}: cannot list the folder: {e}", p.display()))
            })?;
            let mut found =
                recordings_in_folder(entries.filter_map(|e| e.ok().map(|e| e.path())).collect());
            if found.is_empty() {
                return Err(ReplayError(format!(
                    "{}: no WFDB records (.hea) or CSV files in this folder",
                    p.display()
                )));
            }
            found.sort();
            out.extend(found);
        } else {
            out.push(p.clone());
        }
    }
    Ok(out)
}

/// The recordings among a folder's `entries`: each header's record, and
/// each CSV file that is not a table beside a record (a CSV whose name
/// starts with a record's name, as `<record>n.csv` or `<record>bpm.csv`).
fn recordings_in_folder(entries: Vec<PathBuf>) -> Vec<PathBuf> {
    let ext_is = |f: &Path, e: &str| {
        f.extension()
            .and_then(|x| x.to_str())
            .is_some_and(|x| x.eq_ignore_ascii_case(e))
    };
    let records: Vec<PathBuf> = entries
        .iter()
        .filter(|f| ext_is(f, "hea"))
        .map(|f| f.with_extension(""))
        .collect();
    let beside_a_record = |f: &Path| {
        let stem = f.file_stem().unwrap_or_default().to_string_lossy();
        records.iter().any(|r| {
            r.file_name()
                .is_some_and(|n| stem.starts_with(&*n.to_string_lossy()))
        })
    };
    let tables: Vec<PathBuf> = entries
        .iter()
        .filter(|f| ext_is(f, "csv") && !beside_a_record(f))
        .cloned()
        .collect();
    records.into_iter().chain(tables).collect()
}

/// The strap's R-R intervals (ms) for the recording at `path`, from
/// `<record><suffix>`, or `None` when that file does not exist.
pub fn strap_intervals(path: &Path, suffix: &str) -> Result<Option<Vec<f64>>, ReplayError> {
    let record = if path
        .extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("csv"))
    {
        path.with_extension("")
    } else {
        path.to_path_buf()
    };
    let file = numerics_path(&record, suffix);
    if !file.exists() {
        return Ok(None);
    }
    Ok(Some(read_rr_intervals(&file)?))
}

/// Reference beats of the record at `record` (path without
/// extension): the beat annotations of `<record>.<annotator>` as sample
/// indices, or `None` when that file does not exist.
pub fn reference_beats(record: &Path, annotator: &str) -> Result<Option<Vec<u64>>, ReplayError> {
    let ann = annotation_path(record, annotator);
    if !ann.exists() {
        return Ok(None);
    }
    Ok(Some(
        read_annotations(&ann)?
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
        ReplayError(format!(
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

/// Score one loaded and replayed recording (its references read and
/// scored at once, [`RecordReferences`]).
pub fn score_one(
    rec: &Recording,
    run: &Replay,
    refs: &References,
) -> Result<RecordScore, ReplayError> {
    Ok(RecordReferences::load(rec, refs)?.score(rec, run))
}

/// The reference window table `<record><suffix>` of the record at
/// `record`, or `None` when it does not exist.
pub fn reference_windows(
    record: &Path,
    suffix: &str,
) -> Result<Option<Vec<super::windows::RateWindow>>, ReplayError> {
    let table = numerics_path(record, suffix);
    if !table.exists() {
        return Ok(None);
    }
    read_rate_windows(&table).map(Some)
}

/// The pulses of `run` against the R peaks of signal `name` of the WFDB
/// record `rec` was loaded from, which must have the pulse signal's rate.
pub fn ecg_score(rec: &Recording, run: &Replay, name: &str) -> Result<EcgScore, ReplayError> {
    Ok(load_ecg(rec, name)?.score(&run.peaks()))
}

/// The R peaks of signal `name` of the WFDB record `rec` was loaded from,
/// which must have the pulse signal's rate.
pub fn load_ecg(rec: &Recording, name: &str) -> Result<EcgReference, ReplayError> {
    if rec
        .path
        .extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("csv"))
    {
        return Err(ReplayError(format!(
            "{}: --ecg needs a WFDB record, not a CSV file",
            rec.path.display()
        )));
    }
    let ecg = read_wfdb_signal(&rec.path, Some(name))?;
    if ecg.fs != rec.signal.fs {
        return Err(ReplayError(format!(
            "{}: ECG signal '{name}' is at {} Hz, the pulse signal '{}' at {} Hz; they must be the same",
            rec.path.display(),
            ecg.fs,
            rec.signal.name,
            rec.signal.fs
        )));
    }
    EcgReference::new(&ecg.samples, ecg.fs)
        .map_err(|e| ReplayError(format!("{}: {e}", rec.path.display())))
}

fn numerics_path(record: &Path, suffix: &str) -> PathBuf {
    let mut name = record.file_name().unwrap_or_default().to_os_string();
    name.push(suffix);
    record.with_file_name(name)
}

/// Load, replay and score every record in `paths` with `config`'s
/// options (the sample rate comes from each record); `progress` is
/// told each record's name before it runs.
pub fn score_all(
    paths: &[PathBuf],
    source: &Source,
    config: Config,
    refs: &References,
    mut progress: impl FnMut(&str),
) -> Result<Scores, ReplayError> {
    let mut records = Vec::new();
    for path in expand(paths)? {
        progress(&path.display().to_string());
        let rec = load(&path, source)?;
        let cfg = Config {
            sample_rate_hz: rec.signal.fs as f32,
            ..config
        };
        let run = replay_recording(&rec, cfg)
            .map_err(|e| ReplayError(format!("{}: {e}", path.display())))?;
        records.push(score_one(&rec, &run, refs)?);
    }
    Ok(Scores::pooled(records))
}

#[cfg(test)]
mod ecg_tests {
    use super::*;
    use crate::replay::replay;
    use plethwire_dsp::pipeline::Config;
    use plethwire_records::{write_record, LoadedSignal, NewSignal};

    #[test]
    fn an_ecg_at_another_rate_or_beside_a_csv_is_refused_naming_the_file() {
        let dir = tempfile::tempdir().unwrap();
        let wave: Vec<i32> = (0..1250).map(|i| (i % 125) * 10).collect();
        let signals = [
            NewSignal::new("PLETH", "NU", 1000.0, 0),
            NewSignal::new("II", "mV", 1000.0, 0),
        ];
        write_record(dir.path(), "r", 125.0, &signals, &[wave.clone(), wave]).unwrap();
        // As if the pulse signal had come at 100 Hz.
        let samples = vec![0.0; 1000];
        let rec = Recording {
            name: "r".into(),
            path: dir.path().join("r"),
            signal: LoadedSignal {
                name: "PLETH".into(),
                units: None,
                fs: 100.0,
                samples: samples.clone(),
            },
            input: Default::default(),
            motion: None,
        };
        let run = replay(&samples, Config::new(100.0)).unwrap();
        let e = ecg_score(&rec, &run, "II").unwrap_err().0;
        assert!(
            e.contains("r") && e.contains("125 Hz") && e.contains("100 Hz"),
            "{e}"
        );
        assert_eq!(e.lines().count(), 1);
        let csv = Recording {
            path: dir.path().join("r.csv"),
            ..rec
        };
        let e = ecg_score(&csv, &run, "II").unwrap_err().0;
        assert!(e.contains("r.csv") && e.contains("WFDB"), "{e}");
    }
}
