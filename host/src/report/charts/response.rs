//! The band-pass the pipeline ran, at the record's rate: gain and group
//! delay against frequency, with this record's heart rates shaded. A gain
//! below the axis is drawn as leaving it, not along the floor.

use super::render;
use crate::plot::theme::{HEART, LINE, WIDTH};
use crate::plot::{
    draw_clipped, draw_marks, frequency_chart, range_of, rgb, Area, Drawn, Frame, Layout,
};
use crate::plot::{PlotError, Sweep};
use crate::report::band::BandPass;
use plotters::prelude::*;

const HEIGHT: u32 = 520;
/// The gain axis's lower end; the curve leaves the axis below it.
pub const GAIN_FLOOR_DB: f64 = -60.0;

/// The record's heart rates as frequencies, Hz: lowest, mean, highest.
pub type HeartBand = Option<(f64, f64, f64)>;

fn panel(
    area: &Area<'_>,
    curve: Vec<(f64, f64)>,
    frame: Frame<'_>,
    marks: (&BandPass, HeartBand),
) -> Drawn {
    let (x, y) = (frame.x, frame.y);
    let mut chart = frequency_chart(area, &frame)?;
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
    draw_marks(&mut chart, x, y, &[band.low_hz, band.high_hz], 4)?;
    draw_clipped(
        &mut chart,
        &curve,
        y,
        (rgb(LINE).stroke_width(2), LINE),
        None,
    )?;
    Ok(())
}

/// Gain and group delay of `band` from 0.05 Hz (or lower for slow
/// rates) to just below Nyquist.
pub fn response_svg(band: &BandPass, heart: HeartBand) -> Result<String, PlotError> {
    let sections = band.sections();
    let mut extra = vec![band.low_hz, band.high_hz];
    extra.extend(heart.map(|h| h.1));
    let sweep = Sweep::new(&sections, &sections, band.fs, &extra);
    let f = &sweep.frequencies_hz;
    let x = (f[0], *f.last().unwrap_or(&band.fs));
    let gain: Vec<(f64, f64)> = f
        .iter()
        .zip(&sweep.board)
        .map(|(&hz, r)| (hz, r.magnitude_db))
        .filter(|p| !p.1.is_nan())
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
    let frame = |unit, y| Frame {
        caption: None,
        unit,
        x,
        y,
        layout: Layout::Page,
    };
    render((WIDTH, HEIGHT), "band-pass gain and group delay", |root| {
        let (top, bottom) = root.split_vertically(HEIGHT / 2);
        let marks = (band, heart);
        panel(&top, gain, frame("gain (dB)", (GAIN_FLOOR_DB, 5.0)), marks)?;
        panel(&bottom, delay, frame("group delay (ms)", delay_y), marks)
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::plot::svg_check::{curves, run_along_bottom};
    use plethwire_dsp::pipeline::Config;

    #[test]
    fn the_gain_leaves_the_axis_marked_instead_of_lying_on_the_floor() {
        let band = BandPass::new(&Config::new(125.0)).unwrap();
        let svg = response_svg(&band, None).unwrap();
        let doc = roxmltree::Document::parse(&svg).unwrap();
        let marks = doc
            .descendants()
            .filter(|n| n.has_tag_name("polygon"))
            .count();
        // Below the axis towards DC and towards Nyquist.
        assert_eq!(marks, 2, "{marks} marks");
        let gain: Vec<_> = curves(&svg, 20)
            .into_iter()
            .filter(|c| c.iter().all(|p| p.1 < f64::from(HEIGHT) / 2.0))
            .collect();
        assert_eq!(gain.len(), 1, "one piece of gain curve");
        assert!(
            run_along_bottom(&gain[0]) < 3,
            "the gain runs along the floor"
        );
    }
}
