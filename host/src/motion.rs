//! An accelerometer recorded with the pulse, as the pipeline's motion
//! reference (`plethwire_dsp::pipeline::motion`): three signals of the same
//! recording, x, y and z in g, at the pulse signal's rate.

use std::path::Path;

use plethwire_records::{read_csv_signals, ColumnRef, CsvSignalOptions, LoadedSignal, Record};

/// The three accelerometer signals of a recording.
#[derive(Debug, Clone, PartialEq)]
pub struct MotionSignals {
    /// Their names, x, y, z, as in the file.
    pub names: [String; 3],
    /// Samples per second (the pulse signal's).
    pub fs: f64,
    /// The samples of each axis, g; NaN marks a missing sample.
    pub axes: [Vec<f64>; 3],
}

impl MotionSignals {
    /// Sample `n` of the three axes, as the pipeline takes them.
    pub fn at(&self, n: usize) -> [f32; 3] {
        [0, 1, 2].map(|a| self.axes[a].get(n).map_or(f32::NAN, |&v| v as f32))
    }

    /// Samples per axis.
    pub fn len(&self) -> usize {
        self.axes[0].len()
    }

    /// No samples?
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }
}

/// Text that is not three accelerometer signal names; one line.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("'{0}' is not three accelerometer signals X,Y,Z (for example ACCX,ACCY,ACCZ)")]
pub struct MotionNamesError(pub String);

/// Motion signals that could not be read, or that do not fit the pulse.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum MotionLoadError {
    /// The record or CSV file would not give the named signals.
    #[error("--motion: {0}")]
    Read(#[source] plethwire_records::Error),
    /// A motion signal's rate or length differs from the pulse signal's.
    #[error("{}: motion signal '{motion}' has {motion_len} samples at {motion_fs} Hz, the pulse signal '{pulse}' {pulse_len} at {pulse_fs} Hz; they must be the same", path.display())]
    Mismatch {
        /// The recording.
        path: std::path::PathBuf,
        /// The motion signal that differs.
        motion: String,
        /// Its length, samples.
        motion_len: usize,
        /// Its rate, Hz.
        motion_fs: f64,
        /// The pulse signal.
        pulse: String,
        /// Its length, samples.
        pulse_len: usize,
        /// Its rate, Hz.
        pulse_fs: f64,
    },
}

/// Parse `X,Y,Z`: exactly three non-empty signal names.
pub fn parse_motion_names(s: &str) -> Result<[String; 3], MotionNamesError> {
    let names: Vec<String> = s.split(',').map(|n| n.trim().to_string()).collect();
    match <[String; 3]>::try_from(names) {
        Ok(three) if three.iter().all(|n| !n.is_empty()) => Ok(three),
        _ => Err(MotionNamesError(s.to_owned())),
    }
}

/// The motion signals `names` of the WFDB record `record` (opened from
/// `path`), beside the pulse signal `pulse`.
pub fn load_wfdb(
    path: &Path,
    record: &Record,
    names: &[String; 3],
    pulse: &LoadedSignal,
) -> Result<MotionSignals, MotionLoadError> {
    let mut loaded = Vec::with_capacity(3);
    for name in names {
        let s = record
            .load_signal(Some(name))
            .map_err(MotionLoadError::Read)?;
        loaded.push(s);
    }
    assemble(path, names, loaded, pulse)
}

/// The motion columns `names` of the CSV recording at `path`, read with
/// the pulse's own `options` (the same time column and grid).
pub fn load_csv(
    path: &Path,
    names: &[String; 3],
    options: &CsvSignalOptions,
    pulse: &LoadedSignal,
) -> Result<MotionSignals, MotionLoadError> {
    let columns: Vec<ColumnRef> = names.iter().cloned().map(ColumnRef::Name).collect();
    let read = read_csv_signals(path, &columns, options).map_err(MotionLoadError::Read)?;
    assemble(path, names, read.signals, pulse)
}

/// Check the three against the pulse signal: same rate, same length.
fn assemble(
    path: &Path,
    names: &[String; 3],
    loaded: Vec<LoadedSignal>,
    pulse: &LoadedSignal,
) -> Result<MotionSignals, MotionLoadError> {
    for s in &loaded {
        if s.fs != pulse.fs || s.samples.len() != pulse.samples.len() {
            return Err(MotionLoadError::Mismatch {
                path: path.to_path_buf(),
                motion: s.name.clone(),
                motion_len: s.samples.len(),
                motion_fs: s.fs,
                pulse: pulse.name.clone(),
                pulse_len: pulse.samples.len(),
                pulse_fs: pulse.fs,
            });
        }
    }
    let mut axes = loaded.into_iter().map(|s| s.samples);
    let mut next = || axes.next().unwrap_or_default();
    Ok(MotionSignals {
        names: names.clone(),
        fs: pulse.fs,
        axes: [next(), next(), next()],
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn three_names_and_nothing_else() {
        assert_eq!(
            parse_motion_names("ACCX, ACCY,ACCZ").unwrap(),
            ["ACCX", "ACCY", "ACCZ"].map(String::from)
        );
        for bad in ["ACCX,ACCY", "ACCX,ACCY,ACCZ,ACCW", "ACCX,,ACCZ", ""] {
            let e = parse_motion_names(bad).unwrap_err().to_string();
            assert!(e.contains("X,Y,Z") && e.lines().count() == 1, "{e}");
        }
    }
}
