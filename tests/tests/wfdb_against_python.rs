//! plethwire's WFDB readers and writers against the Python wfdb package
//! (4.x): `wfdb.rdrecord`, `wfdb.rdann`, `wfdb.wrsamp` / `Record.wrsamp`
//! and `wfdb.wrann`, driven by `tests/python/wfdb_reference.py` each time
//! this test runs.
//!
//! * Every shared recording: header fields, stored values (`rdrecord(...,
//!   physical=False).d_signal`) and physical values (`rdrecord(...).p_signal`)
//!   must be identical. Physical values are compared bit for bit: wfdb
//!   computes (stored − baseline) / gain in float64, as we do; NaN (the
//!   invalid-sample value) must be NaN on both sides.
//! * Every `.peak` file: `rdann` samples, symbols, subtype, chan, num, aux.
//! * Signal files of random bytes in every format we read (8, 16, 24, 32,
//!   61, 80, 160, 212, 310, 311), several files, byte offsets, several
//!   samples per frame and skew, with headers we write: `rdrecord` must
//!   decode them as we do.
//! * Records written by wfdb (formats 212, 80, 24, 32, several files):
//!   read by us. Records written by us (format 16): read by `rdrecord`.
//! * Annotations written by us, read by `rdann`, and the other way round,
//!   with gaps beyond 1023 and 65535 samples and every modifier.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use plethwire_checks::{need, needs, shared_data_dir};
use plethwire_records::{
    annotation_path, code_for_symbol, read_annotations, write_annotations, write_record,
    Annotation, NewSignal, Record,
};
use serde_json::{json, Value};

#[path = "wfdb_against_python/reference.rs"]
mod reference;
use reference::{
    compare, have_wfdb, read_le, reference, wrann_task, PyAnnotations, PyRecord, Tally,
};

/// The `.hea` files of the shared recordings, sorted.
fn shared_headers(data: &Path) -> Vec<PathBuf> {
    let mut out = Vec::new();
    for sub in ["capnobase", "bidmc"] {
        let dir = data.join(sub);
        let entries = std::fs::read_dir(&dir).unwrap_or_else(|e| panic!("{}: {e}", dir.display()));
        for entry in entries {
            let path = entry.expect("directory entry").path();
            if path.extension().is_some_and(|e| e == "hea") {
                out.push(path);
            }
        }
    }
    out.sort();
    out
}

fn record_task(header: &Path, out: &Path, expanded: bool) -> Value {
    json!({
        "op": "read_record",
        "record": header.with_extension("").display().to_string(),
        "out": out.display().to_string(),
        "expanded": expanded,
    })
}

#[test]
fn shared_records_match_rdrecord() {
    let data = shared_data_dir();
    if !need(needs::SHARED_DATA, data.is_some()) || !need(needs::PYTHON, have_wfdb()) {
        return;
    }
    let data = data.expect("checked above");
    let headers = shared_headers(&data);
    assert_eq!(
        headers.len(),
        37,
        "21 CapnoBase + 16 BIDMC records expected"
    );
    let tmp = tempfile::tempdir().expect("temp dir");
    let tasks = headers
        .iter()
        .map(|h| record_task(h, &tmp.path().join(h.file_stem().unwrap()), false))
        .collect();
    let answers = reference(tasks);
    let mut tally = Tally::default();
    for (h, answer) in headers.iter().zip(answers) {
        let py: PyRecord = serde_json::from_value(answer).expect("record answer");
        let rec = Record::open(h).unwrap_or_else(|e| panic!("{e}"));
        compare(
            &rec,
            &py,
            &tmp.path().join(h.file_stem().unwrap()),
            &mut tally,
        );
        // Every shared record's header checksums match its samples
        // (header(5): sum of samples modulo 2^16).
        rec.verify_checksums().unwrap_or_else(|e| panic!("{e}"));
    }
    eprintln!("shared records vs rdrecord: {tally:?}");
    assert_eq!(tally.records, 37);
    assert_eq!(tally.signals, 21 + 16 * 2);
    assert_eq!(tally.samples, 21 * 144_001 + 16 * 2 * 60_001);
}

