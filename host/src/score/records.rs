//! Scoring whole recordings: beats against a reference annotation file,
//! heart rate against a reference numerics table, per record and pooled.

use super::record_refs::RecordReferences;
pub use super::record_refs::RecordScore;
pub use super::references::{
    load_ecg, reference_beats, reference_rate, reference_windows, strap_intervals, RateSeries,
    ReferenceKind, References, DEFAULT_STRAP_SUFFIX,
};
pub use super::required::{annotators_beside, check_references, check_scored};
use super::timing::PeakTiming;
use super::windows::ReplayWindows;
use super::{MatchCounts, RateError};
use crate::ecg::EcgScore;
use crate::output_guard::record_base;
use crate::replay::{open, Recording, Replay, ReplayError, Source, StreamError};
use plethwire_dsp::pipeline::Config;
use serde::Serialize;
use std::path::{Path, PathBuf};

/// Scores of several recordings and their pooled totals.
#[derive(Debug, Clone, Serialize)]
pub struct Scores {
    /// Per record, in the order scored.
    pub records: Vec<RecordScore>,
    /// Beat counts summed over the records that have reference beats
    /// (JSON: with their sensitivity, positive predictivity and F1).
    #[serde(serialize_with = "super::counts_with_figures")]
    pub pooled_beats: Option<MatchCounts>,
    /// Heart-rate error pooled over every compared second.
    pub pooled_heart_rate: Option<RateError>,
    /// Peak timing over the matched pairs of every record together.
    pub pooled_peak_timing: Option<PeakTiming>,
    /// Window figures summed over the records that have a window table.
    pub pooled_windows: Option<ReplayWindows>,
    /// Counts against the ECG's R peaks summed over the records (JSON:
    /// with their figures, as [`Scores::pooled_beats`]).
    #[serde(serialize_with = "super::counts_with_figures")]
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

/// Every recording in `paths`, each once (a record given twice, or both
/// by name and through its folder, is scored once): records and files as
/// given, folders expanded to the WFDB records whose headers they hold and
/// the CSV files they hold (sorted by name).
pub fn expand(paths: &[PathBuf]) -> Result<Vec<PathBuf>, ReplayError> {
    let mut seen = std::collections::HashSet::new();
    let mut once = expand_all(paths)?;
    once.retain(|p| seen.insert(identity(p)));
    Ok(once)
}

/// What makes two paths the same recording: the header's (or CSV file's)
/// real path when it exists, else the path as written.
fn identity(path: &Path) -> PathBuf {
    let is_csv = path
        .extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("csv"));
    let file = if is_csv {
        path.to_path_buf()
    } else {
        let mut header = record_base(path).into_os_string();
        header.push(".hea");
        PathBuf::from(header)
    };
    file.canonicalize().unwrap_or_else(|_| path.to_path_buf())
}

/// [`expand`] before duplicates are dropped.
fn expand_all(paths: &[PathBuf]) -> Result<Vec<PathBuf>, ReplayError> {
    let mut out = Vec::new();
    for p in paths {
        if p.is_dir() {
            let entries = std::fs::read_dir(p).map_err(|e| {
                ReplayError::Refused(format!("{}: cannot list the folder: {e}", p.display()))
            })?;
            let mut found =
                recordings_in_folder(entries.filter_map(|e| e.ok().map(|e| e.path())).collect());
            if found.is_empty() {
                return Err(ReplayError::Refused(format!(
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

/// Score one loaded and replayed recording (its references read and
/// scored at once, [`RecordReferences`]).
pub fn score_one(
    rec: &Recording,
    run: &Replay,
    refs: &References,
) -> Result<RecordScore, ReplayError> {
    Ok(RecordReferences::load(rec, refs)?.score(rec, run))
}

/// The pulses of `run` against the R peaks of signal `name` of the WFDB
/// record `rec` was loaded from, which must have the pulse signal's rate.
pub fn ecg_score(rec: &Recording, run: &Replay, name: &str) -> Result<EcgScore, ReplayError> {
    Ok(load_ecg(rec, name)?.score(&run.peaks()))
}

/// Load, replay and score every record in `paths` (each once) with
/// `config`'s options (the sample rate comes from each record); `progress`
/// is told each record's name before it runs. Refused before any replay
/// when a recording lacks a reference ([`check_references`]), and after
/// when nothing could be scored ([`check_scored`]).
pub fn score_all(
    paths: &[PathBuf],
    source: &Source,
    config: Config,
    refs: &References,
    mut progress: impl FnMut(&str),
) -> Result<Scores, ReplayError> {
    let paths = expand(paths)?;
    check_references(&paths, refs)?;
    let mut records = Vec::new();
    for path in paths {
        progress(&path.display().to_string());
        // Streamed: the references are small, the signal is read in blocks.
        let streamed = open(&path, source)?;
        let rec = &streamed.head;
        let cfg = Config {
            sample_rate_hz: rec.signal.fs as f32,
            ..config
        };
        let run = streamed.replay(cfg).map_err(|e| match e {
            StreamError::Pipeline(e) => ReplayError::Refused(format!("{}: {e}", path.display())),
            StreamError::Read(e) => e,
        })?;
        records.push(score_one(rec, &run, refs)?);
    }
    check_scored(&records)?;
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
            record_options: Default::default(),
        };
        let run = replay(&samples, Config::new(100.0)).unwrap();
        let e = ecg_score(&rec, &run, "II").unwrap_err().to_string();
        assert!(
            e.contains("r") && e.contains("125 Hz") && e.contains("100 Hz"),
            "{e}"
        );
        assert_eq!(e.lines().count(), 1);
        let csv = Recording {
            path: dir.path().join("r.csv"),
            ..rec
        };
        let e = ecg_score(&csv, &run, "II").unwrap_err().to_string();
        assert!(e.contains("r.csv") && e.contains("WFDB"), "{e}");
    }
}
