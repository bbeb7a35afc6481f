//! `plethwire replay`: run a recording through the firmware's pipeline.

use clap::Args;
use serde::Serialize;
use std::io::Write;
use std::path::{Path, PathBuf};

use plethwire_dsp::pipeline::BeatFlags;

use super::pipeline_opts::{MotionOpts, PipelineOpts};
use super::Failure;
use plethwire::output_guard::{self, OutputError, DEFAULT_OUTPUT_DIR};
use plethwire::replay::{
    beat_rows, beats_csv, open, write_recording_beats, InputInfo, Recording, Replay, StreamError,
    Summary, DEFAULT_ANNOTATOR,
};
use plethwire_records::annotation_path;

const EXAMPLES: &str = "\
Examples:
  plethwire replay ../shared/data/capnobase/cb0009 --out /tmp/beats
  plethwire replay ../shared/data/bidmc/bidmc01 --detector zong --beats-csv --out /tmp/beats
  plethwire replay session.csv --signal pleth --time-column time_s --json

Writes <record>.<annotator> (WFDB annotations, symbol N at each systolic
peak) in --out (default: the current folder); --beats-csv and --beats-json
add <record>.<annotator>.csv / .json with every beat's fields. A file that
already exists is not replaced without --force; hea, dat and the recording's
own files (its reference beats) are never written. Exit status: 0 done,
1 the recording could not be read or the results not written, 2 the
command line could not be understood.";

/// Options of `plethwire replay`.
#[derive(Args, Debug, Clone, PartialEq)]
#[command(after_help = EXAMPLES)]
pub struct ReplayArgs {
    /// WFDB record (dir/name or dir/name.hea) or CSV file.
    #[arg(value_name = "RECORD")]
    pub record: PathBuf,

    /// Folder for the output files [default: the current folder].
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,

    /// Annotator name: the output file's extension (not hea, dat or one
    /// the recording's files use).
    #[arg(long, value_name = "NAME", default_value = DEFAULT_ANNOTATOR)]
    pub annotator: String,

    /// Replace output files that already exist, and allow an annotator
    /// name a file beside the recording uses (never its header or
    /// samples).
    #[arg(long)]
    pub force: bool,

    /// Also write every beat as CSV.
    ///
    /// Columns (docs/vocabulary.md): peak_sample, peak_s, onset_sample,
    /// emitted_sample, ibi_ms, hr_bpm (60000 / IBI), median_hr_bpm (60000 /
    /// median of the good intervals of the last 12 s), amplitude (input
    /// units), quality (template correlation, 0 to 1), verdict (good, or bad
    /// when any flag but no_interval is set) and flags: the flags set,
    /// joined by | (no_interval, implausible_interval, clipped,
    /// low_correlation, input_replaced, motion, narrow).
    #[arg(long)]
    pub beats_csv: bool,

    /// Also write every beat as JSON: the CSV's columns as keys, flags as a
    /// list of names.
    #[arg(long)]
    pub beats_json: bool,

    /// Print the summary as JSON.
    #[arg(long)]
    pub json: bool,

    /// Signal source and pipeline settings.
    #[command(flatten)]
    pub pipeline: PipelineOpts,

    /// The accelerometer.
    #[command(flatten)]
    pub motion: MotionOpts,
}

#[derive(Serialize)]
struct ReplayReport<'a> {
    record: &'a str,
    signal: &'a str,
    sample_rate_hz: f64,
    detector: String,
    input: &'a InputInfo,
    summary: &'a Summary,
    #[serde(skip_serializing_if = "Option::is_none")]
    motion: Option<MotionReport<'a>>,
    written: &'a [String],
}

/// The accelerometer used, and the beats it flagged.
#[derive(Serialize)]
struct MotionReport<'a> {
    signals: &'a [String; 3],
    flagged_beats: usize,
}

/// A streamed replay that stopped, as the command says it: a pipeline
/// that would not start names the record; a read error names its file.
pub(crate) fn stream_failure(record: &Path, e: StreamError) -> Failure {
    match e {
        StreamError::Pipeline(e) => Failure::refused(format!(
            "{}: cannot run the pipeline: {e}",
            record.display()
        )),
        StreamError::Read(e) => Failure::refused(e),
    }
}

