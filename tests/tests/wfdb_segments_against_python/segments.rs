//! Multi-segment records: segments written by Python wfdb 4.x `wrsamp`,
//! master headers by `MultiRecord.wrheader`, the layout header by hand (as
//! PhysioNet's multi-segment databases write it: `~` files of format 0;
//! wfdb cannot write one). Read by us and by `wfdb.rdrecord`, which joins
//! the segments into one record.

use super::*;

/// A segment for `write_record`: format `fmt`, gain `gain`, signals
/// `names` with stored values `cols`.
fn segment(
    dir: &Path,
    name: &str,
    fmt: &str,
    gain: f64,
    names: &[&str],
    cols: &[Vec<i64>],
) -> Value {
    let signals: Vec<Value> = names
        .iter()
        .zip(cols)
        .map(|(n, d)| {
            json!({"file": format!("{name}.dat"), "fmt": fmt, "spf": 1, "skew": 0,
                   "byte_offset": 0, "gain": gain, "baseline": -2, "units": "mV",
                   "name": n, "adc_res": 16, "digital": d})
        })
        .collect();
    json!({"op": "write_record", "dir": dir.display().to_string(), "name": name,
           "fs": 125, "sig_len": cols[0].len(), "signals": signals})
}

fn ramp(n: usize, seed: i64) -> Vec<i64> {
    (0..n as i64)
        .map(|k| (k * 7919 + seed * 31) % 4001 - 2000)
        .collect()
}

/// `rdrecord`'s joined record.
#[derive(Deserialize, Debug)]
struct PyJoined {
    fs: f64,
    n_sig: usize,
    sig_len: usize,
    sig_name: Vec<String>,
    units: Vec<String>,
    samps_per_frame: Vec<u32>,
}

/// Ours against rdrecord's joined values (physical bit for bit, NaN as
/// NaN; stored values too when `digital`). Returns the NaNs seen.
fn compare_joined(rec: &Record, py: &PyJoined, prefix: &Path, digital: bool) -> usize {
    assert_eq!(
        (rec.fs(), rec.n_signals(), rec.len()),
        (py.fs, py.n_sig, py.sig_len)
    );
    assert_eq!(rec.signal_names(), py.sig_name);
    let mut nans = 0;
    for i in 0..rec.n_signals() {
        assert_eq!(rec.signals()[i].units, py.units[i]);
        assert_eq!(rec.signals()[i].samples_per_frame, py.samps_per_frame[i]);
        let base = prefix.display().to_string();
        let py_p: Vec<f64> = read_le(Path::new(&format!("{base}.{i}.p")), f64::from_le_bytes);
        let ours = rec.read_physical(i).unwrap_or_else(|e| panic!("{e}"));
        assert_blocks_equal(rec, i, &ours, "joined record");
        assert_eq!(ours.len(), py_p.len(), "signal {i}");
        for (k, (a, b)) in ours.iter().zip(&py_p).enumerate() {
            let same = a.to_bits() == b.to_bits() || (a.is_nan() && b.is_nan());
            assert!(same, "signal {i} sample {k}: ours {a}, rdrecord {b}");
            nans += a.is_nan() as usize;
        }
        if digital {
            let py_d: Vec<i64> = read_le(Path::new(&format!("{base}.{i}.d")), i64::from_le_bytes);
            let ours: Vec<i64> = rec
                .read_digital(i)
                .unwrap()
                .into_iter()
                .map(i64::from)
                .collect();
            assert_eq!(ours, py_d, "signal {i} stored values");
        }
    }
    nans
}

fn joined_task(record: &Path, digital: bool) -> Value {
    json!({"op": "read_joined", "record": record.display().to_string(),
           "out": format!("{}.out", record.display()), "digital": digital})
}

#[test]
fn fixed_layout_records_read_as_rdrecord_joins_them() {
    if !need(needs::PYTHON, have_wfdb()) {
        return;
    }
    let tmp = tempfile::tempdir().expect("temp dir");
    let dir = tmp.path();
    let mut b = ramp(300, 2);
    b[17] = -32768;
    let tasks = vec![
        segment(
            dir,
            "fx_1",
            "16",
            200.0,
            &["II", "PLETH"],
            &[ramp(300, 1), b],
        ),
        segment(
            dir,
            "fx_2",
            "16",
            200.0,
            &["II", "PLETH"],
            &[ramp(200, 3), ramp(200, 4)],
        ),
        segment(
            dir,
            "fx_3",
            "16",
            200.0,
            &["II", "PLETH"],
            &[ramp(111, 5), ramp(111, 6)],
        ),
        json!({"op": "write_multi_header", "dir": dir.display().to_string(), "name": "fx",
               "fs": 125, "n_sig": 2, "sig_len": 611,
               "seg_name": ["fx_1", "fx_2", "fx_3"], "seg_len": [300, 200, 111]}),
        joined_task(&dir.join("fx"), true),
    ];
    let answers = reference(tasks);
    let py: PyJoined = serde_json::from_value(answers[4].clone()).unwrap();
    let rec = Record::open(dir.join("fx")).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(rec.header().segments, Some(3));
    let nans = compare_joined(&rec, &py, &dir.join("fx.out"), true);
    assert_eq!(nans, 1);
    rec.verify_checksums().unwrap_or_else(|e| panic!("{e}"));
    // The host loads it as one recording.
    let source = Source {
        signal: Some("PLETH".into()),
        ..Source::default()
    };
    let loaded = load(&dir.join("fx"), &source).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(loaded.signal.samples.len(), 611);
    assert_eq!(loaded.signal.fs, 125.0);
}

