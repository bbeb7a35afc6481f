//! `plethwire frontend`: the analog front end's budget from a circuit file,
//! options, or both.

use clap::{Args, ValueEnum};
use std::io::Write;
use std::path::PathBuf;

use super::Failure;
use crate::values;

mod parsers;

use parsers::{
    adc_ref_v, dc_ua, farads, level_v, ohms, pulse_ua, rails, rate_hz, rated_ma, stage, supply_v,
};
use plethwire::frontend::{
    human_report, limits, write_svg, DetectorDraft, DetectorKind, Draft, Farads, FrontendError,
    FrontendReport, LedDraft, LoadAt, Ohms, RailsPair, Resistors, StageDraft, CAUTIONS,
};

const EXAMPLES: &str = "\
Examples:
  plethwire frontend examples/frontend-fingerclip.toml
  plethwire frontend examples/frontend-fingerclip.toml --pulse-ua 0.2 --rate 100 --json
  plethwire frontend --supply 5 --led-vf 1.7 --led-r 470 --led-parallel 3 --led-rated-ma 50 \\
      --tia 10k --tia-cf 1u --stage highpass,r=1M,c=1u --stage inverting,rin=1k,rf=47k \\
      --pulse-ua 1 --no-plot

Stages (--stage, or [[stage]] in the file) run in the order given:
  highpass,r=R,c=C    lowpass,r=R,c=C    buffer[,rails=LOW:HIGH]
  inverting,rin=R,rf=R[,cf=C][,cin=C][,rails=LOW:HIGH]
  noninverting,rin=R,rf=R[,cf=C][,cin=C][,rails=LOW:HIGH]
Values take SI prefixes: 470, 4.7k, 4k7, 22u, 100n (1 mΩ to 1 TΩ, 1 fF to 1 F).

Every node is checked against its own rails: the detector's output (the
TIA's, from its reference, --tia-ref, default the bias) and each
amplifier's, with the steady photocurrent and the pulse on it; an
amplifier without rails of its own has the board's (--rails, default 0 V
to the LED supply); a passive RC stage has none. A node that leaves its
rails, or a pulse that leaves the ADC range, is an error in the report.

The circuit file is TOML with the tables [led] (supply_v, forward_v,
resistor = one value or a list in parallel, parallel, rated_ma), [detector]
(kind = \"photodiode\" with feedback, feedback_cap, reference_v; or
\"phototransistor\" with load, load_cap, load_at = \"emitter\" or
\"collector\"; either with rails = [LOW, HIGH]), [[stage]] (kind and the
keys above, rails = [LOW, HIGH]), [adc] (bits, reference_v, bias_v, rate_hz),
[pulse] (change_ua, dc_ua) and [rails] (low_v, high_v); see
examples/frontend-fingerclip.toml. Options override the file's values;
--stage, --tia and --phototransistor replace its stages or detector.

";

const EXIT_AND_CAUTIONS: &str = "\
Exit status: 0 done (also when the report finds errors: they are listed
under Errors, and in the JSON's findings with level \"error\"), 1 the circuit file could not be read or was refused,
the LED cannot light, or the plot is in the way (an existing file needs
--force) or could not be written, 2 the command line
could not be understood or does not describe a whole circuit.

Cautions:
  - ";

/// Options of `plethwire frontend`.
#[derive(Args, Debug, Clone, PartialEq)]
#[command(after_help = after_help())]
pub struct FrontendArgs {
    /// Circuit file (TOML).
    #[arg(value_name = "CIRCUIT.toml")]
    pub circuit: Option<PathBuf>,

    /// A title for the report and the plot.
    #[arg(long, value_name = "TEXT")]
    pub name: Option<String>,

    /// LED supply voltage, V.
    #[arg(long, value_name = "V", value_parser = supply_v, allow_negative_numbers = true)]
    pub supply: Option<f64>,

    /// LED forward voltage at its working current, V.
    #[arg(long, value_name = "V", value_parser = supply_v, allow_negative_numbers = true)]
    pub led_vf: Option<f64>,

