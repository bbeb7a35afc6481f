//! Checksums of skewed signals: header(5) defines a signal's checksum as
//! the 16-bit sum of its samples, and a writer sums them as it stores
//! them, before any skew is undone (the Python wfdb 4.x check of the same
//! rule is in `tests/tests/wfdb_segments_against_python.rs`).

use plethwire_records::{checksum, Record};

fn le16(values: &[i16]) -> Vec<u8> {
    values.iter().flat_map(|v| v.to_le_bytes()).collect()
}

#[test]
fn skewed_signals_are_summed_as_stored() {
    let dir = tempfile::tempdir().unwrap();
    // Frames [a, b]; b lags a by 2 frames.
    let a: [i16; 5] = [1, 2, 3, 4, 5];
    let b: [i16; 5] = [100, 101, 102, 103, 30000];
    let frames: Vec<i16> = a.iter().zip(&b).flat_map(|(&x, &y)| [x, y]).collect();
    std::fs::write(dir.path().join("sk.dat"), le16(&frames)).unwrap();
    let sum = |s: &[i16]| checksum(&s.iter().map(|&v| v as i32).collect::<Vec<_>>());
    let header = format!(
        "sk 2 100 5\nsk.dat 16 1 16 0 1 {} 0 A\nsk.dat 16:2 1 16 0 100 {} 0 B\n",
        sum(&a),
        sum(&b)
    );
    std::fs::write(dir.path().join("sk.hea"), header).unwrap();
    let rec = Record::open(dir.path().join("sk")).unwrap();
    // Read in line: b's first two stored samples belong before frame 0.
    assert_eq!(
        rec.read_digital(1).unwrap(),
        vec![102, 103, 30000, -32768, -32768]
    );
    rec.verify_checksums().unwrap();
    // And a wrong checksum is still caught.
    let wrong = format!(
        "sk 2 100 5\nsk.dat 16 1 16 0 1 {} 0 A\nsk.dat 16:2 1 16 0 100 {} 0 B\n",
        sum(&a),
        sum(&b).wrapping_add(1)
    );
    std::fs::write(dir.path().join("sk.hea"), wrong).unwrap();
    let e = Record::open(dir.path().join("sk"))
        .unwrap()
        .verify_checksums()
        .unwrap_err();
    assert!(e.to_string().contains("checksum of signal 1 (B)"), "{e}");
}
