//! One unit's part of the report: identity, fluid, era and baseline; the period's work done
//! with what was recorded with it; the indicator table;
//! the vector charts; flags with their acknowledgements; the period's corrections of its
//! readings; work due; sign-off lines.
//! The charts take the room the page has left, within limits, so that a usual unit fits on
//! one page of either paper size; a long name or many flags continue on further pages.
//! Draws what the application layer put in the [`UnitSection`]; decides nothing.

use super::charts;
use super::fleet_page::{findings_table, work_table, TableSpec};
use super::layout::{size, Cell, Face, Layout, DARK};
use super::{Correction, UnitSection, WorkDone};

/// Chart heights in points: what they shrink to before the page is let to run over, and
/// what they grow to at most.
const CHART_MIN_H: f32 = 60.0;
const CHART_MAX_H: f32 = 124.0;
/// Chart height when the page has to continue anyway.
const CHART_SPILL_H: f32 = 110.0;
const CHART_GAP: f32 = 10.0;
/// Points kept free so rounding in the estimate never pushes the sign-off over the page.
const FIT_SLACK: f32 = 6.0;
const CHART_ROW_GAP: f32 = 4.0;

const SIGN_OFF: [(&str, f32); 4] = [
    ("Checked by", 3.4),
    ("Date", 1.6),
    ("Reviewed by", 3.4),
    ("Date", 1.6),
];
const SIGN_OFF_STACKED: [&[(&str, f32)]; 2] = [
    &[("Checked by", 3.0), ("Date", 1.6)],
    &[("Reviewed by", 3.0), ("Date", 1.6)],
];
const NO_FLAGS: &str = "None.";
const NO_WORK: &str = "Nothing due.";

pub fn draw(l: &mut Layout, u: &UnitSection) {
    let title = if u.name.is_empty() {
        u.tag.clone()
    } else {
        format!("{} · {}", u.tag, u.name)
    };
    l.start_section(&title);
    l.marked_paragraph(
        u.state.mark,
        &format!("State: {}.", u.state.word),
        &u.summary,
        size::BODY,
    );
    for r in &u.remarks {
        l.paragraph(Face::Regular, size::SMALL, DARK, 0.0, r);
    }
    l.gap(3.0);

    let mut facts = u.identity.clone();
    facts.extend(u.fluid.iter().cloned());
    l.key_values(&facts, 3, size::SMALL);
    if !u.baseline.is_empty() {
        l.key_values(
            &[("Baseline".to_string(), u.baseline.clone())],
            1,
            size::SMALL,
        );
    }
    if !u.work_done.is_empty() {
        l.key_values(
            &[("Work done".to_string(), work_done_text(&u.work_done))],
            1,
            size::SMALL,
        );
    }
    l.gap(4.0);

    l.heading("Indicators", 28.0);
    let header = [
        "Indicator",
        "State",
        "Latest",
        "Baseline",
        "Limits (watch / act)",
        "Change",
    ]
    .map(Cell::bold);
    let rows: Vec<Vec<Cell>> = u
        .indicators
        .iter()
        .map(|r| {
            vec![
                Cell::plain(r.name.clone()),
                Cell::marked(r.state.mark, r.state.word.clone()),
                Cell::plain(r.latest.clone()),
                Cell::plain(r.baseline.clone()),
                Cell::plain(r.limits.clone()),
                Cell::plain(r.change.clone()),
            ]
        })
        .collect();
    if rows.is_empty() {
        l.paragraph(
            Face::Regular,
            size::BODY,
            DARK,
            0.0,
            "No indicators: no checks or samples yet.",
        );
    } else {
        l.table(
            &[2.4, 0.75, 1.5, 1.25, 1.35, 1.2],
            &header,
            &rows,
            size::SMALL,
        );
    }
    l.gap(5.0);

    let flags = (!u.flags.is_empty()).then(|| findings_table(&u.flags, false));
    let work = (!u.work.is_empty()).then(|| work_table(&u.work, false));
    let corrections = (!u.corrections.is_empty()).then(|| corrections_table(&u.corrections));

    if !u.charts.is_empty() {
        let heading = "Over the period";
        let chart_rows = u.charts.len().div_ceil(2);
        // What must follow the charts on this page, so the charts can take the rest.
        let after = l.heading_height(heading)
            + 3.0
            + rest_height(l, flags.as_ref(), corrections.as_ref(), work.as_ref());
        let room = (l.remaining() - after - FIT_SLACK) / chart_rows as f32 - CHART_ROW_GAP;
        // When the rest will not fit on this page anyway, the charts keep a readable size.
        let chart_h = if room < CHART_MIN_H {
            CHART_SPILL_H
        } else {
            room.min(CHART_MAX_H)
        };
        l.heading(heading, chart_h);
        let w = (l.content_w() - CHART_GAP) / 2.0;
        for pair in u.charts.chunks(2) {
            l.ensure(chart_h);
            let top = l.y;
            let (fonts, left) = (l.fonts, l.left());
            for (i, chart) in pair.iter().enumerate() {
                let x = left + i as f32 * (w + CHART_GAP);
                charts::draw(l.page(), fonts, chart, x, top, w, chart_h);
            }
            l.y = top + chart_h + CHART_ROW_GAP;
        }
        l.gap(3.0);
    }

    l.heading("Flags", 24.0);
    match &flags {
        Some((f, h, r)) => l.table(f, h, r, size::SMALL),
        None => l.paragraph(Face::Regular, size::BODY, DARK, 0.0, NO_FLAGS),
    }
    l.gap(5.0);

    if let Some((f, h, r)) = &corrections {
        l.heading(CORRECTIONS, 24.0);
        l.table(f, h, r, size::SMALL);
        l.gap(5.0);
    }

    tail(l, work.as_ref());
}

