//! Inputs found by the wire_decoder fuzz target (`fuzz/`, `scripts/fuzz`),
//! run again through exactly what the target runs
//! (`fuzz/src/wire_case.rs`, included here): the decoder must not panic,
//! and every frame it decodes must encode back to the same bytes.

#[path = "../../fuzz/src/wire_case.rs"]
mod wire_case;

#[test]
fn wire_decoder_inputs() {
    let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fuzz-regressions/wire_decoder");
    let mut n = 0;
    for entry in std::fs::read_dir(&dir).unwrap() {
        let data = std::fs::read(entry.unwrap().path()).unwrap();
        wire_case::wire_decoder(&data);
        n += 1;
    }
    assert!(n > 0, "no regression inputs in {}", dir.display());
}
