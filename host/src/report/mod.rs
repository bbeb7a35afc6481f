//! A recording's replay as one self-contained HTML page: `plethwire
//! report`'s engine, free of command-line concerns, for any caller that
//! has samples and the pipeline's output.
//!
//! The page holds a header of key figures, a signal excerpt with the
//! detected beats, the heart-rate trend, the interval tachogram, the
//! Poincaré plot with SD1/SD2, the quality timeline, the HRV figures, the
//! band-pass's response at the record's rate, the score against a
//! reference when there is one, and the usual cautions. Figures are inline
//! SVG, the style sheet inline, nothing is fetched and no script runs; the
//! markup also parses as XML. Every number is marked
//! (`<span data-figure="sdnn_ms" data-value="…">`) and equals the field of
//! the same name in [`Figures`], which `--json` prints.
//!
//! Long traces are thinned for drawing (see [`thin`]): per screen column
//! the lowest and highest sample, and of overlapping markers one.
//!
//! ```
//! use plethwire::replay::replay;
//! use plethwire::report::{build, ReportInput};
//! use plethwire_synth::{generate, SynthOptions};
//! use plethwire_dsp::pipeline::Config;
//! let rec = generate(&SynthOptions { duration_s: 30.0, ..SynthOptions::default() }).unwrap();
//! let samples: Vec<f64> = rec.samples.iter().map(|&x| f64::from(x)).collect();
//! let config = Config::new(100.0);
//! let run = replay(&samples, config).unwrap();
//! let page = build(&ReportInput::new("demo", &samples, config, &run)).unwrap();
//! assert!(page.contains(r#"data-figure="sdnn_ms""#));
//! ```

mod band;
mod charts;
mod excerpt;
mod figures;
mod html;
mod page;
mod poincare;
mod reference;
mod sections;
pub mod thin;
mod timeline;
mod traces;
mod views;

pub use band::{BandPass, BAND_ORDER};
pub use excerpt::{choose as choose_excerpt, Excerpt, DEFAULT_EXCERPT_S};
pub use figures::{ExcerptFigures, Figures, FilterFigures, HrvFigures, PoincareFigures};
pub use html::escape;
pub use poincare::{nn_pairs, poincare, PoincareStats};
pub use reference::{score, Reference, ScoreFigures};
pub use timeline::{spans as state_spans, state_name, StateSeconds, StateSpan};
pub use traces::{ExcerptTraces, TraceBuilder, TRACE_COLUMNS};

use crate::plot::PlotError;
use crate::replay::Replay;
use plethwire_dsp::pipeline::Config;
use std::path::{Path, PathBuf};

/// What a report is made from.
#[derive(Clone, Copy, Debug)]
pub struct ReportInput<'a> {
    /// Record name, shown as the title.
    pub name: &'a str,
    /// Signal name (e.g. `PLETH`).
    pub signal: &'a str,
    /// The signal's units, when known.
    pub units: Option<&'a str>,
    /// The samples the pipeline was fed; may be empty when `traces` are
    /// given.
    pub samples: &'a [f64],
    /// The signal excerpt's traces, made while the recording streamed
    /// ([`TraceBuilder`]) for the excerpt [`excerpt_for`] gives; `None`:
    /// made from `samples`.
    pub traces: Option<&'a ExcerptTraces>,
    /// The pipeline's configuration (rate, detector, band).
    pub config: Config,
    /// What the pipeline said about `samples`.
    pub replay: &'a Replay,
    /// Reference beats and heart rate to score against, if any.
    pub reference: Option<&'a Reference>,
    /// The stretch the signal plot shows; `None` chooses one
    /// ([`choose_excerpt`]).
    pub excerpt: Option<Excerpt>,
}

impl<'a> ReportInput<'a> {
    /// An input with signal name `signal`, no units, no reference and the
    /// excerpt chosen automatically; change the fields as needed.
    pub fn new(name: &'a str, samples: &'a [f64], config: Config, replay: &'a Replay) -> Self {
        Self {
            name,
            signal: "signal",
            units: None,
            samples,
            traces: None,
            config,
            replay,
            reference: None,
            excerpt: None,
        }
    }
}