const CORRECTIONS: &str = "Corrections in the period";

/// The period's work done on the unit, oldest first, in one run of text (a page has no room
/// for another table): when, what, what was recorded with it, the note, who.
fn work_done_text(done: &[WorkDone]) -> String {
    done.iter()
        .map(|d| {
            let said = [d.recorded.as_str(), d.note.as_str()]
                .into_iter()
                .filter(|t| !t.is_empty())
                .collect::<Vec<_>>()
                .join(" · ");
            let by = if d.by.is_empty() {
                String::new()
            } else {
                format!(" ({})", d.by)
            };
            if said.is_empty() {
                format!("{} {}{by}", d.when, d.what)
            } else {
                format!("{} {}: {said}{by}", d.when, d.what)
            }
        })
        .collect::<Vec<_>>()
        .join("; ")
}

/// The period's corrections of the unit's readings: when, which reading, each field old → new,
/// who and why.
fn corrections_table(corrections: &[Correction]) -> TableSpec {
    let header = ["When", "Reading", "Old → new", "By", "Why"].map(Cell::bold);
    let rows = corrections
        .iter()
        .map(|c| {
            vec![
                Cell::plain(c.when.clone()),
                Cell::plain(c.record.clone()),
                Cell::plain(c.changes.clone()),
                Cell::plain(c.by.clone()),
                Cell::plain(c.why.clone()),
            ]
        })
        .collect();
    (vec![1.2, 1.7, 3.3, 0.9, 1.9], header.to_vec(), rows)
}

/// Work due and the sign-off lines: side by side when they fit the page together, else one
/// after the other (and then free to continue on the next page).
fn tail(l: &mut Layout, work: Option<&TableSpec>) {
    let (work_w, sign_x, sign_w) = tail_columns(l);
    if tail_side_by_side_height(l, work) <= l.remaining() {
        let top = l.y;
        l.set_column(Some((0.0, work_w)));
        work_block(l, work);
        let work_end = l.y;
        l.y = top;
        l.set_column(Some((sign_x, sign_w)));
        l.heading("Sign-off", 0.0);
        l.sign_off(&SIGN_OFF_STACKED, size::BODY);
        l.set_column(None);
        l.y = l.y.max(work_end);
        return;
    }
    work_block(l, work);
    l.gap(6.0);
    l.sign_off(&[&SIGN_OFF], size::BODY);
}

fn work_block(l: &mut Layout, work: Option<&TableSpec>) {
    l.heading("Work due", 24.0);
    match work {
        Some((f, h, r)) => l.table(f, h, r, size::SMALL),
        None => l.paragraph(Face::Regular, size::BODY, DARK, 0.0, NO_WORK),
    }
}

/// Widths of the work column, and offset and width of the sign-off column.
fn tail_columns(l: &Layout) -> (f32, f32, f32) {
    let full = l.full_w();
    let work_w = full * 0.58;
    let gap = 14.0;
    (work_w, work_w + gap, full - work_w - gap)
}

fn tail_side_by_side_height(l: &mut Layout, work: Option<&TableSpec>) -> f32 {
    let (work_w, sign_x, sign_w) = tail_columns(l);
    l.set_column(Some((0.0, work_w)));
    let w = l.heading_height("Work due")
        + match work {
            Some((f, h, r)) => l.table_height(f, h, r, size::SMALL),
            None => l.paragraph_height(Face::Regular, size::BODY, 0.0, NO_WORK),
        };
    l.set_column(Some((sign_x, sign_w)));
    let s = l.heading_height("Sign-off") + l.sign_off_height(SIGN_OFF_STACKED.len(), size::BODY);
    l.set_column(None);
    w.max(s)
}

/// Height of everything after the charts: flags, the period's corrections, then work due
/// beside the sign-off lines.
fn rest_height(
    l: &mut Layout,
    flags: Option<&TableSpec>,
    corrections: Option<&TableSpec>,
    work: Option<&TableSpec>,
) -> f32 {
    let flags_h = match flags {
        Some((f, h, r)) => l.table_height(f, h, r, size::SMALL),
        None => l.paragraph_height(Face::Regular, size::BODY, 0.0, NO_FLAGS),
    };
    let corrections_h = match corrections {
        Some((f, h, r)) => {
            l.heading_height(CORRECTIONS) + l.table_height(f, h, r, size::SMALL) + 5.0
        }
        None => 0.0,
    };
    l.heading_height("Flags") + flags_h + 5.0 + corrections_h + tail_side_by_side_height(l, work)
}
