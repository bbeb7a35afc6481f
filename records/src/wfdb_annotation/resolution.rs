//! The time-resolution note of an annotation file.
//!
//! Source: annot(5) and the byte layout of Python wfdb 4.x
//! (`wfdb/io/annotation.py`: `calc_fs_bytes` writes it, `rx_fs` and
//! `interpret_defintion_annotations` read it). The note is a NOTE
//! annotation (code 22) at time 0 whose aux text is
//! `## time resolution: R`; it says the file's times count ticks of R per
//! second instead of frames of the record. Python wfdb follows it with a
//! SKIP of −1 and a code-0 entry one tick later (its end-of-definitions
//! mark, back at time 0); that mark is taken as part of the note.

use std::path::Path;

use super::{
    decode_entries, encode_entries, put, Annotation, EncodeError, EncodeProblem,
    MAX_ANNOTATION_BYTES, NOTE,
};
use crate::error::{Error, ErrorKind, Result};
use crate::input::read_all;
use crate::wfdb_header::Header;

/// The aux text that starts the note, up to the rate.
const PREFIX: &str = "## time resolution:";

/// An annotation file as stored: its annotations, times in the file's own
/// ticks, and the time resolution its note states.
#[derive(Debug, Clone, PartialEq)]
pub struct AnnotationFile {
    /// Ticks per second of the stored times, when the file has a
    /// time-resolution note; `None`: the times are frames of the record.
    pub time_resolution: Option<f64>,
    /// Every entry but the note, in file order.
    pub annotations: Vec<Annotation>,
}

impl AnnotationFile {
    /// The annotations with their times in ticks of `fs` per second. The
    /// stored times count ticks of the note's rate, or of `frame_rate` (the
    /// record's) when the file states none; they are rescaled and rounded
    /// to the nearest tick when that rate differs from `fs`.
    pub fn at_rate(&self, frame_rate: f64, fs: f64) -> Vec<Annotation> {
        let stored = self.time_resolution.unwrap_or(frame_rate);
        let mut out = self.annotations.clone();
        if stored != fs && stored > 0.0 && fs > 0.0 {
            for a in &mut out {
                a.sample = (a.sample as f64 * fs / stored).round() as i64;
            }
        }
        out
    }
}

/// Decode the bytes of an annotation file, taking its time-resolution
/// note out of the annotations.
pub fn decode_annotation_file(bytes: &[u8]) -> std::result::Result<AnnotationFile, ErrorKind> {
    let mut annotations = decode_entries(bytes)?;
    let mut time_resolution = None;
    let found = annotations
        .iter()
        .take_while(|a| a.sample == 0)
        .position(|a| a.code == NOTE && a.aux.as_deref().is_some_and(|t| t.starts_with(PREFIX)));
    if let Some(at) = found {
        let note = annotations.remove(at);
        let text = note.aux.unwrap_or_default();
        time_resolution = Some(parse_rate(&text)?);
        let mark = Annotation::new(0, 0);
        if annotations.get(at) == Some(&mark) {
            annotations.remove(at);
        }
    }
    Ok(AnnotationFile {
        time_resolution,
        annotations,
    })
}

/// The rate of a note's text `## time resolution: R`.
fn parse_rate(text: &str) -> std::result::Result<f64, ErrorKind> {
    let rest = text[PREFIX.len()..].trim();
    let word = rest.split_whitespace().next().unwrap_or("");
    match word.parse::<f64>() {
        Ok(r) if r.is_finite() && r > 0.0 => Ok(r),
        _ => Err(ErrorKind::Syntax(format!(
            "time-resolution note {text:?}: the rate is not a number above 0"
        ))),
    }
}

/// Read the annotation file at `path` as stored (see [`AnnotationFile`]).
pub fn read_annotation_file(path: impl AsRef<Path>) -> Result<AnnotationFile> {
    let path = path.as_ref();
    let bytes = read_all(path, "annotation file", MAX_ANNOTATION_BYTES)?;
    decode_annotation_file(&bytes).map_err(|kind| Error::new(path, kind))
}

/// Read the annotation file at `path` with times in ticks of `fs` per
/// second (see [`AnnotationFile::at_rate`]; `frame_rate` is the record's).
pub fn read_annotations_at(
    path: impl AsRef<Path>,
    frame_rate: f64,
    fs: f64,
) -> Result<Vec<Annotation>> {
    Ok(read_annotation_file(path)?.at_rate(frame_rate, fs))
}

/// Read the annotation file at `path` with times in samples of a signal
/// sampled at `fs`: the stored times count the ticks of the file's note, or
/// frames of the record whose header sits beside the file, or (with neither,
/// as beside a CSV recording) samples at `fs` already. A signal with several
/// samples per frame thus gets its references in its own samples.
pub fn read_annotations_in_samples(path: impl AsRef<Path>, fs: f64) -> Result<Vec<Annotation>> {
    let path = path.as_ref();
    let file = read_annotation_file(path)?;
    let header_path = path.with_extension("hea");
    let frame_rate = if header_path.is_file() {
        Header::read(&header_path)?.fs
    } else {
        fs
    };
    Ok(file.at_rate(frame_rate, fs))
}

/// [`super::read_annotations`]: times in frames of the record beside the file.
pub(super) fn read_in_frames(path: &Path) -> Result<Vec<Annotation>> {
    let file = read_annotation_file(path)?;
    let Some(rate) = file.time_resolution else {
        return Ok(file.annotations);
    };
    let header_path = path.with_extension("hea");
    let header = Header::read(&header_path).map_err(|e| match e.kind() {
        ErrorKind::NotFound => Error::new(
            path,
            ErrorKind::Invalid(format!(
                "times are in ticks of {rate} per second and there is no record header {} \
                 to give the frame rate",
                header_path.display()
            )),
        ),
        _ => e,
    })?;
    Ok(file.at_rate(header.fs, header.fs))
}

/// Encode an annotation file: the time-resolution note first when there is
/// one (with Python wfdb's end-of-definitions mark), then the annotations
/// as [`super::encode_annotations`] writes them.
pub fn encode_annotation_file(file: &AnnotationFile) -> std::result::Result<Vec<u8>, EncodeError> {
    let mut out = Vec::with_capacity(file.annotations.len() * 2 + 40);
    if let Some(rate) = file.time_resolution {
        if !(rate.is_finite() && rate > 0.0) {
            return Err(EncodeError {
                index: 0,
                problem: EncodeProblem::BadResolution(rate.to_string()),
            });
        }
        let mut note = Annotation::new(0, NOTE);
        note.aux = Some(format!("{PREFIX} {rate}"));
        let head = [note, Annotation::new(0, 0)];
        encode_entries(&head, &mut out).expect("the note fits the format");
    }
    encode_entries(&file.annotations, &mut out)?;
    put(&mut out, 0, 0);
    Ok(out)
}

/// Write `file` to the annotation file `path` (see [`encode_annotation_file`]).
pub fn write_annotation_file(path: impl AsRef<Path>, file: &AnnotationFile) -> Result<()> {
    let path = path.as_ref();
    let bytes = encode_annotation_file(file)
        .map_err(|e| Error::new(path, ErrorKind::Invalid(e.to_string())))?;
    std::fs::write(path, bytes).map_err(|e| Error::from_io(path, "write", &e))
}
