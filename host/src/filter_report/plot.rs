//! The response as an SVG: magnitude, phase and group delay stacked on one
//! logarithmic frequency axis, design and board cascade overlaid, with the
//! heart band shaded.

use plethwire_dsp::filter::Biquad;
use plethwire_dsp::response::{response, Response};
use plotters::coord::Shift;
use plotters::prelude::*;
use std::error::Error;
use std::f64::consts::PI;

use super::{on_a_zero, FilterReport, ReportError};

/// Points in the frequency sweep of a plot.
pub const SWEEP_POINTS: usize = 600;

/// Heart rates of 30 to 220 beats per minute, Hz.
pub(crate) const HEART_BAND_HZ: (f64, f64) = (0.5, 3.7);
/// Gains below this are drawn at it, so deep stop bands stay readable.
const GAIN_FLOOR_DB: f64 = -100.0;
const GAIN_CEILING_DB: f64 = 5.0;
const WIDTH: u32 = 960;
/// About what fits across the plot at the title's font size.
const TITLE_CHARS_PER_LINE: usize = 90;
const HEIGHT: u32 = 960;

pub(crate) const DESIGN_COLOUR: RGBColor = RGBColor(22, 92, 125);
pub(crate) const BOARD_COLOUR: RGBColor = RGBColor(214, 96, 38);
pub(crate) const BAND_COLOUR: RGBColor = RGBColor(232, 70, 95);
pub(crate) const CORNER_COLOUR: RGBColor = RGBColor(150, 150, 150);

/// The response of design and board cascade at log-spaced frequencies.
#[derive(Clone, Debug)]
pub struct Sweep {
    /// Frequencies, Hz, ascending.
    pub frequencies_hz: Vec<f64>,
    /// Response of the `f64` design at each frequency.
    pub design: Vec<Response>,
    /// Response of the board's cascade at each frequency.
    pub board: Vec<Response>,
}

impl Sweep {
    /// [`SWEEP_POINTS`] frequencies from about `rate/20000` (at least
    /// 0.01 Hz, and well below Nyquist for very low rates) up to just below
    /// Nyquist, plus those of `extra_hz` inside that range (corners and
    /// notch centres, so a narrow notch is drawn at its true depth).
    pub fn new(
        design: &[Biquad<f64>],
        board: &[Biquad<f64>],
        sample_rate_hz: f64,
        extra_hz: &[f64],
    ) -> Self {
        let (lo, hi) = axis_range_hz(sample_rate_hz);
        // Stop just short of Nyquist: zeros at z = −1 leave the phase there
        // undefined, which would draw a spurious jump at the right edge.
        let top = hi * (1.0 - 1e-4);
        let step = (top / lo).ln() / (SWEEP_POINTS - 1) as f64;
        let mut frequencies_hz: Vec<f64> = (0..SWEEP_POINTS)
            .map(|i| lo * (step * i as f64).exp())
            .chain(extra_hz.iter().copied().filter(|&f| f > lo && f < top))
            .collect();
        frequencies_hz.sort_by(f64::total_cmp);
        frequencies_hz.dedup();
        let eval = |s: &[Biquad<f64>]| {
            frequencies_hz
                .iter()
                .map(|&f| response(s, f, sample_rate_hz))
                .collect()
        };
        Self {
            design: eval(design),
            board: eval(board),
            frequencies_hz,
        }
    }
}

/// The plot's frequency axis, Hz.
fn axis_range_hz(sample_rate_hz: f64) -> (f64, f64) {
    let nyquist = sample_rate_hz / 2.0;
    let lo = (sample_rate_hz / 20_000.0).max(0.01).min(nyquist / 100.0);
    (lo, nyquist)
}

/// Phase along a sweep in degrees, with jumps of more than half a turn
/// between neighbours taken out, so the curve is continuous.
pub fn unwrapped_phase_deg(points: &[Response]) -> Vec<f64> {
    let mut out = Vec::with_capacity(points.len());
    let mut offset = 0.0;
    let mut previous: Option<f64> = None;
    for p in points {
        let raw = p.phase_rad;
        if let Some(prev) = previous {
            let jump = raw + offset - prev;
            offset -= (jump / (2.0 * PI)).round() * 2.0 * PI;
        }
        let v = raw + offset;
        previous = Some(v);
        out.push(v.to_degrees());
    }
    out
}

