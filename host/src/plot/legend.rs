//! Legends and remarks drawn beside the plots, never over them: a framed
//! strip of legend entries under a figure's title, and a strip of the
//! report's findings (errors, warnings, notes) at its foot, so what the
//! text report says about a circuit or a filter is on the picture too.

use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::axis::{units_kept, wrap_words};
use super::theme::{rgb, Rgb, BAND, FLAGGED, FONT, LEGEND_FRAME, LINE, RAW};
use super::{Area, DrawFailure};

/// How a legend entry is drawn.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Swatch {
    /// A line of this colour and width, px.
    Line(Rgb, u32),
    /// A dashed line of this colour and width, px.
    Dashed(Rgb, u32),
    /// A filled block of this colour and opacity.
    Block(Rgb, f64),
    /// The mark of a curve leaving the axis ([`mod@super::clip`]).
    Leaves(Rgb),
}

/// One legend entry.
#[derive(Clone, Debug, PartialEq)]
pub struct Entry {
    /// How it is drawn.
    pub swatch: Swatch,
    /// What it says.
    pub label: String,
}

impl Entry {
    /// An entry saying `label` beside `swatch`.
    pub fn new(swatch: Swatch, label: impl Into<String>) -> Self {
        Self {
            swatch,
            label: units_kept(&label.into()),
        }
    }
}

/// The legend entry of the heart band
/// [`super::panel::draw_band_and_marks`] shades.
pub fn band_entry() -> Entry {
    Entry::new(
        Swatch::Block(BAND, 0.3),
        "heart band 0.5-3.7 Hz (30-220 bpm)",
    )
}

/// Width of a swatch and the gap after it, px.
const SWATCH_W: i32 = 30;
/// Gap between entries, px.
const GAP: i32 = 22;
/// Height of one legend row or remark line, px.
pub const ROW_H: u32 = 20;
/// Padding inside a strip's frame, px.
const PAD: i32 = 8;

/// Pixels per character of the label font: plotters writes a font of
/// `size / 1.24` px, and 0.6 of that errs wide for a sans-serif (the SVG
/// carries no font metrics; the Chromium check measures the real thing).
const CHAR_W: f64 = FONT.1 as f64 / 1.24 * 0.6;

/// A generous width of `text` at the label font, px.
fn text_width(text: &str) -> i32 {
    (text.chars().count() as f64 * CHAR_W).ceil() as i32
}

/// Entries per row, laid out left to right within `width` px.
fn rows(entries: &[Entry], width: i32) -> Vec<Vec<&Entry>> {
    let mut rows: Vec<Vec<&Entry>> = Vec::new();
    let mut used = 0;
    for e in entries {
        let w = SWATCH_W + text_width(&e.label) + GAP;
        match rows.last_mut() {
            Some(row) if used + w <= width - 2 * PAD => {
                row.push(e);
                used += w;
            }
            _ => {
                rows.push(vec![e]);
                used = w;
            }
        }
    }
    rows
}

/// Height of the legend strip of `entries` across `width` px.
pub fn legend_height(entries: &[Entry], width: u32) -> u32 {
    let n = rows(entries, width as i32).len() as u32;
    if n == 0 {
        0
    } else {
        n * ROW_H + 2 * PAD as u32 + 6
    }
}

fn draw_swatch(area: &Area<'_>, swatch: Swatch, (x, y): (i32, i32)) -> Result<(), DrawFailure> {
    let ends = [(x, y), (x + 22, y)];
    match swatch {
        Swatch::Line(c, w) => area.draw(&PathElement::new(ends, rgb(c).stroke_width(w)))?,
        Swatch::Dashed(c, w) => {
            for s in [0, 9, 18] {
                let dash = [(x + s, y), (x + (s + 5).min(22), y)];
                area.draw(&PathElement::new(dash, rgb(c).stroke_width(w)))?;
            }
        }
        Swatch::Block(c, alpha) => {
            area.draw(&Rectangle::new(
                [(x, y - 5), (x + 22, y + 5)],
                rgb(c).mix(alpha).filled(),
            ))?;
        }
        Swatch::Leaves(c) => {
            let mark = super::clip::leaving_mark(super::clip::Edge::Below);
            let at: Vec<(i32, i32)> = mark.iter().map(|p| (p.0 + x + 11, p.1 + y + 4)).collect();
            area.draw(&Polygon::new(at, rgb(c).filled()))?;
        }
    }
    Ok(())
}

