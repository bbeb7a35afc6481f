//! What opening a record may read: the options, the header's place, the
//! signal file names that stay in the record's folder, and skews that fit.

use std::path::{Component, Path, PathBuf};

use super::super::error::{Error, ErrorKind, Result};
use super::super::wfdb_header::Header;

/// Most samples read from one signal file at once by default: over a day
/// of one signal at 1000 Hz, 400 MB as stored integers.
pub const MAX_SAMPLES: u64 = 100_000_000;

/// How [`Record::open_with`](super::Record::open_with) opens a record and
/// how much it reads.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct RecordOptions {
    /// Take signal file names that lead out of the header's folder
    /// (`../x`, `/etc/passwd`). Off by default: a header from elsewhere
    /// could otherwise make a command read any file it can reach.
    pub allow_outside_folder: bool,
    /// Most samples read from one signal file at once (default
    /// [`MAX_SAMPLES`]); a read asking for more is refused before any
    /// memory is taken for it.
    pub max_samples: u64,
}

impl Default for RecordOptions {
    fn default() -> Self {
        RecordOptions {
            allow_outside_folder: false,
            max_samples: MAX_SAMPLES,
        }
    }
}

/// `dir/name` for `dir/name`, `dir/name.hea` or `dir/name.`: the header
/// path and the folder the signal file names are relative to. A folder
/// given in place of a record is refused, unless a header of that name
/// stands beside it.
pub(super) fn header_path_of(path: &Path) -> Result<(PathBuf, PathBuf)> {
    let dir = path.parent().map(Path::to_path_buf).unwrap_or_default();
    let is_hea = path.extension().is_some_and(|e| e == "hea");
    let header = if is_hea {
        path.to_path_buf()
    } else {
        let mut name = path.as_os_str().to_os_string();
        name.push(".hea");
        PathBuf::from(name)
    };
    if path.is_dir() && !header.is_file() {
        return Err(Error::new(path, ErrorKind::FolderNotRecord));
    }
    Ok((header, dir))
}

/// Whether signal file name `name` leads out of the folder it is
/// relative to: an absolute path, or more `..` than folders before them.
pub(super) fn leads_out(name: &str) -> bool {
    let mut depth = 0usize;
    for part in Path::new(name).components() {
        match part {
            Component::Normal(_) => depth += 1,
            Component::CurDir => {}
            Component::ParentDir => match depth.checked_sub(1) {
                Some(d) => depth = d,
                None => return true,
            },
            Component::RootDir | Component::Prefix(_) => return true,
        }
    }
    false
}

/// Refuse a skew longer than the record: a signal cannot lag by more
/// frames than the record holds.
pub(super) fn check_skews(header: &Header, header_path: &Path, frames: u64) -> Result<()> {
    for (i, spec) in header.signals.iter().enumerate() {
        if u64::from(spec.skew) > frames {
            return Err(Error::new(
                header_path,
                ErrorKind::Implausible {
                    field: "skew",
                    value: spec.skew.to_string(),
                    expected: format!("signal {i} can lag at most the record's {frames} frames"),
                },
            ));
        }
    }
    Ok(())
}