/// The phase of `points` in degrees, each shifted by whole turns to lie
/// within half a turn of `reference_deg`. The board's cascade is drawn this
/// way against the design: near a notch, rounding can move a zero from on
/// the unit circle to just inside or outside it, which turns the unwrapped
/// phase a full turn one way or the other without changing the filter's
/// output at any frequency.
pub fn phase_near_deg(points: &[Response], reference_deg: &[f64]) -> Vec<f64> {
    points
        .iter()
        .zip(reference_deg)
        .map(|(p, r)| {
            let v = p.phase_rad.to_degrees();
            v + 360.0 * ((r - v) / 360.0).round()
        })
        .collect()
}

/// A y range covering every finite value with a little room, never empty.
pub(crate) fn padded_range(values: impl Iterator<Item = f64>, include_zero: bool) -> (f64, f64) {
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    for v in values.filter(|v| v.is_finite()) {
        lo = lo.min(v);
        hi = hi.max(v);
    }
    if include_zero {
        lo = lo.min(0.0);
        hi = hi.max(0.0);
    }
    if !(lo.is_finite() && hi.is_finite()) {
        return (-1.0, 1.0);
    }
    let pad = ((hi - lo) * 0.06)
        .max(1e-3 * hi.abs().max(lo.abs()))
        .max(1e-6);
    (lo - pad, hi + pad)
}

/// Words of `text` in lines of at most `width` characters (a longer word
/// gets a line of its own).
pub(crate) fn wrap_words(text: &str, width: usize) -> Vec<String> {
    let mut lines: Vec<String> = Vec::new();
    for word in text.split_whitespace() {
        match lines.last_mut() {
            Some(line) if line.chars().count() + 1 + word.chars().count() <= width => {
                line.push(' ');
                line.push_str(word);
            }
            _ => lines.push(word.to_owned()),
        }
    }
    lines
}

/// Tick labels without trailing zeros: 0.01, 0.5, 20.
pub(crate) fn hz_label(f: &f64) -> String {
    let s = format!("{f:.3}");
    s.trim_end_matches('0').trim_end_matches('.').to_owned()
}

/// Y tick labels with as many decimals as the axis span needs.
pub(crate) fn y_labeller(span: f64) -> impl Fn(&f64) -> String {
    let decimals = if span >= 20.0 {
        0
    } else {
        // Roughly two significant digits of the span.
        (1.0 - span.log10().floor()).clamp(1.0, 6.0) as usize
    };
    move |v| format!("{:.*}", decimals, v + 0.0)
}

type Panel<'a> = DrawingArea<SVGBackend<'a>, Shift>;

struct Curves<'c> {
    title: &'c str,
    unit: &'c str,
    design: Vec<(f64, f64)>,
    board: Vec<(f64, f64)>,
    y: (f64, f64),
    legend: bool,
}

/// A response panel: log-frequency x axis, linear y.
pub(crate) type LogPanelChart<'a, 'b> = ChartContext<
    'a,
    SVGBackend<'b>,
    Cartesian2d<LogCoord<f64>, plotters::coord::types::RangedCoordf64>,
>;

/// Shade the heart band (clipped to the x range `x`) with its legend entry,
/// and draw a dashed line at each of `marks` inside it, over the y range
/// `y`: the same on every response plot.
pub(crate) fn draw_band_and_marks(
    chart: &mut LogPanelChart<'_, '_>,
    x: (f64, f64),
    y: (f64, f64),
    marks: &[f64],
) -> Result<(), Box<dyn Error>> {
    let (band_lo, band_hi) = (HEART_BAND_HZ.0.max(x.0), HEART_BAND_HZ.1.min(x.1));
    if band_lo < band_hi {
        chart
            .draw_series(std::iter::once(Rectangle::new(
                [(band_lo, y.0), (band_hi, y.1)],
                BAND_COLOUR.mix(0.13).filled(),
            )))?
            .label("heart band 0.5-3.7 Hz (30-220 bpm)")
            .legend(|(px, py)| {
                Rectangle::new(
                    [(px, py - 5), (px + 22, py + 5)],
                    BAND_COLOUR.mix(0.3).filled(),
                )
            });
    }
    for &f in marks.iter().filter(|&&f| f > x.0 && f < x.1) {
        chart.draw_series(DashedLineSeries::new(
            [(f, y.0), (f, y.1)],
            3,
            4,
            CORNER_COLOUR.stroke_width(1),
        ))?;
    }
    Ok(())
}

