//! Fleet board adapter: the fleet status (worst first, as `app::status` orders it) as rows,
//! with the state filter and the tag search applied to what is shown.

use std::rc::Rc;

use slint::ComponentHandle;

use super::ui::HealthState;
use super::ui::{FleetAdapter, FleetRow, Nav};
use super::{model, on, on_arg, s, unit, Ctx};
use crate::app::entry;
use crate::app::status::{self, FleetStatus, UnitStatus};
use crate::app::view;
use crate::app::vocab::State;
use crate::app::AppError;
use crate::units::UnitSystem;

pub(super) fn install(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<FleetAdapter>();
    a.on_filter_changed(on(ctx, |ctx| {
        refresh(ctx);
    }));
    a.on_open_unit(on_arg(ctx, |ctx, id| {
        unit::open(ctx, i64::from(id));
    }));
}

fn row(u: &UnitStatus, sys: UnitSystem, zone: crate::app::local_time::Zone) -> FleetRow {
    let l = view::fleet_line(u, sys);
    FleetRow {
        unit_id: l.unit_id as i32,
        tag: s(&l.tag),
        machine: s(format!("{} {}", l.machine, l.machine_name)),
        state: HealthState::from(l.state),
        ack: if l.all_seen { s("seen") } else { s("") },
        figures: s(l.board),
        last_check: s(u
            .health
            .last_check
            .map(|t| super::fmt::date(t, zone))
            .unwrap_or_else(|| "never".into())),
        overdue: l.next_due.as_ref().is_some_and(|d| d.overdue),
        next_due: s(l.next_due.map(|d| d.text).unwrap_or_else(|| "—".into())),
    }
}

fn matches(u: &UnitStatus, state_filter: i32, search: &str) -> bool {
    let state_ok = match state_filter {
        1 => u.state == State::Act,
        2 => u.state == State::Watch,
        3 => u.state == State::Steady,
        4 => u.state == State::NotJudged,
        _ => true,
    };
    let q = search.trim().to_lowercase();
    state_ok
        && (q.is_empty()
            || u.unit.to_lowercase().contains(&q)
            || u.machine.to_lowercase().contains(&q)
            || u.machine_name.to_lowercase().contains(&q))
}

/// How long an evaluation is reused while nothing is written: due dates and overdue days move
/// with the clock, so the board is evaluated again at least this often.
const REUSE_SECONDS: i64 = 60;

/// The fleet status now, evaluated once per change of the shop's data (or per minute), so the
/// screens refreshed together after a change share one evaluation.
pub(super) fn current(ctx: &Rc<Ctx>) -> Result<Rc<FleetStatus>, AppError> {
    let stamp = entry::shop_stamp(&ctx.shop)?;
    let now = ctx.now();
    if let Some((at, st, f)) = ctx.fleet.borrow().as_ref() {
        if *st == stamp && (now - *at).num_seconds() < REUSE_SECONDS {
            return Ok(f.clone());
        }
    }
    let fleet = Rc::new(status::fleet_status(&ctx.shop, Some(now))?);
    *ctx.fleet.borrow_mut() = Some((fleet.at, stamp, fleet.clone()));
    Ok(fleet)
}

/// Takes a fleet status evaluated elsewhere (the start-up worker) as the current one.
/// `stamp` is the shop's change stamp from before that evaluation began.
pub(super) fn adopt(ctx: &Rc<Ctx>, stamp: (i64, u64), fleet: FleetStatus) {
    *ctx.fleet.borrow_mut() = Some((fleet.at, stamp, Rc::new(fleet)));
}

pub(super) fn refresh(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<FleetAdapter>();
    match current(ctx) {
        Ok(fleet) => {
            let sys = ctx.system.get();
            let filter = a.get_state_filter();
            let search = a.get_search().to_string();
            let rows: Vec<FleetRow> = fleet
                .units
                .iter()
                .filter(|u| matches(u, filter, &search))
                .map(|u| row(u, sys, ctx.zone.get()))
                .collect();
            let c = fleet.counts;
            a.set_summary(s(format!(
                "{} · as of {}",
                view::counts_line(fleet.units.len(), &c),
                ctx.zone.get().show_marked(fleet.at)
            )));
            a.set_rows(model(rows));
            a.set_shop_empty(fleet.units.is_empty());
            a.set_message(s(""));
            let nav = w.global::<Nav>();
            nav.set_act_count(c.act as i32);
            nav.set_watch_count(c.watch as i32);
            let late = fleet
                .units
                .iter()
                .flat_map(|u| u.health.work.iter())
                .filter(|w| w.days_overdue > 0)
                .count();
            nav.set_overdue_count(late as i32);
        }
        Err(e) => a.set_message(s(super::err_text(&e))),
    }
}

/// The worst unit (first on the board), for opening a unit page with no unit chosen.
pub(super) fn first_unit(ctx: &Rc<Ctx>) -> Option<i64> {
    current(ctx).ok()?.units.first().map(|u| u.unit_id)
}
