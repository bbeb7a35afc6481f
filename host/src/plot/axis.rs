//! Axes: value ranges, tick labels (numbers and frequencies) and titles
//! wrapped to the figure's width.

/// `v` to `decimals` places, without the sign of a value that rounds to
/// zero (-0.004 to two places is 0.00, not -0.00, which reads like a loss).
pub fn fixed(v: f64, decimals: usize) -> String {
    let shown = format!("{v:.decimals$}");
    match shown.strip_prefix('-') {
        Some(rest) if rest.chars().all(|c| c == '0' || c == '.') => rest.to_owned(),
        _ => shown,
    }
}

/// Frequency tick labels without trailing zeros: 0.01, 0.5, 20.
pub fn hz_label(f: &f64) -> String {
    let s = format!("{f:.3}");
    s.trim_end_matches('0').trim_end_matches('.').to_owned()
}

/// Value tick labels with as many decimals as the axis span needs
/// (roughly two significant digits of the span, none from 20 up).
pub fn ticks(span: f64) -> impl Fn(&f64) -> String {
    let decimals = if span >= 20.0 {
        0
    } else {
        (1.0 - span.log10().floor()).clamp(0.0, 6.0) as usize
    };
    move |v| fixed(*v, decimals)
}

/// A range covering every finite value with `pad` of its span on either
/// side (at least a thousandth of the largest magnitude, so a flat curve
/// gets an axis), never empty; `fallback` when there are no values.
pub fn range_of(values: impl Iterator<Item = f64>, pad: f64, fallback: (f64, f64)) -> (f64, f64) {
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    for v in values.filter(|v| v.is_finite()) {
        lo = lo.min(v);
        hi = hi.max(v);
    }
    if !(lo.is_finite() && hi.is_finite()) {
        return fallback;
    }
    let room = (pad * (hi - lo))
        .max(1e-3 * hi.abs().max(lo.abs()))
        .max(1e-6);
    (lo - room, hi + room)
}

/// Units that stay on the line of the number before them.
const UNITS: [&str; 27] = [
    "Hz", "kHz", "mHz", "MHz", "dB", "V", "mV", "µV", "A", "mA", "µA", "nA", "pA", "s", "ms", "µs",
    "min", "bpm", "%", "°", "Ω", "kΩ", "MΩ", "F", "µF", "nF", "pF",
];

/// Whether `rest` (the text after a space) starts with one of [`UNITS`]
/// as a whole word.
pub(crate) fn starts_with_unit(rest: &str) -> bool {
    let word: String = rest
        .chars()
        .take_while(|c| c.is_alphabetic() || matches!(c, '%' | '°'))
        .collect();
    // "%" and "°" stand alone even with letters after them ("%good").
    let word = match word.chars().next() {
        Some(c @ ('%' | '°')) => c.to_string(),
        _ => word,
    };
    UNITS.contains(&word.as_str())
}

/// `text` with each plain space between a number and its unit made a
/// no-break space (U+00A0), so neither a title's wrapping nor a browser
/// can put them on different lines: "at 250 Hz", "−23 V/µA", "12 s".
/// Only the text counts, so the space after `<span>4.0</span>` in markup
/// is kept together with its `s` too; tags are copied as they are and the
/// insides of `<style>` are left alone.
pub fn units_kept(text: &str) -> String {
    let mut out = String::with_capacity(text.len() + 16);
    let mut last_text_char: Option<char> = None;
    let mut in_tag = false;
    let mut in_style = false;
    for (i, c) in text.char_indices() {
        if in_tag {
            in_tag = c != '>';
            out.push(c);
            continue;
        }
        match c {
            '<' => {
                in_tag = true;
                let tag = &text[i..];
                if tag.starts_with("<style") {
                    in_style = true;
                } else if tag.starts_with("</style") {
                    in_style = false;
                }
                out.push(c);
            }
            ' ' if !in_style
                && last_text_char.is_some_and(|p| p.is_ascii_digit())
                && starts_with_unit(text_after_tags(&text[i + 1..])) =>
            {
                out.push('\u{a0}');
                last_text_char = Some('\u{a0}');
            }
            _ => {
                out.push(c);
                last_text_char = Some(c);
            }
        }
    }
    out
}

