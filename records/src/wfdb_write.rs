//! Writing WFDB records in format 16: one signal file holding every
//! signal interleaved, and a header giving each signal's name, units, gain,
//! baseline, initial value and checksum (PhysioNet WFDB header and signal
//! file format specifications, header(5) and signal(5)).
//!
//! [`RecordWriter`] takes frames as they come, so a live session can be
//! recorded without holding it in memory; the header, which needs the
//! length and checksums, is written by [`RecordWriter::finish`], and as
//! often as wanted before by [`RecordWriter::checkpoint`].

use std::fs::File;
use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};

use super::error::{Error, ErrorKind, Result};
use super::wfdb_format::{encode_fmt16, SignalFormat};
use super::wfdb_header::{Header, SignalSpec};

/// How one signal of a new record is described in its header.
#[derive(Debug, Clone, PartialEq)]
pub struct NewSignal {
    /// Description, e.g. `PLETH` (no line breaks).
    pub name: String,
    /// Physical units, e.g. `NU` or `mV` (no blanks).
    pub units: String,
    /// Stored units per physical unit (finite, not 0).
    pub adc_gain: f64,
    /// Stored value of physical zero.
    pub baseline: i32,
    /// Resolution of the converter that made the samples, in bits (1..=16).
    pub adc_resolution: u32,
}

impl NewSignal {
    /// A signal with 16-bit resolution.
    pub fn new(name: &str, units: &str, adc_gain: f64, baseline: i32) -> NewSignal {
        NewSignal {
            name: name.to_string(),
            units: units.to_string(),
            adc_gain,
            baseline,
            adc_resolution: 16,
        }
    }
}

/// Writes a format 16 record frame by frame.
pub struct RecordWriter {
    dir: PathBuf,
    dat_path: PathBuf,
    header: Header,
    out: BufWriter<File>,
    frames: u64,
    sums: Vec<i16>,
    first: Option<Vec<i16>>,
    buf: Vec<u8>,
}

impl RecordWriter {
    /// Start record `name` in `dir` (files `name.dat` and, at the end,
    /// `name.hea`) with sampling frequency `fs`.
    pub fn create(dir: &Path, name: &str, fs: f64, signals: &[NewSignal]) -> Result<RecordWriter> {
        let header_path = dir.join(format!("{name}.hea"));
        let invalid = |m: String| Error::new(&header_path, ErrorKind::Invalid(m));
        if name.is_empty() || !name.chars().all(|c| c.is_ascii_alphanumeric() || c == '_') {
            return Err(invalid(format!(
                "record name {name:?} may hold only letters, digits and underscores"
            )));
        }
        if !(fs.is_finite() && fs > 0.0) {
            return Err(invalid(format!("sampling frequency {fs} must be above 0")));
        }
        check_signals(&header_path, signals)?;
        let dat_name = format!("{name}.dat");
        let dat_path = dir.join(&dat_name);
        let file = File::create(&dat_path).map_err(|e| Error::from_io(&dat_path, "write", &e))?;
        let header = Header {
            record_name: name.to_string(),
            segments: None,
            n_signals: signals.len(),
            fs,
            counter_freq: None,
            base_counter: None,
            samples: None,
            base_time: None,
            base_date: None,
            signals: signals
                .iter()
                .map(|s| SignalSpec {
                    file_name: dat_name.clone(),
                    format: SignalFormat::Fmt16,
                    samples_per_frame: 1,
                    skew: 0,
                    byte_offset: 0,
                    adc_gain: s.adc_gain,
                    baseline: s.baseline,
                    units: s.units.clone(),
                    adc_resolution: s.adc_resolution,
                    adc_zero: 0,
                    initial_value: 0,
                    checksum: None,
                    block_size: 0,
                    description: Some(s.name.clone()).filter(|n| !n.is_empty()),
                })
                .collect(),
            segment_specs: Vec::new(),
            comments: Vec::new(),
        };
        Ok(RecordWriter {
            dir: dir.to_path_buf(),
            dat_path,
            header,
            out: BufWriter::new(file),
            frames: 0,
            sums: vec![0; signals.len()],
            first: None,
            buf: Vec::new(),
        })
    }

    /// Add a comment line (info string) to the header.
    pub fn comment(&mut self, text: &str) -> Result<()> {
        if text.contains(['\n', '\r']) {
            return Err(Error::new(
                self.dir.join(format!("{}.hea", self.header.record_name)),
                ErrorKind::Invalid(format!("comment {text:?} must be one line")),
            ));
        }
        self.header.comments.push(text.to_string());
        Ok(())
    }

