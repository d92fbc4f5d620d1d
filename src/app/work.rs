//! Work and flags as people act on them: the due list across the fleet, acknowledging a flag,
//! recording work done (an event), and reading and setting limits.
//!
//! Every figure comes from the one evaluation path (`status`); this module only selects,
//! orders and records. Nothing here prints or parses a command line.

use chrono::{DateTime, Duration, NaiveDate, SubsecRound, Utc};
use serde::{Deserialize, Serialize};

use super::status::{fleet_status_in, store_error, unit_status_in, Detail, FleetStatus};
use super::AppError;
use crate::health::baseline::BaselineIndicator;
use crate::health::limits::{validate_setting, LimitKey, LimitOrigin, LimitShape, Limits};
use crate::health::plan::SAFETY_CAUTIONS;
use crate::health::{Flag, FlagKind, State, WorkItem, WorkKind};
use crate::model::{Acknowledgement, Event, EventKind, LimitSetting, ManualBaseline, Unit};
use crate::quantity::{Kind, Quantity};
use crate::store::{Store, StoreError};
use crate::units::{TempDiff, UnitSystem, Volume};

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
    /// Whether the unit register's fluid in service was changed to it.
    pub fluid_in_service_changed: bool,
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
    let id = store.insert_event(&event).map_err(|e| match e {
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
        fluid_in_service_changed: changed,
        work: after.health.work,
    })
}

/// One limit as listed.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct LimitRow {
    pub key: String,
    /// `threshold` (watch and act) or `value` (one setting, shown as act).
    pub shape: String,
    /// `≥` or `>` for a threshold.
    pub compare: Option<String>,
    pub watch: Option<f64>,
    pub act: Option<f64>,
    pub unit: String,
    pub watch_origin: LimitOrigin,
    pub act_origin: LimitOrigin,
    pub description: String,
    /// The values it may take, in words (`from 1 to 366 days`): the range every setting of
    /// it is checked against.
    pub range: String,
}

/// The limits in force for the shop or for one unit.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct LimitsView {
    /// The unit tag, or `None` for the shop defaults.
    pub unit: Option<String>,
    pub rows: Vec<LimitRow>,
}

fn scope(store: &Store, unit: Option<&str>) -> Result<Option<Unit>, AppError> {
    unit.map(|tag| {
        store
            .unit_by_tag(tag)
            .map_err(store_error)?
            .ok_or_else(|| AppError::BadInput(format!("no unit `{}` in this shop", tag.trim())))
    })
    .transpose()
}

fn rows_of(limits: &Limits) -> Vec<LimitRow> {
    limits
        .all()
        .iter()
        .map(|l| LimitRow {
            key: l.key.as_str().to_string(),
            shape: match l.key.shape() {
                LimitShape::Threshold(_) => "threshold".into(),
                LimitShape::Value => "value".into(),
            },
            compare: match l.key.shape() {
                LimitShape::Threshold(c) => Some(c.symbol().to_string()),
                LimitShape::Value => None,
            },
            watch: l.watch,
            act: l.act,
            unit: l.key.unit().to_string(),
            watch_origin: l.watch_origin,
            act_origin: l.act_origin,
            range: l.key.range().describe(l.key.unit()),
            description: l.key.describe().to_string(),
        })
        .collect()
}

/// The limits in force for unit `unit` (its overrides over the shop's), or the shop's.
pub fn limits_in(store: &Store, unit: Option<&str>) -> Result<LimitsView, AppError> {
    let u = scope(store, unit)?;
    let limits = Limits::resolve(
        &store.limits().map_err(store_error)?,
        u.as_ref().map(|u| u.id),
    );
    Ok(LimitsView {
        unit: u.map(|u| u.tag),
        rows: rows_of(&limits),
    })
}

fn parse_key(key: &str) -> Result<LimitKey, AppError> {
    key.parse::<LimitKey>()
        .map_err(|e| AppError::BadInput(e.to_string()))
}

