//! The fleet part of the report: who and when, the state of every unit with the figures that
//! explain it, the exceptions that need a decision, the work overdue or due soon, and the
//! supervisor's sign-off lines.
//! Draws what the application layer put in the [`ReportDoc`]; decides nothing.

use super::layout::{size, Cell, Face, Layout, DARK};
use super::{Finding, Mark, ReportDoc, WorkItem};

pub fn draw(l: &mut Layout, doc: &ReportDoc) {
    l.start_section("Fleet condition");
    l.key_values(
        &[
            ("Shop".to_string(), doc.shop_name.clone()),
            ("Period".to_string(), doc.period.clone()),
            ("Written".to_string(), doc.written.clone()),
            ("Prepared by".to_string(), doc.prepared_by.clone()),
        ],
        2,
        size::BODY,
    );
    l.gap(4.0);
    l.paragraph(Face::Bold, size::BODY, DARK, 0.0, &doc.fleet_summary);
    l.gap(2.0);
    l.mark_legend(&state_legend(), size::SMALL);
    l.gap(2.0);

    let header = [
        "Unit",
        "State",
        "Figures that explain it",
        "Trend",
        "Oil life used",
        "Next work due",
    ]
    .map(Cell::bold);
    let rows: Vec<Vec<Cell>> = doc
        .fleet
        .iter()
        .map(|r| {
            vec![
                Cell::titled(r.tag.clone(), r.name.clone()),
                Cell::marked(r.state.mark, r.state.word.clone()),
                Cell::plain(r.figures.clone()),
                Cell::plain(r.trend.clone()),
                Cell::plain(r.oil_life.clone()),
                Cell::plain(r.next_due.clone()),
            ]
        })
        .collect();
    l.table(
        &[1.35, 0.8, 2.9, 1.1, 0.8, 1.6],
        &header,
        &rows,
        size::SMALL,
    );
    for note in &doc.notes {
        l.paragraph(Face::Regular, size::TINY, DARK, 0.0, note);
    }
    l.gap(6.0);

    if !doc.questioned.is_empty() {
        l.heading("Questioned readings, not confirmed", 30.0);
        l.paragraph(
            Face::Regular,
            size::TINY,
            DARK,
            0.0,
            "Kept but left out of baselines and detectors until a person or the next reading confirms them.",
        );
        for q in &doc.questioned {
            l.paragraph(Face::Regular, size::SMALL, DARK, 0.0, q);
        }
        l.gap(6.0);
    }

    l.heading("Exceptions that need a decision", 30.0);
    if doc.exceptions.is_empty() {
        l.paragraph(
            Face::Regular,
            size::BODY,
            DARK,
            0.0,
            "None: no unit has a flag in watch or act.",
        );
    } else {
        let (f, h, r) = findings_table(&doc.exceptions, true);
        l.table(&f, &h, &r, size::SMALL);
    }
    l.gap(6.0);

    l.heading(&doc.work_heading, 30.0);
    if doc.work.is_empty() {
        l.paragraph(Face::Regular, size::BODY, DARK, 0.0, "None.");
    } else {
        let (f, h, r) = work_table(&doc.work, true);
        l.table(&f, &h, &r, size::SMALL);
    }
    l.gap(6.0);

    // The supervisor signs the fleet part as a whole; each unit page has its own lines.
    l.heading("Fleet sign-off", 30.0);
    l.sign_off(&[&FLEET_SIGN_OFF], size::BODY);
}

const FLEET_SIGN_OFF: [(&str, f32); 4] = [
    ("Reviewed by", 3.2),
    ("Date", 1.5),
    ("Approved by", 3.2),
    ("Date", 1.5),
];

/// The words beside each mark in the legend.
pub fn state_legend() -> Vec<(Mark, String)> {
    vec![
        (
            Mark::Steady,
            "steady: within baseline and limits".to_string(),
        ),
        (Mark::Watch, "watch: drifting, check soon".to_string()),
        (Mark::Act, "act: needs a decision".to_string()),
        (
            Mark::None,
            "not judged yet: readings or a baseline missing".to_string(),
        ),
    ]
}

/// A table's column widths, header and rows.
pub type TableSpec = (Vec<f32>, Vec<Cell>, Vec<Vec<Cell>>);

/// Flags as a table. On the fleet page (`with_unit`) it names the unit and has a column for
/// by how much against the limit; on a unit page the sentence of what drifted carries the
/// figures, and the room goes to the text.
pub fn findings_table(findings: &[Finding], with_unit: bool) -> TableSpec {
    let (header, fractions): (Vec<&str>, Vec<f32>) = if with_unit {
        (
            vec![
                "Unit",
                "State",
                "What drifted",
                "By how much",
                "Since",
                "Usual next step",
                "Acknowledged",
            ],
            // "Since" holds a whole date (2026-11-06) on one line at the table's type size.
            vec![0.9, 0.7, 2.15, 1.1, 0.95, 2.35, 1.1],
        )
    } else {
        // A unit page: the figure that raised the flag leads its sentence, and "since" goes
        // under the state, so a unit with several flags still keeps to its page.
        (
            vec!["State, since", "What drifted", "Usual next step", "Seen"],
            vec![0.95, 4.1, 3.3, 0.7],
        )
    };
    let rows: Vec<Vec<Cell>> = findings
        .iter()
        .map(|f| {
            let seen = Cell::plain(
                f.acknowledged
                    .clone()
                    .unwrap_or_else(|| "not yet".to_string()),
            );
            if !with_unit {
                let what = if f.amount.is_empty() {
                    f.what.clone()
                } else {
                    format!("{} — {}", f.amount, f.what)
                };
                return vec![
                    Cell::marked(f.state.mark, format!("{} {}", f.state.word, f.since)),
                    Cell::plain(what),
                    Cell::plain(f.next_step.clone()),
                    seen,
                ];
            }
            vec![
                Cell::bold(f.unit_tag.clone()),
                Cell::marked(f.state.mark, f.state.word.clone()),
                Cell::plain(f.what.clone()),
                Cell::plain(f.amount.clone()),
                Cell::plain(f.since.clone()),
                Cell::plain(f.next_step.clone()),
                seen,
            ]
        })
        .collect();
    (
        fractions,
        header.into_iter().map(Cell::bold).collect(),
        rows,
    )
}

/// Due work as a table; with the unit column on the fleet page.
pub fn work_table(work: &[WorkItem], with_unit: bool) -> TableSpec {
    let mut header = vec![Cell::bold("Work"), Cell::bold("Due"), Cell::bold("Status")];
    let mut fractions = vec![2.4, 1.0, 2.6];
    if with_unit {
        header.insert(0, Cell::bold("Unit"));
        fractions.insert(0, 1.0);
    }
    let rows: Vec<Vec<Cell>> = work
        .iter()
        .map(|w| {
            let status = match w.mark {
                Some(m) => Cell::marked(m, w.status.clone()),
                None => Cell::plain(w.status.clone()),
            };
            let mut row = vec![
                Cell::plain(w.task.clone()),
                Cell::plain(w.due.clone()),
                status,
            ];
            if with_unit {
                row.insert(0, Cell::bold(w.unit_tag.clone()));
            }
            row
        })
        .collect();
    (fractions, header, rows)
}
