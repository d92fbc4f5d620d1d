//! Setup adapter: shop settings (the metric/US switch refreshes every screen), machines,
//! units and fluids (forms from `app::entry`), and limits (shop defaults and per-unit).

use std::rc::Rc;

use slint::ComponentHandle;

use super::ui::{LimitRow, SetupAdapter};
use super::{
    err_text, form_rows, mark_problems, model, on, on_arg, on_arg2, on_arg3, problems_line, s,
    strings, Ctx, Screen,
};
use crate::app::entry::{self, Entered, Field, LimitEdit, Record, SaveOutcome};
use crate::app::vocab::LimitOrigin;
use crate::app::work::LimitRow as AppLimitRow;
use crate::model::Settings;
use crate::units::UnitSystem;

#[derive(Default)]
pub(crate) struct SetupState {
    /// Ids of the records listed (machines, units or fluids, by tab).
    ids: Vec<i64>,
    /// The record in the form (`None`: a new one).
    editing: Option<i64>,
    fields: Vec<Field>,
    entered: Entered,
    /// Unit tags of the limit scopes after "Shop defaults".
    scopes: Vec<String>,
    limits: Vec<AppLimitRow>,
    limit_edits: Vec<LimitEdit>,
}

fn record_of(tab: i32) -> Option<Record> {
    match tab {
        1 => Some(Record::Machine),
        2 => Some(Record::Unit),
        3 => Some(Record::Fluid),
        _ => None,
    }
}

pub(super) fn install(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<SetupAdapter>();
    a.on_tab_changed(on_arg(ctx, |ctx, _| {
        if let Some(w) = ctx.win() {
            w.global::<SetupAdapter>().set_message(s(""));
        }
        refresh(ctx);
    }));
    a.on_save_shop(on(ctx, |ctx| {
        save_shop(ctx);
    }));
    a.on_filter_zones(on_arg(ctx, |ctx, text: slint::SharedString| {
        if let Some(w) = ctx.win() {
            show_zones(&w.global::<SetupAdapter>(), &text);
        }
    }));
    a.on_choose_zone(on_arg(ctx, |ctx, i: i32| {
        if let Some(w) = ctx.win() {
            let a = w.global::<SetupAdapter>();
            let chosen = usize::try_from(i)
                .ok()
                .and_then(|i| slint::Model::row_data(&a.get_zone_choices(), i));
            if let Some(name) = chosen {
                a.set_time_zone(name);
            }
        }
    }));
    a.on_choose_record(on_arg(ctx, |ctx, i| {
        let id = ctx.setup.borrow().ids.get(i as usize).copied();
        load_record(ctx, id);
        if let Some(w) = ctx.win() {
            w.global::<SetupAdapter>().set_record_index(i);
        }
    }));
    a.on_new_record(on(ctx, |ctx| {
        load_record(ctx, None);
    }));
    a.on_field_edited(on_arg2(ctx, |ctx, i: i32, t: slint::SharedString| {
        let mut st = ctx.setup.borrow_mut();
        if let Some(key) = st.fields.get(i as usize).map(|f| f.key.clone()) {
            st.entered.set(&key, t.as_str());
        }
    }));
    a.on_save_record(on(ctx, |ctx| {
        save_record(ctx);
    }));
    a.on_choose_scope(on_arg(ctx, |ctx, _| {
        load_limits(ctx);
    }));
    a.on_limit_edited(on_arg3(
        ctx,
        |ctx, i: i32, which: i32, t: slint::SharedString| {
            let mut st = ctx.setup.borrow_mut();
            if let Some(e) = st.limit_edits.get_mut(i as usize) {
                if which == 0 {
                    e.watch = t.to_string();
                } else {
                    e.act = t.to_string();
                }
            }
        },
    ));
    a.on_save_limits(on(ctx, |ctx| {
        save_limits(ctx);
    }));
}

/// Shows setup on one tab (0 shop, 1 machines, 2 units, 3 fluids, 4 limits).
pub(super) fn show_tab(ctx: &Rc<Ctx>, tab: i32) {
    if let Some(w) = ctx.win() {
        w.global::<SetupAdapter>().set_tab(tab);
    }
    super::show(ctx, Screen::Setup);
}

pub(super) fn refresh(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<SetupAdapter>();
    match entry::shop_settings(&ctx.shop) {
        Ok(st) => {
            a.set_shop_name(s(&st.shop_name));
            a.set_unit_system(match st.unit_system {
                UnitSystem::Metric => 0,
                UnitSystem::Us => 1,
            });
            a.set_time_zone(s(&st.time_zone));
            a.set_electricity_price(s(st
                .electricity_price
                .map(|p| p.to_string())
                .unwrap_or_default()));
            show_zones(&a, &a.get_zone_filter());
        }
        Err(e) => {
            a.set_message(s(err_text(&e)));
            a.set_message_level(2);
        }
    }
    let tab = a.get_tab();
    if let Some(kind) = record_of(tab) {
        load_list(ctx, kind);
        let editing = ctx.setup.borrow().editing;
        let still_there = editing.is_some_and(|id| ctx.setup.borrow().ids.contains(&id));
        load_record(
            ctx,
            if still_there {
                editing
            } else {
                ctx.setup.borrow().ids.first().copied()
            },
        );
    }
    if tab == 4 {
        load_limits(ctx);
    }
}

