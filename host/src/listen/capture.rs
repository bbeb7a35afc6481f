//! A recording that survives its recorder being cut off: the record, its
//! annotations and the summary are brought up to date every
//! [`FLUSH_EVERY`] while the session runs, each file kept whole on disk
//! (see [`Recorder::flush`], [`Summary::write`]). A `kill -9`, a crash or
//! a laptop shut without warning loses at most the last second.

use std::io;
use std::path::{Path, PathBuf};
use std::time::Instant;

use super::event::{Event, Progress, Sink};
use super::recorder::{Recorder, Written};
use super::summary::{Setup, Summary, FLUSH_EVERY, RUNNING};

/// A [`Recorder`] with its summary, both written as the session goes.
pub struct Capture {
    recorder: Recorder,
    setup: Setup,
    dir: PathBuf,
    flushed_at: Option<Instant>,
}

impl Capture {
    /// Record session `setup` into `dir` through `recorder`; the first
    /// [`Sink::tick`] writes the annotation file and the summary.
    pub fn new(recorder: Recorder, setup: Setup, dir: &Path) -> Self {
        Self {
            recorder,
            setup,
            dir: dir.to_path_buf(),
            flushed_at: None,
        }
    }

    /// Add a line to the record header's comments.
    pub fn comment(&mut self, text: &str) -> io::Result<()> {
        self.recorder.comment(text)
    }

    /// Bring every file up to date now, the summary saying [`RUNNING`].
    pub fn flush(&mut self, seen: &Progress) -> io::Result<()> {
        self.recorder.flush()?;
        Summary::new(&self.setup, seen, RUNNING, &self.recorder.written()).write(&self.dir)?;
        Ok(())
    }

    /// Finish the files and write the summary of a session that ended by
    /// `ended_by`; returns what was written and the summary.
    pub fn finish(self, seen: &Progress, ended_by: &'static str) -> io::Result<(Written, Summary)> {
        let written = self.recorder.finish()?;
        let summary = Summary::new(&self.setup, seen, ended_by, &written);
        summary.write(&self.dir)?;
        Ok((written, summary))
    }
}

impl Sink for Capture {
    fn event(&mut self, event: &Event) -> io::Result<()> {
        self.recorder.event(event)
    }

    fn tick(&mut self, now: Instant, progress: &Progress) -> io::Result<()> {
        let due = self
            .flushed_at
            .is_none_or(|t| now.saturating_duration_since(t) >= FLUSH_EVERY);
        if due {
            self.flush(progress)?;
            self.flushed_at = Some(now);
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::listen::Session;
    use plethwire_dsp::pipeline::Options;
    use plethwire_dsp::wire::{Encoder, Hello, Message, SampleBlock, MAX_FRAME};
    use plethwire_records::{read_annotations, Record};
    use std::time::{Duration, SystemTime};

    fn frames(enc: &mut Encoder, messages: &[Message]) -> Vec<u8> {
        let mut buf = [0u8; MAX_FRAME];
        messages
            .iter()
            .flat_map(|m| enc.encode(m, &mut buf).unwrap().to_vec())
            .collect()
    }

    fn block(first: u64) -> Message {
        Message::Samples(SampleBlock {
            first_index: first,
            count: 16,
            stride: 1,
            raw: [2000.0; 16],
            filtered: [0.0; 16],
        })
    }

    fn summary(dir: &Path) -> serde_json::Value {
        serde_json::from_str(&std::fs::read_to_string(dir.join("c.session.json")).unwrap()).unwrap()
    }

    #[test]
    fn ticks_bring_every_file_up_to_date_twice_a_second() {
        let dir = tempfile::tempdir().unwrap();
        let setup = Setup {
            record: "c".into(),
            port: "test".into(),
            baud: 115_200,
            started: SystemTime::now(),
        };
        let mut capture = Capture::new(Recorder::new(dir.path(), "c", "pwire"), setup, dir.path());
        let mut session = Session::new(None);
        let hello = Message::Hello(Hello {
            firmware_version: [1, 0, 0],
            sample_rate_hz: 100.0,
            options: Options {
                rails: Some((0.0, 4095.0)),
                ..Options::default()
            },
            adc_bits: 12,
        });
        let mut enc = Encoder::new();
        let t0 = Instant::now();
        let at = |ms| t0 + Duration::from_millis(ms);
        session
            .feed(&frames(&mut enc, &[hello, block(0)]), t0, &mut capture)
            .unwrap();
        capture.tick(t0, &session.progress()).unwrap();
        let header = dir.path().join("c");
        assert_eq!(Record::open(&header).unwrap().len(), 16);
        assert!(read_annotations(dir.path().join("c.pwire"))
            .unwrap()
            .is_empty());
        assert_eq!(summary(dir.path())["ended_by"], RUNNING);
        assert_eq!(summary(dir.path())["record_samples"], 16);
        // Not yet due at 0.4 s; due at 0.5 s.
        session
            .feed(&frames(&mut enc, &[block(16)]), at(400), &mut capture)
            .unwrap();
        capture.tick(at(400), &session.progress()).unwrap();
        assert_eq!(Record::open(&header).unwrap().len(), 16);
        capture.tick(at(500), &session.progress()).unwrap();
        assert_eq!(Record::open(&header).unwrap().len(), 32);
        assert_eq!(summary(dir.path())["record_samples"], 32);
        let (written, end) = capture.finish(&session.progress(), "stopped").unwrap();
        assert_eq!(written.record_samples, 32);
        assert_eq!(end.ended_by, "stopped");
        assert_eq!(summary(dir.path())["ended_by"], "stopped");
    }
}
