//! The two emulated cores the firmware (`firmware/emulated`) runs on, one
//! QEMU machine each, and everything the host needs to know about them:
//! the machine's command line, the Rust target the firmware is built for,
//! where that build puts its ELF, and the code memory its entry lies in.

use std::ops::Range;

use serde::Serialize;

/// An emulated core.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Core {
    /// QEMU's `mps2-an386`: a Cortex-M4 with a single-precision FPU, the
    /// class of the boards we target.
    #[default]
    M4f,
    /// QEMU's `microbit` (nRF51822): a Cortex-M0, ARMv6-M, no FPU, so
    /// every float operation is a library call (compiler-builtins' IEEE
    /// soft-float). The micro:bit's 16 KiB of RAM
    /// (`firmware/emulated/memory-microbit.x`).
    M0,
}

/// The mps2-an386 machine with UART0 on standard input and output.
const M4F_MACHINE: &[&str] = &[
    "-M",
    "mps2-an386",
    "-cpu",
    "cortex-m4",
    "-display",
    "none",
    "-monitor",
    "none",
    "-serial",
    "stdio",
];

/// The microbit machine (16 KiB of RAM, QEMU's default for its nRF51
/// model) with its UART on standard input and output.
const M0_MACHINE: &[&str] = &[
    "-M", "microbit", "-display", "none", "-monitor", "none", "-serial", "stdio",
];

impl Core {
    /// Every core, the default first.
    pub const ALL: [Core; 2] = [Core::M4f, Core::M0];

    /// The name `--core` takes.
    pub fn name(self) -> &'static str {
        match self {
            Core::M4f => "m4f",
            Core::M0 => "m0",
        }
    }

    /// The core by its `--core` name.
    pub fn from_name(name: &str) -> Option<Core> {
        Core::ALL.into_iter().find(|c| c.name() == name)
    }

    /// The core and its machine, in words.
    pub fn describe(self) -> &'static str {
        match self {
            Core::M4f => "Cortex-M4F, QEMU mps2-an386",
            Core::M0 => "Cortex-M0 without FPU, QEMU microbit",
        }
    }

    /// The machine's name, as the firmware's perf report gives it.
    pub fn machine(self) -> &'static str {
        match self {
            Core::M4f => "mps2-an386",
            Core::M0 => "microbit",
        }
    }

    /// QEMU's arguments for the machine: no display, no monitor, the UART
    /// on standard input and output. The same as the runner for
    /// [`Self::target`] in `firmware/.cargo/config.toml` up to
    /// `-semihosting-config` (a check in `tests/` holds them together).
    pub fn machine_args(self) -> &'static [&'static str] {
        match self {
            Core::M4f => M4F_MACHINE,
            Core::M0 => M0_MACHINE,
        }
    }

    /// The Rust target the firmware is built for on this core.
    pub fn target(self) -> &'static str {
        match self {
            Core::M4f => "thumbv7em-none-eabihf",
            Core::M0 => "thumbv6m-none-eabi",
        }
    }

    /// Where `cargo build --release --target` [`Self::target`] in
    /// `firmware/` puts the ELF, below the repository root.
    pub fn elf_path(self) -> &'static str {
        match self {
            Core::M4f => "firmware/target/thumbv7em-none-eabihf/release/plethwire-emulated",
            Core::M0 => "firmware/target/thumbv6m-none-eabi/release/plethwire-emulated",
        }
    }

    /// The command that builds it, for messages.
    pub fn build_hint(self) -> &'static str {
        match self {
            Core::M4f => "cd firmware && cargo build --release",
            Core::M0 => "cd firmware && cargo build --release --target thumbv6m-none-eabi",
        }
    }

    /// The machine's code memory, where the firmware's entry point must
    /// lie: mps2-an386's 4 MiB code SSRAM, the nRF51822's 256 KiB of flash.
    pub fn code_memory(self) -> Range<u64> {
        match self {
            Core::M4f => 0..0x0040_0000,
            Core::M0 => 0..0x0004_0000,
        }
    }

    /// Whether the firmware for this core uses the hard-float calling
    /// convention (the ELF header's `EF_ARM_ABI_FLOAT_HARD`): the M4F's
    /// does, the M0's, which has no FPU, cannot.
    pub fn hard_float(self) -> bool {
        self == Core::M4f
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_round_trip_and_paths_follow_targets() {
        for core in Core::ALL {
            assert_eq!(Core::from_name(core.name()), Some(core));
            assert!(core.elf_path().contains(core.target()));
            assert!(core.machine_args().contains(&core.machine()));
            assert_eq!(core.build_hint().contains("--target"), core == Core::M0);
        }
        assert_eq!(Core::from_name("m3"), None);
        assert_eq!(Core::default(), Core::M4f);
    }
}
