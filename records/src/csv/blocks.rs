//! Columns of a CSV file read a block of samples at a time, so a long
//! file is never in memory whole: the same values, cells refused the
//! same way, as [`read_csv_signals`](super::read_csv_signals) reads at
//! once. At a known rate the rows are the samples; with a time column
//! the time base is measured first in passes over the file
//! (`time_passes`), and the rows are then the samples (uniform times) or
//! walked onto the grid ([`crate::resample::GridWalk`]).

use std::path::{Path, PathBuf};

use super::table::Table;
use super::time_base::time_cell;
use super::time_passes::{measure, Measured};
use super::{positive_rate, value_cell, ColumnRef, CsvSignalOptions, Rate, TimeBase};
use crate::error::{Error, ErrorKind, Result};
use crate::resample::GridWalk;

/// Value columns of a CSV file, a block of samples at a time
/// ([`CsvBlocks::read_into`]).
pub struct CsvBlocks {
    path: PathBuf,
    options: CsvSignalOptions,
    table: Table,
    cols: Vec<usize>,
    fs: f64,
    rows: u64,
    done: bool,
    /// The time column and what measuring it found (its walk not started).
    timed: Option<(usize, Measured)>,
    /// The walk onto the grid of this read, when resampled.
    walk: Option<GridWalk>,
    /// One row's values, for the grid walk, and its cells.
    row: Vec<f64>,
    cells: Vec<String>,
}

impl std::fmt::Debug for CsvBlocks {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("CsvBlocks")
            .field("path", &self.path)
            .field("cols", &self.cols)
            .field("rows", &self.rows)
            .finish()
    }
}

impl CsvBlocks {
    /// Open `columns` of the CSV file at `path` with `options`. With a
    /// time column ([`Rate::FromTime`], [`Rate::Resample`]) its time base
    /// is measured first, in passes over the whole file that refuse what
    /// the whole read refuses (a bad cell of these columns, times that do
    /// not increase, a grid too large).
    pub fn open(
        path: impl AsRef<Path>,
        columns: &[ColumnRef],
        options: &CsvSignalOptions,
    ) -> Result<CsvBlocks> {
        let path = path.as_ref();
        let mut blocks = CsvBlocks::unmeasured(path, columns, options)?;
        let (time, grid) = match &options.rate {
            Rate::Given(fs) => {
                blocks.fs = positive_rate(path, "sample rate", *fs)?;
                return Ok(blocks);
            }
            Rate::FromTime(t) => (t, None),
            Rate::Resample { time, fs } => (time, Some(positive_rate(path, "grid rate", *fs)?)),
        };
        let tc = blocks.table.find(path, time)?;
        let name = blocks.table.name(tc);
        let measured = measure(path, options, (&blocks.cols, tc, &name), grid)?;
        blocks.fs = measured.base.fs;
        blocks.walk = measured.walk.clone();
        blocks.timed = Some((tc, measured));
        Ok(blocks)
    }

    /// Other `columns` of the same file on the same time base, without
    /// measuring it again (their cells are checked as they are read).
    pub fn open_like(&self, columns: &[ColumnRef]) -> Result<CsvBlocks> {
        let mut blocks = CsvBlocks::unmeasured(&self.path, columns, &self.options)?;
        blocks.fs = self.fs;
        blocks.timed = self.timed.clone();
        blocks.walk = self.timed.as_ref().and_then(|(_, m)| m.walk.clone());
        Ok(blocks)
    }

    fn unmeasured(
        path: &Path,
        columns: &[ColumnRef],
        options: &CsvSignalOptions,
    ) -> Result<CsvBlocks> {
        if !options.header && columns.iter().any(|c| matches!(c, ColumnRef::Name(_))) {
            return Err(Error::new(
                path,
                ErrorKind::Invalid(
                    "columns of a file without a header can only be picked by index".into(),
                ),
            ));
        }
        let table = Table::open(path, options.header)?;
        let cols = columns
            .iter()
            .map(|c| table.find(path, c))
            .collect::<Result<Vec<usize>>>()?;
        Ok(CsvBlocks {
            path: path.to_path_buf(),
            options: options.clone(),
            table,
            cols,
            fs: 0.0,
            rows: 0,
            done: false,
            timed: None,
            walk: None,
            row: Vec::new(),
            cells: Vec::new(),
        })
    }

    /// The measured time base, with a time column.
    pub fn time(&self) -> Option<TimeBase> {
        self.timed.as_ref().map(|(_, m)| m.base)
    }

    /// Samples the columns hold, when known before reading them (with a
    /// time column).
    pub fn samples(&self) -> Option<u64> {
        self.timed.as_ref().map(|(_, m)| match &m.walk {
            Some(walk) => walk.grid_samples(),
            None => m.rows,
        })
    }

    /// The columns' names (header text, or `#index`), in the order asked for.
    pub fn names(&self) -> Vec<String> {
        self.cols.iter().map(|&c| self.table.name(c)).collect()
    }

    /// The sample rate, Hz.
    pub fn fs(&self) -> f64 {
        self.fs
    }

    /// The next at most `rows` samples (at least 1) into `out`, one buffer
    /// per column (each emptied first, its memory kept): `true` when a
    /// sample was read, `false` at the end and after an error. A file
    /// without data rows is an error, as in the whole read.
    pub fn read_into(&mut self, rows: usize, out: &mut [Vec<f64>]) -> Result<bool> {
        out.iter_mut().for_each(Vec::clear);
        if self.done {
            return Ok(false);
        }
        let read = if self.walk.is_some() {
            self.fill_grid(rows.max(1), out)
        } else {
            self.fill(rows.max(1), out)
        };
        if !matches!(read, Ok(true)) {
            self.done = true;
        }
        read
    }

