//! `plethwire emulate`: run a recording through the firmware on the
//! emulated board, show its beat stream as it arrives, and check it
//! against the host's replay.

use crate::values;
use clap::Args;
use std::io::Write;
use std::path::{Path, PathBuf};

use plethwire::vocabulary::{state_change_words, verdict_words, HR, MEDIAN_HR};
use plethwire_dsp::pipeline::{BeatEvent, Config, StateEvent};
use plethwire_dsp::wire::{Frame, Message};

use super::pipeline_opts::PipelineOpts;
use super::Failure;
use plethwire::emulate::{
    compare, find_qemu, Agreement, BoardEvents, Core, Disagreement, Emulation, Firmware,
    FirmwareSearch, Link, Session,
};
use plethwire::replay::{
    load, replay, sample_blocks, write_recording_beats, Recording, Replay, DEFAULT_ANNOTATOR,
};
use plethwire_records::annotation_path;

mod report;
mod serial_link;

const EXAMPLES: &str = "\
Examples:
  plethwire emulate ../shared/data/capnobase/cb0009 --out /tmp/beats
  plethwire emulate ../shared/data/bidmc/bidmc01 --uart --seconds 60
  plethwire emulate ../shared/data/bidmc/bidmc01 --count-instructions --quiet
  plethwire emulate ../shared/data/bidmc/bidmc01 --core m0 --count-instructions --quiet
  plethwire emulate ../shared/data/bidmc/bidmc01 --seconds 30 --json
  plethwire emulate --serial-link /tmp/plethwire-board --rate 250
  plethwire emulate ../shared/data/bidmc/bidmc01 --serial-link /tmp/plethwire-board --seconds 120

Runs the firmware (firmware/emulated) in QEMU's mps2-an386 board (--core
m4f, a Cortex-M4F) or its microbit (--core m0, a Cortex-M0 without an FPU:
every float operation in software), prints
each beat and state change it sends, writes <record>.<annotator> (WFDB
annotations, as `plethwire replay`, never over an existing file without
--force) in --out (default: the current folder), and checks every event
against the host's replay bit for bit.

With --serial-link PATH it is a serial device instead: the firmware runs in
its UART mode, fed the samples at their own rate (a 250 Hz signal arrives
as 250 samples a second; RECORD from its start again after its end, until
Ctrl-C or --seconds), and what it sends appears on a pseudo-terminal
linked at PATH, for `plethwire listen --port PATH` (with --view, the live
page). Without RECORD it is fed a made-up finger at rest at --rate Hz
(default 250). The link is removed when it stops: Ctrl-C, or the end of
--seconds. The emulated board has no LED, ADC or patient: a real sensor
is another matter. plethwire is not a medical device; look at an infrared LED only
as IEC 62471 allows; power a sensor someone is wired to from a battery or
through a USB isolator (IEC 60601-1 practice); local rules and qualified
practice decide.

The firmware: --firmware ELF, else $PLETHWIRE_FIRMWARE, else built in the
plethwire checkout --source DIR or $PLETHWIRE_SOURCE names, else the
checkout this program was built from (firmware/target/thumbv7em-none-eabihf/
release/plethwire-emulated, or thumbv6m-none-eabi for --core m0, built
there when missing; PLETHWIRE_SOURCE set
to nothing turns this off). Exit status: 0 done and identical, 1 the board,
QEMU or the files failed or the events differ, 2 the command line could not
be understood.";

/// Options of `plethwire emulate`.
#[derive(Args, Debug, Clone, PartialEq)]
#[command(after_help = EXAMPLES)]
pub struct EmulateArgs {
    /// WFDB record (dir/name or dir/name.hea) or CSV file [with
    /// --serial-link: default a made-up finger at rest].
    #[arg(value_name = "RECORD", required_unless_present = "serial_link")]
    pub record: Option<PathBuf>,

