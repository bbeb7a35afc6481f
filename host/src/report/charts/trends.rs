//! Beat-to-beat figures over the whole recording: heart-rate trend,
//! interval tachogram, and the Poincaré plot of successive NN intervals.

use super::render;
use crate::plot::theme::{FLAGGED, GOOD, GUIDE, LINE, REFERENCE};
use crate::plot::theme::{FONT, WIDTH};
use crate::plot::PlotError;
use crate::plot::{mesh_colours, range_of, rgb, ticks, Area, DrawFailure, Drawn};
use crate::replay::Replay;
use crate::report::poincare::PoincareStats;
use crate::report::thin::{line, scatter};
use plotters::coord::types::RangedCoordf64;
use plotters::prelude::*;

type TimeChart<'a, 'b> =
    ChartContext<'a, SVGBackend<'b>, Cartesian2d<RangedCoordf64, RangedCoordf64>>;

const TREND_HEIGHT: u32 = 330;
const SQUARE: u32 = 560;
/// A smoothed heart rate not reported for this long is drawn with a gap.
const LINE_GAP_S: f64 = 5.0;

/// Split `points` (time ordered) where consecutive times are more than
/// `gap` apart.
fn runs(points: &[(f64, f64)], gap: f64) -> Vec<Vec<(f64, f64)>> {
    let mut out: Vec<Vec<(f64, f64)>> = Vec::new();
    for &p in points {
        match out.last_mut() {
            Some(run) if run.last().is_some_and(|q| p.0 - q.0 <= gap) => run.push(p),
            _ => out.push(vec![p]),
        }
    }
    out
}

/// A time chart over the whole recording with shared styling.
fn time_chart<'a, 'b>(
    area: &'a Area<'b>,
    duration: f64,
    y: (f64, f64),
    unit: &str,
) -> Result<TimeChart<'a, 'b>, DrawFailure> {
    let mut chart = ChartBuilder::on(area)
        .margin(10)
        .x_label_area_size(32)
        .y_label_area_size(64)
        .build_cartesian_2d(0.0..duration.max(1e-3), y.0..y.1)?;
    let (bold, light) = mesh_colours();
    let (x_ticks, y_ticks) = (ticks(duration), ticks(y.1 - y.0));
    chart
        .configure_mesh()
        .x_desc("time (s)")
        .x_label_formatter(&x_ticks)
        .y_desc(unit)
        .y_label_formatter(&y_ticks)
        .label_style(FONT)
        .bold_line_style(bold)
        .light_line_style(light)
        .max_light_lines(1)
        .draw()?;
    Ok(chart)
}

/// Points of `all` lying outside `y` drawn on its nearest edge.
fn clamp_y(all: &[(f64, f64)], y: (f64, f64)) -> Vec<(f64, f64)> {
    all.iter().map(|&(t, v)| (t, v.clamp(y.0, y.1))).collect()
}

/// A line thinned to what a plot `WIDTH` wide can show.
fn thin_line(points: Vec<(f64, f64)>, x: (f64, f64)) -> Vec<(f64, f64)> {
    line(&points, x, WIDTH as usize)
}

/// Thin markers to what a plot `WIDTH` wide can show apart.
fn thin(points: &[(f64, f64)], x: (f64, f64), y: (f64, f64)) -> Vec<(f64, f64)> {
    // Cells about a marker's size.
    scatter(
        points,
        x,
        y,
        (WIDTH as usize / 4, (TREND_HEIGHT / 4) as usize),
    )
}

/// Instantaneous (dots) and smoothed (line) heart rate, with the
/// reference series when given.
pub fn heart_rate_svg(run: &Replay, reference: Option<&[(f64, f64)]>) -> Result<String, PlotError> {
    let duration = run.samples as f64 / run.fs;
    let inst = |good: bool| -> Vec<(f64, f64)> {
        run.beats
            .iter()
            .filter(|b| b.flags.is_good() == good)
            .filter_map(|b| {
                b.hr_bpm
                    .map(|h| (b.peak_index as f64 / run.fs, f64::from(h)))
            })
            .collect()
    };
    let (good, flagged) = (inst(true), inst(false));
    let smooth = run.heart_rate_track();
    let refs = reference.unwrap_or(&[]);
    let y = range_of(
        good.iter().chain(&smooth).chain(refs).map(|p| p.1),
        0.08,
        (40.0, 120.0),
    );
    let x = (0.0, duration);
    render(
        (WIDTH, TREND_HEIGHT),
        "heart rate over the recording",
        |root| {
            let mut chart = time_chart(root, duration, y, "heart rate (bpm)")?;
            for r in runs(refs, 1.5) {
                chart.draw_series(LineSeries::new(
                    thin_line(r, x),
                    rgb(REFERENCE).stroke_width(2),
                ))?;
            }
            chart.draw_series(
                thin(&good, x, y)
                    .into_iter()
                    .map(|p| Circle::new(p, 2, rgb(GOOD).mix(0.7).filled())),
            )?;
            chart.draw_series(
                thin(&clamp_y(&flagged, y), x, y)
                    .into_iter()
                    .map(|p| Cross::new(p, 3, rgb(FLAGGED).stroke_width(1))),
            )?;
            for r in runs(&smooth, LINE_GAP_S) {
                chart.draw_series(LineSeries::new(thin_line(r, x), rgb(LINE).stroke_width(2)))?;
            }
            Ok(())
        },
    )
}

