//! Text renderings of a report: the Rust `const` block, the response table
//! and the whole human-readable output.

use plethwire_dsp::filter::Biquad;
use std::fmt::Write as _;

use super::report::{FilterReport, ResponseRow, BOARD_STRUCTURE};

/// Words Rust reserves, which cannot name a constant.
const RUST_KEYWORDS: [&str; 52] = [
    "Self", "abstract", "as", "async", "await", "become", "box", "break", "const", "continue",
    "crate", "do", "dyn", "else", "enum", "extern", "false", "final", "fn", "for", "gen", "if",
    "impl", "in", "let", "loop", "macro", "match", "mod", "move", "mut", "override", "priv", "pub",
    "ref", "return", "self", "static", "struct", "super", "trait", "true", "try", "type", "typeof",
    "unsafe", "unsized", "use", "virtual", "where", "while", "yield",
];

/// Check that `name` can name a Rust constant (an identifier that is not a
/// keyword); the error says why not.
pub fn check_const_name(name: &str) -> Result<(), String> {
    let mut chars = name.chars();
    let starts_well = chars
        .next()
        .is_some_and(|c| c.is_ascii_alphabetic() || c == '_');
    if !starts_well || !chars.all(|c| c.is_ascii_alphanumeric() || c == '_') {
        return Err(format!(
            "'{name}' is not a Rust identifier (letters, digits and _, not starting with a digit)"
        ));
    }
    if name == "_" || RUST_KEYWORDS.contains(&name) {
        return Err(format!("'{name}' is reserved in Rust"));
    }
    Ok(())
}

/// Control characters would end the `//` comment early; show them escaped.
fn comment_safe(text: &str) -> String {
    text.chars()
        .map(|c| {
            if c.is_control() {
                c.escape_default().to_string()
            } else {
                c.to_string()
            }
        })
        .collect()
}

/// The sections as Rust source that compiles against plethwire-dsp: a
/// comment quoting `command`, the `use` line, and `pub const NAME`.
/// Coefficients are printed with `{:?}`, which round-trips every `f64`
/// exactly.
pub fn rust_const_block(
    name: &str,
    sections: &[Biquad<f64>],
    summary: &str,
    command: &str,
) -> String {
    let n = sections.len();
    let mut s = String::new();
    // Writing to a String cannot fail.
    let _ = writeln!(s, "// Made by: {}", comment_safe(command));
    let _ = writeln!(s, "use plethwire_dsp::filter::Biquad;");
    let _ = writeln!(s);
    let _ = writeln!(s, "/// {}.", comment_safe(summary));
    let _ = writeln!(
        s,
        "/// Build the board filter with `Design::from_sections(&{name})?.cascade::<Delta, {n}>()`."
    );
    let _ = writeln!(s, "pub const {name}: [Biquad<f64>; {n}] = [");
    for c in sections {
        let _ = writeln!(
            s,
            "    Biquad {{ b0: {:?}, b1: {:?}, b2: {:?}, a1: {:?}, a2: {:?} }},",
            c.b0, c.b1, c.b2, c.a1, c.a2
        );
    }
    s.push_str("];\n");
    s
}

/// `x` with `decimals` places, without the sign of a value that rounds to
/// zero ("-0.0000" reads like a loss).
fn fixed(x: f64, decimals: usize) -> String {
    let s = format!("{x:.decimals$}");
    match s.strip_prefix('-') {
        Some(rest) if rest.chars().all(|c| c == '0' || c == '.') => rest.to_owned(),
        _ => s,
    }
}

