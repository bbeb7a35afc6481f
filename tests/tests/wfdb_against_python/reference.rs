//! Talking to `tests/python/wfdb_reference.py` and comparing its answers
//! (Python wfdb 4.x `rdrecord` / `rdann`) with our readers.

use std::path::Path;
use std::process::Stdio;
use std::sync::OnceLock;

use plethwire_checks::{python, python_json, repo_root};
use plethwire_records::{Annotation, Record};
use serde::Deserialize;
use serde_json::{json, Value};

/// Python with numpy and wfdb importable.
pub fn have_wfdb() -> bool {
    static OK: OnceLock<bool> = OnceLock::new();
    *OK.get_or_init(|| {
        python().is_some_and(|mut cmd| {
            cmd.args(["-c", "import numpy, wfdb"])
                .stdout(Stdio::null())
                .stderr(Stdio::null())
                .status()
                .is_ok_and(|s| s.success())
        })
    })
}

#[derive(Deserialize)]
struct Answer {
    wfdb_version: String,
    results: Vec<Value>,
}

/// Run the reference script on `tasks`.
pub fn reference(tasks: Vec<Value>) -> Vec<Value> {
    let script = repo_root().join("tests/python/wfdb_reference.py");
    let answer: Answer = python_json(&[script], &json!({ "tasks": tasks }));
    assert!(
        answer.wfdb_version.starts_with('4'),
        "these checks are written against wfdb 4.x, found {}",
        answer.wfdb_version
    );
    answer.results
}

/// `rdrecord`'s view of a record, as the script reports it.
#[derive(Deserialize, Debug)]
pub struct PyRecord {
    pub fs: f64,
    pub n_sig: usize,
    pub sig_len: usize,
    pub counter_freq: Option<f64>,
    pub base_counter: Option<f64>,
    pub base_time: Option<(u32, u32, f64)>,
    pub base_date: Option<(u32, u32, u32)>,
    pub sig_name: Vec<Option<String>>,
    pub units: Vec<String>,
    pub fmt: Vec<u32>,
    pub adc_gain: Vec<f64>,
    pub baseline: Vec<i64>,
    pub adc_res: Vec<Option<i64>>,
    pub adc_zero: Vec<Option<i64>>,
    pub init_value: Vec<Option<i64>>,
    pub checksum: Vec<Option<i64>>,
    pub block_size: Vec<Option<i64>>,
    pub samps_per_frame: Vec<u32>,
    pub skew: Vec<Option<u32>>,
    pub byte_offset: Vec<Option<u64>>,
    pub comments: Vec<String>,
    pub lengths: Vec<usize>,
}

/// `rdann`'s view of an annotation file.
#[derive(Deserialize, Debug, PartialEq)]
pub struct PyAnnotations {
    pub sample: Vec<i64>,
    pub symbol: Vec<String>,
    pub subtype: Vec<i64>,
    pub chan: Vec<i64>,
    pub num: Vec<i64>,
    pub aux_note: Vec<String>,
}

impl PyAnnotations {
    /// Ours in rdann's shape. rdann drops entries of code 0 ("not an
    /// annotation") and comment annotations at sample 0 (where wfdb keeps
    /// file-wide definitions), and shows a missing aux text as "".
    pub fn from_ours(anns: &[Annotation]) -> PyAnnotations {
        let kept: Vec<&Annotation> = anns
            .iter()
            .filter(|a| a.code != 0 && !(a.code == 22 && a.sample == 0))
            .collect();
        PyAnnotations {
            sample: kept.iter().map(|a| a.sample).collect(),
            symbol: kept
                .iter()
                .map(|a| a.symbol().expect("standard code").to_string())
                .collect(),
            subtype: kept.iter().map(|a| a.subtype as i64).collect(),
            chan: kept.iter().map(|a| a.chan as i64).collect(),
            num: kept.iter().map(|a| a.num as i64).collect(),
            aux_note: kept
                .iter()
                .map(|a| a.aux.clone().unwrap_or_default())
                .collect(),
        }
    }
}

/// A `write_ann` task: `wfdb.wrann` writes `anns` as `dir/record.ext`,
/// with a time-resolution note of `fs` when given.
pub fn wrann_task(
    dir: &Path,
    record: &str,
    ext: &str,
    anns: &[Annotation],
    fs: Option<f64>,
) -> Value {
    json!({
        "op": "write_ann", "dir": dir.display().to_string(), "record": record, "ext": ext,
        "sample": anns.iter().map(|a| a.sample).collect::<Vec<_>>(),
        "symbol": anns.iter().map(|a| a.symbol().unwrap()).collect::<Vec<_>>(),
        "subtype": anns.iter().map(|a| a.subtype).collect::<Vec<_>>(),
        "chan": anns.iter().map(|a| a.chan).collect::<Vec<_>>(),
        "num": anns.iter().map(|a| a.num).collect::<Vec<_>>(),
        "aux_note": anns.iter().map(|a| a.aux.clone().unwrap_or_default()).collect::<Vec<_>>(),
        "fs": fs,
    })
}

