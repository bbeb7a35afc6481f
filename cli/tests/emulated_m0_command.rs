//! `plethwire emulate --core m0`: the firmware on QEMU's microbit
//! (Cortex-M0 without an FPU) from the command line, counted, against the
//! host replay bit for bit; and an ELF built for the M4F refused.
//!
//! Recording: BIDMC (Pimentel et al., IEEE TBME 64(8):1914, 2017), 125 Hz,
//! from ../shared/data.

use std::ffi::OsString;

use plethwire::emulate::{Core, Link};
use plethwire_checks::emulation::{emulation_on, shared_record};
use plethwire_checks::{build_emulated_firmware_for, shared_data_dir};
use plethwire_cli as cli;

fn args(words: &[&std::ffi::OsStr]) -> Vec<OsString> {
    words.iter().map(|w| w.to_os_string()).collect()
}

#[test]
fn the_emulate_command_runs_and_counts_on_the_m0() {
    let Some(_) = emulation_on(Core::M0, Link::File, true) else {
        return;
    };
    let Some(_) = shared_record("bidmc/bidmc45") else {
        return;
    };
    let record = shared_data_dir().unwrap().join("bidmc/bidmc45");
    let out_dir = tempfile::tempdir().unwrap();
    let elf = build_emulated_firmware_for(Core::M0);
    let words = [
        "plethwire".as_ref(),
        "emulate".as_ref(),
        record.as_os_str(),
        "--core".as_ref(),
        "m0".as_ref(),
        "--seconds".as_ref(),
        "30".as_ref(),
        "--count-instructions".as_ref(),
        "--elf".as_ref(),
        elf.as_os_str(),
        "--out".as_ref(),
        out_dir.path().as_os_str(),
    ];
    let mut out = Vec::new();
    cli::run(args(&words), &mut out).unwrap_or_else(|f| panic!("{:?}", f.message));
    let text = String::from_utf8(out).unwrap();
    assert!(
        text.contains("Cortex-M0 without FPU, QEMU microbit"),
        "{text}"
    );
    assert!(
        text.lines().filter(|l| l.contains(" beat ")).count() >= 20,
        "{text}"
    );
    assert!(
        text.contains("host replay identical, bit for bit"),
        "{text}"
    );
    assert!(text.contains("instructions per sample"), "{text}");
    assert!(text.contains("the stack at its deepest"), "{text}");
    assert!(out_dir.path().join("bidmc45.pwire").is_file());
}

#[test]
fn the_m0_refuses_the_m4f_elf() {
    let Some(_) = emulation_on(Core::M0, Link::File, false) else {
        return;
    };
    let Some(_) = shared_record("bidmc/bidmc45") else {
        return;
    };
    let record = shared_data_dir().unwrap().join("bidmc/bidmc45");
    let m4f = build_emulated_firmware_for(Core::M4f);
    let run = |extra: &[&std::ffi::OsStr]| {
        let mut words = vec![
            "plethwire".as_ref(),
            "emulate".as_ref(),
            record.as_os_str(),
            "--core".as_ref(),
            "m0".as_ref(),
        ];
        words.extend_from_slice(extra);
        let mut out = Vec::new();
        let failure = cli::run(args(&words), &mut out).expect_err("refused");
        failure.message.unwrap_or_default()
    };
    let said = run(&["--elf".as_ref(), m4f.as_os_str()]);
    assert!(
        said.contains("Cortex-M4F") && said.contains("thumbv6m-none-eabi"),
        "{said}"
    );
}