/// Why the HTML page of a replay could not be made; one line.
#[derive(Debug, thiserror::Error)]
pub enum PageError {
    /// The samples, configuration and replay do not belong together.
    #[error("{0}")]
    Mismatch(String),
    /// The excerpt asked for lies outside the recording.
    #[error("excerpt {}:{} lies outside the recording (0 to {duration_s:.1} s)", asked.start_s, asked.length_s)]
    Excerpt {
        /// What was asked for.
        asked: Excerpt,
        /// The recording's length, s.
        duration_s: f64,
    },
    /// The band-pass could not be designed at this rate.
    #[error("cannot design the band-pass: {0}")]
    Design(#[source] plethwire_dsp::DesignError),
    /// A figure could not be drawn.
    #[error("cannot draw a figure: {0}")]
    Draw(#[source] PlotError),
    /// The page could not be written.
    #[error("{}: cannot write the report: {source}", path.display())]
    Write {
        /// Where.
        path: PathBuf,
        /// Why.
        source: std::io::Error,
    },
}

/// Everything checked and decided before drawing.
struct Prepared {
    excerpt: Excerpt,
    band: BandPass,
    figures: Figures,
}

fn prepare(input: &ReportInput<'_>) -> Result<Prepared, PageError> {
    let run = input.replay;
    if input.sample_count() != run.samples {
        return Err(PageError::Mismatch(format!(
            "{} samples given but the replay saw {}",
            input.sample_count(),
            run.samples
        )));
    }
    if (f64::from(input.config.sample_rate_hz) - run.fs).abs() > 1e-6 * run.fs {
        return Err(PageError::Mismatch(format!(
            "configuration at {} Hz but the replay ran at {} Hz",
            input.config.sample_rate_hz, run.fs
        )));
    }
    let excerpt = excerpt_for(input.excerpt, run)?;
    if let Some(t) = input.traces.filter(|t| t.excerpt != excerpt) {
        return Err(PageError::Mismatch(format!(
            "traces made for the excerpt {:?}, the page shows {excerpt:?}",
            t.excerpt
        )));
    }
    let band = BandPass::new(&input.config).map_err(PageError::Design)?;
    let figures = figures::compute(input, excerpt, &band);
    Ok(Prepared {
        excerpt,
        band,
        figures,
    })
}

/// The stretch the signal plot of `run` shows: `asked` cut to the
/// recording, else the one [`choose_excerpt`] picks.
pub fn excerpt_for(asked: Option<Excerpt>, run: &Replay) -> Result<Excerpt, PageError> {
    let duration_s = run.samples as f64 / run.fs;
    match asked {
        Some(asked) => asked
            .within(duration_s)
            .ok_or(PageError::Excerpt { asked, duration_s }),
        None => Ok(excerpt::choose(run)),
    }
}

impl ReportInput<'_> {
    /// Samples in the recording: the traces' count when given, else
    /// those of `samples`.
    pub fn sample_count(&self) -> u64 {
        self.traces.map_or(self.samples.len() as u64, |t| t.samples)
    }
}

/// The numbers the page shows, without drawing it.
pub fn figures(input: &ReportInput<'_>) -> Result<Figures, PageError> {
    prepare(input).map(|p| p.figures)
}

/// The page and its numbers.
pub fn render(input: &ReportInput<'_>) -> Result<(String, Figures), PageError> {
    let p = prepare(input)?;
    let page = page::page(input, &p.figures, p.excerpt, &p.band).map_err(PageError::Draw)?;
    Ok((page, p.figures))
}

/// The page.
pub fn build(input: &ReportInput<'_>) -> Result<String, PageError> {
    render(input).map(|r| r.0)
}

/// Write the page to `path`; returns its numbers.
pub fn write(path: &Path, input: &ReportInput<'_>) -> Result<Figures, PageError> {
    let (page, figures) = render(input)?;
    std::fs::write(path, page).map_err(|source| PageError::Write {
        path: path.to_owned(),
        source,
    })?;
    Ok(figures)
}