pub fn read_le<T, const N: usize>(path: &Path, from: fn([u8; N]) -> T) -> Vec<T> {
    let bytes = std::fs::read(path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    bytes
        .chunks_exact(N)
        .map(|c| from(c.try_into().expect("chunk of N bytes")))
        .collect()
}

/// What a comparison covered.
#[derive(Default, Debug)]
pub struct Tally {
    pub records: usize,
    pub signals: usize,
    pub samples: usize,
    pub nans: usize,
}

/// Compare our reading of `rec` with the script's `rdrecord` output
/// (samples in `prefix.ch.d` / `prefix.ch.p`). Python leaves fields a
/// header omits as None where we fill in the header(5) default; those are
/// compared only where Python has a value.
pub fn compare(rec: &Record, py: &PyRecord, prefix: &Path, tally: &mut Tally) {
    let label = rec.header_path().display().to_string();
    let h = rec.header();
    assert_eq!(rec.fs(), py.fs, "{label}: fs");
    assert_eq!(rec.n_signals(), py.n_sig, "{label}: n_sig");
    assert_eq!(rec.len(), py.sig_len, "{label}: sig_len");
    assert_eq!(
        h.counter_freq, py.counter_freq,
        "{label}: counter frequency"
    );
    assert_eq!(h.base_counter, py.base_counter, "{label}: base counter");
    assert_eq!(
        h.base_time.map(|t| (t.hours, t.minutes, t.seconds)),
        py.base_time,
        "{label}: base time"
    );
    assert_eq!(
        h.base_date.map(|d| (d.day, d.month, d.year)),
        py.base_date,
        "{label}: base date"
    );
    assert_eq!(h.comments, py.comments, "{label}: comments");
    for (i, s) in rec.signals().iter().enumerate() {
        let at = format!("{label} signal {i}");
        assert_eq!(s.description, py.sig_name[i], "{at}: name");
        assert_eq!(s.units, py.units[i], "{at}: units");
        assert_eq!(s.format.code(), py.fmt[i], "{at}: format");
        assert_eq!(s.adc_gain, py.adc_gain[i], "{at}: gain");
        assert_eq!(s.baseline as i64, py.baseline[i], "{at}: baseline");
        assert_eq!(s.samples_per_frame, py.samps_per_frame[i], "{at}: spf");
        assert_eq!(s.skew, py.skew[i].unwrap_or(0), "{at}: skew");
        assert_eq!(
            s.byte_offset,
            py.byte_offset[i].unwrap_or(0),
            "{at}: offset"
        );
        assert_eq!(s.checksum.map(i64::from), py.checksum[i], "{at}: checksum");
        let given = [
            ("ADC resolution", s.adc_resolution as i64, py.adc_res[i]),
            ("ADC zero", s.adc_zero as i64, py.adc_zero[i]),
            ("initial value", s.initial_value as i64, py.init_value[i]),
            ("block size", s.block_size as i64, py.block_size[i]),
        ];
        for (field, ours, theirs) in given {
            if let Some(theirs) = theirs {
                assert_eq!(ours, theirs, "{at}: {field}");
            }
        }
        let base = prefix.display().to_string();
        let py_d: Vec<i64> = read_le(Path::new(&format!("{base}.{i}.d")), i64::from_le_bytes);
        let py_p: Vec<f64> = read_le(Path::new(&format!("{base}.{i}.p")), f64::from_le_bytes);
        assert_eq!(py_d.len(), py.lengths[i], "{at}: python sample count");
        let ours_d = rec.read_digital(i).unwrap_or_else(|e| panic!("{e}"));
        let ours_p = rec.read_physical(i).unwrap_or_else(|e| panic!("{e}"));
        assert_blocks_equal(rec, i, &ours_p, &at);
        assert_eq!(ours_d.len(), py_d.len(), "{at}: digital length");
        assert_eq!(ours_p.len(), py_p.len(), "{at}: physical length");
        if let Some(k) = (0..py_d.len()).find(|&k| ours_d[k] as i64 != py_d[k]) {
            panic!(
                "{at}: stored sample {k} is {}, rdrecord says {}",
                ours_d[k], py_d[k]
            );
        }
        for k in 0..py_p.len() {
            let (a, b) = (ours_p[k], py_p[k]);
            let same = a.to_bits() == b.to_bits() || (a.is_nan() && b.is_nan());
            assert!(
                same,
                "{at}: physical sample {k} is {a:e} ({:#x}), rdrecord says {b:e} ({:#x})",
                a.to_bits(),
                b.to_bits()
            );
            tally.nans += a.is_nan() as usize;
        }
        tally.signals += 1;
        tally.samples += py_d.len();
    }
    tally.records += 1;
}

/// Signal `i` of `rec` read 7 frames at a time (block edges inside frames
/// and packed byte groups) equals `whole`, its whole read, bit for bit.
pub fn assert_blocks_equal(rec: &Record, i: usize, whole: &[f64], at: &str) {
    let mut joined: Vec<u64> = Vec::with_capacity(whole.len());
    for block in rec.physical_blocks(i, 7).unwrap_or_else(|e| panic!("{e}")) {
        joined.extend(
            block
                .unwrap_or_else(|e| panic!("{e}"))
                .iter()
                .map(|v| v.to_bits()),
        );
    }
    let bits: Vec<u64> = whole.iter().map(|v| v.to_bits()).collect();
    assert!(
        joined == bits,
        "{at}: signal {i} read in blocks differs from the whole read"
    );
}
