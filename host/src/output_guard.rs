//! Never writing over what plethwire did not make: every command that
//! writes files asks here first.
//!
//! Three rules, one function each:
//!
//! * [`check_annotator`]: an annotator name becomes a file extension, so
//!   `hea` and `dat` (the parts of a WFDB record) are never one, and a name
//!   a file of the recording already uses (`cb0009.peak`, the expert
//!   reference) is refused unless the user forces it.
//! * [`check_outputs`]: an output that is one of the files being read is
//!   refused always; one that already exists is refused unless forced.
//! * [`recording_files`]: the files a recording is read from (a CSV file;
//!   a WFDB header and the signal files it names), the inputs to protect.
//!
//! Outputs go to the current folder unless the user names another one
//! ([`DEFAULT_OUTPUT_DIR`]), the same for every command.

use plethwire_records::Header;
use std::path::{Path, PathBuf};

/// Extensions that make a file part of a WFDB record (header and signal
/// file); never an annotator name, not even when forced.
pub const RECORD_PARTS: [&str; 2] = ["hea", "dat"];

/// Where outputs go unless the user names a folder: the current one.
pub const DEFAULT_OUTPUT_DIR: &str = ".";

/// Why an output was refused; one line that says what to do instead.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum OutputError {
    /// The annotator name is a WFDB record part (`hea`, `dat`).
    #[error("annotator name '{0}' would write a WFDB record's own .{0} file; choose another --annotator")]
    RecordPart(String),
    /// The annotator name is taken by a file of the recording.
    #[error("annotator name '{name}' is already taken by {}, a file of the recording; choose another --annotator (or add --force to use the name anyway)", .file.display())]
    NameTaken {
        /// The annotator name asked for.
        name: String,
        /// The recording's file with that extension.
        file: PathBuf,
    },
    /// The output exists and replacing it was not asked for.
    #[error("{} already exists and plethwire does not replace files it did not make: choose another --out or name, or add --force to replace it", .0.display())]
    Exists(PathBuf),
    /// The output is a file being read.
    #[error("{} is one of the files being read; plethwire never writes over its input, not even with --force", .0.display())]
    IsInput(PathBuf),
}

/// `record` without a `.hea` or `.csv` extension: the stem every file of
/// the recording shares (`dir/cb0009` for `dir/cb0009.hea`).
pub fn record_base(record: &Path) -> PathBuf {
    let strip = record
        .extension()
        .and_then(|e| e.to_str())
        .is_some_and(|e| e.eq_ignore_ascii_case("hea") || e.eq_ignore_ascii_case("csv"));
    if strip {
        record.with_extension("")
    } else {
        record.to_path_buf()
    }
}

/// The files the recording at `record` is read from, as far as they
/// exist: a CSV file itself; a WFDB record's header and the signal files
/// its header names (none when the header cannot be read: then nothing is
/// read either).
pub fn recording_files(record: &Path) -> Vec<PathBuf> {
    let is_csv = record
        .extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("csv"));
    if is_csv {
        return vec![record.to_path_buf()];
    }
    // Appended, not `with_extension`, which would cut a name holding a dot.
    let mut header = record_base(record).into_os_string();
    header.push(".hea");
    let header = PathBuf::from(header);
    let mut files = vec![header.clone()];
    if let Ok(h) = Header::read(&header) {
        let dir = header.parent().unwrap_or(Path::new("."));
        for s in &h.signals {
            let file = dir.join(&s.file_name);
            if !files.contains(&file) {
                files.push(file);
            }
        }
    }
    files.retain(|f| f.exists());
    files
}

