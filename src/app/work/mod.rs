//! Work and flags as people act on them: the due list across the fleet, acknowledging a flag,
//! recording work done (an event), and reading and setting limits.
//!
//! Every figure comes from the one evaluation path (`status`); this module only selects,
//! orders and records. Nothing here prints or parses a command line.
//!
//! Limits are in `limits`, a baseline entered by hand in `baseline`.

use chrono::{DateTime, Duration, NaiveDate, SubsecRound, Utc};
use serde::{Deserialize, Serialize};

use super::status::{fleet_status_in, store_error, unit_status_in, Detail, FleetStatus};
use super::AppError;
use crate::health::limits::{LimitKey, Limits};
use crate::health::plan::SAFETY_CAUTIONS;
use crate::health::{Flag, FlagKind, State, WorkItem, WorkKind};
use crate::model::{Acknowledgement, Event, EventDetails, EventKind, Unit};
use crate::store::events::OwnReading;
use crate::store::{Store, StoreError};
use crate::units::Volume;

mod baseline;
mod hour_meter;
mod limits;

pub use baseline::{set_baseline, set_baseline_in, BaselineEntered};
pub(crate) use hour_meter::hour_meter_questions;
pub use limits::{limits, read_limit, reset_limit, set_limit, set_limit_in, LimitRow, LimitsView};
pub(crate) use limits::{limits_in, reset_limit_in, LimitScale};

/// Where a piece of work stands.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum DueBucket {
    Overdue,
    /// Due today or within the shop's `due_soon_days`.
    DueSoon,
    Later,
}

impl DueBucket {
    pub fn as_str(self) -> &'static str {
        match self {
            DueBucket::Overdue => "overdue",
            DueBucket::DueSoon => "due soon",
            DueBucket::Later => "later",
        }
    }
}

/// One line of the due list.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct DueItem {
    pub unit: String,
    pub machine: String,
    /// The unit's state, for context.
    pub unit_state: State,
    pub kind: WorkKind,
    pub task: String,
    pub due: NaiveDate,
    pub bucket: DueBucket,
    /// Days past the due date (negative: days still to go).
    pub days_overdue: i64,
    /// `watch` or `act` for overdue work (the `overdue` flag), else `steady`.
    pub state: State,
    pub basis: String,
    pub pulled_forward: Option<String>,
    /// The short safety caution where the work opens the circuit or takes oil out.
    pub caution: Option<String>,
}

/// Work across the fleet: overdue first (most overdue first), then by due date.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct DueList {
    pub at: DateTime<Utc>,
    /// Only work due within this many days (overdue included); `None`: all planned work.
    pub within_days: Option<i64>,
    pub due_soon_days: i64,
    pub items: Vec<DueItem>,
    /// The safety cautions in full, when any listed work prompts fluid, filter or sample work.
    pub cautions: Vec<String>,
}

fn bucket(w: &WorkItem, soon: i64) -> DueBucket {
    if w.state > State::Steady {
        DueBucket::Overdue
    } else if w.days_overdue >= -soon {
        DueBucket::DueSoon
    } else {
        DueBucket::Later
    }
}

/// The due list at `at` (now when `None`), limited to work due within `within_days` if given.
pub fn due_list_in(
    store: &Store,
    at: Option<DateTime<Utc>>,
    within_days: Option<i64>,
) -> Result<DueList, AppError> {
    if within_days.is_some_and(|d| d < 0) {
        return Err(AppError::BadInput(
            "--within must be zero or more days".into(),
        ));
    }
    let fleet = fleet_status_in(store, at, Detail::Summary)?;
    due_list_from(store, &fleet, within_days)
}

