//! Header parsing against the rules of the PhysioNet WFDB header file
//! format specification (header(5)); the expected values below are what
//! that text says each field or default is.

use super::*;
use crate::test_support::Rng;
use std::path::Path;

fn parse(text: &str) -> Result<Header> {
    Header::parse(text, Path::new("x.hea"))
}

#[test]
fn full_record_and_signal_lines() {
    let h = parse(
        "# made for a test\n\
         rec_1 2 360/720(12.5) 650000 10:20:30.25 05/11/1999\n\
         rec_1.dat 16x2:3+512 200.5(-7)/mmHg 12 1024 -3 -12345 0 ABP left arm\n\
         rec_1.dat 16 100/NU 11 2 5 77 512 PLETH\n\
         # age: 55\n",
    )
    .unwrap();
    assert_eq!(h.record_name, "rec_1");
    assert_eq!(h.segments, None);
    assert_eq!(h.n_signals, 2);
    assert_eq!(h.fs, 360.0);
    assert_eq!(h.counter_freq, Some(720.0));
    assert_eq!(h.base_counter, Some(12.5));
    assert_eq!(h.samples, Some(650000));
    assert_eq!(
        h.base_time,
        Some(BaseTime {
            hours: 10,
            minutes: 20,
            seconds: 30.25
        })
    );
    assert_eq!(
        h.base_date,
        Some(BaseDate {
            day: 5,
            month: 11,
            year: 1999
        })
    );
    assert_eq!(h.comments, vec!["made for a test", "age: 55"]);
    let a = &h.signals[0];
    assert_eq!(a.file_name, "rec_1.dat");
    assert_eq!(a.format, SignalFormat::Fmt16);
    assert_eq!((a.samples_per_frame, a.skew, a.byte_offset), (2, 3, 512));
    assert_eq!((a.adc_gain, a.baseline), (200.5, -7));
    assert_eq!(a.units, "mmHg");
    assert_eq!(
        (a.adc_resolution, a.adc_zero, a.initial_value),
        (12, 1024, -3)
    );
    assert_eq!((a.checksum, a.block_size), (Some(-12345), 0));
    assert_eq!(a.description.as_deref(), Some("ABP left arm"));
    let b = &h.signals[1];
    // No "(baseline)": the baseline is the ADC zero.
    assert_eq!((b.adc_gain, b.baseline, b.adc_zero), (100.0, 2, 2));
    assert_eq!((b.checksum, b.block_size), (Some(77), 512));
    assert_eq!(b.description.as_deref(), Some("PLETH"));
}

#[test]
fn defaults_for_missing_fields() {
    let h = parse("r 1\nr.dat 212\n").unwrap();
    assert_eq!(h.fs, DEFAULT_FS);
    assert_eq!(h.samples, None);
    assert_eq!((h.counter_freq, h.base_counter), (None, None));
    assert_eq!((h.base_time, h.base_date), (None, None));
    let s = &h.signals[0];
    assert_eq!((s.samples_per_frame, s.skew, s.byte_offset), (1, 0, 0));
    assert_eq!(s.adc_gain, 200.0);
    assert_eq!(s.baseline, 0);
    assert_eq!(s.units, "mV");
    // Format 212's resolution default is 12 bits.
    assert_eq!(s.adc_resolution, 12);
    assert_eq!((s.adc_zero, s.initial_value), (0, 0));
    assert_eq!(
        (s.checksum, s.block_size, s.description.clone()),
        (None, 0, None)
    );
    assert_eq!(
        parse("r 1\nr.dat 80\n").unwrap().signals[0].adc_resolution,
        8
    );
    assert_eq!(
        parse("r 1\nr.dat 311\n").unwrap().signals[0].adc_resolution,
        10
    );
}

#[test]
fn zero_gain_means_200_and_zero_samples_means_unknown() {
    let h = parse("r 1 100 0\nr.dat 16 0(5)/uV 16 3\n").unwrap();
    assert_eq!(h.samples, None);
    let s = &h.signals[0];
    assert_eq!((s.adc_gain, s.baseline, s.adc_zero), (200.0, 5, 3));
    assert_eq!(s.initial_value, 3);
    assert_eq!(s.units, "uV");
}

#[test]
fn short_times_crlf_and_blank_lines() {
    let h = parse("\r\n  r 0 125 10 05:07\r\n\r\n").unwrap();
    assert_eq!(h.base_time.unwrap().minutes, 5);
    assert_eq!(h.base_time.unwrap().seconds, 7.0);
    assert!(h.signals.is_empty());
    let h = parse("r 0 125 10 42.5").unwrap();
    assert_eq!(h.base_time.unwrap().seconds, 42.5);
}

#[test]
fn multi_segment_header() {
    let h = parse("big/3 2 250 1000\nseg_a 400\n~ 100\nseg_b 500\n").unwrap();
    assert_eq!(h.segments, Some(3));
    assert_eq!(h.n_signals, 2);
    assert_eq!(h.segment_specs.len(), 3);
    assert_eq!(h.segment_specs[1].name, "~");
    assert_eq!(h.segment_specs[2].samples, 500);
}

