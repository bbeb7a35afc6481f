//! The signal files of a WFDB record: which signals each holds, and that it
//! is long enough.

use super::super::error::{Error, ErrorKind, Result};
use super::super::wfdb_format::SignalFormat;
use super::super::wfdb_header::Header;
use super::open::{leads_out, RecordOptions};
use std::path::{Path, PathBuf};

/// The signals stored in one file.
#[derive(Debug, Clone)]
pub(super) struct Group {
    pub(super) path: PathBuf,
    pub(super) format: SignalFormat,
    pub(super) byte_offset: u64,
    /// Header indices of the signals, in file order.
    pub(super) signals: Vec<usize>,
}

impl Group {
    /// Samples in one frame of this file.
    pub(super) fn frame_samples(&self, header: &Header) -> u64 {
        self.signals
            .iter()
            .map(|&s| header.signals[s].samples_per_frame as u64)
            .sum()
    }

    /// The signal files of `header` (read from `header_path`, files in
    /// `dir`), each with its signals; refuses null signals, signals of
    /// one file on lines that are not consecutive, and (unless `options`
    /// allow it) file names that lead out of `dir`.
    pub(super) fn of_header(
        header: &Header,
        header_path: &Path,
        dir: &Path,
        options: &RecordOptions,
    ) -> Result<Vec<Group>> {
        let mut groups: Vec<Group> = Vec::new();
        for (i, spec) in header.signals.iter().enumerate() {
            if !options.allow_outside_folder && leads_out(&spec.file_name) {
                return Err(Error::new(
                    header_path,
                    ErrorKind::OutsideFolder {
                        file_name: spec.file_name.clone(),
                    },
                ));
            }
            if spec.file_name == "~" {
                return Err(Error::new(
                    header_path,
                    ErrorKind::Unsupported(
                        "null signals (file name \"~\") are not supported".into(),
                    ),
                ));
            }
            match groups.last_mut() {
                Some(g) if header.signals[g.signals[0]].file_name == spec.file_name => {
                    if g.format != spec.format {
                        return Err(Error::new(
                            header_path,
                            ErrorKind::Syntax(format!(
                                "signals {} and {i} share {} but have formats {} and {}",
                                g.signals[0],
                                spec.file_name,
                                g.format.code(),
                                spec.format.code()
                            )),
                        ));
                    }
                    g.signals.push(i);
                }
                _ => {
                    if groups
                        .iter()
                        .any(|g| header.signals[g.signals[0]].file_name == spec.file_name)
                    {
                        return Err(Error::new(
                            header_path,
                            ErrorKind::Syntax(format!(
                                "signals of {} are not on consecutive lines",
                                spec.file_name
                            )),
                        ));
                    }
                    groups.push(Group {
                        path: dir.join(&spec.file_name),
                        format: spec.format,
                        // One offset per file: the first signal line's, as
                        // the WFDB library uses.
                        byte_offset: spec.byte_offset,
                        signals: vec![i],
                    });
                }
            }
        }
        Ok(groups)
    }
}

/// Error unless a file of `size` bytes holds `frames` frames of `per_frame` samples.
pub(super) fn check_length(g: &Group, size: u64, frames: u64, per_frame: u64) -> Result<()> {
    let needed = frames
        .checked_mul(per_frame)
        .map(|n| g.format.bytes_for(n))
        .and_then(|b| b.checked_add(g.byte_offset));
    match needed {
        Some(expected) if expected <= size && expected <= usize::MAX as u64 => Ok(()),
        _ => Err(Error::new(
            &g.path,
            ErrorKind::TruncatedSignal {
                expected_bytes: needed.unwrap_or(u64::MAX),
                found_bytes: size,
                samples: frames,
                signals: g.signals.len(),
            },
        )),
    }
}
