//! The one error type of the readers and writers in this crate.
//!
//! Every error names the file it is about and, where it applies, the line;
//! its `Display` is a single line such as
//! `bidmc01.dat: truncated: expected 240004 bytes for 60001 samples of 2 signals, found 1000`
//! or `x.hea line 2: unknown signal format code 999`, so a command can print
//! it as it is.

use std::fmt;
use std::path::{Path, PathBuf};

/// Result of the reading and writing functions in this crate.
pub type Result<T> = std::result::Result<T, Error>;

/// What went wrong with a file: see [`ErrorKind`]; where: [`Error::path`]
/// and [`Error::line`].
#[derive(Debug, Clone, PartialEq)]
pub struct Error {
    path: PathBuf,
    line: Option<usize>,
    kind: ErrorKind,
}

/// The problems the readers and writers report.
#[derive(Debug, Clone, PartialEq)]
#[non_exhaustive]
pub enum ErrorKind {
    /// The file does not exist.
    NotFound,
    /// The operating system refused to read or write the file.
    Io {
        /// `"read"` or `"write"`.
        action: &'static str,
        /// The operating system's message.
        message: String,
    },
    /// The file has no content at all.
    Empty,
    /// The text does not follow the format (header, CSV or annotation file).
    Syntax(String),
    /// A header names a signal format code that no WFDB format has.
    UnknownFormat(String),
    /// The file is valid but uses a feature these readers do not implement.
    Unsupported(String),
    /// A signal file holds fewer bytes than its header promises.
    TruncatedSignal {
        /// Bytes the header implies, counting the byte offset.
        expected_bytes: u64,
        /// Bytes present.
        found_bytes: u64,
        /// Samples per signal (frames) the header promises.
        samples: u64,
        /// Signals stored in this file.
        signals: usize,
    },
    /// A binary file ends in the middle of an item.
    Truncated(String),
    /// No signal has the wanted name.
    NoSuchSignal {
        /// The name asked for.
        wanted: String,
        /// The names the record or table does have.
        available: Vec<String>,
    },
    /// A cell of a number column holds text that is not a number.
    NotANumber {
        /// The column's name (or `#index` when the file has no header).
        column: String,
        /// The cell's text.
        text: String,
    },
    /// The data handed to a writer, or asked of a reader, cannot be honoured.
    Invalid(String),
    /// The path is not a regular file (a folder, a FIFO, a device, a
    /// socket): refused before anything is read from it.
    NotRegular(FileKind),
    /// A folder was given where a WFDB record was expected.
    FolderNotRecord,
    /// The file is larger than any file of its kind needs to be.
    TooLarge {
        /// What the file is, e.g. `"header"`.
        what: &'static str,
        /// Its size in bytes.
        bytes: u64,
        /// The most this reader takes.
        limit: u64,
    },
    /// More samples (or rows) than a reader loads at once.
    TooManySamples {
        /// The samples (or rows) the file would give.
        samples: u64,
        /// The most the reader loads.
        limit: u64,
    },
    /// A field holds a value that makes no physical sense.
    Implausible {
        /// The field, e.g. `"ADC gain"`.
        field: &'static str,
        /// The value as the file gives it.
        value: String,
        /// What a plausible value is.
        expected: String,
    },
    /// A header's signal file name leads out of the record's folder.
    OutsideFolder {
        /// The file name as the header gives it.
        file_name: String,
    },
}

/// What a path that is not a regular file is.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FileKind {
    /// A folder (directory).
    Folder,
    /// A named pipe, which would block a reader until someone writes.
    Fifo,
    /// A character or block device (`/dev/zero` would never end).
    Device,
    /// A socket.
    Socket,
    /// Anything else that is not a regular file.
    Other,
}

impl fmt::Display for FileKind {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            FileKind::Folder => "a folder",
            FileKind::Fifo => "a named pipe (FIFO)",
            FileKind::Device => "a device",
            FileKind::Socket => "a socket",
            FileKind::Other => "not a regular file",
        })
    }
}

impl Error {
    /// An error about `path`, not tied to a line.
    pub fn new(path: impl AsRef<Path>, kind: ErrorKind) -> Error {
        Error {
            path: path.as_ref().to_path_buf(),
            line: None,
            kind,
        }
    }

    /// The same error, placed on 1-based `line` of the file.
    pub fn at_line(mut self, line: usize) -> Error {
        self.line = Some(line);
        self
    }

    /// A syntax error on `line` of `path`.
    pub(crate) fn syntax(path: &Path, line: usize, message: impl Into<String>) -> Error {
        Error::new(path, ErrorKind::Syntax(message.into())).at_line(line)
    }

    /// Turn an operating-system error on `path` into ours.
    pub(crate) fn from_io(path: &Path, action: &'static str, err: &std::io::Error) -> Error {
        let kind = if err.kind() == std::io::ErrorKind::NotFound {
            ErrorKind::NotFound
        } else {
            ErrorKind::Io {
                action,
                message: err.to_string(),
            }
        };
        Error::new(path, kind)
    }

