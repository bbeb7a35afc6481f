//! Inputs found by the fuzz targets (`fuzz/`, `scripts/fuzz`), run again
//! through exactly what the targets run (`fuzz/src/records_cases.rs`,
//! included here). Files in `tests/fuzz-regressions/TARGET/` named
//! `crash-*` once made a reader panic, hang or take unbounded memory: they
//! must now give a typed error, on one line. Other files are interesting
//! inputs of the corpus and must only not panic.

#[allow(dead_code)]
#[path = "../../fuzz/src/records_cases.rs"]
mod records_cases;

use std::path::{Path, PathBuf};

/// The inputs kept for `target`, sorted by name; none is an error.
fn inputs(target: &str) -> Vec<PathBuf> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fuzz-regressions")
        .join(target);
    let mut files: Vec<PathBuf> = std::fs::read_dir(&dir)
        .unwrap_or_else(|e| panic!("{}: {e}", dir.display()))
        .map(|e| e.unwrap().path())
        .collect();
    files.sort();
    assert!(
        !files.is_empty(),
        "no regression inputs in {}",
        dir.display()
    );
    files
}

/// Run `case` on each input of `target`; a `crash-*` input must give an error.
fn check<E: std::fmt::Display>(target: &str, mut case: impl FnMut(&[u8]) -> Option<E>) {
    for path in inputs(target) {
        let data = std::fs::read(&path).unwrap();
        let error = case(&data);
        let name = path.file_name().unwrap().to_string_lossy();
        if name.starts_with("crash-") {
            let e = error.unwrap_or_else(|| panic!("{name}: read without an error"));
            assert!(!e.to_string().contains('\n'), "{name}: {e}");
        }
    }
}

#[test]
fn header_inputs() {
    check("wfdb_header", records_cases::header);
}

#[test]
fn signal_inputs() {
    let dir = tempfile::tempdir().unwrap();
    check("wfdb_signal", |data| {
        records_cases::signal(data, dir.path())
    });
}

#[test]
fn annotation_inputs() {
    check("wfdb_annotation", records_cases::annotation);
}

#[test]
fn csv_inputs() {
    let dir = tempfile::tempdir().unwrap();
    check("csv", |data| records_cases::csv(data, dir.path()));
}
