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
