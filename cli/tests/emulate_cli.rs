//! `plethwire emulate` refusing what it cannot do, through the real binary,
//! without QEMU (the runs themselves are checked in `tests/`, which has the
//! emulator harness).

mod common;

use std::process::Command;

/// Run `plethwire args` in a fresh scratch folder (where its outputs go
/// unless `--out` says otherwise).
fn plethwire(args: &[&str]) -> (i32, String, String) {
    let scratch = tempfile::tempdir().unwrap();
    let out = Command::new(env!("CARGO_BIN_EXE_plethwire"))
        .args(args)
        .current_dir(scratch.path())
        .output()
        .expect("run plethwire");
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

#[test]
fn a_missing_firmware_is_one_line_saying_how_to_build_it() {
    let (code, out, err) = plethwire(&[
        "emulate",
        "no/such/record",
        "--elf",
        "/no/such/firmware.elf",
    ]);
    assert_eq!(code, 1, "{err}");
    assert!(out.is_empty(), "{out}");
    assert_eq!(err.lines().count(), 1, "{err}");
    assert!(
        err.starts_with("plethwire: no emulated firmware at /no/such/firmware.elf")
            && err.contains("--firmware")
            && err.contains("--source"),
        "{err}"
    );
}

#[test]
fn a_missing_qemu_is_one_line_saying_how_to_get_it() {
    let dir = tempfile::tempdir().unwrap();
    // Enough of an ELF header to be taken for the emulated board's (32-bit
    // little-endian ARM executable, entry in its code memory); QEMU is
    // looked for next.
    let elf = dir.path().join("fw.elf");
    std::fs::write(&elf, common::elf_header(40, 0x0000_0401)).unwrap();
    let out = Command::new(env!("CARGO_BIN_EXE_plethwire"))
        .args(["emulate", "no/such/record", "--elf"])
        .arg(&elf)
        .env("PLETHWIRE_QEMU", dir.path().join("no-qemu"))
        .output()
        .expect("run plethwire");
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(1), "{err}");
    assert_eq!(err.lines().count(), 1, "{err}");
    assert!(
        err.starts_with("plethwire: qemu-system-arm not found") && err.contains("apt-get install"),
        "{err}"
    );
}

#[test]
fn usage_errors_exit_2() {
    for args in [
        &["emulate", "rec", "--seconds", "0"][..],
        &["emulate", "rec", "--seconds", "soon"],
        &["emulate", "rec", "--uart", "--count-instructions"],
        &["emulate", "rec", "--annotator", "a.b", "--elf", "/no/such"],
        &["emulate"],
        &["emulate", "--serial-link", "/tmp/x", "--uart"],
        &["emulate", "--serial-link", "/tmp/x", "--json"],
    ] {
        let (code, _, err) = plethwire(args);
        assert_eq!(code, 2, "{args:?}: {err}");
        assert_eq!(err.lines().count(), 1, "{args:?}: {err}");
        assert!(err.starts_with("plethwire: "), "{args:?}: {err}");
    }
}

#[test]
fn help_names_the_links_and_the_default_firmware() {
    let (code, out, _) = plethwire(&["emulate", "--help"]);
    assert_eq!(code, 0);
    for word in [
        "--uart",
        "--count-instructions",
        "--seconds",
        "--serial-link",
        "plethwire listen --port",
        "IEC 62471",
        "IEC 60601-1",
        "plethwire-emulated",
    ] {
        assert!(out.contains(word), "{word} missing from:\n{out}");
    }
}
