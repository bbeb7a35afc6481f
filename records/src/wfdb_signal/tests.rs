//! Records built by hand in a temporary folder, byte layouts from the
//! PhysioNet WFDB signal file format specification (signal(5)).

use super::*;
use crate::test_support::Rng;

fn fixture(files: &[(&str, &[u8])], header: &str) -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    for (name, bytes) in files {
        std::fs::write(dir.path().join(name), bytes).unwrap();
    }
    std::fs::write(dir.path().join("r.hea"), header).unwrap();
    dir
}

fn le16(values: &[i16]) -> Vec<u8> {
    values.iter().flat_map(|v| v.to_le_bytes()).collect()
}

#[test]
fn interleaved_format_16_digital_and_physical() {
    let data = le16(&[10, -5, 20, -32768, 30, 7]);
    let dir = fixture(
        &[("r.dat", &data)],
        "r 2 125 3\nr.dat 16 1023(0)/NU 16 0 10 60 0 PLETH\nr.dat 16 200(4)/mV 16 0 -5 0 0 II\n",
    );
    for given in [dir.path().join("r"), dir.path().join("r.hea")] {
        let rec = Record::open(&given).unwrap();
        assert_eq!((rec.fs(), rec.len(), rec.n_signals()), (125.0, 3, 2));
        assert_eq!(rec.read_digital(0).unwrap(), vec![10, 20, 30]);
        assert_eq!(rec.read_digital(1).unwrap(), vec![-5, -32768, 7]);
        let p = rec.read_physical(1).unwrap();
        assert_eq!(p[0], (-5.0 - 4.0) / 200.0);
        assert!(p[1].is_nan());
        assert_eq!(rec.read_physical(0).unwrap()[2], 30.0 / 1023.0);
        assert_eq!(rec.read_all_digital().unwrap()[1], vec![-5, -32768, 7]);
    }
}

#[test]
fn picking_signals_by_name() {
    let dir = fixture(
        &[("r.dat", &le16(&[1, 2]))],
        "r 2 125 1\nr.dat 16 1 16 0 1 0 0 II\nr.dat 16 1 16 0 2 0 0 PLETH\n",
    );
    let rec = Record::open(dir.path().join("r")).unwrap();
    assert_eq!(rec.pick_signal(None).unwrap(), 1);
    assert_eq!(rec.pick_signal(Some("II")).unwrap(), 0);
    let e = rec.pick_signal(Some("RESP")).unwrap_err();
    assert!(
        e.to_string()
            .ends_with("r.hea: no signal named \"RESP\" (available: \"II\", \"PLETH\")"),
        "{e}"
    );
    let s = rec.load_signal(None).unwrap();
    assert_eq!(
        (s.name.as_str(), s.fs, s.samples.clone()),
        ("PLETH", 125.0, vec![2.0])
    );
    assert_eq!(s.units.as_deref(), Some("mV"));
    assert!(rec.read_digital(5).is_err());
}

#[test]
fn packed_formats_several_files_and_offsets() {
    // File a: format 212, two signals, 3 frames = 6 samples = 9 bytes.
    // Samples 1, -2048 | 2047, -5 | 7, 0.
    let a = [0x01, 0x80, 0x00, 0xFF, 0xF7, 0xFB, 0x07, 0x00, 0x00];
    // File b: 4 bytes of preamble, then format 80: 1, -128, 127.
    let b = [9, 9, 9, 9, 0x81, 0x00, 0xFF];
    let dir = fixture(
        &[("a.dat", &a), ("b.dat", &b)],
        "r 3 360 3\na.dat 212 200 12 0\na.dat 212 200 12 0\nb.dat 80+4 2(1)/uV 8 0\n",
    );
    let rec = Record::open(dir.path().join("r")).unwrap();
    assert_eq!(rec.read_digital(0).unwrap(), vec![1, 2047, 7]);
    assert_eq!(rec.read_digital(1).unwrap(), vec![-2048, -5, 0]);
    assert_eq!(rec.read_digital(2).unwrap(), vec![1, -128, 127]);
    let p1 = rec.read_physical(1).unwrap();
    assert!(p1[0].is_nan() && p1[1] == -5.0 / 200.0);
    let p2 = rec.read_physical(2).unwrap();
    assert!(p2[1].is_nan());
    assert_eq!(p2[2], (127.0 - 1.0) / 2.0);
}

#[test]
fn samples_per_frame_and_skew() {
    // Frames of [f, f, s]: f has 2 samples per frame, s lags by 1 frame.
    let data = le16(&[1, 2, 100, 3, 4, 101, 5, 6, 102]);
    let dir = fixture(
        &[("r.dat", &data)],
        "r 2 10 3\nr.dat 16x2 1\nr.dat 16:1 1\n",
    );
    let rec = Record::open(dir.path().join("r")).unwrap();
    assert_eq!(rec.read_digital(0).unwrap(), vec![1, 2, 3, 4, 5, 6]);
    assert_eq!(rec.signal_fs(0), 20.0);
    assert_eq!(rec.read_digital(1).unwrap(), vec![101, 102, -32768]);
}

