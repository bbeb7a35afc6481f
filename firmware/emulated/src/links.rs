//! The two ways a session's bytes travel: semihosting files (fast, for
//! whole recordings) and UART0 (the way a real board talks).

use crate::semihost::{HostFile, Mode};
use crate::session::{FeedSource, FrameSink, RunError};
use crate::uart::{Rx, Tx};

/// Bytes read from the host per call (per machine: the microbit's RAM is
/// small).
const CHUNK: usize = crate::machine::FEED_CHUNK;

/// A feed read from a host file in chunks.
pub struct FileFeed {
    file: HostFile,
    buf: [u8; CHUNK],
    at: usize,
    len: usize,
    read: u64,
}

impl FileFeed {
    /// Open `name` for reading.
    pub fn open(name: &str) -> Result<Self, RunError> {
        Ok(Self {
            file: HostFile::open(name, Mode::Read)?,
            buf: [0; CHUNK],
            at: 0,
            len: 0,
            read: 0,
        })
    }
}

impl FeedSource for FileFeed {
    fn read_exact(&mut self, mut out: &mut [u8]) -> Result<(), RunError> {
        while !out.is_empty() {
            if self.at == self.len {
                self.len = self.file.read(&mut self.buf)?;
                self.at = 0;
                if self.len == 0 {
                    let missing = out.len() as u64;
                    return Err(RunError::Truncated {
                        expected: self.read + missing,
                        found: self.read,
                    });
                }
            }
            let n = out.len().min(self.len - self.at);
            out[..n].copy_from_slice(&self.buf[self.at..self.at + n]);
            self.at += n;
            self.read += n as u64;
            out = &mut out[n..];
        }
        Ok(())
    }

    fn expect_len(&mut self, bytes: u64) -> Result<(), RunError> {
        let found = self.file.len()?;
        if found < bytes {
            return Err(RunError::Truncated {
                expected: bytes,
                found,
            });
        }
        Ok(())
    }
}

/// Frames written to a host file.
pub struct FileSink {
    file: HostFile,
}

impl FileSink {
    /// Create (or truncate) `name`.
    pub fn create(name: &str) -> Result<Self, RunError> {
        Ok(Self {
            file: HostFile::open(name, Mode::Write)?,
        })
    }
}

impl FrameSink for FileSink {
    fn send(&mut self, frame: &[u8]) -> Result<(), RunError> {
        // One write per frame, so the host sees each frame as it is made.
        Ok(self.file.write_all(frame)?)
    }
}

/// The feed arriving on UART0's receive line.
pub struct UartFeed(pub Rx);

impl FeedSource for UartFeed {
    fn read_exact(&mut self, buf: &mut [u8]) -> Result<(), RunError> {
        // A line has no end: the header's count says when to stop.
        self.0.read_exact(buf);
        Ok(())
    }

    fn expect_len(&mut self, _bytes: u64) -> Result<(), RunError> {
        Ok(())
    }
}

/// Frames leaving on UART0's transmit line.
pub struct UartSink(pub Tx);

impl FrameSink for UartSink {
    fn send(&mut self, frame: &[u8]) -> Result<(), RunError> {
        self.0.write_all(frame);
        Ok(())
    }
}
