//! The one plot toolkit of the host: palette and fonts ([`theme`]), axes
//! and tick labels ([`axis`]), frequency sweeps ([`sweep`]) and
//! frequency-response panels ([`panel`]), with SVG output and one error
//! type. `plethwire filter`'s response plot, `plethwire frontend`'s Bode
//! plot and the report's charts are all drawn with it, so they look alike
//! and a colour or a label means the same thing on each.

pub mod axis;
pub mod clip;
pub mod legend;
pub mod panel;
#[cfg(test)]
pub(crate) mod svg_check;
pub mod sweep;
pub mod theme;

pub use axis::{fixed, hz_label, range_of, ticks, units_kept, wrap_words};
pub use clip::{clip, draw_clipped, Clipped, Edge};
pub use legend::{band_entry, legend_strip, remarks_strip, Entry, Level, Remark, Swatch};
pub use panel::{
    draw_band_and_marks, draw_marks, frequency_chart, sheet_panel, Area, Frame, Layout,
    LogPanelChart, HEART_BAND_HZ,
};
pub use sweep::{
    axis_range_hz, log_frequencies, phase_near_deg, phase_track_deg, unwrapped_phase_deg, wrap_deg,
    Sweep, SWEEP_POINTS,
};
pub use theme::{css, mesh_colours, rgb, Rgb};

use plotters::prelude::*;
use std::path::{Path, PathBuf};

/// Why plotters could not draw (its backend's error, boxed).
pub type DrawFailure = Box<dyn std::error::Error + Send + Sync>;

/// What a drawing step gives back.
pub type Drawn = Result<(), DrawFailure>;

/// Why a plot could not be made.
#[derive(Debug, thiserror::Error)]
pub enum PlotError {
    /// Drawing failed.
    #[error("{source}")]
    Draw {
        /// What plotters said.
        source: DrawFailure,
    },
    /// The plot could not be drawn for, or written to, a file.
    #[error("cannot write the plot to {}: {source}", path.display())]
    File {
        /// Where it was to go.
        path: PathBuf,
        /// What went wrong: a [`PlotError::Draw`] or the file system's
        /// error.
        source: DrawFailure,
    },
}

impl PlotError {
    /// A drawing failure.
    pub fn draw(source: impl Into<DrawFailure>) -> Self {
        Self::Draw {
            source: source.into(),
        }
    }
}

/// Draw an SVG of `size` pixels on white paper with `draw`, and return its
/// text.
pub fn svg(size: (u32, u32), draw: impl FnOnce(&Area<'_>) -> Drawn) -> Result<String, PlotError> {
    let mut text = String::new();
    {
        let root = SVGBackend::with_string(&mut text, size).into_drawing_area();
        root.fill(&rgb(theme::PAPER)).map_err(PlotError::draw)?;
        draw(&root).map_err(|source| PlotError::Draw { source })?;
        root.present().map_err(PlotError::draw)?;
    }
    Ok(text)
}

/// Write the SVG `drawn` to `path`; a drawing failure is reported against
/// the path too.
pub fn write_svg_file(path: &Path, drawn: Result<String, PlotError>) -> Result<(), PlotError> {
    let file = |source: DrawFailure| PlotError::File {
        path: path.to_owned(),
        source,
    };
    let text = drawn.map_err(|e| match e {
        PlotError::Draw { source } => file(source),
        other => file(Box::new(other)),
    })?;
    std::fs::write(path, text).map_err(|e| file(Box::new(e)))
}

/// `area` with `title` above it, wrapped at `chars_per_line` characters;
/// returns the area left below the title.
pub fn titled<'a>(
    area: &Area<'a>,
    title: &str,
    chars_per_line: usize,
) -> Result<Area<'a>, DrawFailure> {
    let mut body = area.clone();
    for line in wrap_words(title, chars_per_line) {
        body = body.titled(&line, theme::TITLE_FONT)?;
    }
    Ok(body)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_file_error_names_the_path_and_keeps_its_source() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("missing").join("plot.svg");
        let err = write_svg_file(&path, Ok(String::from("<svg/>"))).unwrap_err();
        assert!(
            err.to_string().starts_with("cannot write the plot to "),
            "{err}"
        );
        let source = std::error::Error::source(&err).expect("a source");
        assert!(source.downcast_ref::<std::io::Error>().is_some());
    }

    #[test]
    fn an_svg_is_drawn_on_paper() {
        let text = svg((40, 30), |_| Ok(())).unwrap();
        let doc = roxmltree::Document::parse(&text).unwrap();
        assert_eq!(doc.root_element().tag_name().name(), "svg");
        assert!(text.contains("#FFFFFF"), "{text}");
    }
}
