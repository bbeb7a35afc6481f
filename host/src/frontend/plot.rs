//! The Bode plot as SVG: gain against mid-band and phase, of the analog
//! chain alone and with the digital band-pass after it, on one logarithmic
//! frequency axis with the heart band shaded, the legend above the panels
//! and the report's findings below them. A gain below the axis is drawn as
//! leaving it, not along the floor. The phase is the one
//! `phase::phase_track` gives, which the response table shows too. Drawn
//! with the host's plot toolkit ([`crate::plot`]), so it looks like
//! `plethwire filter`'s plot.

use plotters::prelude::*;
use std::path::Path;

use super::band::ALLOWED_LOSS_DB;
use super::findings::Level as FindingLevel;
use super::quantity::sig3;
use super::report::FrontendReport;
use crate::plot::legend::{legend_height, remarks_height};
use crate::plot::theme::{BAND, BOARD, DESIGN, WIDTH};
use crate::plot::{
    band_entry, clip, draw_clipped, legend_strip, log_frequencies, range_of, remarks_strip, rgb,
    sheet_panel, svg, titled, write_svg_file, Area, Drawn, Entry, Level, PlotError, Remark, Swatch,
};

pub use super::phase::PLOT_RANGE_HZ;
use super::phase::POINTS;
/// The gain axis's lower end; a curve below it is drawn as leaving it.
const GAIN_FLOOR_DB: f64 = -60.0;
const GAIN_CEILING_DB: f64 = 3.0;
/// Height of the two panels, px; the title, legend and findings add theirs.
const PANELS_HEIGHT: u32 = 720;
const TITLE_CHARS_PER_LINE: usize = 90;

type Curve = Vec<(f64, f64)>;

struct Curves {
    analog: Curve,
    combined: Curve,
}

/// Gain and phase curves of the analog chain and of it with the digital
/// filter (the latter only below Nyquist).
fn curves(r: &FrontendReport, freqs: &[f64]) -> (Curves, Curves) {
    let chain = &r.chain;
    let top = r.digital.rate_hz / 2.0 * (1.0 - 1e-4);
    let below: Vec<f64> = freqs.iter().copied().filter(|&f| f < top).collect();
    let digital_db = |f: f64| {
        plethwire_dsp::response::response(r.digital.design.sections(), f, r.digital.rate_hz)
            .magnitude_db
    };
    let gain = Curves {
        analog: freqs.iter().map(|&f| (f, chain.relative_db(f))).collect(),
        combined: below
            .iter()
            .map(|&f| (f, chain.relative_db(f) + digital_db(f)))
            .collect(),
    };
    let track = super::phase::phase_track(chain, &r.digital, freqs);
    let phase = Curves {
        analog: freqs.iter().zip(&track).map(|(&f, p)| (f, p.0)).collect(),
        combined: freqs
            .iter()
            .zip(&track)
            .filter_map(|(&f, p)| p.1.map(|c| (f, c)))
            .collect(),
    };
    (gain, phase)
}

/// The report's findings as the figure shows them, in the report's order
/// (errors, warnings, notes), each with the node it is about.
fn remarks(r: &FrontendReport) -> Vec<Remark> {
    r.findings
        .iter()
        .map(|f| Remark {
            level: match f.level {
                FindingLevel::Error => Level::Error,
                FindingLevel::Warning => Level::Warning,
                FindingLevel::Note => Level::Note,
            },
            text: format!("{}: {}", f.node, f.message),
        })
        .collect()
}

/// The legend above the panels; the mark of a curve leaving the axis is
/// explained only when one does.
fn legend(combined_label: &str, gain: &Curves) -> Vec<Entry> {
    let mut entries = vec![
        band_entry(),
        Entry::new(
            Swatch::Dashed(BAND, 1),
            "3 dB below mid-band: the most the band may lose",
        ),
        Entry::new(Swatch::Line(DESIGN, 2), "analog chain"),
        Entry::new(Swatch::Line(BOARD, 2), combined_label),
    ];
    let y = (GAIN_FLOOR_DB, GAIN_CEILING_DB);
    if clip(&gain.analog, y).leaves() || clip(&gain.combined, y).leaves() {
        entries.push(Entry::new(
            Swatch::Leaves(BOARD),
            "the curve leaves the axis here (continues below it)",
        ));
    }
    entries
}

