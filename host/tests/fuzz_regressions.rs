//! Inputs found by the frontend_file fuzz target (`fuzz/`, `scripts/fuzz`),
//! run again through exactly what the target runs
//! (`fuzz/src/frontend_case.rs`, included here): reading, resolving and
//! reporting a circuit file must not panic, and every error is one line.

#[path = "../../fuzz/src/frontend_case.rs"]
mod frontend_case;

#[test]
fn frontend_file_inputs() {
    let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fuzz-regressions/frontend_file");
    let mut n = 0;
    for entry in std::fs::read_dir(&dir).unwrap() {
        let data = std::fs::read(entry.unwrap().path()).unwrap();
        frontend_case::frontend_file(&data);
        n += 1;
    }
    assert!(n > 0, "no regression inputs in {}", dir.display());
}
