//! Finding the emulated firmware for a program that may be installed far
//! from its sources (`cargo install --path cli`), in this order:
//!
//! 1. an ELF the user names (`--firmware`), then [`FIRMWARE_VAR`];
//! 2. a plethwire checkout the user names (`--source`), then
//!    [`SOURCE_VAR`]: the firmware is built there;
//! 3. last, the checkout this program was built from, if it is still
//!    there (and [`SOURCE_VAR`] is not set to the empty string, which
//!    means "no checkout"): its ELF as built, or built again first when a
//!    file it is made from is newer.
//!
//! Every ELF is checked ([`check_elf`]) before QEMU gets it. When nothing
//! is found, one message says each way to fix it.

use std::ffi::OsString;
use std::path::{Path, PathBuf};

use super::board::{build_firmware_in, repo_roots, BuildError};
use super::elf::{check_elf_for, ElfProblem};
use super::Core;

/// Environment variable naming the emulated firmware's ELF.
pub const FIRMWARE_VAR: &str = "PLETHWIRE_FIRMWARE";

/// Environment variable naming a plethwire checkout to build the emulated
/// firmware in; set but empty, no checkout is used at all.
pub const SOURCE_VAR: &str = "PLETHWIRE_SOURCE";

/// Why no usable firmware was found; one line saying what to do.
#[derive(Debug, thiserror::Error)]
pub enum FirmwareError {
    /// Nothing named and no checkout to build in.
    #[error("no emulated firmware found: pass --firmware <ELF> or set {FIRMWARE_VAR}=<ELF> (an ELF built from firmware/emulated), or pass --source <plethwire checkout> or set {SOURCE_VAR}=<plethwire checkout> to build it there (needs `rustup target add {}`)", .0.target())]
    NotFound(Core),
    /// The named ELF does not exist.
    #[error("no emulated firmware at {} (from {from}); give the path of an ELF built from firmware/emulated, or pass --source <plethwire checkout> to build it", .path.display())]
    Missing {
        /// The path named.
        path: PathBuf,
        /// Who named it (`--firmware`, the variable).
        from: String,
    },
    /// The named ELF is not firmware for the emulated board.
    #[error("{} (from {from}) is not the emulated board's firmware: {problem}; build firmware/emulated (`{}`) and give that ELF", .path.display(), .core.build_hint())]
    WrongElf {
        /// The path named.
        path: PathBuf,
        /// Who named it.
        from: String,
        /// What is wrong with it.
        problem: ElfProblem,
        /// The core it was to run on.
        core: Core,
    },
    /// The named folder is not a plethwire checkout.
    #[error("{} (from {from}) is not a plethwire checkout: it has no firmware/Cargo.toml; point it at the folder holding plethwire's sources, or pass --firmware <ELF>", .path.display())]
    NotACheckout {
        /// The folder named.
        path: PathBuf,
        /// Who named it (`--source`, the variable).
        from: String,
    },
    /// The firmware could not be built in a checkout.
    #[error("cannot build the emulated firmware in {}: {source}; fix that, or pass --firmware <ELF>", .checkout.display())]
    Build {
        /// The checkout.
        checkout: PathBuf,
        /// Why.
        source: BuildError,
    },
}

/// What to look for.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct FirmwareSearch {
    /// The ELF named on the command line (`--firmware`).
    pub elf: Option<PathBuf>,
    /// The checkout named on the command line (`--source`).
    pub source: Option<PathBuf>,
    /// Build even in the checkout this program was built from, when an
    /// ELF is already there (a named checkout is always built in: quick
    /// when up to date, and never a stale ELF).
    pub rebuild: bool,
    /// The core it is to run on: its target, and the ELF check.
    pub core: Core,
}

/// The firmware found.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Firmware {
    /// Its ELF, checked.
    pub elf: PathBuf,
    /// Where it came from, in words (`--firmware`, `PLETHWIRE_FIRMWARE`,
    /// `built in /src/plethwire`, ...).
    pub origin: String,
}

