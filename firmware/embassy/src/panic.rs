//! What a panic does: log where it happened over RTT, then fault so the
//! probe stops and shows it.

use core::panic::PanicInfo;

#[panic_handler]
fn panic(info: &PanicInfo) -> ! {
    // The location only: formatting the message would link core::fmt,
    // several KiB of flash that the budget cannot spare. `defmt::panic!`
    // has logged its own message before it gets here.
    match info.location() {
        Some(at) => defmt::error!("panic at {=str}:{=u32}", at.file(), at.line()),
        None => defmt::error!("panic"),
    }
    // An undefined instruction: a HardFault, which probe-rs catches.
    cortex_m::asm::udf()
}
