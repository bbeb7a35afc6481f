//! Multi-segment records built by hand, following header(5); the joined
//! values are those Python wfdb 4.x `rdrecord` gives (checked against it
//! in `tests/tests/wfdb_segments_against_python.rs`).

use crate::{ErrorKind, Record};

/// Write `files` (name, text or bytes) into a fresh folder.
fn folder(files: &[(&str, Vec<u8>)]) -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    for (name, bytes) in files {
        std::fs::write(dir.path().join(name), bytes).unwrap();
    }
    dir
}

fn le16(values: &[i16]) -> Vec<u8> {
    values.iter().flat_map(|v| v.to_le_bytes()).collect()
}

fn text(s: &str) -> Vec<u8> {
    s.as_bytes().to_vec()
}

#[test]
fn fixed_layout_joins_segments_and_gaps() {
    let dir = folder(&[
        ("m.hea", text("m/3 2 100 7\ns1 3\n~ 2\ns2 2\n")),
        (
            "s1.hea",
            text("s1 2 100 3\ns1.dat 16 10(1)/mV 16 0 1 -6 0 A\ns1.dat 16 2/NU 16 0 5 0 0 B\n"),
        ),
        ("s1.dat", le16(&[1, 5, 2, 6, -32768, 7])),
        (
            "s2.hea",
            text("s2 2 100 2\ns2.dat 16 10(1)/mV 16 0 4 0 0 A\ns2.dat 16 2/NU 16 0 8 0 0 B\n"),
        ),
        ("s2.dat", le16(&[4, 8, 5, 9])),
    ]);
    let rec = Record::open(dir.path().join("m")).unwrap();
    assert_eq!((rec.len(), rec.n_signals(), rec.fs()), (7, 2, 100.0));
    assert_eq!(rec.signal_names(), vec!["A", "B"]);
    let gap = -32768;
    assert_eq!(
        rec.read_digital(0).unwrap(),
        vec![1, 2, gap, gap, gap, 4, 5]
    );
    assert_eq!(rec.read_digital(1).unwrap(), vec![5, 6, 7, gap, gap, 8, 9]);
    let p = rec.read_physical(0).unwrap();
    assert_eq!(p[0], 0.0);
    assert_eq!(p[6], 0.4);
    assert!(p[2..5].iter().all(|v| v.is_nan()));
    assert_eq!(rec.read_all_digital().unwrap()[1][6], 9);
    // The checksum of s1 signal 0 is 1 + 2 - 32768 = -32765, not -6.
    let e = rec.verify_checksums().unwrap_err();
    assert!(e.to_string().contains("the header says -6"), "{e}");
    assert_eq!(rec.load_signal(Some("B")).unwrap().samples.len(), 7);
    // The master header's text keeps its segment lines only.
    assert_eq!(rec.header().to_text(), "m/3 2 100 7\ns1 3\n~ 2\ns2 2\n");
    assert!(rec.read_digital(2).is_err());
}

#[test]
fn variable_layout_matches_signals_by_name() {
    let dir = folder(&[
        ("v.hea", text("v/4 3 50 6\nv_layout 0\na 2\n~ 1\nb 3\n")),
        (
            "v_layout.hea",
            text("v_layout 3 50 0\n~ 0 100/mV 16 0 0 0 0 II\n~ 0x2 1/NU 16 0 0 0 0 PLETH\n~ 0 1/mmHg 12 0 0 0 0 ABP\n"),
        ),
        ("a.hea", text("a 2 50 2\na.dat 16x2 4(2)/NU 16 0 0 0 0 PLETH\na.dat 16 100/mV 16 0 0 0 0 II\n")),
        ("a.dat", le16(&[10, 11, 1, 12, 13, 2])),
        ("b.hea", text("b 1 50 3\nb.dat 16 100/mV 16 0 0 0 0 II\n")),
        ("b.dat", le16(&[3, 4, 5])),
    ]);
    let rec = Record::open(dir.path().join("v")).unwrap();
    assert_eq!(rec.signal_names(), vec!["II", "PLETH", "ABP"]);
    assert_eq!(rec.len(), 6);
    let gap = -32768;
    assert_eq!(rec.read_digital(0).unwrap(), vec![1, 2, gap, 3, 4, 5]);
    // Two samples per frame: 12 values, the gap and segment b missing.
    let pleth = rec.read_digital(1).unwrap();
    assert_eq!(&pleth[..4], &[10, 11, 12, 13]);
    assert!(pleth[4..].iter().all(|&v| v == gap));
    assert_eq!(rec.signal_fs(1), 100.0);
    assert_eq!(rec.read_physical(1).unwrap()[0], 2.0);
    // A signal no segment holds: all missing.
    assert!(rec.read_physical(2).unwrap().iter().all(|v| v.is_nan()));
    assert_eq!(rec.read_digital(2).unwrap(), vec![gap; 6]);
}

