//! Opening the files the readers take: regular files only, refused before
//! anything is read from them (a FIFO would block, `/dev/zero` would never
//! end), and never more bytes read than a reader uses.

use std::fs::{File, Metadata};
use std::io::{BufRead, BufReader, Read, Seek, SeekFrom};
use std::path::Path;

use crate::error::{Error, ErrorKind, FileKind, Result};

/// What `meta` describes, when it is not a regular file.
fn irregular(meta: &Metadata) -> Option<FileKind> {
    let t = meta.file_type();
    if t.is_file() {
        return None;
    }
    if t.is_dir() {
        return Some(FileKind::Folder);
    }
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt;
        if t.is_fifo() {
            return Some(FileKind::Fifo);
        }
        if t.is_char_device() || t.is_block_device() {
            return Some(FileKind::Device);
        }
        if t.is_socket() {
            return Some(FileKind::Socket);
        }
    }
    Some(FileKind::Other)
}

/// Size in bytes of the regular file at `path` (links followed); any
/// other kind of path is refused without opening it.
pub(crate) fn regular_size(path: &Path) -> Result<u64> {
    let meta = std::fs::metadata(path).map_err(|e| Error::from_io(path, "read", &e))?;
    match irregular(&meta) {
        Some(kind) => Err(Error::new(path, ErrorKind::NotRegular(kind))),
        None => Ok(meta.len()),
    }
}

/// The regular file at `path`, opened for reading, and its size.
pub(crate) fn open_regular(path: &Path) -> Result<(File, u64)> {
    // Looked at before opening: opening a FIFO for reading already blocks.
    regular_size(path)?;
    let file = File::open(path).map_err(|e| Error::from_io(path, "read", &e))?;
    // And again on what was opened, in case the path was replaced meanwhile.
    let meta = file
        .metadata()
        .map_err(|e| Error::from_io(path, "read", &e))?;
    match irregular(&meta) {
        Some(kind) => Err(Error::new(path, ErrorKind::NotRegular(kind))),
        None => Ok((file, meta.len())),
    }
}

/// The whole regular file at `path`, refused when it holds more than
/// `limit` bytes (`what` names the kind of file in that error).
pub(crate) fn read_all(path: &Path, what: &'static str, limit: u64) -> Result<Vec<u8>> {
    let (file, size) = open_regular(path)?;
    let too_large = |bytes| Error::new(path, ErrorKind::TooLarge { what, bytes, limit });
    if size > limit {
        return Err(too_large(size));
    }
    let mut bytes = Vec::with_capacity(size as usize);
    // One byte past the limit tells a file that grew since it was looked at.
    file.take(limit + 1)
        .read_to_end(&mut bytes)
        .map_err(|e| Error::from_io(path, "read", &e))?;
    if bytes.len() as u64 > limit {
        return Err(too_large(bytes.len() as u64));
    }
    Ok(bytes)
}

/// Up to `len` bytes of the regular file at `path` from byte `offset` on:
/// fewer when the file ends first, never more.
pub(crate) fn read_span(path: &Path, offset: u64, len: u64) -> Result<Vec<u8>> {
    let (mut file, size) = open_regular(path)?;
    let present = size.saturating_sub(offset).min(len);
    let mut bytes = Vec::with_capacity(present as usize);
    if present > 0 {
        file.seek(SeekFrom::Start(offset))
            .map_err(|e| Error::from_io(path, "read", &e))?;
        file.take(len)
            .read_to_end(&mut bytes)
            .map_err(|e| Error::from_io(path, "read", &e))?;
    }
    Ok(bytes)
}

/// Longest line the text readers take: far more than any row of numbers
/// needs, and it stops a file with no line breaks from being read whole.
pub const MAX_LINE_BYTES: usize = 1 << 20;

/// The lines of a text file, read one at a time.
pub(crate) struct Lines {
    reader: BufReader<File>,
    path: std::path::PathBuf,
    /// 1-based number of the last line read.
    no: usize,
    buf: Vec<u8>,
    text: String,
}

impl Lines {
    /// Open the regular file at `path`.
    pub(crate) fn open(path: &Path) -> Result<Lines> {
        let (file, _) = open_regular(path)?;
        Ok(Lines {
            reader: BufReader::new(file),
            path: path.to_path_buf(),
            no: 0,
            buf: Vec::new(),
            text: String::new(),
        })
    }

    /// The next line that is not blank, as (1-based number, text without
    /// the line end or a leading byte-order mark); `None` at the end. A
    /// line longer than [`MAX_LINE_BYTES`] or not UTF-8 is an error.
    pub(crate) fn next_line(&mut self) -> Result<Option<(usize, &str)>> {
        loop {
            self.buf.clear();
            let limit = MAX_LINE_BYTES as u64 + 1;
            let n = (&mut self.reader)
                .take(limit)
                .read_until(b'\n', &mut self.buf)
                .map_err(|e| Error::from_io(&self.path, "read", &e))?;
            if n == 0 {
                return Ok(None);
            }
            self.no += 1;
            if self.buf.last() != Some(&b'\n') && n as u64 == limit {
                return Err(Error::syntax(
                    &self.path,
                    self.no,
                    format!("line longer than {MAX_LINE_BYTES} bytes"),
                ));
            }
            let mut raw = self.buf.as_slice();
            if self.no == 1 {
                raw = raw.strip_prefix(b"\xEF\xBB\xBF").unwrap_or(raw);
            }
            let raw = raw.strip_suffix(b"\n").unwrap_or(raw);
            let raw = raw.strip_suffix(b"\r").unwrap_or(raw);
            let text = std::str::from_utf8(raw)
                .map_err(|_| Error::syntax(&self.path, self.no, "not UTF-8 text"))?;
            if !text.trim().is_empty() {
                self.text.clear();
                self.text.push_str(text);
                return Ok(Some((self.no, &self.text)));
            }
        }
    }
}
