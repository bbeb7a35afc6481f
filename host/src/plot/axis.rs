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

/// Words of `text` in lines of at most `width` characters (a longer word
/// gets a line of its own).
pub fn wrap_words(text: &str, width: usize) -> Vec<String> {
    let mut lines: Vec<String> = Vec::new();
    for word in text.split_whitespace() {
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
}