impl FirmwareSearch {
    /// Find (or build) the firmware as the module's order says, with the
    /// process's environment; `say` is told before a build starts.
    pub fn locate(&self, say: &mut dyn FnMut(&str)) -> Result<Firmware, FirmwareError> {
        self.locate_with(&|name| std::env::var_os(name), say)
    }

    /// [`Self::locate`] with `var` for the environment.
    pub fn locate_with(
        &self,
        var: &dyn Fn(&str) -> Option<OsString>,
        say: &mut dyn FnMut(&str),
    ) -> Result<Firmware, FirmwareError> {
        let named_elf = self
            .elf
            .clone()
            .map(|p| (p, "--firmware".to_owned()))
            .or_else(|| named(var, FIRMWARE_VAR));
        if let Some((path, from)) = named_elf {
            return checked(path, from, self.core);
        }
        let source_var = var(SOURCE_VAR);
        let named_source = self
            .source
            .clone()
            .map(|p| (p, "--source".to_owned()))
            .or_else(|| named(var, SOURCE_VAR));
        if let Some((path, from)) = named_source {
            if !path.join("firmware/Cargo.toml").is_file() {
                return Err(FirmwareError::NotACheckout { path, from });
            }
            return build(&path, self.core, say, None);
        }
        if source_var.is_some_and(|v| v.is_empty()) {
            return Err(FirmwareError::NotFound(self.core));
        }
        let Some(root) = repo_roots()
            .into_iter()
            .find(|r| r.join("firmware/Cargo.toml").is_file())
        else {
            return Err(FirmwareError::NotFound(self.core));
        };
        let existing = root.join(self.core.elf_path());
        if !self.rebuild && existing.is_file() && !stale(&existing, &root) {
            let from = "the checkout this program was built from".into();
            return checked(existing, from, self.core);
        }
        build(&root, self.core, say, Some(existing))
    }
}

/// The trees whose files go into the emulated firmware, under a checkout.
const FIRMWARE_SOURCES: [&str; 4] = [
    "shared-dsp/src",
    "board/src",
    "firmware/emulated",
    "firmware/Cargo.lock",
];

/// Whether a file the emulated firmware is built from is newer than `elf`
/// (then the ELF would count and compare the code as it was, not as it
/// is). Unreadable times count as not newer: the ELF is then used as before.
fn stale(elf: &Path, root: &Path) -> bool {
    let Ok(built) = std::fs::metadata(elf).and_then(|m| m.modified()) else {
        return false;
    };
    FIRMWARE_SOURCES
        .iter()
        .any(|part| newer_than(&root.join(part), built))
}

/// Whether `path`, or any file below it, was changed after `when`.
fn newer_than(path: &Path, when: std::time::SystemTime) -> bool {
    let Ok(meta) = std::fs::metadata(path) else {
        return false;
    };
    if meta.is_dir() {
        let Ok(entries) = std::fs::read_dir(path) else {
            return false;
        };
        return entries
            .flatten()
            .any(|e| e.file_name() != "target" && newer_than(&e.path(), when));
    }
    meta.modified().is_ok_and(|m| m > when)
}

/// A non-empty variable as a path, with its name as the origin.
fn named(var: &dyn Fn(&str) -> Option<OsString>, name: &str) -> Option<(PathBuf, String)> {
    var(name)
        .filter(|v| !v.is_empty())
        .map(|v| (PathBuf::from(v), name.to_owned()))
}

/// `path` as the firmware for `core`, once it exists and passes
/// [`check_elf_for`].
fn checked(path: PathBuf, from: String, core: Core) -> Result<Firmware, FirmwareError> {
    if !path.is_file() {
        return Err(FirmwareError::Missing { path, from });
    }
    match check_elf_for(&path, core) {
        Ok(()) => Ok(Firmware {
            elf: path,
            origin: from,
        }),
        Err(problem) => Err(FirmwareError::WrongElf {
            path,
            from,
            problem,
            core,
        }),
    }
}