    /// Be a serial device: the board's UART on a pseudo-terminal linked at
    /// PATH, fed in real time, until Ctrl-C or --seconds.
    #[arg(long, value_name = "PATH",
          conflicts_with_all = ["uart", "count_instructions", "json", "out", "force"])]
    pub serial_link: Option<PathBuf>,

    /// Folder for the annotation file [default: the current folder].
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,

    /// Annotator name: the output file's extension (not hea, dat or one
    /// the recording's files use).
    #[arg(long, value_name = "NAME", default_value = DEFAULT_ANNOTATOR)]
    pub annotator: String,

    /// Replace an annotation file that already exists, and allow an
    /// annotator name a file beside the recording uses.
    #[arg(long)]
    pub force: bool,

    /// Send the samples over the emulated UART (about 10 kB/s) instead of
    /// semihosting files.
    #[arg(long)]
    pub uart: bool,

    /// The emulated core: m4f (QEMU mps2-an386, Cortex-M4F) or m0 (QEMU
    /// microbit, Cortex-M0 without FPU).
    #[arg(long, value_name = "CORE", default_value = "m4f", value_parser = values::core)]
    pub core: Core,

    /// The emulated firmware's ELF [default: $PLETHWIRE_FIRMWARE, else
    /// built from --source].
    #[arg(long, visible_alias = "elf", value_name = "ELF")]
    pub firmware: Option<PathBuf>,

    /// A plethwire checkout to build the emulated firmware in [default:
    /// $PLETHWIRE_SOURCE, else the checkout this program was built from].
    #[arg(long, value_name = "DIR")]
    pub source: Option<PathBuf>,

    /// Only the first S seconds of the recording.
    #[arg(long, value_name = "S", value_parser = values::positive_seconds)]
    pub seconds: Option<f64>,

    /// Count the pipeline's instructions per sample on the board (QEMU
    /// with -icount; not with --uart).
    #[arg(long, conflicts_with = "uart")]
    pub count_instructions: bool,

    /// Print only the summary, not every beat.
    #[arg(long)]
    pub quiet: bool,

    /// Print one JSON document with the results instead of the lines
    /// (implies --quiet).
    #[arg(long)]
    pub json: bool,

    /// Signal source and pipeline settings.
    #[command(flatten)]
    pub pipeline: PipelineOpts,
}

/// One line for a beat: peak time, interval, heart rates, quality, flags.
fn beat_line(b: &BeatEvent, fs: f64) -> String {
    let num = |v: Option<f32>, unit: &str| {
        v.map_or(format!("{:>10}", "-"), |v| format!("{v:>6.1} {unit:<3}"))
    };
    format!(
        "{:>9.3} s  beat   IBI {}  {HR} {}  {MEDIAN_HR} {}  quality {:.2}  {}\n",
        b.peak_index as f64 / fs,
        num(b.ibi_ms, "ms"),
        num(b.hr_bpm, "bpm"),
        num(b.hr_smoothed_bpm, "bpm"),
        b.quality,
        verdict_words(b.flags)
    )
}

fn state_line(s: &StateEvent, fs: f64) -> String {
    format!(
        "{:>9.3} s  state  {}\n",
        s.at as f64 / fs,
        state_change_words(s.previous, s.state)
    )
}

impl EmulateArgs {
    /// Run the command.
    pub fn run(&self, out: &mut dyn Write) -> Result<(), Failure> {
        match (&self.serial_link, &self.record) {
            (Some(link), _) => serial_link::run(self, link, out),
            (None, Some(record)) => self.run_record(record, out),
            (None, None) => Err(Failure::refused("a RECORD is needed without --serial-link")),
        }
    }

