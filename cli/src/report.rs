//! `plethwire report`: replay a recording and write one self-contained
//! HTML page about it.

use clap::Args;
use serde::Serialize;
use std::io::Write;
use std::path::{Path, PathBuf};

use super::pipeline_opts::PipelineOpts;
use super::Failure;
use plethwire::replay::{open, Replay, ReplayError, Streamed};
use plethwire::report::{
    self, BandPass, Excerpt, ExcerptTraces, Figures, Reference, ReportInput, TraceBuilder,
};
use plethwire::score::records::{annotators_beside, References};
use plethwire_dsp::pipeline::Config;
use plethwire_records::annotation_path;

const EXAMPLES: &str = "\
Examples:
  plethwire report ../shared/data/capnobase/cb0009
  plethwire report ../shared/data/bidmc/bidmc01 --excerpt 120:30 --out /tmp/bidmc01.html
  plethwire report session.csv --signal pleth --rate 100 --json

Writes <record>.report.html in the current folder (or --out FILE): one HTML
file with its figures inline, readable offline in any browser; a file
already there is not replaced without --force. Reference beats are read
from <record>.peak and a reference heart rate from <record>n.csv (column
pulse_bpm) when they exist beside the record; a --reference named must
exist. Exit status: 0 written, 1 the recording could not be read, a named
reference is missing or the page not written, 2 the command line could not
be understood.";

/// Options of `plethwire report`.
#[derive(Args, Debug, Clone, PartialEq)]
#[command(after_help = EXAMPLES)]
pub struct ReportArgs {
    /// WFDB record (dir/name or dir/name.hea) or CSV file.
    #[arg(value_name = "RECORD")]
    pub record: PathBuf,

    /// The page to write [default: RECORD.report.html in the current
    /// folder, RECORD the record's name].
    #[arg(long, value_name = "FILE")]
    pub out: Option<PathBuf>,

    /// Annotator of the reference beats: the extension of their WFDB
    /// annotation file beside the record, which must exist [default:
    /// peak, when it exists].
    #[arg(long, value_name = "NAME")]
    pub reference: Option<String>,

    /// Replace the page if it already exists.
    #[arg(long)]
    pub force: bool,

    /// The stretch of signal to plot, START:SECONDS [default: the 20 s
    /// with the most good beats].
    #[arg(long, value_name = "START:SECONDS", value_parser = parse_excerpt)]
    pub excerpt: Option<Excerpt>,

    /// Print the report's numbers as JSON.
    #[arg(long)]
    pub json: bool,

    /// Signal source and pipeline settings.
    #[command(flatten)]
    pub pipeline: PipelineOpts,
}

fn parse_excerpt(s: &str) -> Result<Excerpt, String> {
    let (a, b) = s
        .split_once(':')
        .ok_or_else(|| format!("'{s}' is not START:SECONDS"))?;
    let number = |t: &str| -> Result<f64, String> {
        t.trim()
            .parse::<f64>()
            .ok()
            .filter(|v| v.is_finite())
            .ok_or_else(|| format!("'{t}' is not a number"))
    };
    let (start_s, length_s) = (number(a)?, number(b)?);
    if start_s < 0.0 || length_s <= 0.0 {
        return Err(format!(
            "excerpt '{s}' needs a start of 0 or more and a length above 0"
        ));
    }
    Ok(Excerpt { start_s, length_s })
}

fn check_annotator(name: &str) -> Result<(), Failure> {
    if !name.is_empty() && name.chars().all(|c| c.is_ascii_alphanumeric() || c == '_') {
        Ok(())
    } else {
        Err(Failure::usage(format!(
            "reference name '{name}' must be letters, digits or '_' (it is a file extension)"
        )))
    }
}

/// The reference annotator unless `--reference` names one.
const DEFAULT_REFERENCE: &str = "peak";

/// Refuse when the reference beats `<base>.<annotator>` the user named
/// are not there, naming the file and the annotation files that are.
fn require_reference_beats(base: &Path, annotator: &str) -> Result<(), Failure> {
    let file = annotation_path(base, annotator);
    if file.is_file() {
        return Ok(());
    }
    Err(Failure::refused(format!(
        "no reference beats: {} does not exist (--reference {annotator}){}",
        file.display(),
        beside_hint(base)
    )))
}

/// `; annotation files beside it: a, b` or nothing.
fn beside_hint(base: &Path) -> String {
    let found = annotators_beside(base);
    if found.is_empty() {
        String::new()
    } else {
        format!("; annotation files beside it: {}", found.join(", "))
    }
}

#[derive(Serialize)]
struct Printed<'a> {
    written: String,
    #[serde(flatten)]
    figures: &'a Figures,
}

