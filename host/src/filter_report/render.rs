//! Text renderings of a report: the response table and the whole
//! human-readable output.

use std::fmt::Write as _;

use super::report::{FilterReport, ResponseRow, BOARD_STRUCTURE};
use crate::plot::fixed;

/// The response table: per frequency, gain (dB), phase (degrees) and group
/// delay (ms) of the design and of the board's cascade, and how far the
/// board's gain is from the design's.
pub fn response_table(rows: &[ResponseRow]) -> String {
    let mut s = String::new();
    let _ = writeln!(
        s,
        "{:>10} | {:^32} | {:^32} | {:>10}",
        "",
        "design (f64)",
        format!("board ({BOARD_STRUCTURE})"),
        "board gain"
    );
    let _ = writeln!(
        s,
        "{:>10} | {:>10} {:>10} {:>10} | {:>10} {:>10} {:>10} | {:>10}",
        "freq Hz",
        "gain dB",
        "phase deg",
        "delay ms",
        "gain dB",
        "phase deg",
        "delay ms",
        "minus dB"
    );
    // Undefined phase or delay (on a zero of the response) shows as "-".
    let cell =
        |v: Option<f64>, decimals: usize| v.map_or_else(|| "-".to_owned(), |x| fixed(x, decimals));
    for r in rows {
        let (d, b) = (&r.design, &r.board);
        let diff = if d.gain_db.is_finite() || b.gain_db.is_finite() {
            format!("{:.2e}", b.gain_db - d.gain_db)
        } else {
            // Both exactly zero: no difference to speak of.
            "-".to_owned()
        };
        let _ = writeln!(
            s,
            "{:>10} | {:>10} {:>10} {:>10} | {:>10} {:>10} {:>10} | {:>10}",
            r.frequency_hz,
            fixed(d.gain_db, 4),
            cell(d.phase_deg, 2),
            cell(d.group_delay_ms, 3),
            fixed(b.gain_db, 4),
            cell(b.phase_deg, 2),
            cell(b.group_delay_ms, 3),
            diff
        );
    }
    s
}

/// Everything for a person to read: a header line, the `const` block, the
/// sections as JSON, the response table and where the plot went.
pub fn human_report(report: &FilterReport) -> String {
    let json = serde_json::to_string(&report.coefficients)
        .unwrap_or_else(|e| format!("(cannot render the sections as JSON: {e})"));
    let plot = match &report.plot {
        Some(path) => format!("Plot written to {path}"),
        None => "No plot written.".to_owned(),
    };
    format!(
        "Designed {summary}\n\n{code}\nSections as JSON:\n{json}\n\n\
         Response (phase is the sum of each section's principal phase; \
         \"-\" where a zero makes phase and delay undefined):\n{table}\n{plot}\n",
        summary = report.summary,
        code = report.rust_const,
        table = response_table(&report.response),
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::filter_report::ResponsePoint;

    #[test]
    fn table_shows_both_gains_and_their_difference() {
        let p = |g: f64| ResponsePoint {
            gain_db: g,
            phase_deg: g.is_finite().then_some(12.5),
            group_delay_ms: g.is_finite().then_some(3.25),
        };
        let rows = [
            ResponseRow {
                frequency_hz: 2.0,
                design: p(-3.0),
                board: p(-3.001),
            },
            ResponseRow {
                frequency_hz: 50.0,
                design: p(f64::NEG_INFINITY),
                board: p(f64::NEG_INFINITY),
            },
        ];
        let t = response_table(&rows);
        let lines: Vec<&str> = t.lines().collect();
        assert_eq!(lines.len(), 4);
        assert!(lines[2].contains("-3.0000") && lines[2].contains("-3.0010"));
        assert!(lines[2].contains("12.50") && lines[2].contains("3.250"));
        assert!(lines[2].trim_end().ends_with("-1.00e-3"), "{}", lines[2]);
        let cells: Vec<&str> = lines[3].split_whitespace().collect();
        assert_eq!(
            cells,
            ["50", "|", "-inf", "-", "-", "|", "-inf", "-", "-", "|", "-"]
        );
    }
}
