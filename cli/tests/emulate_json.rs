//! `plethwire emulate --json`: one JSON document saying the emulated
//! board's events were identical to the host replay's (shared BIDMC
//! record; QEMU needed).

use plethwire_checks::{build_emulated_firmware, need, needs, qemu, shared_data_dir};
use plethwire_cli::run;
use std::ffi::OsString;

#[test]
fn emulate_json_reports_identity_with_the_host() {
    if !need(needs::QEMU, qemu().is_some()) {
        return;
    }
    let Some(data) = shared_data_dir() else {
        need(needs::SHARED_DATA, false);
        return;
    };
    build_emulated_firmware();
    let dir = tempfile::tempdir().unwrap();
    let args: Vec<OsString> = vec![
        "plethwire".into(),
        "emulate".into(),
        data.join("bidmc/bidmc01").into(),
        "--seconds".into(),
        "30".into(),
        "--json".into(),
        // Not the default name: a file beside a shared record may have it.
        "--annotator".into(),
        "board".into(),
        "--out".into(),
        dir.path().into(),
    ];
    let mut out = Vec::new();
    run(args, &mut out).unwrap_or_else(|f| panic!("{:?}", f.message));
    let v: serde_json::Value = serde_json::from_slice(&out).unwrap();
    assert_eq!(v["identical_to_host"], true);
    assert_eq!(v["frames"]["damaged"], 0);
    assert!(v["summary"]["beats"].as_u64().unwrap() > 30);
}
