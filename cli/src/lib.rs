//! The `plethwire` command line: argument types (clap derive), dispatch to
//! the subcommands, and turning every failure into one line on stderr.
//!
//! Each subcommand lives in its own module with an `Args` struct and a
//! `run` method; adding one means a module and a variant of [`Command`].

mod demo;
mod emulate;
mod filter;
mod frontend;
mod hyphen_values;
mod listen;
mod pipeline_opts;
mod replay;
mod report;
mod ride;
mod score;
mod score_strap;
mod stop;
mod values;

pub use demo::DemoArgs;
pub use emulate::EmulateArgs;
pub use filter::FilterArgs;
pub use frontend::{FrontendArgs, LoadAtArg};
pub use listen::ListenArgs;
pub use pipeline_opts::{DetectorName, PipelineOpts};
pub use replay::ReplayArgs;
pub use report::ReportArgs;
pub use score::ScoreArgs;

use clap::error::{ContextKind, ContextValue, ErrorKind};
use clap::{CommandFactory, Parser, Subcommand};
use std::ffi::OsString;
use std::fmt::Display;
use std::io::Write;
use std::process::ExitCode;

/// Exit status when the command line could not be understood.
pub const EXIT_USAGE: u8 = 2;
/// Exit status when the request was understood but refused or failed.
pub const EXIT_REFUSED: u8 = 1;

const EXAMPLES: &str = "\
Examples:
  plethwire demo
  plethwire filter --rate 250 --band 0.5:8 --notch 50
  plethwire replay ../shared/data/capnobase/cb0009 --out /tmp/beats
  plethwire score ../shared/data/capnobase ../shared/data/bidmc
  plethwire emulate ../shared/data/capnobase/cb0009 --out /tmp/beats
  plethwire listen --port /dev/ttyACM0 --out recordings
  plethwire report ../shared/data/capnobase/cb0009
  plethwire frontend examples/frontend-fingerclip.toml

Run 'plethwire <command> --help' for a command's options.";

/// Host tools for optical pulse sensors.
#[derive(Parser, Debug)]
#[command(name = "plethwire", version, about, after_help = EXAMPLES)]
pub struct Cli {
    /// What to do.
    #[command(subcommand)]
    pub command: Command,
}

/// The subcommands.
#[derive(Subcommand, Debug)]
pub enum Command {
    /// The whole tool on a made-up bike-trainer ride with known beats:
    /// stream it through the pipeline, score it, run it on the emulated
    /// board when QEMU is there, and write a report page.
    Demo(DemoArgs),
    /// Design a filter chain, print it as Rust and JSON with its response
    /// (design and board cascade), and plot the response as SVG.
    Filter(FilterArgs),
    /// Run a recording (WFDB or CSV) through the firmware's beat pipeline,
    /// write the beats as WFDB annotations, and sum up heart rate, HRV and
    /// quality.
    Replay(ReplayArgs),
    /// Score detected beats against reference annotations (±150 ms) and
    /// heart rate against a reference series, per record and pooled.
    Score(ScoreArgs),
    /// Run a recording through the firmware on QEMU's emulated Cortex-M4F
    /// board, show the beats it streams, write them as WFDB annotations
    /// and check them against the host replay bit for bit.
    Emulate(EmulateArgs),
    /// Show and record what a board sends over a serial port (beats,
    /// signal state, status, samples); survives unplugging. Not a medical
    /// device; power the sensor from a battery or through a USB isolator.
    Listen(ListenArgs),
    /// Replay a recording and write one self-contained HTML page: signal
    /// excerpt, heart rate, intervals, Poincaré plot, quality, HRV, the
    /// band-pass's response and the score against a reference.
    Report(ReportArgs),
    /// Budget an analog front end (LED drive, detector, gain stages, RC
    /// corners, ADC): transfer function, heart band check, pulse swing
    /// against the ADC range, sample rate and digital band-pass, Bode plot
    /// as SVG.
    Frontend(FrontendArgs),
}

/// A failed run: its exit status and the one line to print, if any.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Failure {
    /// Process exit status.
    pub code: u8,
    /// The problem, without the `plethwire: ` prefix; `None` to exit
    /// quietly (the reader of our output went away).
    pub message: Option<String>,
}

impl Failure {
    /// The command line could not be understood.
    pub fn usage(message: impl Display) -> Self {
        Self {
            code: EXIT_USAGE,
            message: Some(message.to_string()),
        }
    }