#[test]
fn variable_layout_records_with_gaps_read_as_rdrecord_joins_them() {
    if !need(needs::PYTHON, have_wfdb()) {
        return;
    }
    let tmp = tempfile::tempdir().expect("temp dir");
    let dir = tmp.path();
    // Our layout header: every signal of the record, file "~", format 0.
    std::fs::write(
        dir.join("vr_layout.hea"),
        "vr_layout 3 125 0\n~ 0 200(-2)/mV 16 0 0 0 0 II\n\
         ~ 0 200(-2)/mV 16 0 0 0 0 PLETH\n~ 0 50/mmHg 12 0 0 0 0 ABP\n",
    )
    .unwrap();
    let segs = [
        ("vr_1", "16", 200.0, vec!["II", "PLETH"], 250usize),
        ("vr_2", "16", 200.0, vec!["PLETH"], 120),
        ("vr_3", "212", 100.0, vec!["ABP", "II"], 180),
    ];
    let mut tasks: Vec<Value> = segs
        .iter()
        .enumerate()
        .map(|(k, (name, fmt, gain, names, n))| {
            let cols: Vec<Vec<i64>> = (0..names.len())
                .map(|s| ramp(*n, (k * 3 + s) as i64))
                .collect();
            segment(dir, name, fmt, *gain, names, &cols)
        })
        .collect();
    // Segment lengths: layout 0, then a gap of 75 frames in the middle.
    tasks.push(
        json!({"op": "write_multi_header", "dir": dir.display().to_string(), "name": "vr",
        "fs": 125, "n_sig": 3, "sig_len": 625,
        "seg_name": ["vr_layout", "vr_1", "~", "vr_2", "vr_3"], "seg_len": [0, 250, 75, 120, 180]}),
    );
    tasks.push(joined_task(&dir.join("vr"), false));
    // Same formats and gains throughout: stored values join too.
    std::fs::write(
        dir.join("vs_layout.hea"),
        "vs_layout 2 125 0\n~ 0 200(-2)/mV 16 0 0 0 0 PLETH\n~ 0 200(-2)/mV 16 0 0 0 0 II\n",
    )
    .unwrap();
    std::fs::write(
        dir.join("vs.hea"),
        "vs/4 2 125 445\nvs_layout 0\nvr_1 250\n~ 75\nvr_2 120\n",
    )
    .unwrap();
    tasks.push(joined_task(&dir.join("vs"), true));
    let answers = reference(tasks);
    let py: PyJoined = serde_json::from_value(answers[4].clone()).unwrap();
    let rec = Record::open(dir.join("vr")).unwrap_or_else(|e| panic!("{e}"));
    let nans = compare_joined(&rec, &py, &dir.join("vr.out"), false);
    // II: gap + vr_2; PLETH: gap + vr_3; ABP: all but vr_3.
    assert_eq!(nans, (75 + 120) + (75 + 180) + (250 + 75 + 120));
    // Stored values of segments with other gains do not join; Python wfdb
    // refuses them the same way.
    assert!(rec.read_digital(0).is_err());
    let py: PyJoined = serde_json::from_value(answers[5].clone()).unwrap();
    let rec = Record::open(dir.join("vs")).unwrap_or_else(|e| panic!("{e}"));
    let nans = compare_joined(&rec, &py, &dir.join("vs.out"), true);
    // PLETH: the gap; II: the gap and vr_2.
    assert_eq!(nans, 75 + (75 + 120));
    rec.verify_checksums().unwrap_or_else(|e| panic!("{e}"));
    let source = Source {
        signal: Some("PLETH".into()),
        ..Source::default()
    };
    let loaded = load(&dir.join("vr"), &source).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(loaded.signal.samples.len(), 625);
    assert!(loaded.signal.samples[250..325].iter().all(|v| v.is_nan()));
}
