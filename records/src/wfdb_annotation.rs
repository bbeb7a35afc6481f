//! WFDB annotation files in the MIT format: reading and writing.
//!
//! Source: PhysioNet WFDB annotation file format specification, annot(5)
//! of the WFDB Applications Guide. The file is a sequence of 16-bit
//! little-endian words; each word's top 6 bits are a code A and its low
//! 10 bits a number I. A = 1..=49 starts an annotation of that type, I
//! samples after the previous one. The special codes are
//! SKIP (59: the next two words hold a 32-bit interval, high word first),
//! NUM (60: I is the `num` of this and later annotations),
//! SUB (61: I is this annotation's subtype),
//! CHN (62: I is the `chan` of this and later annotations) and
//! AUX (63: I bytes of text follow, padded to an even count).
//! A word of 0 ends the file; a code-0 entry at the same time as the one
//! before it is written as SKIP −1 and then the word `0, 1`, as Python
//! wfdb writes its end-of-definitions mark.
//!
//! A NOTE (22) at time 0 whose aux text is `## time resolution: R` says
//! that the file's times count ticks of R per second rather than frames of
//! the record (annot(5); the byte layout as Python wfdb 4.x
//! `wfdb/io/annotation.py` writes and reads it): see [`AnnotationFile`].

use std::path::{Path, PathBuf};

use super::error::{Error, ErrorKind, Result};

mod resolution;
pub use resolution::{
    decode_annotation_file, encode_annotation_file, read_annotation_file, read_annotations_at,
    read_annotations_in_samples, write_annotation_file, AnnotationFile,
};

const SKIP: u16 = 59;
const NUM: u16 = 60;
const SUB: u16 = 61;
const CHN: u16 = 62;
const AUX: u16 = 63;
/// Highest code that denotes an annotation type (ACMAX in the WFDB library).
const LAST_TYPE: u8 = 49;
/// Largest time step one annotation word holds.
const MAX_STEP: i64 = 0x3FF;

/// Code of a normal beat, symbol `N`.
pub const NORMAL: u8 = 1;
/// Code of a comment annotation (NOTE, symbol `"`), whose aux text is the comment.
const NOTE: u8 = 22;

/// One annotation.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Annotation {
    /// Time as a sample number (0-based): in frames of the record from
    /// [`read_annotations`], in the file's own ticks from
    /// [`decode_annotations`] and [`AnnotationFile`].
    pub sample: i64,
    /// Annotation type code (1..=49; 0 marks an entry that is not an
    /// annotation, which some files carry and which is written back as it
    /// came).
    pub code: u8,
    /// Subtype (signed, default 0).
    pub subtype: i8,
    /// Signal number the annotation belongs to (default 0).
    pub chan: u8,
    /// Annotator number field (signed, default 0).
    pub num: i8,
    /// Auxiliary text, e.g. a rhythm label; bytes are read as Latin-1.
    pub aux: Option<String>,
}

impl Annotation {
    /// An annotation of type `code` at `sample`, other fields at their defaults.
    pub fn new(sample: i64, code: u8) -> Annotation {
        Annotation {
            sample,
            code,
            subtype: 0,
            chan: 0,
            num: 0,
            aux: None,
        }
    }

    /// A normal beat (`N`) at `sample`.
    pub fn beat(sample: i64) -> Annotation {
        Annotation::new(sample, NORMAL)
    }

    /// The standard mnemonic of the type code, e.g. `N`; `None` for codes
    /// the standard table leaves free.
    pub fn symbol(&self) -> Option<&'static str> {
        symbol_for_code(self.code)
    }

    /// Does the annotation mark a beat (rather than a rhythm change, noise,
    /// a comment)? The beat codes of the WFDB code table (`N L R a V F J A
    /// S E j / Q r B e n f ?`; the list is from memory of WFDB's `isqrs`).
    pub fn is_beat(&self) -> bool {
        matches!(self.code, 1..=13 | 25 | 30 | 34 | 35 | 38 | 41)
    }
}

/// Standard mnemonics by code, from the annotation code table of the WFDB
/// specification (annot(5) / ecgcodes). Empty entries are undefined codes.
const SYMBOLS: [&str; 42] = [
    "", "N", "L", "R", "a", "V", "F", "J", "A", "S", "E", "j", "/", "Q", "~", "", "|", "", "s",
    "T", "*", "D", "\"", "=", "p", "B", "^", "t", "+", "u", "?", "!", "[", "]", "e", "n", "@", "x",
    "f", "(", ")", "r",
];

/// The standard mnemonic of annotation code `code`.
pub fn symbol_for_code(code: u8) -> Option<&'static str> {
    SYMBOLS
        .get(code as usize)
        .copied()
        .filter(|s| !s.is_empty())
}

/// The annotation code of a standard mnemonic, e.g. `N` → 1.
pub fn code_for_symbol(symbol: &str) -> Option<u8> {
    SYMBOLS
        .iter()
        .position(|s| !s.is_empty() && *s == symbol)
        .map(|i| i as u8)
}