fn load_list(ctx: &Rc<Ctx>, kind: Record) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<SetupAdapter>();
    match entry::records(&ctx.shop, kind) {
        Ok(list) => {
            a.set_records(strings(list.iter().map(|(_, t)| t.clone())));
            a.set_new_label(s(match kind {
                Record::Machine => "New machine",
                Record::Unit => "New hydraulic unit",
                Record::Fluid => "New fluid",
            }));
            ctx.setup.borrow_mut().ids = list.into_iter().map(|(id, _)| id).collect();
        }
        Err(e) => {
            a.set_message(s(err_text(&e)));
            a.set_message_level(2);
        }
    }
}

fn load_record(ctx: &Rc<Ctx>, id: Option<i64>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<SetupAdapter>();
    let Some(kind) = record_of(a.get_tab()) else {
        return;
    };
    match entry::record_fields(&ctx.shop, kind, id) {
        Ok(fields) => {
            let entered = Entered::from_fields(&fields);
            a.set_fields(model(form_rows(&fields, &entered, &[])));
            let name = match kind {
                Record::Machine => "machine",
                Record::Unit => "hydraulic unit",
                Record::Fluid => "fluid",
            };
            let title = match id {
                Some(_) => format!(
                    "Edit {name} {}",
                    fields
                        .iter()
                        .find(|f| f.key == "tag" || f.key == "name")
                        .map(|f| f.value.as_str())
                        .unwrap_or("")
                ),
                None => format!("New {name}"),
            };
            a.set_record_title(s(title));
            let index = id
                .and_then(|id| ctx.setup.borrow().ids.iter().position(|x| *x == id))
                .map(|i| i as i32)
                .unwrap_or(-1);
            a.set_record_index(index);
            let mut st = ctx.setup.borrow_mut();
            st.editing = id;
            st.fields = fields;
            st.entered = entered;
        }
        Err(e) => {
            a.set_message(s(err_text(&e)));
            a.set_message_level(2);
        }
    }
}

/// Fills the time-zone chooser with the zone names that hold every word of `filter` (`new
/// york` finds America/New_York), the zone in force selected when it is among them.
fn show_zones(a: &SetupAdapter, filter: &str) {
    let names = entry::zone_choices(filter);
    let current = a.get_time_zone();
    let index = names
        .iter()
        .position(|n| *n == current.as_str())
        .map_or(-1, |i| i as i32);
    a.set_zone_choices(strings(names.iter().map(|n| n.to_string())));
    a.set_zone_index(index);
}

fn save_shop(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<SetupAdapter>();
    let new = Settings {
        shop_name: a.get_shop_name().trim().to_string(),
        unit_system: if a.get_unit_system() == 1 {
            UnitSystem::Us
        } else {
            UnitSystem::Metric
        },
        time_zone: a.get_time_zone().trim().to_string(),
        electricity_price: match entry::read_price(&a.get_electricity_price()) {
            Ok(p) => p,
            Err(e) => {
                a.set_message(s(format!("Electricity price: {e}")));
                a.set_message_level(2);
                return;
            }
        },
    };
    match entry::save_settings(&ctx.shop, &new, &a.get_by(), &a.get_reason()) {
        Ok(()) => {
            a.set_reason(s(""));
            super::refresh_all(ctx);
            a.set_message(s(format!(
                "Saved. Figures are now shown in {} units.",
                match new.unit_system {
                    UnitSystem::Metric => "metric",
                    UnitSystem::Us => "US customary",
                }
            )));
            a.set_message_level(0);
        }
        Err(e) => {
            a.set_message(s(err_text(&e)));
            a.set_message_level(2);
        }
    }
}

fn save_record(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<SetupAdapter>();
    let Some(kind) = record_of(a.get_tab()) else {
        return;
    };
    let (id, entered, unchanged) = {
        let st = ctx.setup.borrow();
        let unchanged = st.editing.is_some() && st.entered == Entered::from_fields(&st.fields);
        (st.editing, st.entered.clone(), unchanged)
    };
    // A stored record saved as it stands changes nothing: no reason is asked, nothing written.
    if unchanged {
        a.set_message(s("Nothing changed; there is nothing to save."));
        a.set_message_level(0);
        return;
    }
    match entry::save_record(&ctx.shop, kind, id, &entered, &a.get_by(), &a.get_reason()) {
        Ok(SaveOutcome::Saved(new_id)) => {
            a.set_reason(s(""));
            load_list(ctx, kind);
            load_record(ctx, Some(new_id));
            a.set_message(s(if id.is_some() {
                "Saved; the old values are kept in the edit history."
            } else {
                "Added."
            }));
            a.set_message_level(0);
            super::fleet::refresh(ctx);
        }
        Ok(SaveOutcome::Refused(p)) | Ok(SaveOutcome::NeedsConfirmation(p)) => {
            mark_problems(&a.get_fields(), &p);
            let (text, level) = problems_line(&p);
            a.set_message(s(text));
            a.set_message_level(level);
            // The cursor to the first refused field, its reason beside it.
            if let Some(key) = super::first_to_fix(&super::row_keys(&a.get_fields()), &p) {
                a.set_focus_key(s(key));
                a.set_focus_tick(a.get_focus_tick().wrapping_add(1));
            }
        }
        Err(e) => {
            a.set_message(s(err_text(&e)));
            a.set_message_level(2);
        }
    }
}

