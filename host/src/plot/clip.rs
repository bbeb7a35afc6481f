//! Curves that leave the axis: drawn up to the edge and broken there,
//! with a mark pointing the way the curve went, never flattened into a
//! line along the edge that would read like a real floor or ceiling.

use plotters::element::{EmptyElement, Polygon};
use plotters::prelude::*;

use super::panel::LogPanelChart;
use super::theme::{rgb, Rgb};
use super::DrawFailure;

/// Which edge of the y axis a curve leaves by.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Edge {
    /// Below the axis's lower end.
    Below,
    /// Above its upper end.
    Above,
}

/// A curve cut to a y range.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Clipped {
    /// The pieces inside the range, each ending on the edge where the
    /// curve leaves it (interpolated between the neighbouring points).
    pub runs: Vec<Vec<(f64, f64)>>,
    /// Where the curve leaves or comes back: `x` on the edge.
    pub crossings: Vec<(f64, Edge)>,
}

impl Clipped {
    /// Whether any part of the curve lies outside the range.
    pub fn leaves(&self) -> bool {
        !self.crossings.is_empty()
    }
}

fn edge_of(y: f64, (lo, hi): (f64, f64)) -> Option<Edge> {
    if y < lo {
        Some(Edge::Below)
    } else if y > hi {
        Some(Edge::Above)
    } else {
        None
    }
}

/// Where the segment from `inside` to `outside` meets `edge` of `y`. A
/// non-finite outside value (a zero of the response, −∞ dB) is met at its
/// own x: the curve falls to it there.
fn crossing(inside: (f64, f64), outside: (f64, f64), edge: Edge, y: (f64, f64)) -> (f64, f64) {
    let at = if edge == Edge::Below { y.0 } else { y.1 };
    if !outside.1.is_finite() {
        return (outside.0, at);
    }
    let t = (at - inside.1) / (outside.1 - inside.1);
    (inside.0 + t * (outside.0 - inside.0), at)
}

/// Cut `points` (x ascending; NaN values are gaps) to the y range `y`.
pub fn clip(points: &[(f64, f64)], y: (f64, f64)) -> Clipped {
    let mut out = Clipped::default();
    let mut run: Vec<(f64, f64)> = Vec::new();
    let mut previous: Option<(f64, f64)> = None;
    for &p in points {
        if p.1.is_nan() {
            out.runs
                .extend((!run.is_empty()).then(|| std::mem::take(&mut run)));
            previous = None;
            continue;
        }
        let (was, now) = (previous.map(|q| edge_of(q.1, y)), edge_of(p.1, y));
        match (was, now) {
            // Coming back in: start a run on the edge.
            (Some(Some(edge)), None) => {
                let at = crossing(p, previous.unwrap_or(p), edge, y);
                out.crossings.push((at.0, edge));
                run.push(at);
            }
            // Leaving: end the run on the edge.
            (Some(None), Some(edge)) => {
                let at = crossing(previous.unwrap_or(p), p, edge, y);
                out.crossings.push((at.0, edge));
                run.push(at);
                out.runs.push(std::mem::take(&mut run));
            }
            _ => {}
        }
        if now.is_none() {
            run.push(p);
        }
        previous = Some(p);
    }
    out.runs.extend((!run.is_empty()).then_some(run));
    // A curve wholly off the axis is marked where it starts, so it is not
    // silently missing.
    if out.runs.is_empty() {
        if let Some(&(x, v)) = points.iter().find(|p| !p.1.is_nan()) {
            out.crossings.extend(edge_of(v, y).map(|e| (x, e)));
        }
    }
    out
}

/// The mark of a curve leaving the axis by `edge`, its point at the
/// origin: a small triangle pointing out of the plot, in pixel offsets.
pub fn leaving_mark(edge: Edge) -> Vec<(i32, i32)> {
    let base = if edge == Edge::Below { -8 } else { 8 };
    vec![(-5, base), (5, base), (0, 0)]
}

/// Draw `points` on `chart` cut to the range `y`: solid, or dashed with
/// `(dash, gap)` px, in `style`; a triangle of `colour` on the edge where
/// the curve leaves or comes back. Returns whether it left the axis.
pub fn draw_clipped(
    chart: &mut LogPanelChart<'_, '_>,
    points: &[(f64, f64)],
    y: (f64, f64),
    (style, colour): (ShapeStyle, Rgb),
    dashed: Option<(u32, u32)>,
) -> Result<bool, DrawFailure> {
    let cut = clip(points, y);
    for run in &cut.runs {
        match dashed {
            Some((dash, gap)) => {
                chart.draw_series(DashedLineSeries::new(run.clone(), dash, gap, style))?;
            }
            None => {
                chart.draw_series(LineSeries::new(run.clone(), style))?;
            }
        }
    }
    chart.draw_series(cut.crossings.iter().map(|&(x, edge)| {
        let at = (x, if edge == Edge::Below { y.0 } else { y.1 });
        EmptyElement::at(at) + Polygon::new(leaving_mark(edge), rgb(colour).filled())
    }))?;
    Ok(cut.leaves())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_curve_is_broken_where_it_leaves_and_comes_back() {
        let pts = [(0.0, 0.0), (1.0, -20.0), (2.0, -100.0), (3.0, -20.0)];
        let c = clip(&pts, (-60.0, 5.0));
        assert_eq!(c.runs.len(), 2);
        assert_eq!(c.runs[0], vec![(0.0, 0.0), (1.0, -20.0), (1.5, -60.0)]);
        assert_eq!(c.runs[1], vec![(2.5, -60.0), (3.0, -20.0)]);
        assert_eq!(c.crossings, vec![(1.5, Edge::Below), (2.5, Edge::Below)]);
        // Nothing is ever drawn along the edge.
        for run in &c.runs {
            let on_edge = run.iter().filter(|p| p.1 == -60.0).count();
            assert!(on_edge <= 1, "{run:?}");
        }
    }

    #[test]
    fn a_zero_of_the_response_is_met_at_its_own_frequency() {
        let pts = [(49.0, -40.0), (50.0, f64::NEG_INFINITY), (51.0, -40.0)];
        let c = clip(&pts, (-100.0, 5.0));
        assert_eq!(c.runs[0].last(), Some(&(50.0, -100.0)));
        assert_eq!(c.runs[1].first(), Some(&(50.0, -100.0)));
        assert!(c.leaves());
    }

    #[test]
    fn curves_inside_are_untouched_and_outside_starts_are_marked() {
        let pts = [(0.0, 1.0), (1.0, 2.0)];
        assert_eq!(clip(&pts, (0.0, 3.0)).runs, vec![pts.to_vec()]);
        assert!(!clip(&pts, (0.0, 3.0)).leaves());
        let c = clip(&[(0.0, 9.0), (1.0, 1.0)], (0.0, 3.0));
        assert_eq!(c.crossings, vec![(0.75, Edge::Above)]);
        assert_eq!(c.runs, vec![vec![(0.75, 3.0), (1.0, 1.0)]]);
        let off = clip(&[(0.0, -9.0), (1.0, -8.0)], (0.0, 3.0));
        assert!(off.runs.is_empty());
        assert_eq!(off.crossings, vec![(0.0, Edge::Below)]);
    }
}
