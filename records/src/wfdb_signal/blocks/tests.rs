//! Block reads against the whole read, on records of every format built
//! by hand (byte layouts: PhysioNet WFDB signal(5)), with block edges
//! anywhere: inside a frame of several signals, inside a packed byte
//! group, at a skewed signal's end and across segments and gaps.

use super::super::Record;
use crate::test_support::Rng;

const FORMATS: [u32; 10] = [8, 16, 24, 32, 61, 80, 160, 212, 310, 311];

/// Block sizes (frames) that put block edges at every place in a frame
/// and in the packed formats' 2- and 3-sample byte groups.
const BLOCKS: [usize; 9] = [1, 2, 3, 4, 5, 7, 11, 64, 10_000];

/// Bit patterns, so NaN equals NaN.
fn bits(v: &[f64]) -> Vec<u64> {
    v.iter().map(|x| x.to_bits()).collect()
}

/// Every signal of `rec` read in blocks of every size equals the whole read.
fn blocks_equal_whole(rec: &Record, what: &str) -> usize {
    let mut compared = 0;
    for i in 0..rec.n_signals() {
        let whole = rec.read_physical(i).unwrap();
        for block in BLOCKS {
            let mut joined = Vec::new();
            for b in rec.physical_blocks(i, block).unwrap() {
                let b = b.unwrap();
                assert!(
                    !b.is_empty() && b.len() <= block * rec.signals()[i].samples_per_frame as usize
                );
                joined.extend(b);
            }
            assert_eq!(
                bits(&joined),
                bits(&whole),
                "{what}: signal {i}, blocks of {block}"
            );
            // Into one buffer kept between blocks, as f32 too: the same
            // values, the f32 ones the f64 ones rounded.
            let (mut one, mut as_f32) = (Vec::new(), Vec::new());
            let (mut reused, mut reused_f32) = (Vec::new(), Vec::<f32>::new());
            let mut blocks = rec.physical_blocks(i, block).unwrap();
            while blocks.read_into(&mut reused).unwrap() {
                one.extend_from_slice(&reused);
            }
            assert!(!blocks.read_into(&mut reused).unwrap() && reused.is_empty());
            let mut blocks = rec.physical_blocks(i, block).unwrap();
            while blocks.read_into(&mut reused_f32).unwrap() {
                as_f32.extend(reused_f32.iter().map(|x| x.to_bits()));
            }
            assert_eq!(bits(&one), bits(&whole), "{what}: signal {i}, into");
            let rounded: Vec<u32> = whole.iter().map(|&x| (x as f32).to_bits()).collect();
            assert_eq!(as_f32, rounded, "{what}: signal {i}, into f32");
            compared += 1;
        }
    }
    compared
}

fn write(dir: &std::path::Path, files: &[(&str, Vec<u8>)]) {
    for (name, bytes) in files {
        std::fs::write(dir.join(name), bytes).unwrap();
    }
}

#[test]
fn every_format_reads_the_same_in_blocks_as_whole() {
    let mut rng = Rng::new(0x0b10_c4ed);
    let mut compared = 0;
    for code in FORMATS {
        // Three signals in one file (1, 2 and 1 samples per frame, the
        // second lagging by a frame but in format 8, which cannot), a
        // preamble, and a second file after it.
        let skew = if code == 8 { "" } else { ":1" };
        for frames in [1usize, 2, 37] {
            let dir = tempfile::tempdir().unwrap();
            let a = rng.bytes(3 + 8 * 4 * frames + 8);
            let b = rng.bytes(4 * frames + 4);
            write(dir.path(), &[("a.dat", a), ("b.dat", b)]);
            let header = format!(
                "r 4 250 {frames}\n\
                 a.dat {code}+3 200(3)/mV 12 0 7 0 0 P\n\
                 a.dat {code}x2{skew} 50/NU 12 0 -4 0 0 Q\n\
                 a.dat {code} 1.5(-2)/uV 12 0 1 0 0 R\n\
                 b.dat {code} 10 12 0 0 0 0 S\n"
            );
            std::fs::write(dir.path().join("r.hea"), header).unwrap();
            let rec = Record::open(dir.path().join("r")).unwrap();
            compared += blocks_equal_whole(&rec, &format!("format {code}, {frames} frames"));
        }
    }
    assert_eq!(compared, FORMATS.len() * 3 * 4 * BLOCKS.len());
}

