//! `plethwire demo`: the main job, start to end, on a ride of our own.

use clap::Args;
use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use std::io::{IsTerminal, Write};
use std::path::PathBuf;
use std::time::{Duration, Instant};

use super::Failure;
use crate::ride::{
    against_truth, run_board, save_ride, scenario, state_words, stream, write_report, BoardOutcome,
    DemoResult, Progress,
};
use crate::values;
use plethwire::emulate::BuildError;
use plethwire::replay::{Replay, Summary};
use plethwire::score::MatchCounts;
use plethwire::vocabulary::{verdict_words, MEDIAN_HR};
use plethwire_dsp::pipeline::Config;

const EXAMPLES: &str = "\
Examples:
  plethwire demo
  plethwire demo --out /tmp/ride --speed 0
  plethwire demo --no-board --json

A 4-minute ride on a bike trainer with a finger-clip sensor, made up for
this demo with known beats: rest, effort, a sprint that shakes the clip,
recovery, the clip slipping off for 6 s, cool-down. The ride is streamed
through the beat pipeline, scored against its true beats, run through the
emulated board when QEMU is installed (and compared bit for bit), saved as
a WFDB record, and summed up in a report page to open in a browser.

Not a medical device; not for diagnosis. Exit status: 0 done, 1 the board
disagreed with the host or a file could not be written, 2 the command line
could not be understood.";

/// Options of `plethwire demo`.
#[derive(Args, Debug, Clone, PartialEq)]
#[command(after_help = EXAMPLES)]
pub struct DemoArgs {
    /// Folder for the ride, its beats and the report.
    #[arg(long, value_name = "DIR", default_value = "plethwire-demo")]
    pub out: PathBuf,

    /// How many times faster than real time to stream the ride on a
    /// terminal (0: as fast as possible; never paced in a pipe).
    #[arg(long, value_name = "X", default_value_t = 40.0, value_parser = values::non_negative)]
    pub speed: f64,

    /// Skip the emulated board even if QEMU is installed.
    #[arg(long)]
    pub no_board: bool,

    /// Seed of the ride's randomness (beat-to-beat variability, noise).
    #[arg(long, value_name = "N", default_value_t = 7, value_parser = values::whole_from(0u64))]
    pub seed: u64,

    /// Print the results as JSON instead of the running commentary.
    #[arg(long)]
    pub json: bool,
}

/// Build the emulated firmware, saying so first; cargo's diagnostics of a
/// failed build go to standard error.
fn build_firmware(say: &mut dyn FnMut(&str)) -> Result<PathBuf, BuildError> {
    say("building the emulated firmware (cd firmware && cargo build --release; quick when up to date) ...");
    let built = plethwire::emulate::build_firmware();
    if let Err(BuildError::Failed { stderr, .. }) = &built {
        say(stderr.trim_end());
    }
    built
}

impl DemoArgs {
    /// Run the demo.
    pub fn run(&self, out: &mut dyn Write) -> Result<(), Failure> {
        if !(self.speed.is_finite() && self.speed >= 0.0) {
            return Err(Failure::usage("--speed must be 0 or a positive number"));
        }
        let chatty = !self.json;
        let say = |out: &mut dyn Write, text: &str| -> Result<(), Failure> {
            if chatty {
                writeln!(out, "{text}").map_err(Failure::output)?;
            }
            Ok(())
        };
        say(out, "plethwire demo: a finger-clip pulse sensor on a bike trainer (made up, with known beats)")?;
        say(out, "  not a medical device, not for diagnosis; wire real sensors to people only through a battery or a USB isolator (IEC 60601-1 practice)")?;
        std::fs::create_dir_all(&self.out).map_err(|e| {
            Failure::refused(format!(
                "{}: cannot create the folder: {e}",
                self.out.display()
            ))
        })?;
        let ride = scenario::ride(self.seed)
            .map_err(|e| Failure::refused(format!("cannot make the ride: {e}")))?;
        let (samples, mut files) = save_ride(&self.out, &ride).map_err(Failure::refused)?;
        let config = Config::new(ride.sample_rate_hz as f32);
        let fs = ride.sample_rate_hz;
        say(
            out,
            &format!(
                "  {} s at {} Hz, {} true beats; streaming it through the beat pipeline ...",
                scenario::DURATION_S,
                scenario::RATE_HZ,
                ride.beats.len()
            ),
        )?;

        let replay = self.stream_watched(&samples, config, fs, chatty, out)?;

        let truth = against_truth(&ride, &replay);
        let summary = replay.summary();
        for line in found_lines(&summary, &truth) {
            say(out, &line)?;
        }

        let board = self.board(&samples, config, &replay, chatty);
        say(out, &board_line(&board))?;

        let ann = plethwire::replay::write_beat_annotations(
            &self.out,
            "ride",
            plethwire::replay::DEFAULT_ANNOTATOR,
            &replay,
        )
        .map_err(Failure::refused)?;
        files.push(ann.display().to_string());
        let report =
            write_report(&self.out, &samples, config, &replay, &ride).map_err(Failure::refused)?;
        files.push(report.display().to_string());
        say(out, &format!("  wrote the ride as WFDB (ride.hea, ride.dat, true beats ride.truth, found beats ride.{})", plethwire::replay::DEFAULT_ANNOTATOR))?;
        say(
            out,
            &format!("  report: {}  (open it in a browser)", report.display()),
        )?;

        let result = DemoResult {
            summary,
            against_truth: truth,
            true_beats: ride.beats.len(),
            board: board.clone(),
            files,
        };
        if self.json {
            let text = serde_json::to_string_pretty(&result).unwrap_or_default() + "\n";
            out.write_all(text.as_bytes()).map_err(Failure::output)?;
        }
        if let BoardOutcome::Disagreed(d) = board {
            return Err(Failure::refused(format!(
                "the emulated board disagrees with the host: {d}"
            )));
        }
        Ok(())
    }

