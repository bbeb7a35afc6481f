//! The second table of `plethwire score`: recordings against a chest
//! strap's R-R list (see [`plethwire::score::strap`]).

use plethwire::score::records::Scores;

fn num(v: Option<f64>, decimals: usize) -> String {
    v.map_or("-".into(), |v| format!("{v:.decimals$}"))
}

/// One line per CSV recording read from a time column: the unit, the grid
/// and the channel figures (the replay summary's input lines, condensed).
pub(super) fn input_lines(s: &Scores) -> String {
    let mut t = String::new();
    for r in &s.records {
        let input = &r.input;
        let (Some(column), Some(unit)) = (&input.time_column, input.time_unit) else {
            continue;
        };
        t += &format!(
            "{}: time {column:?} in {} ({})",
            r.record,
            unit.name(),
            input.time_unit_from.unwrap_or("given")
        );
        match &input.resampled {
            Some(x) => {
                t += &format!(
                    ", resampled onto {:.2} Hz, {:.0} % of frames off the grid, longest gap {:.0} ms, {} samples missing",
                    x.grid_hz,
                    100.0 * x.resampled_share,
                    1000.0 * x.longest_gap_s,
                    x.missing_samples
                )
            }
            None => t += ", uniform",
        }
        if let Some(c) = &input.channel {
            let f: Vec<String> = c
                .candidates
                .iter()
                .map(|f| format!("{} {:.2}", f.name, f.figure))
                .collect();
            t += &format!("; {} chosen of {}", c.chosen, f.join(", "));
        }
        if input.inverted {
            t += "; negated";
        }
        t += "\n";
    }
    if !t.is_empty() {
        t.insert(0, '\n');
    }
    t
}

/// The strap table, or nothing when no recording had a strap list.
pub(super) fn strap_table(s: &Scores) -> String {
    if s.records.iter().all(|r| r.strap.is_none()) {
        return String::new();
    }
    let mut t = format!(
        "\n{:<12} {:>9} {:>9} {:>6} {:>7} {:>11} {:>9} {:>9} {:>5} {:>11} {:>11}\n",
        "record",
        "channel",
        "offset s",
        "margin",
        "matched",
        "HR us/strap",
        "all med/95",
        "good med/95",
        "good",
        "RMSSD us/st",
        "SDNN us/st"
    );
    for r in &s.records {
        let Some(x) = &r.strap else { continue };
        let channel = &r.signal;
        let a = &x.alignment;
        t += &format!(
            "{:<12} {:>9} {:>9.3} {:>5.2}{} {:>3}/{:<3} {:>5}/{:<5} {:>4}/{:<4} {:>4}/{:<4} {:>5} {:>5}/{:<5} {:>5}/{:<5}\n",
            r.record,
            channel,
            a.offset_ms / 1000.0,
            a.margin,
            if a.determined { " " } else { "?" },
            x.matched_beats,
            x.strap_intervals + 1,
            num(x.mean_hr_bpm.ours, 1),
            num(x.mean_hr_bpm.strap, 1),
            num(x.intervals_all.median_abs_ms, 0),
            num(x.intervals_all.p95_abs_ms, 0),
            num(x.intervals_good.median_abs_ms, 0),
            num(x.intervals_good.p95_abs_ms, 0),
            x.intervals_good.count,
            num(x.rmssd_ms.ours, 0),
            num(x.rmssd_ms.strap, 0),
            num(x.sdnn_ms.ours, 0),
            num(x.sdnn_ms.strap, 0),
        );
    }
    t += "Strap: offset of its first beat on the recording's clock; margin 1 - rival/best (? below 0.1: not determined);\n";
    t += "matched beats of the strap's; med/95: median and 95th percentile |IBI - RR| in ms over matched intervals (good: both beats good);\n";
    t += "HR (bpm), RMSSD and SDNN (ms) ours (normal-to-normal intervals) against the strap's, over the span both cover.\n";
    t
}
