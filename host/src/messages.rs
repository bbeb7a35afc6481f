//! Messages in the user's words: a file reader's (serde, TOML) says what
//! value was expected and what was given, not the Rust type it was read
//! into (`expected f64`, `unknown variant`); a system error without its
//! number.

/// `message` with serde's wording replaced by the reader's: `invalid type:
/// string "x", expected f64` becomes `expected a number, not the text "x"`.
pub fn plain(message: &str) -> String {
    let message = message.trim();
    let said = if let Some(rest) = message.strip_prefix("invalid type: ") {
        given_and_expected(rest)
    } else if let Some(rest) = message.strip_prefix("invalid value: ") {
        given_and_expected(rest)
    } else if let Some(rest) = message.strip_prefix("unknown variant ") {
        rest.split_once(", expected ")
            .map(|(given, choices)| format!("{} is not one of {}", quoted(given), names(choices)))
    } else if let Some(rest) = message.strip_prefix("unknown field ") {
        rest.split_once(", expected ").map(|(given, keys)| {
            format!(
                "unknown key {} (the keys here: {})",
                quoted(given),
                names(keys)
            )
        })
    } else if let Some(rest) = message.strip_prefix("missing field ") {
        Some(format!("missing key {}", quoted(rest)))
    } else {
        message
            .strip_suffix(", expected nothing")
            .map(|m| m.replace("invalid float", "not a number"))
    };
    said.unwrap_or_else(|| message.to_owned())
        .replace('`', "\"")
}

/// `message` without the operating system's error numbers that Rust's I/O
/// errors append (`No such file or directory (os error 2)`): the words
/// before them say it.
pub fn without_os_codes(message: &str) -> String {
    let mut out = String::with_capacity(message.len());
    let mut rest = message;
    while let Some(at) = rest.find(" (os error ") {
        let tail = &rest[at + " (os error ".len()..];
        let digits = tail.bytes().take_while(u8::is_ascii_digit).count();
        if digits > 0 && tail[digits..].starts_with(')') {
            out.push_str(&rest[..at]);
            rest = &tail[digits + 1..];
        } else {
            out.push_str(&rest[..at + 1]);
            rest = &rest[at + 1..];
        }
    }
    out.push_str(rest);
    out
}

/// `GIVEN, expected WHAT` as `expected WHAT, not GIVEN`, in words.
fn given_and_expected(rest: &str) -> Option<String> {
    let (given, expected) = rest.split_once(", expected ")?;
    Some(format!(
        "expected {}, not {}",
        expected_words(expected),
        given_words(given)
    ))
}

/// A Rust type's name as the kind of value it holds.
fn expected_words(expected: &str) -> String {
    match expected {
        "f32" | "f64" => "a number".into(),
        "u8" | "u16" | "u32" | "u64" | "usize" => "a whole number of 0 or more".into(),
        "i8" | "i16" | "i32" | "i64" | "isize" => "a whole number".into(),
        "a borrowed string" | "a string" => "text in quotes".into(),
        other => names(other),
    }
}

/// What serde says it found, as the value written.
fn given_words(given: &str) -> String {
    let value = |kind: &str| {
        given
            .strip_prefix(kind)
            .map(|v| v.trim().trim_matches('`').to_owned())
    };
    if let Some(text) = given.strip_prefix("string ") {
        format!("the text {text}")
    } else if let Some(v) = value("integer ")
        .or_else(|| value("floating point "))
        .or_else(|| value("boolean "))
    {
        v
    } else {
        match given {
            "sequence" => "a list".into(),
            "map" => "a table".into(),
            other => other.to_owned(),
        }
    }
}

/// `` `x` `` as `"x"`.
fn quoted(name: &str) -> String {
    format!("\"{}\"", name.trim().trim_matches('`'))
}

/// serde's list of names (`` one of `a`, `b` ``, `` `a` or `b` ``) plainly.
fn names(list: &str) -> String {
    list.strip_prefix("one of ")
        .unwrap_or(list)
        .replace('`', "")
}

#[cfg(test)]
mod tests {
    use super::{plain, without_os_codes};

    #[test]
    fn os_error_numbers_are_left_out() {
        assert_eq!(
            without_os_codes(
                "/proc/x: cannot create the folder: No such file or directory (os error 2)"
            ),
            "/proc/x: cannot create the folder: No such file or directory"
        );
        assert_eq!(without_os_codes("a (os error x) b"), "a (os error x) b");
        assert_eq!(without_os_codes("a (os error 13); b (os error 2)"), "a; b");
    }

    #[test]
    fn serde_words_become_the_readers() {
        let cases = [
            (
                r#"invalid type: string "x", expected f64"#,
                r#"expected a number, not the text "x""#,
            ),
            (
                "invalid value: integer `-1`, expected u32",
                "expected a whole number of 0 or more, not -1",
            ),
            (
                "invalid type: boolean `true`, expected a string",
                "expected text in quotes, not true",
            ),
            (
                "unknown variant `photo`, expected `photodiode` or `phototransistor`",
                r#""photo" is not one of photodiode or phototransistor"#,
            ),
            (
                "unknown field `foo`, expected one of `supply_v`, `forward_v`",
                r#"unknown key "foo" (the keys here: supply_v, forward_v)"#,
            ),
            ("missing field `kind`", r#"missing key "kind""#),
            ("invalid float, expected nothing", "not a number"),
            (
                r#"invalid type: integer `5`, expected a resistance as a number or a string such as "4.7k""#,
                r#"expected a resistance as a number or a string such as "4.7k", not 5"#,
            ),
            (
                "unclosed array, expected `]`",
                r#"unclosed array, expected "]""#,
            ),
        ];
        for (serde, ours) in cases {
            assert_eq!(plain(serde), ours, "{serde}");
        }
    }
}
