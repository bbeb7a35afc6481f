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

/// Run `plethwire args` in `cwd`: exit status, stdout, stderr.
pub fn run_in(cwd: &Path, args: &[&str]) -> (i32, String, String) {
    let out = plethwire(cwd, args);
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// A synthetic pulse written as record `name` in `dir` (format 16,
/// 125 Hz, `seconds` at `bpm`, signal `PLETH`; a scenario of our own,
/// `plethwire_synth`). Returns what was generated, its beats included.
pub fn synthetic_pulse(
    dir: &Path,
    name: &str,
    seconds: f64,
    bpm: f64,
) -> plethwire_synth::Synthetic {
    let s = plethwire_synth::generate(&plethwire_synth::SynthOptions {
        sample_rate_hz: 125.0,
        duration_s: seconds,
        hr: plethwire_synth::HrSchedule::constant(bpm),
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
    s
}

/// [`synthetic_pulse`] as record `name`; with `truth`, the generator's
/// beats as `<name>.peak`, as a real record's expert reference. Returns
/// the record's path.
pub fn synthetic_record(
    dir: &Path,
    name: &str,
    seconds: f64,
    bpm: f64,
    truth: bool,
) -> std::path::PathBuf {
    let s = synthetic_pulse(dir, name, seconds, bpm);
    if truth {
        write_truth(dir, name, &s);
    }
    dir.join(name)
}

/// The generator's beats of `s` as `<name>.peak` in `dir`.
pub fn write_truth(dir: &Path, name: &str, s: &plethwire_synth::Synthetic) {
    use plethwire_records::{annotation_path, write_annotations, Annotation};
    let beats: Vec<Annotation> = s
        .beats
        .iter()
        .map(|b| Annotation::beat(b.peak as i64))
        .collect();
    write_annotations(annotation_path(&dir.join(name), "peak"), &beats).unwrap();
}

/// A 52-byte ELF header: 32-bit, little-endian, an executable for
/// `machine` with entry point `entry` (System V ABI ELF header layout).
pub fn elf_header(machine: u16, entry: u32) -> Vec<u8> {
    let mut h = vec![0u8; 52];
    h[..4].copy_from_slice(b"\x7fELF");
    h[4] = 1;
    h[5] = 1;
    h[6] = 1;
    h[16..18].copy_from_slice(&2u16.to_le_bytes());
    h[18..20].copy_from_slice(&machine.to_le_bytes());
    h[24..28].copy_from_slice(&entry.to_le_bytes());
    // EABI version 5 with the hard-float ABI, as the Cortex-M4F build has.
    h[36..40].copy_from_slice(&0x0500_0400u32.to_le_bytes());
    h
}
