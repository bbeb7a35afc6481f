//! The microbit's UART (nRF51822 UART0), polled: the same halves and
//! calls as the mps2-an386's (`uart.rs`), chosen by `main.rs` for this
//! machine.
//!
//! QEMU connects it to its first `-serial` device (`stdio` in our runs).
//! The registers are the nRF51 Series Reference Manual's UART ones (task,
//! event and data registers at the offsets below, `ENABLE` = 4); QEMU's
//! model does not route pins, so none are selected. Nothing here uses
//! interrupts: the board has nothing else to do while it waits.

// Register access through raw pointers to the SoC's device memory.
#![allow(unsafe_code)]

use core::ptr::{read_volatile, write_volatile};

/// UART0's registers start here.
const BASE: usize = 0x4000_2000;
/// Start the receiver.
const TASKS_STARTRX: *mut u32 = BASE as *mut u32;
/// Start the transmitter.
const TASKS_STARTTX: *mut u32 = (BASE + 0x008) as *mut u32;
/// A received byte is waiting in RXD (1), cleared by writing 0.
const EVENTS_RXDRDY: *mut u32 = (BASE + 0x108) as *mut u32;
/// The byte written to TXD has left (1), cleared by writing 0.
const EVENTS_TXDRDY: *mut u32 = (BASE + 0x11C) as *mut u32;
/// 4 enables the UART.
const ENABLE: *mut u32 = (BASE + 0x500) as *mut u32;
/// The received byte; reading it takes it.
const RXD: *mut u32 = (BASE + 0x518) as *mut u32;
/// The byte to send.
const TXD: *mut u32 = (BASE + 0x51C) as *mut u32;

/// Enable UART0's transmit and receive and hand out the two halves.
/// There is one UART0, so call this once.
pub fn take() -> (Rx, Tx) {
    // SAFETY: fixed, always-mapped device registers of this SoC; only the
    // two halves touch them afterwards, each its own direction.
    unsafe {
        write_volatile(ENABLE, 4);
        write_volatile(EVENTS_RXDRDY, 0);
        write_volatile(EVENTS_TXDRDY, 0);
        write_volatile(TASKS_STARTRX, 1);
        write_volatile(TASKS_STARTTX, 1);
    }
    (Rx { _private: () }, Tx { _private: () })
}

/// UART0's receive direction.
pub struct Rx {
    _private: (),
}

impl Rx {
    /// Wait for the next received byte.
    pub fn read_byte(&mut self) -> u8 {
        // SAFETY: see `take`. The event is cleared before RXD is read: the
        // read sets it again when more bytes are waiting.
        unsafe {
            while read_volatile(EVENTS_RXDRDY) == 0 {}
            write_volatile(EVENTS_RXDRDY, 0);
            read_volatile(RXD) as u8
        }
    }

    /// Fill `buf` from the line.
    pub fn read_exact(&mut self, buf: &mut [u8]) {
        for b in buf {
            *b = self.read_byte();
        }
    }
}

/// UART0's transmit direction.
pub struct Tx {
    _private: (),
}

impl Tx {
    /// Send `bytes`, each once the one before it has left.
    pub fn write_all(&mut self, bytes: &[u8]) {
        for &b in bytes {
            // SAFETY: see `take`.
            unsafe {
                write_volatile(TXD, b as u32);
                while read_volatile(EVENTS_TXDRDY) == 0 {}
                write_volatile(EVENTS_TXDRDY, 0);
            }
        }
    }

    /// Nothing is left to wait for: every byte has left when `write_all`
    /// returns.
    pub fn flush(&mut self) {}
}