#[test]
fn shared_peak_annotations_match_rdann() {
    let data = shared_data_dir();
    if !need(needs::SHARED_DATA, data.is_some()) || !need(needs::PYTHON, have_wfdb()) {
        return;
    }
    let data = data.expect("checked above");
    let headers: Vec<PathBuf> = shared_headers(&data)
        .into_iter()
        .filter(|h| annotation_path(h, "peak").is_file())
        .collect();
    assert_eq!(headers.len(), 21, "every CapnoBase record has a .peak file");
    let tasks = headers
        .iter()
        .map(|h| json!({"op": "read_ann", "record": h.with_extension("").display().to_string(), "ext": "peak"}))
        .collect();
    let mut total = 0;
    for (h, answer) in headers.iter().zip(reference(tasks)) {
        let py: PyAnnotations = serde_json::from_value(answer).expect("annotation answer");
        let ours = read_annotations(annotation_path(h, "peak")).unwrap_or_else(|e| panic!("{e}"));
        assert_eq!(PyAnnotations::from_ours(&ours), py, "{}", h.display());
        assert!(ours.iter().all(|a| a.symbol() == Some("N")));
        total += ours.len();
    }
    eprintln!(
        "peak annotations vs rdann: {} files, {total} annotations",
        headers.len()
    );
    assert!(total > 21 * 100);
}

/// Deterministic bytes for the synthetic signal files (xorshift64*).
struct Bytes(u64);

impl Bytes {
    fn take(&mut self, n: usize) -> Vec<u8> {
        (0..n)
            .map(|_| {
                self.0 ^= self.0 >> 12;
                self.0 ^= self.0 << 25;
                self.0 ^= self.0 >> 27;
                (self.0.wrapping_mul(0x2545_f491_4f6c_dd1d) >> 56) as u8
            })
            .collect()
    }
}

/// A record made up for the test.
struct Synthetic {
    name: String,
    header: String,
    /// Signal file names and their bytes.
    files: Vec<(String, Vec<u8>)>,
}

/// Synthetic records with random sample bytes.
fn synthetic_records() -> Vec<Synthetic> {
    let mut rng = Bytes(0x0bad_5eed);
    let mut out = Vec::new();
    // Two interleaved signals per format; odd frame counts leave packed
    // formats with a partial last group.
    let formats: [(u32, u64); 10] = [
        (8, 1),
        (16, 2),
        (24, 3),
        (32, 4),
        (61, 2),
        (80, 1),
        (160, 2),
        (212, 2),
        (310, 2),
        (311, 2),
    ];
    for (code, _) in formats {
        for frames in [1000usize, 1001] {
            let name = format!("f{code}_{frames}");
            let samples = 2 * frames as u64;
            let bytes_needed = match code {
                8 | 80 => samples,
                16 | 61 | 160 => samples * 2,
                24 => samples * 3,
                32 => samples * 4,
                212 => (samples * 3).div_ceil(2),
                _ => samples.div_ceil(3) * 4,
            };
            let mut bytes = rng.take(bytes_needed as usize);
            if code == 311 {
                // Bits 30 and 31 of each word are unused; wfdb 4.x reads
                // bit 30 into the third sample, so keep them clear, as
                // writers do.
                for b in bytes.iter_mut().skip(3).step_by(4) {
                    *b &= 0x3F;
                }
            }
            if code == 8 {
                // Small differences, so the running sums stay modest.
                for b in bytes.iter_mut() {
                    *b = (*b as i8 / 8) as u8;
                }
            }
            let header = format!(
                "{name} 2 250 {frames}\n\
                 {name}.dat {code} 200.5(-3)/mV 12 0 17 0 0 first signal\n\
                 {name}.dat {code} 0.25/NU 12 5 -20\n"
            );
            let files = vec![(format!("{name}.dat"), bytes)];
            out.push(Synthetic {
                name,
                header,
                files,
            });
        }
    }
    // Two files, the second behind a 10-byte preamble, with skew and
    // several samples per frame, and every record-line field.
    let a = rng.take(2 * 3 * 500);
    let mut b = vec![0xEE; 10];
    b.extend(rng.take((500usize * 3).div_ceil(2)));
    let header = "multi 3 125/1000(-5) 500 08:30:05.5 29/02/2024\n\
                  multi_a.dat 16x2 1000(12)/uV 16 0 0 0 0 fast\n\
                  multi_a.dat 16:2 50/NU 16 3 9 0 0 skewed\n\
                  multi_b.dat 212+10 7 12 0 0 0 0 packed\n\
                  # a comment line\n";
    out.push(Synthetic {
        name: "multi".into(),
        header: header.into(),
        files: vec![("multi_a.dat".into(), a), ("multi_b.dat".into(), b)],
    });
    out
}

