//! The signal excerpt: the input as recorded above, the band-passed signal
//! below, on one time axis, with the beats marked on both.

use super::render;
use crate::plot::theme::{BANDED, FLAGGED, GOOD, RAW, REFERENCE};
use crate::plot::theme::{FONT, WIDTH};
use crate::plot::PlotError;
use crate::plot::{mesh_colours, range_of, rgb, ticks, Area, Drawn};
use crate::report::excerpt::Excerpt;
use crate::report::thin::Segment;
use crate::report::traces::ExcerptTraces;
use plethwire_dsp::pipeline::BeatEvent;
use plotters::prelude::*;
use std::collections::BTreeMap;

/// What the excerpt plot needs.
pub struct SignalPlot<'a> {
    /// The input and the band-passed input over the excerpt, thinned.
    pub traces: &'a ExcerptTraces,
    /// Sample rate, Hz.
    pub fs: f64,
    /// The stretch to show.
    pub excerpt: Excerpt,
    /// Every beat.
    pub beats: &'a [BeatEvent],
    /// Reference beats, sample indices.
    pub reference: Option<&'a [u64]>,
    /// Label of the input's axis.
    pub units: &'a str,
}

const HEIGHT: u32 = 560;

struct Panel<'p> {
    title: &'p str,
    unit: &'p str,
    segments: &'p [Segment],
    /// Finite values at the beats' peaks.
    at: &'p BTreeMap<u64, f64>,
    colour: (u8, u8, u8),
    show_reference: bool,
}

fn panel(area: &Area<'_>, p: &SignalPlot<'_>, what: Panel<'_>) -> Drawn {
    let (from, to) = p.excerpt.samples(p.fs, p.traces.samples as usize);
    let segments = what.segments;
    let mut y = range_of(segments.iter().flatten().map(|q| q.1), 0.08, (-1.0, 1.0));
    // Room above the trace for the reference ticks.
    if what.show_reference && p.reference.is_some() {
        y.1 += 0.12 * (y.1 - y.0);
    }
    let x = (p.excerpt.start_s, p.excerpt.end_s());
    let mut chart = ChartBuilder::on(area)
        .margin(8)
        .caption(what.title, (FONT.0, 16))
        .x_label_area_size(30)
        .y_label_area_size(72)
        .build_cartesian_2d(x.0..x.1, y.0..y.1)?;
    let (bold, light) = mesh_colours();
    let (x_ticks, y_ticks) = (ticks(x.1 - x.0), ticks(y.1 - y.0));
    chart
        .configure_mesh()
        .x_desc("time (s)")
        .x_label_formatter(&x_ticks)
        .y_desc(what.unit)
        .y_label_formatter(&y_ticks)
        .label_style(FONT)
        .bold_line_style(bold)
        .light_line_style(light)
        .max_light_lines(1)
        .draw()?;
    for s in segments {
        let s = s.iter().copied();
        chart.draw_series(LineSeries::new(s, rgb(what.colour).stroke_width(1)))?;
    }
    let shown: Vec<&BeatEvent> = p
        .beats
        .iter()
        .filter(|b| (from as u64..to as u64).contains(&b.peak_index))
        .collect();
    let at = |b: &BeatEvent| {
        let v = *what.at.get(&b.peak_index)?;
        Some((b.peak_index as usize as f64 / p.fs, v))
    };
    chart.draw_series(
        shown
            .iter()
            .filter(|b| b.flags.is_good())
            .filter_map(|b| at(b))
            .map(|q| Circle::new(q, 4, rgb(GOOD).filled())),
    )?;
    chart.draw_series(
        shown
            .iter()
            .filter(|b| !b.flags.is_good())
            .filter_map(|b| at(b))
            .map(|q| Cross::new(q, 5, rgb(FLAGGED).stroke_width(2))),
    )?;
    if let (true, Some(reference)) = (what.show_reference, p.reference) {
        let top = y.1 - 0.05 * (y.1 - y.0);
        chart.draw_series(
            reference
                .iter()
                .filter(|&&i| (from as u64..to as u64).contains(&i))
                .map(|&i| TriangleMarker::new((i as f64 / p.fs, top), 5, rgb(REFERENCE).filled())),
        )?;
    }
    Ok(())
}

/// The excerpt as SVG.
pub fn signal_svg(p: &SignalPlot<'_>) -> Result<String, PlotError> {
    render(
        (WIDTH, HEIGHT),
        "signal excerpt with detected beats",
        |root| {
            let (top, bottom) = root.split_vertically(HEIGHT / 2);
            panel(
                &top,
                p,
                Panel {
                    title: "input as recorded",
                    unit: p.units,
                    segments: &p.traces.raw,
                    at: &p.traces.raw_at,
                    colour: RAW,
                    show_reference: true,
                },
            )?;
            panel(
                &bottom,
                p,
                Panel {
                    title: "band-passed (the pipeline's filter)",
                    unit: p.units,
                    segments: &p.traces.banded,
                    at: &p.traces.banded_at,
                    colour: BANDED,
                    show_reference: false,
                },
            )
        },
    )
}
