use super::*;
use crate::test_support::Rng;
use std::path::PathBuf;

fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p
}

fn by_name(n: &str) -> ColumnRef {
    ColumnRef::Name(n.to_string())
}

#[test]
fn column_by_name_or_index_at_a_given_rate() {
    let dir = tempfile::tempdir().unwrap();
    let p = write(
        dir.path(),
        "s.csv",
        "\u{feff}t, pleth ,\"ir, raw\"\n0,1.5,10\n1,-2,\"11\"\n2,nan,12\n",
    );
    let s = read_csv_signal(&p, &CsvSignalOptions::with_rate(by_name("pleth"), 100.0)).unwrap();
    assert_eq!(s.signal.name, "pleth");
    assert_eq!(s.signal.fs, 100.0);
    assert_eq!(&s.signal.samples[..2], &[1.5, -2.0]);
    assert!(s.signal.samples[2].is_nan());
    assert_eq!(s.time, None);
    let s = read_csv_signal(&p, &CsvSignalOptions::with_rate(ColumnRef::Index(2), 100.0)).unwrap();
    assert_eq!(s.signal.name, "ir, raw");
    assert_eq!(s.signal.samples, vec![10.0, 11.0, 12.0]);
}

#[test]
fn rate_from_a_rounded_time_column() {
    let dir = tempfile::tempdir().unwrap();
    // 300 Hz written with 3 decimals: steps of 3 and 4 ms.
    let mut text = String::from("time_s,v\n");
    for k in 0..900 {
        text.push_str(&format!("{:.3},{k}\n", 12.0 + k as f64 / 300.0));
    }
    let p = write(dir.path(), "t.csv", &text);
    let s = read_csv_signal(
        &p,
        &CsvSignalOptions::with_time(by_name("v"), by_name("time_s")),
    )
    .unwrap();
    let t = s.time.unwrap();
    assert!((t.fs - 300.0).abs() < 0.01, "{t:?}");
    assert_eq!(t.start_s, 12.0);
    assert!(t.max_deviation > 0.05 && t.max_deviation < 0.25, "{t:?}");
    assert_eq!(s.signal.fs, t.fs);
    assert_eq!(s.signal.samples.len(), 900);
}

#[test]
fn a_dropped_sample_is_resampled_and_times_must_increase() {
    let dir = tempfile::tempdir().unwrap();
    let mut text = String::from("time_s,v\n");
    for k in (0..100).filter(|&k| k != 40) {
        text.push_str(&format!("{},{k}\n", k as f64 * 0.01));
    }
    let p = write(dir.path(), "d.csv", &text);
    let s = read_csv_signal(
        &p,
        &CsvSignalOptions::with_time(by_name("v"), by_name("time_s")),
    )
    .unwrap();
    let t = s.time.unwrap();
    let r = t.resampled.expect("uneven times are resampled");
    assert!((r.grid_hz - 100.0).abs() < 1e-9, "{r:?}");
    assert_eq!(r.grid_rate_from, "median frame rate");
    // The lost sample is interpolated back: v = k on the grid.
    assert_eq!(s.signal.samples.len(), 100);
    assert!((s.signal.samples[40] - 40.0).abs() < 1e-9);
    assert_eq!(r.missing_samples, 0);
    for (name, body, line) in [
        ("back.csv", "time_s,v\n0,1\n0.02,2\n0.01,3\n", 4),
        ("same.csv", "time_s,v\n0,1\n0.01,2\n0.01,3\n", 4),
    ] {
        let p = write(dir.path(), name, body);
        let e = read_csv_signal(
            &p,
            &CsvSignalOptions::with_time(by_name("v"), by_name("time_s")),
        )
        .unwrap_err();
        assert_eq!(e.line(), Some(line), "{e}");
        assert!(e.to_string().contains("times must increase"), "{e}");
    }
}

#[test]
fn milliseconds_and_a_given_grid_rate() {
    let dir = tempfile::tempdir().unwrap();
    // Frames at 0, 30, 70, 100 ms of v = t (ms), onto a 100 Hz grid.
    let p = write(
        dir.path(),
        "ms.csv",
        "time,R,G\n0,0,5\n30,30,5\n70,70,5\n100,100,5\n",
    );
    let mut o = CsvSignalOptions::with_rate(by_name("R"), 1.0);
    o.rate = Rate::Resample {
        time: by_name("time"),
        fs: 100.0,
    };
    o.time_unit = TimeUnit::Ms;
    let s = read_csv_signals(&p, &[by_name("R"), by_name("G")], &o).unwrap();
    assert_eq!(s.signals.len(), 2);
    assert_eq!(s.signals[0].fs, 100.0);
    assert_eq!(s.signals[0].samples.len(), 11);
    for (k, v) in s.signals[0].samples.iter().enumerate() {
        assert!((v - 10.0 * k as f64).abs() < 1e-9, "{:?}", s.signals[0]);
    }
    assert!(s.signals[1].samples.iter().all(|&v| v == 5.0));
    let t = s.time.unwrap();
    assert_eq!(t.unit, TimeUnit::Ms);
    assert!((t.resampled.unwrap().longest_gap_s - 0.04).abs() < 1e-12);
    assert!(TimeUnit::parse("min")
        .unwrap_err()
        .to_string()
        .contains("unknown time unit"));
}