/// The annotation file of `record` (`dir/name`, or `dir/name.hea`) with
/// extension `annotator`, e.g. `dir/name.peak`.
pub fn annotation_path(record: &Path, annotator: &str) -> PathBuf {
    let base = if record.extension().is_some_and(|e| e == "hea") {
        record.with_extension("")
    } else {
        record.to_path_buf()
    };
    let mut name = base.into_os_string();
    name.push(".");
    name.push(annotator);
    PathBuf::from(name)
}

/// Largest annotation file read: 32 million annotations at least, years
/// of beats, where each decoded annotation takes some 50 bytes of memory.
pub const MAX_ANNOTATION_BYTES: u64 = 64 << 20;

/// Read the annotation file at `path`, times in frames of the record.
///
/// A file whose time-resolution note differs from the frame rate of the
/// record beside it (`dir/name.hea` for `dir/name.ext`) has its times
/// converted to frames, rounded to the nearest, as the WFDB library reads
/// them; such a file with no record header beside it is an error (use
/// [`read_annotations_at`] or [`read_annotation_file`]).
pub fn read_annotations(path: impl AsRef<Path>) -> Result<Vec<Annotation>> {
    resolution::read_in_frames(path.as_ref())
}

/// Decode the bytes of an annotation file: every entry but the
/// time-resolution note, times in the file's own ticks.
pub fn decode_annotations(bytes: &[u8]) -> std::result::Result<Vec<Annotation>, ErrorKind> {
    decode_annotation_file(bytes).map(|f| f.annotations)
}

/// Every entry of an annotation file as stored, the notes included.
fn decode_entries(bytes: &[u8]) -> std::result::Result<Vec<Annotation>, ErrorKind> {
    if bytes.is_empty() {
        return Err(ErrorKind::Empty);
    }
    let word_at = |pos: usize| -> Option<u16> {
        Some(u16::from_le_bytes([*bytes.get(pos)?, *bytes.get(pos + 1)?]))
    };
    let mut out: Vec<Annotation> = Vec::new();
    let (mut time, mut chan, mut num) = (0i64, 0u8, 0i8);
    let mut pos = 0usize;
    loop {
        let Some(word) = word_at(pos) else {
            return Err(ErrorKind::Truncated(if pos < bytes.len() {
                format!("odd byte at {pos}: annotation files are 16-bit words")
            } else {
                "no end-of-file word (0x0000) after the last annotation".into()
            }));
        };
        let (code, value) = (word >> 10, word & 0x3FF);
        match code {
            0 if value == 0 => break,
            SKIP => {
                let (Some(high), Some(low)) = (word_at(pos + 2), word_at(pos + 4)) else {
                    return Err(ErrorKind::Truncated(format!(
                        "SKIP word at byte {pos} lacks its 4-byte interval"
                    )));
                };
                let step = ((high as u32) << 16 | low as u32) as i32;
                time += step as i64;
                pos += 6;
                continue;
            }
            NUM => {
                num = value as u8 as i8;
                last(&mut out, "NUM", pos)?.num = num;
            }
            SUB => last(&mut out, "SUB", pos)?.subtype = value as u8 as i8,
            CHN => {
                chan = value as u8;
                last(&mut out, "CHN", pos)?.chan = chan;
            }
            AUX => {
                // The length is the low byte, as the WFDB library keeps it.
                let len = (value & 0xFF) as usize;
                let text = bytes.get(pos + 2..pos + 2 + len).ok_or_else(|| {
                    ErrorKind::Truncated(format!(
                        "AUX word at byte {pos} announces {len} bytes, {} remain",
                        bytes.len() - pos - 2
                    ))
                })?;
                // Latin-1: every byte is the code point of the same number.
                let text: String = text.iter().map(|&b| b as char).collect();
                last(&mut out, "AUX", pos)?.aux = Some(text);
                pos += 2 + len + len % 2;
                continue;
            }
            _ => {
                time += value as i64;
                let mut a = Annotation::new(time, code as u8);
                a.chan = chan;
                a.num = num;
                out.push(a);
            }
        }
        pos += 2;
    }
    Ok(out)
}

/// The annotation a modifier word at byte `pos` refers to: the one just read.
fn last<'a>(
    out: &'a mut [Annotation],
    name: &str,
    pos: usize,
) -> std::result::Result<&'a mut Annotation, ErrorKind> {
    out.last_mut().ok_or_else(|| {
        ErrorKind::Syntax(format!(
            "{name} word at byte {pos} comes before any annotation"
        ))
    })
}

/// Append one annotation word: code in the top 6 bits, value in the low 10.
fn put(out: &mut Vec<u8>, code: u16, value: u16) {
    out.extend_from_slice(&(code << 10 | (value & 0x3FF)).to_le_bytes());
}

