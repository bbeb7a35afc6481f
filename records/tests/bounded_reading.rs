//! The readers are bounded by what a file holds, not by what it claims:
//! non-regular files are refused before any read, sizes are checked before
//! arithmetic, memory is counted (peak resident size of a child process),
//! and values that make no physical sense are refused naming the field.

use plethwire_records::{
    read_annotations, read_csv_signal, read_numerics, read_rr_intervals, ColumnRef,
    CsvSignalOptions, ErrorKind, FileKind, Header, Record, RecordOptions, MAX_SAMPLES,
};
use std::path::{Path, PathBuf};
use std::process::Command;
use std::sync::mpsc;
use std::time::Duration;

/// Environment variable that makes a test run as the measured child.
const CHILD_DIR: &str = "PLETHWIRE_BOUNDED_CHILD_DIR";

/// Run `work` on another thread and fail if it has not returned within a
/// generous limit: a reader that blocks on a FIFO must not hang the tests.
/// (A guard, not a timing: the fixed readers return at once.)
fn within_guard<T: Send + 'static>(work: impl FnOnce() -> T + Send + 'static) -> T {
    let (tx, rx) = mpsc::channel();
    std::thread::spawn(move || {
        let _ = tx.send(work());
    });
    rx.recv_timeout(Duration::from_secs(20))
        .expect("the reader blocked: it opened a file that is not a regular file")
}

/// Make a FIFO at `path` with the system's `mkfifo`.
fn mkfifo(path: &Path) {
    let status = Command::new("mkfifo")
        .arg(path)
        .status()
        .expect("run mkfifo");
    assert!(status.success(), "mkfifo {}", path.display());
}

/// A file of `len` bytes that takes no room on disk (all zeros).
fn sparse(path: &Path, len: u64) {
    let f = std::fs::File::create(path).unwrap();
    f.set_len(len).unwrap();
}

const TWO_GB: u64 = 2 << 30;

fn kind_of(e: &plethwire_records::Error) -> ErrorKind {
    let text = e.to_string();
    assert!(!text.contains('\n'), "{text}");
    e.kind().clone()
}

#[test]
fn a_fifo_header_or_signal_file_is_refused_before_reading() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path().to_path_buf();
    mkfifo(&d.join("a.hea"));
    std::fs::write(d.join("b.hea"), "b 1 250\nb.dat 16\n").unwrap();
    mkfifo(&d.join("b.dat"));
    let (a, b) = within_guard(move || {
        let a = Record::open(d.join("a")).unwrap_err();
        let b = Record::open(d.join("b")).and_then(|r| r.read_all_digital());
        (a, b.unwrap_err())
    });
    assert_eq!(kind_of(&a), ErrorKind::NotRegular(FileKind::Fifo));
    assert_eq!(kind_of(&b), ErrorKind::NotRegular(FileKind::Fifo));
    assert!(b.path().ends_with("b.dat"), "{b}");
    assert!(
        a.to_string()
            .contains("is a named pipe (FIFO), not a regular file"),
        "{a}"
    );
}

#[test]
fn fifo_annotation_csv_and_interval_files_are_refused() {
    let dir = tempfile::tempdir().unwrap();
    let fifo = dir.path().join("p.csv");
    mkfifo(&fifo);
    let errors = within_guard(move || {
        let options = CsvSignalOptions::with_rate(ColumnRef::Index(0), 100.0);
        vec![
            read_annotations(&fifo).unwrap_err(),
            read_csv_signal(&fifo, &options).unwrap_err(),
            read_numerics(&fifo).unwrap_err(),
            read_rr_intervals(&fifo).unwrap_err(),
        ]
    });
    for e in errors {
        assert_eq!(kind_of(&e), ErrorKind::NotRegular(FileKind::Fifo), "{e}");
    }
}