/// `s` from its first character outside a tag on.
fn text_after_tags(mut s: &str) -> &str {
    while let Some(rest) = s.strip_prefix('<') {
        s = rest.split_once('>').map_or("", |(_, after)| after);
    }
    s
}

/// Words of `text` in lines of at most `width` characters (a longer word
/// gets a line of its own). Only plain spaces break a line: a number and
/// its unit ([`units_kept`]) stay together.
pub fn wrap_words(text: &str, width: usize) -> Vec<String> {
    let mut lines: Vec<String> = Vec::new();
    let kept = units_kept(text);
    for word in kept.split([' ', '\t', '\n']).filter(|w| !w.is_empty()) {
        match lines.last_mut() {
            Some(line) if line.chars().count() + 1 + word.chars().count() <= width => {
                line.push(' ');
                line.push_str(word);
            }
            _ => lines.push(word.to_owned()),
        }
    }
    lines
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rounded_zeros_lose_their_sign() {
        assert_eq!(fixed(-0.00001, 4), "0.0000");
        assert_eq!(fixed(-0.5, 2), "-0.50");
        assert_eq!(fixed(f64::NEG_INFINITY, 4), "-inf");
    }

    #[test]
    fn labels_fit_the_span() {
        assert_eq!(ticks(105.0)(&-40.0), "-40");
        assert_eq!(ticks(100.0)(&12.3), "12");
        assert_eq!(ticks(0.5)(&0.25), "0.25");
        assert_eq!(ticks(0.5)(&-1e-9), "0.00");
        assert_eq!(ticks(3.0)(&-0.0), "0.0");
        assert_eq!(hz_label(&0.5), "0.5");
        assert_eq!(hz_label(&20.0), "20");
        assert_eq!(hz_label(&0.0125), "0.013");
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
        let (lo, _) = range_of([2.0, 3.0, 0.0].into_iter(), 0.06, (0.0, 1.0));
        assert!(lo < 0.0);
    }

    #[test]
    fn long_titles_wrap_at_spaces() {
        assert_eq!(wrap_words("a bb ccc", 4), ["a bb", "ccc"]);
        assert_eq!(wrap_words("abcdef g", 3), ["abcdef", "g"]);
        assert_eq!(wrap_words("short", 90), ["short"]);
    }

    #[test]
    fn a_number_and_its_unit_stay_on_one_line() {
        assert_eq!(
            wrap_words("notch 50 Hz (Q 30) at 250 Hz", 26),
            ["notch 50\u{a0}Hz (Q 30) at", "250\u{a0}Hz"]
        );
        assert_eq!(
            wrap_words("mid-band -23 V/µA; digital", 13),
            ["mid-band", "-23\u{a0}V/µA;", "digital"]
        );
        assert_eq!(
            units_kept("12 s of 3 beats, 5 %"),
            "12\u{a0}s of 3 beats, 5\u{a0}%"
        );
        assert_eq!(units_kept("2 seconds"), "2 seconds");
    }

    #[test]
    fn markup_keeps_its_tags_and_style() {
        let page = r#"<style>a { margin: 0 0 2px; } p { x: 1 s; }</style><p><span v="1 s">4.0</span> <small>ms</small></p>"#;
        let kept = units_kept(page);
        assert!(kept.starts_with(r#"<style>a { margin: 0 0 2px; } p { x: 1 s; }</style>"#));
        assert!(
            kept.ends_with("<span v=\"1 s\">4.0</span>\u{a0}<small>ms</small></p>"),
            "{kept}"
        );
    }
}
