//! Unit work: what the unit page and the work list need — the unit's evaluated view, the due
//! list, the shop's change stamp, acknowledging a flag and marking work done. It must not know
//! slint or SQL.

use super::*;

use chrono::{DateTime, Utc};

use crate::app::shop::Shop;
use crate::app::status::{unit_read_in, UnitStatus};
use crate::app::work::{self as work, EventInput, LoggedEvent};
use crate::app::AppError;
use crate::health::{FlagKind, WorkKind};
use crate::model::{EventKind, Fluid, Id, UnitHistory};
use crate::quantity::Kind;
use crate::units::{UnitSystem, Volume};

/// Everything a unit page shows: the evaluation and the stored records.
#[derive(Clone, Debug, PartialEq)]
pub struct UnitView {
    pub status: UnitStatus,
    pub history: UnitHistory,
    pub fluids: Vec<Fluid>,
    pub system: UnitSystem,
    /// The shop's time zone, which the page shows times in.
    pub zone: crate::app::local_time::Zone,
    /// Every correction and deletion of the unit's records.
    pub edits: crate::app::edit_trail::UnitEdits,
}

pub fn unit_view(shop: &Shop, unit_id: Id, now: DateTime<Utc>) -> Result<UnitView, AppError> {
    let store = shop.store();
    // The unit's records are read once: the history tables show them and the evaluation is
    // made from the same read.
    let read = unit_read_in(store, unit_id, Some(now))?;
    let edits = crate::app::edit_trail::unit_edits_in(store, &read.history.unit.tag)?;
    Ok(UnitView {
        status: read.status,
        history: read.history,
        fluids: read.fluids,
        system: read.settings.unit_system,
        zone: crate::app::local_time::Zone::of_setting(&read.settings.time_zone),
        edits,
    })
}

/// The fleet's due list now: overdue, due soon, later.
pub fn due_list(shop: &Shop) -> Result<work::DueList, AppError> {
    work::due_list_in(shop.store(), None, None)
}

/// The due list of a fleet status the caller has evaluated already.
pub fn due_list_of(
    shop: &Shop,
    fleet: &crate::app::status::FleetStatus,
) -> Result<work::DueList, AppError> {
    work::due_list_from(shop.store(), fleet, None)
}

/// Whether the shop's data may have changed since `stamp` was taken (by this program or any
/// other); `None` before the first stamp. Lets the app keep one evaluation per change.
pub fn shop_stamp(shop: &Shop) -> Result<(i64, u64), AppError> {
    shop.store()
        .change_stamp()
        .map_err(crate::app::status::store_error)
}

/// The "changed" signal for a window that shows the shop: whether anyone (this program, another
/// window, another PC) may have saved since `last` was taken, updating `last`. On a server the
/// server announces each save, so a poll while nothing changed reads no table; on a file the
/// stamp is read each time. The first call (`last` is `None`) says true.
pub fn shop_changed(shop: &Shop, last: &mut Option<(i64, u64)>) -> Result<bool, AppError> {
    let announced = shop
        .store()
        .changes_announced()
        .map_err(crate::app::status::store_error)?;
    if announced == Some(false) && last.is_some() {
        return Ok(false);
    }
    let now = shop_stamp(shop)?;
    let changed = *last != Some(now);
    *last = Some(now);
    Ok(changed)
}

/// Acknowledges the `kind` flag of a unit.
pub fn acknowledge(
    shop: &Shop,
    unit_id: Id,
    kind: &str,
    by: &str,
    note: &str,
    now: DateTime<Utc>,
) -> Result<work::AckResult, AppError> {
    let by = need("Acknowledged by", by)?;
    let kind: FlagKind = kind.parse().map_err(AppError::BadInput)?;
    let store = shop.store();
    let unit = unit_of(store, unit_id)?;
    work::ack_in(store, &unit.tag, kind, &by, note, now)
}

/// The event that marking a piece of work done records; `None` where the work is done by
/// entering a reading (a sample, a check).
pub fn event_for(kind: WorkKind) -> Option<EventKind> {
    match kind {
        WorkKind::FluidChange => Some(EventKind::FluidChange),
        WorkKind::FilterChange => Some(EventKind::FilterChange),
        WorkKind::Sample | WorkKind::Check => None,
    }
}

/// Marks planned work on a unit done by recording its event; `volume` is the fluid put in
/// (blank allowed; a bare number in the shop's unit).
pub fn mark_done(
    shop: &Shop,
    tag: &str,
    kind: WorkKind,
    by: &str,
    note: &str,
    volume: &str,
    now: DateTime<Utc>,
) -> Result<LoggedEvent, AppError> {
    let by = need("Done by", by)?;
    let store = shop.store();
    let system = settings(store)?.unit_system;
    let Some(event) = event_for(kind) else {
        return Err(AppError::BadInput(format!(
            "a {} is done by entering it, not by marking it",
            kind.label()
        )));
    };
    let volume = read_quantity(volume, Kind::Volume, system)
        .map_err(AppError::BadInput)?
        .map(Volume);
    let input = EventInput {
        kind: event,
        at: None,
        volume,
        fluid: None,
        by,
        note: note.trim().to_string(),
    };
    work::log_event_in(store, tag, &input, now)
}
