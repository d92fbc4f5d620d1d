//! Unit work: what the unit page and the work list need — the unit's evaluated view, the due
//! list, the shop's change stamp, acknowledging a flag and marking work done. It must not know
//! slint or SQL.

use super::*;

use chrono::{DateTime, Utc};

use crate::app::shop::Shop;
use crate::app::status::{store_error, unit_read_in, UnitStatus};
use crate::app::work::{self as work, EventInput, LoggedEvent};
use crate::app::AppError;
use crate::health::{FlagKind, WorkKind};
use crate::model::{EventDetails, EventKind, Fluid, Id, UnitHistory};
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
    /// What was recorded beside the unit's events (hour meter, filter part, work order), by
    /// event id; events with nothing beside them are not listed.
    pub event_details: Vec<(Id, EventDetails)>,
}

impl UnitView {
    /// What was recorded beside event `id`, if anything.
    pub fn details_of(&self, id: Id) -> Option<&EventDetails> {
        self.event_details
            .iter()
            .find(|(e, _)| *e == id)
            .map(|(_, d)| d)
    }
}

pub fn unit_view(shop: &Shop, unit_id: Id, now: DateTime<Utc>) -> Result<UnitView, AppError> {
    let store = shop.store();
    // The unit's records are read once: the history tables show them and the evaluation is
    // made from the same read.
    let read = unit_read_in(store, unit_id, Some(now))?;
    let edits = crate::app::edit_trail::unit_edits_in(store, &read.history.unit.tag)?;
    let event_details = store.event_details_of_unit(unit_id).map_err(store_error)?;
    Ok(UnitView {
        event_details,
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

/// What the "Mark done" form holds, as typed: every field is text, read in the shop's units
/// and time zone when the work is recorded.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct MarkDoneForm {
    /// When it was done, in the shop's time; blank is now.
    pub at: String,
    pub by: String,
    /// The hour meter, in hours.
    pub hours: String,
    /// The fluid put in, by name (a fluid change); blank is the unit's fluid in service.
    pub fluid: String,
    /// The fluid put in: a bare number in the shop's unit, or with its unit.
    pub volume: String,
    pub filter_part: String,
    pub work_order: String,
    pub note: String,
}

/// The "Mark done" form as it opens on a piece of work: the time now in the shop's zone, the
/// unit's fluid in service, the fluids to choose from, what the hour meter last read, and the
/// caution for work that opens the circuit.
#[derive(Clone, Debug, PartialEq)]
pub struct MarkDonePrompt {
    pub form: MarkDoneForm,
    /// The shop's fluids by name, for the fluid put in.
    pub fluids: Vec<String>,
    /// Whether the work puts fluid in (the fluid and volume fields).
    pub takes_fluid: bool,
    /// What the hour meter last read and when (`10121 h on 2024-11-18 07:31 CST`), or `""`.
    pub last_hours: String,
    /// The safety caution shown beside the form where the work opens the circuit.
    pub caution: Option<String>,
}

/// The form to mark `kind` done on unit `tag` at `now`.
pub fn mark_done_prompt(
    shop: &Shop,
    tag: &str,
    kind: WorkKind,
    now: DateTime<Utc>,
) -> Result<MarkDonePrompt, AppError> {
    let store = shop.store();
    let zone = crate::app::shop::zone_of(store);
    let unit = store
        .unit_by_tag(tag)
        .map_err(store_error)?
        .ok_or_else(|| AppError::BadInput(format!("no unit `{}` in this shop", tag.trim())))?;
    let fluids = store.fluids().map_err(store_error)?;
    let in_service = unit
        .fluid_id
        .and_then(|id| fluids.iter().find(|f| f.id == id))
        .map(|f| f.name.clone())
        .unwrap_or_default();
    let takes_fluid = kind == WorkKind::FluidChange;
    let last_hours = store
        .hour_meter_around(unit.id, now, None)
        .map_err(store_error)?
        .before
        .map(|(h, at)| format!("{h} h on {}", zone.show_marked(at)))
        .unwrap_or_default();
    Ok(MarkDonePrompt {
        form: MarkDoneForm {
            at: zone.show(now),
            fluid: if takes_fluid {
                in_service
            } else {
                String::new()
            },
            ..MarkDoneForm::default()
        },
        fluids: fluids.into_iter().map(|f| f.name).collect(),
        takes_fluid,
        last_hours,
        caution: matches!(kind, WorkKind::FluidChange | WorkKind::FilterChange).then(|| {
            format!(
                "{} {}",
                crate::app::vocab::CAUTION_SHORT,
                crate::app::vocab::WHO_DECIDES
            )
        }),
    })
}

/// A refusal of the "Mark done" form: the field to put the cursor in (`at`, `by`, `hours`,
/// `volume`, `filter_part`, `work_order`; `""` when no one field is at fault) and why. Nothing
/// was written.
#[derive(Debug)]
pub struct MarkDoneRefused {
    pub field: &'static str,
    pub error: AppError,
}

impl std::fmt::Display for MarkDoneRefused {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        self.error.fmt(f)
    }
}

/// Marks planned work on a unit done by recording its event with what the form holds: when
/// (the shop's time, blank now), the hour meter, the fluid and volume put in (a fluid change),
/// the filter part and the work order. Nothing is written unless every field reads; an hour
/// meter out of step with the unit's other readings (a replaced meter) waits for `answers`, as
/// an unusual reading of the walk-round does.
pub fn mark_done(
    shop: &Shop,
    tag: &str,
    kind: WorkKind,
    form: &MarkDoneForm,
    answers: Answers,
    now: DateTime<Utc>,
) -> Result<SaveOutcome<LoggedEvent>, MarkDoneRefused> {
    let on = |field: &'static str| move |error: AppError| MarkDoneRefused { field, error };
    let bad = |field: &'static str| {
        move |e: String| MarkDoneRefused {
            field,
            error: AppError::BadInput(e),
        }
    };
    let by = need("Done by", &form.by).map_err(on("by"))?;
    let store = shop.store();
    let system = settings(store).map_err(on(""))?.unit_system;
    let zone = crate::app::shop::zone_of(store);
    let Some(event) = event_for(kind) else {
        return Err(bad("")(format!(
            "a {} is done by entering it, not by marking it",
            kind.label()
        )));
    };
    let at = read_when(&form.at, now, zone)
        .map_err(|e| format!("Done on: {e}"))
        .map_err(bad("at"))?;
    let hours = read_number(form.hours.trim().trim_end_matches('h'))
        .map_err(|e| format!("Hour meter: {e}"))
        .map_err(bad("hours"))?;
    let takes_fluid = kind == WorkKind::FluidChange;
    let (volume, fluid) = if takes_fluid {
        let volume = read_quantity(&form.volume, Kind::Volume, system)
            .map_err(|e| format!("Fluid put in: {e}"))
            .map_err(bad("volume"))?
            .map(Volume);
        if volume.is_some_and(|v| v.si().is_nan() || v.si() <= 0.0) {
            return Err(bad("volume")("Fluid put in: must be more than zero".into()));
        }
        let fluid = Some(form.fluid.trim().to_string()).filter(|f| !f.is_empty());
        (volume, fluid)
    } else {
        (None, None)
    };
    let checked = work::check_details_in(
        store,
        tag,
        at,
        &EventDetails {
            hours,
            filter_part: form.filter_part.clone(),
            work_order: form.work_order.clone(),
        },
        None,
    )
    .map_err(|r| MarkDoneRefused {
        field: r.field,
        error: r.error,
    })?;
    if !answers.settle(&checked.questions) {
        return Ok(SaveOutcome::NeedsConfirmation(checked.questions));
    }
    let input = EventInput {
        kind: event,
        at: Some(at),
        volume,
        fluid,
        by,
        note: form.note.trim().to_string(),
        details: checked.details,
        confirmed: answers.keep_unusual,
    };
    work::log_event_in(store, tag, &input, now)
        .map(SaveOutcome::Saved)
        .map_err(on(""))
}