    /// The request was understood but could not be carried out.
    pub fn refused(message: impl Display) -> Self {
        Self {
            code: EXIT_REFUSED,
            message: Some(message.to_string()),
        }
    }

    /// Writing the output failed; a closed pipe (`| head`) is not worth a
    /// message.
    pub fn output(e: std::io::Error) -> Self {
        Self {
            code: EXIT_REFUSED,
            message: (e.kind() != std::io::ErrorKind::BrokenPipe)
                .then(|| format!("cannot write the output: {e}")),
        }
    }
}

/// Squeeze a clap error into one line: its first line, the missing
/// arguments or command if that is the problem, clap's suggestion if it has
/// one, and where help is (`help` names the command).
fn one_line(err: &clap::Error, help: &str) -> String {
    let rendered = err.render().to_string();
    let first = rendered.lines().next().unwrap_or("invalid command line");
    let mut line = first.strip_prefix("error: ").unwrap_or(first).to_owned();
    match err.kind() {
        ErrorKind::MissingRequiredArgument => {
            if let Some(ContextValue::Strings(missing)) = err.get(ContextKind::InvalidArg) {
                line = format!("missing {}", missing.join(", "));
            }
        }
        ErrorKind::MissingSubcommand | ErrorKind::DisplayHelpOnMissingArgumentOrSubcommand => {
            let names: Vec<String> = Cli::command()
                .get_subcommands()
                .map(|c| c.get_name().to_owned())
                .collect();
            line = format!("missing a command (one of: {})", names.join(", "));
        }
        ErrorKind::InvalidValue => {
            if let Some(ContextValue::Strings(valid)) = err
                .get(ContextKind::ValidValue)
                .filter(|v| !matches!(v, ContextValue::Strings(s) if s.is_empty()))
            {
                line.push_str(&format!(" (one of: {})", valid.join(", ")));
            }
        }
        _ => {}
    }
    let suggested = [ContextKind::SuggestedArg, ContextKind::SuggestedSubcommand]
        .into_iter()
        .find_map(|k| match err.get(k) {
            Some(ContextValue::String(s)) => Some(s.clone()),
            Some(ContextValue::Strings(s)) if !s.is_empty() => Some(s.join("' or '")),
            _ => None,
        });
    if let Some(s) = suggested {
        line.push_str(&format!(" (did you mean '{s}'?)"));
    }
    line.push_str(&format!("; see '{help} --help'"));
    line
}

/// The command whose help fits a failed parse of `args`: the subcommand if
/// one was named, else the program.
fn help_target(args: &[OsString]) -> String {
    let named = args
        .get(1)
        .and_then(|a| a.to_str())
        .filter(|a| Cli::command().get_subcommands().any(|c| c.get_name() == *a));
    match named {
        Some(name) => format!("plethwire {name}"),
        None => "plethwire".to_owned(),
    }
}

/// Quote one argument for a POSIX shell when it needs it.
fn shell_quote(arg: &str) -> String {
    let plain = !arg.is_empty()
        && arg
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || "-_./:,=+@%".contains(c));
    if plain {
        arg.to_owned()
    } else {
        format!("'{}'", arg.replace('\'', r"'\''"))
    }
}

/// The command line as a user would retype it, program name shortened.
fn command_line(args: &[OsString]) -> String {
    std::iter::once("plethwire".to_owned())
        .chain(
            args.iter()
                .skip(1)
                .map(|a| shell_quote(&a.to_string_lossy())),
        )
        .collect::<Vec<_>>()
        .join(" ")
}

/// Parse `args` (program name first) and run the command, printing its
/// output to `out`. Help and version requests print and succeed.
pub fn run(args: Vec<OsString>, out: &mut dyn Write) -> Result<(), Failure> {
    let cli = match Cli::try_parse_from(hyphen_values::joined(&Cli::command(), args.clone())) {
        Ok(cli) => cli,
        Err(e) if matches!(e.kind(), ErrorKind::DisplayHelp | ErrorKind::DisplayVersion) => {
            let mut text = e.render().to_string();
            if !text.ends_with('\n') {
                text.push('\n');
            }
            return out.write_all(text.as_bytes()).map_err(Failure::output);
        }
        Err(e) => return Err(Failure::usage(one_line(&e, &help_target(&args)))),
    };
    let command = command_line(&args);
    match cli.command {
        Command::Demo(demo) => demo.run(out),
        Command::Filter(filter) => filter.run(&command, out),
        Command::Replay(replay) => replay.run(out),
        Command::Score(score) => score.run(out),
        Command::Emulate(emulate) => emulate.run(out),
        Command::Listen(listen) => listen.run(out),
        Command::Report(report) => report.run(out),
        Command::Frontend(frontend) => frontend.run(out),
    }
}

