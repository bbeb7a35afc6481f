//! The real serial port as a [`Connector`]: 8N1, no flow control, raw,
//! opened exclusively so two listeners cannot split one stream.

use serialport::{DataBits, FlowControl, Parity, SerialPort, StopBits};
use std::io;
use std::path::Path;
use std::time::Duration;

use super::link::Connector;

/// How long one read waits for bytes: short, so Ctrl-C and the time limit
/// are noticed promptly.
pub const READ_TIMEOUT: Duration = Duration::from_millis(100);

/// A serial port by path and baud rate.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct SerialConnector {
    /// Device path (a symlink such as `/dev/serial/by-id/...` is fine).
    pub path: String,
    /// Baud rate.
    pub baud: u32,
}

/// An open port whose hang-up reads as one.
pub struct PortLink(Box<dyn SerialPort>);

impl io::Read for PortLink {
    fn read(&mut self, buf: &mut [u8]) -> io::Result<usize> {
        self.0.read(buf).map_err(|e| match e.kind() {
            // serialport's word for a hang-up seen by poll().
            io::ErrorKind::BrokenPipe => io::Error::new(e.kind(), "the port hung up"),
            _ => e,
        })
    }
}

impl Connector for SerialConnector {
    type Link = PortLink;

    fn open(&mut self) -> io::Result<Self::Link> {
        if let Some(what) = not_a_port(Path::new(&self.path)) {
            return Err(not_a_serial_port(what));
        }
        serialport::new(&self.path, self.baud)
            .data_bits(DataBits::Eight)
            .parity(Parity::None)
            .stop_bits(StopBits::One)
            .flow_control(FlowControl::None)
            .timeout(READ_TIMEOUT)
            .open()
            .map(PortLink)
            .map_err(to_io)
    }

    fn name(&self) -> String {
        self.path.clone()
    }
}

/// What the path is when it is there but cannot be a serial port (a
/// serial port is a character device); `None` when it may be one or is
/// not there (yet).
fn not_a_port(path: &Path) -> Option<&'static str> {
    let kind = std::fs::metadata(path).ok()?.file_type();
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt;
        if kind.is_char_device() {
            return None;
        }
        if kind.is_block_device() {
            return Some("a disk (block device)");
        }
        if kind.is_fifo() {
            return Some("a named pipe");
        }
        if kind.is_socket() {
            return Some("a socket");
        }
    }
    Some(if kind.is_dir() {
        "a folder"
    } else if kind.is_file() {
        "an ordinary file"
    } else {
        "neither a file nor a device"
    })
}

/// The error for a path that is `what`, not a serial port, in the user's
/// words (the system's own is "Not a typewriter").
fn not_a_serial_port(what: &str) -> io::Error {
    io::Error::new(
        io::ErrorKind::InvalidInput,
        format!(
            "it is not a serial port but {what}; check that --port names the board's \
             port (on Linux /dev/ttyACM0 or /dev/ttyUSB0, the names in /dev/serial/by-id \
             stay the same across replugging; on macOS /dev/cu.usbmodem...)"
        ),
    )
}

/// Whether `e` is the system's "not a terminal" (ENOTTY): a device, but
/// no serial port. serialport passes it on as an unknown error with the
/// text of its `nix` crate, or of the C library.
fn is_not_a_terminal(e: &serialport::Error) -> bool {
    matches!(e.kind, serialport::ErrorKind::Unknown)
        && ["Not a typewriter", "Inappropriate ioctl for device"].contains(&e.description.as_str())
}

/// Keep "not there" apart from "there but unusable": only the first is
/// worth waiting for at the start.
fn to_io(e: serialport::Error) -> io::Error {
    if is_not_a_terminal(&e) {
        return not_a_serial_port("another kind of device");
    }
    use serialport::ErrorKind as K;
    let kind = match e.kind {
        K::Io(k) => k,
        // serialport's word for EBUSY: another program holds the port.
        K::NoDevice => io::ErrorKind::ResourceBusy,
        K::InvalidInput => io::ErrorKind::InvalidInput,
        K::Unknown => io::ErrorKind::Other,
    };
    let text = match kind {
        io::ErrorKind::ResourceBusy => format!("{} (is another program using it?)", e.description),
        io::ErrorKind::PermissionDenied => format!(
            "{} (on Linux, serial ports usually need the 'dialout' group)",
            e.description
        ),
        _ => e.description,
    };
    io::Error::new(kind, text)
}