#[test]
fn to_text_reads_back_to_the_same_header() {
    let text = "rec_1 2 360/720(12.5) 650000 10:20:30.25 05/11/1999\n\
         rec_1.dat 16x2:3+512 200.5(-7)/mmHg 12 1024 -3 -12345 0 ABP left arm\n\
         rec_1.dat 16 100/NU 11 2 5 77 512 PLETH\n\
         # age: 55\n";
    let h = parse(text).unwrap();
    let again = parse(&h.to_text()).unwrap();
    assert_eq!(again, h);
    let seg = parse("big/3 2 250 1000\nseg_a 400\n~ 100\nseg_b 500\n").unwrap();
    assert_eq!(parse(&seg.to_text()).unwrap(), seg);
}

#[test]
fn errors_name_file_line_and_problem() {
    let e = parse("x 1 250 10\nx.dat 999 200\n").unwrap_err();
    assert_eq!(
        e.to_string(),
        "x.hea line 2: unknown signal format code 999"
    );
    let e = parse("x 1 250 10\nx.dat 516\n").unwrap_err();
    assert!(matches!(e.kind(), ErrorKind::Unsupported(_)), "{e}");
    let e = parse("x 2 250 10\nx.dat 16\n").unwrap_err();
    assert_eq!(
        e.to_string(),
        "x.hea: record line promises 2 signal lines, found 1"
    );
    let e = parse("x 1 250 10\nx.dat 16\nx.dat 16\n").unwrap_err();
    assert_eq!(e.line(), Some(3));
    let e = parse("# only a comment\n").unwrap_err();
    assert!(e.to_string().starts_with("x.hea: no record line"), "{e}");
    let e = parse("x 1 abc\n").unwrap_err();
    assert_eq!(
        e.to_string(),
        "x.hea line 1: bad sampling frequency \"abc\""
    );
    let e = parse("x 1 -5\n").unwrap_err();
    assert_eq!(e.line(), Some(1));
    let e = parse("x 1 250\nx.dat 16 200 12 zero\n").unwrap_err();
    assert_eq!(e.to_string(), "x.hea line 2: bad ADC zero \"zero\"");
    let e = parse("x 1 250\nx.dat 16 200(4/mV\n").unwrap_err();
    assert_eq!(e.line(), Some(2));
    let e = parse("x 1 250 10 25:00:00\n").unwrap_err();
    assert!(e.to_string().contains("bad base time"), "{e}");
    let e = parse("x 1 250 10 1:00:00 31/13/2000\n").unwrap_err();
    assert!(e.to_string().contains("bad base date"), "{e}");
}

#[test]
fn reading_missing_and_empty_files() {
    let dir = tempfile::tempdir().unwrap();
    let missing = dir.path().join("none.hea");
    let e = Header::read(&missing).unwrap_err();
    assert_eq!(e.kind(), &ErrorKind::NotFound);
    assert!(e.to_string().ends_with("none.hea: no such file"), "{e}");
    let empty = dir.path().join("empty.hea");
    std::fs::write(&empty, b"").unwrap();
    assert_eq!(Header::read(&empty).unwrap_err().kind(), &ErrorKind::Empty);
}

#[test]
fn random_text_never_panics() {
    let mut rng = Rng::new(0x5eed_0001);
    let pieces = [
        "r",
        " ",
        "1",
        "2",
        "/",
        "(",
        ")",
        "x",
        ":",
        "+",
        "16",
        "212",
        "e",
        "-",
        ".",
        "\n",
        "#",
        "999999999999999999999",
        "\t",
        "250",
        "0",
        "a.dat",
        "NaN",
        "inf",
        "\u{fffd}",
        "\r",
    ];
    for _ in 0..20_000 {
        let n = rng.below(30);
        let text: String = (0..n).map(|_| pieces[rng.below(pieces.len())]).collect();
        if let Err(e) = parse(&text) {
            let shown = e.to_string();
            assert!(!shown.contains('\n'), "{shown:?}");
            assert!(shown.starts_with("x.hea"), "{shown}");
        }
    }
    for _ in 0..5_000 {
        let bytes: Vec<u8> = (0..rng.below(80)).map(|_| rng.below(256) as u8).collect();
        let _ = parse(&String::from_utf8_lossy(&bytes));
    }
}

#[test]
fn headers_without_checksums_write_back_without_them() {
    let h = parse("r 1 100 5 00:00:59.999999\nr.dat 16 50(2)/NU 12 1 3\n").unwrap();
    let text = h.to_text();
    assert!(text.starts_with("r 1 100 5 00:00:59.999999\n"), "{text}");
    assert_eq!(text.lines().nth(1), Some("r.dat 16 50(2)/NU 12 1 3"));
    assert_eq!(parse(&text).unwrap(), h);
}