#[test]
fn text_in_a_number_column_names_file_line_and_column() {
    let dir = tempfile::tempdir().unwrap();
    let p = write(dir.path(), "x.csv", "time_s,pleth\n0,1\n0.01,oops\n");
    let e = read_csv_signal(&p, &CsvSignalOptions::with_rate(by_name("pleth"), 100.0)).unwrap_err();
    assert_eq!(
        e.to_string(),
        format!(
            "{} line 3: column \"pleth\": \"oops\" is not a number",
            p.display()
        )
    );
    let p = write(dir.path(), "i.csv", "time_s,pleth\n0,inf\n");
    assert!(read_csv_signal(&p, &CsvSignalOptions::with_rate(by_name("pleth"), 100.0)).is_err());
}

#[test]
fn empty_cells_only_where_asked() {
    let dir = tempfile::tempdir().unwrap();
    let p = write(dir.path(), "e.csv", "v\n1\n\"\"\n3\n");
    let mut o = CsvSignalOptions::with_rate(by_name("v"), 10.0);
    let e = read_csv_signal(&p, &o).unwrap_err();
    assert!(
        e.to_string().contains("line 3: column \"v\": empty cell"),
        "{e}"
    );
    o.empty_as_nan = true;
    let s = read_csv_signal(&p, &o).unwrap();
    assert!(s.signal.samples[1].is_nan());
}

#[test]
fn files_without_a_header() {
    let dir = tempfile::tempdir().unwrap();
    let p = write(dir.path(), "h.csv", "1,2\n3,4\n");
    let mut o = CsvSignalOptions::with_rate(ColumnRef::Index(1), 10.0);
    o.header = false;
    let s = read_csv_signal(&p, &o).unwrap();
    assert_eq!(s.signal.name, "#1");
    assert_eq!(s.signal.samples, vec![2.0, 4.0]);
    o.column = by_name("v");
    assert!(read_csv_signal(&p, &o).is_err());
}

#[test]
fn structural_errors() {
    let dir = tempfile::tempdir().unwrap();
    let opts = CsvSignalOptions::with_rate(by_name("v"), 10.0);
    let p = write(dir.path(), "m.csv", "a,b\n1,2\n");
    let e = read_csv_signal(&p, &opts).unwrap_err();
    assert!(
        e.to_string()
            .ends_with("no signal named \"v\" (available: \"a\", \"b\")"),
        "{e}"
    );
    let p = write(dir.path(), "q.csv", "v\n\"1\n");
    assert_eq!(read_csv_signal(&p, &opts).unwrap_err().line(), Some(2));
    let p = write(dir.path(), "q2.csv", "v\n\"1\"x\n");
    assert_eq!(read_csv_signal(&p, &opts).unwrap_err().line(), Some(2));
    let p = write(dir.path(), "h.csv", "v\n");
    assert!(read_csv_signal(&p, &opts)
        .unwrap_err()
        .to_string()
        .contains("no data rows"));
    let p = write(dir.path(), "z.csv", "");
    assert_eq!(
        read_csv_signal(&p, &opts).unwrap_err().kind(),
        &ErrorKind::Empty
    );
    std::fs::write(dir.path().join("u.csv"), b"v\n\xff\n").unwrap();
    let e = read_csv_signal(dir.path().join("u.csv"), &opts).unwrap_err();
    assert!(e.to_string().contains("line 2: not UTF-8"), "{e}");
    let e = read_csv_signal(dir.path().join("none.csv"), &opts).unwrap_err();
    assert_eq!(e.kind(), &ErrorKind::NotFound);
    let bad_rate = CsvSignalOptions::with_rate(by_name("v"), 0.0);
    let p = write(dir.path(), "r.csv", "v\n1\n");
    assert!(read_csv_signal(&p, &bad_rate).is_err());
}

#[test]
fn random_text_never_panics() {
    let dir = tempfile::tempdir().unwrap();
    let mut rng = Rng::new(0x5eed_0003);
    let pieces = [
        "time_s", "v", ",", "\n", "\"", "1", "0.5", "nan", "", " ", "é", "\r", "-", "1e400",
    ];
    let opts = [
        CsvSignalOptions::with_rate(by_name("v"), 10.0),
        CsvSignalOptions::with_time(ColumnRef::Index(1), by_name("time_s")),
    ];
    for k in 0..2_000 {
        let text: String = (0..rng.below(40))
            .map(|_| pieces[rng.below(pieces.len())])
            .collect();
        let p = write(dir.path(), &format!("f{}.csv", k % 4), &text);
        if let Err(e) = read_csv_signal(&p, &opts[k % 2]) {
            assert!(!e.to_string().contains('\n'));
        }
    }
}
