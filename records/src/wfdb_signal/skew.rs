//! Skewed signals: header(5) lets a signal's samples lag in the file by
//! a whole number of frames; reading shifts them back into line.

use std::path::Path;

use crate::error::{Error, ErrorKind, Result};
use crate::wfdb_header::SignalSpec;

/// Shift a skewed signal back into line: its sample for frame `n` was
/// stored in frame `n + skew`. Frames past the end of the file become the
/// invalid-sample value, as Python wfdb's `rdrecord` does.
pub(super) fn apply_skew(samples: &mut Vec<i32>, spec: &SignalSpec, path: &Path) -> Result<()> {
    let shift = (spec.skew as usize * spec.samples_per_frame as usize).min(samples.len());
    if shift == 0 {
        return Ok(());
    }
    let Some(fill) = spec.format.invalid_value() else {
        return Err(Error::new(
            path,
            ErrorKind::Unsupported(
                "skew in format 8, which has no invalid-sample value for the frames past the end"
                    .into(),
            ),
        ));
    };
    samples.drain(..shift);
    samples.extend(std::iter::repeat_n(fill, shift));
    Ok(())
}