/// Build for `core` in `checkout`; when the build fails, `fallback` (an ELF
/// already there) if it exists, else the failure.
fn build(
    checkout: &Path,
    core: Core,
    say: &mut dyn FnMut(&str),
    fallback: Option<PathBuf>,
) -> Result<Firmware, FirmwareError> {
    say(&format!(
        "building the emulated firmware for {} in {} (cargo build --release --target {}; quick when up to date) ...",
        core.describe(),
        checkout.display(),
        core.target()
    ));
    let origin = format!("built in {}", checkout.display());
    match build_firmware_in(&checkout.join("firmware"), core) {
        Ok(elf) => checked(elf, origin, core),
        Err(e) => {
            if let BuildError::Failed { stderr, .. } = &e {
                say(stderr.trim_end());
            }
            match fallback.filter(|f| f.is_file()) {
                Some(f) => checked(
                    f,
                    format!("{origin} earlier (this build failed: {e})"),
                    core,
                ),
                None => Err(FirmwareError::Build {
                    checkout: checkout.to_path_buf(),
                    source: e,
                }),
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// An ELF older than a file of the shared code is stale; one newer than
    /// every such file is not; a `target` folder inside is not looked at.
    #[test]
    fn an_elf_older_than_the_shared_code_is_stale() {
        use std::time::{Duration, SystemTime};
        let root = tempfile::tempdir().unwrap();
        let at = |path: &Path, when: SystemTime| {
            std::fs::create_dir_all(path.parent().unwrap()).unwrap();
            let f = std::fs::File::create(path).unwrap();
            f.set_modified(when).unwrap();
        };
        let now = SystemTime::now();
        let hour = Duration::from_secs(3600);
        let elf = root.path().join("firmware/target/elf");
        at(&root.path().join("shared-dsp/src/lib.rs"), now - 2 * hour);
        at(&root.path().join("firmware/emulated/target/newer"), now);
        at(&elf, now - hour);
        assert!(!stale(&elf, root.path()));
        at(&root.path().join("board/src/lib.rs"), now - hour / 2);
        assert!(stale(&elf, root.path()));
    }

    fn env<'a>(pairs: &'a [(&'a str, &'a str)]) -> impl Fn(&str) -> Option<OsString> + 'a {
        move |name| {
            pairs
                .iter()
                .find(|(n, _)| *n == name)
                .map(|(_, v)| OsString::from(v))
        }
    }

    #[test]
    fn nothing_named_and_no_checkout_says_every_way_out() {
        let none = FirmwareSearch::default();
        let e = none
            .locate_with(&env(&[(SOURCE_VAR, "")]), &mut |_| {})
            .unwrap_err();
        let text = e.to_string();
        for word in ["--firmware", FIRMWARE_VAR, "--source", SOURCE_VAR, "rustup"] {
            assert!(text.contains(word), "{word}: {text}");
        }
        assert!(!text.contains('\n'));
    }

    #[test]
    fn named_files_come_first_and_are_checked() {
        let dir = tempfile::tempdir().unwrap();
        let not_elf = dir.path().join("fw.bin");
        std::fs::write(&not_elf, b"\x00\x04\x00\x20").unwrap();
        let v = not_elf.to_str().unwrap();
        let search = FirmwareSearch::default();
        let e = search
            .locate_with(&env(&[(FIRMWARE_VAR, v), (SOURCE_VAR, "")]), &mut |_| {})
            .unwrap_err()
            .to_string();
        assert!(e.contains(FIRMWARE_VAR) && e.contains("not an ELF"), "{e}");
        // The option wins over the variable.
        let opt = FirmwareSearch {
            elf: Some(dir.path().join("gone.elf")),
            ..FirmwareSearch::default()
        };
        let e = opt
            .locate_with(&env(&[(FIRMWARE_VAR, v)]), &mut |_| {})
            .unwrap_err()
            .to_string();
        assert!(e.contains("gone.elf") && e.contains("--firmware"), "{e}");
        // A checkout that is not one.
        let src = FirmwareSearch {
            source: Some(dir.path().to_path_buf()),
            ..FirmwareSearch::default()
        };
        let e = src.locate_with(&env(&[]), &mut |_| {}).unwrap_err();
        assert!(matches!(e, FirmwareError::NotACheckout { .. }), "{e}");
    }
}
