//! The band-pass the pipeline ran, at the record's rate: gain and group
//! delay against frequency, with this record's heart rates shaded.

use super::{mesh_colours, range_of, render, rgb, ticks, Area, Drawn, FONT, WIDTH};
use super::{GUIDE, HEART, LINE};
use crate::filter_report::Sweep;
use crate::report::band::BandPass;
use plotters::prelude::*;

const HEIGHT: u32 = 520;
/// Gains below this are drawn at it.
const GAIN_FLOOR_DB: f64 = -60.0;

/// The record's heart rates as frequencies, Hz: lowest, mean, highest.
pub type HeartBand = Option<(f64, f64, f64)>;

fn hz_label(f: &f64) -> String {
    let s = format!("{f:.3}");
    s.trim_end_matches('0').trim_end_matches('.').to_owned()
}

fn panel(
    area: &Area<'_>,
    curve: Vec<(f64, f64)>,
    x: (f64, f64),
    y: (f64, f64),
    unit: &str,
    marks: (&BandPass, HeartBand),
) -> Drawn {
    let mut chart = ChartBuilder::on(area)
        .margin(10)
        .x_label_area_size(32)
        .y_label_area_size(64)
        .build_cartesian_2d((x.0..x.1).log_scale(), y.0..y.1)?;
    let (bold, light) = mesh_colours();
    let y_ticks = ticks(y.1 - y.0);
    chart
        .configure_mesh()
        .x_desc("frequency (Hz)")
        .y_desc(unit)
        .x_label_formatter(&hz_label)
        .y_label_formatter(&y_ticks)
        .label_style(FONT)
        .bold_line_style(bold)
        .light_line_style(light)
        .draw()?;
    let (band, heart) = marks;
    if let Some((lo, mean, hi)) = heart {
        let (lo, hi) = (lo.max(x.0), hi.min(x.1));
        if lo < hi {
            chart.draw_series(std::iter::once(Rectangle::new(
                [(lo, y.0), (hi, y.1)],
                rgb(HEART).mix(0.25).filled(),
            )))?;
        }
        chart.draw_series(LineSeries::new(
            [(mean, y.0), (mean, y.1)],
            rgb(HEART).stroke_width(2),
        ))?;
    }
    for f in [band.low_hz, band.high_hz] {
        chart.draw_series(DashedLineSeries::new(
            [(f, y.0), (f, y.1)],
            4,
            4,
            rgb(GUIDE).stroke_width(1),
        ))?;
    }
    chart.draw_series(LineSeries::new(curve, rgb(LINE).stroke_width(2)))?;
    Ok(())
}

/// Gain and group delay of `band` from 0.05 Hz (or lower for slow
/// rates) to just below Nyquist.
pub fn response_svg(band: &BandPass, heart: HeartBand) -> Result<String, String> {
    let sections = band.sections();
    let mut extra = vec![band.low_hz, band.high_hz];
    extra.extend(heart.map(|h| h.1));
    let sweep = Sweep::new(&sections, &sections, band.fs, &extra);
    let f = &sweep.frequencies_hz;
    let x = (f[0], *f.last().unwrap_or(&band.fs));
    let gain: Vec<(f64, f64)> = f
        .iter()
        .zip(&sweep.board)
        .map(|(&hz, r)| (hz, r.magnitude_db.max(GAIN_FLOOR_DB)))
        .filter(|p| p.1.is_finite())
        .collect();
    let delay: Vec<(f64, f64)> = f
        .iter()
        .zip(&sweep.board)
        // Where the filter passes next to nothing its delay means nothing
        // (and jumps wildly near its zeros at DC and Nyquist).
        .filter(|(_, r)| r.magnitude_db > GAIN_FLOOR_DB)
        .map(|(&hz, r)| (hz, r.group_delay_s * 1000.0))
        .filter(|p| p.1.is_finite())
        .collect();
    let delay_y = range_of(delay.iter().map(|p| p.1).chain([0.0]), 0.06, (0.0, 1.0));
    render((WIDTH, HEIGHT), "band-pass gain and group delay", |root| {
        let (top, bottom) = root.split_vertically(HEIGHT / 2);
        panel(
            &top,
            gain,
            x,
            (GAIN_FLOOR_DB, 5.0),
            "gain (dB)",
            (band, heart),
        )?;
        panel(
            &bottom,
            delay,
            x,
            delay_y,
            "group delay (ms)",
            (band, heart),
        )
    })
}
