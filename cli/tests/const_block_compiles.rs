//! The printed `const` block is real Rust: paste it into a crate that
//! depends on plethwire-dsp, build it (warnings denied), run it, and get
//! back exactly the coefficients of the JSON report.
//!
//! This builds a small scratch crate with the same cargo, offline, in a
//! target directory of its own under cargo's per-test scratch space, so
//! later runs reuse it and take a second or two.

mod common;

use common::{const_block, plethwire, stdout_of_success};
use std::path::Path;
use std::process::Command;

const SPEC: [&str; 10] = [
    "filter",
    "--rate",
    "200",
    "--dc-block",
    "0.3",
    "--low-pass",
    "7",
    "--notch",
    "50",
    "--no-plot",
];

fn scratch_crate(root: &Path, block: &str) {
    let dsp = Path::new(env!("CARGO_MANIFEST_DIR")).join("../shared-dsp");
    let manifest = format!(
        "[package]\nname = \"const-block-check\"\nversion = \"0.0.0\"\nedition = \"2021\"\npublish = false\n\n\
         [dependencies]\nplethwire-dsp = {{ path = {:?} }}\n\n\
         # Not part of the plethwire workspace.\n[workspace]\n",
        dsp.canonicalize().expect("shared-dsp exists").display().to_string()
    );
    let main = "#![deny(warnings)]\n\
        include!(\"pasted.rs\");\n\
        use plethwire_dsp::design::Design;\n\
        use plethwire_dsp::filter::{Cascade, Delta};\n\
        fn main() {\n\
        \x20   let design = Design::from_sections(&PULSE_FILTER).expect(\"stable\");\n\
        \x20   let _board: Cascade<Delta, { PULSE_FILTER.len() }> = design.cascade().expect(\"f32\");\n\
        \x20   for s in PULSE_FILTER {\n\
        \x20       println!(\"{:?} {:?} {:?} {:?} {:?}\", s.b0, s.b1, s.b2, s.a1, s.a2);\n\
        \x20   }\n\
        }\n";
    std::fs::create_dir_all(root.join("src")).unwrap();
    std::fs::write(root.join("Cargo.toml"), manifest).unwrap();
    std::fs::write(root.join("src/main.rs"), main).unwrap();
    std::fs::write(root.join("src/pasted.rs"), block).unwrap();
}

#[test]
fn const_block_builds_against_plethwire_dsp_and_round_trips() {
    let dir = tempfile::tempdir().unwrap();
    let text = stdout_of_success(&plethwire(dir.path(), &SPEC));
    let mut json_args = SPEC.to_vec();
    json_args.push("--json");
    let doc: serde_json::Value =
        serde_json::from_str(&stdout_of_success(&plethwire(dir.path(), &json_args))).unwrap();

    let root = Path::new(env!("CARGO_TARGET_TMPDIR")).join("const-block-check");
    scratch_crate(&root, &const_block(&text));
    let cargo = std::env::var("CARGO").unwrap_or_else(|_| "cargo".into());
    let out = Command::new(cargo)
        .args(["run", "--quiet", "--offline", "--manifest-path"])
        .arg(root.join("Cargo.toml"))
        // Its own target directory: never wait on the lock of the build
        // that is running this test.
        .env("CARGO_TARGET_DIR", root.join("target"))
        .env_remove("RUSTFLAGS")
        .output()
        .expect("cargo runs");
    assert!(
        out.status.success(),
        "the pasted block does not build or run:\n{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let printed = String::from_utf8(out.stdout).unwrap();
    let sections = doc["coefficients"]["sections"].as_array().unwrap();
    assert_eq!(printed.lines().count(), sections.len());
    for (line, s) in printed.lines().zip(sections) {
        let got: Vec<f64> = line.split(' ').map(|v| v.parse().unwrap()).collect();
        let want: Vec<f64> = [&s["b"][0], &s["b"][1], &s["b"][2], &s["a"][1], &s["a"][2]]
            .iter()
            .map(|v| v.as_f64().unwrap())
            .collect();
        assert_eq!(got, want);
    }
}
