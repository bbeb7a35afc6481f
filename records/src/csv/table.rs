//! The rows of a CSV file split into cells (RFC 4180, one record a line),
//! and the number in a cell.

use super::ColumnRef;
use crate::error::{Error, ErrorKind, Result};
use std::path::Path;

/// The rows of a CSV file, split into cells.
pub(crate) struct Table {
    /// Header cells, when the file has a header.
    pub(crate) names: Option<Vec<String>>,
    /// (1-based line number, cells) of each data row; blank lines are skipped.
    pub(crate) rows: Vec<(usize, Vec<String>)>,
}

impl Table {
    /// Read `path`; with `header`, its first non-blank line names the columns.
    pub(crate) fn read(path: &Path, header: bool) -> Result<Table> {
        let bytes = std::fs::read(path).map_err(|e| Error::from_io(path, "read", &e))?;
        let bytes = bytes.strip_prefix(b"\xEF\xBB\xBF").unwrap_or(&bytes);
        if bytes.iter().all(|b| b.is_ascii_whitespace()) {
            return Err(Error::new(path, ErrorKind::Empty));
        }
        let mut names = None;
        let mut rows = Vec::new();
        for (i, raw) in bytes.split(|&b| b == b'\n').enumerate() {
            let no = i + 1;
            let text =
                std::str::from_utf8(raw).map_err(|_| Error::syntax(path, no, "not UTF-8 text"))?;
            let text = text.strip_suffix('\r').unwrap_or(text);
            if text.trim().is_empty() {
                continue;
            }
            let cells = split_line(text, path, no)?;
            if header && names.is_none() {
                names = Some(cells);
                continue;
            }
            let width = match &names {
                Some(n) => Some(n.len()),
                None => rows.first().map(|(_, r): &(usize, Vec<String>)| r.len()),
            };
            if let Some(w) = width {
                if cells.len() != w {
                    return Err(Error::syntax(
                        path,
                        no,
                        format!("{} fields, expected {w}", cells.len()),
                    ));
                }
            }
            rows.push((no, cells));
        }
        Ok(Table { names, rows })
    }

    /// Position of `column`, or an error listing the columns there are.
    pub(crate) fn find(&self, path: &Path, column: &ColumnRef) -> Result<usize> {
        let width = self
            .names
            .as_ref()
            .map(Vec::len)
            .or_else(|| self.rows.first().map(|(_, r)| r.len()))
            .unwrap_or(0);
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
