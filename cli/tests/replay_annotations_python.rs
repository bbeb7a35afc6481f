//! Beat annotations written by `plethwire replay` read back with the
//! Python `wfdb` library's `rdann` (PhysioNet's reference reader) to the
//! same samples and symbols, on shared recordings of both datasets.

use plethwire::replay::{load, replay, Source};
use plethwire_checks::{need, needs, python, python_json, shared_data_dir};
use plethwire_cli::run;
use plethwire_dsp::pipeline::Config;
use serde::Deserialize;
use std::ffi::OsString;

#[derive(Deserialize)]
struct Read {
    sample: Vec<i64>,
    symbol: Vec<String>,
}

const RDANN: &str = "import json, sys, wfdb\n\
req = json.load(sys.stdin)\n\
a = wfdb.rdann(req['record'], req['annotator'])\n\
json.dump({'sample': [int(s) for s in a.sample], 'symbol': list(a.symbol)}, sys.stdout)\n";

#[test]
fn replay_annotations_read_back_with_python_wfdb() {
    let Some(data) = shared_data_dir() else {
        need(needs::SHARED_DATA, false);
        return;
    };
    if !need(needs::PYTHON, python().is_some()) {
        return;
    }
    let out = tempfile::tempdir().unwrap();
    for rec in [
        "capnobase/cb0009",
        "capnobase/cb0031",
        "bidmc/bidmc01",
        "bidmc/bidmc45",
    ] {
        let path = data.join(rec);
        let args: Vec<OsString> = vec![
            "plethwire".into(),
            "replay".into(),
            path.clone().into(),
            "--out".into(),
            out.path().into(),
            "--beats-csv".into(),
            // Not the default name: a file beside a shared record may have it.
            "--annotator".into(),
            "found".into(),
        ];
        let mut text = Vec::new();
        run(args, &mut text).unwrap_or_else(|f| panic!("{rec}: {:?}", f.message));
        let text = String::from_utf8(text).unwrap();
        assert!(text.contains("beats"), "{text}");

        // What the pipeline found, computed again in-process.
        let recording = load(&path, &Source::default()).unwrap();
        let expected = replay(
            &recording.signal.samples,
            Config::new(recording.signal.fs as f32),
        )
        .unwrap()
        .peaks();
        assert!(expected.len() > 400, "{rec}: {} beats", expected.len());

        let name = path.file_name().unwrap().to_string_lossy().into_owned();
        let record = out.path().join(&name);
        let read: Read = python_json(
            &["-c", RDANN],
            &serde_json::json!({"record": record.to_string_lossy(), "annotator": "found"}),
        );
        let samples: Vec<u64> = read.sample.iter().map(|&s| s as u64).collect();
        assert_eq!(samples, expected, "{rec}: wfdb.rdann samples");
        assert!(read.symbol.iter().all(|s| s == "N"), "{rec}: symbols");
        let csv = std::fs::read_to_string(out.path().join(format!("{name}.found.csv"))).unwrap();
        assert_eq!(
            csv.lines().count(),
            expected.len() + 1,
            "{rec}: one CSV row per beat"
        );
    }
}
