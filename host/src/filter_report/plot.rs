//! The response as an SVG: magnitude, phase and group delay stacked on one
//! logarithmic frequency axis, design and board cascade overlaid, with the
//! heart band shaded. Drawn with the host's plot toolkit ([`crate::plot`]).

use plethwire_dsp::filter::Biquad;
use plethwire_dsp::response::Response;
use plotters::prelude::*;
use std::path::Path;

use super::report::{on_a_zero, FilterReport};
use crate::plot::theme::{BOARD, DESIGN, WIDTH};
use crate::plot::{
    axis_range_hz, draw_legend, legend_line, phase_near_deg, range_of, rgb, sheet_panel, svg,
    titled, unwrapped_phase_deg, write_svg_file, Area, Drawn, PlotError, Sweep,
};

/// Gains below this are drawn at it, so deep stop bands stay readable.
const GAIN_FLOOR_DB: f64 = -100.0;
const GAIN_CEILING_DB: f64 = 5.0;
/// About what fits across the plot at the title's font size.
const TITLE_CHARS_PER_LINE: usize = 90;
const HEIGHT: u32 = 960;

type Curve = Vec<(f64, f64)>;

struct Curves<'c> {
    title: &'c str,
    unit: &'c str,
    design: Curve,
    board: Curve,
    y: (f64, f64),
    legend: bool,
}

fn draw_panel(area: &Area<'_>, x: (f64, f64), corners: &[f64], c: Curves<'_>) -> Drawn {
    let mut chart = sheet_panel(area, c.title, c.unit, (x, c.y), corners)?;
    let design = rgb(DESIGN).stroke_width(2);
    chart
        .draw_series(LineSeries::new(c.design, design))?
        .label("design (f64)")
        .legend(legend_line(design));
    let board = rgb(BOARD).stroke_width(1);
    chart
        .draw_series(DashedLineSeries::new(c.board, 7, 4, board))?
        .label("board (Delta, f32)")
        .legend(legend_line(board));
    if c.legend {
        draw_legend(&mut chart)?;
    }
    Ok(())
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
    let gain = |r: &[Response]| {
        pair(
            r.iter()
                .map(|p| p.magnitude_db.clamp(GAIN_FLOOR_DB, GAIN_CEILING_DB))
                .collect(),
        )
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
            legend: true,
        },
        Curves {
            title: "phase (unwrapped)",
            unit: "phase (degrees)",
            design: phase_d,
            board: phase_b,
            y: phase_y,
            legend: false,
        },
        Curves {
            title: "group delay",
            unit: "delay (ms)",
            design: delay_d,
            board: delay_b,
            y: delay_y,
            legend: false,
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
    svg((WIDTH, HEIGHT), |root| {
        let body = titled(root, &title, TITLE_CHARS_PER_LINE)?;
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