/// The whole program: run with the process's arguments on stdout, report a
/// failure as `plethwire: <problem>` on stderr.
pub fn main() -> ExitCode {
    let stdout = std::io::stdout();
    match run(std::env::args_os().collect(), &mut stdout.lock()) {
        Ok(()) => ExitCode::SUCCESS,
        Err(failure) => {
            if let Some(message) = failure.message {
                eprintln!(
                    "plethwire: {}",
                    plethwire::messages::without_os_codes(&message)
                );
            }
            ExitCode::from(failure.code)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn args(list: &[&str]) -> Vec<OsString> {
        list.iter().map(OsString::from).collect()
    }

    fn failure(list: &[&str]) -> Failure {
        let mut sink = Vec::new();
        run(args(list), &mut sink).expect_err("should fail")
    }

    #[test]
    fn quoting_leaves_plain_words_alone() {
        assert_eq!(shell_quote("--band"), "--band");
        assert_eq!(shell_quote("0.5:8"), "0.5:8");
        assert_eq!(shell_quote("my plot.svg"), "'my plot.svg'");
        assert_eq!(shell_quote("it's"), r"'it'\''s'");
        assert_eq!(
            command_line(&args(&["/x/y/plethwire", "filter", "--plot", "a b"])),
            "plethwire filter --plot 'a b'"
        );
    }

    #[test]
    fn clap_errors_become_one_line_with_a_suggestion() {
        let f = failure(&["plethwire", "filter", "--rate", "100", "--bnd", "1:2"]);
        assert_eq!(f.code, EXIT_USAGE);
        let m = f.message.unwrap();
        assert!(!m.contains('\n'), "{m}");
        assert!(
            m.contains("'--bnd'") && m.contains("did you mean '--band'"),
            "{m}"
        );
    }

    #[test]
    fn a_value_starting_with_a_hyphen_reads_as_with_an_equals_sign() {
        let spaced = failure(&["plethwire", "filter", "--rate", "250", "--band", "-1:8"]);
        let joined = failure(&["plethwire", "filter", "--rate", "250", "--band=-1:8"]);
        assert_eq!(spaced, joined);
        let m = spaced.message.unwrap();
        assert!(!m.contains("unexpected argument"), "{m}");
        // A known option after one that wants a value is still an option.
        let f = failure(&["plethwire", "filter", "--rate", "--band", "1:2"]);
        assert!(f
            .message
            .unwrap()
            .contains("a value is required for '--rate <HZ>'"));
        let rails = failure(&["plethwire", "replay", "rec", "--rails", "-1:x"]);
        assert!(rails
            .message
            .unwrap()
            .contains("invalid value '-1:x' for '--rails"));
    }

    #[test]
    fn a_wrong_choice_lists_the_right_ones() {
        let f = failure(&["plethwire", "replay", "rec", "--polarity", "x"]);
        let m = f.message.unwrap();
        assert!(m.contains("(one of: auto, up, down)"), "{m}");
    }

    #[test]
    fn missing_rate_is_named() {
        let f = failure(&["plethwire", "filter", "--band", "1:2"]);
        assert_eq!(f.code, EXIT_USAGE);
        assert!(f.message.unwrap().starts_with("missing --rate <HZ>"));
    }

    #[test]
    fn order_without_butterworth_stage_is_a_usage_error() {
        let f = failure(&[
            "plethwire",
            "filter",
            "--rate",
            "100",
            "--notch",
            "50",
            "--order",
            "3",
        ]);
        assert_eq!(f.code, EXIT_USAGE);
    }

    #[test]
    fn help_succeeds_and_shows_an_example() {
        let mut out = Vec::new();
        run(args(&["plethwire", "filter", "--help"]), &mut out).unwrap();
        let text = String::from_utf8(out).unwrap();
        assert!(text.contains("plethwire filter --rate 250 --band 0.5:8"));
    }
}
