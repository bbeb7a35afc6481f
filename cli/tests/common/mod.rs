//! Helpers shared by the command-line tests: run the real binary and pick
//! its output apart.
#![allow(dead_code)] // each test file uses a different subset

use std::path::Path;
use std::process::{Command, Output};

/// Run `plethwire` with `args` in `dir` (so a default plot lands there).
pub fn plethwire(dir: &Path, args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_plethwire"))
        .args(args)
        .current_dir(dir)
        .output()
        .expect("the plethwire binary runs")
}

/// Standard output as text, asserting success.
pub fn stdout_of_success(out: &Output) -> String {
    assert!(
        out.status.success(),
        "exit {:?}, stderr: {}",
        out.status.code(),
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(
        out.stderr.is_empty(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8(out.stdout.clone()).expect("UTF-8 output")
}

/// The Rust block of a human report: from the `// Made by:` line to `];`.
pub fn const_block(report: &str) -> String {
    let start = report.find("// Made by:").expect("a const block");
    let end = report[start..].find("\n];\n").expect("the block ends") + start + 4;
    report[start..end].to_owned()
}

/// `[b0, b1, b2, a1, a2]` of every `Biquad { .. }` line of a const block,
/// parsed with `str::parse`, so any printing loss shows up.
pub fn const_sections(block: &str) -> Vec<[f64; 5]> {
    block
        .lines()
        .filter_map(|l| l.trim().strip_prefix("Biquad {"))
        .map(|fields| {
            let fields = fields.trim().trim_end_matches("},").trim();
            let mut out = [f64::NAN; 5];
            for (slot, (field, name)) in out
                .iter_mut()
                .zip(fields.split(',').zip(["b0", "b1", "b2", "a1", "a2"]))
            {
                let (key, value) = field.split_once(':').expect("key: value");
                assert_eq!(key.trim(), name);
                *slot = value.trim().parse().expect("a float literal");
            }
            out
        })
        .collect()
}

/// One line of the response table, split into its numeric cells
/// (`None` for "-"): frequency, design gain/phase/delay, board
/// gain/phase/delay.
pub fn table_rows(report: &str) -> Vec<[Option<f64>; 7]> {
    let mut lines = report.lines().skip_while(|l| !l.contains("freq Hz"));
    lines.next().expect("a table header");
    lines
        .take_while(|l| !l.trim().is_empty())
        .map(|l| {
            let cells: Vec<&str> = l.split_whitespace().filter(|c| *c != "|").collect();
            assert_eq!(cells.len(), 8, "{l}");
            let mut row = [None; 7];
            for (slot, c) in row.iter_mut().zip(&cells) {
                *slot = (*c != "-").then(|| c.parse().expect("a number"));
            }
            row
        })
        .collect()
}

/// A `seconds` long, 72 bpm synthetic pulse (`plethwire_synth`) written as
/// WFDB record `name` in `dir`, format 16 at 125 Hz, signal `PLETH`.
pub fn synthetic_record(dir: &Path, name: &str, seconds: f64) {
    let s = plethwire_synth::generate(&plethwire_synth::SynthOptions {
        sample_rate_hz: 125.0,
        duration_s: seconds,
        hr: plethwire_synth::HrSchedule::constant(72.0),
        ..plethwire_synth::SynthOptions::default()
    })
    .unwrap();
    let digital: Vec<i32> = s
        .samples
        .iter()
        .map(|&v| (v * 1000.0).round() as i32)
        .collect();
    let sig = plethwire_records::NewSignal::new("PLETH", "NU", 1000.0, 0);
    plethwire_records::write_record(dir, name, 125.0, &[sig], &[digital]).unwrap();
}
