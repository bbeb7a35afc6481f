//! Where the events are shown: text lines (coloured on a terminal) or JSON
//! lines, each flushed as it comes so a pipe sees it at once.

use serde::Serialize;
use std::io::{self, Write};
use std::path::Path;

use super::event::{Event, Sink};
use super::json;
use super::link::Settings;
use super::summary::{Setup, Summary};
use super::text::{self, Look};
use crate::bringup::live::Report;
use crate::bringup::Verdict;

/// The text view prints the live checks when a verdict changes, and
/// otherwise at most this often (s of samples).
pub const CHECKS_EVERY_S: f64 = 10.0;

/// What the text view last printed of the live checks.
#[derive(Debug, Default)]
struct ChecksShown {
    verdicts: Vec<Verdict>,
    at_s: Option<f64>,
    mismatch: Option<String>,
}

/// The cautions, as printed at the start of every session.
pub const CAUTION: [&str; 2] = [
    "not a medical device, not for diagnosis or for watching anyone's health.",
    "While someone is wired up, power the sensor from a battery or through a USB isolator (IEC 60601-1).",
];

/// Text or JSON lines on a writer.
pub struct Screen<'a> {
    out: &'a mut dyn Write,
    json: bool,
    look: Look,
    shown: ChecksShown,
}

#[derive(Serialize)]
#[serde(tag = "event", rename_all = "snake_case")]
enum Bookend<'a> {
    Start {
        caution: String,
        port: &'a str,
        baud: u32,
        record: &'a str,
        dir: String,
    },
    End {
        summary: &'a Summary,
    },
}

impl<'a> Screen<'a> {
    /// Lines on `out`: JSON when `json`, else text, coloured when `colour`.
    pub fn new(out: &'a mut dyn Write, json: bool, colour: bool, settings: &Settings) -> Self {
        Self {
            out,
            json,
            look: Look {
                colour,
                retry_every_s: settings.retry_every.as_secs_f64(),
                give_up_after_s: settings.give_up_after.as_secs_f64(),
            },
            shown: ChecksShown::default(),
        }
    }

    fn put(&mut self, line: &str) -> io::Result<()> {
        writeln!(self.out, "{line}")?;
        self.out.flush()
    }

    /// The cautions and what is about to happen.
    pub fn start(&mut self, setup: &Setup, dir: &Path) -> io::Result<()> {
        if self.json {
            let line = Bookend::Start {
                caution: CAUTION.join(" "),
                port: &setup.port,
                baud: setup.baud,
                record: &setup.record,
                dir: dir.display().to_string(),
            };
            return self.put(&serde_json::to_string(&line).map_err(io::Error::other)?);
        }
        let first = format!("plethwire listen: {}", CAUTION[0]);
        let banner = if self.look.colour {
            format!("\x1b[1m{first}\n{}\x1b[0m", CAUTION[1])
        } else {
            format!("{first}\n{}", CAUTION[1])
        };
        self.put(&banner)?;
        self.put(&format!(
            "record   {} in {} (Ctrl-C ends and saves it); waiting for {} at {} baud",
            setup.record,
            dir.display(),
            setup.port,
            setup.baud
        ))
    }

    /// A report of the live checks: in JSON every one, in text a compact
    /// line and the advice when a verdict changed or [`CHECKS_EVERY_S`]
    /// have passed; a circuit file that does not fit the board is said
    /// once, as a note.
    pub fn checks(&mut self, r: &Report) -> io::Result<()> {
        if r.mismatch.is_some() && r.mismatch != self.shown.mismatch {
            self.shown.mismatch = r.mismatch.clone();
            self.event(&Event::Notice(r.mismatch.clone().unwrap_or_default()))?;
        }
        if self.json {
            return match json::checks(r) {
                Some(line) => self.put(&line),
                None => Ok(()),
            };
        }
        let verdicts: Vec<Verdict> = r.checks.iter().map(|c| c.verdict).collect();
        let due = self.shown.at_s.is_none_or(|at| {
            !(at..at + CHECKS_EVERY_S).contains(&r.time_s) || verdicts != self.shown.verdicts
        });
        if !due {
            return Ok(());
        }
        self.shown.verdicts = verdicts;
        self.shown.at_s = Some(r.time_s);
        self.put(&text::checks(r, &self.look))?;
        for a in &r.advice {
            self.put(&format!("advice   {a}"))?;
        }
        Ok(())
    }

    /// The end of the session: its summary.
    pub fn end(&mut self, s: &Summary) -> io::Result<()> {
        if self.json {
            let line =
                serde_json::to_string(&Bookend::End { summary: s }).map_err(io::Error::other)?;
            return self.put(&line);
        }
        let samples = match (s.record_seconds, s.record_rate_hz) {
            (Some(secs), Some(rate)) => {
                format!("{} samples ({secs:.1} s at {rate} Hz)", s.record_samples)
            }
            _ => "no samples".into(),
        };
        let how = match s.ended_by {
            "stopped" => "stopped",
            "time_up" => "time up",
            "port_gone" => "the port did not come back",
            _ => "failed",
        };
        let mut line = format!("end      {how}: {} beats, {samples}", s.beats_annotated);
        let times = |n: u64| {
            if n == 1 {
                "once".to_string()
            } else {
                format!("{n} times")
            }
        };
        if s.counts.losses > 0 {
            line += &format!(", the port went away {}", times(s.counts.losses));
        }
        if s.counts.restarts > 0 {
            line += &format!(", the board restarted {}", times(s.counts.restarts));
        }
        self.put(&line)?;
        let l = s.link;
        let far = match s.counts.implausible {
            0 => String::new(),
            n => format!(", {n} with sample numbers out of reach"),
        };
        self.put(&format!(
            "link     frames {}  damaged {} ({} CRC{far})  lost {}  bytes dropped {}",
            l.frames, l.damaged, l.crc_errors, l.lost_frames, l.dropped_bytes
        ))?;
        for f in &s.files {
            self.put(&format!("wrote    {f}"))?;
        }
        Ok(())
    }
}

impl Sink for Screen<'_> {
    fn event(&mut self, event: &Event) -> io::Result<()> {
        if self.json {
            let retry = (self.look.retry_every_s, self.look.give_up_after_s);
            match json::line(event, retry) {
                Some(line) => self.put(&line),
                None => Ok(()),
            }
        } else {
            for line in text::lines(event, &self.look) {
                self.put(&line)?;
            }
            Ok(())
        }
    }
}
