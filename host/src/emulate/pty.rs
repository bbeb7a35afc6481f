//! A pseudo-terminal standing in for a board's serial port, its slave
//! reached through a symlink that exists only while the port does.
//!
//! The symlink rather than the bare `/dev/pts/N`: a listener retrying a
//! vanished port by its path must never open some other program's
//! terminal that later got the same number.

use std::io::{ErrorKind, Write};
use std::os::fd::OwnedFd;
use std::path::{Path, PathBuf};

use nix::fcntl::{open, OFlag};
use nix::pty::{grantpt, posix_openpt, ptsname_r, unlockpt, PtyMaster};
use nix::sys::stat::Mode;
use nix::sys::termios::{cfmakeraw, tcgetattr, tcsetattr, SetArg};

use super::EmulateError;

/// The board's end of a pseudo-terminal, its slave linked at a path.
/// Dropping it removes the link and closes the terminal: a listener sees
/// a hang-up, as when a USB cable is pulled.
#[derive(Debug)]
pub struct LinkedPty {
    master: PtyMaster,
    // Held open so writes never fail while no listener has the port open
    // (a line with nobody at the other end); never read.
    _slave: OwnedFd,
    link: PathBuf,
    target: PathBuf,
}

fn failed(what: String) -> impl FnOnce(nix::errno::Errno) -> EmulateError {
    move |e| EmulateError::Io {
        what,
        source: std::io::Error::from(e),
    }
}

impl LinkedPty {
    /// Open a new pseudo-terminal in raw mode and point `link` at its
    /// slave. Refuses a `link` that exists and is not a symlink (never
    /// replaces a file of the user's); an old symlink is replaced.
    pub fn open(link: &Path) -> Result<Self, EmulateError> {
        if let Ok(meta) = std::fs::symlink_metadata(link) {
            if !meta.file_type().is_symlink() {
                return Err(EmulateError::LinkInTheWay(link.to_path_buf()));
            }
        }
        // Close-on-exec from the start, so QEMU (started next) does not
        // inherit the master and keep the port alive after we close it.
        let flags = OFlag::O_RDWR | OFlag::O_NOCTTY | OFlag::O_CLOEXEC | OFlag::O_NONBLOCK;
        let master = posix_openpt(flags).map_err(failed("cannot open a pseudo-terminal".into()))?;
        grantpt(&master).map_err(failed("cannot grant the pseudo-terminal".into()))?;
        unlockpt(&master).map_err(failed("cannot unlock the pseudo-terminal".into()))?;
        let target = PathBuf::from(
            ptsname_r(&master).map_err(failed("cannot name the pseudo-terminal".into()))?,
        );
        let slave = open(
            &target,
            OFlag::O_RDWR | OFlag::O_NOCTTY | OFlag::O_CLOEXEC,
            Mode::empty(),
        )
        .map_err(failed(format!("cannot open {}", target.display())))?;
        // Raw until the listener sets its own mode: no echo, no line
        // editing, no newline translation of the frames' bytes.
        let mut t = tcgetattr(&slave).map_err(failed("cannot read the terminal mode".into()))?;
        cfmakeraw(&mut t);
        tcsetattr(&slave, SetArg::TCSANOW, &t)
            .map_err(failed("cannot set the terminal mode".into()))?;
        // A fresh symlink renamed into place: a listener never sees a
        // half-made one.
        let mut tmp = link.as_os_str().to_owned();
        tmp.push(".new");
        let tmp = PathBuf::from(tmp);
        let _ = std::fs::remove_file(&tmp);
        let io = |what: &str| {
            let what = format!("{what} {}", link.display());
            move |source| EmulateError::Io { what, source }
        };
        std::os::unix::fs::symlink(&target, &tmp).map_err(io("cannot make the link"))?;
        std::fs::rename(&tmp, link).map_err(io("cannot put in place the link"))?;
        Ok(Self {
            master,
            _slave: slave,
            link: link.to_path_buf(),
            target,
        })
    }

    /// The terminal the link points at, e.g. `/dev/pts/7`.
    pub fn target(&self) -> &Path {
        &self.target
    }

    /// Put `bytes` on the line. What the terminal cannot take now (nobody
    /// reading, its buffer full) is lost, as on a real line; returns how
    /// many bytes were lost.
    pub fn send(&mut self, bytes: &[u8]) -> Result<u64, EmulateError> {
        let mut rest = bytes;
        while !rest.is_empty() {
            match self.master.write(rest) {
                Ok(0) => break,
                Ok(n) => rest = &rest[n..],
                Err(e) if e.kind() == ErrorKind::WouldBlock => break,
                Err(e) if e.kind() == ErrorKind::Interrupted => {}
                Err(source) => {
                    return Err(EmulateError::Io {
                        what: format!("cannot write to {}", self.target.display()),
                        source,
                    })
                }
            }
        }
        Ok(rest.len() as u64)
    }
}

impl Drop for LinkedPty {
    fn drop(&mut self) {
        // Only our own link: another run may have put its own there since.
        if std::fs::read_link(&self.link).is_ok_and(|t| t == self.target) {
            let _ = std::fs::remove_file(&self.link);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::io::Read;

    #[test]
    fn bytes_sent_arrive_through_the_link_and_the_link_goes_with_it() {
        let dir = tempfile::tempdir().unwrap();
        let link = dir.path().join("board");
        let mut pty = LinkedPty::open(&link).unwrap();
        assert_eq!(std::fs::read_link(&link).unwrap(), pty.target());
        let mut port = std::fs::File::open(&link).unwrap();
        assert_eq!(pty.send(&[0, 1, 2, 0x0a, 0xff]).unwrap(), 0);
        let mut got = [0u8; 5];
        port.read_exact(&mut got).unwrap();
        assert_eq!(got, [0, 1, 2, 0x0a, 0xff], "raw: no newline translation");
        drop(pty);
        assert!(std::fs::symlink_metadata(&link).is_err());
    }

    #[test]
    fn a_file_in_the_way_is_left_alone() {
        let dir = tempfile::tempdir().unwrap();
        let link = dir.path().join("board");
        std::fs::write(&link, "mine").unwrap();
        let e = LinkedPty::open(&link).unwrap_err();
        assert!(matches!(e, EmulateError::LinkInTheWay(_)), "{e}");
        assert_eq!(std::fs::read_to_string(&link).unwrap(), "mine");
    }
}
