//! Work-due adapter: the fleet's due list (`app::work`) in its three groups, and marking work
//! done, which records the event through `app::entry`. Sample and check work is done by
//! entering the reading, so those lines lead to the Samples and Walk-round screens.

use std::rc::Rc;

use slint::ComponentHandle;

use super::ui::HealthState;
use super::ui::{WorkAdapter, WorkRow};
use super::{err_text, model, on, on_arg, s, Ctx, Screen};
use crate::app::entry;
use crate::app::entry::{Answers, MarkDoneForm, SaveOutcome};
use crate::app::vocab::WorkKind;
use crate::app::vocab::CAUTION_SHORT;
use crate::app::work::{DueBucket, DueItem};
use crate::quantity::Kind;

#[derive(Default)]
pub(crate) struct WorkState {
    items: Vec<DueItem>,
    /// The shop's fluids as the form's fluid list shows them.
    fluids: Vec<String>,
    /// The line and values last asked about; Enter again on the same values keeps them.
    pending_confirm: Option<(i32, MarkDoneForm)>,
}

pub(super) fn install(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<WorkAdapter>();
    a.set_safety(s(CAUTION_SHORT));
    a.on_choose(on_arg(ctx, |ctx, i| {
        choose(ctx, i);
    }));
    a.on_mark_done(on(ctx, |ctx| {
        mark_done(ctx);
    }));
}

fn when(d: &DueItem) -> String {
    match d.days_overdue {
        n if n > 0 => format!("{} ({n} d late)", super::fmt::day(d.due)),
        0 => format!("{} (today)", super::fmt::day(d.due)),
        n => format!("{} (in {} d)", super::fmt::day(d.due), -n),
    }
}

pub(super) fn refresh(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<WorkAdapter>();
    let list = match super::fleet::current(ctx).and_then(|f| entry::due_list_of(&ctx.shop, &f)) {
        Ok(l) => l,
        Err(e) => {
            a.set_message(s(err_text(&e)));
            a.set_message_level(2);
            return;
        }
    };
    let rows: Vec<WorkRow> = list
        .items
        .iter()
        .enumerate()
        .map(|(i, d)| WorkRow {
            id: i as i32,
            group: match d.bucket {
                DueBucket::Overdue => 0,
                DueBucket::DueSoon => 1,
                DueBucket::Later => 2,
            },
            tag: s(&d.unit),
            machine: s(&d.machine),
            what: s(&d.task),
            due: s(when(d)),
            why: s(match &d.pulled_forward {
                Some(_) => "brought forward by the unit's condition (see Mark done)".to_string(),
                None => d.basis.clone(),
            }),
            detail: s(match &d.pulled_forward {
                Some(p) => format!("{p}. Planned: {}.", d.basis),
                None => d.basis.clone(),
            }),
            state: HealthState::from(d.state.max(if d.bucket == DueBucket::Overdue {
                crate::app::vocab::State::Watch
            } else {
                d.state
            })),
            caution: d.caution.is_some(),
            action: s(match d.kind {
                WorkKind::Sample => "Enter sample…",
                WorkKind::Check => "Enter check…",
                _ => "Mark done…",
            }),
        })
        .collect();
    let group = |g: i32| model(rows.iter().filter(|r| r.group == g).cloned().collect());
    a.set_overdue(group(0));
    a.set_soon(group(1));
    a.set_later(group(2));
    let count = |b: DueBucket| list.items.iter().filter(|d| d.bucket == b).count();
    a.set_summary(s(format!(
        "{} overdue · {} due within {} days · {} later",
        count(DueBucket::Overdue),
        count(DueBucket::DueSoon),
        list.due_soon_days,
        count(DueBucket::Later)
    )));
    a.set_rows(model(rows));
    a.set_done_index(-1);
    a.set_litres_unit(s(Kind::Volume.display_unit(ctx.system.get()).symbol()));
    ctx.work.borrow_mut().items = list.items;
}

