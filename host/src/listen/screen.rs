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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::bringup::live::{BoardInfo, LiveChecks};

    #[test]
    fn text_shows_checks_on_a_change_and_every_10_s_json_every_report() {
        // 25 s of a steady pulse on a board whose rails are known: the
        // verdicts change as the 8 s of the spectral checks fill and when
        // the window holds only the flat line that follows 12 s of pulse;
        // otherwise a line every 10 s. Reports come every 256 samples.
        let mut live = LiveChecks::new();
        live.board(BoardInfo {
            rate_hz: Some(250.0),
            rails: Some((0.0, 4095.0)),
            adc_bits: None,
        });
        let mut reports = Vec::new();
        for b in (0..25 * 250).step_by(16) {
            let raw: Vec<f32> = (b..b + 16)
                .map(|i| {
                    let pulse = if i < 12 * 250 { 300.0 } else { 0.0 };
                    (2000.0 + pulse * (i as f64 * 0.03).sin()).round() as f32
                })
                .collect();
            reports.extend(live.samples(b as i64, &raw, 1, 250.0));
        }
        let shown = |json: bool| {
            let mut out = Vec::new();
            let mut screen = Screen::new(&mut out, json, false, &Settings::default());
            for r in &reports {
                screen.checks(r).unwrap();
            }
            drop(screen);
            String::from_utf8(out).unwrap()
        };
        assert_eq!(shown(true).lines().count(), reports.len());
        let text = shown(false);
        let times: Vec<f64> = text
            .lines()
            .map(|l| l.split_whitespace().nth(1).unwrap().parse().unwrap())
            .collect();
        // 1 s first; 8.2 s the SNR and hum (clear); 18.4 s the first
        // report 10 s on; by 22.5 s the window is flat: trouble.
        assert_eq!(&times[..3], &[1.0, 8.2, 18.4], "{text}");
        assert!(times.len() < reports.len() / 2, "{text}");
        assert!(text.contains("trouble"), "{text}");
    }
}