/// Refuse an annotator name that cannot be a file extension, is a WFDB
/// record part, or (unless `force`) is taken by a file of `record`.
pub(super) fn check_annotator(record: &Path, name: &str, force: bool) -> Result<(), Failure> {
    let ok = !name.is_empty() && name.chars().all(|c| c.is_ascii_alphanumeric() || c == '_');
    if !ok {
        return Err(Failure::usage(format!(
            "annotator name '{name}' must be letters, digits or '_' (it becomes a file extension)"
        )));
    }
    output_guard::check_annotator(record, name, force).map_err(guard_failure)
}

/// A refused output as a failure: a record part is a bad option value
/// (usage), anything else a refusal.
pub(crate) fn guard_failure(e: OutputError) -> Failure {
    match e {
        OutputError::RecordPart(_) => Failure::usage(e),
        _ => Failure::refused(e),
    }
}

/// Refuse to write `outputs` over `record`'s own files, or over existing
/// files unless `force`.
pub(crate) fn check_outputs(
    record: &Path,
    outputs: &[PathBuf],
    force: bool,
) -> Result<(), Failure> {
    output_guard::check_outputs(outputs, &output_guard::recording_files(record), force)
        .map_err(guard_failure)
}

impl ReplayArgs {
    /// Run the command.
    pub fn run(&self, out: &mut dyn Write) -> Result<(), Failure> {
        check_annotator(&self.record, &self.annotator, self.force)?;
        let source = self.pipeline.source_with(&self.motion);
        // Streamed: a long record is never in memory whole.
        let streamed = open(&self.record, &source).map_err(Failure::refused)?;
        let rec = &streamed.head;
        let config = self.pipeline.config(rec.signal.fs);
        let run = streamed
            .replay(config)
            .map_err(|e| stream_failure(&self.record, e))?;
        let written = self.write_outputs(rec, &run)?;
        let summary = run.summary();
        let motion = streamed.motion_names().map(|names| MotionReport {
            signals: names,
            flagged_beats: run
                .beats
                .iter()
                .filter(|b| b.flags.has(BeatFlags::MOTION))
                .count(),
        });
        let text = if self.json {
            let report = ReplayReport {
                record: &rec.name,
                signal: &rec.signal.name,
                sample_rate_hz: rec.signal.fs,
                detector: config.options.detector.cli_name().to_string(),
                input: &rec.input,
                summary: &summary,
                motion,
                written: &written,
            };
            serde_json::to_string_pretty(&report).unwrap_or_default() + "\n"
        } else {
            human(
                &rec.name,
                &rec.signal.name,
                rec.signal.fs,
                &summary,
                &written,
            )
            .replacen(
                '\n',
                &format!("\n{}{}", input_lines(&rec.input), motion_line(&motion)),
                1,
            )
        };
        out.write_all(text.as_bytes()).map_err(Failure::output)
    }

    /// The outputs for the recording `name`: the annotation file, then
    /// the beat tables asked for.
    fn outputs(&self, dir: &Path, name: &str) -> Vec<PathBuf> {
        let mut outputs = vec![annotation_path(&dir.join(name), &self.annotator)];
        for (wanted, ext) in [(self.beats_csv, "csv"), (self.beats_json, "json")] {
            if wanted {
                outputs.push(dir.join(format!("{name}.{}.{ext}", self.annotator)));
            }
        }
        outputs
    }

    /// Write the beats of `run` (a replay of `rec`) as
    /// [`Self::outputs`] lists them, once none is in the way; returns the
    /// files written.
    fn write_outputs(&self, rec: &Recording, run: &Replay) -> Result<Vec<String>, Failure> {
        let dir = output_dir(self.out.as_deref())?;
        let outputs = self.outputs(&dir, &rec.name);
        check_outputs(&self.record, &outputs, self.force)?;
        let ann =
            write_recording_beats(&dir, rec, &self.annotator, run).map_err(Failure::refused)?;
        let mut written = vec![ann.display().to_string()];
        // Each table made only when asked for: on a long record they are
        // the largest things the command holds.
        let csv = || beats_csv(run);
        let json = || serde_json::to_string_pretty(&beat_rows(run)).unwrap_or_default() + "\n";
        let tables: [(bool, &dyn Fn() -> String); 2] =
            [(self.beats_csv, &csv), (self.beats_json, &json)];
        let bodies = tables
            .into_iter()
            .filter(|(wanted, _)| *wanted)
            .map(|(_, make)| make());
        for (path, body) in outputs[1..].iter().zip(bodies) {
            std::fs::write(path, body)
                .map_err(|e| Failure::refused(format!("{}: cannot write: {e}", path.display())))?;
            written.push(path.display().to_string());
        }
        Ok(written)
    }
}