#[cfg(unix)]
#[test]
fn dev_zero_as_a_signal_file_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path().to_path_buf();
    std::fs::write(d.join("z.hea"), "z 1 250\nz.dat 16\n").unwrap();
    std::os::unix::fs::symlink("/dev/zero", d.join("z.dat")).unwrap();
    let e = within_guard(move || {
        Record::open(d.join("z"))
            .and_then(|r| r.read_all_digital())
            .unwrap_err()
    });
    assert_eq!(kind_of(&e), ErrorKind::NotRegular(FileKind::Device));
}

#[test]
fn a_folder_given_as_a_record_says_so() {
    let dir = tempfile::tempdir().unwrap();
    let folder = dir.path().join("recordings");
    std::fs::create_dir(&folder).unwrap();
    for given in [folder.clone(), folder.join("")] {
        let e = Record::open(&given).unwrap_err();
        assert_eq!(kind_of(&e), ErrorKind::FolderNotRecord);
        assert!(
            e.to_string().contains("is a folder, not a WFDB record"),
            "{e}"
        );
        assert!(!e.to_string().contains(".hea: no such file"), "{e}");
    }
    // A record of the same name beside the folder still opens.
    std::fs::write(
        dir.path().join("recordings.hea"),
        "recordings 1 250 1\nx.dat 16\n",
    )
    .unwrap();
    std::fs::write(dir.path().join("x.dat"), [1, 0]).unwrap();
    assert_eq!(Record::open(&folder).unwrap().read_digital(0).unwrap(), [1]);
}

#[test]
fn a_sample_count_of_two_to_the_63_is_refused_without_panic() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("r.dat"), [0u8; 64]).unwrap();
    std::fs::write(
        dir.path().join("r.hea"),
        "r 1 250 9223372036854775808\nr.dat 16\n",
    )
    .unwrap();
    let e = Record::open(dir.path().join("r")).unwrap_err();
    match kind_of(&e) {
        ErrorKind::Implausible { field, .. } => assert_eq!(field, "number of samples"),
        other => panic!("{other:?}"),
    }
    assert_eq!(e.line(), Some(1));
    // A count the header takes but the file cannot hold: truncated, and
    // every product in the size sum checked (format 32, 16 signals).
    let mut text = String::from("r 16 250 999999999999999\n");
    for _ in 0..16 {
        text.push_str("r.dat 32x1000000\n");
    }
    std::fs::write(dir.path().join("r.hea"), text).unwrap();
    let e = Record::open(dir.path().join("r")).unwrap_err();
    assert!(
        matches!(kind_of(&e), ErrorKind::TruncatedSignal { .. }),
        "{e}"
    );
}

#[test]
fn values_without_physical_sense_are_refused_naming_the_field() {
    let cases = [
        ("r 1 250 10\nr.dat 16 1e-320/mV\n", "ADC gain"),
        ("r 1 250 10\nr.dat 16 -1e300/mV\n", "ADC gain"),
        ("r 1 1e-320 10\nr.dat 16\n", "sampling frequency"),
        ("r 1 250/1e300 10\nr.dat 16\n", "counter frequency"),
        ("r 1 250 10\nr.dat 16 200/mV 99\n", "ADC resolution"),
        (
            "r/2 1 250 10\na 5\nb 1000000000000000000\n",
            "segment length",
        ),
    ];
    for (text, field) in cases {
        let e = Header::parse(text, Path::new("r.hea")).unwrap_err();
        match kind_of(&e) {
            ErrorKind::Implausible { field: f, .. } => assert_eq!(f, field, "{text}"),
            other => panic!("{text}: {other:?}"),
        }
        assert!(e.to_string().contains("makes no physical sense"), "{e}");
    }
    // A skew longer than the record, found when the record is opened.
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("r.dat"), [0u8; 20]).unwrap();
    std::fs::write(
        dir.path().join("r.hea"),
        "r 1 250 10\nr.dat 16:4294967295\n",
    )
    .unwrap();
    let e = Record::open(dir.path().join("r")).unwrap_err();
    match kind_of(&e) {
        ErrorKind::Implausible { field, value, .. } => {
            assert_eq!((field, value.as_str()), ("skew", "4294967295"))
        }
        other => panic!("{other:?}"),
    }
    // Plausible neighbours still read: a negative gain, a skew of 1.
    std::fs::write(dir.path().join("r.hea"), "r 1 250 10\nr.dat 16:1 -200/mV\n").unwrap();
    assert_eq!(
        Record::open(dir.path().join("r"))
            .unwrap()
            .read_physical(0)
            .unwrap()
            .len(),
        10
    );
}

