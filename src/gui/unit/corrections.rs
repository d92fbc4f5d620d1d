//! Unit page corrections: selecting a stored reading, showing why it is questioned, confirming,
//! editing or deleting it (who and why asked for every change). The rules are `app::entry`'s
//! and `app::confirm`'s.

use super::*;
use std::collections::HashMap;
use std::rc::Rc;

use slint::{ComponentHandle, Model};

use crate::app::confirm::{self, ConfirmAction, ReadingKind};
use crate::app::entry::{self, Entered, Reading, SaveOutcome, UnitView};
use crate::app::status;
use crate::app::vocab::Record;
use crate::app::vocab::SuspectReading;
use crate::gui::ui::UnitAdapter;
use crate::gui::{err_text, form_rows, mark_problems, model, problems_line, s, Ctx};

pub(super) fn select_row(ctx: &Rc<Ctx>, row: i32) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<UnitAdapter>();
    let (which, id) = {
        let st = ctx.unit.borrow();
        let Some(which) = st.table else { return };
        let Some(&id) = st.row_ids.get(row.max(0) as usize).filter(|_| row >= 0) else {
            return;
        };
        (which, id)
    };
    match entry::reading_fields(&ctx.shop, which, id) {
        Ok(fields) => {
            let entered = Entered::from_fields(&fields);
            a.set_edit_fields(model(form_rows(&fields, &entered, &[])));
            let when = a
                .get_rows()
                .row_data(row as usize)
                .and_then(|r| r.row_data(0))
                .map(|c| c.text.to_string())
                .unwrap_or_default();
            a.set_edit_title(s(format!(
                "Correct the {} of {when}",
                match which {
                    Reading::Check => "check",
                    Reading::Sample => "sample",
                    Reading::Event => "event",
                }
            )));
            a.set_edit_message(s(""));
            show_suspicion(ctx, &a, which, id);
            let mark = entry::reading_mark(&ctx.shop, which, id).ok();
            let mut st = ctx.unit.borrow_mut();
            st.selected = Some((which, id));
            st.selected_mark = mark;
            st.fields = fields;
            st.entered = entered;
        }
        Err(e) => {
            a.set_edit_message(s(err_text(&e)));
            a.set_edit_level(2);
        }
    }
}

pub(super) fn record_word(r: Record) -> &'static str {
    match r {
        Record::Check => "Check of",
        Record::Sample => "Sample of",
    }
}

/// The "Questioned" cell of each questioned reading of a kind, by reading id: the field(s)
/// and whether they are left out or were confirmed, and by whom.
pub(super) fn suspect_marks(v: &UnitView, record: Record) -> HashMap<i64, String> {
    let mut out: HashMap<i64, String> = HashMap::new();
    for q in v
        .status
        .health
        .suspects
        .iter()
        .filter(|q| q.record == record)
    {
        let text = match &q.confirmed {
            None => format!("? {} — left out", q.field.label()),
            Some(c) => format!(
                "✓ {} — confirmed ({})",
                q.field.label(),
                status::confirmed_by_text(c).0
            ),
        };
        out.entry(q.id)
            .and_modify(|t| {
                t.push_str("; ");
                t.push_str(&text);
            })
            .or_insert(text);
    }
    out
}

