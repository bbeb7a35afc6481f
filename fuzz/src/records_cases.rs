//! What each records fuzz target does with one input. Shared with
//! `records/tests/fuzz_regressions.rs` (included by path), so a checked-in
//! input runs exactly what the fuzzer ran. Every case returns the reader's
//! error, if any, after checking that its message is one line.

use plethwire_records::{
    csv_column_names, decode_annotations, read_csv_signals, read_numerics, read_rr_intervals,
    ColumnRef, CsvSignalOptions, Error, ErrorKind, Header, Rate, Record, TimeUnit,
};
use std::path::Path;

/// Name of the record the signal case writes.
const RECORD: &str = "r";

/// Check that `error` reads as one line, and hand it back.
fn one_line(error: Error) -> Error {
    let text = error.to_string();
    assert!(
        !text.contains('\n'),
        "message of more than one line: {text:?}"
    );
    error
}

/// The header reader on `data` as header text.
pub fn header(data: &[u8]) -> Option<Error> {
    let text = String::from_utf8_lossy(data);
    match Header::parse(&text, Path::new("fuzz.hea")) {
        Ok(h) => {
            // What we write must read back.
            let again = Header::parse(&h.to_text(), Path::new("again.hea"));
            assert!(
                again.is_ok(),
                "written header does not read back: {again:?}"
            );
            None
        }
        Err(e) => Some(one_line(e)),
    }
}

/// A signal file name the case may write into `dir`: a plain name.
fn plain_name(name: &str) -> bool {
    !name.is_empty()
        && name != "."
        && name != ".."
        && name != "~"
        && name != format!("{RECORD}.hea")
        && !name.contains(['/', '\\', '\0'])
}

/// The record reader on `data`: the header text up to the first 0 byte,
/// the signal file's bytes after it (written under every plain file name
/// the header gives), in the folder `dir`.
pub fn signal(data: &[u8], dir: &Path) -> Option<Error> {
    let (head, dat) = match data.iter().position(|&b| b == 0) {
        Some(i) => (&data[..i], &data[i + 1..]),
        None => (data, &[][..]),
    };
    std::fs::write(dir.join(format!("{RECORD}.hea")), head).expect("write the header");
    let names: Vec<String> = match Header::parse(&String::from_utf8_lossy(head), dir) {
        Ok(h) => h.signals.iter().map(|s| s.file_name.clone()).collect(),
        Err(_) => Vec::new(),
    };
    // A name the system refuses (too long, say) is left unwritten: the
    // reader then meets a missing file.
    let written: Vec<&String> = names
        .iter()
        .filter(|n| plain_name(n) && std::fs::write(dir.join(n), dat).is_ok())
        .collect();
    let result = read_record(&dir.join(RECORD));
    for name in written {
        let _ = std::fs::remove_file(dir.join(name));
    }
    result.err().map(one_line)
}

/// Open the record at `path` and read everything it holds.
fn read_record(path: &Path) -> plethwire_records::Result<()> {
    let record = Record::open(path)?;
    let all = record.read_all_digital()?;
    assert_eq!(all.len(), record.n_signals());
    for (i, samples) in all.iter().enumerate() {
        let physical = record.read_physical(i)?;
        assert_eq!(physical.len(), samples.len());
    }
    record.verify_checksums()
}

/// The annotation decoder on `data`.
pub fn annotation(data: &[u8]) -> Option<ErrorKind> {
    match decode_annotations(data) {
        Ok(list) => {
            assert!(list.len() <= data.len() / 2, "more annotations than words");
            None
        }
        Err(kind) => {
            assert!(!kind.to_string().contains('\n'), "{kind:?}");
            Some(kind)
        }
    }
}

/// The CSV readers on `data`: its first byte picks the options, the rest
/// is the file, written as `dir/f.csv`.
pub fn csv(data: &[u8], dir: &Path) -> Option<Error> {
    let (&pick, text) = data.split_first()?;
    let path = dir.join("f.csv");
    std::fs::write(&path, text).expect("write the CSV file");
    let time = if pick & 0x40 != 0 {
        ColumnRef::Name("time".into())
    } else {
        ColumnRef::Index(0)
    };
    let mut options = CsvSignalOptions::with_rate(ColumnRef::Index(1), 250.0);
    options.rate = match (pick >> 1) & 3 {
        0 => Rate::Given(250.0),
        1 => Rate::FromTime(time),
        2 => Rate::Resample { time, fs: 100.0 },
        _ => Rate::FromTime(ColumnRef::Index(1)),
    };
    options.header = pick & 1 != 0;
    options.empty_as_nan = pick & 8 != 0;
    options.time_unit =
        [TimeUnit::S, TimeUnit::Ms, TimeUnit::Us, TimeUnit::S][(pick >> 4 & 3) as usize];
    let columns = if pick & 0x80 != 0 {
        vec![ColumnRef::Index(1), ColumnRef::Index(2)]
    } else {
        vec![ColumnRef::Index(1)]
    };
    let first = read_csv_signals(&path, &columns, &options).err();
    let _ = csv_column_names(&path).map_err(one_line);
    let _ = read_numerics(&path).map_err(one_line);
    let _ = read_rr_intervals(&path).map_err(one_line);
    first.map(one_line)
}