    /// LED series resistor; several, comma-separated, are in parallel.
    #[arg(
        long,
        value_name = "OHMS[,OHMS...]",
        value_delimiter = ',',
        value_parser = ohms,
        allow_negative_numbers = true
    )]
    pub led_r: Option<Vec<f64>>,

    /// How many of the one --led-r resistor are in parallel.
    #[arg(long, value_name = "N", value_parser = values::whole_in(1u32, limits::MAX_PARALLEL))]
    pub led_parallel: Option<u32>,

    /// The LED's rated continuous current, mA; a higher current warns.
    #[arg(long, value_name = "MA", value_parser = rated_ma, allow_negative_numbers = true)]
    pub led_rated_ma: Option<f64>,

    /// Detector: a photodiode into a transimpedance amplifier with this
    /// feedback resistor.
    #[arg(long, value_name = "RF", value_parser = ohms, conflicts_with = "phototransistor", allow_negative_numbers = true)]
    pub tia: Option<f64>,

    /// Capacitor across the transimpedance feedback resistor.
    #[arg(long, value_name = "CF", value_parser = farads, requires = "tia", allow_negative_numbers = true)]
    pub tia_cf: Option<f64>,

    /// The transimpedance amplifier's reference (its non-inverting
    /// input), V: its output with no light [default: the bias].
    #[arg(long, value_name = "V", value_parser = level_v, conflicts_with = "phototransistor", allow_negative_numbers = true)]
    pub tia_ref: Option<f64>,

    /// The detector's own rails, V [default: --rails].
    #[arg(long, value_name = "LOW:HIGH", value_parser = rails, allow_negative_numbers = true)]
    pub detector_rails: Option<(f64, f64)>,

    /// Detector: a phototransistor with this load resistor.
    #[arg(long, value_name = "RLOAD", value_parser = ohms, allow_negative_numbers = true)]
    pub phototransistor: Option<f64>,

    /// Where the phototransistor's load sits [default: emitter].
    #[arg(long, value_name = "WHERE", requires = "phototransistor")]
    pub load_at: Option<LoadAtArg>,

    /// Capacitor across the phototransistor's load.
    #[arg(long, value_name = "C", value_parser = farads, requires = "phototransistor", allow_negative_numbers = true)]
    pub load_cap: Option<f64>,

    /// A stage after the detector, KIND[,KEY=VALUE...]; repeat in signal order.
    #[arg(long = "stage", value_name = "KIND[,KEY=VALUE...]", value_parser = stage)]
    pub stages: Vec<StageDraft>,

    /// ADC resolution, bits [default: 12].
    #[arg(long, value_name = "N", value_parser = values::whole_in(1u32, 32))]
    pub adc_bits: Option<u32>,

    /// ADC reference voltage (input range 0 to this), V [default: 3.3].
    #[arg(long, value_name = "V", value_parser = adc_ref_v, allow_negative_numbers = true)]
    pub adc_ref: Option<f64>,

    /// DC level of the signal at the ADC input, V [default: half the reference].
    #[arg(long, value_name = "V", value_parser = level_v, allow_negative_numbers = true)]
    pub bias: Option<f64>,

    /// Sample rate to use, within the pipeline's range, Hz [default: the
    /// recommended one].
    #[arg(long, value_name = "HZ", value_parser = rate_hz, allow_negative_numbers = true)]
    pub rate: Option<f64>,

    /// The board's amplifier rails, every stage's unless it gives its own
    /// (rails=LOW:HIGH), V [default: 0 to the LED supply].
    #[arg(long, value_name = "LOW:HIGH", value_parser = rails, allow_negative_numbers = true)]
    pub rails: Option<(f64, f64)>,

    /// Photocurrent change of one pulse, µA peak to peak.
    #[arg(long, value_name = "UA", value_parser = pulse_ua, allow_negative_numbers = true)]
    pub pulse_ua: Option<f64>,

    /// Steady photocurrent, µA (places every DC-coupled node).
    #[arg(long, value_name = "UA", value_parser = dc_ua, allow_negative_numbers = true)]
    pub dc_ua: Option<f64>,

    /// Where to write the SVG Bode plot.
    #[arg(long, value_name = "PATH", default_value = "plethwire-frontend.svg")]
    pub plot: PathBuf,

    /// Do not write a plot.
    #[arg(long, conflicts_with = "plot")]
    pub no_plot: bool,

    /// Replace the plot if the file already exists (never the circuit
    /// file).
    #[arg(long)]
    pub force: bool,

    /// Print one JSON document instead of the text report.
    #[arg(long)]
    pub json: bool,
}

/// `--load-at` values.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum LoadAtArg {
    /// Load between emitter and ground: output rises with light.
    Emitter,
    /// Load between supply and collector: output falls with light.
    Collector,
}

fn after_help() -> String {
    format!(
        "{EXAMPLES}{SAMPLING}{EXIT_AND_CAUTIONS}{}",
        CAUTIONS.join("\n  - "),
        SAMPLING = sampling_help()
    )
}

