//! Reading and writing recorded signals: WFDB records and annotations
//! (PhysioNet's open format) and CSV files, in pure Rust.
//!
//! * [`Record`] opens `dir/name` (or `dir/name.hea`) and reads its signals
//!   as stored integers or physical values (multi-segment records joined
//!   into one); [`RecordWriter`] writes one in format 16.
//! * [`read_annotations`] / [`write_annotations`] handle WFDB annotation
//!   files (MIT format), e.g. reference beat positions;
//!   [`AnnotationFile`] keeps a file's time-resolution note.
//! * [`read_csv_signal`] takes one column of a CSV file as a signal;
//!   [`read_numerics`] reads a table of sparse once-a-second values; uneven
//!   frame times are put on a uniform grid by [`resample`].
//! * [`read_rr_intervals`] reads a list of R-R intervals (a chest strap's).
//!
//! Every failure is an [`Error`] whose `Display` is one line naming the
//! file (and line) and the problem; malformed input never panics.

#![deny(missing_docs)]

mod csv;
mod error;
mod input;
mod numerics;
pub mod order_stat;
pub mod resample;
mod rr;
mod wfdb_annotation;
mod wfdb_format;
mod wfdb_header;
mod wfdb_signal;
mod wfdb_write;

#[cfg(test)]
pub(crate) mod test_support;

pub use csv::{
    csv_column_names, read_csv_signal, read_csv_signals, ColumnRef, CsvBlocks, CsvSignal,
    CsvSignalOptions, CsvSignals, Rate, TimeBase, TimeUnit, MAX_GRID_SAMPLES_PER_ROW, MAX_ROWS,
    MAX_TIME_S,
};
pub use error::{Error, ErrorKind, FileKind, Result, UnknownTimeUnit};
pub use input::MAX_LINE_BYTES;
pub use numerics::{read_numerics, Numerics};
pub use rr::read_rr_intervals;
pub use wfdb_annotation::{
    annotation_path, code_for_symbol, decode_annotation_file, decode_annotations,
    encode_annotation_file, encode_annotations, read_annotation_file, read_annotations,
    read_annotations_at, read_annotations_in_samples, symbol_for_code, write_annotation_file,
    write_annotations, Annotation, AnnotationFile, EncodeError, EncodeProblem,
    MAX_ANNOTATION_BYTES, NORMAL,
};
pub use wfdb_format::{FormatProblem, SignalFormat};
pub use wfdb_header::{
    BaseDate, BaseTime, Header, SegmentSpec, SignalSpec, DEFAULT_FS, DEFAULT_GAIN, DEFAULT_UNITS,
    MAX_HEADER_BYTES,
};
pub use wfdb_signal::{checksum, BlockSample, PhysicalBlocks, Record, RecordOptions, MAX_SAMPLES};
pub use wfdb_write::{write_record, NewSignal, RecordWriter};

/// The signal picked when the caller names none: the photoplethysmogram,
/// as the recordings this tool is checked on label it.
pub const DEFAULT_SIGNAL: &str = "PLETH";

/// One signal loaded for processing, whatever file it came from.
#[derive(Debug, Clone, PartialEq)]
pub struct LoadedSignal {
    /// The signal's name (WFDB description or CSV column name).
    pub name: String,
    /// Physical units, when the file says.
    pub units: Option<String>,
    /// Samples per second.
    pub fs: f64,
    /// The samples; NaN marks a missing sample.
    pub samples: Vec<f64>,
}

/// Load signal `name` (default [`DEFAULT_SIGNAL`]) of the WFDB record at
/// `path` (`dir/name` or `dir/name.hea`) in physical units.
pub fn read_wfdb_signal(
    path: impl AsRef<std::path::Path>,
    name: Option<&str>,
) -> Result<LoadedSignal> {
    Record::open(path)?.load_signal(name)
}
