//! Annotation files against the byte layout of the PhysioNet WFDB
//! annotation file format specification (annot(5)).

use super::*;
use crate::test_support::Rng;

fn words(ws: &[u16]) -> Vec<u8> {
    ws.iter().flat_map(|w| w.to_le_bytes()).collect()
}

#[test]
fn plain_beats_are_one_word_each() {
    let anns = [
        Annotation::beat(58),
        Annotation::beat(241),
        Annotation::beat(241),
    ];
    let bytes = encode_annotations(&anns).unwrap();
    // N = code 1: 1 << 10 | step; then the 0x0000 end word.
    assert_eq!(bytes, words(&[1 << 10 | 58, 1 << 10 | 183, 1 << 10, 0]));
    assert_eq!(decode_annotations(&bytes).unwrap(), anns);
}

#[test]
fn long_gaps_use_skip_with_the_high_word_first() {
    let anns = [
        Annotation::beat(1023),
        Annotation::beat(1023 + 1024),
        Annotation::beat(200_000),
    ];
    let bytes = encode_annotations(&anns).unwrap();
    let gap = 200_000u32 - 2047;
    assert_eq!(
        bytes,
        words(&[
            1 << 10 | 1023,
            59 << 10,
            0,
            1024,
            1 << 10,
            59 << 10,
            (gap >> 16) as u16,
            gap as u16,
            1 << 10,
            0
        ])
    );
    assert_eq!(decode_annotations(&bytes).unwrap(), anns);
}

#[test]
fn gaps_beyond_32_bits_take_several_skips() {
    let anns = [Annotation::beat(5), Annotation::beat(5_000_000_000)];
    let back = decode_annotations(&encode_annotations(&anns).unwrap()).unwrap();
    assert_eq!(back, anns);
}

#[test]
fn modifiers_round_trip_and_chan_num_carry_over() {
    let mut a = Annotation::new(10, code_for_symbol("V").unwrap());
    a.subtype = -3;
    a.chan = 2;
    a.num = -1;
    a.aux = Some("(AFIB".into());
    let mut b = Annotation::new(20, code_for_symbol("+").unwrap());
    b.chan = 2;
    b.num = -1;
    b.aux = Some("odd é".into());
    let c = Annotation::new(25, code_for_symbol("~").unwrap());
    let anns = [a, b, c];
    let bytes = encode_annotations(&anns).unwrap();
    assert_eq!(decode_annotations(&bytes).unwrap(), anns);
    // b repeats chan and num, so only a writes CHN and NUM; c sets them back.
    let chn_words = bytes
        .chunks_exact(2)
        .filter(|w| u16::from_le_bytes([w[0], w[1]]) >> 10 == 62)
        .count();
    assert_eq!(chn_words, 2);
}

#[test]
fn decoding_carries_chan_and_num_but_not_subtype() {
    let bytes = words(&[
        1 << 10 | 5,
        61 << 10 | 0xFF,
        62 << 10 | 3,
        60 << 10 | 7,
        1 << 10 | 5,
        0,
    ]);
    let anns = decode_annotations(&bytes).unwrap();
    assert_eq!(anns[0].subtype, -1);
    assert_eq!(
        (anns[1].sample, anns[1].subtype, anns[1].chan, anns[1].num),
        (10, 0, 3, 7)
    );
}

#[test]
fn symbol_table() {
    assert_eq!(symbol_for_code(1), Some("N"));
    assert_eq!(symbol_for_code(5), Some("V"));
    assert_eq!(symbol_for_code(22), Some("\""));
    assert_eq!(symbol_for_code(41), Some("r"));
    assert_eq!(symbol_for_code(15), None);
    assert_eq!(symbol_for_code(45), None);
    assert_eq!(code_for_symbol("N"), Some(1));
    assert_eq!(code_for_symbol("|"), Some(16));
    assert_eq!(code_for_symbol(""), None);
    for code in 0..=60u8 {
        if let Some(s) = symbol_for_code(code) {
            assert_eq!(code_for_symbol(s), Some(code));
        }
    }
}

#[test]
fn writer_refuses_what_the_format_cannot_hold() {
    assert!(encode_annotations(&[Annotation::new(1, 0)]).is_err());
    assert!(encode_annotations(&[Annotation::new(1, 50)]).is_err());
    let e = encode_annotations(&[Annotation::beat(5), Annotation::beat(4)]).unwrap_err();
    assert_eq!(
        e.to_string(),
        "annotation 1: sample 4 comes before the previous one (5); \
         annotations must be in time order from sample 0"
    );
    assert!(encode_annotations(&[Annotation::beat(-1)]).is_err());
    let mut a = Annotation::beat(1);
    a.aux = Some("x".repeat(256));
    assert!(encode_annotations(&[a.clone()]).is_err());
    a.aux = Some("€".into());
    assert_eq!(
        encode_annotations(&[a]).unwrap_err().problem,
        EncodeProblem::NotLatin1
    );
}

#[test]
fn malformed_files_give_errors() {
    assert_eq!(decode_annotations(&[]), Err(ErrorKind::Empty));
    assert!(matches!(
        decode_annotations(&[1, 4]),
        Err(ErrorKind::Truncated(_))
    ));
    assert!(matches!(
        decode_annotations(&[1, 4, 0]),
        Err(ErrorKind::Truncated(_))
    ));
    assert!(matches!(
        decode_annotations(&words(&[59 << 10, 1])),
        Err(ErrorKind::Truncated(_))
    ));
    assert!(matches!(
        decode_annotations(&words(&[1 << 10, 63 << 10 | 9, 0x4141])),
        Err(ErrorKind::Truncated(_))
    ));
    assert!(matches!(
        decode_annotations(&words(&[61 << 10 | 1, 0])),
        Err(ErrorKind::Syntax(_))
    ));
    assert_eq!(decode_annotations(&[0, 0]), Ok(vec![]));
}

#[test]
fn files_on_disk() {
    let dir = tempfile::tempdir().unwrap();
    let path = annotation_path(&dir.path().join("rec.hea"), "peak");
    assert_eq!(path, dir.path().join("rec.peak"));
    let anns: Vec<Annotation> = (0..50).map(|k| Annotation::beat(k * 300 + 7)).collect();
    write_annotations(&path, &anns).unwrap();
    assert_eq!(read_annotations(&path).unwrap(), anns);
    let e = read_annotations(dir.path().join("nope.peak")).unwrap_err();
    assert!(e.to_string().ends_with("nope.peak: no such file"), "{e}");
    std::fs::write(&path, [1u8, 4, 9]).unwrap();
    let e = read_annotations(&path).unwrap_err();
    assert!(e.to_string().contains("rec.peak: truncated"), "{e}");
}

#[test]
fn random_bytes_never_panic() {
    let mut rng = Rng::new(0x5eed_0002);
    for _ in 0..50_000 {
        let n = rng.below(64);
        let mut bytes = rng.bytes(n);
        if rng.below(2) == 0 {
            bytes.extend([0, 0]);
        }
        let _ = decode_annotations(&bytes);
    }
}
