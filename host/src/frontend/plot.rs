//! The Bode plot as SVG: gain against mid-band and phase, of the analog
//! chain alone and with the digital band-pass after it, on one logarithmic
//! frequency axis with the heart band shaded. It looks like `plethwire
//! filter`'s plot and shares its helpers.

use plotters::coord::Shift;
use plotters::prelude::*;
use std::error::Error;
use std::path::Path;

use super::band::ALLOWED_LOSS_DB;
use super::quantity::sig3;
use super::report::FrontendReport;
use super::FrontendError;
use crate::filter_report::{
    draw_band_and_marks, hz_label, padded_range, unwrapped_phase_deg, wrap_words, y_labeller,
    BAND_COLOUR, BOARD_COLOUR, DESIGN_COLOUR,
};

/// The plot's frequency axis, Hz.
pub const PLOT_RANGE_HZ: (f64, f64) = (0.05, 50.0);
const POINTS: usize = 600;
/// Gains below this are drawn at it.
const GAIN_FLOOR_DB: f64 = -60.0;
const GAIN_CEILING_DB: f64 = 3.0;
const WIDTH: u32 = 960;
const HEIGHT: u32 = 720;
const TITLE_CHARS_PER_LINE: usize = 90;

type Panel<'a> = DrawingArea<SVGBackend<'a>, Shift>;
type Curve = Vec<(f64, f64)>;

struct Curves {
    analog: Curve,
    combined: Curve,
}

/// Log-spaced frequencies over the axis, plus the corners inside it.
fn sweep(corners: &[f64]) -> Vec<f64> {
    let (lo, hi) = PLOT_RANGE_HZ;
    let step = (hi / lo).ln() / (POINTS - 1) as f64;
    let mut f: Vec<f64> = (0..POINTS)
        .map(|i| lo * (step * i as f64).exp())
        .chain(corners.iter().copied().filter(|&c| c > lo && c < hi))
        .collect();
    f.sort_by(f64::total_cmp);
    f.dedup();
    f
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

fn draw_panel(
    area: &Panel<'_>,
    marks: &[f64],
    spec: PanelSpec<'_>,
    c: Curves,
) -> Result<(), Box<dyn Error>> {
    let x = PLOT_RANGE_HZ;
    let mut chart = ChartBuilder::on(area)
        .margin(12)
        .caption(spec.title, ("sans-serif", 17))
        .x_label_area_size(34)
        .y_label_area_size(64)
        .build_cartesian_2d((x.0..x.1).log_scale(), spec.y.0..spec.y.1)?;
    let y_label = y_labeller(spec.y.1 - spec.y.0);
    chart
        .configure_mesh()
        .x_desc("frequency (Hz)")
        .y_desc(spec.unit)
        .x_label_formatter(&hz_label)
        .y_label_formatter(&y_label)
        .bold_line_style(RGBColor(215, 215, 215))
        .light_line_style(RGBColor(246, 246, 246))
        .draw()?;
    draw_band_and_marks(&mut chart, x, spec.y, marks)?;
    if spec.gain {
        chart
            .draw_series(DashedLineSeries::new(
                [(x.0, -ALLOWED_LOSS_DB), (x.1, -ALLOWED_LOSS_DB)],
                6,
                4,
                BAND_COLOUR.stroke_width(1),
            ))?
            .label("3 dB below mid-band: the most the band may lose")
            .legend(|(px, py)| PathElement::new([(px, py), (px + 22, py)], BAND_COLOUR));
    }
    chart
        .draw_series(LineSeries::new(c.analog, DESIGN_COLOUR.stroke_width(2)))?
        .label("analog chain")
        .legend(|(px, py)| {
            PathElement::new([(px, py), (px + 22, py)], DESIGN_COLOUR.stroke_width(2))
        });
    chart
        .draw_series(LineSeries::new(c.combined, BOARD_COLOUR.stroke_width(2)))?
        .label(spec.combined_label)
        .legend(|(px, py)| {
            PathElement::new([(px, py), (px + 22, py)], BOARD_COLOUR.stroke_width(2))
        });
    if spec.gain {
        chart
            .configure_series_labels()
            .position(SeriesLabelPosition::LowerLeft)
            .background_style(WHITE.mix(0.85))
            .border_style(RGBColor(200, 200, 200))
            .draw()?;
    }
    Ok(())
}

fn draw(r: &FrontendReport, target: &mut String) -> Result<(), Box<dyn Error>> {
    let poles = r.chain.transfer.poles_hz();
    let freqs = sweep(&poles);
    let (gain, phase) = curves(r, &freqs);
    let phase_y = padded_range(
        phase.analog.iter().chain(&phase.combined).map(|p| p.1),
        false,
    );
    // Corners of the chain and, where it falls on the axis, Nyquist.
    let mut marks = poles;
    marks.push(r.digital.rate_hz / 2.0);

    let root = SVGBackend::with_string(target, (WIDTH, HEIGHT)).into_drawing_area();
    root.fill(&WHITE)?;
    let title = format!(
        "plethwire frontend: {}: mid-band {} V/µA; digital band-pass {}-{} Hz at {} Hz",
        r.title,
        sig3(r.midband_v_per_ua),
        r.digital.low_hz,
        r.digital.high_hz,
        r.digital.rate_hz
    );
    let mut body = root.clone();
    for line in wrap_words(&title, TITLE_CHARS_PER_LINE) {
        body = body.titled(&line, ("sans-serif", 19))?;
    }
    let combined_label = format!(
        "analog + digital band-pass ({} Hz sampling)",
        r.digital.rate_hz
    );
    let panels = body.split_evenly((2, 1));
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
    for ((area, spec), c) in panels.iter().zip(specs).zip([gain, phase]) {
        draw_panel(area, &marks, spec, c)?;
    }
    root.present()?;
    Ok(())
}

/// The report's Bode plot as SVG text.
pub fn render_svg(report: &FrontendReport) -> Result<String, String> {
    let mut svg = String::new();
    draw(report, &mut svg).map_err(|e| e.to_string())?;
    Ok(svg)
}

/// Draw the plot and write it to `path`.
pub fn write_svg(report: &FrontendReport, path: &Path) -> Result<(), FrontendError> {
    let failed = |reason: String| FrontendError::Plot {
        path: path.display().to_string(),
        reason,
    };
    let svg = render_svg(report).map_err(failed)?;
    std::fs::write(path, svg).map_err(|e| failed(e.to_string()))
}
