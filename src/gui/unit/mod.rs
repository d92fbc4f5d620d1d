//! Unit page adapter: identity, era and baseline, tiles, flags and their acknowledgement,
//! charts, and the history tables with corrections (who and why asked for every change).

mod chart_rows;
mod corrections;
mod flags;
mod history;
mod summary;
mod tiles;

use chart_rows::*;
use corrections::*;
use flags::*;
use history::*;
use summary::*;
use tiles::*;

pub(super) use corrections::{select_first_row, select_questioned_row};
pub use history::HistoryRows;

use std::rc::Rc;

use slint::ComponentHandle;

use super::ui::HealthState;
use super::ui::{Nav, UnitAdapter};
use super::{err_text, model, on, on_arg, on_arg2, s, strings, Ctx, Screen};
use crate::app::entry::{self, Entered, Field, Reading, UnitView};

const CHART_W: u32 = 516;
const CHART_H: u32 = 262;

#[derive(Default)]
pub(crate) struct UnitState {
    /// Unit ids in the order of the unit chooser.
    choices: Vec<i64>,
    view: Option<Rc<UnitView>>,
    /// Reading ids of the rows of the history table shown.
    row_ids: Vec<i64>,
    table: Option<Reading>,
    selected: Option<(Reading, i64)>,
    /// The selected reading's edit mark when its form was filled (`entry::reading_mark`): a
    /// save is refused, naming who and when, if someone else corrected it since.
    selected_mark: Option<i64>,
    fields: Vec<Field>,
    entered: Entered,
}

pub(super) fn install(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<UnitAdapter>();
    a.on_choose_unit(on_arg(ctx, |ctx, i| {
        let id = ctx.unit.borrow().choices.get(i as usize).copied();
        if let Some(id) = id {
            open(ctx, id);
        }
    }));
    a.on_acknowledge(on(ctx, |ctx| {
        acknowledge(ctx);
    }));
    a.on_choose_table(on_arg(ctx, |ctx, i| {
        fill_table(ctx, table_of(i));
    }));
    a.on_select_row(on_arg(ctx, |ctx, r| {
        select_row(ctx, r);
    }));
    a.on_edit_field(on_arg2(ctx, |ctx, i: i32, t: slint::SharedString| {
        let mut st = ctx.unit.borrow_mut();
        if let Some(key) = st.fields.get(i as usize).map(|f| f.key.clone()) {
            st.entered.set(&key, t.as_str());
        }
    }));
    a.on_save_edit(on(ctx, |ctx| {
        save_edit(ctx);
    }));
    a.on_delete_row(on(ctx, |ctx| {
        delete_row(ctx);
    }));
    a.on_confirm_row(on(ctx, |ctx| {
        confirm_row(ctx, true);
    }));
    a.on_lift_row(on(ctx, |ctx| {
        confirm_row(ctx, false);
    }));
    a.on_restore_deleted(on(ctx, |ctx| {
        restore_deleted(ctx);
    }));
}

fn table_of(i: i32) -> Reading {
    match i {
        1 => Reading::Sample,
        2 => Reading::Event,
        _ => Reading::Check,
    }
}

/// Opens the page of a unit and shows it.
pub(crate) fn open(ctx: &Rc<Ctx>, unit_id: i64) {
    ctx.unit_id.set(Some(unit_id));
    if let Some(w) = ctx.win() {
        let a = w.global::<UnitAdapter>();
        a.set_ack_index(-1);
        a.set_ack_message(s(""));
        a.set_edit_message(s(""));
    }
    ctx.unit.borrow_mut().selected = None;
    refresh(ctx);
    if let Some(w) = ctx.win() {
        w.global::<Nav>().set_screen(Screen::Unit);
    }
}

pub(super) fn refresh(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<UnitAdapter>();
    let sys = ctx.system.get();
    // The chooser: every unit in route order.
    let stops = super::route(ctx).unwrap_or_default();
    if ctx.unit_id.get().is_none() {
        ctx.unit_id.set(super::fleet::first_unit(ctx));
    }
    let Some(unit_id) = ctx.unit_id.get() else {
        a.set_tag(s("No unit"));
        a.set_title(s(
            "This shop has no units yet: add them in Setup or import a unit register.",
        ));
        return;
    };
    a.set_unit_choices(strings(
        stops.iter().map(|r| format!("{} — {}", r.tag, r.machine)),
    ));
    a.set_unit_index(
        stops
            .iter()
            .position(|r| r.unit_id == unit_id)
            .map(|i| i as i32)
            .unwrap_or(-1),
    );
    let view = match entry::unit_view(&ctx.shop, unit_id, ctx.now()) {
        Ok(v) => v,
        Err(e) => {
            a.set_ack_message(s(err_text(&e)));
            a.set_ack_level(2);
            return;
        }
    };
    let st = &view.status;
    a.set_tag(s(&st.unit));
    a.set_title(s(format!(
        "{} {} · {}",
        st.machine, st.machine_name, st.machine_kind
    )));
    a.set_state(HealthState::from(st.state));
    a.set_identity(model(identity(&view, sys)));
    a.set_era(model(era(&view, sys)));
    a.set_tile_rows(model(tile_rows(&crate::app::view::unit_tiles(
        st, sys, view.zone,
    ))));
    a.set_flags(model(flags(&view)));
    a.set_waiting(strings(
        st.health
            .not_judged
            .iter()
            .filter(|n| n.expected)
            .map(|n| format!("{}: {} — judged {}.", n.label, n.missing, n.until)),
    ));
    a.set_questioned(strings(
        st.health
            .suspects
            .iter()
            .filter(|q| q.confirmed.is_none())
            .map(|q| {
                format!(
                    "{} {}: {}",
                    record_word(q.record),
                    entry::show_time(q.at, view.zone),
                    q.reason
                )
            }),
    ));
    a.set_edits(strings(
        view.edits.edits.iter().map(|e| e.lines().join("\n")),
    ));
    let deleted: Vec<String> = view
        .edits
        .edits
        .iter()
        .filter(|e| e.restorable)
        .map(|e| format!("{}, deleted {} by {}", e.record_text, e.at_shown, e.by))
        .collect();
    if a.get_deleted_index() as usize >= deleted.len() {
        a.set_deleted_index(0);
    }
    a.set_deleted_choices(strings(deleted));
    a.set_time_note(format!("Times in {}.", view.zone.name()).into());
    let (rows, hint) = chart_rows(&view, sys);
    a.set_chart_rows(model(rows));
    a.set_chart_hint(s(hint));
    {
        let mut u = ctx.unit.borrow_mut();
        u.choices = stops.iter().map(|r| r.unit_id).collect();
        u.view = Some(Rc::new(view));
    }
    let table = ctx.unit.borrow().table.unwrap_or(Reading::Check);
    fill_table(ctx, table);
}
