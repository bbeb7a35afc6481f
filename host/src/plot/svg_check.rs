//! Reading a drawn SVG back in tests: its text lines, legend frames and
//! curves, and the geometry checks the plots' tests share.

use super::axis::starts_with_unit;

/// The text of every `<text>` element, in document order, trimmed.
pub fn texts(svg: &str) -> Vec<String> {
    let doc = roxmltree::Document::parse(svg).expect("well-formed SVG");
    doc.descendants()
        .filter(|n| n.has_tag_name("text"))
        .map(|n| n.text().unwrap_or("").trim().to_owned())
        .collect()
}

/// `text` with no-break spaces as plain ones and runs of white space as
/// one: what a reader sees, for comparing a figure's text with a message.
pub fn plain(text: &str) -> String {
    text.replace('\u{a0}', " ")
        .split_whitespace()
        .collect::<Vec<_>>()
        .join(" ")
}

/// A line that ends in a number followed by a line that starts with a
/// unit: a title wrapped between the two.
pub fn split_unit(texts: &[String]) -> Option<(String, String)> {
    texts.windows(2).find_map(|w| {
        let ends_in_number = w[0].chars().last().is_some_and(|c| c.is_ascii_digit());
        (ends_in_number && starts_with_unit(&w[1])).then(|| (w[0].clone(), w[1].clone()))
    })
}

/// A box `(x0, y0, x1, y1)`, px.
pub type Box4 = (f64, f64, f64, f64);

fn number(n: roxmltree::Node<'_, '_>, name: &str) -> f64 {
    n.attribute(name)
        .and_then(|v| v.parse().ok())
        .unwrap_or(0.0)
}

/// The boxes of every legend frame (a rectangle stroked in the legend
/// frame's colour).
pub fn legend_frames(svg: &str) -> Vec<Box4> {
    let frame = super::theme::css(super::theme::LEGEND_FRAME);
    let doc = roxmltree::Document::parse(svg).expect("well-formed SVG");
    doc.descendants()
        .filter(|n| n.has_tag_name("rect"))
        .filter(|n| {
            n.attribute("stroke")
                .is_some_and(|s| s.eq_ignore_ascii_case(&frame))
        })
        .map(|n| {
            let (x, y) = (number(n, "x"), number(n, "y"));
            (x, y, x + number(n, "width"), y + number(n, "height"))
        })
        .collect()
}

/// The points of every polyline with more than `min_points` points.
pub fn curves(svg: &str, min_points: usize) -> Vec<Vec<(f64, f64)>> {
    let doc = roxmltree::Document::parse(svg).expect("well-formed SVG");
    doc.descendants()
        .filter(|n| n.has_tag_name("polyline"))
        .filter_map(|n| n.attribute("points"))
        .map(|p| {
            p.split_whitespace()
                .filter_map(|xy| xy.split_once(','))
                .filter_map(|(x, y)| Some((x.parse().ok()?, y.parse().ok()?)))
                .collect::<Vec<(f64, f64)>>()
        })
        .filter(|c| c.len() > min_points)
        .collect()
}

/// Whether the curve passes through the box: a point inside it, or a
/// segment crossing it (sampled every half pixel).
pub fn crosses(b: Box4, curve: &[(f64, f64)]) -> bool {
    let inside = |(x, y): (f64, f64)| x >= b.0 && x <= b.2 && y >= b.1 && y <= b.3;
    curve.windows(2).any(|w| {
        let (a, c) = (w[0], w[1]);
        let steps = (((c.0 - a.0).abs() + (c.1 - a.1).abs()) * 2.0)
            .ceil()
            .max(1.0) as usize;
        (0..=steps).any(|i| {
            let t = i as f64 / steps as f64;
            inside((a.0 + t * (c.0 - a.0), a.1 + t * (c.1 - a.1)))
        })
    })
}

/// The longest run of consecutive points of `curve` along its own lowest
/// line on the screen (largest y): a curve drawn flat along a floor.
pub fn run_along_bottom(curve: &[(f64, f64)]) -> usize {
    let bottom = curve.iter().map(|p| p.1).fold(f64::NEG_INFINITY, f64::max);
    let (mut best, mut run) = (0, 0);
    for p in curve {
        run = if p.1 == bottom { run + 1 } else { 0 };
        best = best.max(run);
    }
    best
}