#[test]
fn stored_values_that_do_not_join_are_refused_physical_ones_join() {
    let dir = folder(&[
        ("g.hea", text("g/3 1 10 4\ng_layout 0\nx 2\ny 2\n")),
        (
            "g_layout.hea",
            text("g_layout 1 10 0\n~ 0 1/mV 16 0 0 0 0 S\n"),
        ),
        ("x.hea", text("x 1 10 2\nx.dat 16 2/mV 16 0 0 0 0 S\n")),
        ("x.dat", le16(&[2, 4])),
        ("y.hea", text("y 1 10 2\ny.dat 16 4/mV 16 0 0 0 0 S\n")),
        ("y.dat", le16(&[4, 8])),
    ]);
    let rec = Record::open(dir.path().join("g")).unwrap();
    assert_eq!(rec.read_physical(0).unwrap(), vec![1.0, 2.0, 1.0, 2.0]);
    let e = rec.read_digital(0).unwrap_err();
    assert!(e.to_string().contains("do not join"), "{e}");
}

#[test]
fn damaged_master_headers_are_refused_with_one_line() {
    let seg = [
        ("s.hea", text("s 1 10 2\ns.dat 16 1 16 0 0 0 0 S\n")),
        ("s.dat", le16(&[1, 2])),
    ];
    let cases = [
        ("m/1 1 10 2\n../s 2\n", "neither a record name"),
        ("m/1 1 10 3\ns 3\n", "holds 2 frames"),
        ("m/2 1 10 4\ns 2\ns 3\n", "holds 2 frames"),
        ("m/1 1 10 5\ns 2\n", "says 5 frames"),
        ("m/1 2 10 2\ns 2\n", "says 2 signals"),
        ("m/2 1 10 2\ns 2\nx 0\n", "has length 0"),
        ("m/1 1 20 2\ns 2\n", "frames per second"),
        ("m/1 1 10 2\nm 2\n", "itself a multi-segment"),
        ("m/1 1 10 2\n~ 2\n", "every segment is a gap"),
    ];
    for (master, wanted) in cases {
        let mut files = seg.to_vec();
        files.push(("m.hea", text(master)));
        let dir = folder(&files);
        let e = Record::open(dir.path().join("m")).unwrap_err();
        assert!(e.to_string().contains(wanted), "{master:?}: {e}");
        assert_eq!(e.to_string().lines().count(), 1);
    }
    let dir = folder(&[("m.hea", text("m/1 1 10 2\nnone 2\n"))]);
    let e = Record::open(dir.path().join("m")).unwrap_err();
    assert_eq!(e.kind(), &ErrorKind::NotFound);
}

#[test]
fn flac_formats_say_they_are_not_supported() {
    for code in [508, 516, 524] {
        let dir = folder(&[("f.hea", text(&format!("f 1 250 10\nf.dat {code}\n")))]);
        let e = Record::open(dir.path().join("f")).unwrap_err();
        assert!(e.to_string().contains("are not supported"), "{e}");
        assert!(e.to_string().contains("FLAC"), "{e}");
    }
}
