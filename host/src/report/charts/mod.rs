//! The report's figures as SVG text for inlining into the page: drawn with
//! plotters' SVG backend, then stripped of what an inline figure must not
//! carry (the namespace address; the page's parser supplies it).
//!
//! One palette for every figure and the page's legends, so a colour means
//! the same thing everywhere.

mod quality;
mod response;
mod signal;
mod trends;

pub use quality::{quality_svg, state_colour};
pub use response::response_svg;
pub use signal::{signal_svg, SignalPlot};
pub use trends::{heart_rate_svg, poincare_svg, tachogram_svg};

use plotters::coord::Shift;
use plotters::prelude::*;
use std::error::Error;

/// A colour as `(red, green, blue)`.
pub type Rgb = (u8, u8, u8);

/// Good beats.
pub const GOOD: Rgb = (24, 122, 110);
/// Flagged beats.
pub const FLAGGED: Rgb = (205, 74, 48);
/// Reference beats and series.
pub const REFERENCE: Rgb = (118, 70, 160);
/// The input as recorded.
pub const RAW: Rgb = (92, 100, 112);
/// The band-passed signal.
pub const BANDED: Rgb = (36, 86, 150);
/// Smoothed heart rate, the filter's response.
pub const LINE: Rgb = (34, 44, 58);
/// Guides: identity line, thresholds, band edges.
pub const GUIDE: Rgb = (150, 150, 150);
/// The record's own heart-rate range on the response plot.
pub const HEART: Rgb = (226, 160, 60);
/// Figure background.
pub const PAPER: Rgb = (255, 255, 255);

/// Width of every figure, px (the page scales it down to fit).
pub const WIDTH: u32 = 960;

pub(crate) fn rgb(c: Rgb) -> RGBColor {
    RGBColor(c.0, c.1, c.2)
}

/// The colour as CSS `#rrggbb`.
pub fn css(c: Rgb) -> String {
    format!("#{:02x}{:02x}{:02x}", c.0, c.1, c.2)
}

pub(crate) type Area<'a> = DrawingArea<SVGBackend<'a>, Shift>;
pub(crate) type Drawn = Result<(), Box<dyn Error>>;

/// Draw `size` pixels with `draw` and return the SVG ready to inline,
/// labelled `label` for screen readers.
pub(crate) fn render(
    size: (u32, u32),
    label: &str,
    draw: impl FnOnce(&Area<'_>) -> Drawn,
) -> Result<String, String> {
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, size).into_drawing_area();
        root.fill(&rgb(PAPER)).map_err(|e| e.to_string())?;
        draw(&root).map_err(|e| e.to_string())?;
        root.present().map_err(|e| e.to_string())?;
    }
    Ok(inline(&svg, label))
}

/// Drop the namespace attribute (an inline figure takes the page's) and
/// the attributes that only restate SVG's defaults (full opacity, no
/// stroke), which plotters writes on every marker; add an accessible
/// label.
fn inline(svg: &str, label: &str) -> String {
    let body = svg
        .replacen(r#" xmlns="http://www.w3.org/2000/svg""#, "", 1)
        .replace(r#" opacity="1""#, "")
        .replace(r#" stroke="none" stroke-width="1""#, "");
    body.replacen(
        "<svg ",
        &format!(
            r#"<svg role="img" aria-label="{}" "#,
            super::html::escape(label)
        ),
        1,
    )
}

/// A range covering every finite value with `pad` of its span on either
/// side, never empty; `fallback` when there are none.
pub(crate) fn range_of(
    values: impl Iterator<Item = f64>,
    pad: f64,
    fallback: (f64, f64),
) -> (f64, f64) {
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    for v in values.filter(|v| v.is_finite()) {
        lo = lo.min(v);
        hi = hi.max(v);
    }
    if !(lo.is_finite() && hi.is_finite()) {
        return fallback;
    }
    let span = (hi - lo).max(1e-9 * hi.abs().max(1.0));
    (lo - pad * span, hi + pad * span)
}

/// Tick labels with as many decimals as the axis span needs.
pub(crate) fn ticks(span: f64) -> impl Fn(&f64) -> String {
    let decimals = if span >= 20.0 {
        0
    } else {
        (1.0 - span.log10().floor()).clamp(0.0, 6.0) as usize
    };
    move |v| super::html::fixed(*v, decimals)
}

/// The mesh style every figure shares.
pub(crate) fn mesh_colours() -> (RGBColor, RGBColor) {
    (RGBColor(222, 222, 222), RGBColor(244, 244, 244))
}

/// The axis label font.
pub(crate) const FONT: (&str, u32) = ("sans-serif", 14);

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn inline_figures_carry_no_address_and_a_label() {
        let svg = render((40, 30), "a <test> & more", |_| Ok(())).unwrap();
        assert!(!svg.contains("http"), "{svg}");
        assert!(svg.starts_with(r#"<svg role="img" aria-label="a &lt;test&gt; &amp; more" "#));
        roxmltree::Document::parse(&svg).unwrap();
    }

    #[test]
    fn markers_lose_only_default_attributes() {
        let svg = render((40, 30), "dot", |root| {
            root.draw(&Circle::new((20, 15), 4, rgb(GOOD).filled()))?;
            root.draw(&Circle::new((10, 10), 3, rgb(FLAGGED).mix(0.5).filled()))?;
            Ok(())
        })
        .unwrap();
        assert!(
            svg.contains(r##"<circle cx="20" cy="15" r="4" fill="#187A6E"/>"##),
            "{svg}"
        );
        assert!(
            svg.contains(r#"opacity="0.5""#),
            "other opacities stay: {svg}"
        );
        roxmltree::Document::parse(&svg).unwrap();
    }

    #[test]
    fn ranges_are_padded_and_never_empty() {
        assert_eq!(
            range_of([f64::NAN].into_iter(), 0.1, (1.0, 2.0)),
            (1.0, 2.0)
        );
        let (lo, hi) = range_of([10.0, 20.0].into_iter(), 0.1, (0.0, 1.0));
        assert!((lo - 9.0).abs() < 1e-12 && (hi - 21.0).abs() < 1e-12);
        let (lo, hi) = range_of([5.0, 5.0].into_iter(), 0.1, (0.0, 1.0));
        assert!(lo < 5.0 && hi > 5.0);
        assert_eq!(ticks(100.0)(&12.3), "12");
        assert_eq!(ticks(0.5)(&0.25), "0.25");
        assert_eq!(ticks(0.5)(&-1e-9), "0.00");
        assert_eq!(css(GOOD), "#187a6e");
    }
}
