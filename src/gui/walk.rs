//! Walk-round adapter: the route, one check form per unit (built by `app::entry`), and the
//! verdicts of saving — refused with the reason, unusual asking for Enter again, or saved with
//! the unit's new state — then on to the next unit.

use std::rc::Rc;

use chrono::{DateTime, SubsecRound, Utc};
use slint::ComponentHandle;

use super::ui::HealthState;
use super::ui::{RouteStop, WalkAdapter};
use super::{
    err_text, first_to_fix, form_rows, mark_problems, model, on, on_arg, on_arg2, problems_line,
    row_keys, s, Ctx,
};
use crate::app::entry::{self, Answers, CheckForm, Entered, SaveOutcome};

#[derive(Default)]
pub(crate) struct WalkState {
    stops: Vec<entry::RouteStop>,
    /// Per stop: "", "saved" or "skipped" this session.
    done: Vec<String>,
    form: Option<CheckForm>,
    entered: Entered,
    /// The values last judged unusual; Enter again with the same values saves them.
    pending_confirm: Option<Entered>,
    /// The time the form was filled with (as shown, and the instant it stands for): saved as
    /// that instant while the text is left as it is.
    filled_at: Option<(String, DateTime<Utc>)>,
    /// The route sheet's file as offered (a free name in the output folder): once written
    /// there, the next free name is offered.
    sheet_offered: Option<String>,
}

pub(super) fn install(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<WalkAdapter>();
    a.set_safety(s(crate::app::vocab::WALK_ROUND_CAUTION));
    a.on_field_edited(on_arg2(ctx, |ctx, i: i32, t: slint::SharedString| {
        let mut st = ctx.walk.borrow_mut();
        let key = st
            .form
            .as_ref()
            .and_then(|f| f.fields.get(i as usize))
            .map(|f| f.key.clone());
        if let Some(key) = key {
            st.entered.set(&key, t.as_str());
        }
    }));
    a.on_save(on(ctx, |ctx| {
        save(ctx);
    }));
    a.on_skip(on(ctx, |ctx| {
        mark_and_advance(ctx, "skipped");
    }));
    a.on_print_sheet(on(ctx, print_sheet));
    a.on_choose_sheet_out(on(ctx, |ctx| {
        let Some(w) = ctx.win() else { return };
        let a = w.global::<WalkAdapter>();
        if let Some(path) = super::choose_pdf(ctx, &a.get_sheet_out(), "Save the route sheet as") {
            a.set_sheet_out(s(path.display().to_string()));
        }
    }));
    a.on_select(on_arg(ctx, |ctx, i: i32| {
        go_to(ctx, i.max(0) as usize);
    }));
}

fn stop_rows(st: &WalkState, zone: crate::app::local_time::Zone) -> Vec<RouteStop> {
    st.stops
        .iter()
        .enumerate()
        .map(|(i, r)| RouteStop {
            unit_id: r.unit_id as i32,
            tag: s(&r.tag),
            machine: s(&r.machine),
            state: HealthState::from(r.state),
            done: s(st.done.get(i).cloned().unwrap_or_default()),
            last_check: s(r
                .last_check
                .map(|t| super::fmt::date(t, zone))
                .unwrap_or_default()),
        })
        .collect()
}

/// Reloads the route, keeping the cursor and this session's marks where units are unchanged.
pub(super) fn refresh(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<WalkAdapter>();
    let stops = match super::route(ctx) {
        Ok(s) => s,
        Err(e) => {
            a.set_message(s(err_text(&e)));
            a.set_message_level(2);
            return;
        }
    };
    let current = a.get_current().max(0) as usize;
    let current_id = ctx.walk.borrow().stops.get(current).map(|r| r.unit_id);
    {
        let mut st = ctx.walk.borrow_mut();
        let old: Vec<(i64, String)> = st
            .stops
            .iter()
            .map(|r| r.unit_id)
            .zip(st.done.iter().cloned())
            .collect();
        st.done = stops
            .iter()
            .map(|r| {
                old.iter()
                    .find(|(id, _)| *id == r.unit_id)
                    .map(|(_, d)| d.clone())
                    .unwrap_or_default()
            })
            .collect();
        st.stops = stops;
    }
    let index = {
        let st = ctx.walk.borrow();
        current_id
            .and_then(|id| st.stops.iter().position(|r| r.unit_id == id))
            .unwrap_or(0)
    };
    a.set_stops(model(stop_rows(&ctx.walk.borrow(), ctx.zone.get())));
    load_form(ctx, index, false);
}

fn progress_text(st: &WalkState) -> String {
    let saved = st.done.iter().filter(|d| *d == "saved").count();
    let skipped = st.done.iter().filter(|d| *d == "skipped").count();
    format!(
        "{} units · {saved} saved · {skipped} skipped",
        st.stops.len()
    )
}

