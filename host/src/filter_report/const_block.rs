//! The designed sections as a Rust `const` block that compiles against
//! plethwire-dsp, and the check of the constant's name.

use plethwire_dsp::filter::Biquad;
use std::fmt::Write as _;

/// Words Rust reserves, which cannot name a constant.
const RUST_KEYWORDS: [&str; 52] = [
    "Self", "abstract", "as", "async", "await", "become", "box", "break", "const", "continue",
    "crate", "do", "dyn", "else", "enum", "extern", "false", "final", "fn", "for", "gen", "if",
    "impl", "in", "let", "loop", "macro", "match", "mod", "move", "mut", "override", "priv", "pub",
    "ref", "return", "self", "static", "struct", "super", "trait", "true", "try", "type", "typeof",
    "unsafe", "unsized", "use", "virtual", "where", "while", "yield",
];

/// Why a name cannot name a Rust constant.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
pub enum ConstNameError {
    /// Not an identifier at all.
    #[error("'{0}' is not a Rust identifier (letters, digits and _, not starting with a digit)")]
    NotAnIdentifier(String),
    /// A keyword, or `_`.
    #[error("'{0}' is reserved in Rust")]
    Reserved(String),
}

/// Check that `name` can name a Rust constant (an identifier that is not a
/// keyword); the error says why not.
pub fn check_const_name(name: &str) -> Result<(), ConstNameError> {
    let mut chars = name.chars();
    let starts_well = chars
        .next()
        .is_some_and(|c| c.is_ascii_alphabetic() || c == '_');
    if !starts_well || !chars.all(|c| c.is_ascii_alphanumeric() || c == '_') {
        return Err(ConstNameError::NotAnIdentifier(name.to_owned()));
    }
    if name == "_" || RUST_KEYWORDS.contains(&name) {
        return Err(ConstNameError::Reserved(name.to_owned()));
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn const_names_must_be_identifiers() {
        assert!(check_const_name("PULSE_FILTER").is_ok());
        assert!(check_const_name("_BAND2").is_ok());
        for bad in ["", "2FAST", "A-B", "ÄRGER", "_", "Self", "static"] {
            assert!(check_const_name(bad).is_err(), "{bad:?} accepted");
        }
        assert_eq!(
            check_const_name("static"),
            Err(ConstNameError::Reserved("static".into()))
        );
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
}