/// The sample-rate rule, with the pipeline's range from plethwire-dsp.
fn sampling_help() -> String {
    use plethwire_dsp::pipeline::{MAX_RATE_HZ, MIN_RATE_HZ};
    format!(
        "Sample rate: at least 10 × the chain's highest analog corner and at least \
         {MIN_RATE_HZ} Hz, rounded up to 25, 50, 100, 200, 250, 500 or 1000 Hz and at most \
         {MAX_RATE_HZ} Hz, the pipeline's range (--rate must lie in it). Digital band-pass: \
         Butterworth order 2, 0.3 Hz to 8 Hz (at most 0.4 × the rate), printed as the \
         plethwire filter command that designs it.\n\n"
    )
}

impl FrontendArgs {
    /// What the options say about the circuit, to lay over the file's.
    pub fn draft(&self) -> Result<Draft, Failure> {
        if self.led_parallel.is_some() && self.led_r.as_ref().is_some_and(|r| r.len() > 1) {
            return Err(Failure::usage(
                "--led-parallel goes with one --led-r value; a list of resistors is already in parallel",
            ));
        }
        let detector = match (self.tia, self.phototransistor) {
            (Some(rf), _) => Some(DetectorDraft {
                kind: DetectorKind::Photodiode,
                feedback: Some(Ohms(rf)),
                feedback_cap: self.tia_cf.map(Farads),
                load: None,
                load_cap: None,
                load_at: None,
                reference_v: None,
                rails: None,
            }),
            (None, Some(load)) => Some(DetectorDraft {
                kind: DetectorKind::Phototransistor,
                feedback: None,
                feedback_cap: None,
                load: Some(Ohms(load)),
                load_cap: self.load_cap.map(Farads),
                load_at: self.load_at.map(|w| match w {
                    LoadAtArg::Emitter => LoadAt::Emitter,
                    LoadAtArg::Collector => LoadAt::Collector,
                }),
                reference_v: None,
                rails: None,
            }),
            (None, None) => None,
        };
        let mut d = Draft {
            name: self.name.clone(),
            led: LedDraft {
                supply_v: self.supply,
                forward_v: self.led_vf,
                resistor: self.led_r.clone().map(Resistors),
                parallel: self.led_parallel,
                rated_ma: self.led_rated_ma,
            },
            detector,
            stages: self.stages.clone(),
            ..Draft::default()
        };
        d.adc.bits = self.adc_bits;
        d.adc.reference_v = self.adc_ref;
        d.adc.bias_v = self.bias;
        d.adc.rate_hz = self.rate;
        d.pulse.change_ua = self.pulse_ua;
        d.pulse.dc_ua = self.dc_ua;
        d.rails.low_v = self.rails.map(|r| r.0);
        d.rails.high_v = self.rails.map(|r| r.1);
        Ok(d)
    }

    /// Read the file (if any), lay the options over it, build the report,
    /// write the plot (unless `--no-plot`) and print to `out`.
    pub fn run(&self, out: &mut dyn Write) -> Result<(), Failure> {
        let base = match &self.circuit {
            Some(path) => Draft::load(path).map_err(Failure::refused)?,
            None => Draft::default(),
        };
        let from_file = self.circuit.is_some();
        let mut merged = base.overlaid(self.draft()?);
        // The detector's reference and rails lay over whichever detector
        // the file or the options gave.
        if let Some(d) = merged.detector.as_mut() {
            d.reference_v = self.tia_ref.or(d.reference_v);
            d.rails = self
                .detector_rails
                .map(|(l, h)| RailsPair(l, h))
                .or(d.rails);
        }
        let circuit = merged.resolve().map_err(|e| match e {
            // Incomplete or inconsistent: the file's fault if there is one.
            FrontendError::Missing { .. }
            | FrontendError::Invalid { .. }
            | FrontendError::Stage { .. }
            | FrontendError::OutOfBounds { .. }
            | FrontendError::Rate { .. }
                if !from_file =>
            {
                Failure::usage(e)
            }
            other => Failure::refused(other),
        })?;
        let mut report = FrontendReport::build(&circuit).map_err(Failure::refused)?;
        if !self.no_plot {
            let inputs: Vec<PathBuf> = self.circuit.iter().cloned().collect();
            plethwire::output_guard::check_outputs(
                std::slice::from_ref(&self.plot),
                &inputs,
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
