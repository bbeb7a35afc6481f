//! The picture as one markdown table (a row per figure, grouped by
//! dataset; columns ours | baseline | target), the lines on each target,
//! and the table's place in docs/accuracy.md between two marker comments.

use std::path::Path;

use super::datasets::DATASETS;
use super::figures::FIGURES;
use super::missed::{MissedCounts, PREMATURE_SHARE, VISIBLE_SHARE};
use super::targets::{Verdict, TARGETS};
use super::{AccuracyError, Picture};

/// The comment the table starts after in docs/accuracy.md.
pub const BEGIN_MARK: &str = "<!-- accuracy table: begin (written by scripts/accuracy --write) -->";
/// The comment it ends before.
pub const END_MARK: &str = "<!-- accuracy table: end -->";

fn label_of(id: super::datasets::DatasetId) -> &'static str {
    DATASETS
        .iter()
        .find(|d| d.id == id)
        .map_or("?", |d| d.label)
}

/// The target cell of a figure: each of its targets and how it stands.
fn target_cell(picture: &Picture, figure: super::figures::Figure) -> String {
    let cells: Vec<String> = TARGETS
        .iter()
        .filter(|t| t.figure == figure)
        .map(|t| {
            let state = match (t.verdict(&picture.ours, &picture.baseline), t.enforced) {
                (Verdict::Met { .. }, true) => "met".to_string(),
                (Verdict::Met { .. }, false) => "met (not enforced yet)".to_string(),
                (Verdict::NotMetYet { floor, .. }, _) => {
                    format!("**not met yet** (floor {})", t.show(floor))
                }
                (Verdict::Failed { limit, .. }, _) => {
                    format!("**FAILED** (held to {})", t.show(limit))
                }
            };
            format!("{}: {state}", t.text())
        })
        .collect();
    if cells.is_empty() {
        "–".into()
    } else {
        cells.join("; ")
    }
}

/// The table, and under it where the data and the targets come from.
pub fn markdown(picture: &Picture) -> String {
    let mut t =
        String::from("| dataset | figure | ours | baseline | target |\n|---|---|---|---|---|\n");
    let mut last = None;
    for figure in FIGURES {
        let id = figure.dataset();
        let name = if last == Some(id) { "" } else { label_of(id) };
        last = Some(id);
        t += &format!(
            "| {name} | {} | {} | {} | {} |\n",
            figure.label(),
            figure.cell(&picture.ours),
            figure.cell(&picture.baseline),
            target_cell(picture, figure)
        );
    }
    t += "\nData (as their README asks them to be cited):\n\n";
    for d in DATASETS {
        t += &format!("- {}: {}\n", d.folder, d.citation);
    }
    t += &format!("\nTargets: the project's {}.\n", super::targets::ISSUE);
    for d in &picture.datasets {
        if !d.missed.is_empty() {
            t += &missed_markdown(d.dataset.folder, &d.missed);
        }
    }
    t
}

/// The R peaks each beat list misses in one dataset, by kind
/// ([`super::missed`]), per recording and pooled.
pub fn missed_markdown(folder: &str, rows: &[(String, MissedCounts, MissedCounts)]) -> String {
    let mut t = format!(
        "\n{folder}: R peaks without a matched pulse. *premature*: R-R before it under {:.0} % \
         of the record's median; *no pulse*: no pulse of {:.0} % of the record's median height \
         where it was due (0.5-8 Hz, zero phase).\n\n\
         | record | R peaks | ours missed | premature | no pulse | premature, no pulse | \
         baseline missed | no pulse |\n|---|---|---|---|---|---|---|---|\n",
        100.0 * PREMATURE_SHARE,
        100.0 * VISIBLE_SHARE
    );
    let (mut ours, mut base) = (MissedCounts::default(), MissedCounts::default());
    let row = |name: &str, o: &MissedCounts, b: &MissedCounts| {
        format!(
            "| {name} | {} | {} | {} | {} | {} | {} | {} |\n",
            o.scored, o.missed, o.premature, o.no_pulse, o.premature_no_pulse, b.missed, b.no_pulse
        )
    };
    for (name, o, b) in rows {
        t += &row(name, o, b);
        ours.add(o);
        base.add(b);
    }
    t += &row("pooled", &ours, &base);
    let pct = |v: Option<f64>| v.map_or("–".into(), |v| format!("{:.2} %", 100.0 * v));
    t += &format!(
        "\nSe with the missed beats that show no pulse left out of the reference: \
         ours {}, baseline {}.\n",
        pct(ours.se_of_visible()),
        pct(base.se_of_visible())
    );
    t
}

/// One line per target on today's figures.
pub fn target_lines(picture: &Picture) -> Vec<(Verdict, String)> {
    TARGETS
        .iter()
        .map(|t| {
            let v = t.verdict(&picture.ours, &picture.baseline);
            (v, t.line(v, DATASETS[dataset_index(t.figure)].folder))
        })
        .collect()
}

fn dataset_index(figure: super::figures::Figure) -> usize {
    DATASETS
        .iter()
        .position(|d| d.id == figure.dataset())
        .unwrap_or(0)
}

/// `doc` with the text between [`BEGIN_MARK`] and [`END_MARK`] replaced by
/// `table`; each mark must occur once, the beginning first.
pub fn replace_between_marks(doc: &str, table: &str) -> Result<String, AccuracyError> {
    let once = |mark: &str| match doc.match_indices(mark).count() {
        1 => Ok(doc.find(mark).unwrap_or(0)),
        n => Err(AccuracyError::Docs(format!(
            "the mark {mark} occurs {n} times in the document, not once"
        ))),
    };
    let (begin, end) = (once(BEGIN_MARK)?, once(END_MARK)?);
    if end < begin {
        return Err(AccuracyError::Docs(format!(
            "{END_MARK} comes before {BEGIN_MARK}"
        )));
    }
    let head = &doc[..begin + BEGIN_MARK.len()];
    Ok(format!("{head}\n\n{}\n{}", table.trim_end(), &doc[end..]))
}

/// Write `table` into the document at `path` between the marks.
pub fn write_into(path: &Path, table: &str) -> Result<(), AccuracyError> {
    let io = |e: std::io::Error| AccuracyError::Docs(format!("{}: {e}", path.display()));
    let doc = std::fs::read_to_string(path).map_err(io)?;
    let new = replace_between_marks(&doc, table)
        .map_err(|e| AccuracyError::Docs(format!("{}: {e}", path.display())))?;
    std::fs::write(path, new).map_err(io)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_table_goes_between_the_marks_and_nowhere_else() {
        let doc = format!("# A\n\ntext\n{BEGIN_MARK}\nold\n{END_MARK}\nrest\n");
        let new = replace_between_marks(&doc, "| t |\n").unwrap();
        assert_eq!(
            new,
            format!("# A\n\ntext\n{BEGIN_MARK}\n\n| t |\n{END_MARK}\nrest\n")
        );
        // Idempotent: writing again gives the same document.
        assert_eq!(replace_between_marks(&new, "| t |\n").unwrap(), new);
        for bad in [
            "no marks".to_string(),
            format!("{END_MARK}\n{BEGIN_MARK}\n"),
            format!("{BEGIN_MARK}\n{BEGIN_MARK}\n{END_MARK}\n"),
        ] {
            assert!(matches!(
                replace_between_marks(&bad, "x"),
                Err(AccuracyError::Docs(_))
            ));
        }
    }
}