#[test]
fn signal_files_outside_the_folder_need_the_option() {
    let top = tempfile::tempdir().unwrap();
    let inner = top.path().join("rec");
    std::fs::create_dir(&inner).unwrap();
    std::fs::write(top.path().join("x.dat"), [5, 0, 6, 0]).unwrap();
    std::fs::create_dir(inner.join("sub")).unwrap();
    std::fs::write(inner.join("sub/y.dat"), [7, 0]).unwrap();
    for name in ["../x.dat", "/etc/passwd", "sub/../../x.dat"] {
        std::fs::write(inner.join("r.hea"), format!("r 1 250 1\n{name} 16\n")).unwrap();
        let e = Record::open(inner.join("r")).unwrap_err();
        assert_eq!(
            kind_of(&e),
            ErrorKind::OutsideFolder {
                file_name: name.into()
            }
        );
        let allowed = RecordOptions {
            allow_outside_folder: true,
            ..RecordOptions::default()
        };
        let rec = Record::open_with(inner.join("r"), &allowed).unwrap();
        assert_eq!(rec.read_digital(0).unwrap().len(), 1, "{name}");
    }
    // Names that stay inside are fine without the option.
    std::fs::write(inner.join("r.hea"), "r 1 250 1\nsub/./y.dat 16\n").unwrap();
    assert_eq!(
        Record::open(inner.join("r"))
            .unwrap()
            .read_digital(0)
            .unwrap(),
        [7]
    );
}

#[test]
fn oversized_headers_and_annotation_files_are_refused_unread() {
    let dir = tempfile::tempdir().unwrap();
    sparse(&dir.path().join("big.hea"), TWO_GB);
    let e = Record::open(dir.path().join("big")).unwrap_err();
    assert!(
        matches!(kind_of(&e), ErrorKind::TooLarge { what: "header", .. }),
        "{e}"
    );
    let ann = dir.path().join("big.atr");
    sparse(&ann, TWO_GB);
    let e = read_annotations(&ann).unwrap_err();
    assert!(matches!(kind_of(&e), ErrorKind::TooLarge { .. }), "{e}");
}

#[test]
fn csv_times_beyond_any_clock_are_refused() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("t.csv");
    let options = CsvSignalOptions::with_time(ColumnRef::Index(1), ColumnRef::Index(0));
    std::fs::write(&p, "t,v\n0,1\n1e308,2\n2e308,3\n").unwrap();
    let e = read_csv_signal(&p, &options).unwrap_err();
    assert_eq!(e.line(), Some(3));
    match kind_of(&e) {
        ErrorKind::Implausible { field, value, .. } => {
            assert_eq!((field, value.as_str()), ("time", "1e308"))
        }
        other => panic!("{other:?}"),
    }
    // Steps so small that no finite rate fits them.
    std::fs::write(&p, "t,v\n0,1\n5e-324,2\n1e-323,3\n").unwrap();
    let e = read_csv_signal(&p, &options).unwrap_err();
    assert!(e.to_string().contains("no finite sample rate"), "{e}");
}

// ---- memory, counted in a child process ----

/// In the measured child: the folder the parent prepared.
fn child_dir() -> Option<PathBuf> {
    std::env::var_os(CHILD_DIR).map(PathBuf::from)
}