#[test]
fn segments_and_gaps_read_the_same_in_blocks_as_whole() {
    let mut rng = Rng::new(0x5e9_b10c);
    let dir = tempfile::tempdir().unwrap();
    write(
        dir.path(),
        &[
            ("s1.dat", rng.bytes(3 * 7 * 2)),
            ("s2.dat", rng.bytes(4 * 9 * 3)),
            (
                "v0.hea",
                b"v0 2 100 0\n~ 0 1/mV 16 0 0 0 0 A\n~ 0x2 1/NU 16 0 0 0 0 B\n".to_vec(),
            ),
            ("v1.dat", rng.bytes(2 * 2 * 5)),
        ],
    );
    let headers = [
        (
            "s1.hea",
            "s1 2 100 7\ns1.dat 212 10(1)/mV 12 0 1 0 0 A\ns1.dat 212x2 2/NU 12 0 5 0 0 B\n",
        ),
        // Longer than the master header gives it: only its first 6 frames count.
        (
            "s2.hea",
            "s2 2 100 9\ns2.dat 16 20/mV 16 0 4 0 0 A\ns2.dat 16x2 3(2)/NU 16 0 8 0 0 B\n",
        ),
        ("v1.hea", "v1 1 100 5\nv1.dat 16x2 4/NU 16 0 0 0 0 B\n"),
        ("m.hea", "m/3 2 100 16\ns1 7\n~ 3\ns2 6\n"),
        ("n.hea", "n/4 2 100 12\nv0 0\nv1 5\n~ 2\ns1 5\n"),
    ];
    for (name, text) in headers {
        std::fs::write(dir.path().join(name), text).unwrap();
    }
    let fixed = Record::open(dir.path().join("m")).unwrap();
    assert_eq!(blocks_equal_whole(&fixed, "fixed layout"), 2 * BLOCKS.len());
    let variable = Record::open(dir.path().join("n")).unwrap();
    assert_eq!(
        blocks_equal_whole(&variable, "variable layout"),
        2 * BLOCKS.len()
    );
}

#[test]
fn a_signal_file_cut_short_after_opening_is_an_error_not_short_blocks() {
    let dir = tempfile::tempdir().unwrap();
    write(dir.path(), &[("r.dat", vec![1u8; 2 * 100])]);
    std::fs::write(
        dir.path().join("r.hea"),
        "r 1 100 100\nr.dat 16 1 16 0 0 0 0 P\n",
    )
    .unwrap();
    let rec = Record::open(dir.path().join("r")).unwrap();
    std::fs::write(dir.path().join("r.dat"), vec![1u8; 2 * 50]).unwrap();
    let mut blocks = rec.physical_blocks(0, 40).unwrap();
    assert_eq!(blocks.next().unwrap().unwrap().len(), 40);
    let e = blocks.next().unwrap().unwrap_err().to_string();
    assert!(e.contains("r.dat"), "{e}");
    assert!(blocks.next().is_none(), "nothing after an error");
    let mut into = rec.physical_blocks(0, 40).unwrap();
    let mut buffer = Vec::<f32>::new();
    assert!(into.read_into(&mut buffer).unwrap() && buffer.len() == 40);
    assert!(into.read_into(&mut buffer).is_err());
    assert!(
        !into.read_into(&mut buffer).unwrap(),
        "nothing after an error"
    );
    assert!(rec.physical_blocks(1, 40).is_err(), "no signal 1");
}

#[test]
fn long_16_bit_signals_read_through_the_table_give_the_same_values() {
    // Long enough for the table of 16-bit words (TABLE16_FROM_SAMPLES),
    // every word present: one signal alone (through the table) and two
    // interleaved (without).
    let frames = super::convert::TABLE16_FROM_SAMPLES as usize + 3;
    let mut rng = Rng::new(0x7ab1e16);
    for code in [16, 61, 160] {
        let dir = tempfile::tempdir().unwrap();
        let mut alone: Vec<u8> = (0..=u16::MAX).flat_map(u16::to_le_bytes).collect();
        alone.extend(rng.bytes(2 * frames - alone.len()));
        write(
            dir.path(),
            &[("a.dat", alone), ("b.dat", rng.bytes(4 * frames))],
        );
        let header = format!(
            "t 3 500 {frames}\n\
             a.dat {code} 0.37(-11)/mV 16 0 0 0 0 A\n\
             b.dat {code} 3.1/mV 16 0 0 0 0 B\n\
             b.dat {code} 1(5)/mV 16 0 0 0 0 C\n"
        );
        std::fs::write(dir.path().join("t.hea"), header).unwrap();
        let rec = Record::open(dir.path().join("t")).unwrap();
        for i in 0..3 {
            let whole = rec.read_physical(i).unwrap();
            assert!(
                i > 0 || whole.iter().any(|x| x.is_nan()),
                "the invalid word"
            );
            let (mut joined, mut block) = (Vec::new(), Vec::new());
            let mut blocks = rec.physical_blocks(i, 40_000).unwrap();
            while blocks.read_into(&mut block).unwrap() {
                joined.extend_from_slice(&block);
            }
            assert_eq!(bits(&joined), bits(&whole), "format {code}, signal {i}");
        }
    }
}
