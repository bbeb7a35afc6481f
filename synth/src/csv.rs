//! The synthetic signal as a two-column CSV for demos and other tools.
//!
//! Format (our own): a header line `time_s,pleth`, then one line per
//! sample: the time in seconds with 6 decimals (exact to the microsecond)
//! and the sample as the shortest decimal that reads back as the same
//! `f32`. Lines end in `\n`.

use super::Synthetic;
use std::io::{self, Write};

/// The header line, without its newline.
pub const CSV_HEADER: &str = "time_s,pleth";

/// Write `signal`'s samples to `out` in the format above.
pub fn write_csv<W: Write>(signal: &Synthetic, out: W) -> io::Result<()> {
    // Buffered: one write call per sample would be slow on a file.
    let mut out = io::BufWriter::new(out);
    writeln!(out, "{CSV_HEADER}")?;
    for (i, v) in signal.samples.iter().enumerate() {
        writeln!(out, "{:.6},{v}", i as f64 / signal.sample_rate_hz)?;
    }
    out.flush()
}
