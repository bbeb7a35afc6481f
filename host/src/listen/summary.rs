//! The session summary, `<record>.session.json`: who was talking, what
//! arrived, how the link fared, when, and which files hold it.

use serde::Serialize;
use std::io;
use std::path::{Path, PathBuf};
use std::time::{Duration, SystemTime};

use super::clock::utc_text;
use super::event::{Counts, Progress};
use super::fields::{HelloFields, LinkFields, StatusFields};
use super::recorder::{SampleCounts, Written};
use super::scale::Scale;

/// `ended_by` of a summary written while the session runs.
pub const RUNNING: &str = "running";

/// How often the files are brought up to date while the session runs:
/// twice a second, so a session cut off loses at most the last second.
pub const FLUSH_EVERY: Duration = Duration::from_millis(500);

/// Identifies the file's layout, for readers.
pub const SUMMARY_FORMAT: &str = "plethwire-listen-session/1";

// The path is the recorder's to name, with the session's other files.
pub use super::recorder::summary_path;

/// What the command was told.
#[derive(Clone, Debug, PartialEq)]
pub struct Setup {
    /// Record name.
    pub record: String,
    /// The port as named by the user.
    pub port: String,
    /// Baud rate.
    pub baud: u32,
    /// When the session started.
    pub started: SystemTime,
}

/// The summary file's content.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Summary {
    /// [`SUMMARY_FORMAT`].
    pub format: &'static str,
    /// Record name.
    pub record: String,
    /// The port.
    pub port: String,
    /// Baud rate.
    pub baud: u32,
    /// Session start, ISO 8601 UTC.
    pub started_utc: String,
    /// Session end, ISO 8601 UTC.
    pub ended_utc: String,
    /// `stopped`, `time_up`, `port_gone` or `failed`; `running` while the
    /// session runs (the summary is rewritten every [`FLUSH_EVERY`]), so a
    /// summary that still says `running` is from a session that was cut
    /// off (killed, crashed, the machine stopped), and `ended_utc` is when
    /// it was last brought up to date.
    pub ended_by: &'static str,
    /// First good frame, ISO 8601 UTC.
    pub first_frame_utc: Option<String>,
    /// Last good frame, ISO 8601 UTC.
    pub last_frame_utc: Option<String>,
    /// The latest hello.
    pub board: Option<HelloFields>,
    /// The latest status.
    pub last_status: Option<StatusFields>,
    /// Frames by kind, opens and losses of the port.
    pub counts: Counts,
    /// The decoder's counters at the end.
    pub link: LinkFields,
    /// Beats in the annotation file.
    pub beats_annotated: u64,
    /// Beats before the record's first sample (not annotated).
    pub beats_before_record: u64,
    /// Beats further past the record than any gap it fills (not annotated).
    pub beats_far_off: u64,
    /// The record's sample rate, Hz (the board's is under `board`): the
    /// board's over `record_stride`.
    pub record_rate_hz: Option<f64>,
    /// Board samples per record sample: 1, or the stride of a board that
    /// sends every `stride`-th sample (the annotations count record
    /// samples too).
    pub record_stride: u64,
    /// Samples per signal in the record, gaps included.
    pub record_samples: u64,
    /// The record's length, s.
    pub record_seconds: Option<f64>,
    /// How samples were stored.
    pub scale: Option<Scale>,
    /// What became of the samples.
    pub samples: SampleCounts,
    /// The files written, this one last.
    pub files: Vec<String>,
}

impl Summary {
    /// Gather the summary of a session, finished or (`ended_by`
    /// [`RUNNING`]) not.
    pub fn new(setup: &Setup, seen: &Progress, ended_by: &'static str, w: &Written) -> Self {
        let (first, last) = (seen.first_frame, seen.last_frame);
        let dir = w.annotations.parent().unwrap_or(Path::new("."));
        let mut files = vec![w.annotations.display().to_string()];
        if let Some(h) = &w.record {
            files.push(h.display().to_string());
            files.push(h.with_extension("dat").display().to_string());
        }
        files.push(summary_path(dir, &setup.record).display().to_string());
        Self {
            format: SUMMARY_FORMAT,
            record: setup.record.clone(),
            port: setup.port.clone(),
            baud: setup.baud,
            started_utc: utc_text(setup.started),
            ended_utc: utc_text(SystemTime::now()),
            ended_by,
            first_frame_utc: first.map(utc_text),
            last_frame_utc: last.map(utc_text),
            board: seen.hello.as_ref().map(HelloFields::from),
            last_status: seen.last_status.as_ref().map(StatusFields::from),
            counts: seen.counts,
            link: seen.link.into(),
            beats_annotated: w.beats_annotated,
            beats_before_record: w.beats_before_record,
            beats_far_off: w.beats_far_off,
            record_rate_hz: w.rate_hz,
            record_stride: w.stride,
            record_samples: w.record_samples,
            record_seconds: w
                .rate_hz
                .filter(|_| w.record.is_some())
                .map(|r| w.record_samples as f64 / r),
            scale: w.scale,
            samples: w.samples,
            files,
        }
    }

    /// Write it next to the annotation file (beside it first, then
    /// renamed over it, so a reader never finds half a summary); returns
    /// its path.
    pub fn write(&self, dir: &Path) -> io::Result<PathBuf> {
        let path = summary_path(dir, &self.record);
        let tmp = path.with_extension("json.part");
        let text = serde_json::to_string_pretty(self).map_err(io::Error::other)? + "\n";
        std::fs::write(&tmp, text)
            .and_then(|()| std::fs::rename(&tmp, &path))
            .map_err(|e| {
                io::Error::new(e.kind(), format!("{}: cannot write: {e}", path.display()))
            })?;
        Ok(path)
    }
}
