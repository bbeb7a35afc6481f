//! Markup pieces of the page: escaping, marked figures, legends and the
//! style sheet. Everything is written so it parses as XML too (closed
//! empty elements, only the five XML entities), which lets the tests read
//! the page back with a strict parser.

use crate::plot::{css, fixed, Rgb};
use std::fmt::Write as _;

/// Text made safe for element content and attribute values.
pub fn escape(text: &str) -> String {
    let mut s = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => s.push_str("&amp;"),
            '<' => s.push_str("&lt;"),
            '>' => s.push_str("&gt;"),
            '"' => s.push_str("&quot;"),
            '\'' => s.push_str("&#39;"),
            // Control characters are not allowed in XML text at all.
            c if c.is_control() && c != '\n' && c != '\t' => s.push('\u{FFFD}'),
            c => s.push(c),
        }
    }
    s
}

/// A number as the page shows it: `decimals` places, marked with its
/// figure name and its exact value (`data-value`, empty when there is
/// none) so a program can read the page back.
pub fn fig(name: &str, value: Option<f64>, decimals: usize) -> String {
    match value.filter(|v| v.is_finite()) {
        Some(v) => {
            let shown = fixed(v, decimals);
            format!(r#"<span class="fig" data-figure="{name}" data-value="{v}">{shown}</span>"#)
        }
        None => format!(r#"<span class="fig none" data-figure="{name}" data-value="">–</span>"#),
    }
}

/// A count, marked as [`fig`] does.
pub fn count(name: &str, value: Option<usize>) -> String {
    fig(name, value.map(|v| v as f64), 0)
}

/// How a legend entry is drawn.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Mark {
    /// A filled dot.
    Dot,
    /// A cross.
    Cross,
    /// A line.
    Line,
    /// A dashed line.
    Dashed,
    /// A filled triangle.
    Triangle,
    /// A filled block (a span or band).
    Block,
    /// A triangle pointing down: where a curve leaves the axis below.
    Leaves,
}

fn swatch(mark: Mark, c: Rgb) -> String {
    let c = css(c);
    let shape = match mark {
        Mark::Dot => format!(r#"<circle cx="8" cy="8" r="4" fill="{c}"/>"#),
        Mark::Cross => {
            format!(r#"<path d="M3 3L13 13M13 3L3 13" stroke="{c}" stroke-width="2" fill="none"/>"#)
        }
        Mark::Line => format!(r#"<path d="M1 8H15" stroke="{c}" stroke-width="2.5"/>"#),
        Mark::Dashed => {
            format!(r#"<path d="M1 8H15" stroke="{c}" stroke-width="1.5" stroke-dasharray="3 2"/>"#)
        }
        Mark::Triangle => format!(r#"<path d="M3 13L8 3L13 13Z" fill="{c}"/>"#),
        Mark::Block => format!(r#"<rect x="1" y="3" width="14" height="10" fill="{c}"/>"#),
        Mark::Leaves => format!(r#"<path d="M3 4L13 4L8 12Z" fill="{c}"/>"#),
    };
    format!(
        r#"<svg class="swatch" width="16" height="16" viewBox="0 0 16 16" aria-hidden="true">{shape}</svg>"#
    )
}

/// A legend: one entry per `(mark, colour, text)`.
pub fn legend(entries: &[(Mark, Rgb, &str)]) -> String {
    let mut s = String::from(r#"<ul class="legend">"#);
    for (mark, colour, text) in entries {
        let _ = write!(s, "<li>{}{}</li>", swatch(*mark, *colour), escape(text));
    }
    s.push_str("</ul>");
    s
}

/// A table of `(label, value markup)` rows; labels are escaped, values are
/// markup already.
pub fn table(rows: &[(&str, String)]) -> String {
    let mut s = String::from(r#"<table class="figures"><tbody>"#);
    for (label, value) in rows {
        let _ = write!(
            s,
            "<tr><th scope=\"row\">{}</th><td>{value}</td></tr>",
            escape(label)
        );
    }
    s.push_str("</tbody></table>");
    s
}

/// The page's style sheet.
pub const STYLE: &str = r#"
:root { --ink: #1f2a36; --muted: #5b6675; --paper: #f7f6f2; --card: #ffffff; --rule: #dcd9d0; --accent: #187a6e; }
* { box-sizing: border-box; }
body { margin: 0; background: var(--paper); color: var(--ink); font: 15px/1.5 system-ui, -apple-system, "Segoe UI", sans-serif; }
header, main, footer { max-width: 1040px; margin: 0 auto; padding: 0 24px; }
header { padding-top: 28px; }
h1 { font-size: 26px; margin: 0 0 2px; letter-spacing: 0.01em; }
h1 .tool { font-weight: 400; color: var(--muted); font-size: 17px; margin-left: 10px; }
h2 { font-size: 19px; margin: 0 0 6px; }
.sub { color: var(--muted); margin: 0 0 16px; }
.cards { display: grid; grid-template-columns: repeat(auto-fill, minmax(180px, 1fr)); gap: 10px; margin: 0 0 14px; padding: 0; }
.cards div { background: var(--card); border: 1px solid var(--rule); border-left: 4px solid var(--accent); border-radius: 4px; padding: 8px 12px; }
.cards dt { color: var(--muted); font-size: 12.5px; }
.cards dd { margin: 0; font-size: 20px; font-weight: 600; }
.cards dd small { font-size: 13px; font-weight: 400; color: var(--muted); }
nav { font-size: 13.5px; color: var(--muted); margin-bottom: 8px; }
nav a { color: var(--accent); margin-right: 12px; text-decoration: none; }
section { background: var(--card); border: 1px solid var(--rule); border-radius: 4px; padding: 16px 20px; margin: 16px 0; }
section p { margin: 4px 0 10px; }
.note { color: var(--muted); font-size: 13.5px; }
figure { margin: 8px 0; }
figure svg { display: block; width: 100%; height: auto; max-width: 960px; }
figure.square { flex: 0 1 560px; }
figure.square svg { max-width: 560px; }
.row > div { flex: 1 1 280px; }
.legend { list-style: none; padding: 0; margin: 4px 0; display: flex; flex-wrap: wrap; gap: 4px 18px; font-size: 13.5px; }
.legend li { display: flex; align-items: center; gap: 6px; }
.swatch { flex: none; }
.row { display: flex; flex-wrap: wrap; gap: 10px 28px; align-items: flex-start; }
table.figures { border-collapse: collapse; font-size: 14.5px; }
table.figures th { text-align: left; font-weight: 400; color: var(--muted); padding: 3px 18px 3px 0; }
table.figures td { padding: 3px 0; font-variant-numeric: tabular-nums; }
.fig { font-variant-numeric: tabular-nums; }
footer { padding-bottom: 32px; font-size: 13.5px; color: var(--muted); }
footer strong { color: var(--ink); }
"#;

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn text_is_escaped_for_content_and_attributes() {
        assert_eq!(escape(r#"a<b>&"c'"#), "a&lt;b&gt;&amp;&quot;c&#39;");
        assert_eq!(escape("bell\u{7}"), "bell\u{FFFD}");
    }

    #[test]
    fn figures_carry_their_exact_value() {
        assert_eq!(
            fig("sdnn_ms", Some(21.934), 1),
            r#"<span class="fig" data-figure="sdnn_ms" data-value="21.934">21.9</span>"#
        );
        assert!(fig("x", None, 1).contains(r#"data-value="""#));
        assert!(fig("x", Some(f64::NAN), 1).contains(r#"data-value="""#));
        assert!(fig("x", Some(-0.0), 1).ends_with(">0.0</span>"));
        assert!(fig("x", Some(-0.004), 2).ends_with(">0.00</span>"));
        assert!(fig("x", Some(-0.006), 2).ends_with(">-0.01</span>"));
        assert_eq!(
            count("beats", Some(816)),
            r#"<span class="fig" data-figure="beats" data-value="816">816</span>"#
        );
    }

    #[test]
    fn legends_and_tables_parse_as_xml() {
        let l = legend(&[
            (Mark::Dot, (1, 2, 3), "good <beat>"),
            (Mark::Cross, (4, 5, 6), "x"),
        ]);
        roxmltree::Document::parse(&l).unwrap();
        let t = table(&[("a & b", "1".into())]);
        roxmltree::Document::parse(&t).unwrap();
    }
}
