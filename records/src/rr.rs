//! A list of R-R intervals, as a chest-strap ECG exports them: one
//! interval in milliseconds per line (`1203`, `974.5`), blank lines
//! ignored, a `\r\n` line end or a leading byte-order mark accepted.

use std::path::Path;

use super::error::{quoted, Error, ErrorKind, Result};
use super::input::Lines;

/// Read the R-R intervals (ms) in the file at `path`. A file with no
/// interval, or a line that is not a number above 0 ms, is an error naming
/// the file (and the line).
pub fn read_rr_intervals(path: impl AsRef<Path>) -> Result<Vec<f64>> {
    let path = path.as_ref();
    let mut lines = Lines::open(path)?;
    let mut out = Vec::new();
    while let Some((no, line)) = lines.next_line()? {
        let cell = line.trim();
        match cell.parse::<f64>() {
            Ok(v) if v.is_finite() && v > 0.0 => out.push(v),
            _ => {
                return Err(Error::syntax(
                    path,
                    no,
                    format!("{} is not an interval in ms", quoted(cell)),
                ))
            }
        }
    }
    if out.is_empty() {
        return Err(Error::new(path, ErrorKind::Empty));
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn intervals_blank_lines_and_refusals() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("a.rr.txt");
        std::fs::write(&p, "\u{feff}800\r\n\n 812.5 \n").unwrap();
        assert_eq!(read_rr_intervals(&p).unwrap(), vec![800.0, 812.5]);
        std::fs::write(&p, "\n  \n").unwrap();
        assert_eq!(read_rr_intervals(&p).unwrap_err().kind(), &ErrorKind::Empty);
        std::fs::write(&p, "800\nabc\n").unwrap();
        let e = read_rr_intervals(&p).unwrap_err();
        assert_eq!(e.line(), Some(2));
        assert!(e.to_string().contains("a.rr.txt line 2"), "{e}");
        std::fs::write(&p, "800\n-5\n").unwrap();
        assert_eq!(read_rr_intervals(&p).unwrap_err().line(), Some(2));
    }
}