fn human(path: &Path, bytes: usize, f: &Figures) -> String {
    let opt = |v: Option<f64>, d: usize| v.map_or("-".into(), |v| format!("{v:.d$}"));
    let mut t = format!(
        "{}: wrote {} ({} KB)\n  {} beats ({:.1} % good), median HR mean {} bpm, SDNN {} ms, RMSSD {} ms, SD1 {} ms, SD2 {} ms\n",
        f.record,
        path.display(),
        bytes.div_ceil(1024),
        f.beats,
        f.good_share_percent,
        opt(f.hr_mean_bpm, 1),
        opt(f.hrv.sdnn_ms, 1),
        opt(f.hrv.rmssd_ms, 1),
        opt(f.poincare.sd1_ms, 1),
        opt(f.poincare.sd2_ms, 1),
    );
    if let Some(s) = &f.score {
        if s.f1_percent.is_some() {
            t += &format!(
                "  against the reference beats: F1 {} %\n",
                opt(s.f1_percent, 2)
            );
        }
        if s.hr_mae_bpm.is_some() {
            t += &format!(
                "  against the reference heart rate: MAE {} bpm\n",
                opt(s.hr_mae_bpm, 2)
            );
        }
    }
    t
}

/// Why the excerpt's traces could not be made.
enum TraceFailure {
    Page(report::PageError),
    Read(ReplayError),
}

impl ReportArgs {
    /// The signal excerpt's traces of `streamed`, whose replay is `run`,
    /// from a second pass over the record (stopped once they are made).
    fn traces(
        &self,
        streamed: &Streamed,
        run: &Replay,
        config: Config,
    ) -> Result<ExcerptTraces, TraceFailure> {
        let excerpt = report::excerpt_for(self.excerpt, run).map_err(TraceFailure::Page)?;
        let band =
            BandPass::new(&config).map_err(|e| TraceFailure::Page(report::PageError::Design(e)))?;
        let mut b = TraceBuilder::new(run.fs, streamed.len, excerpt, &band, &run.beats);
        streamed
            .blocks(|block| {
                b.push(block);
                b.wants_more()
            })
            .map_err(TraceFailure::Read)?;
        Ok(b.finish())
    }

    /// Run the command.
    pub fn run(&self, out: &mut dyn Write) -> Result<(), Failure> {
        let annotator = self.reference.as_deref().unwrap_or(DEFAULT_REFERENCE);
        check_annotator(annotator)?;
        // Streamed twice: once through the pipeline, once for the excerpt's
        // thinned traces; a long record is never in memory whole.
        let streamed = open(&self.record, &self.pipeline.source()).map_err(Failure::refused)?;
        let rec = &streamed.head;
        let config = self.pipeline.config(rec.signal.fs);
        let run = streamed
            .replay(config)
            .map_err(|e| super::replay::stream_failure(&self.record, e))?;
        let refs = References {
            annotator: annotator.to_owned(),
            ..References::default()
        };
        // A CSV recording's references sit beside it under its stem.
        let base = if rec
            .path
            .extension()
            .is_some_and(|e| e.eq_ignore_ascii_case("csv"))
        {
            rec.path.with_extension("")
        } else {
            rec.path.clone()
        };
        if self.reference.is_some() {
            require_reference_beats(&base, annotator)?;
        }
        let reference: Option<Reference> =
            Reference::load(&base, &refs, rec.signal.fs).map_err(Failure::refused)?;
        let path = self
            .out
            .clone()
            .unwrap_or_else(|| PathBuf::from(format!("{}.report.html", rec.name)));
        super::replay::check_outputs(&self.record, std::slice::from_ref(&path), self.force)?;
        let page_failure =
            |e: report::PageError| Failure::refused(format!("{}: {e}", self.record.display()));
        let traces = self.traces(&streamed, &run, config).map_err(|e| match e {
            TraceFailure::Page(e) => page_failure(e),
            TraceFailure::Read(e) => Failure::refused(e),
        })?;
        let input = ReportInput {
            name: &rec.name,
            signal: &rec.signal.name,
            units: rec.signal.units.as_deref(),
            samples: &[],
            traces: Some(&traces),
            config,
            replay: &run,
            reference: reference.as_ref(),
            excerpt: self.excerpt,
        };
        let (page, figures) = report::render(&input).map_err(page_failure)?;
        std::fs::write(&path, &page).map_err(|e| {
            Failure::refused(format!("{}: cannot write the report: {e}", path.display()))
        })?;
        let text = if self.json {
            let printed = Printed {
                written: path.display().to_string(),
                figures: &figures,
            };
            serde_json::to_string_pretty(&printed).unwrap_or_default() + "\n"
        } else {
            human(&path, page.len(), &figures)
        };
        out.write_all(text.as_bytes()).map_err(Failure::output)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn excerpts_parse_and_bad_ones_are_refused() {
        assert_eq!(
            parse_excerpt("120:30"),
            Ok(Excerpt {
                start_s: 120.0,
                length_s: 30.0
            })
        );
        assert_eq!(parse_excerpt(" 0.5 : 2 ").unwrap().start_s, 0.5);
        assert!(parse_excerpt("120").is_err());
        assert!(parse_excerpt("-1:10").is_err());
        assert!(parse_excerpt("5:0").is_err());
        assert!(parse_excerpt("a:10").is_err());
        assert!(parse_excerpt("5:inf").is_err());
    }
}
