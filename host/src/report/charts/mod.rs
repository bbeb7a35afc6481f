//! The report's figures as SVG text for inlining into the page: drawn with
//! plotters' SVG backend, then stripped of what an inline figure must not
//! carry (the namespace address; the page's parser supplies it).
//!
//! Colours, axes and tick labels come from the host's plot toolkit
//! ([`crate::plot`]), shared with the filter and front-end plots.

mod quality;
mod response;
mod signal;
mod trends;

pub use quality::{quality_svg, state_colour};
pub use response::{response_svg, GAIN_FLOOR_DB};
pub use signal::{signal_svg, SignalPlot};
pub use trends::{heart_rate_svg, poincare_svg, tachogram_svg};

use crate::plot::{svg, Area, Drawn, PlotError};

/// Draw `size` pixels with `draw` and return the SVG ready to inline,
/// labelled `label` for screen readers.
pub(crate) fn render(
    size: (u32, u32),
    label: &str,
    draw: impl FnOnce(&Area<'_>) -> Drawn,
) -> Result<String, PlotError> {
    svg(size, draw).map(|text| inline(&text, label))
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::plot::rgb;
    use crate::plot::theme::{FLAGGED, GOOD};
    use plotters::prelude::*;

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
}
