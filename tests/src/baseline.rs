//! The plain baseline: beats found by `tests/scipy/baseline_beats.py`
//! (scipy.signal.butter 0.5–8 Hz order 2 run causally with sosfilt,
//! find_peaks with a 0.3 s distance and a prominence gate from the whole
//! record, peaks refined to the largest raw sample in the 150 ms before;
//! the script's doc string is the method's definition).
//!
//! It is printed beside the pipeline's figures so a reader can tell what a
//! generic peak finder does on the same samples. Gate callers with
//! `need(needs::PYTHON, python().is_some())`.

use serde::{Deserialize, Serialize};

use crate::{python_json, repo_root};

/// One record for the baseline: the exact samples the pipeline sees.
#[derive(Debug, Clone, Serialize)]
pub struct BaselineInput {
    /// Record name, echoed in the answer.
    pub name: String,
    /// Sample rate, Hz.
    pub fs: f64,
    /// The samples; NaN (sent as JSON null) is taken as the last finite
    /// value.
    pub samples: Vec<f64>,
}

/// The baseline's peaks of one record, both ways the script reports them.
#[derive(Debug, Clone, PartialEq, Eq, Deserialize)]
pub struct BaselinePeaks {
    /// Record name.
    pub name: String,
    /// Where find_peaks puts them on the causally filtered signal (late by
    /// the filter's delay).
    pub filtered: Vec<u64>,
    /// Each filtered peak moved to the largest raw sample within the
    /// 150 ms before it: the baseline's beats for every comparison.
    pub refined: Vec<u64>,
}

#[derive(Serialize)]
struct Request<'a> {
    records: &'a [BaselineInput],
}

#[derive(Deserialize)]
struct Answer {
    records: Vec<BaselinePeaks>,
}

/// Path of the baseline script.
pub fn baseline_script() -> std::path::PathBuf {
    repo_root().join("tests/scipy/baseline_beats.py")
}

/// Both kinds of baseline peaks of every record, in the order given, from
/// one Python run. Panics (with Python's message) when the script fails or
/// answers for other records than asked.
pub fn baseline_detections(records: &[BaselineInput]) -> Vec<BaselinePeaks> {
    let answer: Answer = python_json(&[baseline_script()], &Request { records });
    assert_eq!(
        answer.records.len(),
        records.len(),
        "baseline answered for a different number of records"
    );
    for (asked, got) in records.iter().zip(&answer.records) {
        assert_eq!(asked.name, got.name, "baseline answered out of order");
    }
    answer.records
}

/// The baseline's beats (the refined peaks) of every record, in the order
/// given, from one Python run.
pub fn baseline_peaks(records: &[BaselineInput]) -> Vec<Vec<u64>> {
    baseline_detections(records)
        .into_iter()
        .map(|p| p.refined)
        .collect()
}