/// The chosen reading's questions, and whether it can be confirmed or its confirmation lifted.
fn show_suspicion(ctx: &Rc<Ctx>, a: &UnitAdapter, which: Reading, id: i64) {
    let st = ctx.unit.borrow();
    let Some(v) = st.view.as_ref() else { return };
    let record = match which {
        Reading::Check => Record::Check,
        Reading::Sample => Record::Sample,
        Reading::Event => {
            a.set_suspect_text(s(""));
            a.set_can_confirm(false);
            a.set_can_lift(false);
            return;
        }
    };
    let qs: Vec<&SuspectReading> = v
        .status
        .health
        .suspects
        .iter()
        .filter(|q| q.record == record && q.id == id)
        .collect();
    let person = match which {
        Reading::Check => v
            .history
            .checks
            .iter()
            .find(|c| c.id == id)
            .and_then(|c| c.confirmed.clone()),
        _ => v
            .history
            .samples
            .iter()
            .find(|c| c.id == id)
            .and_then(|c| c.confirmed.clone()),
    };
    let mut lines: Vec<String> = qs
        .iter()
        .map(|q| {
            let state = match &q.confirmed {
                None => "not confirmed: left out of baselines and detectors".to_string(),
                Some(c) => {
                    let (by, at) = status::confirmed_by_text(c);
                    format!(
                        "confirmed by {by} on {}",
                        crate::gui::fmt::date(at, ctx.zone.get())
                    )
                }
            };
            format!("Questioned — {} ({state})", q.reason)
        })
        .collect();
    if let Some(k) = &person {
        if qs.is_empty() {
            lines.push(format!(
                "Confirmed by {} on {}.",
                k.by,
                crate::gui::fmt::date(k.at, ctx.zone.get())
            ));
        }
    }
    a.set_suspect_text(s(lines.join("\n")));
    a.set_can_confirm(person.is_none() && qs.iter().any(|q| q.confirmed.is_none()));
    a.set_can_lift(person.is_some());
}

/// Confirms the chosen reading (`confirm`) or lifts its confirmation, by the name in "Changed
/// by" and with the reason.
pub(super) fn confirm_row(ctx: &Rc<Ctx>, confirm: bool) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<UnitAdapter>();
    let sel = ctx.unit.borrow().selected;
    let Some((which, id)) = sel else { return };
    let found = {
        let st = ctx.unit.borrow();
        st.view.as_ref().and_then(|v| {
            let at = match which {
                Reading::Check => v
                    .history
                    .checks
                    .iter()
                    .find(|c| c.id == id)
                    .map(|c| c.taken_at),
                Reading::Sample => v
                    .history
                    .samples
                    .iter()
                    .find(|c| c.id == id)
                    .map(|c| c.sampled_at),
                Reading::Event => None,
            }?;
            Some((v.status.unit.clone(), at))
        })
    };
    let Some((tag, at)) = found else { return };
    let kind = if which == Reading::Sample {
        ReadingKind::Sample
    } else {
        ReadingKind::Check
    };
    let by = a.get_edit_by().to_string();
    let why = a.get_edit_reason().to_string();
    let r = if confirm {
        confirm::confirm_reading(&ctx.shop, &tag, kind, at, &by, &why, ctx.now())
    } else {
        confirm::lift_confirmation(&ctx.shop, &tag, kind, at, &by, &why, ctx.now())
    };
    match r {
        Ok(done) => {
            a.set_edit_message(s(match done.action {
                ConfirmAction::Confirmed => format!(
                    "Confirmed by {}: the reading counts in baselines and flags.",
                    by.trim()
                ),
                ConfirmAction::Lifted => {
                    "Confirmation lifted; kept in the edit history.".to_string()
                }
            }));
            a.set_edit_level(0);
            a.set_edit_reason(s(""));
            refresh(ctx);
            crate::gui::fleet::refresh(ctx);
            show_suspicion(ctx, &a, which, id);
        }
        Err(e) => {
            a.set_edit_message(s(err_text(&e)));
            a.set_edit_level(2);
        }
    }
}

