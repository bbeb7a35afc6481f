//! The beat annotation file, kept whole on disk while the session runs.
//!
//! A WFDB annotation file is a run of entries ended by a 0x0000 word
//! (PhysioNet annotation file format, annot(5)). Each [`BeatFile::flush`]
//! writes the beats that came since the last one, followed by a new end
//! word, over the old end word, in one write: a process killed at any
//! moment leaves either the old file or the new one, both whole, because
//! a write the kernel has taken into its page cache is finished even if
//! the writer dies. (A power cut can still lose what the system had not
//! put on the disk yet.) A beat earlier than one already written (a board
//! restart's late frames) cannot be appended in time order; then the whole
//! file is written beside it and renamed over it.

use plethwire_records::{encode_annotations, Annotation};
use std::fs::{File, OpenOptions};
use std::io::{self, Seek, SeekFrom, Write};
use std::path::{Path, PathBuf};

/// The file's end word.
const END: [u8; 2] = [0, 0];

/// Beats in time order, appended to their annotation file as they come.
pub struct BeatFile {
    path: PathBuf,
    file: Option<File>,
    /// Every beat's record sample; `beats[..written]` are on disk.
    beats: Vec<i64>,
    written: usize,
    /// Length of the file on disk, its end word included.
    len: u64,
}

impl BeatFile {
    /// A beat file at `path`; nothing is written before [`BeatFile::flush`].
    pub fn new(path: &Path) -> Self {
        Self {
            path: path.to_path_buf(),
            file: None,
            beats: Vec::new(),
            written: 0,
            len: 0,
        }
    }

    /// The file's path.
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// Beats taken so far.
    pub fn count(&self) -> usize {
        self.beats.len()
    }

    /// Take a beat at record sample `sample` (0 or more).
    pub fn push(&mut self, sample: u64) {
        self.beats.push(i64::try_from(sample).unwrap_or(i64::MAX));
    }

    /// Put the beats taken since the last flush into the file (made on the
    /// first call, empty or not).
    pub fn flush(&mut self) -> io::Result<()> {
        if self.file.is_some() && self.written == self.beats.len() {
            return Ok(());
        }
        self.beats[self.written..].sort_unstable();
        let last = self.written.checked_sub(1).map(|i| self.beats[i]);
        let in_order = match (last, self.beats.get(self.written)) {
            (Some(last), Some(&next)) => next >= last,
            _ => true,
        };
        if self.file.is_none() || !in_order {
            return self.rewrite();
        }
        let base = last.unwrap_or(0);
        let shifted: Vec<Annotation> = self.beats[self.written..]
            .iter()
            .map(|&s| Annotation::beat(s - base))
            .collect();
        let bytes = encode(&shifted, &self.path)?;
        let file = self.file.as_mut().expect("opened above");
        // Over the old end word; the new one ends `bytes`.
        let at = self.len - END.len() as u64;
        file.seek(SeekFrom::Start(at))?;
        file.write_all(&bytes)?;
        self.len = at + bytes.len() as u64;
        self.written = self.beats.len();
        Ok(())
    }

    /// Write every beat, in order, beside the file and rename it over.
    fn rewrite(&mut self) -> io::Result<()> {
        self.beats.sort_unstable();
        let all: Vec<Annotation> = self.beats.iter().map(|&s| Annotation::beat(s)).collect();
        let bytes = encode(&all, &self.path)?;
        let mut tmp = self.path.clone().into_os_string();
        tmp.push(".part");
        let tmp = PathBuf::from(tmp);
        std::fs::write(&tmp, &bytes)?;
        std::fs::rename(&tmp, &self.path)?;
        self.file = Some(OpenOptions::new().write(true).open(&self.path)?);
        self.len = bytes.len() as u64;
        self.written = self.beats.len();
        Ok(())
    }
}

fn encode(annotations: &[Annotation], path: &Path) -> io::Result<Vec<u8>> {
    encode_annotations(annotations).map_err(|e| {
        io::Error::new(
            io::ErrorKind::InvalidData,
            format!("{}: cannot write the beats: {e}", path.display()),
        )
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use plethwire_records::read_annotations;

    fn samples(path: &Path) -> Vec<i64> {
        read_annotations(path)
            .unwrap()
            .iter()
            .map(|a| a.sample)
            .collect()
    }

    #[test]
    fn each_flush_leaves_a_whole_file_and_late_beats_rewrite_it() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("r.pwire");
        let mut f = BeatFile::new(&path);
        f.flush().unwrap();
        assert_eq!(std::fs::read(&path).unwrap(), END);
        f.push(100);
        f.push(40);
        f.flush().unwrap();
        assert_eq!(samples(&path), [40, 100]);
        // A step that needs a SKIP entry, appended.
        f.push(100 + 5000);
        f.flush().unwrap();
        assert_eq!(samples(&path), [40, 100, 5100]);
        // The appended bytes are the same as one whole file's.
        let all = [40, 100, 5100].map(Annotation::beat);
        assert_eq!(
            std::fs::read(&path).unwrap(),
            encode_annotations(&all).unwrap()
        );
        // Earlier than the last beat written: the file is rewritten.
        f.push(70);
        f.flush().unwrap();
        assert_eq!(samples(&path), [40, 70, 100, 5100]);
        f.push(6000);
        f.flush().unwrap();
        assert_eq!(samples(&path), [40, 70, 100, 5100, 6000]);
        assert_eq!(f.count(), 5);
    }
}
