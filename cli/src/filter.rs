//! `plethwire filter`: its options, their parsing, and running it.

use crate::values;
use clap::Args;
use std::io::Write;
use std::path::PathBuf;

use super::Failure;
use plethwire::filter_report::{
    check_const_name, human_report, write_svg, FilterDesignError, FilterReport, FilterSpec, Stage,
    DEFAULT_NOTCH_QUALITY, DEFAULT_ORDER, MAX_DESIGN_RATE_HZ,
};
use plethwire_dsp::pipeline::{MAX_RATE_HZ, MIN_RATE_HZ};

const EXAMPLES: &str = "\
Examples:
  plethwire filter --rate 250 --band 0.5:8 --notch 50
  plethwire filter --rate 100 --dc-block 0.3 --low-pass 6 --order 4 --no-plot
  plethwire filter --rate 500 --high-pass 0.5 --notch 50 --notch 60:20 --at 0.5,1.2,50 --json

Stages run in this order: --dc-block, --high-pass, --band, --low-pass, then
each --notch as given. The plot goes to the current folder; a file already
there is not replaced without --force. Exit status: 0 done, 1 the filter
was refused, the plot is in the way or could not be written, 2 the command
line could not be understood.";

fn after_help() -> String {
    format!(
        "{EXAMPLES}\n\nA rate outside the beat pipeline's {MIN_RATE_HZ} to {MAX_RATE_HZ} Hz is designed \
         with a warning; above {MAX_DESIGN_RATE_HZ} Hz it is refused."
    )
}

/// Options of `plethwire filter`.
#[derive(Args, Debug, Clone, PartialEq)]
#[command(after_help = after_help())]
pub struct FilterArgs {
    /// Sample rate of the ADC, Hz.
    #[arg(long, value_name = "HZ", value_parser = values::hz, allow_negative_numbers = true)]
    pub rate: f64,

    /// Butterworth band-pass with −3 dB edges LOW and HIGH, Hz.
    #[arg(long, value_name = "LOW:HIGH", value_parser = values::band_hz, allow_negative_numbers = true)]
    pub band: Option<(f64, f64)>,

    /// Butterworth low-pass with its −3 dB corner at HZ.
    #[arg(long, value_name = "HZ", value_parser = values::hz, allow_negative_numbers = true)]
    pub low_pass: Option<f64>,

    /// Butterworth high-pass with its −3 dB corner at HZ.
    #[arg(long, value_name = "HZ", value_parser = values::hz, allow_negative_numbers = true)]
    pub high_pass: Option<f64>,

    /// Butterworth order (1 to 8) for --band, --low-pass and --high-pass
    /// [default: 2].
    #[arg(long, value_name = "N", value_parser = parse_order, allow_negative_numbers = true)]
    pub order: Option<usize>,

    /// Notch at HZ with quality factor Q (default 30); repeat for more.
    #[arg(long, value_name = "HZ[:Q]", value_parser = parse_notch, allow_negative_numbers = true)]
    pub notch: Vec<(f64, f64)>,

    /// First-order DC blocker with its −3 dB corner at HZ.
    #[arg(long, value_name = "HZ", value_parser = values::hz, allow_negative_numbers = true)]
    pub dc_block: Option<f64>,

    /// Frequencies for the response table, Hz [default: 0.1, 0.5, 1, 2,
    /// 3.7, 8, 20, 50, 60 and every corner, below Nyquist].
    #[arg(
        long,
        value_name = "F1,F2,...",
        value_delimiter = ',',
        value_parser = values::hz,
        allow_negative_numbers = true
    )]
    pub at: Option<Vec<f64>>,

    /// Where to write the SVG response plot.
    #[arg(long, value_name = "PATH", default_value = "plethwire-filter.svg")]
    pub plot: PathBuf,

    /// Do not write a plot.
    #[arg(long, conflicts_with = "plot")]
    pub no_plot: bool,

    /// Replace the plot if the file already exists.
    #[arg(long)]
    pub force: bool,

    /// Print one JSON document instead of the text report.
    #[arg(long)]
    pub json: bool,

    /// Name of the Rust constant holding the sections.
    #[arg(long, value_name = "IDENT", default_value = "PULSE_FILTER", value_parser = parse_ident)]
    pub name: String,
}