/// The response table: per frequency, gain (dB), phase (degrees) and group
/// delay (ms) of the design and of the board's cascade, and how far the
/// board's gain is from the design's.
pub fn response_table(rows: &[ResponseRow]) -> String {
    let mut s = String::new();
    let _ = writeln!(
        s,
        "{:>10} | {:^32} | {:^32} | {:>10}",
        "",
        "design (f64)",
        format!("board ({BOARD_STRUCTURE})"),
        "board gain"
    );
    let _ = writeln!(
        s,
        "{:>10} | {:>10} {:>10} {:>10} | {:>10} {:>10} {:>10} | {:>10}",
        "freq Hz",
        "gain dB",
        "phase deg",
        "delay ms",
        "gain dB",
        "phase deg",
        "delay ms",
        "minus dB"
    );
    // Undefined phase or delay (on a zero of the response) shows as "-".
    let cell =
        |v: Option<f64>, decimals: usize| v.map_or_else(|| "-".to_owned(), |x| fixed(x, decimals));
    for r in rows {
        let (d, b) = (&r.design, &r.board);
        let diff = if d.gain_db.is_finite() || b.gain_db.is_finite() {
            format!("{:.2e}", b.gain_db - d.gain_db)
        } else {
            // Both exactly zero: no difference to speak of.
            "-".to_owned()
        };
        let _ = writeln!(
            s,
            "{:>10} | {:>10} {:>10} {:>10} | {:>10} {:>10} {:>10} | {:>10}",
            r.frequency_hz,
            fixed(d.gain_db, 4),
            cell(d.phase_deg, 2),
            cell(d.group_delay_ms, 3),
            fixed(b.gain_db, 4),
            cell(b.phase_deg, 2),
            cell(b.group_delay_ms, 3),
            diff
        );
    }
    s
}

/// Everything for a person to read: a header line, the `const` block, the
/// sections as JSON, the response table and where the plot went.
pub fn human_report(report: &FilterReport) -> String {
    let json = serde_json::to_string(&report.coefficients)
        .unwrap_or_else(|e| format!("(cannot render the sections as JSON: {e})"));
    let plot = match &report.plot {
        Some(path) => format!("Plot written to {path}"),
        None => "No plot written.".to_owned(),
    };
    format!(
        "Designed {summary}\n\n{code}\nSections as JSON:\n{json}\n\n\
         Response (phase is the sum of each section's principal phase; \
         \"-\" where a zero makes phase and delay undefined):\n{table}\n{plot}\n",
        summary = report.summary,
        code = report.rust_const,
        table = response_table(&report.response),
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::filter_report::ResponsePoint;

    #[test]
    fn const_names_must_be_identifiers() {
        assert!(check_const_name("PULSE_FILTER").is_ok());
        assert!(check_const_name("_BAND2").is_ok());
        for bad in ["", "2FAST", "A-B", "ÄRGER", "_", "Self", "static"] {
            assert!(check_const_name(bad).is_err(), "{bad:?} accepted");
        }
    }

    #[test]
    fn const_block_quotes_every_coefficient_exactly() {
        let c = Biquad {
            b0: 0.1,
            b1: -1e-7,
            b2: 1.0 / 3.0,
            a1: -1.999_999_9,
            a2: 0.0,
        };
        let text = rust_const_block("F", &[c], "a thing", "plethwire filter\n--x");
        assert!(text.starts_with("// Made by: plethwire filter\\n--x\n"));
        assert!(text.contains("pub const F: [Biquad<f64>; 1] = ["));
        assert!(text.contains(
            "Biquad { b0: 0.1, b1: -1e-7, b2: 0.3333333333333333, a1: -1.9999999, a2: 0.0 },"
        ));
    }

    #[test]
    fn fixed_drops_the_sign_of_a_rounded_zero() {
        assert_eq!(fixed(-0.00001, 4), "0.0000");
        assert_eq!(fixed(-0.5, 2), "-0.50");
        assert_eq!(fixed(f64::NEG_INFINITY, 4), "-inf");
    }

    #[test]
    fn table_shows_both_gains_and_their_difference() {
        let p = |g: f64| ResponsePoint {
            gain_db: g,
            phase_deg: g.is_finite().then_some(12.5),
            group_delay_ms: g.is_finite().then_some(3.25),
        };
        let rows = [
            ResponseRow {
                frequency_hz: 2.0,
                design: p(-3.0),
                board: p(-3.001),
            },
            ResponseRow {
                frequency_hz: 50.0,
                design: p(f64::NEG_INFINITY),
                board: p(f64::NEG_INFINITY),
            },
        ];
        let t = response_table(&rows);
        let lines: Vec<&str> = t.lines().collect();
        assert_eq!(lines.len(), 4);
        assert!(lines[2].contains("-3.0000") && lines[2].contains("-3.0010"));
        assert!(lines[2].contains("12.50") && lines[2].contains("3.250"));
        assert!(lines[2].trim_end().ends_with("-1.00e-3"), "{}", lines[2]);
        let cells: Vec<&str> = lines[3].split_whitespace().collect();
        assert_eq!(
            cells,
            ["50", "|", "-inf", "-", "-", "|", "-inf", "-", "-", "|", "-"]
        );
    }
}
