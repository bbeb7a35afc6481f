//! Tables of sparse numbers over time, such as a bedside monitor's
//! once-a-second heart rate, pulse rate and SpO2.
//!
//! The CSV file (RFC 4180, see [`read_csv_signal`](super::read_csv_signal)
//! for the accepted text) has a header; its first column is the time in
//! seconds, which every row must have, in increasing order. Every other
//! column is a named series where a cell may be missing: an empty cell or
//! the text `nan` (any case) is `None`. Any other text that is not a
//! number is an error naming file, line and column.

use std::path::Path;

use super::csv::{parse_cell, Table};
use super::error::{Error, ErrorKind, Result};

/// A table of series sharing one time column.
#[derive(Debug, Clone, PartialEq)]
pub struct Numerics {
    /// Header text of the time column, e.g. `time_s`.
    pub time_name: String,
    /// Time of each row, in seconds.
    pub time_s: Vec<f64>,
    /// Names of the other columns, in file order.
    pub names: Vec<String>,
    /// `values[c][row]`: column `names[c]` at `time_s[row]`.
    pub values: Vec<Vec<Option<f64>>>,
}

impl Numerics {
    /// Number of rows.
    pub fn len(&self) -> usize {
        self.time_s.len()
    }

    /// Whether there are no rows.
    pub fn is_empty(&self) -> bool {
        self.time_s.is_empty()
    }

    /// The series named `name`.
    pub fn column(&self, name: &str) -> Option<&[Option<f64>]> {
        let i = self.names.iter().position(|n| n == name)?;
        Some(&self.values[i])
    }
}

/// Read the numerics table at `path`.
pub fn read_numerics(path: impl AsRef<Path>) -> Result<Numerics> {
    let path = path.as_ref();
    let mut table = Table::open(path, true)?;
    let names = table.names.clone().unwrap_or_default();
    let Some((time_name, names)) = names.split_first() else {
        return Err(Error::new(path, ErrorKind::Syntax("no header line".into())));
    };
    let mut time_s = Vec::new();
    let mut values = vec![Vec::new(); names.len()];
    while let Some((no, cells)) = table.next_row(path)? {
        let bad = |i: usize| {
            Error::new(
                path,
                ErrorKind::NotANumber {
                    column: table.name(i),
                    text: cells[i].clone(),
                },
            )
            .at_line(no)
        };
        let t = match parse_cell(&cells[0]) {
            Ok(Some(t)) if t.is_finite() => t,
            _ => return Err(bad(0)),
        };
        if let Some(&prev) = time_s.last() {
            if t <= prev {
                return Err(Error::syntax(
                    path,
                    no,
                    format!("time {t} does not follow {prev}"),
                ));
            }
        }
        time_s.push(t);
        for (c, column) in values.iter_mut().enumerate() {
            let cell = parse_cell(&cells[c + 1]).map_err(|()| bad(c + 1))?;
            column.push(cell.filter(|v| !v.is_nan()));
        }
    }
    Ok(Numerics {
        time_name: time_name.clone(),
        time_s,
        names: names.to_vec(),
        values,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::test_support::Rng;

    fn write(dir: &Path, name: &str, text: &str) -> std::path::PathBuf {
        let p = dir.join(name);
        std::fs::write(&p, text).unwrap();
        p
    }

    #[test]
    fn empty_and_nan_cells_are_none() {
        let dir = tempfile::tempdir().unwrap();
        let p = write(
            dir.path(),
            "n.csv",
            "time_s,hr_bpm,pulse_bpm,spo2_pct\n0,94,93.0,97.0\n1,92,,\n2,91,NaN,nan\r\n\n3,90,88.5,96\n",
        );
        let n = read_numerics(&p).unwrap();
        assert_eq!(n.time_name, "time_s");
        assert_eq!(n.time_s, vec![0.0, 1.0, 2.0, 3.0]);
        assert_eq!(n.names, vec!["hr_bpm", "pulse_bpm", "spo2_pct"]);
        assert_eq!(n.len(), 4);
        assert_eq!(
            n.column("pulse_bpm").unwrap(),
            &[Some(93.0), None, None, Some(88.5)]
        );
        assert_eq!(n.column("hr_bpm").unwrap()[3], Some(90.0));
        assert!(n.column("resp").is_none());
    }

    #[test]
    fn bad_cells_name_file_line_and_column() {
        let dir = tempfile::tempdir().unwrap();
        let p = write(dir.path(), "b.csv", "time_s,hr_bpm\n0,94\n1,high\n");
        let e = read_numerics(&p).unwrap_err();
        assert_eq!(e.line(), Some(3));
        assert!(
            e.to_string()
                .ends_with("b.csv line 3: column \"hr_bpm\": \"high\" is not a number"),
            "{e}"
        );
        let p = write(dir.path(), "t.csv", "time_s,hr_bpm\n,94\n");
        assert!(read_numerics(&p)
            .unwrap_err()
            .to_string()
            .contains("column \"time_s\""));
        let p = write(dir.path(), "o.csv", "time_s,hr_bpm\n1,94\n1,95\n");
        assert!(read_numerics(&p)
            .unwrap_err()
            .to_string()
            .contains("does not follow"));
        let p = write(dir.path(), "w.csv", "time_s,hr_bpm\n1,94,3\n");
        assert_eq!(
            read_numerics(&p).unwrap_err().to_string(),
            format!("{} line 2: 3 fields, expected 2", p.display())
        );
        let p = write(dir.path(), "e.csv", "\n \n");
        assert_eq!(read_numerics(&p).unwrap_err().kind(), &ErrorKind::Empty);
        assert_eq!(
            read_numerics(dir.path().join("gone.csv"))
                .unwrap_err()
                .kind(),
            &ErrorKind::NotFound
        );
    }

    #[test]
    fn random_text_never_panics() {
        let dir = tempfile::tempdir().unwrap();
        let mut rng = Rng::new(0x5eed_0004);
        let pieces = [
            "time_s", ",", "\n", "\"", "1", "2.5", "nan", "", " ", "x", "\r", "-", "e9",
        ];
        for k in 0..2_000 {
            let text: String = (0..rng.below(40))
                .map(|_| pieces[rng.below(pieces.len())])
                .collect();
            let p = write(dir.path(), &format!("f{}.csv", k % 4), &text);
            if let Err(e) = read_numerics(&p) {
                assert!(!e.to_string().contains('\n'));
            }
        }
    }
}