    /// The file the error is about.
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// The 1-based line of the file, for text formats.
    pub fn line(&self) -> Option<usize> {
        self.line
    }

    /// What went wrong.
    pub fn kind(&self) -> &ErrorKind {
        &self.kind
    }
}

/// Show text taken from a file inside a one-line message: quoted, with
/// control characters escaped, and cut short when long.
pub(crate) fn quoted(text: &str) -> String {
    const MAX_CHARS: usize = 40;
    let mut shown: String = text.chars().take(MAX_CHARS).collect();
    if shown.len() < text.len() {
        shown.push('…');
    }
    format!("{shown:?}")
}

impl fmt::Display for ErrorKind {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            ErrorKind::NotFound => write!(f, "no such file"),
            ErrorKind::Io { action, message } => write!(f, "cannot {action}: {message}"),
            ErrorKind::Empty => write!(f, "empty file"),
            ErrorKind::Syntax(message)
            | ErrorKind::Unsupported(message)
            | ErrorKind::Invalid(message) => write!(f, "{message}"),
            ErrorKind::UnknownFormat(code) => write!(f, "unknown signal format code {code}"),
            ErrorKind::TruncatedSignal {
                expected_bytes,
                found_bytes,
                samples,
                signals,
            } => write!(
                f,
                "truncated: expected {expected_bytes} bytes for {samples} samples of {signals} signal{}, found {found_bytes}",
                if *signals == 1 { "" } else { "s" }
            ),
            ErrorKind::Truncated(message) => write!(f, "truncated: {message}"),
            ErrorKind::NoSuchSignal { wanted, available } => {
                let names: Vec<String> = available.iter().map(|n| quoted(n)).collect();
                write!(
                    f,
                    "no signal named {} (available: {})",
                    quoted(wanted),
                    if names.is_empty() {
                        "none".to_string()
                    } else {
                        names.join(", ")
                    }
                )
            }
            ErrorKind::NotANumber { column, text } => {
                write!(f, "column {}: {} is not a number", quoted(column), quoted(text))
            }
            ErrorKind::NotRegular(kind) => {
                write!(f, "is {kind}, not a regular file; refused before reading")
            }
            ErrorKind::FolderNotRecord => write!(
                f,
                "is a folder, not a WFDB record; name a record in it (FOLDER/NAME or FOLDER/NAME.hea)"
            ),
            ErrorKind::TooLarge { what, bytes, limit } => write!(
                f,
                "{bytes} bytes is larger than any {what} needs (at most {limit} are read)"
            ),
            ErrorKind::TooManySamples { samples, limit } => write!(
                f,
                "{samples} samples is more than the {limit} these readers load at once"
            ),
            ErrorKind::Implausible {
                field,
                value,
                expected,
            } => write!(
                f,
                "{field} {} makes no physical sense ({expected})",
                quoted(value)
            ),
            ErrorKind::OutsideFolder { file_name } => write!(
                f,
                "signal file {} leads out of the record's folder; refused unless reading outside it is allowed (plethwire: --allow-outside-signal-files)",
                quoted(file_name)
            ),
        }
    }
}

impl fmt::Display for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.path.display())?;
        if let Some(line) = self.line {
            write!(f, " line {line}")?;
        }
        // Messages carry file text only through `quoted`, but a path or an
        // OS message could still hold a line break: keep the promise of one line.
        let message = self.kind.to_string().replace(['\n', '\r'], " ");
        write!(f, ": {message}")
    }
}

impl std::error::Error for Error {}

/// A time unit other than `s`, `ms` or `us`; holds the text given.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct UnknownTimeUnit(pub String);

impl fmt::Display for UnknownTimeUnit {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "unknown time unit {} (use s, ms or us)", quoted(&self.0))
    }
}

impl std::error::Error for UnknownTimeUnit {}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn display_is_one_line_naming_file_and_line() {
        let e = Error::new("x.hea", ErrorKind::UnknownFormat("999".into())).at_line(2);
        assert_eq!(
            e.to_string(),
            "x.hea line 2: unknown signal format code 999"
        );
        let t = Error::new(
            "bidmc01.dat",
            ErrorKind::TruncatedSignal {
                expected_bytes: 240004,
                found_bytes: 1000,
                samples: 60001,
                signals: 2,
            },
        );
        assert_eq!(
            t.to_string(),
            "bidmc01.dat: truncated: expected 240004 bytes for 60001 samples of 2 signals, found 1000"
        );
    }

    #[test]
    fn quoted_text_is_escaped_and_cut() {
        assert_eq!(quoted("a\nb"), "\"a\\nb\"");
        let long = "x".repeat(100);
        let q = quoted(&long);
        assert!(q.chars().count() < 50, "{q}");
        assert!(q.contains('…'));
    }

    #[test]
    fn missing_signal_lists_the_names() {
        let e = Error::new(
            "r.hea",
            ErrorKind::NoSuchSignal {
                wanted: "PLETH".into(),
                available: vec!["II".into(), "V".into()],
            },
        );
        assert_eq!(
            e.to_string(),
            "r.hea: no signal named \"PLETH\" (available: \"II\", \"V\")"
        );
    }
}
