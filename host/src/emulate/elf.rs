//! Checking that a file is firmware for the emulated board before QEMU
//! gets it: QEMU loads anything, and a wrong file only shows as a lock-up
//! dump of CPU registers.
//!
//! The ELF header fields read here are those of the System V ABI's ELF
//! specification (`e_ident`, `e_type`, `e_machine`, `e_entry`, `e_flags`);
//! the float-ABI bit of `e_flags` is the Arm ELF specification's
//! (`EF_ARM_ABI_FLOAT_HARD`, 0x400, in the Arm ABI's "ELF for the Arm
//! Architecture").

use std::io::Read;
use std::path::Path;

use super::Core;

/// `e_machine` of 32-bit ARM.
const EM_ARM: u16 = 40;
/// `e_type` of an executable.
const ET_EXEC: u16 = 2;
/// `e_flags`: the hard-float calling convention (float arguments in FPU
/// registers), which only a core with an FPU can run.
const EF_ARM_ABI_FLOAT_HARD: u32 = 0x400;

/// What is wrong with a file given as the emulated firmware, in the
/// user's words.
#[derive(Debug, thiserror::Error)]
pub enum ElfProblem {
    /// The file cannot be read.
    #[error("it cannot be read ({0})")]
    Unreadable(#[source] std::io::Error),
    /// The file does not start like an ELF file.
    #[error("it is not an ELF program file (a raw .bin or .hex image will not do)")]
    NotElf,
    /// A 64-bit or big-endian ELF: not a Cortex-M program.
    #[error("it is a {0} program, not one for the emulated board's 32-bit little-endian ARM core")]
    WrongLayout(&'static str),
    /// An ELF for another processor.
    #[error("it is a program for {0}, not for the emulated board's Arm Cortex-M core")]
    WrongMachine(String),
    /// Built for the other emulated core (its float ABI says which).
    #[error("it is firmware for the {}, not the {}: build it for {} (`{}`)", .built.describe(), .wanted.describe(), .wanted.target(), .wanted.build_hint())]
    OtherCore {
        /// The core it was built for.
        built: Core,
        /// The core it was to run on.
        wanted: Core,
    },
    /// An object file or library, not a linked program.
    #[error("it is an ELF object or library, not a linked program")]
    NotExecutable,
    /// Linked for another board's memory.
    #[error("its entry point 0x{0:08x} lies outside the emulated board's code memory (0x00000000-0x{1:08x}): firmware for another board, such as the STM32F411 build?")]
    EntryOutsideFlash(u64, u64),
}

/// A processor's name for an `e_machine` value.
fn machine_name(m: u16) -> String {
    match m {
        3 => "x86 (32-bit PC)".into(),
        62 => "x86-64 (a PC)".into(),
        183 => "64-bit ARM (AArch64)".into(),
        243 => "RISC-V".into(),
        8 => "MIPS".into(),
        94 => "Xtensa (ESP32)".into(),
        other => format!("another processor (ELF machine {other})"),
    }
}

/// [`check_elf_for`] the default core.
pub fn check_elf(path: &Path) -> Result<(), ElfProblem> {
    check_elf_for(path, Core::M4f)
}

/// Check the ELF header of `path`: a 32-bit little-endian ARM executable
/// whose entry point lies in `core`'s code memory ([`Core::code_memory`])
/// and whose float ABI is `core`'s ([`Core::hard_float`]).
pub fn check_elf_for(path: &Path, core: Core) -> Result<(), ElfProblem> {
    let mut head = [0u8; 52];
    let mut f = std::fs::File::open(path).map_err(ElfProblem::Unreadable)?;
    let mut got = 0;
    while got < head.len() {
        match f.read(&mut head[got..]).map_err(ElfProblem::Unreadable)? {
            0 => break,
            n => got += n,
        }
    }
    parse_header(&head[..got], core)
}

/// [`check_elf_for`] on the first bytes of a file.
fn parse_header(head: &[u8], core: Core) -> Result<(), ElfProblem> {
    if head.len() < 20 || head[..4] != *b"\x7fELF" {
        return Err(ElfProblem::NotElf);
    }
    let le16 = |at: usize| u16::from_le_bytes([head[at], head[at + 1]]);
    match (head[4], head[5]) {
        (1, 1) => {}
        (2, _) if le16(18) == EM_ARM => return Err(ElfProblem::WrongLayout("64-bit")),
        (2, _) => return Err(ElfProblem::WrongMachine(machine_name(le16(18)))),
        (1, 2) => return Err(ElfProblem::WrongLayout("big-endian")),
        _ => return Err(ElfProblem::NotElf),
    }
    let machine = le16(18);
    if machine != EM_ARM {
        return Err(ElfProblem::WrongMachine(machine_name(machine)));
    }
    if le16(16) != ET_EXEC {
        return Err(ElfProblem::NotExecutable);
    }
    if head.len() < 40 {
        return Err(ElfProblem::NotElf);
    }
    let le32 = |at: usize| u32::from_le_bytes([head[at], head[at + 1], head[at + 2], head[at + 3]]);
    let entry = u64::from(le32(24));
    let code = core.code_memory();
    if !code.contains(&entry) {
        return Err(ElfProblem::EntryOutsideFlash(entry, code.end - 1));
    }
    let hard_float = le32(36) & EF_ARM_ABI_FLOAT_HARD != 0;
    if hard_float != core.hard_float() {
        let built = if hard_float { Core::M4f } else { Core::M0 };
        return Err(ElfProblem::OtherCore {
            built,
            wanted: core,
        });
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A 32-bit ELF header: class, data, type, machine, entry; hard float.
    fn header(class: u8, data: u8, ty: u16, machine: u16, entry: u32) -> Vec<u8> {
        let mut h = vec![0u8; 52];
        h[..4].copy_from_slice(b"\x7fELF");
        h[4] = class;
        h[5] = data;
        h[6] = 1;
        h[16..18].copy_from_slice(&ty.to_le_bytes());
        h[18..20].copy_from_slice(&machine.to_le_bytes());
        h[24..28].copy_from_slice(&entry.to_le_bytes());
        h[36..40].copy_from_slice(&0x0500_0400u32.to_le_bytes());
        h
    }

    #[test]
    fn the_emulated_boards_kind_of_elf_passes_and_others_are_named() {
        assert!(parse_header(&header(1, 1, 2, 40, 0x0000_0401), Core::M4f).is_ok());
        let said = |h: &[u8]| parse_header(h, Core::M4f).unwrap_err().to_string();
        assert!(said(&header(1, 1, 2, 40, 0x0800_0199)).contains("STM32F411"));
        assert!(said(&header(2, 1, 2, 62, 0)).contains("x86-64"));
        assert!(said(&header(2, 1, 2, 40, 0)).contains("64-bit"));
        assert!(said(&header(1, 2, 2, 40, 0)).contains("big-endian"));
        assert!(said(&header(1, 1, 1, 40, 0)).contains("object"));
        assert!(said(&header(1, 1, 2, 243, 0)).contains("RISC-V"));
        assert!(said(b":10000000").contains("not an ELF"));
        assert!(said(b"").contains("not an ELF"));
    }

    #[test]
    fn each_core_takes_only_its_own_build() {
        let m4f = header(1, 1, 2, 40, 0x0000_0401);
        let mut m0 = m4f.clone();
        m0[36..40].copy_from_slice(&0x0500_0200u32.to_le_bytes());
        assert!(parse_header(&m0, Core::M0).is_ok());
        let e = parse_header(&m4f, Core::M0).unwrap_err().to_string();
        assert!(
            e.contains("Cortex-M4F") && e.contains("thumbv6m-none-eabi"),
            "{e}"
        );
        let e = parse_header(&m0, Core::M4f).unwrap_err().to_string();
        assert!(
            e.contains("Cortex-M0") && e.contains("thumbv7em-none-eabihf"),
            "{e}"
        );
        // The microbit's flash ends at 256 KiB.
        let mut far = m0.clone();
        far[24..28].copy_from_slice(&0x0005_0001u32.to_le_bytes());
        let e = parse_header(&far, Core::M0).unwrap_err().to_string();
        assert!(e.contains("0x0003ffff"), "{e}");
    }
}