fn origin(o: LimitOrigin) -> &'static str {
    match o {
        LimitOrigin::Builtin => "built-in",
        LimitOrigin::Shop => "shop",
        LimitOrigin::Unit => "this unit",
    }
}

fn load_limits(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<SetupAdapter>();
    let tags: Vec<String> = super::route(ctx)
        .unwrap_or_default()
        .into_iter()
        .map(|r| r.tag)
        .collect();
    let mut names = vec!["Shop defaults".to_string()];
    names.extend(tags.iter().map(|t| format!("Unit {t}")));
    a.set_limit_scopes(strings(names));
    let scope_i = a.get_limit_scope().max(0) as usize;
    let unit = scope_i.checked_sub(1).and_then(|i| tags.get(i)).cloned();
    match entry::limits(&ctx.shop, unit.as_deref()) {
        Ok(view) => {
            let rows: Vec<LimitRow> = view
                .rows
                .iter()
                .map(|r| {
                    let f = |v: Option<f64>| v.map(|x| format!("{x}")).unwrap_or_default();
                    let threshold = r.shape == "threshold";
                    let src = if threshold {
                        format!(
                            "watch: {}, act: {}",
                            origin(r.watch_origin),
                            origin(r.act_origin)
                        )
                    } else {
                        origin(r.act_origin).to_string()
                    };
                    LimitRow {
                        key: s(&r.key),
                        label: s(format!(
                            "{}{}",
                            r.description,
                            r.compare
                                .as_ref()
                                .map(|c| format!(" ({c})"))
                                .unwrap_or_default()
                        )),
                        unit: s(&r.unit_words),
                        watch: s(if threshold { f(r.watch) } else { String::new() }),
                        act: s(f(r.act)),
                        source: s(src),
                    }
                })
                .collect();
            a.set_limits(model(rows));
            let mut st = ctx.setup.borrow_mut();
            st.limit_edits = view
                .rows
                .iter()
                .map(|r| LimitEdit {
                    key: r.key.clone(),
                    watch: if r.shape == "threshold" {
                        r.watch.map(|x| format!("{x}")).unwrap_or_default()
                    } else {
                        String::new()
                    },
                    act: r.act.map(|x| format!("{x}")).unwrap_or_default(),
                })
                .collect();
            st.limits = view.rows;
            st.scopes = tags;
        }
        Err(e) => {
            a.set_message(s(err_text(&e)));
            a.set_message_level(2);
        }
    }
}

fn save_limits(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<SetupAdapter>();
    let scope_i = a.get_limit_scope().max(0) as usize;
    let (unit, changed) = {
        let st = ctx.setup.borrow();
        let unit = scope_i
            .checked_sub(1)
            .and_then(|i| st.scopes.get(i))
            .cloned();
        let fmt = |v: Option<f64>| v.map(|x| format!("{x}")).unwrap_or_default();
        let changed: Vec<LimitEdit> = st
            .limit_edits
            .iter()
            .zip(st.limits.iter())
            .filter(|(e, r)| {
                let w0 = if r.shape == "threshold" {
                    fmt(r.watch)
                } else {
                    String::new()
                };
                e.watch.trim() != w0 || e.act.trim() != fmt(r.act)
            })
            .map(|(e, _)| e.clone())
            .collect();
        (unit, changed)
    };
    if changed.is_empty() {
        a.set_message(s("Nothing changed."));
        a.set_message_level(0);
        return;
    }
    match entry::save_limits(&ctx.shop, unit.as_deref(), &changed, &a.get_by()) {
        Ok(SaveOutcome::Saved(n)) => {
            load_limits(ctx);
            a.set_message(s(format!("{n} limit(s) saved.")));
            a.set_message_level(0);
            super::fleet::refresh(ctx);
        }
        Ok(SaveOutcome::Refused(p)) | Ok(SaveOutcome::NeedsConfirmation(p)) => {
            let (text, level) = problems_line(&p);
            a.set_message(s(text));
            a.set_message_level(level);
        }
        Err(e) => {
            a.set_message(s(err_text(&e)));
            a.set_message_level(2);
        }
    }
}
