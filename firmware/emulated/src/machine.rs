//! What differs between the two QEMU machines this firmware runs on; the
//! build script picks the machine from the target (`build.rs`).
//!
//! | target | machine | core | RAM |
//! |---|---|---|---|
//! | `thumbv7em-none-eabihf` | `mps2-an386` | Cortex-M4F | 4 MiB (256 KiB claimed) |
//! | `thumbv6m-none-eabi` | `microbit` (nRF51822) | Cortex-M0, no FPU | 16 KiB |

/// The machine's name as QEMU's `-M` knows it, for the reports.
#[cfg(machine = "mps2-an386")]
pub const NAME: &str = "mps2-an386";
/// The machine's name as QEMU's `-M` knows it, for the reports.
#[cfg(machine = "microbit")]
pub const NAME: &str = "microbit";

/// SysTick's processor clock in Hz (QEMU's model of the board): with
/// `-icount shift=0` one instruction is 1 ns, so a tick is
/// `1e9 / CORE_CLOCK_HZ` instructions.
#[cfg(machine = "mps2-an386")]
pub const CORE_CLOCK_HZ: u64 = 25_000_000;
/// SysTick's processor clock in Hz (the nRF51's 16 MHz HCLK in QEMU).
#[cfg(machine = "microbit")]
pub const CORE_CLOCK_HZ: u64 = 16_000_000;

/// Bytes of the feed read from the host per semihosting call: few calls,
/// and a buffer the machine's RAM holds beside the pipeline.
#[cfg(machine = "mps2-an386")]
pub const FEED_CHUNK: usize = 4096;
/// Bytes of the feed read per call: 16 KiB of RAM hold the pipeline's
/// 10.5 KiB first, so the buffer is small (still 128 samples a call).
#[cfg(machine = "microbit")]
pub const FEED_CHUNK: usize = 512;