#[test]
fn random_signal_files_in_every_format_match_rdrecord() {
    if !need(needs::PYTHON, have_wfdb()) {
        return;
    }
    let tmp = tempfile::tempdir().expect("temp dir");
    let records = synthetic_records();
    let mut tasks = Vec::new();
    for Synthetic {
        name,
        header,
        files,
    } in &records
    {
        std::fs::write(tmp.path().join(format!("{name}.hea")), header).unwrap();
        for (file, bytes) in files {
            std::fs::write(tmp.path().join(file), bytes).unwrap();
        }
        let expanded = header.contains("x2");
        tasks.push(record_task(
            &tmp.path().join(format!("{name}.hea")),
            &tmp.path().join(format!("{name}.out")),
            expanded,
        ));
    }
    let mut tally = Tally::default();
    for (Synthetic { name, .. }, answer) in records.iter().zip(reference(tasks)) {
        let py: PyRecord = serde_json::from_value(answer).expect("record answer");
        let rec = Record::open(tmp.path().join(name)).unwrap_or_else(|e| panic!("{e}"));
        compare(
            &rec,
            &py,
            &tmp.path().join(format!("{name}.out")),
            &mut tally,
        );
    }
    eprintln!("random signal files vs rdrecord: {tally:?}");
    assert_eq!(tally.records, 21);
    // Random bytes hit the invalid-sample values of the narrow formats.
    assert!(tally.nans > 0, "{tally:?}");
}

/// A signal for `Record.wrsamp`.
fn py_signal(file: &str, fmt: &str, name: &str, digital: &[i64]) -> Value {
    json!({
        "file": file, "fmt": fmt, "spf": 1, "skew": 0, "byte_offset": 0,
        "gain": 100.0, "baseline": 3, "units": "mV", "name": name,
        "adc_res": 12, "digital": digital,
    })
}

