//! The quality timeline: each beat's template correlation, its flags, and
//! the signal state, on one time axis.

use super::render;
use crate::plot::theme::{FLAGGED, GOOD, GUIDE};
use crate::plot::theme::{FONT, WIDTH};
use crate::plot::PlotError;
use crate::plot::{mesh_colours, rgb, ticks, Area, Drawn, Rgb};
use crate::replay::Replay;
use crate::report::thin::scatter;
use crate::report::timeline::StateSpan;
use plethwire_dsp::pipeline::quality::MIN_CORRELATION;
use plethwire_dsp::pipeline::{BeatFlags, SignalState};
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

const HEIGHT: u32 = 470;
const CORRELATION_HEIGHT: u32 = 270;
/// Room for the row names, and the same on the chart above so the time
/// axes line up.
const LABELS: u32 = 150;

/// The flags in the order of their rows, with their names
/// (`docs/vocabulary.md`).
pub const FLAG_ROWS: [(u8, &str); 7] = BeatFlags::NAMES;

/// The colour of a signal state's span.
pub fn state_colour(s: SignalState) -> Rgb {
    match s {
        SignalState::Acquiring => (196, 200, 206),
        SignalState::Good => (120, 190, 172),
        SignalState::Noisy => (236, 164, 72),
        SignalState::Saturated => (176, 58, 96),
        SignalState::NoSignal => (70, 74, 82),
    }
}

fn correlation(area: &Area<'_>, run: &Replay, duration: f64) -> Drawn {
    let points = |good: bool| -> Vec<(f64, f64)> {
        run.beats
            .iter()
            .filter(|b| b.flags.is_good() == good)
            .map(|b| (b.peak_index as f64 / run.fs, f64::from(b.quality)))
            .collect()
    };
    let (good, flagged) = (points(true), points(false));
    // Down to the lowest correlation, but never hiding the threshold.
    let threshold = f64::from(MIN_CORRELATION);
    let low = flagged
        .iter()
        .chain(&good)
        .map(|p| p.1)
        .fold(threshold - 0.06, f64::min);
    let y = (low - 0.02, 1.02);
    let mut chart = ChartBuilder::on(area)
        .margin(10)
        .x_label_area_size(30)
        .y_label_area_size(LABELS)
        .build_cartesian_2d(0.0..duration, y.0..y.1)?;
    let (bold, light) = mesh_colours();
    let (x_ticks, y_ticks) = (ticks(duration), ticks(y.1 - y.0));
    chart
        .configure_mesh()
        .x_label_formatter(&x_ticks)
        .y_desc("template correlation")
        .y_label_formatter(&y_ticks)
        .label_style(FONT)
        .bold_line_style(bold)
        .light_line_style(light)
        .max_light_lines(1)
        .draw()?;
    chart.draw_series(DashedLineSeries::new(
        [(0.0, threshold), (duration, threshold)],
        6,
        5,
        rgb(GUIDE).stroke_width(1),
    ))?;
    // Cells about a marker's size.
    let cells = (WIDTH as usize / 4, (CORRELATION_HEIGHT / 4) as usize);
    chart.draw_series(
        scatter(&good, (0.0, duration), y, cells)
            .into_iter()
            .map(|p| Circle::new(p, 2, rgb(GOOD).filled())),
    )?;
    chart.draw_series(
        scatter(&flagged, (0.0, duration), y, cells)
            .into_iter()
            .map(|p| Cross::new(p, 3, rgb(FLAGGED).stroke_width(1))),
    )?;
    Ok(())
}

fn rows(
    root: &Area<'_>,
    area: &Area<'_>,
    run: &Replay,
    spans: &[StateSpan],
    duration: f64,
) -> Drawn {
    let n = FLAG_ROWS.len() as f64 + 1.0;
    let x_ticks = ticks(duration);
    let mut chart = ChartBuilder::on(area)
        .margin(10)
        .margin_top(0)
        .x_label_area_size(30)
        .y_label_area_size(LABELS)
        .build_cartesian_2d(0.0..duration, 0.4..n + 0.6)?;
    chart
        .configure_mesh()
        .disable_y_mesh()
        .y_labels(0)
        .x_desc("time (s)")
        .x_label_formatter(&x_ticks)
        .label_style(FONT)
        .bold_line_style(mesh_colours().0)
        .light_line_style(mesh_colours().1)
        .max_light_lines(1)
        .draw()?;
    // Top row: the state spans.
    chart.draw_series(spans.iter().map(|s| {
        Rectangle::new(
            [(s.from_s, n - 0.32), (s.to_s, n + 0.32)],
            rgb(state_colour(s.state)).filled(),
        )
    }))?;
    for (k, (bit, _)) in FLAG_ROWS.iter().enumerate() {
        let row = n - 1.0 - k as f64;
        let times: Vec<(f64, f64)> = run
            .beats
            .iter()
            .filter(|b| b.flags.has(*bit))
            .map(|b| (b.peak_index as f64 / run.fs, row))
            .collect();
        let colour = if *bit == BeatFlags::NO_INTERVAL {
            GUIDE
        } else {
            FLAGGED
        };
        chart.draw_series(
            scatter(&times, (0.0, duration), (0.0, n + 1.0), (WIDTH as usize, 1))
                .into_iter()
                .map(|(t, r)| {
                    PathElement::new([(t, r - 0.3), (t, r + 0.3)], rgb(colour).stroke_width(2))
                }),
        )?;
    }
    let names = std::iter::once("signal state".to_string())
        .chain(FLAG_ROWS.iter().map(|r| crate::vocabulary::words(r.1)));
    let style = TextStyle::from(FONT.into_font()).pos(Pos::new(HPos::Right, VPos::Center));
    for (k, name) in names.enumerate() {
        let (px, py) = chart.backend_coord(&(0.0, n - k as f64));
        root.draw(&Text::new(name, (px - 8, py), style.clone()))?;
    }
    Ok(())
}

/// The quality timeline as SVG.
pub fn quality_svg(run: &Replay, spans: &[StateSpan]) -> Result<String, PlotError> {
    let duration = (run.samples as f64 / run.fs).max(1e-3);
    render(
        (WIDTH, HEIGHT),
        "beat quality and signal state over time",
        |root| {
            let (top, bottom) = root.split_vertically(CORRELATION_HEIGHT);
            correlation(&top, run, duration)?;
            rows(root, &bottom, run, spans, duration)
        },
    )
}
