//! The band-pass's backward run from the true end, through a temporary
//! file, for when the look-ahead runs of [`super::band`] do not settle:
//! within a long stretch of flat (held) signal two runs of the filter can
//! keep apart at the last bits for as long as it lasts. Memory stays a
//! block's; the file holds 8 bytes a sample and is gone when dropped.

use super::band::{cascade, sections};
use super::{each_sample, EcgSource, EcgStreamError, Overview};
use std::io::{BufReader, BufWriter, Read, Seek, SeekFrom, Write};

/// Samples read and written at a time.
const BLOCK: usize = 1 << 15;

fn io(e: std::io::Error) -> EcgStreamError {
    EcgStreamError::Spill(e)
}

/// The band-pass of the sanitised signal, in order, to `out`: forward
/// into the file, backward over it block by block from the end (written
/// back in place), then read in order.
pub(super) fn spilled_band(
    source: &mut dyn EcgSource,
    fs: f64,
    o: &Overview,
    out: &mut impl FnMut(f64),
) -> Result<(), EcgStreamError> {
    let sections = sections(fs);
    let mut file = tempfile::tempfile().map_err(io)?;
    let mut z = vec![(0.0, 0.0); sections.len()];
    {
        let mut w = BufWriter::with_capacity(8 * BLOCK, &mut file);
        let mut last = o.first;
        each_sample(source, o.len, |v| {
            if v.is_finite() {
                last = v;
            }
            let y = cascade(&sections, &mut z, last - o.first);
            w.write_all(&y.to_le_bytes()).map_err(io)
        })?;
        w.flush().map_err(io)?;
    }
    z.iter_mut().for_each(|s| *s = (0.0, 0.0));
    let mut bytes = vec![0u8; 8 * BLOCK];
    let mut end = o.len;
    while end > 0 {
        let start = end.saturating_sub(BLOCK);
        let buf = &mut bytes[..8 * (end - start)];
        file.seek(SeekFrom::Start(8 * start as u64)).map_err(io)?;
        file.read_exact(buf).map_err(io)?;
        for word in buf.chunks_exact_mut(8).rev() {
            let v = f64::from_le_bytes(word.try_into().expect("8 bytes"));
            word.copy_from_slice(&cascade(&sections, &mut z, v).to_le_bytes());
        }
        file.seek(SeekFrom::Start(8 * start as u64)).map_err(io)?;
        file.write_all(buf).map_err(io)?;
        end = start;
    }
    file.seek(SeekFrom::Start(0)).map_err(io)?;
    let mut r = BufReader::with_capacity(8 * BLOCK, file);
    let mut word = [0u8; 8];
    for _ in 0..o.len {
        r.read_exact(&mut word).map_err(io)?;
        out(f64::from_le_bytes(word));
    }
    Ok(())
}