/// Draw `entries` in a framed strip at the top of `area`, as many rows as
/// they need, and return the area below it.
pub fn legend_strip<'a>(area: &Area<'a>, entries: &[Entry]) -> Result<Area<'a>, DrawFailure> {
    let (w, _) = area.dim_in_pixel();
    let height = legend_height(entries, w);
    if height == 0 {
        return Ok(area.clone());
    }
    let (strip, rest) = area.split_vertically(height);
    let frame = [(PAD, 3), (w as i32 - PAD, height as i32 - 3)];
    strip.draw(&Rectangle::new(frame, rgb(LEGEND_FRAME).stroke_width(1)))?;
    let ink = rgb(LINE);
    let style = TextStyle::from(FONT.into_font())
        .color(&ink)
        .pos(Pos::new(HPos::Left, VPos::Center));
    for (i, row) in rows(entries, w as i32).iter().enumerate() {
        let y = PAD + 3 + ROW_H as i32 * i as i32 + ROW_H as i32 / 2;
        let mut x = 2 * PAD;
        for e in row {
            draw_swatch(&strip, e.swatch, (x, y))?;
            strip.draw_text(&e.label, &style, (x + SWATCH_W, y))?;
            x += SWATCH_W + text_width(&e.label) + GAP;
        }
    }
    Ok(rest)
}

/// How much a remark matters.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Level {
    /// Something is wrong: saturation, a rail crossed.
    Error,
    /// Something needs fixing or checking.
    Warning,
    /// Something was assumed or not checked.
    Note,
}

impl Level {
    fn word(self) -> &'static str {
        match self {
            Self::Error => "error",
            Self::Warning => "warning",
            Self::Note => "note",
        }
    }

    fn colour(self) -> Rgb {
        match self {
            Self::Error | Self::Warning => FLAGGED,
            Self::Note => RAW,
        }
    }
}

/// One of a report's findings, as a figure shows it.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Remark {
    /// How much it matters.
    pub level: Level,
    /// What it says.
    pub text: String,
}

/// Characters of a remark's line at the label font across `width` px.
fn remark_chars(width: u32) -> usize {
    ((width as i32 - 4 * PAD - 80) as f64 / CHAR_W).max(20.0) as usize
}

/// The lines of each remark across `width` px.
fn remark_lines(remarks: &[Remark], width: u32) -> Vec<(Level, Vec<String>)> {
    remarks
        .iter()
        .map(|r| (r.level, wrap_words(&r.text, remark_chars(width))))
        .collect()
}

/// Height of the strip of `remarks` across `width` px (0 for none).
pub fn remarks_height(remarks: &[Remark], width: u32) -> u32 {
    let lines: usize = remark_lines(remarks, width).iter().map(|r| r.1.len()).sum();
    if lines == 0 {
        0
    } else {
        lines as u32 * ROW_H + 2 * PAD as u32 + 6
    }
}

/// Draw `remarks` at the foot of `area`, each with its level in its
/// colour, and return the area above them.
pub fn remarks_strip<'a>(area: &Area<'a>, remarks: &[Remark]) -> Result<Area<'a>, DrawFailure> {
    let (w, h) = area.dim_in_pixel();
    let height = remarks_height(remarks, w);
    if height == 0 {
        return Ok(area.clone());
    }
    let (rest, strip) = area.split_vertically(h.saturating_sub(height));
    let frame = [(PAD, 3), (w as i32 - PAD, height as i32 - 3)];
    strip.draw(&Rectangle::new(frame, rgb(LEGEND_FRAME).stroke_width(1)))?;
    let mut y = PAD + 3 + ROW_H as i32 / 2;
    for (level, lines) in remark_lines(remarks, w) {
        let pos = Pos::new(HPos::Left, VPos::Center);
        let (tint, ink) = (rgb(level.colour()), rgb(LINE));
        let tag = TextStyle::from(FONT.into_font().style(FontStyle::Bold))
            .color(&tint)
            .pos(pos);
        strip.draw_text(level.word(), &tag, (2 * PAD, y))?;
        let body = TextStyle::from(FONT.into_font()).color(&ink).pos(pos);
        for line in lines {
            strip.draw_text(&line, &body, (2 * PAD + 80, y))?;
            y += ROW_H as i32;
        }
    }
    Ok(rest)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::plot::theme::DESIGN;

    #[test]
    fn entries_wrap_into_rows_that_fit() {
        let e = |s: &str| Entry::new(Swatch::Line(DESIGN, 2), s);
        let entries = [e("a fairly long label"), e("another long label"), e("x")];
        assert_eq!(rows(&entries, 2000).len(), 1);
        let narrow = rows(&entries, 300);
        assert_eq!(narrow.len(), 2);
        assert_eq!(narrow[1].len(), 2, "the short one fits after the second");
        assert!(legend_height(&entries, 300) > legend_height(&entries, 2000));
        assert_eq!(legend_height(&[], 300), 0);
        assert_eq!(e("at 200 Hz").label, "at 200\u{a0}Hz");
    }

    #[test]
    fn remarks_take_a_line_each_at_least() {
        let r = |t: &str| Remark {
            level: Level::Warning,
            text: t.to_owned(),
        };
        let long = "word ".repeat(100);
        assert_eq!(remarks_height(&[], 960), 0);
        let one = remarks_height(&[r("short")], 960);
        assert!(remarks_height(&[r("short"), r("short")], 960) == one + ROW_H);
        assert!(remarks_height(&[r(&long)], 960) > one + ROW_H);
    }
}
