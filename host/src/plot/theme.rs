//! The one palette and the fonts of every figure: the filter and front-end
//! plots, the report's charts and the page's legends, so a colour means the
//! same thing everywhere.

use plotters::style::RGBColor;

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
/// Smoothed heart rate, the report's filter response.
pub const LINE: Rgb = (34, 44, 58);
/// Guides: identity line, thresholds, band edges, corner frequencies.
pub const GUIDE: Rgb = (150, 150, 150);
/// The record's own heart-rate range on the report's response plot.
pub const HEART: Rgb = (226, 160, 60);
/// The first curve of a comparison: the `f64` design, the analog chain.
pub const DESIGN: Rgb = (22, 92, 125);
/// The second curve of a comparison: the board's cascade, analog plus
/// digital.
pub const BOARD: Rgb = (214, 96, 38);
/// The heart band 0.5-3.7 Hz and the limits drawn against it.
pub const BAND: Rgb = (232, 70, 95);
/// Figure background.
pub const PAPER: Rgb = (255, 255, 255);
/// The frame of a legend box.
pub const LEGEND_FRAME: Rgb = (200, 200, 200);
/// Mesh lines at labelled ticks.
pub const MESH_BOLD: Rgb = (222, 222, 222);
/// Mesh lines between labelled ticks.
pub const MESH_LIGHT: Rgb = (244, 244, 244);

/// Width of every figure, px (a page scales it down to fit).
pub const WIDTH: u32 = 960;

/// The axis label font of the report's figures.
pub const FONT: (&str, u32) = ("sans-serif", 14);
/// A panel's caption.
pub const CAPTION_FONT: (&str, u32) = ("sans-serif", 17);
/// A figure's title.
pub const TITLE_FONT: (&str, u32) = ("sans-serif", 19);

/// The colour for plotters.
pub fn rgb(c: Rgb) -> RGBColor {
    RGBColor(c.0, c.1, c.2)
}

/// The colour as CSS `#rrggbb`.
pub fn css(c: Rgb) -> String {
    format!("#{:02x}{:02x}{:02x}", c.0, c.1, c.2)
}

/// The mesh style every figure shares, bold and light.
pub fn mesh_colours() -> (RGBColor, RGBColor) {
    (rgb(MESH_BOLD), rgb(MESH_LIGHT))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn css_is_lower_case_hex() {
        assert_eq!(css(GOOD), "#187a6e");
        assert_eq!(css(PAPER), "#ffffff");
    }
}