/// Shows the form of stop `index`; `keep_message` leaves the last save's message up.
fn load_form(ctx: &Rc<Ctx>, index: usize, keep_message: bool) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<WalkAdapter>();
    let unit_id = ctx.walk.borrow().stops.get(index).map(|r| r.unit_id);
    a.set_current(index as i32);
    a.set_progress(s(progress_text(&ctx.walk.borrow())));
    if !keep_message {
        a.set_message(s(""));
        a.set_message_level(0);
    }
    a.set_by_problem(s(""));
    a.set_at_problem(s(""));
    let Some(unit_id) = unit_id else {
        a.set_unit_title(s("No units on the route"));
        a.set_unit_detail(s("Add units in Setup or import a unit register."));
        a.set_fields(model(Vec::new()));
        return;
    };
    match entry::check_form(&ctx.shop, unit_id, ctx.now()) {
        Ok(form) => {
            a.set_unit_title(s(&form.tag));
            a.set_unit_state(HealthState::from(form.state));
            a.set_unit_detail(s(format!("{} · {}", form.machine, form.detail)));
            fill_time(ctx, &a);
            // The cursor starts on Technician until a name is there, then on the first reading.
            let first = form
                .fields
                .first()
                .map(|f| f.key.clone())
                .unwrap_or_default();
            a.set_focus_on(s(if a.get_by().trim().is_empty() {
                "by"
            } else {
                first.as_str()
            }));
            a.set_focus_tick(a.get_focus_tick().wrapping_add(1));
            let entered = Entered::new();
            // A new model recreates the fields: empty, with the cursor where focus-on says.
            a.set_fields(model(form_rows(&form.fields, &entered, &[])));
            let mut st = ctx.walk.borrow_mut();
            st.form = Some(form);
            st.entered = entered;
            st.pending_confirm = None;
        }
        Err(e) => {
            a.set_message(s(err_text(&e)));
            a.set_message_level(2);
        }
    }
}

/// Fills the time with now in the shop's time, unless the person typed a time of their own
/// (a round typed in afterwards from the route sheet keeps it from unit to unit).
fn fill_time(ctx: &Rc<Ctx>, a: &WalkAdapter) {
    let zone = ctx.zone.get();
    a.set_zone_name(s(zone.name()));
    let shown = a.get_taken_at();
    let mut st = ctx.walk.borrow_mut();
    let typed = !shown.trim().is_empty()
        && st.filled_at.as_ref().map(|(t, _)| t.as_str()) != Some(shown.as_str());
    if typed {
        return;
    }
    let now = ctx.now().trunc_subsecs(0);
    let text = zone.show(now);
    a.set_taken_at(s(&text));
    st.filled_at = Some((text, now));
}

/// The time to save with: the instant the form was filled with while its text is unchanged (to
/// the second, and the right one of an hour the clocks repeat), else what was typed.
fn time_to_save(st: &WalkState, shown: &str) -> String {
    match &st.filled_at {
        Some((text, at)) if text == shown => at.to_rfc3339(),
        _ => shown.to_string(),
    }
}

fn go_to(ctx: &Rc<Ctx>, index: usize) {
    load_form(ctx, index, false);
}

/// Puts the walk-round cursor on a unit.
pub(super) fn go_to_unit(ctx: &Rc<Ctx>, unit_id: i64) {
    let index = ctx
        .walk
        .borrow()
        .stops
        .iter()
        .position(|r| r.unit_id == unit_id);
    if let Some(i) = index {
        go_to(ctx, i);
    }
}

fn mark_and_advance(ctx: &Rc<Ctx>, mark: &str) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<WalkAdapter>();
    let i = a.get_current().max(0) as usize;
    let n = {
        let mut st = ctx.walk.borrow_mut();
        if let Some(d) = st.done.get_mut(i) {
            *d = mark.to_string();
        }
        st.stops.len()
    };
    if mark == "skipped" {
        let tag = ctx
            .walk
            .borrow()
            .stops
            .get(i)
            .map(|r| r.tag.clone())
            .unwrap_or_default();
        a.set_message(s(format!("Skipped {tag}.")));
        a.set_message_level(0);
    }
    a.set_stops(model(stop_rows(&ctx.walk.borrow(), ctx.zone.get())));
    let next = if i + 1 < n { i + 1 } else { i };
    load_form(ctx, next, true);
    if i + 1 >= n {
        a.set_message(s(format!("{} — end of the route.", a.get_message())));
    }
}

