//! The whole accuracy picture in one run: every shared dataset, the
//! streaming pipeline and the plain scipy baseline side by side, and the
//! targets. `scripts/accuracy` prints it (and writes its table into
//! docs/accuracy.md); `tests/tests/accuracy_targets.rs` asserts it.
//!
//! Each recording is loaded once; the pipeline replays its samples and
//! the baseline (`tests/scipy/baseline_beats.py`, one Python run for every
//! recording of every dataset) gets the same samples. Its references are
//! read once ([`RecordReferences`]: expert peaks, ECG R peaks, monitor
//! numerics, window tables, strap lists) and both beat lists, the
//! baseline's carried as a replay ([`baseline_replay`]), are scored
//! against them by the same code; only the beat list differs.

pub mod datasets;
pub mod figures;
pub mod missed;
pub mod table;
pub mod targets;

use std::fmt;
use std::path::{Path, PathBuf};

use plethwire::replay::{load, replay_recording, Recording, Replay, ReplayError};
use plethwire::score::record_refs::RecordReferences;
use plethwire::score::records::{expand, Scores};
use plethwire_dsp::pipeline::Config;

use crate::baseline::{baseline_detections, baseline_replay, BaselineInput};
use crate::python;
use datasets::{Dataset, DATASETS};
use figures::{Side, SideFigures};
use missed::{count_missed, MissedCounts};

/// Why the picture could not be made.
#[derive(Debug)]
pub enum AccuracyError {
    /// A dataset's folder is not there.
    MissingFolder(PathBuf),
    /// A dataset's folder holds another number of recordings than its
    /// README says.
    RecordingCount {
        /// The folder.
        folder: PathBuf,
        /// Recordings expected.
        expected: usize,
        /// Recordings found.
        found: usize,
    },
    /// No Python with numpy and scipy for the baseline.
    NoPython,
    /// A recording or one of its references could not be read or scored.
    Recording(ReplayError),
    /// docs/accuracy.md could not be read, understood or written.
    Docs(String),
}

impl fmt::Display for AccuracyError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::MissingFolder(p) => write!(f, "{}: no such folder", p.display()),
            Self::RecordingCount {
                folder,
                expected,
                found,
            } => write!(
                f,
                "{}: {found} recordings, the data's README says {expected}",
                folder.display()
            ),
            Self::NoPython => write!(f, "missing {}", crate::needs::PYTHON),
            Self::Recording(e) => write!(f, "{e}"),
            Self::Docs(e) => write!(f, "{e}"),
        }
    }
}

impl std::error::Error for AccuracyError {}

impl From<ReplayError> for AccuracyError {
    fn from(e: ReplayError) -> Self {
        Self::Recording(e)
    }
}

/// One dataset scored both ways.
#[derive(Debug, Clone)]
pub struct DatasetScores {
    /// The dataset.
    pub dataset: Dataset,
    /// The pipeline's beats.
    pub ours: Scores,
    /// The baseline's beats, scored by the same code.
    pub baseline: Scores,
    /// Where the dataset has an ECG: per recording, the R peaks each beat
    /// list misses, by kind (ours, the baseline's).
    pub missed: Vec<(String, MissedCounts, MissedCounts)>,
}

/// Every dataset scored both ways, and the figures of each side.
#[derive(Debug, Clone)]
pub struct Picture {
    /// In the order of [`DATASETS`].
    pub datasets: Vec<DatasetScores>,
    /// The pipeline's figures.
    pub ours: SideFigures,
    /// The baseline's.
    pub baseline: SideFigures,
    /// Per recording (`dataset/name`), every beat and state change the
    /// pipeline gave, one `Debug` line each (floats print exactly): for
    /// telling whether a change to the pipeline changed any result.
    pub event_lists: Vec<(String, String)>,
}

/// A recording made ready: its samples, its replay and its references.
struct Prepared {
    rec: Recording,
    run: Replay,
    refs: RecordReferences,
}

