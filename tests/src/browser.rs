//! Pictures as a browser draws them: pages and SVG figures loaded in
//! headless Chromium (Debian's `chromium`), measured through the DOM by a
//! small script of our own (`browser/measure.js`, read back with
//! `--dump-dom`), screenshot with `--screenshot`, and checked for legends
//! over curves, text outside its figure and numbers parted from their
//! units. No driver library: Chromium's own command line does it all.

use serde::Deserialize;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::sync::OnceLock;
use std::time::Duration;

/// A box `[left, top, right, bottom]` in page pixels.
pub type Box4 = [f64; 4];

/// One `<text>` of a figure.
#[derive(Clone, Debug, Deserialize)]
pub struct Text {
    /// Its content, trimmed.
    pub text: String,
    /// Where it is drawn.
    #[serde(rename = "box")]
    pub at: Box4,
}

/// One SVG figure as drawn.
#[derive(Clone, Debug, Deserialize)]
pub struct Figure {
    /// The figure's box.
    #[serde(rename = "box")]
    pub at: Box4,
    /// Its texts in document order.
    pub texts: Vec<Text>,
    /// Its legend frames (rectangles stroked in the legend frame's colour).
    pub frames: Vec<Box4>,
    /// Its curves (polylines of three points or more), page pixels.
    pub curves: Vec<Vec<[f64; 2]>>,
}

/// What the script measured on one page.
#[derive(Clone, Debug, Deserialize)]
pub struct Measured {
    /// Every SVG figure (not the legend swatches of a page).
    pub figures: Vec<Figure>,
    /// The boxes of a page's HTML legends (`ul.legend`).
    pub legends: Vec<Box4>,
    /// The text of each paragraph, list item, table cell, heading, link.
    pub prose: Vec<String>,
}

/// The Chromium binary: `PLETHWIRE_CHROMIUM`, else `chromium` or
/// `chromium-browser` from `PATH`, if it answers `--version`.
pub fn chromium() -> Option<PathBuf> {
    static FOUND: OnceLock<Option<PathBuf>> = OnceLock::new();
    FOUND
        .get_or_init(|| {
            let candidates = std::env::var_os("PLETHWIRE_CHROMIUM")
                .into_iter()
                .chain(["chromium".into(), "chromium-browser".into()]);
            candidates.map(PathBuf::from).find(|exe| {
                Command::new(exe)
                    .arg("--version")
                    .stdin(Stdio::null())
                    .stdout(Stdio::null())
                    .stderr(Stdio::null())
                    .status()
                    .is_ok_and(|s| s.success())
            })
        })
        .clone()
}

/// `svg` alone on a page.
pub fn page_of_svg(svg: &str) -> String {
    format!(
        "<!DOCTYPE html>\n<html><head><meta charset=\"utf-8\"/></head>\
         <body style=\"margin:0\">{svg}</body></html>\n"
    )
}

/// `html` with the measuring script run at the end of its body.
pub fn with_measuring(html: &str) -> String {
    let script = format!("<script>{}</script>", include_str!("browser/measure.js"));
    match html.rfind("</body>") {
        Some(at) => format!("{}{script}{}", &html[..at], &html[at..]),
        None => format!("{html}{script}"),
    }
}

/// Run Chromium headless on `page` with `args`; its stdout. Panics when
/// it fails or takes over a minute.
fn run(exe: &Path, page: &Path, args: &[String]) -> String {
    // A profile of its own beside the page: no lock shared with another
    // run or a desktop Chromium.
    let profile = page.with_extension("profile");
    let mut child = Command::new(exe)
        .args([
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--hide-scrollbars",
        ])
        .arg(format!("--user-data-dir={}", profile.display()))
        .args(args)
        .arg(format!("file://{}", page.display()))
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap_or_else(|e| panic!("start {}: {e}", exe.display()));
    let stdout = super::drain(child.stdout.take().expect("piped stdout"));
    let stderr = super::drain(child.stderr.take().expect("piped stderr"));
    let Some(status) = super::wait_with_deadline(&mut child, Duration::from_secs(60)) else {
        let _ = child.kill();
        let _ = child.wait();
        panic!("chromium did not finish {} within 60 s", page.display());
    };
    let (out, err) = (super::join_text(stdout), super::join_text(stderr));
    assert!(
        status.success(),
        "chromium failed ({status}) on {}:\n{err}",
        page.display()
    );
    out
}

/// Load `html` (written to `dir/name.html`) at `width` px and return what
/// the measuring script found.
pub fn measure(exe: &Path, dir: &Path, name: &str, html: &str, width: u32) -> Measured {
    let page = dir.join(format!("{name}.html"));
    std::fs::write(&page, with_measuring(html)).expect("write the page");
    let dom = run(
        exe,
        &page,
        &[format!("--window-size={width},1000"), "--dump-dom".into()],
    );
    let start = r#"<pre id="plethwire-measure">"#;
    let body = dom
        .split(start)
        .nth(1)
        .and_then(|rest| rest.split('<').next())
        .unwrap_or_else(|| panic!("{name}: the script wrote no measurements"));
    serde_json::from_str(&percent_decoded(body))
        .unwrap_or_else(|e| panic!("{name}: measurements are not the JSON expected: {e}"))
}

