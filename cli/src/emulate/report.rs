//! What `plethwire emulate` prints after a run: the summary lines or the
//! JSON document.

use std::path::Path;

use plethwire::emulate::{Agreement, Core, Disagreement, Firmware, PerfReport, Session};
use plethwire::replay::{Replay, Summary};

/// The summary lines after the beats.
pub(super) fn summary(
    session: &Session,
    s: &Summary,
    agreement: Option<&Agreement>,
    ann: &Path,
) -> String {
    let st = &session.stats;
    let mut t = format!(
        "  frames      {} decoded, {} damaged, {} lost\n",
        st.frames, st.damaged, st.lost_frames
    );
    t += &crate::replay::beats_and_rate_lines(s);
    t += &format!(
        "  input       {} samples replaced (not a number), {} at the rails\n",
        s.rejected_samples, s.clipped_samples
    );
    if let Some(a) = agreement {
        t += &format!(
            "  host replay identical, bit for bit: {} beats, {} state change{}, {} sample blocks\n",
            a.beats,
            a.states,
            if a.states == 1 { "" } else { "s" },
            a.blocks
        );
    }
    if let Some(p) = &session.perf {
        t += &perf_line(p);
    }
    t += &format!("  wrote       {}\n", ann.display());
    t
}

fn perf_line(p: &PerfReport) -> String {
    format!(
        "  cost        {:.1} instructions per sample ({} over {} samples; dearest sample about {})\n\
         \x20 RAM         {} of {} bytes: {} static, {} the stack at its deepest\n",
        p.instructions_per_sample,
        p.instructions,
        p.samples,
        p.max_instructions(),
        p.ram_used_bytes(),
        p.ram_bytes,
        p.static_bytes,
        p.stack_peak_bytes
    )
}

/// The run as our JSON document: record, core, link, frames, summary,
/// agreement with the host, performance, the annotation file and the
/// firmware.
pub(super) fn json_report(
    (name, core): (&str, Core),
    uart: bool,
    seconds: f64,
    session: &Session,
    board: &Replay,
    agreement: &Result<Agreement, Disagreement>,
    (ann, firmware): (&Path, &Firmware),
) -> String {
    let doc = serde_json::json!({
        "record": name,
        "core": core,
        "link": if uart { "uart" } else { "files" },
        "seconds": seconds,
        "frames": {
            "decoded": session.stats.frames,
            "damaged": session.stats.damaged,
            "lost": session.stats.lost_frames,
        },
        "summary": board.summary(),
        "identical_to_host": agreement.is_ok(),
        "difference": agreement.as_ref().err().map(ToString::to_string),
        "perf": session.perf,
        "annotations": ann.display().to_string(),
        "firmware": firmware.elf.display().to_string(),
        "firmware_from": firmware.origin,
    });
    serde_json::to_string_pretty(&doc).unwrap_or_default() + "\n"
}