#[test]
fn records_written_by_wrsamp_read_the_same() {
    if !need(needs::PYTHON, have_wfdb()) {
        return;
    }
    let tmp = tempfile::tempdir().expect("temp dir");
    let dir = tmp.path().display().to_string();
    let ramp = |n: i64, lo: i64, hi: i64| -> Vec<i64> {
        (0..n).map(|k| lo + (k * 7919) % (hi - lo + 1)).collect()
    };
    let mut with_min_212 = ramp(301, -2047, 2047);
    with_min_212[10] = -2048;
    let mut with_min_80 = ramp(300, -127, 127);
    with_min_80[3] = -128;
    let mut offset = py_signal("mf_b.dat", "212", "packed", &ramp(300, -2048, 2047));
    offset["byte_offset"] = json!(6);
    let mut fast = py_signal("spf.dat", "16", "fast", &ramp(600, -30000, 30000));
    fast["spf"] = json!(2);
    let records: Vec<(&str, Vec<Value>)> = vec![
        (
            "w212",
            vec![
                py_signal("w212.dat", "212", "A", &with_min_212),
                py_signal("w212.dat", "212", "B", &ramp(301, -100, 100)),
            ],
        ),
        ("w80", vec![py_signal("w80.dat", "80", "A", &with_min_80)]),
        (
            "w24",
            vec![py_signal(
                "w24.dat",
                "24",
                "A",
                &ramp(300, -8_388_607, 8_388_607),
            )],
        ),
        (
            "w32",
            vec![py_signal(
                "w32.dat",
                "32",
                "A",
                &ramp(300, -2_000_000_000, 2_000_000_000),
            )],
        ),
        (
            "mf",
            vec![
                py_signal("mf_a.dat", "16", "one", &ramp(300, -32767, 32767)),
                py_signal("mf_a.dat", "16", "two", &ramp(300, -5, 5)),
                offset,
            ],
        ),
        (
            "spf",
            vec![fast, py_signal("spf.dat", "16", "slow", &ramp(300, -9, 9))],
        ),
    ];
    let mut tasks = Vec::new();
    for (name, signals) in &records {
        let sig_len = signals[0]["digital"].as_array().unwrap().len()
            / signals[0]["spf"].as_u64().unwrap() as usize;
        tasks.push(json!({"op": "write_record", "dir": dir, "name": name, "fs": 360, "sig_len": sig_len, "signals": signals}));
    }
    for (name, _) in &records {
        tasks.push(record_task(
            &tmp.path().join(format!("{name}.hea")),
            &tmp.path().join(format!("{name}.out")),
            *name == "spf",
        ));
    }
    let answers = reference(tasks);
    let mut tally = Tally::default();
    for ((name, signals), answer) in records.iter().zip(&answers[records.len()..]) {
        let py: PyRecord = serde_json::from_value(answer.clone()).expect("record answer");
        let rec = Record::open(tmp.path().join(name)).unwrap_or_else(|e| panic!("{e}"));
        compare(
            &rec,
            &py,
            &tmp.path().join(format!("{name}.out")),
            &mut tally,
        );
        // And the values are the ones wfdb was asked to write.
        for (i, s) in signals.iter().enumerate() {
            let wanted: Vec<i32> = s["digital"]
                .as_array()
                .unwrap()
                .iter()
                .map(|v| v.as_i64().unwrap() as i32)
                .collect();
            assert_eq!(rec.read_digital(i).unwrap(), wanted, "{name} signal {i}");
        }
        rec.verify_checksums().unwrap_or_else(|e| panic!("{e}"));
    }
    eprintln!("records written by wfdb: {tally:?}");
    assert_eq!(tally.records, 6);
    assert!(tally.nans >= 2, "{tally:?}");
}

#[test]
fn our_format_16_records_read_back_in_rdrecord() {
    if !need(needs::PYTHON, have_wfdb()) {
        return;
    }
    let tmp = tempfile::tempdir().expect("temp dir");
    let n = 5000;
    let pleth: Vec<i32> = (0..n).map(|k| ((k * 37) % 4001) - 2000).collect();
    let ecg: Vec<i32> = (0..n)
        .map(|k| match k {
            100 => -32768,
            101 => 32767,
            _ => (k * 7) % 65535 - 32767,
        })
        .collect();
    let signals = [
        NewSignal::new("PLETH", "NU", 100.0, 0),
        NewSignal::new("ECG lead II", "mV", 1023.25, -17),
    ];
    write_record(
        tmp.path(),
        "ours16",
        300.0,
        &signals,
        &[pleth.clone(), ecg.clone()],
    )
    .unwrap_or_else(|e| panic!("{e}"));
    let out = tmp.path().join("ours16.out");
    let answers = reference(vec![record_task(
        &tmp.path().join("ours16.hea"),
        &out,
        false,
    )]);
    let py: PyRecord = serde_json::from_value(answers[0].clone()).expect("record answer");
    assert_eq!(
        py.sig_name,
        vec![Some("PLETH".into()), Some("ECG lead II".into())]
    );
    assert_eq!(py.units, vec!["NU", "mV"]);
    assert_eq!(py.adc_gain, vec![100.0, 1023.25]);
    assert_eq!(py.baseline, vec![0, -17]);
    assert_eq!(py.fmt, vec![16, 16]);
    assert_eq!(
        py.init_value,
        vec![Some(pleth[0] as i64), Some(ecg[0] as i64)]
    );
    let py_d: Vec<i64> = read_le(&tmp.path().join("ours16.out.1.d"), i64::from_le_bytes);
    assert_eq!(py_d, ecg.iter().map(|&v| v as i64).collect::<Vec<_>>());
    let py_d0: Vec<i64> = read_le(&tmp.path().join("ours16.out.0.d"), i64::from_le_bytes);
    assert_eq!(py_d0, pleth.iter().map(|&v| v as i64).collect::<Vec<_>>());
    let rec = Record::open(tmp.path().join("ours16")).unwrap();
    let mut tally = Tally::default();
    compare(&rec, &py, &out, &mut tally);
    assert_eq!(tally.samples, 2 * n as usize);
    assert_eq!(tally.nans, 1);
}