/// Screenshot `html` (written to `dir/name.html`) at `size` px into
/// `dir/name.png`; its path.
pub fn screenshot(exe: &Path, dir: &Path, name: &str, html: &str, size: (u32, u32)) -> PathBuf {
    let page = dir.join(format!("{name}.html"));
    std::fs::write(&page, html).expect("write the page");
    let png = dir.join(format!("{name}.png"));
    run(
        exe,
        &page,
        &[
            format!("--window-size={},{}", size.0, size.1),
            format!("--screenshot={}", png.display()),
        ],
    );
    let bytes = std::fs::read(&png).unwrap_or_else(|e| panic!("no {}: {e}", png.display()));
    assert!(bytes.starts_with(b"\x89PNG"), "{} is no PNG", png.display());
    png
}

/// `text` with `%XX` escapes (as `encodeURIComponent` writes) decoded.
fn percent_decoded(text: &str) -> String {
    let bytes = text.trim().as_bytes();
    let mut out = Vec::with_capacity(bytes.len());
    let mut i = 0;
    while i < bytes.len() {
        let hex = bytes
            .get(i + 1..i + 3)
            .and_then(|h| std::str::from_utf8(h).ok());
        match (bytes[i], hex.and_then(|h| u8::from_str_radix(h, 16).ok())) {
            (b'%', Some(b)) => {
                out.push(b);
                i += 3;
            }
            (b, _) => {
                out.push(b);
                i += 1;
            }
        }
    }
    String::from_utf8_lossy(&out).into_owned()
}

/// Whether `curve` passes through `b`: a point inside it or a segment
/// crossing it (sampled every half pixel).
pub fn crosses(b: Box4, curve: &[[f64; 2]]) -> bool {
    let inside = |x: f64, y: f64| x >= b[0] && x <= b[2] && y >= b[1] && y <= b[3];
    curve.windows(2).any(|w| {
        let ([x0, y0], [x1, y1]) = (w[0], w[1]);
        let steps = (((x1 - x0).abs() + (y1 - y0).abs()) * 2.0).ceil().max(1.0) as usize;
        (0..=steps).any(|i| {
            let t = i as f64 / steps as f64;
            inside(x0 + t * (x1 - x0), y0 + t * (y1 - y0))
        })
    })
}

/// Whether `inner` lies within `outer`, give or take half a pixel.
pub fn within(inner: Box4, outer: Box4) -> bool {
    inner[0] >= outer[0] - 0.5
        && inner[1] >= outer[1] - 0.5
        && inner[2] <= outer[2] + 0.5
        && inner[3] <= outer[3] + 0.5
}

/// Units a line must not be broken before.
const UNITS: [&str; 12] = [
    "Hz", "dB", "ms", "s", "bpm", "%", "V", "µA", "mA", "min", "mV", "°",
];

fn unit_word(rest: &str) -> bool {
    let word: String = rest
        .chars()
        .take_while(|c| c.is_alphabetic() || matches!(c, '%' | '°'))
        .collect();
    let word = match word.chars().next() {
        Some(c @ ('%' | '°')) => c.to_string(),
        _ => word,
    };
    UNITS.contains(&word.as_str())
}

/// A number followed by its unit after a breakable space, if `text` has
/// one (a no-break space, U+00A0, is what keeps them together).
pub fn breakable_unit(text: &str) -> Option<String> {
    text.char_indices().find_map(|(i, c)| {
        let before = text[..i].chars().last();
        let parted =
            c.is_whitespace() && c != '\u{a0}' && before.is_some_and(|b| b.is_ascii_digit());
        let rest = &text[i + c.len_utf8()..];
        (parted && unit_word(rest.trim_start())).then(|| {
            let from = text[..i].char_indices().rev().nth(8).map_or(0, |(j, _)| j);
            text[from..].chars().take(20).collect()
        })
    })
}

/// Two text lines of a figure where the first ends in a number and the
/// second starts with a unit: a title wrapped between them.
pub fn split_between_lines(texts: &[Text]) -> Option<(String, String)> {
    texts.windows(2).find_map(|w| {
        let number_last = w[0].text.chars().last().is_some_and(|c| c.is_ascii_digit());
        (number_last && unit_word(&w[1].text)).then(|| (w[0].text.clone(), w[1].text.clone()))
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn escapes_and_units_are_read_right() {
        assert_eq!(
            percent_decoded("%7B%22a%22%3A%22%C2%B5%22%7D"),
            r#"{"a":"µ"}"#
        );
        assert_eq!(
            breakable_unit("at 250 Hz now").as_deref(),
            Some("at 250 Hz now")
        );
        assert_eq!(breakable_unit("at 250\u{a0}Hz"), None);
        assert_eq!(breakable_unit("2 seconds, 3 beats"), None);
        let t = |s: &str| Text {
            text: s.into(),
            at: [0.0; 4],
        };
        assert!(split_between_lines(&[t("at 250"), t("Hz")]).is_some());
        assert!(split_between_lines(&[t("at 250\u{a0}Hz"), t("next")]).is_none());
        assert!(crosses([0.0, 0.0, 10.0, 10.0], &[[-5.0, 5.0], [15.0, 5.0]]));
        assert!(!crosses(
            [0.0, 0.0, 10.0, 10.0],
            &[[-5.0, 15.0], [15.0, 15.0]]
        ));
    }
}