/// The due list of a fleet status already evaluated (the app evaluates once per refresh).
pub fn due_list_from(
    store: &Store,
    fleet: &FleetStatus,
    within_days: Option<i64>,
) -> Result<DueList, AppError> {
    let shop_limits = Limits::resolve(&store.limits().map_err(store_error)?, None);
    let soon = shop_limits.value(LimitKey::DueSoonDays).round() as i64;
    let mut items: Vec<(i64, DueItem)> = Vec::new();
    for u in &fleet.units {
        for w in &u.health.work {
            if within_days.is_some_and(|d| w.days_overdue < -d) {
                continue;
            }
            items.push((
                u.route_order,
                DueItem {
                    unit: u.unit.clone(),
                    machine: u.machine.clone(),
                    unit_state: u.state,
                    kind: w.kind,
                    task: w.kind.label().to_string(),
                    due: w.due,
                    bucket: bucket(w, soon),
                    days_overdue: w.days_overdue,
                    state: w.state,
                    basis: w.basis.clone(),
                    pulled_forward: w.pulled_forward.clone(),
                    caution: w.caution.clone(),
                },
            ));
        }
    }
    items.sort_by(|(ra, a), (rb, b)| {
        a.bucket
            .cmp(&b.bucket)
            .then(if a.bucket == DueBucket::Overdue {
                b.days_overdue.cmp(&a.days_overdue)
            } else {
                a.due.cmp(&b.due)
            })
            .then(ra.cmp(rb))
            .then(a.unit.cmp(&b.unit))
            .then(a.kind.cmp(&b.kind))
    });
    let items: Vec<DueItem> = items.into_iter().map(|(_, i)| i).collect();
    let cautions = if items.iter().any(|i| i.caution.is_some()) {
        SAFETY_CAUTIONS.iter().map(|s| s.to_string()).collect()
    } else {
        Vec::new()
    };
    Ok(DueList {
        at: fleet.at,
        within_days,
        due_soon_days: soon,
        items,
        cautions,
    })
}

/// What an acknowledgement recorded.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct AckResult {
    pub unit: String,
    /// The flag as it now stands, marked acknowledged.
    pub flag: Flag,
}

fn need_name(what: &str, by: &str) -> Result<String, AppError> {
    let by = by.trim();
    if by.is_empty() {
        return Err(AppError::BadInput(format!(
            "{what}: give who with --by NAME"
        )));
    }
    Ok(by.to_string())
}

/// Records that `by` has seen the `kind` flag of unit `tag` as it stands at `now`; it stays
/// marked acknowledged until its state changes.
pub fn ack_in(
    store: &Store,
    tag: &str,
    kind: FlagKind,
    by: &str,
    note: &str,
    now: DateTime<Utc>,
) -> Result<AckResult, AppError> {
    let by = need_name("an acknowledgement", by)?;
    let now = now.trunc_subsecs(0);
    let status = unit_status_in(store, tag, Some(now))?;
    let Some(flag) = status.health.flags.iter().find(|f| f.kind == kind) else {
        let raised: Vec<&str> = status
            .health
            .flags
            .iter()
            .map(|f| f.kind.as_str())
            .collect();
        return Err(AppError::BadInput(if raised.is_empty() {
            format!("unit {} has no flags to acknowledge", status.unit)
        } else {
            format!(
                "unit {} has no `{kind}` flag; its flags are: {}",
                status.unit,
                raised.join(", ")
            )
        }));
    };
    store
        .insert_ack(&Acknowledgement {
            id: 0,
            unit_id: status.unit_id,
            kind: kind.as_str().to_string(),
            state: flag.state.as_str().to_string(),
            by,
            note: note.trim().to_string(),
            at: now,
        })
        .map_err(store_error)?;
    let after = unit_status_in(store, tag, Some(now))?;
    let flag = after
        .health
        .flags
        .into_iter()
        .find(|f| f.kind == kind)
        .ok_or_else(|| {
            AppError::Failed(format!(
                "the `{kind}` flag of {} vanished while it was acknowledged",
                after.unit
            ))
        })?;
    Ok(AckResult {
        unit: after.unit,
        flag,
    })
}

/// Work done, as recorded.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct LoggedEvent {
    pub unit: String,
    pub event: Event,
    /// The fluid put in, by name.
    pub fluid: Option<String>,
    /// The hour meter, filter part and work order recorded with it.
    pub details: EventDetails,
    /// Whether the unit register's fluid in service was changed to it.
    pub fluid_in_service_changed: bool,
    /// The questions the person confirmed, as `field: question`.
    pub confirmed: Vec<String>,
    /// The unit's planned work after the event.
    pub work: Vec<WorkItem>,
}

