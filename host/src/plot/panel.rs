//! Frequency-response panels: a logarithmic frequency axis against a
//! linear one, the heart band and marked frequencies, the same on every
//! Bode and response plot (their legend goes beside them, see
//! [`super::legend`]).

use plotters::coord::types::RangedCoordf64;
use plotters::coord::Shift;
use plotters::prelude::*;

use super::axis::{hz_label, ticks};
use super::theme::{mesh_colours, rgb, BAND, CAPTION_FONT, FONT, GUIDE};
use super::DrawFailure;

/// Heart rates of 30 to 220 beats per minute, Hz.
pub const HEART_BAND_HZ: (f64, f64) = (0.5, 3.7);

/// A drawing area of an SVG figure.
pub type Area<'a> = DrawingArea<SVGBackend<'a>, Shift>;

/// A response panel: log-frequency x axis, linear y.
pub type LogPanelChart<'a, 'b> =
    ChartContext<'a, SVGBackend<'b>, Cartesian2d<LogCoord<f64>, RangedCoordf64>>;

/// Where a panel goes, which sets its margins and fonts.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Layout {
    /// A standalone SVG file (`plethwire filter`, `plethwire frontend`):
    /// roomier margins, plotters' label font.
    Sheet,
    /// A figure inlined in the report's page: tighter margins, the page's
    /// label font.
    Page,
}

/// What a frequency panel shows on its axes.
#[derive(Clone, Copy, Debug)]
pub struct Frame<'s> {
    /// The caption above the panel, if any.
    pub caption: Option<&'s str>,
    /// The y axis's description, with its unit.
    pub unit: &'s str,
    /// The frequency range, Hz.
    pub x: (f64, f64),
    /// The y range.
    pub y: (f64, f64),
    /// Margins and fonts.
    pub layout: Layout,
}

/// A panel on `area` with its mesh drawn: frequency in Hz across,
/// logarithmic, labelled with [`hz_label`]; `frame.y` up, labelled with
/// [`ticks`].
pub fn frequency_chart<'a, 'b>(
    area: &'a Area<'b>,
    frame: &Frame<'_>,
) -> Result<LogPanelChart<'a, 'b>, DrawFailure> {
    let page = frame.layout == Layout::Page;
    let (x, y) = (frame.x, frame.y);
    let mut builder = ChartBuilder::on(area);
    builder
        .margin(if page { 10 } else { 12 })
        .x_label_area_size(if page { 32 } else { 34 })
        .y_label_area_size(64);
    if let Some(caption) = frame.caption {
        builder.caption(caption, CAPTION_FONT);
    }
    let mut chart = builder.build_cartesian_2d((x.0..x.1).log_scale(), y.0..y.1)?;
    let (bold, light) = mesh_colours();
    let y_ticks = ticks(y.1 - y.0);
    let mut mesh = chart.configure_mesh();
    mesh.x_desc("frequency (Hz)")
        .y_desc(frame.unit)
        .x_label_formatter(&hz_label)
        .y_label_formatter(&y_ticks)
        .bold_line_style(bold)
        .light_line_style(light);
    if page {
        mesh.label_style(FONT);
    }
    mesh.draw()?;
    Ok(chart)
}

/// A panel of a standalone SVG ([`Layout::Sheet`]) captioned `caption`,
/// with the heart band shaded and `marks` drawn: what the filter and
/// front-end plots draw their curves on.
pub fn sheet_panel<'a, 'b>(
    area: &'a Area<'b>,
    caption: &str,
    unit: &str,
    (x, y): ((f64, f64), (f64, f64)),
    marks: &[f64],
) -> Result<LogPanelChart<'a, 'b>, DrawFailure> {
    let frame = Frame {
        caption: Some(caption),
        unit,
        x,
        y,
        layout: Layout::Sheet,
    };
    let mut chart = frequency_chart(area, &frame)?;
    draw_band_and_marks(&mut chart, x, y, marks)?;
    Ok(chart)
}

/// Shade the heart band (clipped to the x range `x`; its legend entry is
/// [`super::legend::band_entry`]) and draw a dashed line at each of `marks` inside it, over the y range
/// `y`.
pub fn draw_band_and_marks(
    chart: &mut LogPanelChart<'_, '_>,
    x: (f64, f64),
    y: (f64, f64),
    marks: &[f64],
) -> Result<(), DrawFailure> {
    let (band_lo, band_hi) = (HEART_BAND_HZ.0.max(x.0), HEART_BAND_HZ.1.min(x.1));
    if band_lo < band_hi {
        chart.draw_series(std::iter::once(Rectangle::new(
            [(band_lo, y.0), (band_hi, y.1)],
            rgb(BAND).mix(0.13).filled(),
        )))?;
    }
    draw_marks(chart, x, y, marks, 3)
}

/// A dashed vertical guide at each of `marks` inside `x`, dashes `dash`
/// px long.
pub fn draw_marks(
    chart: &mut LogPanelChart<'_, '_>,
    x: (f64, f64),
    y: (f64, f64),
    marks: &[f64],
    dash: u32,
) -> Result<(), DrawFailure> {
    for &f in marks.iter().filter(|&&f| f > x.0 && f < x.1) {
        chart.draw_series(DashedLineSeries::new(
            [(f, y.0), (f, y.1)],
            dash,
            4,
            rgb(GUIDE).stroke_width(1),
        ))?;
    }
    Ok(())
}
