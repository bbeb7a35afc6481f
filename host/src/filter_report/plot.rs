//! The response as an SVG: magnitude, phase and group delay stacked on one
//! logarithmic frequency axis, design and board cascade overlaid, with the
//! heart band shaded and the legend above the panels. Where a gain falls
//! below the axis the curve is broken there and marked, not drawn along
//! the floor; the report's warnings are drawn below the panels. Drawn with
//! the host's plot toolkit ([`crate::plot`]).

use plethwire_dsp::filter::Biquad;
use plethwire_dsp::response::Response;
use plotters::prelude::*;
use std::path::Path;

use super::report::{on_a_zero, FilterReport};
use crate::plot::legend::remarks_height;
use crate::plot::theme::{BOARD, DESIGN, WIDTH};
use crate::plot::{
    axis_range_hz, band_entry, clip, draw_clipped, legend_strip, phase_near_deg, range_of,
    remarks_strip, rgb, sheet_panel, svg, titled, unwrapped_phase_deg, write_svg_file, Area, Drawn,
    Entry, Level, PlotError, Remark, Swatch, Sweep,
};

/// The gain axis's lower end, so deep stop bands stay readable; a curve
/// below it is drawn as leaving the axis.
const GAIN_FLOOR_DB: f64 = -100.0;
const GAIN_CEILING_DB: f64 = 5.0;
/// About what fits across the plot at the title's font size.
const TITLE_CHARS_PER_LINE: usize = 90;
const HEIGHT: u32 = 1000;

type Curve = Vec<(f64, f64)>;

struct Curves<'c> {
    title: &'c str,
    unit: &'c str,
    design: Curve,
    board: Curve,
    y: (f64, f64),
}

impl Curves<'_> {
    fn leaves(&self) -> bool {
        clip(&self.design, self.y).leaves() || clip(&self.board, self.y).leaves()
    }
}

fn draw_panel(area: &Area<'_>, x: (f64, f64), corners: &[f64], c: Curves<'_>) -> Drawn {
    let mut chart = sheet_panel(area, c.title, c.unit, (x, c.y), corners)?;
    let design = (rgb(DESIGN).stroke_width(2), DESIGN);
    draw_clipped(&mut chart, &c.design, c.y, design, None)?;
    let board = (rgb(BOARD).stroke_width(1), BOARD);
    draw_clipped(&mut chart, &c.board, c.y, board, Some((7, 4)))?;
    Ok(())
}

/// The legend above the panels; the mark of a curve leaving the axis is
/// explained only when a curve does.
fn legend(panels: &[Curves<'_>]) -> Vec<Entry> {
    let mut entries = vec![
        band_entry(),
        Entry::new(Swatch::Line(DESIGN, 2), "design (f64)"),
        Entry::new(Swatch::Dashed(BOARD, 1), "board (Delta, f32)"),
    ];
    if panels.iter().any(Curves::leaves) {
        entries.push(Entry::new(
            Swatch::Leaves(DESIGN),
            "the curve leaves the axis here (continues beyond it)",
        ));
    }
    entries
}

/// Gain, phase and group delay of design and board along the sweep, as
/// (frequency, value) curves. Phase and delay are undefined on a zero (see
/// [`on_a_zero`]); those points are left out.
fn curves(report: &FilterReport, sweep: &Sweep) -> [Curves<'static>; 3] {
    let rate = report.spec.sample_rate_hz;
    let f = &sweep.frequencies_hz;
    let pair = |ys: Vec<f64>| -> Curve {
        f.iter()
            .copied()
            .zip(ys)
            .filter(|(_, y)| y.is_finite())
            .collect()
    };
    // A zero of the response (−∞ dB) stays in, to be drawn as leaving.
    let gain = |r: &[Response]| -> Curve {
        f.iter()
            .zip(r)
            .map(|(&hz, p)| (hz, p.magnitude_db))
            .filter(|(_, y)| !y.is_nan())
            .collect()
    };
    let defined = |sections: &[Biquad<f64>], ys: Vec<f64>| -> Curve {
        pair(
            f.iter()
                .zip(ys)
                .map(|(&hz, y)| {
                    if on_a_zero(sections, hz, rate) {
                        f64::NAN
                    } else {
                        y
                    }
                })
                .collect(),
        )
    };
    let delay_ms = |r: &[Response]| r.iter().map(|p| p.group_delay_s * 1000.0).collect();
    let (design, board) = (report.design.sections(), &report.board_sections[..]);
    let design_phase = unwrapped_phase_deg(&sweep.design);
    let board_phase = phase_near_deg(&sweep.board, &design_phase);
    let (phase_d, phase_b) = (defined(design, design_phase), defined(board, board_phase));
    let (delay_d, delay_b) = (
        defined(design, delay_ms(&sweep.design)),
        defined(board, delay_ms(&sweep.board)),
    );
    let ys = |a: &Curve, b: &Curve| a.iter().chain(b).map(|p| p.1).collect::<Vec<_>>();
    let phase_y = range_of(ys(&phase_d, &phase_b).into_iter(), 0.06, (-1.0, 1.0));
    let delay_y = range_of(
        ys(&delay_d, &delay_b).into_iter().chain([0.0]),
        0.06,
        (-1.0, 1.0),
    );
    [
        Curves {
            title: "magnitude",
            unit: "gain (dB)",
            design: gain(&sweep.design),
            board: gain(&sweep.board),
            y: (GAIN_FLOOR_DB, GAIN_CEILING_DB),
        },
        Curves {
            title: "phase (unwrapped)",
            unit: "phase (degrees)",
            design: phase_d,
            board: phase_b,
            y: phase_y,
        },
        Curves {
            title: "group delay",
            unit: "delay (ms)",
            design: delay_d,
            board: delay_b,
            y: delay_y,
        },
    ]
}

/// The report's response plot as SVG text.
pub fn render_svg(report: &FilterReport) -> Result<String, PlotError> {
    let rate = report.spec.sample_rate_hz;
    let x = axis_range_hz(rate);
    let corners: Vec<f64> = report
        .spec
        .stages
        .iter()
        .flat_map(|s| s.corners_hz())
        .collect();
    let sweep = Sweep::new(
        report.design.sections(),
        &report.board_sections,
        rate,
        &corners,
    );
    let panels = curves(report, &sweep);
    let title = format!(
        "plethwire filter: {} at {rate} Hz",
        report.spec.describe_stages()
    );
    let entries = legend(&panels);
    // The report's warnings at the figure's foot, below the panels.
    let findings: Vec<Remark> = report
        .warnings
        .iter()
        .map(|w| Remark {
            level: Level::Warning,
            text: w.clone(),
        })
        .collect();
    let height = HEIGHT + remarks_height(&findings, WIDTH);
    svg((WIDTH, height), |root| {
        let body = titled(root, &title, TITLE_CHARS_PER_LINE)?;
        let body = legend_strip(&body, &entries)?;
        let body = remarks_strip(&body, &findings)?;
        for (area, c) in body.split_evenly((3, 1)).iter().zip(panels) {
            draw_panel(area, x, &corners, c)?;
        }
        Ok(())
    })
}

/// Draw the plot and write it to `path`.
pub fn write_svg(report: &FilterReport, path: &Path) -> Result<(), PlotError> {
    write_svg_file(path, render_svg(report))
}

#[cfg(test)]
#[path = "plot_tests.rs"]
mod tests;