/// Sets a shop default or, with `unit`, an override for that unit. A value not given keeps
/// what that scope had stored. Returns the limit now in force there.
pub fn set_limit_in(
    store: &Store,
    key: &str,
    watch: Option<f64>,
    act: Option<f64>,
    unit: Option<&str>,
    by: &str,
) -> Result<LimitRow, AppError> {
    let key = parse_key(key)?;
    let by = need_name("a limit change", by)?;
    let u = scope(store, unit)?;
    let unit_id = u.as_ref().map(|u| u.id);
    let rows = store.limits().map_err(store_error)?;
    let current = Limits::resolve(&rows, unit_id);
    let (watch, act) = validate_setting(key, watch, act, &current)
        .map_err(|e| AppError::BadInput(e.to_string()))?;
    let stored = rows
        .iter()
        .find(|r| r.unit_id == unit_id && r.key == key.as_str());
    let row = LimitSetting {
        unit_id,
        key: key.as_str().to_string(),
        watch: watch.or(stored.and_then(|r| r.watch)),
        act: act.or(stored.and_then(|r| r.act)),
    };
    let reason = match &u {
        Some(u) => format!("limit {} for unit {}", key, u.tag),
        None => format!("shop limit {key}"),
    };
    store.set_limit(&row, &by, &reason).map_err(store_error)?;
    let after = Limits::resolve(&store.limits().map_err(store_error)?, unit_id);
    rows_of(&after)
        .into_iter()
        .find(|r| r.key == key.as_str())
        .ok_or_else(|| AppError::Failed(format!("limit {key} not found after it was set")))
}

