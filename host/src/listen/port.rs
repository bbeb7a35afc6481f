//! The real serial port as a [`Connector`]: 8N1, no flow control, raw,
//! opened exclusively so two listeners cannot split one stream.

use serialport::{DataBits, FlowControl, Parity, SerialPort, StopBits};
use std::io;
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

/// Keep "not there" apart from "there but unusable": only the first is
/// worth waiting for at the start.
fn to_io(e: serialport::Error) -> io::Error {
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