fn choose(ctx: &Rc<Ctx>, i: i32) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<WorkAdapter>();
    let item = ctx.work.borrow().items.get(i.max(0) as usize).cloned();
    let Some(item) = item else { return };
    a.set_message(s(""));
    match item.kind {
        WorkKind::Sample | WorkKind::Check => {
            // Done by entering the reading: go where it is entered, on this unit.
            let id = super::route(ctx)
                .ok()
                .and_then(|r| r.into_iter().find(|s| s.tag == item.unit))
                .map(|s| s.unit_id);
            ctx.unit_id.set(id.or(ctx.unit_id.get()));
            if item.kind == WorkKind::Sample {
                super::show(ctx, Screen::Samples);
            } else {
                super::show(ctx, Screen::Walk);
                if let Some(id) = id {
                    super::walk::go_to_unit(ctx, id);
                }
            }
        }
        _ => {
            let prompt = match entry::mark_done_prompt(&ctx.shop, &item.unit, item.kind, ctx.now())
            {
                Ok(p) => p,
                Err(e) => {
                    a.set_message(s(err_text(&e)));
                    a.set_message_level(2);
                    return;
                }
            };
            let f = &prompt.form;
            a.set_done_at(s(&f.at));
            a.set_zone_name(s(ctx.zone.get().name()));
            a.set_hours(s(""));
            a.set_hours_hint(s(&prompt.last_hours));
            a.set_litres(s(""));
            a.set_filter_part(s(""));
            a.set_work_order(s(""));
            a.set_note(s(""));
            a.set_fluids(model(prompt.fluids.iter().map(s).collect()));
            a.set_fluid_index(
                prompt
                    .fluids
                    .iter()
                    .position(|n| *n == f.fluid)
                    .map_or(-1, |p| p as i32),
            );
            a.set_safety(s(prompt.caution.as_deref().unwrap_or(CAUTION_SHORT)));
            a.set_needs_litres(prompt.takes_fluid);
            ctx.work.borrow_mut().fluids = prompt.fluids;
            // The cursor on the first field: when, then Tab through the rest.
            a.set_focus_on(s("at"));
            a.set_done_index(i);
            a.set_focus_tick(a.get_focus_tick() + 1);
        }
    }
}

fn mark_done(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<WorkAdapter>();
    let i = a.get_done_index();
    let item = ctx.work.borrow().items.get(i.max(0) as usize).cloned();
    let Some(item) = item.filter(|_| i >= 0) else {
        return;
    };
    let fluid = usize::try_from(a.get_fluid_index())
        .ok()
        .and_then(|i| ctx.work.borrow().fluids.get(i).cloned())
        .unwrap_or_default();
    let form = MarkDoneForm {
        at: a.get_done_at().to_string(),
        by: a.get_by().to_string(),
        hours: a.get_hours().to_string(),
        fluid,
        volume: a.get_litres().to_string(),
        filter_part: a.get_filter_part().to_string(),
        work_order: a.get_work_order().to_string(),
        note: a.get_note().to_string(),
    };
    // Enter again on the same values answers yes to what was asked, as on the walk-round.
    let again = ctx.work.borrow().pending_confirm.as_ref() == Some(&(i, form.clone()));
    let answers = if again { Answers::ALL } else { Answers::NONE };
    let outcome = entry::mark_done(&ctx.shop, &item.unit, item.kind, &form, answers, ctx.now());
    ctx.work.borrow_mut().pending_confirm = None;
    match outcome {
        Ok(SaveOutcome::NeedsConfirmation(p)) => {
            // Nothing was written: the question beside the cursor, in the first field asked.
            let (text, level) = super::problems_line(&p);
            a.set_message(s(text));
            a.set_message_level(level);
            if let Some(field) = p.first().map(|q| q.field.clone()) {
                a.set_focus_on(s(field));
                a.set_focus_tick(a.get_focus_tick() + 1);
            }
            ctx.work.borrow_mut().pending_confirm = Some((i, form));
        }
        Ok(SaveOutcome::Refused(p)) => {
            let (text, level) = super::problems_line(&p);
            a.set_message(s(text));
            a.set_message_level(level);
        }
        Ok(SaveOutcome::Saved(logged)) => {
            let next = logged
                .work
                .iter()
                .find(|w| w.kind == item.kind)
                .map(|w| super::fmt::day(w.due))
                .unwrap_or_default();
            a.set_note(s(""));
            a.set_litres(s(""));
            a.set_hours(s(""));
            a.set_filter_part(s(""));
            a.set_work_order(s(""));
            refresh(ctx);
            let mut text = format!("Recorded: {} on {}.", item.task, logged.unit);
            for note in crate::app::work::recorded_notes(&logged) {
                text.push(' ');
                text.push_str(&note);
            }
            if !next.is_empty() {
                text.push_str(&format!(" Next due {next}."));
            }
            a.set_message(s(text));
            a.set_message_level(0);
            super::fleet::refresh(ctx);
        }
        Err(refused) => {
            // Nothing was written and every field keeps what was typed; the cursor goes to
            // the field at fault.
            a.set_message(s(err_text(&refused.error)));
            a.set_message_level(2);
            if !refused.field.is_empty() {
                a.set_focus_on(s(refused.field));
                a.set_focus_tick(a.get_focus_tick() + 1);
            }
        }
    }
}

/// For the screenshots: the first line that is marked done here (not by entering a reading).
pub(super) fn choose_first_to_mark(ctx: &Rc<Ctx>) {
    let first = ctx
        .work
        .borrow()
        .items
        .iter()
        .position(|d| entry::event_for(d.kind).is_some());
    if let Some(i) = first {
        choose(ctx, i as i32);
    }
}