fn motion_line(m: &Option<MotionReport<'_>>) -> String {
    m.as_ref().map_or(String::new(), |m| {
        format!(
            "  motion      {} as the accelerometer; {} beats flagged for motion\n",
            m.signals.join(", "),
            m.flagged_beats
        )
    })
}

fn opt(v: Option<f32>, unit: &str) -> String {
    v.map_or("-".into(), |v| format!("{v:.1} {unit}"))
}

/// The summary's beat count and heart-rate lines, as `replay` and
/// `emulate` print them.
pub(super) fn beats_and_rate_lines(s: &Summary) -> String {
    let mut t = format!(
        "  beats       {} ({} good, {:.1} %)\n",
        s.beats,
        s.good_beats,
        100.0 * s.good_share
    );
    t += &match &s.heart_rate_bpm {
        Some(h) => format!(
            "  median HR   mean {:.1} bpm, min {:.1}, max {:.1}\n",
            h.mean, h.min, h.max
        ),
        None => "  median HR   none (no good beats)\n".into(),
    };
    t
}

/// How the samples were got (time column, resampling, channel choice),
/// as `replay` and `score` print it; empty for a plain record.
pub(crate) fn input_lines(input: &InputInfo) -> String {
    let mut t = String::new();
    if let (Some(column), Some(unit)) = (&input.time_column, input.time_unit) {
        t += &format!(
            "  times       column {column:?} in {} ({})\n",
            unit.name(),
            input.time_unit_from.unwrap_or("given")
        );
    }
    if let Some(r) = &input.resampled {
        t += &format!(
            "  resampled   onto {:.3} Hz ({}): {:.1} % of {} frames off the grid by over 1/4 period, longest gap {:.0} ms, {} samples in gaps over {:.0} ms left missing\n",
            r.grid_hz,
            r.grid_rate_from,
            100.0 * r.resampled_share,
            r.frames,
            1000.0 * r.longest_gap_s,
            r.missing_samples,
            1000.0 * r.max_gap_s
        );
    }
    if input.inverted {
        t += "  polarity    pulse points down in the file: signal negated\n";
    }
    if let Some(c) = &input.channel {
        let figures: Vec<String> = c
            .candidates
            .iter()
            .map(|f| format!("{} {:.3}", f.name, f.figure))
            .collect();
        t += &format!(
            "  channel     {} chosen (clearest pulse: {})\n",
            c.chosen,
            figures.join(", ")
        );
    }
    t
}

fn human(name: &str, signal: &str, fs: f64, s: &Summary, written: &[String]) -> String {
    let mut t = format!("{name}: {:.1} s of {signal} at {fs} Hz\n", s.duration_s);
    t += &beats_and_rate_lines(s);
    t += &format!(
        "  HRV         {} NN intervals: SDNN {}, RMSSD {}, pNN50 {}\n",
        s.hrv.nn_intervals,
        opt(s.hrv.sdnn_ms, "ms"),
        opt(s.hrv.rmssd_ms, "ms"),
        opt(s.hrv.pnn50_percent, "%")
    );
    t += &format!(
        "  input       {} samples replaced (not a number), {} at the rails, {} filter restarts\n",
        s.rejected_samples, s.clipped_samples, s.restarts
    );
    if let Some(l) = s.latency_median_ms {
        t += &format!("  latency     median {l:.0} ms from peak to event\n");
    }
    for w in written {
        t += &format!("  wrote       {w}\n");
    }
    t
}

/// Where output files go: `out`, else the current folder (the same for
/// every command); created when missing.
pub(crate) fn output_dir(out: Option<&Path>) -> Result<PathBuf, Failure> {
    let dir = out.map_or_else(|| PathBuf::from(DEFAULT_OUTPUT_DIR), Path::to_path_buf);
    std::fs::create_dir_all(&dir).map_err(|e| {
        Failure::refused(format!("{}: cannot create the folder: {e}", dir.display()))
    })?;
    Ok(dir)
}