fn parse_order(text: &str) -> Result<usize, String> {
    // The DSP library decides which orders it designs; here only the form.
    text.trim()
        .parse::<usize>()
        .map_err(|_| "expected a whole number, such as 2 or 4".to_owned())
}

fn parse_notch(text: &str) -> Result<(f64, f64), String> {
    match text.split_once(':') {
        None => Ok((values::hz(text)?, DEFAULT_NOTCH_QUALITY)),
        Some((centre, q)) => {
            let quality = q
                .trim()
                .parse::<f64>()
                .map_err(|_| "expected HZ or HZ:Q, such as 50 or 60:20".to_owned())?;
            Ok((values::hz(centre)?, quality))
        }
    }
}

fn parse_ident(text: &str) -> Result<String, String> {
    check_const_name(text)
        .map(|()| text.to_owned())
        .map_err(|e| e.to_string())
}

impl FilterArgs {
    /// The stages in chain order: DC blocker, high-pass, band-pass,
    /// low-pass, then the notches as given.
    pub fn stages(&self) -> Vec<Stage> {
        let order = self.order.unwrap_or(DEFAULT_ORDER);
        let mut stages = Vec::new();
        stages.extend(self.dc_block.map(|corner_hz| Stage::DcBlock { corner_hz }));
        stages.extend(
            self.high_pass
                .map(|corner_hz| Stage::HighPass { corner_hz, order }),
        );
        stages.extend(self.band.map(|(low_hz, high_hz)| Stage::BandPass {
            low_hz,
            high_hz,
            order,
        }));
        stages.extend(
            self.low_pass
                .map(|corner_hz| Stage::LowPass { corner_hz, order }),
        );
        stages.extend(
            self.notch
                .iter()
                .map(|&(centre_hz, quality)| Stage::Notch { centre_hz, quality }),
        );
        stages
    }

    /// The spec these options describe; refuses an empty one and an
    /// `--order` with nothing to apply to, as usage errors.
    pub fn spec(&self) -> Result<FilterSpec, Failure> {
        let butterworth =
            self.band.is_some() || self.low_pass.is_some() || self.high_pass.is_some();
        if self.order.is_some() && !butterworth {
            return Err(Failure::usage(
                "--order applies to --band, --low-pass and --high-pass, and none was given",
            ));
        }
        FilterSpec::new(self.rate, self.stages()).map_err(|e| match e {
            FilterDesignError::NothingToDesign => Failure::usage(
                "nothing to design: give at least one of --band, --low-pass, --high-pass, --notch or --dc-block",
            ),
            other => Failure::refused(other),
        })
    }

    /// Design, write the plot (unless `--no-plot`), and print the report
    /// to `out`. `command` is the command line, quoted in the output.
    pub fn run(&self, command: &str, out: &mut dyn Write) -> Result<(), Failure> {
        let spec = self.spec()?;
        let mut report = FilterReport::build(&spec, self.at.as_deref(), &self.name, command)
            .map_err(Failure::refused)?;
        // On stderr, so the report on stdout stays as it is (its JSON
        // carries them too).
        for w in &report.warnings {
            eprintln!("plethwire: warning: {w}");
        }
        if !self.no_plot {
            plethwire::output_guard::check_outputs(
                std::slice::from_ref(&self.plot),
                &[],
                self.force,
            )
            .map_err(Failure::refused)?;
            write_svg(&report, &self.plot).map_err(Failure::refused)?;
            report.plot = Some(self.plot.display().to_string());
        }
        let text = if self.json {
            let mut doc = serde_json::to_string_pretty(&report)
                .map_err(|e| Failure::refused(format!("cannot render the report as JSON: {e}")))?;
            doc.push('\n');
            doc
        } else {
            human_report(&report)
        };
        out.write_all(text.as_bytes()).map_err(Failure::output)
    }
}
