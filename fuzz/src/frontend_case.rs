//! What the frontend_file fuzz target does with one input. Shared with
//! `host/tests/fuzz_regressions.rs` (included by path), so a checked-in
//! input runs exactly what the fuzzer ran.

use plethwire::frontend::{human_report, Draft, FrontendReport};

/// The circuit file of `plethwire frontend`: parsed, resolved, analysed
/// and written out as text, as the command does.
pub fn frontend_file(data: &[u8]) {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    let draft = match Draft::from_toml(text) {
        Ok(d) => d,
        Err(e) => {
            assert!(!e.to_string().contains('\n'), "{e}");
            return;
        }
    };
    let circuit = match draft.resolve() {
        Ok(c) => c,
        Err(e) => {
            assert!(!e.to_string().contains('\n'), "{e}");
            return;
        }
    };
    if let Ok(report) = FrontendReport::build(&circuit) {
        let _ = human_report(&report);
    }
}
