//! How deep the stack went: painted with a pattern at start-up, the
//! painted words still intact at the end are the ones never used.
//!
//! The stack grows down from the top of RAM (`_stack_start`) towards the
//! end of the statics (`_stack_end`, cortex-m-rt's symbols). Painting runs
//! first thing in `main`, below the stack pointer (no interrupt is ever
//! enabled, so nothing else writes there), and leaves a margin for the
//! painting function's own call.

// Raw reads and writes of the free RAM between the statics and the stack.
#![allow(unsafe_code)]

use core::ptr::{addr_of, read_volatile, write_volatile};

/// The paint: unlikely as a value in a used stack slot.
const PAINT: u32 = 0x5A5A_C3C3;
/// Bytes below the stack pointer left unpainted for the painter's own use.
const MARGIN: usize = 64;

extern "C" {
    /// The highest address of the stack (its first word lies below it).
    static _stack_start: u32;
    /// The lowest address the stack may reach: the end of the statics.
    static _stack_end: u32;
    /// The start of `.data`, the first of the statics in RAM.
    static __sdata: u32;
}

fn stack_start() -> usize {
    // Only the symbol's address is taken, never its value.
    addr_of!(_stack_start) as usize
}

fn stack_end() -> usize {
    addr_of!(_stack_end) as usize
}

/// Paint the free stack below the current stack pointer.
#[inline(never)]
pub fn paint() {
    let sp = cortex_m::register::msp::read() as usize;
    let mut at = stack_end();
    while at + 4 <= sp - MARGIN {
        // SAFETY: words between the end of the statics and below the stack
        // pointer's margin belong to no one yet.
        unsafe { write_volatile(at as *mut u32, PAINT) };
        at += 4;
    }
}

/// Bytes of stack used at the deepest so far (to a word), counted from
/// the top of RAM down to the lowest word that is not paint.
pub fn peak_bytes() -> usize {
    let mut at = stack_end();
    // SAFETY: reads of RAM between the statics and the stack's top.
    while at < stack_start() && unsafe { read_volatile(at as *const u32) } == PAINT {
        at += 4;
    }
    stack_start() - at
}

/// Bytes of RAM the statics take (`.data`, `.bss`, `.uninit`).
pub fn static_bytes() -> usize {
    stack_end() - addr_of!(__sdata) as usize
}

/// Bytes of RAM from the start of the statics to the top of the stack.
pub fn ram_bytes() -> usize {
    stack_start() - addr_of!(__sdata) as usize
}
