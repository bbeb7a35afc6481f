//! A timed CSV file read in blocks ([`CsvBlocks`]) against the whole
//! read ([`read_csv_signals`]): the same samples bit for bit, the same
//! time base, the same refusals.

use super::*;
use std::path::PathBuf;

fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p
}

fn bits(v: &[f64]) -> Vec<u64> {
    v.iter().map(|x| x.to_bits()).collect()
}

use super::blocks::tests::in_blocks;

fn check_same(path: &Path, o: &CsvSignalOptions) {
    let cols = [o.column.clone(), ColumnRef::Index(2)];
    let whole = read_csv_signals(path, &cols, o).unwrap();
    for rows in [1, 7, 1 << 20] {
        let (got, blocks) = in_blocks(path, &cols, o, rows).unwrap();
        for (g, w) in got.iter().zip(&whole.signals) {
            assert_eq!(bits(g), bits(&w.samples), "{path:?} blocks of {rows}");
        }
        assert_eq!(blocks.time(), whole.time, "{path:?}");
        assert_eq!(blocks.fs(), whole.signals[0].fs);
        assert_eq!(
            blocks.samples(),
            Some(whole.signals[0].samples.len() as u64)
        );
    }
    // Other columns on the same time base, not measured again, after
    // the first read to its end.
    let mut first = CsvBlocks::open(path, &cols[..1], o).unwrap();
    let mut out = vec![Vec::new()];
    while first.read_into(64, &mut out).unwrap() {}
    let mut like = first.open_like(&cols[1..]).unwrap();
    let mut all = Vec::new();
    while like.read_into(100, &mut out).unwrap() {
        all.extend_from_slice(&out[0]);
    }
    assert_eq!(bits(&all), bits(&whole.signals[1].samples));
}

/// Frame times from `step` (seconds after frame k), values on two columns.
fn timed_text(rows: usize, step: impl Fn(usize) -> f64, unit: f64) -> String {
    let mut text = String::from("time,v,w\n");
    let mut t = 3.25;
    for k in 0..rows {
        let v = if k == 17 {
            "nan".to_string()
        } else {
            format!("{:.4}", (k as f64 * 0.37).sin())
        };
        text += &format!("{},{v},{}\n", (t / unit * 1e6).round() / 1e6, k % 5);
        t += step(k);
    }
    text
}

#[test]
fn timed_files_in_blocks_are_the_whole_read() {
    let dir = tempfile::tempdir().unwrap();
    let v = ColumnRef::Name("v".into());
    let time = ColumnRef::Name("time".into());
    let jitter = |k: usize| 1.0 / 30.0 + ((k * 37) % 11) as f64 * 1e-3 - 5e-3;
    let cases: Vec<(&str, String)> = vec![
        ("uniform", timed_text(900, |_| 1.0 / 300.0, 1.0)),
        ("jitter", timed_text(1201, jitter, 1.0)),
        ("jitter-even", timed_text(1200, jitter, 1.0)),
        (
            "gaps",
            timed_text(800, |k| if k % 250 == 9 { 0.6 } else { 0.02 }, 1.0),
        ),
        ("ms", timed_text(500, jitter, 1e-3)),
        ("two", timed_text(2, |_| 0.04, 1.0)),
    ];
    for (name, text) in &cases {
        let path = write(dir.path(), &format!("{name}.csv"), text);
        let mut o = CsvSignalOptions::with_time(v.clone(), time.clone());
        if *name == "ms" {
            o.time_unit = TimeUnit::Ms;
        }
        check_same(&path, &o);
        o.rate = Rate::Resample {
            time: time.clone(),
            fs: 64.0,
        };
        check_same(&path, &o);
    }
}

#[test]
fn timed_files_are_refused_as_the_whole_read_refuses_them() {
    let dir = tempfile::tempdir().unwrap();
    let cases = [
        "time,v,w\n0,1,2\n0.1,x,2\n0.0,1,2\n",
        "time,v,w\n0,1,2\n0.1,1,2\n0.1,1,2\n0.3,1,x\n",
        "time,v,w\n0,1,2\n0.1,1,2\n0.05,1,2\n",
        "time,v,w\n0,1,2\n0.1,1,2\nnan,1,2\n",
        "time,v,w\n0,1,2\n",
        "time,v,w\n",
        "time,v,w\n0,1,2\n1e12,1,2\n",
        "time,v,w\n0,1,2\n2e12,1,2\n",
        "time,v,w\n0,1,2\n0.1,,2\n",
        "time,v,w\n0,1,2\n0.1,1\n",
    ];
    let cols = [ColumnRef::Index(1), ColumnRef::Index(2)];
    let mut refused = 0;
    for (k, text) in cases.iter().enumerate() {
        let path = write(dir.path(), &format!("{k}.csv"), text);
        for rate in [
            Rate::FromTime(ColumnRef::Index(0)),
            Rate::Resample {
                time: ColumnRef::Index(0),
                fs: 100.0,
            },
        ] {
            let o = CsvSignalOptions {
                rate,
                ..CsvSignalOptions::with_rate(cols[0].clone(), 1.0)
            };
            // Those the whole read takes are read alike (a rate of
            // 1e-12 Hz is the caller's to refuse).
            match read_csv_signals(&path, &cols, &o) {
                Ok(whole) => {
                    let (got, _) = in_blocks(&path, &cols, &o, 3).unwrap();
                    assert_eq!(bits(&got[1]), bits(&whole.signals[1].samples));
                }
                Err(whole) => {
                    refused += 1;
                    let got = in_blocks(&path, &cols, &o, 3).unwrap_err().to_string();
                    assert_eq!(got, whole.to_string(), "{text:?}");
                }
            }
        }
    }
    // All but one: 1e12 s is a rate of 1e-12 Hz, not a grid too large.
    assert_eq!(refused, 2 * cases.len() - 1);
    let path = write(dir.path(), "x.csv", "time,v\n0,1\n0.1,2\n");
    let o = CsvSignalOptions::with_time(ColumnRef::Index(1), ColumnRef::Name("t".into()));
    let whole = read_csv_signals(&path, &[ColumnRef::Index(1)], &o).unwrap_err();
    let got = in_blocks(&path, &[ColumnRef::Index(1)], &o, 3).unwrap_err();
    assert_eq!(got.to_string(), whole.to_string());
}