/// What `log_event_in` is asked to record.
#[derive(Clone, Debug, PartialEq)]
pub struct EventInput {
    pub kind: EventKind,
    /// When it was done; now when `None`.
    pub at: Option<DateTime<Utc>>,
    pub volume: Option<Volume>,
    /// Fluid name (fluid change, top-up); the unit's fluid in service when `None`.
    pub fluid: Option<String>,
    pub by: String,
    pub note: String,
    /// The hour meter when it was done, the filter part fitted and the work order.
    pub details: EventDetails,
    /// Keep values asked about (an hour meter below the reading before it: a replaced meter);
    /// without it they are listed and nothing is written.
    pub confirmed: bool,
}

/// What was recorded beside an event, in words (`hour meter 10250 h · filter part RF-10 ·
/// work order WO-4471`), `""` when nothing was.
pub fn details_words(d: &EventDetails) -> String {
    let mut parts = Vec::new();
    if let Some(h) = d.hours {
        parts.push(format!("hour meter {h} h"));
    }
    if !d.filter_part.is_empty() {
        parts.push(format!("filter part {}", d.filter_part));
    }
    if !d.work_order.is_empty() {
        parts.push(format!("work order {}", d.work_order));
    }
    parts.join(" · ")
}

/// What a record of work done settled beside the work itself, a sentence each: every question
/// the person answered yes to (kept as confirmed) and a change of the unit's fluid in service.
/// A form shows them after its "Recorded" line, as the command line prints them below its own.
pub fn recorded_notes(r: &LoggedEvent) -> Vec<String> {
    let mut out: Vec<String> = r
        .confirmed
        .iter()
        .map(|c| format!("Kept as confirmed: {}.", c.trim_end_matches('.')))
        .collect();
    if r.fluid_in_service_changed {
        if let Some(f) = &r.fluid {
            out.push(format!("The unit's fluid in service is now {f}."));
        }
    }
    out
}

/// The longest filter part number or work-order reference taken: either is a reference, not a
/// note (the note takes the words).
const MAX_REFERENCE_CHARS: usize = 60;

/// A refusal of what was recorded beside an event, with the field it concerns (`hours`,
/// `filter_part` or `work_order`), so that a form can put the cursor there.
#[derive(Debug)]
pub struct DetailRefused {
    pub field: &'static str,
    pub error: AppError,
}

/// The details of work on unit `tag` at `at` as they would be stored, with the questions they
/// raise; see [`checked_details`]. `except`: the event whose details these are, when it is
/// stored already (a correction).
pub(crate) fn check_details_in(
    store: &Store,
    tag: &str,
    at: DateTime<Utc>,
    d: &EventDetails,
    except: Option<crate::model::Id>,
) -> Result<CheckedDetails, DetailRefused> {
    let unit = store
        .unit_by_tag(tag)
        .map_err(store_error)
        .and_then(|u| {
            u.ok_or_else(|| AppError::BadInput(format!("no unit `{}` in this shop", tag.trim())))
        })
        .map_err(|error| DetailRefused { field: "", error })?;
    checked_details(
        store,
        &unit,
        at,
        d,
        except,
        crate::app::shop::zone_of(store),
    )
}

/// What was recorded beside an event as it would be stored, and what it asks before it is.
#[derive(Clone, Debug, PartialEq)]
pub struct CheckedDetails {
    pub details: EventDetails,
    /// Unusual values to confirm (an hour meter out of step with the unit's other readings).
    pub questions: Vec<crate::app::entry::Problem>,
}