/// An annotation the file format cannot hold; one line.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("annotation {index}: {problem}")]
pub struct EncodeError {
    /// Its place in the list.
    pub index: usize,
    /// What is wrong with it.
    #[source]
    pub problem: EncodeProblem,
}

/// What keeps one annotation out of an annotation file.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum EncodeProblem {
    /// The code is no annotation type.
    #[error("code {0} is not an annotation type (0..={LAST_TYPE})")]
    NotAType(u8),
    /// The time resolution (shown as text) is not a finite rate above 0.
    #[error("time resolution {0} is not a rate above 0 per second")]
    BadResolution(String),
    /// Its sample comes before the one before it (or before 0).
    #[error(
        "sample {sample} comes before the previous one ({previous}); \
         annotations must be in time order from sample 0"
    )]
    OutOfOrder {
        /// Its sample.
        sample: i64,
        /// The previous annotation's (0 for the first).
        previous: i64,
    },
    /// The aux text has a character outside Latin-1.
    #[error("aux text has a character outside Latin-1")]
    NotLatin1,
    /// The aux text is longer than 255 bytes.
    #[error("aux text of {0} bytes, at most 255 fit")]
    AuxTooLong(usize),
}

/// Encode annotations as an annotation file's bytes.
///
/// Annotations must be in time order (equal times allowed), at sample 0 or
/// later, with codes 0..=49 and aux text of at most 255 Latin-1
/// characters. Steps above 1023 samples go in SKIP words; `chan` and `num`
/// are written only where they change, the subtype only where it is not 0,
/// as the specification's carry-over rules allow. Times are written as
/// they are, with no time-resolution note ([`encode_annotation_file`]
/// writes one).
pub fn encode_annotations(annotations: &[Annotation]) -> std::result::Result<Vec<u8>, EncodeError> {
    let mut out = Vec::with_capacity(annotations.len() * 2 + 2);
    encode_entries(annotations, &mut out)?;
    put(&mut out, 0, 0);
    Ok(out)
}

/// Append the words of `annotations` (no end word) to `out`.
fn encode_entries(
    annotations: &[Annotation],
    out: &mut Vec<u8>,
) -> std::result::Result<(), EncodeError> {
    let (mut time, mut chan, mut num) = (0i64, 0u8, 0i8);
    for (index, a) in annotations.iter().enumerate() {
        let refuse = |problem| Err(EncodeError { index, problem });
        if a.code > LAST_TYPE {
            return refuse(EncodeProblem::NotAType(a.code));
        }
        if a.sample < time {
            return refuse(EncodeProblem::OutOfOrder {
                sample: a.sample,
                previous: time,
            });
        }
        let mut step = a.sample - time;
        if step > MAX_STEP {
            // One SKIP holds a signed 32-bit interval; longer gaps take several.
            while step > 0 {
                let part = step.min(i32::MAX as i64) as i32;
                put_skip(out, part);
                step -= part as i64;
            }
        }
        if a.code == 0 && step == 0 {
            // The word 0, 0 would end the file: step back one tick first.
            put_skip(out, -1);
            step = 1;
        }
        put(out, a.code as u16, step as u16);
        if a.subtype != 0 {
            put(out, SUB, a.subtype as u8 as u16);
        }
        if a.chan != chan {
            put(out, CHN, a.chan as u16);
            chan = a.chan;
        }
        if a.num != num {
            put(out, NUM, a.num as u8 as u16);
            num = a.num;
        }
        if let Some(text) = &a.aux {
            let Ok(bytes) = text
                .chars()
                .map(|c| u8::try_from(c as u32))
                .collect::<std::result::Result<Vec<u8>, _>>()
            else {
                return refuse(EncodeProblem::NotLatin1);
            };
            if bytes.len() > 255 {
                return refuse(EncodeProblem::AuxTooLong(bytes.len()));
            }
            put(out, AUX, bytes.len() as u16);
            out.extend_from_slice(&bytes);
            if bytes.len() % 2 == 1 {
                out.push(0);
            }
        }
        time = a.sample;
    }
    Ok(())
}

/// Append a SKIP word and its signed 32-bit interval, high word first.
fn put_skip(out: &mut Vec<u8>, interval: i32) {
    let bits = interval as u32;
    put(out, SKIP, 0);
    out.extend_from_slice(&((bits >> 16) as u16).to_le_bytes());
    out.extend_from_slice(&(bits as u16).to_le_bytes());
}

/// Write `annotations` to the annotation file `path` (see
/// [`encode_annotations`] for what is accepted).
pub fn write_annotations(path: impl AsRef<Path>, annotations: &[Annotation]) -> Result<()> {
    let path = path.as_ref();
    let bytes = encode_annotations(annotations)
        .map_err(|e| Error::new(path, ErrorKind::Invalid(e.to_string())))?;
    std::fs::write(path, bytes).map_err(|e| Error::from_io(path, "write", &e))
}

#[cfg(test)]
mod tests;
