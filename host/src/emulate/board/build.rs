//! Building the emulated firmware: `cargo build --release` in `firmware/`,
//! with the outer build's settings kept out of it.

use std::ffi::OsString;
use std::path::{Path, PathBuf};
use std::process::{Command, ExitStatus, Stdio};

use super::{repo_roots, Core, FIRMWARE_PROGRAM};

/// The target the emulated firmware is built for on the default core.
pub const FIRMWARE_TARGET: &str = "thumbv7em-none-eabihf";

/// Why the emulated firmware could not be built; one line.
#[derive(Debug, thiserror::Error)]
pub enum BuildError {
    /// No `firmware/Cargo.toml` in any repository root looked at.
    #[error("no firmware sources (firmware/Cargo.toml) there")]
    NoSources,
    /// The standard library for the core's target is not installed.
    #[error("the Rust target {0} is not installed (`rustup target add {0}`)")]
    NoTarget(&'static str),
    /// Cargo could not be started.
    #[error("cannot run cargo: {0}")]
    Cargo(#[source] std::io::Error),
    /// Cargo ran and failed.
    #[error("cargo build failed ({status})")]
    Failed {
        /// Cargo's exit status.
        status: ExitStatus,
        /// The folder it ran in.
        dir: PathBuf,
        /// What it wrote on standard error (its diagnostics).
        stderr: String,
    },
    /// Cargo succeeded but named no firmware executable.
    #[error("cargo reported no {FIRMWARE_PROGRAM} executable")]
    NoExecutable {
        /// What it wrote on standard error.
        stderr: String,
    },
}

/// The cargo to build with: the one running us (cargo sets `CARGO` for the
/// processes it starts, so the nested build uses the same toolchain), else
/// `cargo` from `PATH`.
fn cargo() -> OsString {
    std::env::var_os("CARGO").unwrap_or_else(|| "cargo".into())
}

/// The rustc next to [`cargo`], or `rustc` from `PATH`.
fn rustc() -> OsString {
    if let Some(rustc) = std::env::var_os("RUSTC") {
        return rustc;
    }
    let sibling = Path::new(&cargo()).with_file_name("rustc");
    if sibling.is_file() {
        sibling.into_os_string()
    } else {
        "rustc".into()
    }
}

/// Whether the Rust standard library for [`FIRMWARE_TARGET`] is installed in
/// the active toolchain.
pub fn firmware_target_installed() -> bool {
    target_installed(FIRMWARE_TARGET)
}

/// Whether the Rust standard library for `target` is installed in the
/// active toolchain.
pub fn target_installed(target: &str) -> bool {
    let Ok(out) = Command::new(rustc())
        .args(["--print", "sysroot"])
        .stderr(Stdio::null())
        .output()
    else {
        return false;
    };
    let sysroot = String::from_utf8_lossy(&out.stdout);
    Path::new(sysroot.trim())
        .join("lib/rustlib")
        .join(target)
        .join("lib")
        .is_dir()
}

/// Variables the outer cargo (or the user) may set that would override the
/// firmware workspace's own `.cargo/config.toml`: target, target folder,
/// flags meant for the host build, runners, and clippy's wrapper.
fn overrides_firmware_config(name: &str) -> bool {
    name.starts_with("CARGO_TARGET_")
        || name.starts_with("CARGO_BUILD_")
        || matches!(
            name,
            "RUSTFLAGS"
                | "CARGO_ENCODED_RUSTFLAGS"
                | "RUSTDOCFLAGS"
                | "CARGO_ENCODED_RUSTDOCFLAGS"
                | "RUSTC_WORKSPACE_WRAPPER"
                | "CARGO_MANIFEST_DIR"
                | "CARGO_MANIFEST_PATH"
        )
}

/// Build the emulated firmware for the default core (`cargo build --release`
/// with the firmware folder as the working directory, so its
/// `.cargo/config.toml` applies) and return the path of its ELF, normally
/// [`Core::elf_path`].
///
/// Quick when the firmware is up to date. The path is taken from cargo's
/// JSON messages rather than assumed, so a user-level `build.target-dir`
/// setting cannot make us run a stale binary.
pub fn build_firmware() -> Result<PathBuf, BuildError> {
    build_firmware_for(Core::M4f)
}

/// [`build_firmware`] for `core` (`--target` its target).
pub fn build_firmware_for(core: Core) -> Result<PathBuf, BuildError> {
    let dir = repo_roots()
        .into_iter()
        .map(|root| root.join("firmware"))
        .find(|dir| dir.join("Cargo.toml").is_file())
        .ok_or(BuildError::NoSources)?;
    build_firmware_in(&dir, core)
}

/// [`build_firmware_for`] in the firmware workspace `dir` (a checkout's
/// `firmware/` folder).
pub fn build_firmware_in(dir: &Path, core: Core) -> Result<PathBuf, BuildError> {
    let dir = dir.to_path_buf();
    if !dir.join("Cargo.toml").is_file() {
        return Err(BuildError::NoSources);
    }
    if !target_installed(core.target()) {
        return Err(BuildError::NoTarget(core.target()));
    }
    let mut cmd = Command::new(cargo());
    cmd.current_dir(&dir).args([
        "build",
        "--release",
        "--target",
        core.target(),
        "--message-format=json-render-diagnostics",
    ]);
    for (name, _) in std::env::vars_os() {
        if name.to_str().is_some_and(overrides_firmware_config) {
            cmd.env_remove(&name);
        }
    }
    let out = cmd
        .stdin(Stdio::null())
        .output()
        .map_err(BuildError::Cargo)?;
    let stderr = String::from_utf8_lossy(&out.stderr).into_owned();
    if !out.status.success() {
        return Err(BuildError::Failed {
            status: out.status,
            dir,
            stderr,
        });
    }
    executable_from_messages(&String::from_utf8_lossy(&out.stdout), FIRMWARE_PROGRAM)
        .filter(|elf| elf.is_file())
        .ok_or(BuildError::NoExecutable { stderr })
}

/// The `executable` of the last `compiler-artifact` message for the binary
/// target `bin` in cargo's `--message-format=json` output.
fn executable_from_messages(stdout: &str, bin: &str) -> Option<PathBuf> {
    stdout
        .lines()
        .filter_map(|line| serde_json::from_str::<serde_json::Value>(line).ok())
        .filter(|m| m["reason"] == "compiler-artifact" && m["target"]["name"] == bin)
        .filter_map(|m| m["executable"].as_str().map(PathBuf::from))
        .next_back()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn executable_is_read_from_cargo_messages() {
        let messages = concat!(
            "{\"reason\":\"compiler-artifact\",\"target\":{\"name\":\"cortex-m\"},\"executable\":null}\n",
            "not json at all\n",
            "{\"reason\":\"compiler-artifact\",\"target\":{\"name\":\"plethwire-emulated\"},",
            "\"executable\":\"/t/release/plethwire-emulated\"}\n",
            "{\"reason\":\"build-finished\",\"success\":true}\n"
        );
        assert_eq!(
            executable_from_messages(messages, "plethwire-emulated"),
            Some(PathBuf::from("/t/release/plethwire-emulated"))
        );
        assert_eq!(executable_from_messages(messages, "cortex-m"), None);
    }

    #[test]
    fn outer_cargo_settings_are_not_passed_to_the_firmware_build() {
        for name in [
            "CARGO_TARGET_DIR",
            "CARGO_BUILD_TARGET",
            "RUSTFLAGS",
            "CARGO_ENCODED_RUSTFLAGS",
            "CARGO_TARGET_THUMBV7EM_NONE_EABIHF_RUNNER",
        ] {
            assert!(overrides_firmware_config(name), "{name}");
        }
        for name in ["PATH", "HOME", "RUSTUP_TOOLCHAIN", "CARGO_HOME", "CI"] {
            assert!(!overrides_firmware_config(name), "{name}");
        }
    }
}
