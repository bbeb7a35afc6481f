//! The Bode plot as SVG: gain against mid-band and phase, of the analog
//! chain alone and with the digital band-pass after it, on one logarithmic
//! frequency axis with the heart band shaded. Drawn with the host's plot
//! toolkit ([`crate::plot`]), so it looks like `plethwire filter`'s plot.

use plotters::prelude::*;
use std::path::Path;

use super::band::ALLOWED_LOSS_DB;
use super::quantity::sig3;
use super::report::FrontendReport;
use crate::plot::theme::{BAND, BOARD, DESIGN, WIDTH};
use crate::plot::{
    draw_legend, legend_line, log_frequencies, range_of, rgb, sheet_panel, svg, titled,
    unwrapped_phase_deg, write_svg_file, Area, Drawn, PlotError,
};

/// The plot's frequency axis, Hz.
pub const PLOT_RANGE_HZ: (f64, f64) = (0.05, 50.0);
const POINTS: usize = 600;
/// Gains below this are drawn at it.
const GAIN_FLOOR_DB: f64 = -60.0;
const GAIN_CEILING_DB: f64 = 3.0;
const HEIGHT: u32 = 720;
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
    let clamp = |db: f64| db.clamp(GAIN_FLOOR_DB, GAIN_CEILING_DB);
    let top = r.digital.rate_hz / 2.0 * (1.0 - 1e-4);
    let below: Vec<f64> = freqs.iter().copied().filter(|&f| f < top).collect();
    let digital: Vec<_> = below
        .iter()
        .map(|&f| {
            plethwire_dsp::response::response(r.digital.design.sections(), f, r.digital.rate_hz)
        })
        .collect();
    let digital_phase = unwrapped_phase_deg(&digital);
    let gain = Curves {
        analog: freqs
            .iter()
            .map(|&f| (f, clamp(chain.relative_db(f))))
            .collect(),
        combined: below
            .iter()
            .zip(&digital)
            .map(|(&f, d)| (f, clamp(chain.relative_db(f) + d.magnitude_db)))
            .collect(),
    };
    let phase = Curves {
        analog: freqs
            .iter()
            .map(|&f| (f, chain.transfer.phase_deg(f)))
            .collect(),
        combined: below
            .iter()
            .zip(&digital_phase)
            .map(|(&f, p)| (f, chain.transfer.phase_deg(f) + p))
            .collect(),
    };
    (gain, phase)
}

struct PanelSpec<'s> {
    title: &'s str,
    unit: &'s str,
    y: (f64, f64),
    /// Draw the −3 dB line and the legend (the gain panel).
    gain: bool,
    combined_label: &'s str,
}

fn draw_panel(area: &Area<'_>, marks: &[f64], spec: PanelSpec<'_>, c: Curves) -> Drawn {
    let x = PLOT_RANGE_HZ;
    let mut chart = sheet_panel(area, spec.title, spec.unit, (x, spec.y), marks)?;
    if spec.gain {
        let limit = rgb(BAND).stroke_width(1);
        chart
            .draw_series(DashedLineSeries::new(
                [(x.0, -ALLOWED_LOSS_DB), (x.1, -ALLOWED_LOSS_DB)],
                6,
                4,
                limit,
            ))?
            .label("3 dB below mid-band: the most the band may lose")
            .legend(legend_line(limit));
    }
    let analog = rgb(DESIGN).stroke_width(2);
    chart
        .draw_series(LineSeries::new(c.analog, analog))?
        .label("analog chain")
        .legend(legend_line(analog));
    let combined = rgb(BOARD).stroke_width(2);
    chart
        .draw_series(LineSeries::new(c.combined, combined))?
        .label(spec.combined_label)
        .legend(legend_line(combined));
    if spec.gain {
        draw_legend(&mut chart)?;
    }
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
            combined_label: &combined_label,
        },
        PanelSpec {
            title: "phase",
            unit: "phase (degrees)",
            y: phase_y,
            gain: false,
            combined_label: &combined_label,
        },
    ];
    svg((WIDTH, HEIGHT), |root| {
        let body = titled(root, &title, TITLE_CHARS_PER_LINE)?;
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