    /// Run `record` through the board and check it against the host.
    fn run_record(&self, record: &Path, out: &mut dyn Write) -> Result<(), Failure> {
        super::replay::check_annotator(record, &self.annotator, self.force)?;
        // The cheap checks first: no point loading 8 minutes of samples
        // for a board that is not there.
        let firmware = self.firmware()?;
        let qemu = find_qemu().map_err(Failure::refused)?;
        let rec = load(record, &self.pipeline.source()).map_err(Failure::refused)?;
        let dir = self.output_dir(record, &rec)?;
        let fs = rec.signal.fs;
        let config = self.pipeline.config(fs);
        let n = match self.seconds {
            Some(s) => ((s * fs).round() as usize).clamp(1, rec.signal.samples.len()),
            None => rec.signal.samples.len(),
        };
        let samples = &rec.signal.samples[..n];
        let link = if self.uart { Link::Uart } else { Link::File };
        let emulation = Emulation {
            qemu,
            core: self.core,
            elf: firmware.elf.clone(),
            link,
            count_instructions: self.count_instructions,
            timeout: None,
        };
        let head = self.head_line(&rec, n) + &firmware_line(&firmware);
        let quiet = self.quiet || self.json;
        if !self.json {
            out.write_all(head.as_bytes()).map_err(Failure::output)?;
        }
        let mut failed_output = None;
        let mut show = |f: &Frame| {
            let line = match &f.message {
                Message::Beat(b) if !quiet => beat_line(b, fs),
                Message::State(s) if !quiet => state_line(s, fs),
                _ => return,
            };
            if failed_output.is_none() {
                failed_output = out
                    .write_all(line.as_bytes())
                    .and_then(|_| out.flush())
                    .err();
            }
        };
        let session = emulation
            .run(samples, config, &mut show)
            .map_err(|e| Failure::refused(format!("{}: {e}", record.display())))?;
        if let Some(e) = failed_output {
            return Err(Failure::output(e));
        }
        session.verify().map_err(Failure::refused)?;
        let board = session.to_replay();
        let agreement = self.against_host(record, samples, config, &session, &board)?;
        let ann =
            write_recording_beats(&dir, &rec, &self.annotator, &board).map_err(Failure::refused)?;
        let text = if self.json {
            report::json_report(
                (&rec.name, self.core),
                self.uart,
                n as f64 / fs,
                &session,
                &board,
                &agreement,
                (&ann, &firmware),
            )
        } else {
            report::summary(&session, &board.summary(), agreement.as_ref().ok(), &ann)
        };
        out.write_all(text.as_bytes()).map_err(Failure::output)?;
        agreement.map(|_| ()).map_err(|e| {
            Failure::refused(format!(
                "the board's events differ from the host replay: {e}"
            ))
        })
    }

    /// The board's beats, states (in `board`) and sample blocks (in
    /// `session`) against the host replay of the same samples.
    fn against_host(
        &self,
        record: &Path,
        samples: &[f64],
        config: Config,
        session: &Session,
        board: &Replay,
    ) -> Result<Result<Agreement, Disagreement>, Failure> {
        let cannot = |e| {
            Failure::refused(format!(
                "{}: cannot run the pipeline: {e}",
                record.display()
            ))
        };
        let host = replay(samples, config).map_err(cannot)?;
        let host_blocks = sample_blocks(samples, config).map_err(cannot)?;
        let blocks = session.blocks();
        let events = BoardEvents {
            beats: &board.beats,
            states: &board.states,
            blocks: &blocks,
        };
        Ok(compare(events, &host, &host_blocks))
    }

    /// The folder for the annotation file of `rec` (read from `record`),
    /// once nothing is in the way of that file.
    fn output_dir(&self, record: &Path, rec: &Recording) -> Result<PathBuf, Failure> {
        let dir = super::replay::output_dir(self.out.as_deref())?;
        let file = annotation_path(&dir.join(&rec.name), &self.annotator);
        super::replay::check_outputs(record, &[file], self.force)?;
        Ok(dir)
    }

    /// The firmware as `--firmware`, `--source` and the environment say;
    /// a build's messages go to standard error.
    fn firmware(&self) -> Result<Firmware, Failure> {
        let search = FirmwareSearch {
            elf: self.firmware.clone(),
            source: self.source.clone(),
            rebuild: false,
            core: self.core,
        };
        let quiet = self.json;
        search
            .locate(&mut |t| {
                if !quiet {
                    eprintln!("  {t}");
                }
            })
            .map_err(Failure::refused)
    }

    /// The first line: which record, how long, at what rate, over which link.
    fn head_line(&self, rec: &Recording, n: usize) -> String {
        format!(
            "{}: {:.1} s of {} at {} Hz on the emulated board ({}; {})\n",
            rec.name,
            n as f64 / rec.signal.fs,
            rec.signal.name,
            rec.signal.fs,
            self.core.describe(),
            if self.uart {
                "UART"
            } else {
                "semihosting files"
            }
        )
    }
}

/// Which firmware ran, and where it came from.
fn firmware_line(f: &Firmware) -> String {
    format!("  firmware    {} ({})\n", f.elf.display(), f.origin)
}
