//! The emulated board's one owner: finding QEMU, finding or building the
//! emulated firmware, and the QEMU command line for each core
//! ([`Core`]). The command line, the demo
//! and the checks in `tests/` all come here.

use std::ffi::OsString;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};

use super::cores::Core;
use super::EmulateError;

mod build;

pub use build::{
    build_firmware, build_firmware_for, build_firmware_in, firmware_target_installed,
    target_installed, BuildError, FIRMWARE_TARGET,
};

/// Semihosting on, with file access on the host (`-semihosting-config`);
/// the firmware's command line is appended as `,arg=...`.
pub const SEMIHOSTING: &str = "enable=on,target=native";

/// Makes SysTick count instructions: 1 ns of virtual time per instruction.
pub const ICOUNT_ARGS: &[&str] = &["-icount", "shift=0"];

/// The first word of the firmware's command line for its run modes.
pub const FIRMWARE_PROGRAM: &str = "plethwire-emulated";

/// The arguments of the runner in `firmware/.cargo/config.toml` for the
/// default core's target (what `cargo run` in `firmware/` starts), up to
/// and including `-kernel`: the machine with semihosting on and no
/// firmware command line, which runs the firmware's self-check. The ELF's
/// path follows.
pub fn runner_args() -> Vec<&'static str> {
    runner_args_for(Core::M4f)
}

/// [`runner_args`] for `core`'s machine and target.
pub fn runner_args_for(core: Core) -> Vec<&'static str> {
    let mut v = core.machine_args().to_vec();
    v.extend(["-semihosting-config", SEMIHOSTING, "-kernel"]);
    v
}

/// The QEMU arguments for `elf` on `core`'s machine with the firmware
/// command line `args` (each becomes `arg=...`), with or without
/// instruction counting.
pub fn qemu_args(core: Core, elf: &Path, args: &[&str], count_instructions: bool) -> Vec<String> {
    let mut v: Vec<String> = core.machine_args().iter().map(|s| s.to_string()).collect();
    if count_instructions {
        v.extend(ICOUNT_ARGS.iter().map(|s| s.to_string()));
    }
    let mut semihosting = SEMIHOSTING.to_owned();
    for a in std::iter::once(FIRMWARE_PROGRAM).chain(args.iter().copied()) {
        // QEMU splits options at commas (",," escapes one) and the firmware
        // splits its command line at spaces; our words have neither.
        debug_assert!(!a.contains([',', ' ']), "{a}");
        semihosting.push_str(",arg=");
        semihosting.push_str(a);
    }
    v.push("-semihosting-config".into());
    v.push(semihosting);
    v.push("-kernel".into());
    v.push(elf.display().to_string());
    v
}

/// `qemu-system-arm`: `PLETHWIRE_QEMU` if set, else the first on `PATH`;
/// it must answer `--version`.
pub fn find_qemu() -> Result<PathBuf, EmulateError> {
    let exe = match std::env::var_os("PLETHWIRE_QEMU") {
        Some(p) => Some(PathBuf::from(p)),
        None => find_on_path("qemu-system-arm"),
    };
    let runs = |exe: &Path| {
        Command::new(exe)
            .arg("--version")
            .stdin(Stdio::null())
            .stdout(Stdio::null())
            .stderr(Stdio::null())
            .status()
            .is_ok_and(|s| s.success())
    };
    match exe {
        Some(exe) if runs(&exe) => Ok(exe),
        _ => Err(EmulateError::NoQemu),
    }
}

/// The first file called `name` in the folders of `PATH`.
fn find_on_path(name: &str) -> Option<PathBuf> {
    let path: OsString = std::env::var_os("PATH")?;
    std::env::split_paths(&path)
        .map(|dir| dir.join(name))
        .find(|candidate| candidate.is_file())
}

/// The repository roots to look in when the user named none: the one this
/// crate was built in (the last fallback: it is gone once the checkout
/// moves), then any folder above the running program that holds
/// `firmware/Cargo.toml`.
pub(super) fn repo_roots() -> Vec<PathBuf> {
    let mut roots = vec![Path::new(env!("CARGO_MANIFEST_DIR")).join("..")];
    if let Ok(exe) = std::env::current_exe() {
        roots.extend(
            exe.ancestors()
                .filter(|d| d.join("firmware/Cargo.toml").is_file())
                .map(Path::to_path_buf),
        );
    }
    roots
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_command_line_reaches_the_firmware_as_semihosting_args() {
        let v = qemu_args(
            Core::M4f,
            Path::new("/x/fw.elf"),
            &["stream", "a.bin", "b.bin"],
            false,
        );
        let at = v.iter().position(|a| a == "-semihosting-config").unwrap();
        assert_eq!(
            v[at + 1],
            "enable=on,target=native,arg=plethwire-emulated,arg=stream,arg=a.bin,arg=b.bin"
        );
        assert_eq!(&v[v.len() - 2..], ["-kernel", "/x/fw.elf"]);
        assert!(!v.iter().any(|a| a == "-icount"));
        // The runner's machine, with only the firmware's words added.
        let mut runner: Vec<String> = runner_args().iter().map(|a| a.to_string()).collect();
        runner[at + 1].push_str(",arg=plethwire-emulated,arg=stream,arg=a.bin,arg=b.bin");
        runner.push("/x/fw.elf".into());
        assert_eq!(v, runner);
        let counted = qemu_args(Core::M0, Path::new("fw"), &["perf"], true);
        let i = counted.iter().position(|a| a == "-icount").unwrap();
        assert_eq!(counted[i + 1], "shift=0");
        assert_eq!(&counted[..2], ["-M", "microbit"]);
        assert!(counted.starts_with(
            &runner_args_for(Core::M0)[..i]
                .iter()
                .map(|a| a.to_string())
                .collect::<Vec<_>>()
        ));
    }
}