/// The details as they are stored: references trimmed and of a sane length, and an hour meter
/// of a possible number of hours; one out of step with the unit's readings before and after
/// `at` is asked about ([`hour_meter_questions`], the walk-round's rule), not refused.
fn checked_details(
    store: &Store,
    unit: &Unit,
    at: DateTime<Utc>,
    d: &EventDetails,
    except: Option<crate::model::Id>,
    zone: super::local_time::Zone,
) -> Result<CheckedDetails, DetailRefused> {
    let refused = |field: &'static str, message: String| DetailRefused {
        field,
        error: AppError::BadInput(message),
    };
    let reference =
        |field: &'static str, what: &str, text: &str| -> Result<String, DetailRefused> {
            let t = text.trim();
            if t.chars().count() > MAX_REFERENCE_CHARS {
                return Err(refused(
                    field,
                    format!(
                        "{what} is {} characters long; give the reference alone (at most \
                 {MAX_REFERENCE_CHARS}) and put any words in the note",
                        t.chars().count()
                    ),
                ));
            }
            if t.chars().any(char::is_control) {
                return Err(refused(
                    field,
                    format!("{what} holds a line break or another control character"),
                ));
            }
            Ok(t.to_string())
        };
    let filter_part = reference("filter_part", "the filter part", &d.filter_part)?;
    let work_order = reference("work_order", "the work order", &d.work_order)?;
    let mut questions = Vec::new();
    if let Some(h) = d.hours {
        let b = crate::bounds::HOURS;
        if !h.is_finite() || h < b.lo || h > b.hi {
            return Err(refused(
                "hours",
                format!(
                    "the hour meter must be a number of hours from {} to {}",
                    b.lo, b.hi
                ),
            ));
        }
        let around = store
            .hour_meter_around(unit.id, at, except.map(OwnReading::Event))
            .map_err(|e| DetailRefused {
                field: "",
                error: store_error(e),
            })?;
        questions.extend(
            hour_meter_questions(h, at, &around, zone)
                .into_iter()
                .map(|q| crate::app::entry::Problem::unusual("hours", q)),
        );
    }
    Ok(CheckedDetails {
        details: EventDetails {
            hours: d.hours,
            filter_part,
            work_order,
        },
        questions,
    })
}

/// The questions as one refusal that says how to answer them (`answer`: the option or key).
pub(crate) fn unanswered(questions: &[crate::app::entry::Problem], answer: &str) -> AppError {
    let listed: Vec<String> = questions
        .iter()
        .map(|p| format!("{}: {}", p.field, p.message))
        .collect();
    AppError::BadInput(format!(
        "the work was not recorded; these values are unusual ({answer} to keep them):\n{}",
        listed.join("\n")
    ))
}

