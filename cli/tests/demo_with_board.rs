//! `plethwire demo` with the emulated board: the ride streamed by the
//! host and by the emulated Cortex-M4F board gives the same beats and
//! state changes, bit for bit (the project's invariant).

use plethwire_checks::{build_emulated_firmware, need, needs, qemu};
use plethwire_cli::run;
use std::ffi::OsString;

#[test]
fn the_demo_ride_agrees_on_the_emulated_board() {
    if !need(needs::QEMU, qemu().is_some()) {
        return;
    }
    build_emulated_firmware();
    let dir = tempfile::tempdir().unwrap();
    let args: Vec<OsString> = vec![
        "plethwire".into(),
        "demo".into(),
        "--json".into(),
        "--out".into(),
        dir.path().into(),
    ];
    let mut out = Vec::new();
    run(args, &mut out).unwrap_or_else(|f| panic!("{:?}", f.message));
    let v: serde_json::Value = serde_json::from_slice(&out).unwrap();
    let agreed = &v["board"]["agreed"];
    assert!(agreed.is_object(), "{}", v["board"]);
    assert_eq!(agreed["beats"], v["summary"]["beats"]);
    assert!(agreed["blocks"].as_u64().unwrap_or(0) > 0, "{agreed}");
}
