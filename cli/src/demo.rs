//! `plethwire demo`: the main job, start to end, on a ride of our own.

use clap::Args;
use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use std::io::{IsTerminal, Write};
use std::path::PathBuf;

use super::Failure;
use crate::ride::live::{stream_live, Told, WallClock};
use crate::ride::{
    against_truth, run_board, save_ride, scenario, write_report, BoardOutcome, DemoResult,
};
use crate::values;
use plethwire::emulate::FirmwareSearch;
use plethwire::output_guard;
use plethwire::replay::{Replay, Summary};
use plethwire::score::MatchCounts;
use plethwire::vocabulary::MEDIAN_HR;
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
a WFDB record, and summed up in a report page to open in a browser. On a
terminal each event is printed when its paced moment comes.

Files go in --out (default: plethwire-demo in the current folder); the demo
replaces only files an earlier demo wrote there (--force: any). The
emulated firmware: --firmware ELF or $PLETHWIRE_FIRMWARE, else built in the
checkout --source DIR or $PLETHWIRE_SOURCE names, else in the checkout this
program was built from.

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

    /// The emulated firmware's ELF [default: $PLETHWIRE_FIRMWARE, else
    /// built from --source].
    #[arg(long, value_name = "ELF")]
    pub firmware: Option<PathBuf>,

    /// A plethwire checkout to build the emulated firmware in [default:
    /// $PLETHWIRE_SOURCE, else the checkout this program was built from].
    #[arg(long, value_name = "DIR")]
    pub source: Option<PathBuf>,

    /// Replace files in --out that this demo did not write.
    #[arg(long)]
    pub force: bool,
}

/// The files the demo writes in its folder.
fn demo_files() -> [String; 5] {
    [
        "ride.hea".into(),
        "ride.dat".into(),
        "ride.truth".into(),
        format!("ride.{}", plethwire::replay::DEFAULT_ANNOTATOR),
        "ride.report.html".into(),
    ]
}

/// The file that marks a folder as one the demo wrote (so running the
/// demo again may replace its own files, and nobody else's).
const DEMO_MARK: &str = ".plethwire-demo";

impl DemoArgs {
    /// Create `--out` and make sure the demo's files would replace only
    /// files an earlier demo wrote there (or anything, with `--force`);
    /// then mark the folder as the demo's.
    fn claim_folder(&self) -> Result<(), Failure> {
        let dir = super::replay::output_dir(Some(&self.out))?;
        let ours = dir.join(DEMO_MARK).is_file();
        let files: Vec<PathBuf> = demo_files().iter().map(|f| dir.join(f)).collect();
        output_guard::check_outputs(&files, &[], self.force || ours)
            .map_err(super::replay::guard_failure)?;
        std::fs::write(
            dir.join(DEMO_MARK),
            "Written by `plethwire demo`: it may replace its own ride.* files here.\n",
        )
        .map_err(|e| Failure::refused(format!("{}: cannot write: {e}", dir.display())))
    }

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
        self.claim_folder()?;
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
    /// and a line per phase, state change and every 10 s of beats, each
    /// printed when its moment comes ([`stream_live`]).
    fn stream_watched(
        &self,
        samples: &[f64],
        config: Config,
        fs: f64,
        chatty: bool,
        out: &mut dyn Write,
    ) -> Result<Replay, Failure> {
        let tty = std::io::stdout().is_terminal() && chatty;
        let pace = (tty && self.speed > 0.0).then_some(self.speed);
        let bar = if tty {
            ProgressBar::with_draw_target(Some(samples.len() as u64), ProgressDrawTarget::stderr())
        } else {
            ProgressBar::hidden()
        };
        bar.set_style(
            ProgressStyle::with_template("  {bar:40} {percent:>3}%  {msg}")
                .unwrap_or_else(|_| ProgressStyle::default_bar()),
        );
        let mut failed = None;
        let replay = stream_live(
            samples,
            config,
            fs,
            pace,
            &mut WallClock::start(),
            &mut |told| match told {
                Told::Position(n) => bar.set_position(n),
                Told::Rate(m) => bar.set_message(m),
                // Above the bar on a terminal, else straight out.
                Told::Line(text) if chatty && failed.is_none() => {
                    if tty {
                        bar.println(&text);
                    } else {
                        failed = writeln!(out, "{text}").and_then(|_| out.flush()).err();
                    }
                }
                Told::Line(_) => {}
            },
        );
        bar.finish_and_clear();
        match failed {
            Some(e) => Err(Failure::output(e)),
            None => Ok(replay),
        }
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
            let search = FirmwareSearch {
                elf: self.firmware.clone(),
                source: self.source.clone(),
                rebuild: true,
                ..FirmwareSearch::default()
            };
            run_board(samples, config, replay, &mut || search.locate(&mut note))
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
        BoardOutcome::Agreed {
            beats,
            states,
            blocks,
        } => format!(
            "  emulated board (QEMU, Cortex-M4F): the same {beats} beats, {states} state changes and {blocks} sample blocks, bit for bit"
        ),
        BoardOutcome::Disagreed(d) => format!("  emulated board DISAGREES with the host: {d}"),
        BoardOutcome::NotRun(why) => format!("  emulated board not run: {why}"),
    }
}
