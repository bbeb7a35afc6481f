//! Every bad `plethwire filter` spec ends with one line on stderr, a
//! non-zero exit status (2: not understood, 1: refused) and no panic; help
//! and version still print and succeed.

mod common;

use common::plethwire;

const USAGE: i32 = 2;
const REFUSED: i32 = 1;

fn check_failure(args: &[&str], code: i32, needle: &str) {
    let dir = tempfile::tempdir().unwrap();
    let out = plethwire(dir.path(), args);
    let stderr = String::from_utf8_lossy(&out.stderr);
    let shown = format!("plethwire {}", args.join(" "));
    assert_eq!(out.status.code(), Some(code), "{shown}: {stderr}");
    assert_eq!(stderr.lines().count(), 1, "{shown}: {stderr}");
    assert!(stderr.ends_with('\n'), "{shown}: {stderr:?}");
    assert!(stderr.starts_with("plethwire: "), "{shown}: {stderr}");
    assert!(!stderr.contains("panicked"), "{shown}: {stderr}");
    assert!(!stderr.contains("Usage:"), "{shown}: {stderr}");
    assert!(
        stderr.contains(needle),
        "{shown}: {stderr} lacks {needle:?}"
    );
    assert!(out.stdout.is_empty(), "{shown} printed to stdout");
    // A refused spec must not leave a plot behind either.
    assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 0, "{shown}");
}

#[test]
fn misspelt_options_and_commands_are_usage_errors() {
    check_failure(
        &["filter", "--rate", "250", "--bandd", "0.5:8"],
        USAGE,
        "did you mean '--band'",
    );
    check_failure(&["filtre", "--rate", "250"], USAGE, "did you mean 'filter'");
    check_failure(&[], USAGE, "missing a command (one of: demo, filter, ");
}

#[test]
fn malformed_values_are_usage_errors() {
    check_failure(
        &["filter", "--rate", "fast", "--band", "1:2"],
        USAGE,
        "'fast'",
    );
    check_failure(
        &["filter", "--rate", "250", "--band", "0.5"],
        USAGE,
        "LOW:HIGH",
    );
    check_failure(
        &["filter", "--rate", "250", "--notch", "50:high"],
        USAGE,
        "HZ:Q",
    );
    check_failure(
        &["filter", "--rate", "250", "--low-pass", "8", "--at", "1,,2"],
        USAGE,
        "--at",
    );
    check_failure(
        &[
            "filter",
            "--rate",
            "250",
            "--low-pass",
            "8",
            "--order",
            "two",
        ],
        USAGE,
        "--order",
    );
    check_failure(
        &[
            "filter",
            "--rate",
            "250",
            "--low-pass",
            "8",
            "--name",
            "9LIVES",
        ],
        USAGE,
        "identifier",
    );
    check_failure(
        &[
            "filter",
            "--rate",
            "250",
            "--low-pass",
            "8",
            "--name",
            "static",
        ],
        USAGE,
        "reserved",
    );
}

#[test]
fn missing_or_conflicting_options_are_usage_errors() {
    check_failure(&["filter", "--band", "0.5:8"], USAGE, "missing --rate");
    check_failure(&["filter", "--rate", "250"], USAGE, "nothing to design");
    check_failure(
        &[
            "filter",
            "--rate",
            "250",
            "--low-pass",
            "8",
            "--no-plot",
            "--plot",
            "x.svg",
        ],
        USAGE,
        "--no-plot",
    );
    check_failure(
        &[
            "filter",
            "--rate",
            "250",
            "--rate",
            "500",
            "--low-pass",
            "8",
        ],
        USAGE,
        "--rate",
    );
    check_failure(
        &["filter", "--rate", "250", "--notch", "50", "--order", "4"],
        USAGE,
        "--order applies",
    );
}

#[test]
fn designs_the_library_refuses_exit_with_one() {
    check_failure(
        &["filter", "--rate", "250", "--band", "8:0.5"],
        REFUSED,
        "low edge must be below its high edge",
    );
    check_failure(
        &["filter", "--rate", "250", "--band", "0.5:125"],
        REFUSED,
        "Nyquist",
    );
    check_failure(
        &["filter", "--rate", "250", "--low-pass", "300"],
        REFUSED,
        "Nyquist",
    );
    check_failure(
        &["filter", "--rate", "250", "--band", "0.5:8", "--order", "0"],
        REFUSED,
        "order",
    );
    check_failure(
        &["filter", "--rate", "250", "--band", "0.5:8", "--order", "9"],
        REFUSED,
        "order",
    );
    check_failure(
        &["filter", "--rate", "-250", "--band", "0.5:8"],
        REFUSED,
        "sample rate -250 Hz",
    );
    check_failure(
        &["filter", "--rate", "0", "--notch", "50"],
        REFUSED,
        "sample rate 0 Hz",
    );
    check_failure(
        &["filter", "--rate", "250", "--high-pass", "-1"],
        REFUSED,
        "above 0 Hz",
    );
    check_failure(
        &["filter", "--rate", "250", "--notch", "50:0"],
        REFUSED,
        "quality",
    );
    check_failure(
        &[
            "filter",
            "--rate",
            "250",
            "--low-pass",
            "8",
            "--at",
            "1,200",
        ],
        REFUSED,
        "200 Hz",
    );
    check_failure(
        &[
            "filter",
            "--rate",
            "1000",
            "--high-pass",
            "0.3",
            "--band",
            "0.5:8",
            "--order",
            "8",
            "--notch",
            "50",
        ],
        REFUSED,
        "needs 13 sections",
    );
}

#[test]
fn an_unwritable_plot_path_exits_with_one() {
    check_failure(
        &[
            "filter",
            "--rate",
            "250",
            "--band",
            "0.5:8",
            "--plot",
            "no/such/dir/p.svg",
        ],
        REFUSED,
        "cannot write the plot to no/such/dir/p.svg",
    );
}

#[test]
fn help_and_version_print_and_succeed() {
    let dir = tempfile::tempdir().unwrap();
    for (args, needle) in [
        (&["--help"][..], "plethwire filter --rate 250 --band 0.5:8"),
        (&["filter", "--help"][..], "--dc-block <HZ>"),
        (&["help", "filter"][..], "Examples:"),
        (&["--version"][..], env!("CARGO_PKG_VERSION")),
    ] {
        let out = plethwire(dir.path(), args);
        assert_eq!(out.status.code(), Some(0), "{args:?}");
        let text = String::from_utf8(out.stdout).unwrap();
        assert!(text.contains(needle), "{args:?}: {text}");
        assert!(out.stderr.is_empty());
    }
}
