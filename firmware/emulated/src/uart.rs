//! UART0 of the mps2-an386 board, a CMSDK APB UART, polled.
//!
//! QEMU connects it to its `-serial` device (`stdio` in our runs). Nothing
//! here uses interrupts: the board has nothing else to do while it waits.

// Register access through raw pointers to the board's device memory.
#![allow(unsafe_code)]

use core::ptr::{read_volatile, write_volatile};

/// UART0's registers start here.
const BASE: usize = 0x4000_4000;
/// Received byte (read) / byte to send (write).
const DATA: *mut u32 = BASE as *mut u32;
/// Bit 0: transmit buffer full; bit 1: receive buffer full.
const STATE: *mut u32 = (BASE + 0x4) as *mut u32;
/// Bit 0 enables transmit, bit 1 receive.
const CTRL: *mut u32 = (BASE + 0x8) as *mut u32;
/// Baud divider; QEMU does not time the line but warns below 16.
const BAUDDIV: *mut u32 = (BASE + 0x10) as *mut u32;

const TX_FULL: u32 = 1 << 0;
const RX_FULL: u32 = 1 << 1;

/// Enable UART0's transmit and receive and hand out the two halves.
/// There is one UART0, so call this once.
pub fn take() -> (Rx, Tx) {
    // SAFETY: fixed, always-mapped device registers of this board; only
    // the two halves touch them afterwards, each its own direction.
    unsafe {
        write_volatile(BAUDDIV, 16);
        write_volatile(CTRL, 0b11);
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
        // SAFETY: see `take`; reading DATA frees the receive buffer.
        unsafe {
            while read_volatile(STATE) & RX_FULL == 0 {}
            read_volatile(DATA) as u8
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
    /// Send `bytes`, waiting whenever the transmit buffer is full.
    pub fn write_all(&mut self, bytes: &[u8]) {
        for &b in bytes {
            // SAFETY: see `take`.
            unsafe {
                while read_volatile(STATE) & TX_FULL != 0 {}
                write_volatile(DATA, b as u32);
            }
        }
    }

    /// Wait until the last byte has left, so that stopping the machine
    /// cannot cut it off.
    pub fn flush(&mut self) {
        // SAFETY: see `take`.
        unsafe { while read_volatile(STATE) & TX_FULL != 0 {} }
    }
}