fn save(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<WalkAdapter>();
    let (unit_id, entered, answers, taken_at) = {
        let st = ctx.walk.borrow();
        let Some(form) = st.form.as_ref() else { return };
        // Enter again on the same values answers yes to what was asked.
        let again = st.pending_confirm.as_ref() == Some(&st.entered);
        (
            form.unit_id,
            st.entered.clone(),
            if again { Answers::ALL } else { Answers::NONE },
            time_to_save(&st, &a.get_taken_at()),
        )
    };
    let outcome = entry::save_check(
        &ctx.shop,
        unit_id,
        &entered,
        &taken_at,
        &a.get_by(),
        answers,
        ctx.now(),
    );
    match outcome {
        Ok(SaveOutcome::Saved(saved)) => {
            let st = &saved.status;
            let why = st
                .health
                .flags
                .first()
                .map(|f| format!(" — {}", f.what))
                .unwrap_or_default();
            a.set_message(s(format!(
                "Saved {}: now {}{why}.",
                st.unit,
                st.state.as_str().to_uppercase()
            )));
            a.set_message_level(0);
            {
                let mut ws = ctx.walk.borrow_mut();
                let i = a.get_current().max(0) as usize;
                if let Some(r) = ws.stops.get_mut(i) {
                    r.state = st.state;
                    r.last_check = st.health.last_check;
                }
            }
            mark_and_advance(ctx, "saved");
            super::fleet::refresh(ctx);
        }
        Ok(SaveOutcome::NeedsConfirmation(p)) => {
            show_problems(&a, &p);
            ctx.walk.borrow_mut().pending_confirm = Some(entered);
        }
        Ok(SaveOutcome::Refused(p)) => {
            show_problems(&a, &p);
            ctx.walk.borrow_mut().pending_confirm = None;
        }
        Err(e) => {
            a.set_message(s(err_text(&e)));
            a.set_message_level(2);
        }
    }
}

/// Shows why a save stopped: each reason beside its field (the technician and the time too),
/// the summary below, and the cursor in the first field to put right.
fn show_problems(a: &WalkAdapter, p: &[entry::Problem]) {
    mark_problems(&a.get_fields(), p);
    let about = |key: &str| {
        p.iter()
            .filter(|x| x.field == key)
            .max_by_key(|x| x.verdict)
            .map(|x| x.message.clone())
            .unwrap_or_default()
    };
    a.set_by_problem(s(about("by")));
    a.set_at_problem(s(about("taken_at")));
    let (text, level) = problems_line(p);
    a.set_message(s(text));
    a.set_message_level(level);
    let order: Vec<String> = ["by", "taken_at"]
        .into_iter()
        .map(String::from)
        .chain(row_keys(&a.get_fields()))
        .collect();
    if let Some(key) = first_to_fix(&order, p) {
        a.set_focus_on(s(key));
        a.set_focus_tick(a.get_focus_tick().wrapping_add(1));
    }
}

/// For the screenshots: a technician's name and a refused value, as a person would see it.
pub(super) fn demo_entry(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<WalkAdapter>();
    a.set_by(s("J. Doe"));
    let hot = match ctx.system.get() {
        crate::units::UnitSystem::Metric => "320",
        crate::units::UnitSystem::Us => "600",
    };
    let fields = a.get_fields();
    for (i, text) in [hot, "22", "160"].iter().enumerate() {
        if let Some(mut r) = slint::Model::row_data(&fields, i) {
            r.text = s(*text);
            slint::Model::set_row_data(&fields, i, r);
        }
        a.invoke_field_edited(i as i32, s(*text));
    }
    a.invoke_save();
}

/// Offers a free name in the output folder for the route sheet, unless a file is typed or
/// chosen already.
pub(super) fn offer_sheet_out(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<WalkAdapter>();
    let typed = a.get_sheet_out();
    let offered = ctx.walk.borrow().sheet_offered.clone();
    if typed.trim().is_empty() || offered.as_deref() == Some(typed.as_str()) {
        let today = ctx.shop.zone().date_of(ctx.now());
        let folder = super::reports::default_folder(ctx);
        let path = crate::app::report::default_route_sheet_path(&folder, today)
            .display()
            .to_string();
        a.set_sheet_out(s(&path));
        ctx.walk.borrow_mut().sheet_offered = Some(path);
    }
}

/// Writes the route sheet to the file typed or chosen (never over a file; the name offered is
/// a free one) and opens it.
fn print_sheet(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<WalkAdapter>();
    offer_sheet_out(ctx);
    let path = std::path::PathBuf::from(a.get_sheet_out().trim());
    match crate::app::route_sheet::write_route_sheet(&ctx.shop, &path, None, false) {
        Ok(sum) => {
            // The name offered is taken now: the next sheet gets a free one.
            offer_sheet_out(ctx);
            a.set_message(s(format!(
                "Route sheet written to {} ({} units, {} page(s)).",
                sum.path.display(),
                sum.units,
                sum.pages
            )));
            a.set_message_level(0);
            let opener = ctx.report.borrow().opener.clone();
            if let Err(e) = opener(&sum.path) {
                a.set_message(s(format!(
                    "Route sheet written to {}; it could not be opened: {e}",
                    sum.path.display()
                )));
                a.set_message_level(1);
            }
        }
        Err(e) => {
            a.set_message(s(super::err_text(&e)));
            a.set_message_level(2);
        }
    }
}