/// Refuse annotator `name` for the recording at `record`: a WFDB record
/// part always; a name that a file beside the recording already has as
/// its extension (`<record>.<name>`, e.g. its reference beats) unless
/// `force`.
pub fn check_annotator(record: &Path, name: &str, force: bool) -> Result<(), OutputError> {
    if RECORD_PARTS.iter().any(|p| p.eq_ignore_ascii_case(name)) {
        return Err(OutputError::RecordPart(name.to_owned()));
    }
    let mut file = record_base(record).into_os_string();
    file.push(".");
    file.push(name);
    let file = PathBuf::from(file);
    if recording_files(record).iter().any(|f| same_file(f, &file)) {
        return Err(OutputError::IsInput(file));
    }
    if !force && file.exists() {
        return Err(OutputError::NameTaken {
            name: name.to_owned(),
            file,
        });
    }
    Ok(())
}

/// Refuse to write `outputs`: any that is one of `inputs` (the same file,
/// also through a link) always; any that already exists unless `force`.
/// Checks every output before anything is written, so a refusal leaves
/// nothing half done.
pub fn check_outputs(
    outputs: &[PathBuf],
    inputs: &[PathBuf],
    force: bool,
) -> Result<(), OutputError> {
    for out in outputs {
        if inputs.iter().any(|i| same_file(i, out)) {
            return Err(OutputError::IsInput(out.clone()));
        }
    }
    if !force {
        // `symlink_metadata`: a dangling link is in the way too.
        if let Some(out) = outputs.iter().find(|o| o.symlink_metadata().is_ok()) {
            return Err(OutputError::Exists(out.clone()));
        }
    }
    Ok(())
}

/// Whether `a` and `b` name the same existing file.
fn same_file(a: &Path, b: &Path) -> bool {
    match (a.canonicalize(), b.canonicalize()) {
        (Ok(a), Ok(b)) => a == b,
        _ => false,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn touch(p: &Path) {
        std::fs::write(p, b"x").unwrap();
    }

    #[test]
    fn record_parts_are_never_annotators() {
        let dir = tempfile::tempdir().unwrap();
        let rec = dir.path().join("r");
        for name in ["hea", "dat", "HEA"] {
            for force in [false, true] {
                assert_eq!(
                    check_annotator(&rec, name, force),
                    Err(OutputError::RecordPart(name.into()))
                );
            }
        }
    }

    #[test]
    fn a_name_the_recording_uses_needs_force_and_its_input_is_never_written() {
        let dir = tempfile::tempdir().unwrap();
        let rec = dir.path().join("r");
        touch(&dir.path().join("r.peak"));
        std::fs::write(
            dir.path().join("r.hea"),
            "r 1 100 10\nr.sig 16 1 0 0 0 0 0 x\n",
        )
        .unwrap();
        touch(&dir.path().join("r.sig"));
        let e = check_annotator(&rec, "peak", false).unwrap_err();
        assert!(matches!(e, OutputError::NameTaken { .. }), "{e}");
        assert!(e.to_string().contains("r.peak") && e.to_string().contains("--force"));
        assert_eq!(check_annotator(&rec, "peak", true), Ok(()));
        // The signal file the header names is an input, forced or not.
        let e = check_annotator(&rec, "sig", true).unwrap_err();
        assert!(matches!(e, OutputError::IsInput(_)), "{e}");
        assert_eq!(check_annotator(&rec, "pwire", false), Ok(()));
        assert_eq!(
            recording_files(&dir.path().join("r.hea")),
            vec![dir.path().join("r.hea"), dir.path().join("r.sig")]
        );
    }

    #[test]
    fn existing_outputs_need_force_and_inputs_never_pass() {
        let dir = tempfile::tempdir().unwrap();
        let old = dir.path().join("old.csv");
        let new = dir.path().join("new.csv");
        touch(&old);
        let outputs = [new.clone(), old.clone()];
        assert_eq!(
            check_outputs(&outputs, &[], false),
            Err(OutputError::Exists(old.clone()))
        );
        assert_eq!(check_outputs(&outputs, &[], true), Ok(()));
        // The same input named another way.
        let other_way = dir.path().join(".").join("old.csv");
        assert_eq!(
            check_outputs(std::slice::from_ref(&other_way), &[old], true),
            Err(OutputError::IsInput(other_way))
        );
        assert_eq!(check_outputs(&[new], &[], false), Ok(()));
    }
}