fn prepare(
    data: &Path,
    set: &Dataset,
    progress: &mut impl FnMut(&str),
) -> Result<Vec<Prepared>, AccuracyError> {
    let folder = data.join(set.folder);
    if !folder.is_dir() {
        return Err(AccuracyError::MissingFolder(folder));
    }
    let paths = expand(std::slice::from_ref(&folder))?;
    if paths.len() != set.recordings {
        return Err(AccuracyError::RecordingCount {
            folder,
            expected: set.recordings,
            found: paths.len(),
        });
    }
    let (source, refs) = (set.source(), set.references());
    paths
        .iter()
        .map(|path| {
            progress(&path.display().to_string());
            let rec = load(path, &source)?;
            let run = replay_recording(&rec, Config::new(rec.signal.fs as f32))
                .map_err(|e| ReplayError::Refused(format!("{}: {e}", path.display())))?;
            let refs = RecordReferences::load(&rec, &refs)?;
            Ok(Prepared { rec, run, refs })
        })
        .collect()
}

/// Score every shared dataset under `data` both ways; `progress` is told
/// each recording (and the baseline's run) as it starts.
pub fn run(data: &Path, mut progress: impl FnMut(&str)) -> Result<Picture, AccuracyError> {
    if python().is_none() {
        return Err(AccuracyError::NoPython);
    }
    let prepared: Vec<Vec<Prepared>> = DATASETS
        .iter()
        .map(|set| prepare(data, set, &mut progress))
        .collect::<Result<_, _>>()?;
    let inputs: Vec<BaselineInput> = prepared
        .iter()
        .flatten()
        .map(|p| BaselineInput {
            name: p.rec.name.clone(),
            fs: p.rec.signal.fs,
            samples: p.rec.signal.samples.clone(),
        })
        .collect();
    progress("the baseline (tests/scipy/baseline_beats.py)");
    let mut baseline = baseline_detections(&inputs).into_iter();
    let event_lists = DATASETS
        .iter()
        .zip(&prepared)
        .flat_map(|(set, recs)| recs.iter().map(move |p| (set, p)))
        .map(|(set, p)| (format!("{}/{}", set.folder, p.rec.name), event_list(&p.run)))
        .collect();
    let mut datasets = Vec::new();
    for (set, recs) in DATASETS.iter().zip(&prepared) {
        let (mut ours, mut theirs, mut missed) = (Vec::new(), Vec::new(), Vec::new());
        for p in recs {
            progress(&format!(
                "{} against its references, both beat lists",
                p.rec.name
            ));
            let peaks = baseline.next().expect("one answer per record").refined;
            let base = baseline_replay(&peaks, p.run.fs, p.run.samples);
            ours.push(p.refs.score(&p.rec, &p.run));
            theirs.push(p.refs.score(&p.rec, &base));
            if let Some(ecg) = &p.refs.ecg {
                let samples = &p.rec.signal.samples;
                missed.push((
                    p.rec.name.clone(),
                    count_missed(ecg, samples, &p.run.peaks()),
                    count_missed(ecg, samples, &base.peaks()),
                ));
            }
        }
        datasets.push(DatasetScores {
            dataset: *set,
            ours: Scores::pooled(ours),
            baseline: Scores::pooled(theirs),
            missed,
        });
    }
    let side = |side: Side, pick: fn(&DatasetScores) -> &Scores| {
        let scores: Vec<_> = datasets.iter().map(|d| (d.dataset.id, pick(d))).collect();
        SideFigures::of(side, &scores)
    };
    let ours = side(Side::Ours, |d| &d.ours);
    let baseline = side(Side::Baseline, |d| &d.baseline);
    Ok(Picture {
        datasets,
        ours,
        baseline,
        event_lists,
    })
}

/// A replay's beats and state changes, a `Debug` line each, then its counts.
fn event_list(run: &Replay) -> String {
    use std::fmt::Write as _;
    let mut s = String::new();
    for b in &run.beats {
        let _ = writeln!(s, "{b:?}");
    }
    for e in &run.states {
        let _ = writeln!(s, "{e:?}");
    }
    let _ = writeln!(
        s,
        "samples {} rejected {} clipped {} restarts {}",
        run.samples, run.rejected, run.clipped, run.restarts
    );
    s
}
