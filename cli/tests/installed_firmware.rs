//! An installed `plethwire` (the binary copied to a folder of its own, run
//! from another) finds the emulated firmware through what the user tells
//! it, not through the build folder baked into it; says in one line what
//! to do when nothing is found; and names what is wrong with a file that
//! is not the emulated board's firmware before QEMU sees it.
//!
//! `PLETHWIRE_SOURCE` set to the empty string stands for an install whose
//! checkout is gone: the baked build folder is then not used.

mod common;

use plethwire_checks::{build_emulated_firmware, need, needs, qemu, repo_root};
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

/// The binary copied into a fresh folder (kept alive by the guard).
fn installed() -> (tempfile::TempDir, PathBuf) {
    let bin = tempfile::tempdir().unwrap();
    let exe = bin.path().join("plethwire");
    std::fs::copy(env!("CARGO_BIN_EXE_plethwire"), &exe).unwrap();
    (bin, exe)
}

/// Run the installed `exe` in `cwd` with no checkout and no firmware set,
/// plus `env`.
fn run(exe: &Path, cwd: &Path, args: &[&str], env: &[(&str, &Path)]) -> Output {
    let mut cmd = Command::new(exe);
    cmd.args(args)
        .current_dir(cwd)
        .env("PLETHWIRE_SOURCE", "")
        .env_remove("PLETHWIRE_FIRMWARE")
        .env_remove("CARGO");
    for (k, v) in env {
        cmd.env(k, v);
    }
    // A test thread forking while another copies its binary can hold the
    // copy open for writing a moment (ETXTBSY): try again.
    for _ in 0..100 {
        match cmd.output() {
            Err(e) if e.kind() == std::io::ErrorKind::ExecutableFileBusy => {
                std::thread::sleep(std::time::Duration::from_millis(20))
            }
            got => return got.expect("run the installed plethwire"),
        }
    }
    panic!("the copied binary stayed busy")
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

/// A 20 s synthetic record `r` in `dir`.
fn make_record(dir: &Path) -> PathBuf {
    common::synthetic_record(dir, "r", 20.0, 66.0, false)
}

#[test]
fn with_nothing_found_emulate_says_every_way_to_give_the_firmware() {
    let (_bin, exe) = installed();
    let cwd = tempfile::tempdir().unwrap();
    let out = run(&exe, cwd.path(), &["emulate", "no/such/record"], &[]);
    let err = stderr(&out);
    assert_eq!(out.status.code(), Some(1), "{err}");
    assert_eq!(err.lines().count(), 1, "{err}");
    for word in [
        "no emulated firmware found",
        "--firmware",
        "PLETHWIRE_FIRMWARE",
        "--source",
        "PLETHWIRE_SOURCE",
    ] {
        assert!(err.contains(word), "{word} not in {err}");
    }
    // A folder named as the checkout that is not one is named back.
    let out = run(
        &exe,
        cwd.path(),
        &["emulate", "no/such/record", "--source", "."],
        &[],
    );
    let err = stderr(&out);
    assert_eq!(out.status.code(), Some(1), "{err}");
    assert!(
        err.contains("not a plethwire checkout") && err.contains("--source"),
        "{err}"
    );
}

#[test]
fn with_nothing_found_the_demo_says_what_to_do() {
    if !need(needs::QEMU, qemu().is_some()) {
        return;
    }
    let (_bin, exe) = installed();
    let cwd = tempfile::tempdir().unwrap();
    let out = run(&exe, cwd.path(), &["demo", "--json", "--speed", "0"], &[]);
    assert!(out.status.success(), "{}", stderr(&out));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let why = v["board"]["NotRun"].as_str().unwrap_or_default();
    for word in ["PLETHWIRE_FIRMWARE", "--firmware", "--source"] {
        assert!(why.contains(word), "{word} not in {}", v["board"]);
    }
    assert!(cwd.path().join("plethwire-demo/ride.hea").is_file());
}

#[test]
fn the_firmware_variable_is_enough() {
    if !need(needs::QEMU, qemu().is_some()) {
        return;
    }
    let (_bin, exe) = installed();
    let cwd = tempfile::tempdir().unwrap();
    let fw_dir = tempfile::tempdir().unwrap();
    let fw = fw_dir.path().join("emulated.elf");
    std::fs::copy(build_emulated_firmware(), &fw).unwrap();
    let rec = make_record(cwd.path());
    let out = run(
        &exe,
        cwd.path(),
        &["emulate", rec.to_str().unwrap(), "--json"],
        &[("PLETHWIRE_FIRMWARE", &fw)],
    );
    assert!(out.status.success(), "{}", stderr(&out));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["firmware"], fw.display().to_string());
    assert_eq!(v["firmware_from"], "PLETHWIRE_FIRMWARE");
    assert_eq!(v["identical_to_host"], true);
    assert!(cwd.path().join("r.pwire").is_file());
    // The demo runs the board with it too.
    let out = run(
        &exe,
        cwd.path(),
        &["demo", "--json", "--speed", "0"],
        &[("PLETHWIRE_FIRMWARE", &fw)],
    );
    assert!(out.status.success(), "{}", stderr(&out));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert!(v["board"]["Agreed"].is_object(), "{}", v["board"]);
}

