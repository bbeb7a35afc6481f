//! Option values that start with a hyphen (`--band -1:8`, `--rails
//! -5:5`): clap alone takes them for unknown flags.

use clap::{Arg, Command};
use std::ffi::OsString;

/// `--opt -1:8` as `--opt=-1:8` when `--opt` takes a value and `-1:8` is
/// none of the command's own options, so both spellings get the same
/// message about the value (clap alone takes `-1:8` for an unknown flag).
pub(crate) fn joined(cli: &Command, args: Vec<OsString>) -> Vec<OsString> {
    let Some(sub) = args
        .get(1)
        .and_then(|a| a.to_str())
        .and_then(|name| cli.find_subcommand(name))
    else {
        return args;
    };
    let options: Vec<&Arg> = sub.get_arguments().filter(|a| !a.is_positional()).collect();
    let known = |token: &str| {
        let name = token.split('=').next().unwrap_or(token);
        name == "--"
            || matches!(name, "-h" | "--help")
            || options.iter().any(|a| {
                a.get_long().is_some_and(|l| name == format!("--{l}"))
                    || a.get_short().is_some_and(|c| name == format!("-{c}"))
            })
    };
    let takes_value = |token: &str| {
        options.iter().any(|a| {
            a.get_action().takes_values() && a.get_long().is_some_and(|l| token == format!("--{l}"))
        })
    };
    let mut out = Vec::with_capacity(args.len());
    let mut rest = args.into_iter();
    while let Some(token) = rest.next() {
        let text = token.to_string_lossy().into_owned();
        if text == "--" {
            out.push(token);
            out.extend(rest);
            break;
        }
        if takes_value(&text) {
            let mut ahead = rest.clone();
            if let Some(value) = ahead.next() {
                let v = value.to_string_lossy();
                if v.starts_with('-') && !known(&v) {
                    out.push(OsString::from(format!("{text}={v}")));
                    rest = ahead;
                    continue;
                }
            }
        }
        out.push(token);
    }
    out
}
