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

/// Python wfdb 4.x's bytes for a time-resolution note of `text` followed by
/// its end-of-definitions mark (`calc_fs_bytes` and `end_special_bytes` in
/// `wfdb/io/annotation.py`).
fn python_note(text: &str) -> Vec<u8> {
    let mut b = vec![0, 88, 20 + text.len() as u8, 252];
    b.extend(b"## time resolution: ");
    b.extend(text.as_bytes());
    if text.len() % 2 == 1 {
        b.push(0);
    }
    b.extend([0, 236, 255, 255, 255, 255, 1, 0]);
    b
}

#[test]
fn time_resolution_note_is_written_and_read_as_python_wfdb_lays_it_out() {
    for (rate, text) in [(500.0, "500"), (250.5, "250.5"), (1000.0, "1000")] {
        let file = AnnotationFile {
            time_resolution: Some(rate),
            annotations: vec![Annotation::beat(3), Annotation::beat(1500)],
        };
        let bytes = encode_annotation_file(&file).unwrap();
        let mut wanted = python_note(text);
        wanted.extend(encode_annotations(&file.annotations).unwrap());
        assert_eq!(bytes, wanted, "{text}");
        // The note and its mark are not annotations.
        assert_eq!(decode_annotation_file(&bytes).unwrap(), file);
        assert_eq!(decode_annotations(&bytes).unwrap(), file.annotations);
    }
    let bad = AnnotationFile {
        time_resolution: Some(0.0),
        annotations: vec![],
    };
    assert!(encode_annotation_file(&bad).is_err());
    let mut note = Annotation::new(0, 22);
    note.aux = Some("## time resolution: fast".into());
    let e = decode_annotation_file(&encode_annotations(&[note]).unwrap()).unwrap_err();
    assert!(e.to_string().contains("not a number above 0"), "{e}");
}

#[test]
fn times_follow_the_note_into_frames_or_any_rate() {
    // Ticks of 1000 per second in a record of 250 frames per second.
    let file = AnnotationFile {
        time_resolution: Some(1000.0),
        annotations: vec![Annotation::beat(1000), Annotation::beat(2002)],
    };
    let frames: Vec<i64> = file
        .at_rate(250.0, 250.0)
        .iter()
        .map(|a| a.sample)
        .collect();
    assert_eq!(frames, vec![250, 501]);
    let plain = AnnotationFile {
        time_resolution: None,
        annotations: vec![Annotation::beat(250)],
    };
    // No note: the times are frames, here of a 250 Hz record read at 500.
    assert_eq!(plain.at_rate(250.0, 500.0)[0].sample, 500);
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("r.fast");
    write_annotation_file(&path, &file).unwrap();
    let e = read_annotations(&path).unwrap_err();
    assert!(e.to_string().contains("no record header"), "{e}");
    std::fs::write(dir.path().join("r.hea"), "r 1 250 3000\nr.dat 16\n").unwrap();
    let read: Vec<i64> = read_annotations(&path)
        .unwrap()
        .iter()
        .map(|a| a.sample)
        .collect();
    assert_eq!(read, vec![250, 501]);
    let at: Vec<i64> = read_annotations_at(&path, 250.0, 1000.0)
        .unwrap()
        .iter()
        .map(|a| a.sample)
        .collect();
    assert_eq!(at, vec![1000, 2002]);
    assert_eq!(read_annotation_file(&path).unwrap(), file);
}

#[test]
fn code_0_and_notes_round_trip_exactly() {
    let mut note = Annotation::new(7, 22);
    note.aux = Some("electrode moved".into());
    let mut early = Annotation::new(0, 22);
    early.aux = Some("## not a rate".into());
    let anns = vec![
        early,
        Annotation::new(0, 0),
        Annotation::new(5, 0),
        Annotation::beat(5),
        Annotation::new(5, 0),
        note,
        Annotation::new(5000, 0),
        Annotation::new(5000, 0),
    ];
    let bytes = encode_annotations(&anns).unwrap();
    assert_eq!(decode_annotations(&bytes).unwrap(), anns);
    // A code 0 at the time of the one before: SKIP -1, then 0 one tick on.
    assert_eq!(
        &bytes[bytes.len() - 10..],
        &words(&[59 << 10, 0xFFFF, 0xFFFF, 1, 0])[..]
    );
    // What the reader returns from a file written by Python wfdb writes
    // back to the same bytes.
    let mut theirs = python_note("360");
    theirs.extend(words(&[
        1 << 10 | 18,
        22 << 10 | 5,
        63 << 10 | 3,
        0x6261,
        0x0063,
        0,
    ]));
    let file = decode_annotation_file(&theirs).unwrap();
    assert_eq!(file.time_resolution, Some(360.0));
    assert_eq!(file.annotations[1].aux.as_deref(), Some("abc"));
    assert_eq!(encode_annotation_file(&file).unwrap(), theirs);
}