    /// Append one frame: one stored value per signal, each in
    /// -32768..=32767 (-32768 is the invalid-sample mark).
    pub fn push_frame(&mut self, frame: &[i32]) -> Result<()> {
        if frame.len() != self.sums.len() {
            return Err(self.invalid(format!(
                "frame {} has {} values for {} signals",
                self.frames,
                frame.len(),
                self.sums.len()
            )));
        }
        self.buf.clear();
        let mut values = Vec::with_capacity(frame.len());
        for (i, &v) in frame.iter().enumerate() {
            let v = i16::try_from(v).map_err(|_| {
                self.invalid(format!(
                    "frame {}, signal {i}: {v} does not fit format 16 (-32768..=32767)",
                    self.frames
                ))
            })?;
            values.push(v);
        }
        for (i, &v) in values.iter().enumerate() {
            encode_fmt16(v, &mut self.buf);
            self.sums[i] = self.sums[i].wrapping_add(v);
        }
        self.out
            .write_all(&self.buf)
            .map_err(|e| Error::from_io(&self.dat_path, "write", &e))?;
        if self.first.is_none() {
            self.first = Some(values);
        }
        self.frames += 1;
        Ok(())
    }

    /// Frames written so far.
    pub fn frames(&self) -> u64 {
        self.frames
    }

    /// Flush the samples and write the header; returns it and its path.
    pub fn finish(mut self) -> Result<(Header, PathBuf)> {
        let path = self.checkpoint()?;
        Ok((self.header, path))
    }

    /// Bring the files up to date without ending the record: flush the
    /// samples to the system, then replace the header by one that counts
    /// them (written beside it and renamed over it, so a reader, or a
    /// process killed meanwhile, only ever leaves a whole header). The
    /// signal file may hold more frames than a header states; readers take
    /// the header's count. Returns the header's path.
    pub fn checkpoint(&mut self) -> Result<PathBuf> {
        self.out
            .flush()
            .map_err(|e| Error::from_io(&self.dat_path, "write", &e))?;
        self.header.samples = Some(self.frames);
        for (i, spec) in self.header.signals.iter_mut().enumerate() {
            spec.checksum = Some(self.sums[i] as i32);
            spec.initial_value = self.first.as_ref().map_or(0, |f| f[i] as i32);
        }
        let path = self.dir.join(format!("{}.hea", self.header.record_name));
        let tmp = self
            .dir
            .join(format!("{}.hea.part", self.header.record_name));
        std::fs::write(&tmp, self.header.to_text())
            .and_then(|()| std::fs::rename(&tmp, &path))
            .map_err(|e| Error::from_io(&path, "write", &e))?;
        Ok(path)
    }

    fn invalid(&self, message: String) -> Error {
        Error::new(&self.dat_path, ErrorKind::Invalid(message))
    }
}

/// Write a whole record at once: `samples[s]` are the stored values of
/// signal `s`, all of one length. Returns the header written and its path.
pub fn write_record(
    dir: &Path,
    name: &str,
    fs: f64,
    signals: &[NewSignal],
    samples: &[Vec<i32>],
) -> Result<(Header, PathBuf)> {
    let header_path = dir.join(format!("{name}.hea"));
    if samples.len() != signals.len() {
        return Err(Error::new(
            &header_path,
            ErrorKind::Invalid(format!(
                "{} sample lists for {} signals",
                samples.len(),
                signals.len()
            )),
        ));
    }
    let len = samples.first().map_or(0, Vec::len);
    if let Some(bad) = samples.iter().position(|s| s.len() != len) {
        return Err(Error::new(
            &header_path,
            ErrorKind::Invalid(format!(
                "signal {bad} has {} samples, signal 0 has {len}",
                samples[bad].len()
            )),
        ));
    }
    let mut writer = RecordWriter::create(dir, name, fs, signals)?;
    let mut frame = vec![0; signals.len()];
    for k in 0..len {
        for (slot, s) in frame.iter_mut().zip(samples) {
            *slot = s[k];
        }
        writer.push_frame(&frame)?;
    }
    writer.finish()
}