/// Interval against time: good beats' intervals as joined dots, flagged
/// beats' as crosses.
pub fn tachogram_svg(run: &Replay) -> Result<String, PlotError> {
    let duration = run.samples as f64 / run.fs;
    let ibi = |good: bool| -> Vec<(f64, f64)> {
        run.beats
            .iter()
            .filter(|b| b.flags.is_good() == good)
            .filter_map(|b| {
                b.ibi_ms
                    .map(|i| (b.peak_index as f64 / run.fs, f64::from(i)))
            })
            .collect()
    };
    let (good, flagged) = (ibi(true), ibi(false));
    let y = range_of(good.iter().map(|p| p.1), 0.08, (300.0, 1500.0));
    let x = (0.0, duration);
    render((WIDTH, TREND_HEIGHT), "interval tachogram", |root| {
        let mut chart = time_chart(root, duration, y, "interval (ms)")?;
        // A gap of more than 3 intervals means flagged or missing beats
        // between: do not join across it.
        let gap = 3.0 * good.iter().map(|p| p.1).fold(0.0, f64::max) / 1000.0;
        for r in runs(&good, gap.max(1.0)) {
            chart.draw_series(LineSeries::new(
                thin_line(r, x),
                rgb(GOOD).mix(0.5).stroke_width(1),
            ))?;
        }
        chart.draw_series(
            thin(&good, x, y)
                .into_iter()
                .map(|p| Circle::new(p, 2, rgb(GOOD).filled())),
        )?;
        chart.draw_series(
            thin(&clamp_y(&flagged, y), x, y)
                .into_iter()
                .map(|p| Cross::new(p, 3, rgb(FLAGGED).stroke_width(1))),
        )?;
        Ok(())
    })
}

fn draw_poincare(root: &Area<'_>, pairs: &[(f64, f64)], stats: &PoincareStats) -> Drawn {
    let (lo, hi) = range_of(pairs.iter().flat_map(|p| [p.0, p.1]), 0.08, (500.0, 1200.0));
    let mut chart = ChartBuilder::on(root)
        .margin(12)
        .x_label_area_size(36)
        .y_label_area_size(64)
        .build_cartesian_2d(lo..hi, lo..hi)?;
    let (bold, light) = mesh_colours();
    let t = ticks(hi - lo);
    chart
        .configure_mesh()
        .x_desc("interval n (ms)")
        .y_desc("interval n+1 (ms)")
        .x_label_formatter(&t)
        .y_label_formatter(&t)
        .label_style(FONT)
        .bold_line_style(bold)
        .light_line_style(light)
        .max_light_lines(1)
        .draw()?;
    chart.draw_series(DashedLineSeries::new(
        [(lo, lo), (hi, hi)],
        6,
        5,
        rgb(GUIDE).stroke_width(1),
    ))?;
    // Cells about a marker's size.
    let cells = (SQUARE as usize / 4, SQUARE as usize / 4);
    chart.draw_series(
        scatter(pairs, (lo, hi), (lo, hi), cells)
            .into_iter()
            .map(|p| Circle::new(p, 2, rgb(GOOD).mix(0.55).filled())),
    )?;
    if let (Some(sd1), Some(sd2), Some(c)) = (stats.sd1_ms, stats.sd2_ms, stats.centre_ms) {
        let r = std::f64::consts::FRAC_1_SQRT_2;
        // Along the identity line (SD2) and across it (SD1).
        let at = |u: f64, v: f64| (c.0 + (u - v) * r, c.1 + (u + v) * r);
        let ellipse: Vec<(f64, f64)> = (0..=96)
            .map(|k| {
                let a = k as f64 / 96.0 * std::f64::consts::TAU;
                at(sd2 * a.cos(), sd1 * a.sin())
            })
            .collect();
        chart.draw_series(LineSeries::new(ellipse, rgb(LINE).stroke_width(2)))?;
        chart.draw_series(LineSeries::new(
            [at(-sd2, 0.0), at(sd2, 0.0)],
            rgb(REFERENCE).stroke_width(2),
        ))?;
        chart.draw_series(LineSeries::new(
            [at(0.0, -sd1), at(0.0, sd1)],
            rgb(FLAGGED).stroke_width(2),
        ))?;
    }
    Ok(())
}

/// Successive NN intervals against each other, with the identity line and
/// the SD1/SD2 ellipse.
pub fn poincare_svg(pairs: &[(f64, f64)], stats: &PoincareStats) -> Result<String, PlotError> {
    render(
        (SQUARE, SQUARE),
        "Poincaré plot of successive NN intervals",
        |root| draw_poincare(root, pairs, stats),
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn runs_break_at_gaps() {
        let p = [(0.0, 1.0), (1.0, 1.0), (9.0, 1.0), (10.0, 1.0)];
        let r = runs(&p, 5.0);
        assert_eq!(r.len(), 2);
        assert_eq!(r[1], vec![(9.0, 1.0), (10.0, 1.0)]);
        assert!(runs(&[], 1.0).is_empty());
    }
}