struct PanelSpec<'s> {
    title: &'s str,
    unit: &'s str,
    y: (f64, f64),
    /// Draw the −3 dB line (the gain panel).
    gain: bool,
}

fn draw_panel(area: &Area<'_>, marks: &[f64], spec: PanelSpec<'_>, c: Curves) -> Drawn {
    let x = PLOT_RANGE_HZ;
    let mut chart = sheet_panel(area, spec.title, spec.unit, (x, spec.y), marks)?;
    if spec.gain {
        chart.draw_series(DashedLineSeries::new(
            [(x.0, -ALLOWED_LOSS_DB), (x.1, -ALLOWED_LOSS_DB)],
            6,
            4,
            rgb(BAND).stroke_width(1),
        ))?;
    }
    let analog = (rgb(DESIGN).stroke_width(2), DESIGN);
    draw_clipped(&mut chart, &c.analog, spec.y, analog, None)?;
    let combined = (rgb(BOARD).stroke_width(2), BOARD);
    draw_clipped(&mut chart, &c.combined, spec.y, combined, None)?;
    Ok(())
}

/// The report's Bode plot as SVG text.
pub fn render_svg(r: &FrontendReport) -> Result<String, PlotError> {
    let poles = r.chain.transfer.poles_hz();
    let freqs = log_frequencies(PLOT_RANGE_HZ.0, PLOT_RANGE_HZ.1, POINTS, &poles);
    let (gain, phase) = curves(r, &freqs);
    let phase_y = range_of(
        phase.analog.iter().chain(&phase.combined).map(|p| p.1),
        0.06,
        (-1.0, 1.0),
    );
    // Corners of the chain and, where it falls on the axis, Nyquist.
    let mut marks = poles;
    marks.push(r.digital.rate_hz / 2.0);
    let title = format!(
        "plethwire frontend: {}: mid-band {} V/µA; digital band-pass {}-{} Hz at {} Hz",
        r.title,
        sig3(r.midband_v_per_ua),
        r.digital.low_hz,
        r.digital.high_hz,
        r.digital.rate_hz
    );
    let combined_label = format!(
        "analog + digital band-pass ({} Hz sampling)",
        r.digital.rate_hz
    );
    let specs = [
        PanelSpec {
            title: "gain against mid-band",
            unit: "gain (dB)",
            y: (GAIN_FLOOR_DB, GAIN_CEILING_DB),
            gain: true,
        },
        PanelSpec {
            title: "phase",
            unit: "phase (degrees)",
            y: phase_y,
            gain: false,
        },
    ];
    let entries = legend(&combined_label, &gain);
    let findings = remarks(r);
    let title_h = 25 * crate::plot::wrap_words(&title, TITLE_CHARS_PER_LINE).len() as u32;
    let height =
        title_h + legend_height(&entries, WIDTH) + PANELS_HEIGHT + remarks_height(&findings, WIDTH);
    svg((WIDTH, height), |root| {
        let body = titled(root, &title, TITLE_CHARS_PER_LINE)?;
        let body = legend_strip(&body, &entries)?;
        let body = remarks_strip(&body, &findings)?;
        let panels = body.split_evenly((2, 1));
        for ((area, spec), c) in panels.iter().zip(specs).zip([gain, phase]) {
            draw_panel(area, &marks, spec, c)?;
        }
        Ok(())
    })
}

/// Draw the plot and write it to `path`.
pub fn write_svg(report: &FrontendReport, path: &Path) -> Result<(), PlotError> {
    write_svg_file(path, render_svg(report))
}

#[cfg(test)]
mod tests;
