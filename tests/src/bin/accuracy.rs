//! `accuracy`: the whole accuracy picture in one command (run it through
//! `scripts/accuracy`). Every shared dataset, the pipeline and the plain
//! scipy baseline scored by the same code, one markdown table, and a line
//! on each target; `--write` puts the table into docs/accuracy.md.

use std::io::Write;
use std::path::PathBuf;
use std::process::ExitCode;

use plethwire_checks::accuracy::{run, table};
use plethwire_checks::{repo_root, shared_data_dir};

const HELP: &str = "\
accuracy: every shared dataset, the pipeline beside the plain baseline, one table

Usage: scripts/accuracy [--write] [--data DIR] [--events DIR]

  --write       also write the table into docs/accuracy.md, between its marks
  --data DIR    the shared recordings (default: PLETHWIRE_DATA, else ../shared/data)
  --events DIR  also write each recording's beats and state changes there, a
                file each (diff -r two such folders: did a change move any result?)
  -h, --help    this text

Needs python3 with numpy and scipy (the baseline). Prints the table on
standard output, then one line per target (met, not met yet with its floor,
or FAILED); progress goes to standard error. Exit status: 0 done (whatever
the targets say; tests/tests/accuracy_targets.rs asserts them), 1 the data,
Python or the document could not be used, 2 the command line was not
understood.";

/// What the command line asks for.
struct Args {
    write: bool,
    data: Option<PathBuf>,
    events: Option<PathBuf>,
}

/// A command line the tool does not understand.
#[derive(Debug, thiserror::Error)]
enum ArgsError {
    /// `--data` came last, without its folder.
    #[error("--data needs a folder")]
    DataWithoutFolder,
    /// `--events` came last, without its folder.
    #[error("--events needs a folder")]
    EventsWithoutFolder,
    /// A word that is no option of this tool.
    #[error("unexpected argument {0:?} (see --help)")]
    Unexpected(String),
}

fn parse(mut args: impl Iterator<Item = String>) -> Result<Option<Args>, ArgsError> {
    let mut a = Args {
        write: false,
        data: None,
        events: None,
    };
    while let Some(arg) = args.next() {
        match arg.as_str() {
            "--write" => a.write = true,
            "--data" => {
                let dir = args.next().ok_or(ArgsError::DataWithoutFolder)?;
                a.data = Some(dir.into());
            }
            "--events" => {
                let dir = args.next().ok_or(ArgsError::EventsWithoutFolder)?;
                a.events = Some(dir.into());
            }
            "-h" | "--help" => return Ok(None),
            other => return Err(ArgsError::Unexpected(other.to_owned())),
        }
    }
    Ok(Some(a))
}

fn main() -> ExitCode {
    let args = match parse(std::env::args().skip(1)) {
        Ok(Some(a)) => a,
        Ok(None) => {
            println!("{HELP}");
            return ExitCode::SUCCESS;
        }
        Err(e) => {
            eprintln!("accuracy: {e}");
            return ExitCode::from(2);
        }
    };
    let Some(data) = args.data.or_else(shared_data_dir) else {
        eprintln!("accuracy: missing {}", plethwire_checks::needs::SHARED_DATA);
        return ExitCode::from(1);
    };
    let started = std::time::Instant::now();
    let picture = match run(&data, |what| eprintln!("scoring {what}")) {
        Ok(p) => p,
        Err(e) => {
            eprintln!("accuracy: {e}");
            return ExitCode::from(1);
        }
    };
    let markdown = table::markdown(&picture);
    let mut out = String::new();
    out += &markdown;
    out += "\n";
    for (_, line) in table::target_lines(&picture) {
        out += &line;
        out += "\n";
    }
    if std::io::stdout().write_all(out.as_bytes()).is_err() {
        return ExitCode::from(1);
    }
    eprintln!("scored in {:.1} s", started.elapsed().as_secs_f64());
    if let Some(dir) = &args.events {
        if let Err(e) = write_events(dir, &picture.event_lists) {
            eprintln!("accuracy: {}: {e}", dir.display());
            return ExitCode::from(1);
        }
        eprintln!("wrote every recording's events into {}", dir.display());
    }
    if args.write {
        let doc = repo_root().join("docs/accuracy.md");
        if let Err(e) = table::write_into(&doc, &markdown) {
            eprintln!("accuracy: {e}");
            return ExitCode::from(1);
        }
        eprintln!("wrote the table into {}", doc.display());
    }
    ExitCode::SUCCESS
}

/// One file per recording, `dataset-name.txt`, of its beats and state
/// changes: `diff -r` of two such folders says whether a change to the
/// pipeline changed any result.
fn write_events(dir: &std::path::Path, lists: &[(String, String)]) -> std::io::Result<()> {
    std::fs::create_dir_all(dir)?;
    for (name, text) in lists {
        std::fs::write(dir.join(format!("{}.txt", name.replace('/', "-"))), text)?;
    }
    Ok(())
}