    /// Stream `samples` through the pipeline at `fs`, paced on a terminal
    /// (at `self.speed`) so the events can be watched, with a progress bar
    /// and a line per phase, state change and every 10 s of beats.
    fn stream_watched(
        &self,
        samples: &[f64],
        config: Config,
        fs: f64,
        chatty: bool,
        out: &mut dyn Write,
    ) -> Result<Replay, Failure> {
        let mut lines: Vec<String> = Vec::new();
        // Stream, paced on a terminal so the events can be watched.
        let tty = std::io::stdout().is_terminal() && chatty;
        let pace = if tty && self.speed > 0.0 {
            Some(self.speed)
        } else {
            None
        };
        let bar = if tty {
            ProgressBar::with_draw_target(Some(samples.len() as u64), ProgressDrawTarget::stderr())
        } else {
            ProgressBar::hidden()
        };
        bar.set_style(
            ProgressStyle::with_template("  {bar:40} {percent:>3}%  {msg}")
                .unwrap_or_else(|_| ProgressStyle::default_bar()),
        );
        let start = Instant::now();
        let mut last_shown = -10.0;
        let replay = stream(samples, config, &mut |p| match p {
            Progress::Sample(n) => {
                if n % 25 == 0 {
                    bar.set_position(n);
                    if let Some(x) = pace {
                        let due = Duration::from_secs_f64(n as f64 / fs / x);
                        if let Some(wait) = due.checked_sub(start.elapsed()) {
                            std::thread::sleep(wait);
                        }
                    }
                }
            }
            Progress::Phase(ph) => lines.push(format!("  {:>6.1} s  ── {}", ph.start_s, ph.what)),
            Progress::State(s) => lines.push(format!(
                "  {:>6.1} s  state: {}",
                s.at as f64 / fs,
                state_words(s.previous, s.state)
            )),
            Progress::Beat(b) => {
                let t = b.peak_index as f64 / fs;
                bar.set_message(format!(
                    "{:>5.1} s  {MEDIAN_HR} {}",
                    t,
                    b.hr_smoothed_bpm
                        .map_or("-".into(), |h| format!("{h:.0} bpm"))
                ));
                // One beat line every 10 s of ride keeps the stream readable.
                if t - last_shown >= 10.0 {
                    last_shown = t;
                    lines.push(format!(
                        "  {:>6.1} s  beat: IBI {} ms, {MEDIAN_HR} {} bpm, quality {:.2}, {}",
                        t,
                        b.ibi_ms.map_or("-".into(), |i| format!("{i:.0}")),
                        b.hr_smoothed_bpm.map_or("-".into(), |h| format!("{h:.0}")),
                        b.quality,
                        verdict_words(b.flags)
                    ));
                }
            }
        });
        // Print the commentary as it came (above the bar on a terminal).
        for l in lines.drain(..) {
            if chatty {
                if tty {
                    bar.println(&l);
                } else {
                    writeln!(out, "{l}").map_err(Failure::output)?;
                }
            }
        }
        bar.finish_and_clear();
        Ok(replay)
    }

    /// The emulated board's run of `samples`, compared with the host's
    /// `replay`, unless `--no-board`.
    fn board(
        &self,
        samples: &[f64],
        config: Config,
        replay: &Replay,
        chatty: bool,
    ) -> BoardOutcome {
        if self.no_board {
            BoardOutcome::NotRun("skipped (--no-board)".into())
        } else {
            let mut note = |t: &str| {
                if chatty {
                    let _ = writeln!(std::io::stderr(), "  {t}");
                }
            };
            run_board(samples, config, replay, &mut || build_firmware(&mut note))
        }
    }
}

/// What the demo found, against the true beats, and its heart rate.
fn found_lines(summary: &Summary, truth: &MatchCounts) -> Vec<String> {
    let mut lines = vec![format!(
        "  found {} beats ({:.1} % good): against the true beats TP {} FP {} FN {}, F1 {:.2} %",
        summary.beats,
        100.0 * summary.good_share,
        truth.tp,
        truth.fp,
        truth.fn_,
        100.0 * truth.f1().unwrap_or(0.0)
    )];
    if let Some(h) = &summary.heart_rate_bpm {
        lines.push(format!(
            "  {MEDIAN_HR} {:.0} to {:.0} bpm (mean {:.0}); events {:.0} ms after each peak",
            h.min,
            h.max,
            h.mean,
            summary.latency_median_ms.unwrap_or(f64::NAN)
        ));
    }
    lines
}

/// The line that says how the emulated board did.
fn board_line(board: &BoardOutcome) -> String {
    match board {
        BoardOutcome::Agreed { beats, states } => format!(
            "  emulated board (QEMU, Cortex-M4F): the same {beats} beats and {states} state changes, bit for bit"
        ),
        BoardOutcome::Disagreed(d) => format!("  emulated board DISAGREES with the host: {d}"),
        BoardOutcome::NotRun(why) => format!("  emulated board not run: {why}"),
    }
}