#[test]
fn a_checkout_named_by_the_source_variable_is_built_in() {
    if !need(needs::QEMU, qemu().is_some()) {
        return;
    }
    build_emulated_firmware(); // so the build below is quick
    let (_bin, exe) = installed();
    let cwd = tempfile::tempdir().unwrap();
    let rec = make_record(cwd.path());
    let root = repo_root();
    let out = run(
        &exe,
        cwd.path(),
        &["emulate", rec.to_str().unwrap(), "--json", "--seconds", "5"],
        &[("PLETHWIRE_SOURCE", &root)],
    );
    assert!(out.status.success(), "{}", stderr(&out));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let from = v["firmware_from"].as_str().unwrap();
    assert!(
        from.starts_with("built in ") && from.contains(&*root.to_string_lossy()),
        "{from}"
    );
    assert_eq!(v["identical_to_host"], true);
}

/// How the check names the processor these tests run on.
fn host_processor() -> &'static str {
    if cfg!(target_arch = "x86_64") {
        "x86-64"
    } else if cfg!(target_arch = "aarch64") {
        "AArch64"
    } else {
        "a program for"
    }
}

#[test]
fn a_wrong_elf_is_named_before_qemu_starts() {
    let (bin, exe) = installed();
    let cwd = tempfile::tempdir().unwrap();
    let stm32 = cwd.path().join("stm32.elf");
    // ARM, linked at the STM32F411's flash (0x0800_0000).
    std::fs::write(&stm32, common::elf_header(40, 0x0800_0199)).unwrap();
    let raw = cwd.path().join("image.bin");
    std::fs::write(&raw, [0u8, 0, 1, 0x20, 0x99, 0x01, 0, 0]).unwrap();
    let cases: [(&Path, &str); 3] = [
        // The PC program itself: an ELF for this computer's processor.
        (&bin.path().join("plethwire"), host_processor()),
        (&stm32, "0x08000199"),
        (&raw, "not an ELF"),
    ];
    for (file, says) in cases {
        // A QEMU that is not there: the firmware check comes first.
        let out = run(
            &exe,
            cwd.path(),
            &[
                "emulate",
                "no/such/record",
                "--firmware",
                file.to_str().unwrap(),
            ],
            &[("PLETHWIRE_QEMU", &cwd.path().join("no-qemu"))],
        );
        let err = stderr(&out);
        assert_eq!(out.status.code(), Some(1), "{err}");
        assert_eq!(err.lines().count(), 1, "{err}");
        assert!(
            err.contains("is not the emulated board's firmware") && err.contains(says),
            "{says} not in {err}"
        );
        assert!(!err.contains("qemu"), "{err}");
    }
}