/// Annotations with every feature: large gaps, subtypes, channels,
/// numbers (`num` where it is set) and aux text.
fn rich_annotations(num: i8) -> Vec<Annotation> {
    let symbols = ["N", "V", "A", "+", "~", "|", "\"", "Q", "/", "j"];
    let mut anns = Vec::new();
    let mut t = 0i64;
    for k in 0..400i64 {
        t += match k {
            50 => 1024,
            51 => 1023,
            120 => 70_000,
            121 => 65_536,
            _ => 150 + (k * 31) % 200,
        };
        let mut a = Annotation::new(
            t,
            code_for_symbol(symbols[k as usize % symbols.len()]).unwrap(),
        );
        if k % 7 == 0 {
            a.subtype = (k % 5 - 2) as i8;
        }
        if k % 40 >= 30 {
            a.chan = 3;
        }
        if k % 60 >= 45 {
            a.num = num;
        }
        if k % 11 == 0 {
            a.aux = Some(if k % 2 == 0 {
                "(AFIB".into()
            } else {
                "noise burst".into()
            });
        }
        anns.push(a);
    }
    anns
}

#[test]
fn annotations_cross_between_our_writer_and_rdann_and_wrann_and_our_reader() {
    if !need(needs::PYTHON, have_wfdb()) {
        return;
    }
    let tmp = tempfile::tempdir().expect("temp dir");
    let rec = tmp.path().join("annrec");
    // The annotation format stores `num` as a signed byte and so does our
    // writer; wrann accepts only 0..=127, so its file uses a positive one.
    let anns = rich_annotations(-4);
    let for_wrann = rich_annotations(4);
    // Plain beats, and one after a gap too long for a single SKIP's
    // signed 32-bit interval.
    let mut beats: Vec<Annotation> = (1..=300).map(|k| Annotation::beat(k * 211)).collect();
    beats.push(Annotation::beat(300 * 211 + 3_000_000_000));
    write_annotations(annotation_path(&rec, "ours"), &anns).unwrap();
    write_annotations(annotation_path(&rec, "beats"), &beats).unwrap();
    let rec_name = rec.display().to_string();
    let answers = reference(vec![
        json!({"op": "read_ann", "record": rec_name, "ext": "ours"}),
        json!({"op": "read_ann", "record": rec_name, "ext": "beats"}),
        wrann_task(tmp.path(), "annrec", "py", &for_wrann, None),
        json!({"op": "read_ann", "record": rec_name, "ext": "py"}),
    ]);
    let mut by_ext = BTreeMap::new();
    for (ext, i) in [("ours", 0), ("beats", 1), ("py", 3)] {
        let py: PyAnnotations =
            serde_json::from_value(answers[i].clone()).expect("annotation answer");
        by_ext.insert(ext, py);
    }
    // rdann reads what we wrote.
    assert_eq!(by_ext["ours"], PyAnnotations::from_ours(&anns));
    assert_eq!(by_ext["beats"], PyAnnotations::from_ours(&beats));
    // We read what wrann wrote, and rdann agrees on that file too.
    let theirs = read_annotations(annotation_path(&rec, "py")).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(theirs, for_wrann);
    assert_eq!(by_ext["py"], PyAnnotations::from_ours(&for_wrann));
    let gaps = anns.windows(2).map(|w| w[1].sample - w[0].sample);
    assert!(gaps.clone().any(|g| g > 65_535) && gaps.clone().any(|g| g > 1023 && g < 65_536));
    eprintln!(
        "annotations: {} rich + {} beats written by us, {} written by wrann",
        anns.len(),
        beats.len(),
        theirs.len()
    );
}
