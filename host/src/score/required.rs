//! Scoring that fails loudly: before anything is replayed, every
//! recording must have a reference (and every reference the user named),
//! and after scoring something must have been scored. Each refusal is one
//! line naming the files.

use super::record_refs::RecordScore;
use super::references::{ReferenceKind, References};
use crate::output_guard::{record_base, RECORD_PARTS};
use crate::replay::ReplayError;
use std::path::Path;

/// The annotator names of the annotation files beside the recording at
/// `path` (`<record>.<name>`, no further dot, not a record part), sorted:
/// what `--reference` could name.
pub fn annotators_beside(path: &Path) -> Vec<String> {
    let base = record_base(path);
    let Some(stem) = base.file_name().map(|n| n.to_string_lossy().into_owned()) else {
        return Vec::new();
    };
    let dir = base.parent().filter(|d| !d.as_os_str().is_empty());
    let Ok(entries) = std::fs::read_dir(dir.unwrap_or(Path::new("."))) else {
        return Vec::new();
    };
    let mut names: Vec<String> = entries
        .filter_map(|e| e.ok())
        .filter_map(|e| {
            let name = e.file_name().to_string_lossy().into_owned();
            let ext = name.strip_prefix(&stem)?.strip_prefix('.')?.to_owned();
            let plain = !ext.is_empty() && !ext.contains('.');
            let part = RECORD_PARTS.iter().any(|p| p.eq_ignore_ascii_case(&ext))
                || ext.eq_ignore_ascii_case("csv");
            (plain && !part).then_some(ext)
        })
        .collect();
    names.sort();
    names
}

/// What is missing for the recording at `path`, in words, or `None`.
fn missing_for(path: &Path, refs: &References) -> Option<String> {
    let beside = annotators_beside(path);
    let hint = if beside.is_empty() {
        String::new()
    } else {
        format!("; annotation files beside it: {}", beside.join(", "))
    };
    let named: Vec<String> = refs
        .required
        .iter()
        .map(|k| (k, k.file(path, refs)))
        .filter(|(_, f)| !f.exists())
        .map(|(k, f)| format!("{} ({})", f.display(), k.option()))
        .collect();
    if !named.is_empty() {
        return Some(format!("{} does not exist{hint}", named.join(" and ")));
    }
    let any = refs.ecg.is_some()
        || ReferenceKind::ALL
            .iter()
            .any(|k| k.file(path, refs).exists());
    if any {
        return None;
    }
    let looked: Vec<String> = ReferenceKind::ALL
        .iter()
        .map(|k| k.file(path, refs).display().to_string())
        .collect();
    Some(format!(
        "{} has no reference: none of {} exists{hint}",
        path.display(),
        looked.join(", ")
    ))
}

/// Refuse, in one line naming the missing files, when a recording in
/// `paths` lacks a reference `refs` requires, or has none at all (and
/// no ECG is named to score against).
pub fn check_references(
    paths: &[std::path::PathBuf],
    refs: &References,
) -> Result<(), ReplayError> {
    let missing: Vec<String> = paths.iter().filter_map(|p| missing_for(p, refs)).collect();
    if missing.is_empty() {
        return Ok(());
    }
    Err(ReplayError::Refused(format!(
        "cannot score, a reference is missing: {}; name the reference with --reference (or the table suffixes), or leave such recordings out",
        missing.join(" | ")
    )))
}

/// Whether `r` was compared with anything: a reference beat, a
/// heart-rate row, a window, a strap interval or an R peak.
fn was_scored(r: &RecordScore) -> bool {
    r.reference_beats.is_some_and(|n| n > 0)
        || r.heart_rate.is_some_and(|h| h.count > 0)
        || r.windows.as_ref().is_some_and(|w| w.good.windows > 0)
        || r.strap.is_some()
        || r.ecg.as_ref().is_some_and(|e| e.r_peaks > 0)
}

/// Refuse, in one line, when none of `records` could be compared with
/// its references (empty reference files, tables without a value).
pub fn check_scored(records: &[RecordScore]) -> Result<(), ReplayError> {
    if records.iter().any(was_scored) {
        return Ok(());
    }
    let names: Vec<&str> = records.iter().map(|r| r.record.as_str()).collect();
    Err(ReplayError::Refused(format!(
        "nothing could be scored: the references of {} hold no beat, heart rate, window or interval to compare with",
        names.join(", ")
    )))
}
