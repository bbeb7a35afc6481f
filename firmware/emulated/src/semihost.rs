//! The few semihosting calls the emulated board needs beyond printing:
//! its command line and host files (open, length, read, write, close).
//!
//! Each call is one `bkpt 0xab` trap; QEMU (`target=native`) carries it out
//! on the host's file system, relative to QEMU's working directory.

// Every semihosting call is a trap with raw pointers into our buffers.
#![allow(unsafe_code)]

use core::fmt;

use cortex_m_semihosting::{nr, syscall, syscall1};

/// A failed semihosting call, naming what was being done.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct HostError(pub &'static str);

impl fmt::Display for HostError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.0)
    }
}

/// The command line QEMU hands over (`-semihosting-config ...,arg=A,arg=B`
/// gives `"A B"`; without any `arg` it is the kernel's file name), in
/// `buf`.
pub fn command_line(buf: &mut [u8]) -> Result<&str, HostError> {
    // The block is updated in place: the length comes back as the string's.
    let mut block = [buf.as_mut_ptr() as usize, buf.len()];
    // SAFETY: GET_CMDLINE writes at most `buf.len()` bytes into `buf` and
    // the length into `block[1]`; both outlive the call, and the pointer
    // comes from a mutable borrow because the host writes through it.
    let r = unsafe { syscall1(nr::GET_CMDLINE, block.as_mut_ptr() as usize) } as isize;
    if r != 0 || block[1] > buf.len() {
        return Err(HostError("the command line does not fit its buffer"));
    }
    core::str::from_utf8(&buf[..block[1]]).map_err(|_| HostError("the command line is not UTF-8"))
}

/// An open host file.
pub struct HostFile {
    handle: usize,
}

/// How to open a host file (the `fopen` modes semihosting knows).
#[derive(Clone, Copy, Debug)]
pub enum Mode {
    /// `"rb"`.
    Read,
    /// `"wb"`: created, or truncated.
    Write,
    /// `"a"`: with the name `:tt`, the host's standard error.
    Append,
}

impl HostFile {
    /// Open `name` on the host. The name goes to the host with its length,
    /// so it needs no terminating zero, but the host wants one anyway.
    pub fn open(name: &str, mode: Mode) -> Result<Self, HostError> {
        let mut path = [0u8; 128];
        if name.len() >= path.len() || name.contains('\0') {
            return Err(HostError("a file name is too long (127 bytes at most)"));
        }
        path[..name.len()].copy_from_slice(name.as_bytes());
        let mode = match mode {
            Mode::Read => nr::open::R_BINARY,
            Mode::Write => nr::open::W_TRUNC_BINARY,
            Mode::Append => nr::open::W_APPEND,
        };
        // SAFETY: OPEN reads `name.len()` bytes of `path` (zero-terminated).
        let r = unsafe { syscall!(OPEN, path.as_ptr(), mode, name.len()) } as isize;
        if r < 0 {
            return Err(HostError("the host could not open a file"));
        }
        Ok(Self { handle: r as usize })
    }

    /// The host's standard error (`:tt` opened for appending), which stays
    /// apart from the UART's byte stream on standard output.
    pub fn stderr() -> Result<Self, HostError> {
        Self::open(":tt", Mode::Append)
    }

    /// The file's length in bytes.
    pub fn len(&self) -> Result<u64, HostError> {
        // SAFETY: FLEN only takes the handle.
        let r = unsafe { syscall!(FLEN, self.handle) } as isize;
        if r < 0 {
            return Err(HostError("the host could not tell a file's length"));
        }
        Ok(r as u64)
    }

    /// Read up to `buf.len()` bytes; 0 at the end of the file.
    pub fn read(&mut self, buf: &mut [u8]) -> Result<usize, HostError> {
        // SAFETY: READ writes at most `buf.len()` bytes into `buf`.
        let left = unsafe { syscall!(READ, self.handle, buf.as_mut_ptr(), buf.len()) };
        // The call returns the number of bytes it did *not* read.
        if left > buf.len() {
            return Err(HostError("the host could not read a file"));
        }
        Ok(buf.len() - left)
    }

    /// Write all of `bytes`.
    pub fn write_all(&mut self, mut bytes: &[u8]) -> Result<(), HostError> {
        while !bytes.is_empty() {
            // SAFETY: WRITE reads `bytes.len()` bytes of `bytes`.
            let left = unsafe { syscall!(WRITE, self.handle, bytes.as_ptr(), bytes.len()) };
            if left >= bytes.len() {
                return Err(HostError("the host could not write a file"));
            }
            bytes = &bytes[bytes.len() - left..];
        }
        Ok(())
    }
}

impl fmt::Write for HostFile {
    fn write_str(&mut self, s: &str) -> fmt::Result {
        self.write_all(s.as_bytes()).map_err(|_| fmt::Error)
    }
}

impl Drop for HostFile {
    fn drop(&mut self) {
        // SAFETY: CLOSE only takes the handle, which is not used again.
        // A failed close leaves nothing to do on the board.
        let _ = unsafe { syscall!(CLOSE, self.handle) };
    }
}
