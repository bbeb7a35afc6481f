//! What is wrong with a header field: the one error every field parser
//! (record and signal lines, limits, base time) gives.

use crate::error::{quoted, ErrorKind};

/// What is wrong with the text of a header line; one line, without the
/// file and line number (the caller adds them).
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub(super) enum FieldError {
    /// A field does not read as what it should be.
    #[error("bad {field} {}", quoted(.text))]
    Malformed { field: &'static str, text: String },
    /// A frequency is not above 0.
    #[error("bad {field} {}: must be above 0", quoted(.text))]
    NotAboveZero { field: &'static str, text: String },
    #[error("record line needs at least a record name and a number of signals")]
    RecordLineTooShort,
    #[error("record line has {0} fields, at most 6 are defined")]
    RecordLineTooLong(usize),
    #[error("implausible number of signals {0}")]
    TooManySignals(usize),
    #[error("base counter value {} lacks ')'", quoted(.0))]
    BaseCounterUnclosed(String),
    #[error("baseline in {} lacks ')'", quoted(.0))]
    BaselineUnclosed(String),
    #[error("segment line must hold a record name and a number of samples")]
    SegmentLine,
    #[error("empty signal line")]
    EmptySignalLine,
    #[error("signal line lacks the format field")]
    NoFormat,
    #[error("implausible samples per frame {0}")]
    TooManySamplesPerFrame(u32),
    /// A value that reads but makes no physical sense.
    #[error("{field} {} makes no physical sense ({expected})", quoted(.text))]
    Implausible {
        field: &'static str,
        text: String,
        expected: &'static str,
    },
}

impl FieldError {
    /// The error as one of the crate's [`ErrorKind`]s.
    pub(super) fn into_kind(self) -> ErrorKind {
        match self {
            FieldError::Implausible {
                field,
                text,
                expected,
            } => ErrorKind::Implausible {
                field,
                value: text,
                expected: expected.to_string(),
            },
            other => ErrorKind::Syntax(other.to_string()),
        }
    }
}

/// `text` as the field `field` that it fails to be.
pub(super) fn malformed(field: &'static str, text: &str) -> FieldError {
    FieldError::Malformed {
        field,
        text: text.to_owned(),
    }
}