/// Records work done on unit `tag` (a fluid change, filter change, top-up, ...), which restarts
/// the clock of the work it answers. A fluid change to another fluid also changes the fluid in
/// service in the unit register (kept in the edit history).
pub fn log_event_in(
    store: &Store,
    tag: &str,
    input: &EventInput,
    now: DateTime<Utc>,
) -> Result<LoggedEvent, AppError> {
    let now = now.trunc_subsecs(0);
    let zone = crate::app::shop::zone_of(store);
    let at = input.at.unwrap_or(now);
    if at > now + Duration::hours(1) {
        return Err(AppError::BadInput(format!(
            "{} is in the future; record work when it has been done",
            zone.show_marked(at)
        )));
    }
    let at = at.trunc_subsecs(0);
    let unit: Unit = store
        .unit_by_tag(tag)
        .map_err(store_error)?
        .ok_or_else(|| AppError::BadInput(format!("no unit `{}` in this shop", tag.trim())))?;
    if let Some(v) = input.volume {
        if v.si().is_nan() || v.si() <= 0.0 {
            return Err(AppError::BadInput("--volume must be more than zero".into()));
        }
    }
    let takes_fluid = matches!(input.kind, EventKind::FluidChange | EventKind::TopUp);
    let fluid = match (&input.fluid, takes_fluid) {
        (Some(name), true) => Some(store.fluid_by_name(name).map_err(store_error)?.ok_or_else(
            || {
                let known: Vec<String> = store
                    .fluids()
                    .map(|f| f.into_iter().map(|f| f.name).collect())
                    .unwrap_or_default();
                AppError::BadInput(format!(
                    "no fluid `{}` in this shop; known fluids: {}",
                    name.trim(),
                    known.join(", ")
                ))
            },
        )?),
        (Some(_), false) => {
            return Err(AppError::BadInput(format!(
                "--fluid goes with fluid_change or top_up, not {}",
                input.kind
            )))
        }
        (None, true) => match unit.fluid_id {
            Some(id) => store.fluid(id).map_err(store_error)?,
            None => None,
        },
        (None, false) => None,
    };
    let checked =
        checked_details(store, &unit, at, &input.details, None, zone).map_err(|r| r.error)?;
    if !input.confirmed && !checked.questions.is_empty() {
        return Err(unanswered(&checked.questions, "repeat with --confirm"));
    }
    let details = checked.details;
    let event = Event {
        id: 0,
        unit_id: unit.id,
        done_at: at,
        kind: input.kind,
        volume: input.volume,
        fluid_id: fluid.as_ref().map(|f| f.id),
        by: input.by.trim().to_string(),
        note: input.note.trim().to_string(),
    };
    let id = store
        .insert_event_with(&event, &details)
        .map_err(|e| match e {
            StoreError::Duplicate { .. } => AppError::BadInput(format!(
                "a {} of {} at {} is already recorded",
                input.kind,
                unit.tag,
                zone.show_exact(at)
            )),
            other => store_error(other),
        })?;
    let mut changed = false;
    if input.kind == EventKind::FluidChange {
        if let Some(f) = &fluid {
            if unit.fluid_id != Some(f.id) {
                let mut u = unit.clone();
                u.fluid_id = Some(f.id);
                let by = if event.by.is_empty() {
                    "sumpbook log-event"
                } else {
                    event.by.as_str()
                };
                store
                    .update_unit(
                        &u,
                        by,
                        &format!("fluid change on {} to {}", zone.show_date(at), f.name),
                    )
                    .map_err(store_error)?;
                changed = true;
            }
        }
    }
    let after = unit_status_in(store, &unit.tag, Some(now.max(at)))?;
    Ok(LoggedEvent {
        unit: unit.tag,
        event: Event { id, ..event },
        fluid: fluid.map(|f| f.name),
        details,
        fluid_in_service_changed: changed,
        confirmed: checked
            .questions
            .iter()
            .map(|p| format!("{}: {}", p.field, p.message))
            .collect(),
        work: after.health.work,
    })
}

// The same actions on an open shop, as the app and the command line call them.

/// The due list of `shop`; see [`due_list_in`].
pub fn due_list(
    shop: &super::shop::Shop,
    at: Option<DateTime<Utc>>,
    within_days: Option<i64>,
) -> Result<DueList, AppError> {
    due_list_in(shop.store(), at, within_days)
}

/// Acknowledges a flag now; see [`ack_in`].
pub fn ack(
    shop: &super::shop::Shop,
    tag: &str,
    kind: FlagKind,
    by: &str,
    note: &str,
) -> Result<AckResult, AppError> {
    ack_in(shop.store(), tag, kind, by, note, Utc::now())
}

/// Records work done; see [`log_event_in`].
pub fn log_event(
    shop: &super::shop::Shop,
    tag: &str,
    input: &EventInput,
) -> Result<LoggedEvent, AppError> {
    log_event_in(shop.store(), tag, input, Utc::now())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::{Event, EventKind};

    fn logged(confirmed: &[&str], changed: bool) -> LoggedEvent {
        LoggedEvent {
            unit: "U-1".into(),
            event: Event {
                id: 1,
                unit_id: 1,
                done_at: chrono::DateTime::UNIX_EPOCH,
                kind: EventKind::FluidChange,
                volume: None,
                fluid_id: None,
                by: "T. Fitter".into(),
                note: String::new(),
            },
            fluid: Some("Works stock HM 46".into()),
            details: EventDetails::default(),
            fluid_in_service_changed: changed,
            confirmed: confirmed.iter().map(|c| c.to_string()).collect(),
            work: Vec::new(),
        }
    }

    #[test]
    fn what_was_settled_beside_the_work_reads_a_sentence_each() {
        assert!(recorded_notes(&logged(&[], false)).is_empty());
        assert_eq!(
            recorded_notes(&logged(&["hours: below the last reading."], true)),
            vec![
                "Kept as confirmed: hours: below the last reading.".to_string(),
                "The unit's fluid in service is now Works stock HM 46.".to_string(),
            ]
        );
    }
}