pub(super) fn save_edit(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<UnitAdapter>();
    let (sel, mark, entered) = {
        let st = ctx.unit.borrow();
        (st.selected, st.selected_mark, st.entered.clone())
    };
    let Some((which, id)) = sel else { return };
    let (by, reason) = (a.get_edit_by(), a.get_edit_reason());
    let saved = match mark {
        Some(seen) => entry::edit_reading_seen(&ctx.shop, which, id, seen, &entered, &by, &reason),
        None => entry::edit_reading(&ctx.shop, which, id, &entered, &by, &reason),
    };
    match saved {
        Ok(SaveOutcome::Saved(())) => {
            // Our own change is the row's latest edit now: a further save builds on it.
            ctx.unit.borrow_mut().selected_mark = entry::reading_mark(&ctx.shop, which, id).ok();
            a.set_edit_message(s("Changed; the old value is kept in the edit history."));
            a.set_edit_level(0);
            a.set_edit_reason(s(""));
            refresh(ctx);
            crate::gui::fleet::refresh(ctx);
        }
        Ok(SaveOutcome::Refused(p)) | Ok(SaveOutcome::NeedsConfirmation(p)) => {
            mark_problems(&a.get_edit_fields(), &p);
            let (text, level) = problems_line(&p);
            a.set_edit_message(s(text));
            a.set_edit_level(level);
        }
        Err(e) => {
            a.set_edit_message(s(err_text(&e)));
            a.set_edit_level(2);
        }
    }
}

pub(super) fn delete_row(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<UnitAdapter>();
    let sel = ctx.unit.borrow().selected;
    let Some((which, id)) = sel else { return };
    match entry::delete_reading(&ctx.shop, which, id, &a.get_edit_by(), &a.get_edit_reason()) {
        Ok(()) => {
            a.set_edit_message(s("Deleted; the reading is kept in the edit history."));
            a.set_edit_level(0);
            a.set_edit_reason(s(""));
            ctx.unit.borrow_mut().selected = None;
            refresh(ctx);
            crate::gui::fleet::refresh(ctx);
        }
        Err(e) => {
            a.set_edit_message(s(err_text(&e)));
            a.set_edit_level(2);
        }
    }
}

/// Puts back the deleted reading chosen on the Edits tab, asking who and why as a deletion does.
pub(super) fn restore_deleted(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<UnitAdapter>();
    let chosen = {
        let st = ctx.unit.borrow();
        st.view.as_ref().and_then(|v| {
            v.edits
                .edits
                .iter()
                .filter(|e| e.restorable)
                .nth(a.get_deleted_index().max(0) as usize)
                .map(|e| (v.edits.unit.clone(), e.edit_id))
        })
    };
    let Some((tag, edit_id)) = chosen else { return };
    let done = crate::app::edit_trail::restore_reading(
        &ctx.shop,
        &tag,
        edit_id,
        &a.get_edit_by(),
        &a.get_edit_reason(),
    );
    match done {
        Ok(e) => {
            a.set_edit_message(s(format!(
                "Put back the {}; the restore is kept in the edit history.",
                e.record_text
            )));
            a.set_edit_level(0);
            a.set_edit_reason(s(""));
            refresh(ctx);
            crate::gui::fleet::refresh(ctx);
        }
        Err(e) => {
            a.set_edit_message(s(err_text(&e)));
            a.set_edit_level(2);
        }
    }
}

/// For the screenshots: the newest check chosen for correction.
pub(in crate::gui) fn select_first_row(ctx: &Rc<Ctx>) {
    if let Some(w) = ctx.win() {
        w.global::<UnitAdapter>().set_current_row(0);
    }
    select_row(ctx, 0);
}

/// For the screenshots: the newest questioned check of the unit shown chosen, with its
/// reason and the Confirm action (the newest check when none is questioned).
pub(in crate::gui) fn select_questioned_row(ctx: &Rc<Ctx>) {
    let row = {
        let st = ctx.unit.borrow();
        st.view.as_ref().and_then(|v| {
            let q = v
                .status
                .health
                .suspects
                .iter()
                .rev()
                .find(|q| q.record == Record::Check && q.confirmed.is_none())?;
            st.row_ids.iter().position(|id| *id == q.id)
        })
    };
    let row = row.unwrap_or(0) as i32;
    if let Some(w) = ctx.win() {
        w.global::<UnitAdapter>().set_current_row(row);
    }
    select_row(ctx, row);
}