fn draw_panel(
    area: &Panel<'_>,
    x: (f64, f64),
    corners: &[f64],
    c: Curves<'_>,
) -> Result<(), Box<dyn Error>> {
    let mut chart = ChartBuilder::on(area)
        .margin(12)
        .caption(c.title, ("sans-serif", 17))
        .x_label_area_size(34)
        .y_label_area_size(64)
        .build_cartesian_2d((x.0..x.1).log_scale(), c.y.0..c.y.1)?;
    let y_label = y_labeller(c.y.1 - c.y.0);
    chart
        .configure_mesh()
        .x_desc("frequency (Hz)")
        .y_desc(c.unit)
        .x_label_formatter(&hz_label)
        .y_label_formatter(&y_label)
        .bold_line_style(RGBColor(215, 215, 215))
        .light_line_style(RGBColor(246, 246, 246))
        .draw()?;
    draw_band_and_marks(&mut chart, x, c.y, corners)?;
    chart
        .draw_series(LineSeries::new(c.design, DESIGN_COLOUR.stroke_width(2)))?
        .label("design (f64)")
        .legend(|(px, py)| {
            PathElement::new([(px, py), (px + 22, py)], DESIGN_COLOUR.stroke_width(2))
        });
    chart
        .draw_series(DashedLineSeries::new(
            c.board,
            7,
            4,
            BOARD_COLOUR.stroke_width(1),
        ))?
        .label("board (Delta, f32)")
        .legend(|(px, py)| PathElement::new([(px, py), (px + 22, py)], BOARD_COLOUR));
    if c.legend {
        chart
            .configure_series_labels()
            .position(SeriesLabelPosition::LowerLeft)
            .background_style(WHITE.mix(0.85))
            .border_style(RGBColor(200, 200, 200))
            .draw()?;
    }
    Ok(())
}