/// Peak resident memory of this process so far, kB (Linux `VmHWM`).
fn peak_kb() -> u64 {
    let status = std::fs::read_to_string("/proc/self/status").expect("read /proc/self/status");
    let line = status
        .lines()
        .find(|l| l.starts_with("VmHWM:"))
        .expect("a VmHWM line");
    line.split_whitespace().nth(1).unwrap().parse().unwrap()
}

/// Run test `name` of this binary alone in a child process with `dir`
/// prepared; it prints its peak memory, which comes back here in kB.
fn peak_kb_of_child(name: &str, dir: &Path) -> u64 {
    let out = Command::new(std::env::current_exe().unwrap())
        .args([name, "--exact", "--nocapture", "--test-threads=1"])
        .env(CHILD_DIR, dir)
        .output()
        .unwrap();
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert!(
        out.status.success(),
        "child {name} failed: {stdout}{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let kb = stdout
        .lines()
        .find_map(|l| l.split("PEAK_KB=").nth(1))
        .unwrap_or_else(|| panic!("child {name} did not report its memory: {stdout}"));
    kb.trim().parse().unwrap()
}

/// What a child may use beyond the test binary itself: far below the
/// 2 GB the unbounded readers took for these files.
const CHILD_PEAK_KB: u64 = 64 * 1024;

#[test]
fn a_2_gb_signal_file_with_a_sample_count_reads_only_those_samples() {
    if let Some(dir) = child_dir() {
        let rec = Record::open(dir.join("r")).unwrap();
        let samples = rec.read_physical(0).unwrap();
        assert_eq!(samples.len(), 144_001);
        assert!(samples.iter().all(|&x| x == 0.0));
        println!("PEAK_KB={}", peak_kb());
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    sparse(&dir.path().join("r.dat"), TWO_GB);
    std::fs::write(
        dir.path().join("r.hea"),
        "r 1 250 144001\nr.dat 16 200/mV\n",
    )
    .unwrap();
    let kb = peak_kb_of_child(
        "a_2_gb_signal_file_with_a_sample_count_reads_only_those_samples",
        dir.path(),
    );
    assert!(kb < CHILD_PEAK_KB, "peak {kb} kB for 288 kB of samples");
}

#[test]
fn a_2_gb_signal_file_without_a_sample_count_is_refused_unread() {
    if let Some(dir) = child_dir() {
        let rec = Record::open(dir.join("r")).unwrap();
        assert_eq!(rec.len() as u64, TWO_GB / 2);
        let e = rec.read_physical(0).unwrap_err();
        assert_eq!(
            kind_of(&e),
            ErrorKind::TooManySamples {
                samples: TWO_GB / 2,
                limit: MAX_SAMPLES
            }
        );
        println!("PEAK_KB={}", peak_kb());
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    sparse(&dir.path().join("r.dat"), TWO_GB);
    std::fs::write(dir.path().join("r.hea"), "r 1 250\nr.dat 16 200/mV\n").unwrap();
    let kb = peak_kb_of_child(
        "a_2_gb_signal_file_without_a_sample_count_is_refused_unread",
        dir.path(),
    );
    assert!(kb < CHILD_PEAK_KB, "peak {kb} kB");
}

#[test]
fn a_2_gb_csv_stops_at_its_first_error_in_bounded_memory() {
    if let Some(dir) = child_dir() {
        let options = CsvSignalOptions::with_rate(ColumnRef::Index(0), 100.0);
        let e = read_csv_signal(dir.join("big.csv"), &options).unwrap_err();
        assert_eq!(e.line(), Some(1), "{e}");
        assert!(e.to_string().contains("line longer than"), "{e}");
        println!("PEAK_KB={}", peak_kb());
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    sparse(&dir.path().join("big.csv"), TWO_GB);
    let kb = peak_kb_of_child(
        "a_2_gb_csv_stops_at_its_first_error_in_bounded_memory",
        dir.path(),
    );
    assert!(kb < CHILD_PEAK_KB, "peak {kb} kB");
}
