//! The numerics reader on the shared BIDMC once-a-second tables, against
//! Python's standard `csv` module and `float()` (Python 3 library
//! documentation): every row's time, every cell's value, and which cells
//! are missing (empty or `nan`) must agree.

use plethwire_checks::{need, needs, python, python_json, shared_data_dir};
use plethwire_records::read_numerics;
use serde::Deserialize;

const READ_WITH_CSV_MODULE: &str = r#"
import csv, json, math, sys
answers = []
for path in json.load(sys.stdin)["paths"]:
    with open(path, newline="") as f:
        rows = list(csv.reader(f))
    def cell(text):
        v = float(text) if text.strip() else None
        return None if v is None or math.isnan(v) else v
    body = [r for r in rows[1:] if r]
    answers.append({
        "header": rows[0],
        "time": [float(r[0]) for r in body],
        "columns": [[cell(r[c]) for r in body] for c in range(1, len(rows[0]))],
    })
print(json.dumps(answers))
"#;

#[derive(Deserialize)]
struct PyTable {
    header: Vec<String>,
    time: Vec<f64>,
    columns: Vec<Vec<Option<f64>>>,
}

#[test]
fn bidmc_numerics_match_python_csv() {
    let data = shared_data_dir();
    if !need(needs::SHARED_DATA, data.is_some()) || !need(needs::PYTHON, python().is_some()) {
        return;
    }
    let dir = data.expect("checked above").join("bidmc");
    let mut paths: Vec<String> = std::fs::read_dir(&dir)
        .unwrap_or_else(|e| panic!("{}: {e}", dir.display()))
        .map(|e| e.expect("directory entry").path())
        .filter(|p| p.to_string_lossy().ends_with("n.csv"))
        .map(|p| p.display().to_string())
        .collect();
    paths.sort();
    assert_eq!(paths.len(), 16, "one numerics table per BIDMC record");
    let answers: Vec<PyTable> = python_json(
        &["-c", READ_WITH_CSV_MODULE],
        &serde_json::json!({ "paths": paths }),
    );
    let (mut cells, mut missing) = (0, 0);
    for (path, py) in paths.iter().zip(answers) {
        let n = read_numerics(path).unwrap_or_else(|e| panic!("{e}"));
        assert_eq!(n.time_name, py.header[0], "{path}");
        assert_eq!(n.names, py.header[1..], "{path}");
        assert_eq!(n.time_s, py.time, "{path}");
        assert_eq!(n.values, py.columns, "{path}");
        for column in &n.values {
            cells += column.len();
            missing += column.iter().filter(|v| v.is_none()).count();
        }
    }
    eprintln!("BIDMC numerics: {cells} cells, {missing} missing");
    assert!(missing > 0, "the tables are known to have empty cells");
}