/// Check that every signal can be written as format 16 with a one-line
/// header entry; the message names the first that cannot.
fn check_signals(header_path: &Path, signals: &[NewSignal]) -> Result<()> {
    let invalid = |m: String| Error::new(header_path, ErrorKind::Invalid(m));
    for (i, s) in signals.iter().enumerate() {
        if !(s.adc_gain.is_finite() && s.adc_gain != 0.0) {
            return Err(invalid(format!(
                "signal {i}: gain {} must be finite and not 0",
                s.adc_gain
            )));
        }
        if s.units.is_empty() || s.units.chars().any(char::is_whitespace) {
            return Err(invalid(format!(
                "signal {i}: units {:?} must be one word",
                s.units
            )));
        }
        if s.name.contains(['\n', '\r']) || s.name.trim() != s.name {
            return Err(invalid(format!(
                "signal {i}: name {:?} must be one line without leading or trailing blanks",
                s.name
            )));
        }
        if !(1..=16).contains(&s.adc_resolution) {
            return Err(invalid(format!(
                "signal {i}: resolution {} bits does not fit format 16",
                s.adc_resolution
            )));
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::Record;

    #[test]
    fn written_record_reads_back() {
        let dir = tempfile::tempdir().unwrap();
        let signals = [
            NewSignal::new("PLETH", "NU", 100.0, 0),
            NewSignal::new("ECG lead II", "mV", 1023.5, -12),
        ];
        let a: Vec<i32> = (0..1000).map(|k| (k * 37 % 2001) - 1000).collect();
        let b: Vec<i32> = (0..1000)
            .map(|k| if k == 500 { -32768 } else { 32767 - k })
            .collect();
        let (header, path) = write_record(
            dir.path(),
            "live_1",
            300.0,
            &signals,
            &[a.clone(), b.clone()],
        )
        .unwrap();
        assert_eq!(path, dir.path().join("live_1.hea"));
        assert_eq!(header.samples, Some(1000));
        let rec = Record::open(dir.path().join("live_1")).unwrap();
        assert_eq!(rec.header(), &header);
        assert_eq!(rec.len(), 1000);
        assert_eq!(rec.fs(), 300.0);
        assert_eq!(rec.read_digital(0).unwrap(), a);
        assert_eq!(rec.read_digital(1).unwrap(), b);
        assert_eq!(rec.signal_index("ECG lead II"), Some(1));
        rec.verify_checksums().unwrap();
        let phys = rec.read_physical(1).unwrap();
        assert!(phys[500].is_nan());
        assert_eq!(phys[0], (32767.0 + 12.0) / 1023.5);
        assert_eq!(header.signals[1].initial_value, 32767);
        // Checksums are written signed, as header(5) has them.
        let text = std::fs::read_to_string(&path).unwrap();
        assert!(text.lines().all(|l| l
            .split_whitespace()
            .nth(6)
            .is_none_or(|c| c.parse::<i16>().is_ok())));
    }

    #[test]
    fn a_checkpoint_leaves_a_readable_record_of_what_came_so_far() {
        let dir = tempfile::tempdir().unwrap();
        let signals = [NewSignal::new("PLETH", "NU", 10.0, 0)];
        let mut w = RecordWriter::create(dir.path(), "live", 100.0, &signals).unwrap();
        for v in 0..30 {
            w.push_frame(&[v]).unwrap();
        }
        w.checkpoint().unwrap();
        // More frames after the checkpoint: the header still counts 30.
        w.push_frame(&[99]).unwrap();
        let rec = Record::open(dir.path().join("live")).unwrap();
        assert_eq!(rec.len(), 30);
        rec.verify_checksums().unwrap();
        assert_eq!(rec.read_digital(0).unwrap(), (0..30).collect::<Vec<i32>>());
        assert!(!dir.path().join("live.hea.part").exists());
        let (header, _) = w.finish().unwrap();
        assert_eq!(header.samples, Some(31));
    }

    #[test]
    fn streaming_writer_with_comments_and_no_frames() {
        let dir = tempfile::tempdir().unwrap();
        let mut w = RecordWriter::create(
            dir.path(),
            "empty",
            50.0,
            &[NewSignal::new("PLETH", "NU", 1.0, 0)],
        )
        .unwrap();
        w.comment("sensor: finger clip").unwrap();
        assert!(w.comment("two\nlines").is_err());
        assert_eq!(w.frames(), 0);
        let (header, _) = w.finish().unwrap();
        assert_eq!(header.comments, vec!["sensor: finger clip"]);
        let rec = Record::open(dir.path().join("empty.hea")).unwrap();
        assert!(rec.is_empty());
        assert_eq!(rec.read_digital(0).unwrap(), Vec::<i32>::new());
    }

    #[test]
    fn bad_input_is_refused() {
        let dir = tempfile::tempdir().unwrap();
        let ok = NewSignal::new("PLETH", "NU", 1.0, 0);
        assert!(
            RecordWriter::create(dir.path(), "bad name", 50.0, std::slice::from_ref(&ok)).is_err()
        );
        assert!(RecordWriter::create(dir.path(), "r", 0.0, std::slice::from_ref(&ok)).is_err());
        assert!(
            RecordWriter::create(dir.path(), "r", 50.0, &[NewSignal::new("A", "N U", 1.0, 0)])
                .is_err()
        );
        assert!(
            RecordWriter::create(dir.path(), "r", 50.0, &[NewSignal::new("A", "NU", 0.0, 0)])
                .is_err()
        );
        let mut w = RecordWriter::create(dir.path(), "r", 50.0, std::slice::from_ref(&ok)).unwrap();
        let e = w.push_frame(&[40000]).unwrap_err();
        assert!(e.to_string().contains("does not fit format 16"), "{e}");
        assert!(w.push_frame(&[1, 2]).is_err());
        let e = write_record(
            dir.path(),
            "r2",
            50.0,
            &[ok.clone(), ok],
            &[vec![1, 2], vec![1]],
        )
        .unwrap_err();
        assert!(e.to_string().contains("signal 1 has 1 samples"), "{e}");
    }
}