fn draw(report: &FilterReport, target: &mut String) -> Result<(), Box<dyn Error>> {
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
    let f = &sweep.frequencies_hz;
    let pair = |ys: Vec<f64>| -> Vec<(f64, f64)> {
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
    // Phase and delay are undefined on a zero (see `on_a_zero`); NaN drops
    // those points from the curve.
    let defined = |sections: &[Biquad<f64>], ys: Vec<f64>| -> Vec<f64> {
        f.iter()
            .zip(ys)
            .map(|(&hz, y)| {
                if on_a_zero(sections, hz, rate) {
                    f64::NAN
                } else {
                    y
                }
            })
            .collect()
    };
    let delay = |s: &[Biquad<f64>], r: &[Response]| {
        pair(defined(
            s,
            r.iter().map(|p| p.group_delay_s * 1000.0).collect(),
        ))
    };
    let design = report.design.sections();
    let board = &report.board_sections[..];
    let design_phase = unwrapped_phase_deg(&sweep.design);
    let board_phase = phase_near_deg(&sweep.board, &design_phase);
    let (phase_d, phase_b) = (
        pair(defined(design, design_phase)),
        pair(defined(board, board_phase)),
    );
    let (delay_d, delay_b) = (delay(design, &sweep.design), delay(board, &sweep.board));
    let phase_y = padded_range(phase_d.iter().chain(&phase_b).map(|p| p.1), false);
    let delay_y = padded_range(delay_d.iter().chain(&delay_b).map(|p| p.1), true);

    let root = SVGBackend::with_string(target, (WIDTH, HEIGHT)).into_drawing_area();
    root.fill(&WHITE)?;
    let title = format!(
        "plethwire filter: {} at {rate} Hz",
        report.spec.describe_stages()
    );
    let mut body = root.clone();
    for line in wrap_words(&title, TITLE_CHARS_PER_LINE) {
        body = body.titled(&line, ("sans-serif", 19))?;
    }
    let panels = body.split_evenly((3, 1));
    let curves = [
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
    ];
    for (area, c) in panels.iter().zip(curves) {
        draw_panel(area, x, &corners, c)?;
    }
    root.present()?;
    Ok(())
}

/// The report's response plot as SVG text.
pub fn render_svg(report: &FilterReport) -> Result<String, String> {
    let mut svg = String::new();
    draw(report, &mut svg).map_err(|e| e.to_string())?;
    Ok(svg)
}

/// Draw the plot and write it to `path`.
pub fn write_svg(report: &FilterReport, path: &std::path::Path) -> Result<(), ReportError> {
    let failed = |reason: String| ReportError::Plot {
        path: path.display().to_string(),
        reason,
    };
    let svg = render_svg(report).map_err(failed)?;
    std::fs::write(path, svg).map_err(|e| failed(e.to_string()))
}

#[cfg(test)]
mod tests {
    use super::*;
    use plethwire_dsp::design::butterworth_lowpass;

    #[test]
    fn unwrapping_removes_turns_but_keeps_shape() {
        let d = butterworth_lowpass(6, 10.0, 100.0).unwrap();
        let sweep = Sweep::new(d.sections(), d.sections(), 100.0, &[]);
        let phase = unwrapped_phase_deg(&sweep.design);
        for w in phase.windows(2) {
            assert!((w[1] - w[0]).abs() < 180.0, "{} -> {}", w[0], w[1]);
        }
        // A sixth-order low-pass turns by nearly 6 × 90° by Nyquist.
        let last = *phase.last().unwrap();
        assert!((-540.0..-500.0).contains(&last), "{last}");
        for (u, r) in phase.iter().zip(&sweep.design) {
            let turns = (u.to_radians() - r.phase_rad) / (2.0 * PI);
            assert!((turns - turns.round()).abs() < 1e-9);
        }
    }

    #[test]
    fn sweep_spans_the_axis_log_evenly() {
        let d = butterworth_lowpass(2, 10.0, 1000.0).unwrap();
        let s = Sweep::new(d.sections(), d.sections(), 1000.0, &[]);
        assert_eq!(s.frequencies_hz.len(), SWEEP_POINTS);
        assert!((s.frequencies_hz[0] - 0.05).abs() < 1e-12);
        let last = *s.frequencies_hz.last().unwrap();
        assert!(last < 500.0 && last > 499.9);
        let r1 = s.frequencies_hz[1] / s.frequencies_hz[0];
        let r2 = s.frequencies_hz[SWEEP_POINTS - 1] / s.frequencies_hz[SWEEP_POINTS - 2];
        assert!((r1 - r2).abs() < 1e-9);
        assert_eq!(axis_range_hz(100.0), (0.01, 50.0));
        let with = Sweep::new(d.sections(), d.sections(), 1000.0, &[10.0, 0.001, 600.0]);
        assert_eq!(with.frequencies_hz.len(), SWEEP_POINTS + 1);
        assert!(with.frequencies_hz.contains(&10.0));
        assert!(with.frequencies_hz.windows(2).all(|w| w[0] < w[1]));
    }

    #[test]
    fn board_phase_follows_the_design_within_half_a_turn() {
        let d = butterworth_lowpass(2, 10.0, 100.0).unwrap();
        let sweep = Sweep::new(d.sections(), d.sections(), 100.0, &[]);
        let reference: Vec<f64> = unwrapped_phase_deg(&sweep.design)
            .iter()
            .map(|p| p - 720.0)
            .collect();
        let near = phase_near_deg(&sweep.design, &reference);
        for (n, r) in near.iter().zip(&reference) {
            assert!((n - r).abs() < 1e-9, "{n} vs {r}");
        }
    }

    #[test]
    fn long_titles_wrap_at_spaces() {
        assert_eq!(wrap_words("a bb ccc", 4), ["a bb", "ccc"]);
        assert_eq!(wrap_words("abcdef g", 3), ["abcdef", "g"]);
        assert_eq!(wrap_words("short", 90), ["short"]);
    }

    #[test]
    fn y_labels_fit_the_span() {
        assert_eq!(y_labeller(105.0)(&-40.0), "-40");
        assert_eq!(y_labeller(0.5)(&0.25), "0.25");
        assert_eq!(y_labeller(3.0)(&-0.0), "0.0");
    }

    #[test]
    fn ranges_are_never_empty() {
        assert_eq!(padded_range([f64::NAN].into_iter(), false), (-1.0, 1.0));
        let (lo, hi) = padded_range([5.0, 5.0].into_iter(), false);
        assert!(lo < 5.0 && hi > 5.0);
        let (lo, _) = padded_range([2.0, 3.0].into_iter(), true);
        assert!(lo < 0.0);
    }
}
