//! A record's next block read on a second thread while the caller works
//! on the one before, so reading and converting the samples (the `read`
//! call's copy from the page cache included) overlaps the pipeline
//! instead of adding to it. The blocks and their order are those of
//! reading in turn; at most three blocks are ever in memory.

use std::sync::mpsc::{channel, sync_channel};

use plethwire_records::{BlockSample, Record};

use super::ReplayError;

/// Signal `index` of `record`, `frames` frames a block, negated when
/// `negate`, handed to `each` in order for as long as it answers `true`.
pub(super) fn read_ahead<T: BlockSample>(
    record: &Record,
    index: usize,
    frames: usize,
    negate: bool,
    mut each: impl FnMut(&[T]) -> bool,
) -> Result<(), ReplayError> {
    let mut blocks = record.physical_blocks(index, frames)?;
    std::thread::scope(|scope| {
        // One block waiting while the caller works on another and the
        // reader fills a third; the caller hands each back to be refilled.
        let (full_tx, full_rx) = sync_channel::<plethwire_records::Result<Vec<T>>>(1);
        let (empty_tx, empty_rx) = channel::<Vec<T>>();
        scope.spawn(move || {
            let mut block: Vec<T> = Vec::with_capacity(frames);
            loop {
                match blocks.read_into(&mut block) {
                    Ok(true) => {
                        if negate {
                            // Negation is exact and rounding to f32
                            // symmetric: the bits of negating before.
                            block.iter_mut().for_each(|x| *x = -*x);
                        }
                        if full_tx.send(Ok(block)).is_err() {
                            return; // the caller stopped
                        }
                        block = empty_rx
                            .try_recv()
                            .unwrap_or_else(|_| Vec::with_capacity(frames));
                    }
                    Ok(false) => return,
                    Err(e) => {
                        // Nobody left to tell when the caller stopped.
                        let _ = full_tx.send(Err(e));
                        return;
                    }
                }
            }
        });
        for block in full_rx {
            let block = block?;
            let more = each(&block);
            // The reader may have finished: then the block is not needed.
            let _ = empty_tx.send(block);
            if !more {
                break;
            }
        }
        Ok(())
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use plethwire_records::{write_record, NewSignal};

    /// A record of one signal of `n` samples in `dir`, opened.
    fn record(dir: &std::path::Path, n: usize) -> Record {
        let samples: Vec<i32> = (0..n as i32).map(|k| (k * 37) % 2001 - 1000).collect();
        let signal = NewSignal::new("PLETH", "NU", 7.0, 3);
        write_record(dir, "r", 250.0, &[signal], &[samples]).unwrap();
        Record::open(dir.join("r")).unwrap()
    }

    #[test]
    fn blocks_read_ahead_are_the_blocks_read_in_turn() {
        let dir = tempfile::tempdir().unwrap();
        let rec = record(dir.path(), 10_007);
        let in_turn: Vec<Vec<f64>> = rec
            .physical_blocks(0, 1000)
            .unwrap()
            .map(|b| b.unwrap().iter().map(|x| -x).collect())
            .collect();
        let mut ahead = Vec::new();
        read_ahead(&rec, 0, 1000, true, |b: &[f64]| {
            ahead.push(b.to_vec());
            true
        })
        .unwrap();
        assert_eq!(ahead.len(), 11);
        assert_eq!(ahead, in_turn);
        // Stopped after the third block: no more come.
        let mut seen = 0;
        read_ahead(&rec, 0, 1000, false, |_: &[f32]| {
            seen += 1;
            seen < 3
        })
        .unwrap();
        assert_eq!(seen, 3);
    }

    #[test]
    fn a_file_cut_short_is_an_error_after_the_blocks_before_it() {
        let dir = tempfile::tempdir().unwrap();
        let rec = record(dir.path(), 5000);
        std::fs::write(dir.path().join("r.dat"), vec![0u8; 2 * 2500]).unwrap();
        let mut seen = 0;
        let e = read_ahead(&rec, 0, 1000, false, |_: &[f32]| {
            seen += 1;
            true
        })
        .unwrap_err();
        assert_eq!(seen, 2, "the two whole blocks before the cut");
        assert!(e.to_string().contains("r.dat"), "{e}");
    }
}