    fn fill(&mut self, rows: usize, out: &mut [Vec<f64>]) -> Result<bool> {
        let path = self.path.as_path();
        let mut n = 0;
        while n < rows {
            let Some(no) = self.table.next_row_into(path, &mut self.cells)? else {
                break;
            };
            let cells = &self.cells;
            let nan = self.options.empty_as_nan;
            for (column, &col) in out.iter_mut().zip(&self.cols) {
                column.push(value_cell(path, &self.table, no, col, &cells[col], nan)?);
            }
            n += 1;
        }
        self.rows += n as u64;
        if self.rows == 0 {
            return Err(Error::new(path, ErrorKind::Syntax("no data rows".into())));
        }
        Ok(n > 0)
    }

    /// [`fill`](Self::fill) for rows resampled onto the grid: frames read
    /// as the walk wants them, at most `limit` grid samples made.
    fn fill_grid(&mut self, limit: usize, out: &mut [Vec<f64>]) -> Result<bool> {
        let path = self.path.as_path();
        let (Some((tc, _)), Some(walk)) = (&self.timed, &mut self.walk) else {
            unreachable!("fill_grid is for a grid walk");
        };
        let mut made = 0;
        loop {
            made += walk.take(limit - made, out);
            if made == limit || !walk.wants_frame() {
                break;
            }
            let Some(no) = self.table.next_row_into(path, &mut self.cells)? else {
                break;
            };
            let cells = &self.cells;
            self.row.clear();
            let nan = self.options.empty_as_nan;
            for &col in &self.cols {
                self.row
                    .push(value_cell(path, &self.table, no, col, &cells[col], nan)?);
            }
            let t = time_cell(path, &self.table, no, *tc, &cells[*tc], &self.options)?;
            walk.push(t, &self.row);
        }
        Ok(made > 0)
    }
}

#[cfg(test)]
pub(super) mod tests {
    use super::*;
    use crate::read_csv_signals;

    /// Every sample of `cols`, read `rows` at a time, and the reader at
    /// its end (the timed files' tests use it too).
    pub(in crate::csv) fn in_blocks(
        path: &Path,
        cols: &[ColumnRef],
        o: &CsvSignalOptions,
        rows: usize,
    ) -> Result<(Vec<Vec<f64>>, CsvBlocks)> {
        let mut blocks = CsvBlocks::open(path, cols, o)?;
        let mut out = vec![Vec::new(); cols.len()];
        let mut all = vec![Vec::new(); cols.len()];
        while blocks.read_into(rows, &mut out)? {
            assert!(out[0].len() <= rows.max(1));
            for (a, b) in all.iter_mut().zip(&out) {
                a.extend_from_slice(b);
            }
        }
        Ok((all, blocks))
    }

    fn read_all(
        path: &Path,
        cols: &[ColumnRef],
        o: &CsvSignalOptions,
        rows: usize,
    ) -> Result<Vec<Vec<f64>>> {
        in_blocks(path, cols, o, rows).map(|(all, _)| all)
    }

    #[test]
    fn blocks_of_rows_are_the_whole_read() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("r.csv");
        let mut text = String::from("\u{feff}a, \"b\" ,c\r\n");
        for k in 0..1000 {
            let c = if k % 97 == 0 {
                "nan".to_string()
            } else {
                format!("{}", k as f64 * 0.25)
            };
            text += &format!("{k},{},{c}\n", (k * 7) % 13);
            if k % 250 == 0 {
                text += "\n"; // blank lines are skipped
            }
        }
        std::fs::write(&path, text).unwrap();
        let cols = [
            ColumnRef::Name("c".into()),
            ColumnRef::Index(0),
            ColumnRef::Name("b".into()),
        ];
        let o = CsvSignalOptions::with_rate(cols[0].clone(), 50.0);
        let whole = read_csv_signals(&path, &cols, &o).unwrap();
        let bits = |v: &[f64]| v.iter().map(|x| x.to_bits()).collect::<Vec<_>>();
        for rows in [1, 3, 999, 1000, 5000] {
            let got = read_all(&path, &cols, &o, rows).unwrap();
            for (g, w) in got.iter().zip(&whole.signals) {
                assert_eq!(bits(g), bits(&w.samples), "blocks of {rows}");
            }
        }
        let names = CsvBlocks::open(&path, &cols, &o).unwrap().names();
        let want: Vec<String> = whole.signals.iter().map(|s| s.name.clone()).collect();
        assert_eq!(names, want);
    }

    #[test]
    fn bad_files_are_refused_as_the_whole_read_refuses_them() {
        let dir = tempfile::tempdir().unwrap();
        let cases = [
            ("a,b\n1,2\n3,x\n4,5\n", 50.0),
            ("a,b\n", 50.0),
            ("a,b\n1,2\n3\n", 50.0),
            ("a,b\n1,2\n", 0.0),
            ("a,b\n1,\n", 50.0),
        ];
        for (k, (text, fs)) in cases.iter().enumerate() {
            let path = dir.path().join(format!("{k}.csv"));
            std::fs::write(&path, text).unwrap();
            let cols = [ColumnRef::Name("b".into())];
            let o = CsvSignalOptions::with_rate(cols[0].clone(), *fs);
            let whole = read_csv_signals(&path, &cols, &o).unwrap_err().to_string();
            let got = read_all(&path, &cols, &o, 1).unwrap_err().to_string();
            assert_eq!(got, whole, "{text:?}");
        }
        let timed = CsvSignalOptions::with_time(ColumnRef::Index(1), ColumnRef::Index(0));
        let path = dir.path().join("0.csv");
        assert!(CsvBlocks::open(&path, &[ColumnRef::Index(1)], &timed).is_err());
    }
}
