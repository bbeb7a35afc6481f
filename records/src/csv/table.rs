//! The rows of a CSV file split into cells (RFC 4180, one record a line),
//! read one line at a time, and the number in a cell.

use super::ColumnRef;
use crate::error::{Error, ErrorKind, Result};
use crate::input::Lines;
use std::path::Path;

/// Most data rows a CSV file may hold: as many as a resampling grid
/// (`MAX_GRID_SAMPLES`), days of samples at any usual rate.
pub const MAX_ROWS: u64 = 100_000_000;

/// A CSV file being read: its header, then its rows one at a time.
pub(crate) struct Table {
    /// Header cells, when the file has a header.
    pub(crate) names: Option<Vec<String>>,
    /// Cells in every row: the header's, else the first row's.
    width: usize,
    lines: Lines,
    /// The first row, read ahead to learn the width of a file without header.
    ahead: Option<(usize, Vec<String>)>,
    rows: u64,
}

impl Table {
    /// Open `path` and read its first non-blank line: with `header`, the
    /// names of the columns, else the first row.
    pub(crate) fn open(path: &Path, header: bool) -> Result<Table> {
        let mut lines = Lines::open(path)?;
        let Some((no, text)) = lines.next_line()? else {
            return Err(Error::new(path, ErrorKind::Empty));
        };
        let cells = split_line(text, path, no)?;
        let width = cells.len();
        let (names, ahead) = if header {
            (Some(cells), None)
        } else {
            (None, Some((no, cells)))
        };
        Ok(Table {
            names,
            width,
            lines,
            ahead,
            rows: 0,
        })
    }

    /// The next data row as (1-based line number, cells); blank lines are
    /// skipped, a row of another width is an error.
    pub(crate) fn next_row(&mut self, path: &Path) -> Result<Option<(usize, Vec<String>)>> {
        let mut cells = Vec::new();
        Ok(self.next_row_into(path, &mut cells)?.map(|no| (no, cells)))
    }

    /// [`next_row`](Self::next_row) into `cells` (its strings reused):
    /// the line number, or `None` at the end.
    pub(crate) fn next_row_into(
        &mut self,
        path: &Path,
        cells: &mut Vec<String>,
    ) -> Result<Option<usize>> {
        let no = match self.ahead.take() {
            Some((no, row)) => {
                *cells = row;
                no
            }
            None => {
                let Some((no, text)) = self.lines.next_line()? else {
                    return Ok(None);
                };
                split_line_into(text, path, no, cells)?;
                if cells.len() != self.width {
                    return Err(Error::syntax(
                        path,
                        no,
                        format!("{} fields, expected {}", cells.len(), self.width),
                    ));
                }
                no
            }
        };
        self.rows += 1;
        if self.rows > MAX_ROWS {
            return Err(Error::new(
                path,
                ErrorKind::TooManySamples {
                    samples: self.rows,
                    limit: MAX_ROWS,
                },
            )
            .at_line(no));
        }
        Ok(Some(no))
    }

    /// Position of `column`, or an error listing the columns there are.
    pub(crate) fn find(&self, path: &Path, column: &ColumnRef) -> Result<usize> {
        let width = self.width;
        let found = match column {
            ColumnRef::Index(i) => Some(*i).filter(|&i| i < width),
            ColumnRef::Name(n) => self
                .names
                .as_ref()
                .and_then(|names| names.iter().position(|c| c == n)),
        };
        found.ok_or_else(|| {
            Error::new(
                path,
                ErrorKind::NoSuchSignal {
                    wanted: match column {
                        ColumnRef::Name(n) => n.clone(),
                        ColumnRef::Index(i) => format!("#{i}"),
                    },
                    available: (0..width).map(|i| self.name(i)).collect(),
                },
            )
        })
    }

    /// Header text of column `i`, or `#i` without a header.
    pub(crate) fn name(&self, i: usize) -> String {
        self.names
            .as_ref()
            .and_then(|n| n.get(i).cloned())
            .unwrap_or_else(|| format!("#{i}"))
    }
}

/// [`split_line`] into `cells`, reusing its strings: a line without a
/// quote is split at its commas directly (the same cells, without the
/// character-by-character walk a quote needs).
fn split_line_into(line: &str, path: &Path, no: usize, cells: &mut Vec<String>) -> Result<()> {
    if line.contains('"') {
        *cells = split_line(line, path, no)?;
        return Ok(());
    }
    let mut used = 0;
    for piece in line.split(',') {
        let text = piece.trim_start_matches([' ', '\t']).trim_end();
        match cells.get_mut(used) {
            Some(cell) => {
                cell.clear();
                cell.push_str(text);
            }
            None => cells.push(text.to_string()),
        }
        used += 1;
    }
    cells.truncate(used);
    Ok(())
}

/// Split line `no` of `path` into cells.
fn split_line(line: &str, path: &Path, no: usize) -> Result<Vec<String>> {
    let mut cells = Vec::new();
    let mut chars = line.chars().peekable();
    loop {
        while chars.peek().is_some_and(|c| *c == ' ' || *c == '\t') {
            chars.next();
        }
        let mut cell = String::new();
        if chars.peek() == Some(&'"') {
            chars.next();
            loop {
                match chars.next() {
                    Some('"') if chars.peek() == Some(&'"') => {
                        chars.next();
                        cell.push('"');
                    }
                    Some('"') => break,
                    Some(c) => cell.push(c),
                    None => {
                        return Err(Error::syntax(
                            path,
                            no,
                            format!("field {} opens a quote it never closes", cells.len() + 1),
                        ))
                    }
                }
            }
            while chars.peek().is_some_and(|c| *c == ' ' || *c == '\t') {
                chars.next();
            }
            match chars.next() {
                None => {
                    cells.push(cell);
                    return Ok(cells);
                }
                Some(',') => cells.push(cell),
                Some(c) => {
                    return Err(Error::syntax(
                        path,
                        no,
                        format!("field {}: {c:?} after the closing quote", cells.len() + 1),
                    ))
                }
            }
        } else {
            loop {
                match chars.next() {
                    None => {
                        cells.push(cell.trim_end().to_string());
                        return Ok(cells);
                    }
                    Some(',') => break,
                    Some(c) => cell.push(c),
                }
            }
            cells.push(cell.trim_end().to_string());
        }
    }
}

/// A cell's number: `Ok(None)` for an empty cell, NaN for `nan`.
pub(crate) fn parse_cell(text: &str) -> std::result::Result<Option<f64>, ()> {
    if text.is_empty() {
        return Ok(None);
    }
    if text.eq_ignore_ascii_case("nan") {
        return Ok(Some(f64::NAN));
    }
    match text.parse::<f64>() {
        Ok(v) if v.is_finite() => Ok(Some(v)),
        _ => Err(()),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_quick_split_is_the_full_one() {
        let path = Path::new("t.csv");
        let mut cells = vec!["left over".to_string(); 9];
        for line in [
            "a,b,c",
            " a ,\tb\t, c ",
            "1,,3,",
            ",",
            "x",
            "1.5e3, -2 ,nan\u{a0}",
            "\u{2003}lead,trail\u{2003}",
        ] {
            split_line_into(line, path, 1, &mut cells).unwrap();
            assert_eq!(cells, split_line(line, path, 1).unwrap(), "{line:?}");
        }
        split_line_into("\"q, r\",s", path, 1, &mut cells).unwrap();
        assert_eq!(cells, ["q, r", "s"]);
    }
}