#[test]
fn format_8_sums_differences_from_the_initial_value() {
    let diffs = [5u8, 0xFF, 0xFE, 3]; // +5, -1, -2, +3
    let dir = fixture(&[("r.dat", &diffs)], "r 1 100 4\nr.dat 8 200 8 0 100\n");
    let rec = Record::open(dir.path().join("r")).unwrap();
    assert_eq!(rec.read_digital(0).unwrap(), vec![105, 104, 102, 105]);
}

#[test]
fn length_from_the_file_when_the_header_has_none() {
    let dir = fixture(
        &[("r.dat", &le16(&[1, 2, 3, 4, 5]))],
        "r 2 100\nr.dat 16\nr.dat 16\n",
    );
    let rec = Record::open(dir.path().join("r")).unwrap();
    // Five samples hold two whole frames; the odd one is ignored.
    assert_eq!(rec.len(), 2);
    assert_eq!(rec.read_digital(1).unwrap(), vec![2, 4]);
}

#[test]
fn truncated_and_missing_signal_files() {
    let dir = fixture(
        &[("r.dat", &[0u8; 1000])],
        "r 2 125 60001\nr.dat 16 1 16 0 0 0 0 PLETH\nr.dat 16 1 16 0 0 0 0 II\n",
    );
    let e = Record::open(dir.path().join("r")).unwrap_err();
    assert_eq!(
        e.to_string(),
        format!(
            "{}: truncated: expected 240004 bytes for 60001 samples of 2 signals, found 1000",
            dir.path().join("r.dat").display()
        )
    );
    std::fs::remove_file(dir.path().join("r.dat")).unwrap();
    let e = Record::open(dir.path().join("r")).unwrap_err();
    assert_eq!(e.kind(), &ErrorKind::NotFound);
    assert_eq!(e.path(), dir.path().join("r.dat"));
    let e = Record::open(dir.path().join("nothing")).unwrap_err();
    assert_eq!(e.path(), dir.path().join("nothing.hea"));
}

#[test]
fn inconsistent_headers_are_refused() {
    let dir = fixture(&[("r.dat", &[0u8; 8])], "r 2 125 2\nr.dat 16\nr.dat 212\n");
    assert!(Record::open(dir.path().join("r")).is_err());
    let dir = fixture(
        &[("a.dat", &[0u8; 8]), ("b.dat", &[0u8; 8])],
        "r 3 125 1\na.dat 16\nb.dat 16\na.dat 16\n",
    );
    assert!(Record::open(dir.path().join("r")).is_err());
}

#[test]
fn checksums_are_verified() {
    let data = le16(&[30000, 30000, -1]);
    // 59999 mod 2^16 = 59999, which is -5537 as a signed 16-bit number.
    for stated in ["59999", "-5537"] {
        let dir = fixture(
            &[("r.dat", &data)],
            &format!("r 1 10 3\nr.dat 16 1 16 0 30000 {stated} 0 X\n"),
        );
        Record::open(dir.path().join("r"))
            .unwrap()
            .verify_checksums()
            .unwrap();
    }
    assert_eq!(checksum(&[30000, 30000, -1]), -5537);
    let dir = fixture(
        &[("r.dat", &data)],
        "r 1 10 3\nr.dat 16 1 16 0 30000 12 0 X\n",
    );
    let e = Record::open(dir.path().join("r"))
        .unwrap()
        .verify_checksums()
        .unwrap_err();
    assert!(
        e.to_string()
            .contains("checksum of signal 0 (X) is -5537, the header says 12"),
        "{e}"
    );
}

#[test]
fn random_records_never_panic() {
    let mut rng = Rng::new(0x5eed_0005);
    let formats = [
        "8", "16", "24", "32", "61", "80", "160", "212", "310", "311", "16x3", "212:2", "80+3",
        "999",
    ];
    let dir = tempfile::tempdir().unwrap();
    for _ in 0..1_500 {
        let n_sig = rng.below(4);
        let mut header = format!(
            "r {n_sig} 100 {}\n",
            if rng.below(3) == 0 {
                String::new()
            } else {
                rng.below(20).to_string()
            }
        );
        for _ in 0..n_sig {
            let file = ["a.dat", "b.dat"][rng.below(2)];
            header.push_str(&format!(
                "{file} {} 100 12 0 {}\n",
                formats[rng.below(formats.len())],
                rng.below(9)
            ));
        }
        std::fs::write(dir.path().join("r.hea"), &header).unwrap();
        for f in ["a.dat", "b.dat"] {
            let n = rng.below(60);
            std::fs::write(dir.path().join(f), rng.bytes(n)).unwrap();
        }
        if let Ok(rec) = Record::open(dir.path().join("r")) {
            let all = rec.read_all_digital();
            for i in 0..rec.n_signals() {
                let d = rec.read_digital(i);
                assert_eq!(d.is_ok(), all.is_ok());
                let _ = rec.read_physical(i);
            }
            let _ = rec.verify_checksums();
        }
    }
}