/// Removes a stored shop default or unit override, so that the shop's value (or the built-in
/// one) applies again. Returns whether there was one.
pub fn reset_limit_in(
    store: &Store,
    key: &str,
    unit: Option<&str>,
    by: &str,
) -> Result<bool, AppError> {
    let key = parse_key(key)?;
    let by = need_name("a limit change", by)?;
    let u = scope(store, unit)?;
    let reason = format!("reset limit {key}");
    store
        .remove_limit(u.as_ref().map(|u| u.id), key.as_str(), &by, &reason)
        .map_err(store_error)
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

/// The limits in force; see [`limits_in`].
pub fn limits(shop: &super::shop::Shop, unit: Option<&str>) -> Result<LimitsView, AppError> {
    let sys = shop.unit_system();
    let mut view = limits_in(shop.store(), unit)?;
    for row in &mut view.rows {
        show_in(row, sys);
    }
    Ok(view)
}

/// How a stored limit reads in a unit system other than the one it is stored in: only the
/// temperature limits differ (°C and °F for the reservoir, K and °F steps for heat rise); every
/// other limit is a ratio, a count or a time. The command line's `limits` and Setup's limits
/// tab both read and write through it.
pub(crate) struct LimitScale {
    pub unit: &'static str,
    pub shown: fn(f64) -> f64,
    pub stored: fn(f64) -> f64,
}

impl LimitScale {
    pub fn of(stored_unit: &str, system: UnitSystem) -> Option<LimitScale> {
        use crate::units::Temperature;
        match (stored_unit, system) {
            ("°C", UnitSystem::Us) => Some(LimitScale {
                unit: "°F",
                shown: |c| Temperature::from_c(c).f(),
                stored: |f| Temperature::from_f(f).c(),
            }),
            ("K", UnitSystem::Us) => Some(LimitScale {
                unit: "°F",
                shown: |k| TempDiff::from_k(k).f_steps(),
                stored: |f| TempDiff::from_f_steps(f).k(),
            }),
            _ => None,
        }
    }
}

/// `row` (in stored units) as the shop reads it.
fn show_in(row: &mut LimitRow, sys: UnitSystem) {
    let Ok(key) = row.key.parse::<LimitKey>() else {
        return;
    };
    if let Some(LimitScale {
        unit, shown: to, ..
    }) = LimitScale::of(key.unit(), sys)
    {
        let tidy = |v: f64| (v * 1.0e6).round() / 1.0e6;
        row.watch = row.watch.map(|v| tidy(to(v)));
        row.act = row.act.map(|v| tidy(to(v)));
        row.unit = unit.to_string();
        let r = key.range();
        row.range = crate::health::limits::ValueRange {
            lo: tidy(to(r.lo)),
            hi: tidy(to(r.hi)),
            ..r
        }
        .describe(unit);
    }
}

/// A limit as typed: a bare number is in the unit the shop reads it in (°F for a temperature in
/// a US shop); a temperature may also carry its unit (`160F`, `71C`), and a temperature
/// difference `9F` or `5K`.
pub fn read_limit(
    shop: &super::shop::Shop,
    key: &str,
    text: &str,
    what: &str,
) -> Result<f64, AppError> {
    let k = parse_key(key)?;
    let sys = shop.unit_system();
    let t = text.trim();
    if let Ok(v) = t.parse::<f64>() {
        if v.is_finite() {
            return Ok(match LimitScale::of(k.unit(), sys) {
                Some(scale) => (scale.stored)(v),
                None => v,
            });
        }
    }
    match k.unit() {
        "°C" => {
            if let Ok(q) = crate::quantity::parse_temperature(t) {
                return Ok(q.c());
            }
        }
        "K" => {
            let lower = t.to_ascii_lowercase();
            let number = |suffix: &str| {
                lower
                    .strip_suffix(suffix)
                    .and_then(|n| n.trim().parse::<f64>().ok())
                    .filter(|v| v.is_finite())
            };
            if let Some(v) = number("k") {
                return Ok(v);
            }
            if let Some(v) = number("f").or_else(|| number("°f")) {
                return Ok(crate::units::TempDiff::from_f_steps(v).k());
            }
        }
        _ => {}
    }
    Err(AppError::BadInput(format!(
        "{what} `{t}` is not a number{}",
        match LimitScale::of(k.unit(), sys) {
            Some(scale) => format!(" (in {}, or with its unit such as 160F)", scale.unit),
            None => String::new(),
        }
    )))
}

/// Sets a limit from what was typed (see [`read_limit`]); the row comes back as the shop reads
/// it. See [`set_limit_in`] for the checks.
pub fn set_limit(
    shop: &super::shop::Shop,
    key: &str,
    watch: Option<&str>,
    act: Option<&str>,
    unit: Option<&str>,
    by: &str,
) -> Result<LimitRow, AppError> {
    let watch = watch
        .map(|w| read_limit(shop, key, w, "--watch"))
        .transpose()?;
    let act = act.map(|a| read_limit(shop, key, a, "--act")).transpose()?;
    let mut row = set_limit_in(shop.store(), key, watch, act, unit, by)?;
    show_in(&mut row, shop.unit_system());
    Ok(row)
}

/// Removes a stored limit; see [`reset_limit_in`].
pub fn reset_limit(
    shop: &super::shop::Shop,
    key: &str,
    unit: Option<&str>,
    by: &str,
) -> Result<bool, AppError> {
    reset_limit_in(shop.store(), key, unit, by)
}

/// A hand-entered baseline value as stored, with the era it belongs to.
#[derive(Clone, Debug, Serialize)]
pub struct BaselineEntered {
    pub unit: String,
    pub indicator: String,
    pub era_start: DateTime<Utc>,
    /// Reference value in SI.
    pub value: f64,
    /// Spread (one standard deviation) in SI.
    pub spread: f64,
    pub by: String,
}

/// Reads a baseline figure as the engineer types it: flows carry their unit (`104.6lpm`,
/// `27.6gpm`), heat rise is a difference in K or °F steps (`20.5K`, `36.9F`), and leak
/// conductance is the engine's SI figure (m³/s · m²/s / Pa) as a plain number.
fn baseline_figure(ind: BaselineIndicator, text: &str) -> Result<f64, AppError> {
    let t = text.trim();
    let bad = |why: String| AppError::BadInput(format!("baseline {}: {why}", ind.key()));
    match ind {
        BaselineIndicator::EffectiveFlow
        | BaselineIndicator::CorrectedFlow
        | BaselineIndicator::CaseDrain => match crate::quantity::parse_as(t, Kind::Flow) {
            Ok(Quantity::Flow(f)) => Ok(f.si()),
            Ok(_) => Err(bad(format!("`{t}` is not a flow"))),
            Err(e) => Err(bad(format!(
                "{e}; expected a flow such as 104.6lpm or 27.6gpm"
            ))),
        },
        BaselineIndicator::HeatRise => {
            let (num, f_steps) = match t.strip_suffix(['F', 'f']) {
                Some(n) => (n, true),
                None => (t.strip_suffix(['K', 'k']).unwrap_or(t), false),
            };
            let v: f64 = num.trim().parse().map_err(|_| {
                bad(format!(
                    "`{t}` is not a temperature difference; expected e.g. 20.5K or 36.9F"
                ))
            })?;
            let k = if f_steps {
                TempDiff::from_f_steps(v).k()
            } else {
                v
            };
            Ok(k)
        }
        BaselineIndicator::LeakConductance => t
            .parse::<f64>()
            .map_err(|_| bad(format!("`{t}` is not a number"))),
    }
    .and_then(|v| {
        if v.is_finite() && v >= 0.0 {
            Ok(v)
        } else {
            Err(bad(format!("`{t}` must be a finite figure, not negative")))
        }
    })
}

/// Enters a baseline by hand now; see [`set_baseline_in`].
pub fn set_baseline(
    shop: &super::shop::Shop,
    tag: &str,
    indicator: &str,
    value: &str,
    spread: &str,
    by: &str,
) -> Result<BaselineEntered, AppError> {
    set_baseline_in(shop.store(), tag, indicator, value, spread, by, Utc::now())
}

/// Enters a baseline value by hand for the era in force of a unit (after a rebuild whose first
/// checks are not representative, say). The engine then uses it instead of the computed one
/// and shows who entered it and when.
pub fn set_baseline_in(
    store: &Store,
    tag: &str,
    indicator: &str,
    value: &str,
    spread: &str,
    by: &str,
    now: DateTime<Utc>,
) -> Result<BaselineEntered, AppError> {
    let by = need_name("a baseline", by)?;
    let ind = BaselineIndicator::from_key(indicator).ok_or_else(|| {
        let keys: Vec<&str> = BaselineIndicator::ALL.iter().map(|i| i.key()).collect();
        AppError::BadInput(format!(
            "`{indicator}` is not a baseline indicator; expected one of {}",
            keys.join("|")
        ))
    })?;
    let value_si = baseline_figure(ind, value)?;
    let spread_si = baseline_figure(ind, spread)?;
    let now = now.trunc_subsecs(0);
    let status = unit_status_in(store, tag, Some(now))?;
    let era_start = status
        .health
        .eras
        .iter()
        .find(|e| e.end.is_none())
        .map(|e| e.start)
        .ok_or_else(|| {
            AppError::BadInput(format!(
                "unit {} has no checks or era-starting events yet, so there is no era to give a baseline",
                status.unit
            ))
        })?;
    let unit = store
        .unit_by_tag(&status.unit)
        .map_err(store_error)?
        .ok_or_else(|| AppError::BadInput(format!("unknown unit tag `{tag}`")))?;
    store
        .insert_manual_baseline(&ManualBaseline {
            id: 0,
            unit_id: unit.id,
            era_start,
            indicator: ind.key().to_string(),
            value: value_si,
            spread: spread_si,
            entered_by: by.clone(),
            entered_at: now,
        })
        .map_err(store_error)?;
    Ok(BaselineEntered {
        unit: status.unit,
        indicator: ind.key().to_string(),
        era_start,
        value: value_si,
        spread: spread_si,
        by,
    })
}
