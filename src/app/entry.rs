//! Entry: the rules behind the desktop app's forms — the walk-round check, the sample with its
//! preview, the setup records, corrections of stored readings, marking work done, and the
//! import preview with progress and cancel.
//!
//! Each function takes the texts a person typed (keyed by field), judges every value (design
//! §10: a physically impossible value is refused with the reason, an unusual one asks for
//! confirmation), and writes through the store or hands back what it would mean (via the
//! health engine). It holds no SQL and knows nothing of slint; the GUI only shows the fields
//! and verdicts it returns. Bare numbers are read in the shop's unit system; a number with a
//! unit (`140F`, `2500psi`) is read in that unit.
//!
//! The "unusual" thresholds below are *common practice, no published source*: they catch
//! misreadings and typing slips, and only ask; they never refuse.

use std::sync::atomic::{AtomicBool, Ordering};

use chrono::{DateTime, Duration, Local, NaiveDate, NaiveDateTime, SubsecRound, TimeZone, Utc};

use super::shop::Shop;
use super::status::{store_error, unit_status_in, UnitStatus};
use super::work::{self as work, EventInput, LoggedEvent};
use super::AppError;
use crate::exchange::{ExchangeError, FileKind, ImportSummary, RowError};
use crate::health::{self, FlagKind, Limits, SamplePoint, State, WorkKind};
use crate::model::{
    Check, Confirmation, Event, EventKind, FilterState, Fluid, Id, Machine, OilLevel, PumpKind,
    Sample, SensitiveComponent, Settings, StrokeDirection, TimedStroke, Unit, UnitHistory,
    ViscReading,
};
use crate::physics::cleanliness::Iso4406Code;
use crate::quantity::{self, Kind, Quantity};
use crate::store::Store;
use crate::units::{
    Flow, Length, Pressure, Seconds, TempDiff, Temperature, UnitSystem, Viscosity, Volume,
};

// ---------------------------------------------------------------------------------------------
// Shared vocabulary

/// How a typed value is judged.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord)]
pub enum Verdict {
    /// Possible but unlikely: saved only when the person confirms.
    Unusual,
    /// Impossible or unreadable: never saved.
    Refused,
}

/// What is wrong with one field.
#[derive(Clone, Debug, PartialEq)]
pub struct Problem {
    /// The field's key (`reservoir_temp`, ...), or `""` for the form as a whole.
    pub field: String,
    pub verdict: Verdict,
    pub message: String,
}

impl Problem {
    fn refused(field: &str, message: impl Into<String>) -> Self {
        Problem {
            field: field.to_string(),
            verdict: Verdict::Refused,
            message: message.into(),
        }
    }
    fn unusual(field: &str, message: impl Into<String>) -> Self {
        Problem {
            field: field.to_string(),
            verdict: Verdict::Unusual,
            message: message.into(),
        }
    }
}

/// One field of an entry form, as the app shows it.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Field {
    pub key: String,
    pub label: String,
    /// The unit a bare number is read in, or empty.
    pub unit: String,
    /// Empty: free text. Otherwise the allowed entries, `value` being one of them.
    pub choices: Vec<String>,
    /// The text the field starts with (an edit shows the stored value).
    pub value: String,
    pub placeholder: String,
    /// Beside the field: last time's value, or what to type.
    pub hint: String,
}

impl Field {
    fn text(key: &str, label: &str) -> Self {
        Field {
            key: key.into(),
            label: label.into(),
            ..Field::default()
        }
    }
    fn quantity(key: &str, label: &str, kind: Kind, system: UnitSystem) -> Self {
        Field {
            key: key.into(),
            label: label.into(),
            unit: unit_symbol(kind, system),
            ..Field::default()
        }
    }
    fn choice(key: &str, label: &str, choices: &[&str], value: &str) -> Self {
        Field {
            key: key.into(),
            label: label.into(),
            choices: choices.iter().map(|c| c.to_string()).collect(),
            value: value.into(),
            ..Field::default()
        }
    }
    fn with_value(mut self, v: impl Into<String>) -> Self {
        self.value = v.into();
        self
    }
    fn with_hint(mut self, h: impl Into<String>) -> Self {
        self.hint = h.into();
        self
    }
    fn with_placeholder(mut self, p: impl Into<String>) -> Self {
        self.placeholder = p.into();
        self
    }
}

/// What a person typed: field key → text.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Entered(pub Vec<(String, String)>);

impl Entered {
    pub fn new() -> Self {
        Entered(Vec::new())
    }
    /// Sets (or replaces) the text of `key`.
    pub fn set(&mut self, key: &str, text: &str) {
        match self.0.iter_mut().find(|(k, _)| k == key) {
            Some(slot) => slot.1 = text.to_string(),
            None => self.0.push((key.to_string(), text.to_string())),
        }
    }
    /// The trimmed text of `key` ("" when not given).
    pub fn get(&self, key: &str) -> &str {
        self.0
            .iter()
            .find(|(k, _)| k == key)
            .map(|(_, v)| v.trim())
            .unwrap_or("")
    }
    /// Starts from the values a form shows.
    pub fn from_fields(fields: &[Field]) -> Self {
        Entered(
            fields
                .iter()
                .map(|f| (f.key.clone(), f.value.clone()))
                .collect(),
        )
    }
}

/// The end of a save: refused, waiting for confirmation, or done.
#[derive(Clone, Debug, PartialEq)]
pub enum SaveOutcome<T> {
    /// Nothing was written; every refused value is listed (with the unusual ones).
    Refused(Vec<Problem>),
    /// Nothing was written yet: these values are unusual; save again confirmed to keep them.
    NeedsConfirmation(Vec<Problem>),
    Saved(T),
}

fn unit_symbol(kind: Kind, system: UnitSystem) -> String {
    kind.display_unit(system).symbol().to_string()
}

/// A quantity in the shop's units for display: `55.0 °C`.
pub fn show(kind: Kind, si: f64, system: UnitSystem) -> String {
    quantity::format(Quantity::from_si(kind, si), system)
}

/// Reads a quantity: blank → `None`; a bare number in the shop's unit; or a number with a unit.
fn read_quantity(text: &str, kind: Kind, system: UnitSystem) -> Result<Option<f64>, String> {
    let t = text.trim();
    if t.is_empty() {
        return Ok(None);
    }
    if let Ok(v) = t.parse::<f64>() {
        if !v.is_finite() {
            return Err(format!("`{t}` is not a number"));
        }
        return Ok(Some(kind.display_unit(system).to_si(v)));
    }
    quantity::parse_as(t, kind)
        .map(|q| Some(q.si()))
        .map_err(|e| e.to_string())
}

/// Reads a plain number (counts, ppm, mg KOH/g, hours).
fn read_number(text: &str) -> Result<Option<f64>, String> {
    let t = text.trim();
    if t.is_empty() {
        return Ok(None);
    }
    match t.parse::<f64>() {
        Ok(v) if v.is_finite() => Ok(Some(v)),
        _ => Err(format!("`{t}` is not a number (use a decimal point: 12.5)")),
    }
}

/// When something was done: blank → `now`; `YYYY-MM-DD HH:MM[:SS]` or `YYYY-MM-DD` in the
/// computer's local time. Refused when more than an hour in the future.
pub fn read_when(text: &str, now: DateTime<Utc>) -> Result<DateTime<Utc>, String> {
    let now = now.trunc_subsecs(0);
    let t = text.trim();
    if t.is_empty() || t.eq_ignore_ascii_case("now") {
        return Ok(now);
    }
    let naive = [
        "%Y-%m-%d %H:%M:%S",
        "%Y-%m-%d %H:%M",
        "%Y-%m-%dT%H:%M:%S",
        "%Y-%m-%dT%H:%M",
    ]
    .iter()
    .find_map(|f| NaiveDateTime::parse_from_str(t, f).ok())
    .or_else(|| {
        NaiveDate::parse_from_str(t, "%Y-%m-%d")
            .ok()
            .and_then(|d| d.and_hms_opt(12, 0, 0))
    })
    .ok_or_else(|| {
        format!("`{t}` is not a date and time; write YYYY-MM-DD HH:MM (e.g. 2025-03-04 07:30)")
    })?;
    let at = Local
        .from_local_datetime(&naive)
        .earliest()
        .ok_or_else(|| format!("`{t}` does not exist in local time (a clock change)"))?
        .with_timezone(&Utc);
    if at > now + Duration::hours(1) {
        return Err(format!(
            "{t} is in the future; record readings when they are taken"
        ));
    }
    Ok(at)
}

/// A stored instant as the app shows it (local time, to the minute).
pub fn show_time(t: DateTime<Utc>) -> String {
    t.with_timezone(&Local).format("%Y-%m-%d %H:%M").to_string()
}

/// A stored instant's date as the app shows it.
pub fn show_date(t: DateTime<Utc>) -> String {
    t.with_timezone(&Local).format("%Y-%m-%d").to_string()
}

fn need(what: &str, text: &str) -> Result<String, AppError> {
    let t = text.trim();
    if t.is_empty() {
        return Err(AppError::BadInput(format!(
            "{what}: give a name or initials"
        )));
    }
    Ok(t.to_string())
}

fn settings(store: &Store) -> Result<Settings, AppError> {
    store.settings().map_err(store_error)
}

fn unit_of(store: &Store, unit_id: Id) -> Result<Unit, AppError> {
    store
        .unit(unit_id)
        .map_err(store_error)?
        .ok_or_else(|| AppError::BadInput(format!("unit {unit_id} is not in this shop")))
}

fn history_of(store: &Store, unit_id: Id) -> Result<UnitHistory, AppError> {
    store
        .unit_history(unit_id, None)
        .map_err(store_error)?
        .ok_or_else(|| AppError::BadInput(format!("unit {unit_id} is not in this shop")))
}

// ---------------------------------------------------------------------------------------------
// Bounds (docs/engineering.md, "Physical bounds of readings") and the unusual-value thresholds

/// Lowest and highest oil or air temperature accepted, °C (docs/engineering.md, "Physical bounds
/// of readings").
pub const TEMP_MIN_C: f64 = crate::health::limits::TEMP_RANGE_C.0;
pub const TEMP_MAX_C: f64 = crate::health::limits::TEMP_RANGE_C.1;
/// Highest working pressure accepted, bar (the store's bound; beyond any press circuit).
pub const PRESSURE_MAX_BAR: f64 = 1000.0;
/// Longest timed stroke accepted, s (the store's bound).
pub const STROKE_MAX_S: f64 = 3600.0;

// Unusual (common practice, no published source). A reading far from the unit's recent ones,
// a pressure above the relief setting, air warmer than the oil and a case drain above rated
// flow are the screening's questions (`health::screen`), asked the same way at import.
/// Oil above this is rare in a running press and more often a misread (°C).
const OIL_HOT_C: f64 = 90.0;
/// Workshop air outside this range is asked about (°C).
const AMBIENT_RANGE_C: (f64, f64) = (-20.0, 50.0);
/// Shorter than a person can time with a stopwatch (s).
const STROKE_MIN_HAND_S: f64 = 0.3;

fn bound_temp(key: &str, label: &str, t: f64, system: UnitSystem, out: &mut Vec<Problem>) -> bool {
    let c = Temperature(t).c();
    let lo = Temperature::from_c(TEMP_MIN_C).si();
    let hi = Temperature::from_c(TEMP_MAX_C).si();
    if !(TEMP_MIN_C..=TEMP_MAX_C).contains(&c) {
        out.push(Problem::refused(
            key,
            format!(
                "{label} {} is outside {} to {}, the range sumpbook accepts for oil or air; check the reading",
                show(Kind::Temperature, t, system),
                show(Kind::Temperature, lo, system),
                show(Kind::Temperature, hi, system)
            ),
        ));
        return false;
    }
    true
}

// ---------------------------------------------------------------------------------------------
// Walk-round

/// One stop of the walk-round.
#[derive(Clone, Debug, PartialEq)]
pub struct RouteStop {
    pub unit_id: Id,
    pub tag: String,
    /// Machine tag and name.
    pub machine: String,
    pub state: State,
    pub last_check: Option<DateTime<Utc>>,
}

/// The units not archived, in route order, with their state now.
pub fn route(shop: &Shop) -> Result<Vec<RouteStop>, AppError> {
    Ok(route_from(&super::status::fleet_status(shop, None)?))
}

/// The walk-round order of a fleet status already evaluated.
pub fn route_from(fleet: &super::status::FleetStatus) -> Vec<RouteStop> {
    let mut stops: Vec<(i64, RouteStop)> = fleet
        .units
        .iter()
        .map(|u| {
            (
                u.route_order,
                RouteStop {
                    unit_id: u.unit_id,
                    tag: u.unit.clone(),
                    machine: format!("{} {}", u.machine, u.machine_name),
                    state: u.state,
                    last_check: u.health.last_check,
                },
            )
        })
        .collect();
    stops.sort_by(|a, b| a.0.cmp(&b.0).then(a.1.tag.cmp(&b.1.tag)));
    stops.into_iter().map(|s| s.1).collect()
}

/// The form of one unit's check.
#[derive(Clone, Debug, PartialEq)]
pub struct CheckForm {
    pub unit_id: Id,
    pub tag: String,
    pub machine: String,
    /// The timed stroke and other facts a technician needs at the unit.
    pub detail: String,
    pub state: State,
    pub fields: Vec<Field>,
    pub system: UnitSystem,
}

const OIL_LEVEL_HINT: &str = "ok or low (o / l)";
const FILTER_HINT: &str = "ok, alert or bypass (o / a / b)";

fn last_of<T>(checks: &[Check], f: impl Fn(&Check) -> Option<T>) -> Option<(T, DateTime<Utc>)> {
    checks
        .iter()
        .rev()
        .find_map(|c| f(c).map(|v| (v, c.taken_at)))
}

fn ago(t: DateTime<Utc>, now: DateTime<Utc>) -> String {
    let days = (now - t).num_days();
    match days {
        d if d <= 0 => "today".into(),
        1 => "yesterday".into(),
        d => format!("{d} d ago"),
    }
}

fn describe_stroke(s: &Option<TimedStroke>, system: UnitSystem) -> String {
    match s {
        None => "no timed stroke set up".into(),
        Some(s) => {
            let len = |l: Length| show(Kind::Length, l.si(), system);
            match (s.direction, s.rod) {
                (StrokeDirection::Retract, Some(rod)) => {
                    format!(
                        "timed stroke: retract, bore {} rod {}, {} long",
                        len(s.bore),
                        len(rod),
                        len(s.length)
                    )
                }
                (d, _) => format!(
                    "timed stroke: {}, bore {}, {} long",
                    d,
                    len(s.bore),
                    len(s.length)
                ),
            }
        }
    }
}

/// The check form of a unit, each field with last time's value beside it.
pub fn check_form(shop: &Shop, unit_id: Id, now: DateTime<Utc>) -> Result<CheckForm, AppError> {
    let store = shop.store();
    let system = settings(store)?.unit_system;
    let h = history_of(store, unit_id)?;
    let status = unit_status_in(store, &h.unit.tag, Some(now))?;
    let checks = &h.checks;
    let hint_q = |kind: Kind, v: Option<(f64, DateTime<Utc>)>| match v {
        Some((si, at)) => format!("{} · {}", show(kind, si, system), ago(at, now)),
        None => "no earlier reading".into(),
    };
    let mut fields = vec![
        Field::quantity(
            "reservoir_temp",
            "Reservoir temperature",
            Kind::Temperature,
            system,
        )
        .with_hint(hint_q(
            Kind::Temperature,
            last_of(checks, |c| c.reservoir_temp.map(|t| t.si())),
        )),
        Field::quantity(
            "ambient_temp",
            "Ambient temperature",
            Kind::Temperature,
            system,
        )
        .with_hint(hint_q(
            Kind::Temperature,
            last_of(checks, |c| c.ambient_temp.map(|t| t.si())),
        )),
        Field::quantity("pressure", "Working pressure", Kind::Pressure, system).with_hint(hint_q(
            Kind::Pressure,
            last_of(checks, |c| c.pressure.map(|p| p.si())),
        )),
        Field::quantity("stroke_time", "Timed stroke", Kind::Time, system).with_hint(hint_q(
            Kind::Time,
            last_of(checks, |c| c.stroke_time.map(|s| s.si())),
        )),
        Field::text("oil_level", "Oil level")
            .with_placeholder("ok / low")
            .with_hint(
                last_of(checks, |c| c.oil_level)
                    .map(|(v, at)| format!("{v} · {}", ago(at, now)))
                    .unwrap_or(OIL_LEVEL_HINT.into()),
            ),
        Field::text("filter", "Filter indicator")
            .with_placeholder("ok / alert / bypass")
            .with_hint(
                last_of(checks, |c| c.filter)
                    .map(|(v, at)| format!("{v} · {}", ago(at, now)))
                    .unwrap_or(FILTER_HINT.into()),
            ),
        Field {
            unit: "h".into(),
            ..Field::text("hours", "Hour meter")
        }
        .with_hint(
            last_of(checks, |c| c.hours)
                .map(|(v, at)| format!("{v:.0} h · {}", ago(at, now)))
                .unwrap_or("no earlier reading".into()),
        ),
    ];
    if h.unit.pump_kind == PumpKind::PistonVariable || checks.iter().any(|c| c.case_drain.is_some())
    {
        fields.push(
            Field::quantity("case_drain", "Case-drain flow", Kind::Flow, system).with_hint(hint_q(
                Kind::Flow,
                last_of(checks, |c| c.case_drain.map(|q| q.si())),
            )),
        );
    }
    fields.push(Field::text("note", "Note").with_placeholder("what you saw"));
    Ok(CheckForm {
        unit_id,
        tag: h.unit.tag.clone(),
        machine: format!("{} {}", h.machine.tag, h.machine.name),
        detail: describe_stroke(&h.unit.stroke, system),
        state: status.state,
        fields,
        system,
    })
}

fn read_oil_level(t: &str) -> Result<Option<OilLevel>, String> {
    match t.trim().to_ascii_lowercase().as_str() {
        "" => Ok(None),
        "o" | "ok" => Ok(Some(OilLevel::Ok)),
        "l" | "low" => Ok(Some(OilLevel::Low)),
        other => Err(format!(
            "`{other}` is not an oil level; type ok or low (o / l)"
        )),
    }
}

fn read_filter(t: &str) -> Result<Option<FilterState>, String> {
    match t.trim().to_ascii_lowercase().as_str() {
        "" => Ok(None),
        "o" | "ok" => Ok(Some(FilterState::Ok)),
        "a" | "alert" => Ok(Some(FilterState::Alert)),
        "b" | "bypass" => Ok(Some(FilterState::Bypass)),
        other => Err(format!(
            "`{other}` is not a filter state; type ok, alert or bypass (o / a / b)"
        )),
    }
}

/// The judged form: the check to store (when nothing is refused) and every problem.
#[derive(Clone, Debug, PartialEq)]
pub struct CheckReview {
    pub check: Option<Check>,
    pub problems: Vec<Problem>,
}

/// Judges a check of `unit` as typed, against the bounds of docs/engineering.md ("Physical bounds
/// of readings") and the unit's own record
/// (`earlier` checks, oldest first, and its maintenance `events`). `base` gives the id, time and author of an edited check.
fn judge_check(
    unit: &Unit,
    earlier: &[Check],
    events: &[crate::model::Event],
    entered: &Entered,
    base: Check,
    system: UnitSystem,
) -> CheckReview {
    let mut p = Vec::new();
    let q = |key: &str, kind: Kind, p: &mut Vec<Problem>| -> Option<f64> {
        match read_quantity(entered.get(key), kind, system) {
            Ok(v) => v,
            Err(e) => {
                p.push(Problem::refused(key, e));
                None
            }
        }
    };
    let res = q("reservoir_temp", Kind::Temperature, &mut p);
    let amb = q("ambient_temp", Kind::Temperature, &mut p);
    let pressure = q("pressure", Kind::Pressure, &mut p);
    let stroke = q("stroke_time", Kind::Time, &mut p);
    let case_drain = q("case_drain", Kind::Flow, &mut p);
    let oil_level = read_oil_level(entered.get("oil_level")).unwrap_or_else(|e| {
        p.push(Problem::refused("oil_level", e));
        None
    });
    let filter = read_filter(entered.get("filter")).unwrap_or_else(|e| {
        p.push(Problem::refused("filter", e));
        None
    });
    let hours = read_number(entered.get("hours")).unwrap_or_else(|e| {
        p.push(Problem::refused("hours", e));
        None
    });
    let before: Vec<&Check> = earlier
        .iter()
        .filter(|c| c.taken_at < base.taken_at && c.id != base.id)
        .collect();
    let last = |f: &dyn Fn(&Check) -> Option<f64>| {
        before
            .iter()
            .rev()
            .find_map(|c| f(c).map(|v| (v, c.taken_at)))
    };

    let res_ok =
        res.filter(|&t| bound_temp("reservoir_temp", "Reservoir temperature", t, system, &mut p));
    let amb_ok =
        amb.filter(|&t| bound_temp("ambient_temp", "Ambient temperature", t, system, &mut p));
    if let Some(t) = res_ok {
        if Temperature(t).c() > OIL_HOT_C {
            p.push(Problem::unusual(
                "reservoir_temp",
                format!(
                    "{} is very hot for a reservoir; is the reading right?",
                    show(Kind::Temperature, t, system)
                ),
            ));
        }
    }
    if let Some(t) = amb_ok {
        let c = Temperature(t).c();
        if c < AMBIENT_RANGE_C.0 || c > AMBIENT_RANGE_C.1 {
            p.push(Problem::unusual(
                "ambient_temp",
                format!(
                    "{} is an unusual workshop temperature; is the reading right?",
                    show(Kind::Temperature, t, system)
                ),
            ));
        }
    }
    if let Some(pa) = pressure {
        let bar = Pressure(pa).bar();
        if bar < 0.0 {
            p.push(Problem::refused(
                "pressure",
                format!(
                    "a working pressure cannot be negative ({}); give the gauge reading",
                    show(Kind::Pressure, pa, system)
                ),
            ));
        } else if bar > PRESSURE_MAX_BAR {
            p.push(Problem::refused(
                "pressure",
                format!(
                    "{} is above {}, beyond any press circuit; check the gauge and the unit",
                    show(Kind::Pressure, pa, system),
                    show(
                        Kind::Pressure,
                        Pressure::from_bar(PRESSURE_MAX_BAR).si(),
                        system
                    )
                ),
            ));
        }
    }
    if let Some(s) = stroke {
        if s <= 0.0 {
            p.push(Problem::refused(
                "stroke_time",
                format!("a stroke time must be more than zero (got {s} s)"),
            ));
        } else if s > STROKE_MAX_S {
            p.push(Problem::refused(
                "stroke_time",
                format!("{s} s is longer than an hour; time one stroke, in seconds"),
            ));
        } else if s < STROKE_MIN_HAND_S {
            p.push(Problem::unusual(
                "stroke_time",
                format!("{s} s is quicker than a stopwatch can time; is it right?"),
            ));
        }
    }
    if let Some(h) = hours {
        if h < 0.0 {
            p.push(Problem::refused(
                "hours",
                format!("an hour meter cannot read below zero (got {h})"),
            ));
        } else if let Some((prev, at)) = last(&|c| c.hours) {
            let elapsed_h = (base.taken_at - at).num_seconds() as f64 / 3600.0;
            if h < prev {
                p.push(Problem::unusual(
                    "hours",
                    format!("{h:.0} h is below last time's {prev:.0} h; was the meter replaced?"),
                ));
            } else if h - prev > elapsed_h + 1.0 {
                p.push(Problem::unusual(
                    "hours",
                    format!(
                        "{:.0} h more than last time, but only {:.0} h have passed; is the reading right?",
                        h - prev,
                        elapsed_h.max(0.0)
                    ),
                ));
            }
        }
    }
    if let Some(q) = case_drain {
        if q < 0.0 {
            p.push(Problem::refused(
                "case_drain",
                "a case-drain flow cannot be negative",
            ));
        }
    }
    let note = entered.get("note").to_string();
    let any = res.is_some()
        || amb.is_some()
        || pressure.is_some()
        || stroke.is_some()
        || case_drain.is_some()
        || oil_level.is_some()
        || filter.is_some()
        || hours.is_some();
    if !any && note.is_empty() && p.is_empty() {
        p.push(Problem::refused(
            "",
            "nothing was entered; type at least one reading, or skip the unit",
        ));
    }
    let refused = p.iter().any(|x| x.verdict == Verdict::Refused);
    let check = Check {
        reservoir_temp: res.map(Temperature),
        ambient_temp: amb.map(Temperature),
        pressure: pressure.map(Pressure),
        stroke_time: stroke.map(Seconds),
        cycle_time: base.cycle_time,
        oil_level,
        filter,
        hours,
        case_drain: case_drain.map(Flow),
        note,
        ..base
    };
    // One rule for the form, the importer and the engine: the screening of readings against
    // the unit's frame (relief setting, ambient above oil, a stroke several times the usual,
    // case drain above rated flow) and its own recent history. Each suspicion asks; a field
    // already refused or questioned above is asked about once.
    let others: Vec<Check> = earlier
        .iter()
        .filter(|c| c.id != check.id)
        .cloned()
        .collect();
    for sus in health::screen::check(unit, &others, events, &check, system) {
        let key = sus.field.key();
        if !p.iter().any(|x| x.field == key) {
            p.push(Problem::unusual(key, sus.reason));
        }
    }
    p.sort_by_key(|x| std::cmp::Reverse(x.verdict));
    CheckReview {
        check: (!refused).then_some(check),
        problems: p,
    }
}

/// Judges a walk-round check as typed, without writing anything.
pub fn review_check(
    shop: &Shop,
    unit_id: Id,
    entered: &Entered,
    taken_at: &str,
    by: &str,
    now: DateTime<Utc>,
) -> Result<CheckReview, AppError> {
    let store = shop.store();
    let system = settings(store)?.unit_system;
    let unit = unit_of(store, unit_id)?;
    let earlier = store.checks_for_unit(unit_id, None).map_err(store_error)?;
    let events = store.events_for_unit(unit_id, None).map_err(store_error)?;
    let mut pre = Vec::new();
    let at = read_when(taken_at, now).unwrap_or_else(|e| {
        pre.push(Problem::refused("taken_at", e));
        now.trunc_subsecs(0)
    });
    if by.trim().is_empty() {
        pre.push(Problem::refused(
            "by",
            "Technician: give your name or initials (it is kept with the reading)",
        ));
    }
    if earlier.iter().any(|c| c.taken_at == at) {
        pre.push(Problem::refused(
            "taken_at",
            format!(
                "{} already has a check at {}; correct that one on the unit page",
                unit.tag,
                show_time(at)
            ),
        ));
    }
    let base = Check {
        id: 0,
        unit_id,
        taken_at: at,
        reservoir_temp: None,
        ambient_temp: None,
        pressure: None,
        stroke_time: None,
        cycle_time: None,
        oil_level: None,
        filter: None,
        hours: None,
        case_drain: None,
        by: by.trim().to_string(),
        note: String::new(),
        confirmed: None,
    };
    let mut review = judge_check(&unit, &earlier, &events, entered, base, system);
    if pre.iter().any(|p| p.verdict == Verdict::Refused) {
        review.check = None;
    }
    pre.append(&mut review.problems);
    pre.sort_by_key(|x| std::cmp::Reverse(x.verdict));
    review.problems = pre;
    Ok(review)
}

/// A stored check and what the unit looks like now.
#[derive(Clone, Debug, PartialEq)]
pub struct SavedCheck {
    pub check_id: Id,
    pub status: UnitStatus,
    /// The unusual values that were confirmed.
    pub confirmed: Vec<Problem>,
}

/// Saves a walk-round check: refused values stop it; unusual ones stop it unless `confirmed`.
pub fn save_check(
    shop: &Shop,
    unit_id: Id,
    entered: &Entered,
    taken_at: &str,
    by: &str,
    confirmed: bool,
    now: DateTime<Utc>,
) -> Result<SaveOutcome<SavedCheck>, AppError> {
    let review = review_check(shop, unit_id, entered, taken_at, by, now)?;
    let Some(mut check) = review.check else {
        return Ok(SaveOutcome::Refused(review.problems));
    };
    if !review.problems.is_empty() && !confirmed {
        return Ok(SaveOutcome::NeedsConfirmation(review.problems));
    }
    if !review.problems.is_empty() {
        // The technician was asked and said the reading is right: it is stored as confirmed
        // by them, now, so it counts in baselines and detectors like any other reading.
        check.confirmed = Some(Confirmation {
            by: check.by.clone(),
            at: now.trunc_subsecs(0),
        });
    }
    let store = shop.store();
    let id = store.insert_check(&check).map_err(store_error)?;
    let unit = unit_of(store, unit_id)?;
    let status = unit_status_in(store, &unit.tag, Some(now.max(check.taken_at)))?;
    Ok(SaveOutcome::Saved(SavedCheck {
        check_id: id,
        status,
        confirmed: review.problems,
    }))
}

// ---------------------------------------------------------------------------------------------
// Samples

/// The sample form (the same fields for every unit).
pub fn sample_fields(system: UnitSystem) -> Vec<Field> {
    vec![
        Field::text("sampled_at", "Sampled at")
            .with_placeholder("YYYY-MM-DD HH:MM")
            .with_hint("blank = now"),
        Field::text("lab_ref", "Lab or bench reference"),
        Field {
            unit: "cSt".into(),
            ..Field::text("kv40", "Viscosity at 40 °C (KV40)")
        },
        Field {
            unit: "cSt".into(),
            ..Field::text("kv100", "Viscosity at 100 °C")
        }
        .with_hint("optional"),
        Field {
            unit: "cSt".into(),
            ..Field::text("visc_value", "Field viscosity reading")
        }
        .with_hint("instead of KV40"),
        Field::quantity(
            "visc_temp",
            "… read at temperature",
            Kind::Temperature,
            system,
        ),
        Field {
            unit: "/mL".into(),
            ..Field::text("count_4", "Particles ≥4 µm(c)")
        },
        Field {
            unit: "/mL".into(),
            ..Field::text("count_6", "Particles ≥6 µm(c)")
        },
        Field {
            unit: "/mL".into(),
            ..Field::text("count_14", "Particles ≥14 µm(c)")
        },
        Field::text("iso4406", "or ISO 4406 code")
            .with_placeholder("18/16/13")
            .with_hint("when no counts"),
        Field {
            unit: "ppm".into(),
            ..Field::text("water_ppm", "Water")
        },
        Field {
            unit: "mg KOH/g".into(),
            ..Field::text("acid", "Acid number")
        },
        Field::text("by", "Sampled by").with_placeholder("name or initials"),
        Field::text("note", "Note"),
    ]
}

/// What a sample means, before it is saved.
#[derive(Clone, Debug, PartialEq)]
pub struct SamplePreview {
    /// The sample's indicators as the health engine computes them.
    pub point: Option<SamplePoint>,
    /// The unit's cleanliness target.
    pub target: Option<String>,
    /// Fluid-condition flags the unit would carry with this sample.
    pub flags: Vec<health::Flag>,
    pub fluid: Option<Fluid>,
}

/// The judged sample: the record (when nothing is refused), every problem, and the preview.
#[derive(Clone, Debug, PartialEq)]
pub struct SampleReview {
    pub sample: Option<Sample>,
    pub problems: Vec<Problem>,
    pub preview: Option<SamplePreview>,
}

const SAMPLE_FLAGS: [FlagKind; 4] = [
    FlagKind::Viscosity,
    FlagKind::Cleanliness,
    FlagKind::Water,
    FlagKind::Acid,
];

/// Judges a sample as typed and shows what it would mean, without writing anything.
pub fn review_sample(
    shop: &Shop,
    unit_id: Id,
    entered: &Entered,
    now: DateTime<Utc>,
) -> Result<SampleReview, AppError> {
    let store = shop.store();
    let system = settings(store)?.unit_system;
    let h = history_of(store, unit_id)?;
    let mut p = Vec::new();
    let at = read_when(entered.get("sampled_at"), now).unwrap_or_else(|e| {
        p.push(Problem::refused("sampled_at", e));
        now.trunc_subsecs(0)
    });
    let visc = |key: &str, p: &mut Vec<Problem>| -> Option<f64> {
        match read_quantity(entered.get(key), Kind::Viscosity, system) {
            Ok(Some(v)) if v <= 0.0 => {
                p.push(Problem::refused(key, "a viscosity must be more than zero"));
                None
            }
            Ok(v) => v,
            Err(e) => {
                p.push(Problem::refused(key, e));
                None
            }
        }
    };
    let kv40 = visc("kv40", &mut p);
    let kv100 = visc("kv100", &mut p);
    let visc_value = visc("visc_value", &mut p);
    let visc_temp = match read_quantity(entered.get("visc_temp"), Kind::Temperature, system) {
        Ok(v) => v.filter(|&t| bound_temp("visc_temp", "Viscosity temperature", t, system, &mut p)),
        Err(e) => {
            p.push(Problem::refused("visc_temp", e));
            None
        }
    };
    if let (Some(a), Some(b)) = (kv40, kv100) {
        if b >= a {
            p.push(Problem::refused(
                "kv100",
                format!(
                    "viscosity at 100 °C ({:.1} cSt) must be below that at 40 °C ({:.1} cSt): oil thins as it warms",
                    Viscosity(b).cst(),
                    Viscosity(a).cst()
                ),
            ));
        }
    }
    let visc_reading = match (visc_value, visc_temp) {
        (Some(v), Some(t)) => Some(ViscReading {
            visc: Viscosity(v),
            at: Temperature(t),
        }),
        (Some(_), None) if entered.get("visc_temp").is_empty() => {
            p.push(Problem::refused(
                "visc_temp",
                "give the temperature the field viscosity was read at",
            ));
            None
        }
        (None, Some(_)) if entered.get("visc_value").is_empty() => {
            p.push(Problem::refused(
                "visc_value",
                "give the viscosity read at that temperature",
            ));
            None
        }
        _ => None,
    };
    let mut counts = [None; 3];
    for (i, key) in ["count_4", "count_6", "count_14"].iter().enumerate() {
        match read_number(entered.get(key)) {
            Ok(Some(v)) if v < 0.0 => {
                p.push(Problem::refused(key, "a particle count cannot be negative"))
            }
            Ok(v) => counts[i] = v,
            Err(e) => p.push(Problem::refused(key, e)),
        }
    }
    let sizes = ["4", "6", "14"];
    for i in 0..3 {
        for j in i + 1..3 {
            if let (Some(a), Some(b)) = (counts[i], counts[j]) {
                if b > a {
                    p.push(Problem::refused(
                        ["count_4", "count_6", "count_14"][j],
                        format!(
                            "counts cannot rise with particle size: ≥{} µm {b} per mL is more than ≥{} µm {a} per mL \
                             (every particle ≥{} µm is also ≥{} µm)",
                            sizes[j], sizes[i], sizes[j], sizes[i]
                        ),
                    ));
                }
            }
        }
    }
    let code_text = entered.get("iso4406");
    let iso4406 = if code_text.is_empty() {
        None
    } else {
        match code_text.parse::<Iso4406Code>() {
            Ok(c) => Some(c.to_string()),
            Err(e) => {
                p.push(Problem::refused("iso4406", e.to_string()));
                None
            }
        }
    };
    let plain = |key: &str, p: &mut Vec<Problem>| -> Option<f64> {
        match read_number(entered.get(key)) {
            Ok(Some(v)) if v < 0.0 => {
                p.push(Problem::refused(key, "cannot be negative"));
                None
            }
            Ok(v) => v,
            Err(e) => {
                p.push(Problem::refused(key, e));
                None
            }
        }
    };
    let water = plain("water_ppm", &mut p);
    let acid = plain("acid", &mut p);
    let by = entered.get("by").to_string();
    let any = kv40.is_some()
        || kv100.is_some()
        || visc_reading.is_some()
        || counts.iter().any(Option::is_some)
        || iso4406.is_some()
        || water.is_some()
        || acid.is_some();
    if !any && !p.iter().any(|x| x.verdict == Verdict::Refused) {
        p.push(Problem::refused(
            "",
            "no result entered yet: give a viscosity, counts or a code, water or acid",
        ));
    }
    if h.samples.iter().any(|s| s.sampled_at == at) {
        p.push(Problem::refused(
            "sampled_at",
            format!(
                "{} already has a sample at {}; correct that one on the unit page",
                h.unit.tag,
                show_time(at)
            ),
        ));
    }
    p.sort_by_key(|x| std::cmp::Reverse(x.verdict));
    if p.iter().any(|x| x.verdict == Verdict::Refused) {
        return Ok(SampleReview {
            sample: None,
            problems: p,
            preview: None,
        });
    }
    let sample = Sample {
        id: 0,
        unit_id,
        sampled_at: at,
        kv40: kv40.map(Viscosity),
        kv100: kv100.map(Viscosity),
        visc_reading,
        counts_per_ml: counts,
        iso4406,
        water_ppm: water,
        acid_mgkoh_g: acid,
        lab_ref: entered.get("lab_ref").to_string(),
        note: format_note(entered.get("note"), &by),
        confirmed: None,
    };
    // Far from the new oil, free water, a very high acid number: the screening's questions,
    // the same at import and in the engine.
    for sus in health::screen::sample(h.fluid.as_ref(), &sample, system) {
        let key = match sus.field {
            health::screen::Field::ViscReading => "visc_value",
            f => f.key(),
        };
        if !p.iter().any(|x| x.field == key) {
            p.push(Problem::unusual(key, sus.reason));
        }
    }
    let preview = preview_sample(store, &h, &sample, now, system)?;
    Ok(SampleReview {
        sample: Some(sample),
        problems: p,
        preview: Some(preview),
    })
}

/// The model's sample has no author field: the name goes at the front of the note.
fn format_note(note: &str, by: &str) -> String {
    match (by.trim(), note.trim()) {
        ("", n) => n.to_string(),
        (b, "") => format!("by {b}"),
        (b, n) => format!("by {b}: {n}"),
    }
}

/// Runs the health engine over the unit's history with the sample added.
fn preview_sample(
    store: &Store,
    h: &UnitHistory,
    sample: &Sample,
    now: DateTime<Utc>,
    system: UnitSystem,
) -> Result<SamplePreview, AppError> {
    const PROBE: Id = -1;
    let mut with = h.clone();
    with.samples.push(Sample {
        id: PROBE,
        ..sample.clone()
    });
    let fluids = store.fluids().map_err(store_error)?;
    let limits = Limits::resolve(&store.limits().map_err(store_error)?, Some(h.unit.id));
    let at = now.max(sample.sampled_at);
    let health = health::evaluate(&with, &fluids, &limits, at, system);
    let point = health
        .samples
        .iter()
        .find(|s| s.sample_id == PROBE)
        .cloned();
    let flags = health
        .flags
        .into_iter()
        .filter(|f| SAMPLE_FLAGS.contains(&f.kind))
        .collect();
    Ok(SamplePreview {
        point,
        target: health.indicators.iso4406_target.clone(),
        flags,
        fluid: health.fluid,
    })
}

/// A stored sample and what the unit looks like now.
#[derive(Clone, Debug, PartialEq)]
pub struct SavedSample {
    pub sample_id: Id,
    pub status: UnitStatus,
}

/// Saves a sample: refused values stop it; unusual ones stop it unless `confirmed`.
pub fn save_sample(
    shop: &Shop,
    unit_id: Id,
    entered: &Entered,
    confirmed: bool,
    now: DateTime<Utc>,
) -> Result<SaveOutcome<SavedSample>, AppError> {
    let review = review_sample(shop, unit_id, entered, now)?;
    let Some(mut sample) = review.sample else {
        return Ok(SaveOutcome::Refused(review.problems));
    };
    if !review.problems.is_empty() && !confirmed {
        return Ok(SaveOutcome::NeedsConfirmation(review.problems));
    }
    if !review.problems.is_empty() {
        // Asked and confirmed: stored as confirmed by whoever entered it, now.
        let by = entered.get("by").trim();
        sample.confirmed = Some(Confirmation {
            by: if by.is_empty() {
                "sample entry, no name given".to_string()
            } else {
                by.to_string()
            },
            at: now.trunc_subsecs(0),
        });
    }
    let store = shop.store();
    let id = store.insert_sample(&sample).map_err(store_error)?;
    let unit = unit_of(store, unit_id)?;
    let status = unit_status_in(store, &unit.tag, Some(now.max(sample.sampled_at)))?;
    Ok(SaveOutcome::Saved(SavedSample {
        sample_id: id,
        status,
    }))
}

// ---------------------------------------------------------------------------------------------
// Unit page, acknowledgement, work done

/// Everything a unit page shows: the evaluation and the stored records.
#[derive(Clone, Debug, PartialEq)]
pub struct UnitView {
    pub status: UnitStatus,
    pub history: UnitHistory,
    pub fluids: Vec<Fluid>,
    pub system: UnitSystem,
}

pub fn unit_view(shop: &Shop, unit_id: Id, now: DateTime<Utc>) -> Result<UnitView, AppError> {
    let store = shop.store();
    let history = history_of(store, unit_id)?;
    let status = unit_status_in(store, &history.unit.tag, Some(now))?;
    Ok(UnitView {
        status,
        history,
        fluids: store.fluids().map_err(store_error)?,
        system: settings(store)?.unit_system,
    })
}

/// The fleet's due list now: overdue, due soon, later.
pub fn due_list(shop: &Shop) -> Result<work::DueList, AppError> {
    work::due_list_in(shop.store(), None, None)
}

/// The due list of a fleet status the caller has evaluated already.
pub fn due_list_of(
    shop: &Shop,
    fleet: &super::status::FleetStatus,
) -> Result<work::DueList, AppError> {
    work::due_list_from(shop.store(), fleet, None)
}

/// Whether the shop's data may have changed since `stamp` was taken (by this program or any
/// other); `None` before the first stamp. Lets the app keep one evaluation per change.
pub fn shop_stamp(shop: &Shop) -> Result<(i64, u64), AppError> {
    shop.store()
        .change_stamp()
        .map_err(super::status::store_error)
}

/// The "changed" signal for a window that shows the shop: whether anyone (this program, another
/// window, another PC) may have saved since `last` was taken, updating `last`. On a server the
/// server announces each save, so a poll while nothing changed reads no table; on a file the
/// stamp is read each time. The first call (`last` is `None`) says true.
pub fn shop_changed(shop: &Shop, last: &mut Option<(i64, u64)>) -> Result<bool, AppError> {
    let announced = shop
        .store()
        .changes_announced()
        .map_err(super::status::store_error)?;
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

// ---------------------------------------------------------------------------------------------
// Corrections of stored readings

/// Which table a stored reading is in.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Reading {
    Check,
    Sample,
    Event,
}

fn q_text(kind: Kind, si: Option<f64>, system: UnitSystem) -> String {
    si.and_then(|v| quantity::format_in(Quantity::from_si(kind, v), kind.display_unit(system)))
        .map(|s| s.rsplit_once(' ').map(|(n, _)| n.to_string()).unwrap_or(s))
        .unwrap_or_default()
}

fn n_text(v: Option<f64>) -> String {
    v.map(|x| format!("{x}")).unwrap_or_default()
}

/// The fields of a stored reading, filled with its values, for correcting it.
pub fn reading_fields(shop: &Shop, which: Reading, id: Id) -> Result<Vec<Field>, AppError> {
    let store = shop.store();
    let system = settings(store)?.unit_system;
    let missing = || AppError::BadInput(format!("that reading ({id}) is no longer stored"));
    Ok(match which {
        Reading::Check => {
            let c = store.check(id).map_err(store_error)?.ok_or_else(missing)?;
            vec![
                Field::quantity(
                    "reservoir_temp",
                    "Reservoir temp.",
                    Kind::Temperature,
                    system,
                )
                .with_value(q_text(
                    Kind::Temperature,
                    c.reservoir_temp.map(|t| t.si()),
                    system,
                )),
                Field::quantity("ambient_temp", "Air temp.", Kind::Temperature, system).with_value(
                    q_text(Kind::Temperature, c.ambient_temp.map(|t| t.si()), system),
                ),
                Field::quantity("pressure", "Pressure", Kind::Pressure, system).with_value(q_text(
                    Kind::Pressure,
                    c.pressure.map(|p| p.si()),
                    system,
                )),
                Field::quantity("stroke_time", "Timed stroke", Kind::Time, system)
                    .with_value(n_text(c.stroke_time.map(|s| s.si()))),
                Field::text("oil_level", "Oil level")
                    .with_value(c.oil_level.map(|v| v.to_string()).unwrap_or_default()),
                Field::text("filter", "Filter")
                    .with_value(c.filter.map(|v| v.to_string()).unwrap_or_default()),
                Field {
                    unit: "h".into(),
                    ..Field::text("hours", "Hour meter")
                }
                .with_value(n_text(c.hours)),
                Field::quantity("case_drain", "Case drain", Kind::Flow, system).with_value(q_text(
                    Kind::Flow,
                    c.case_drain.map(|q| q.si()),
                    system,
                )),
                Field::text("note", "Note").with_value(c.note),
            ]
        }
        Reading::Sample => {
            let s = store.sample(id).map_err(store_error)?.ok_or_else(missing)?;
            let cst = |v: Option<Viscosity>| {
                v.map(|v| format!("{}", crate::store::columns::tidy(v.cst())))
                    .unwrap_or_default()
            };
            vec![
                Field {
                    unit: "cSt".into(),
                    ..Field::text("kv40", "KV40")
                }
                .with_value(cst(s.kv40)),
                Field {
                    unit: "cSt".into(),
                    ..Field::text("kv100", "KV100")
                }
                .with_value(cst(s.kv100)),
                Field {
                    unit: "/mL".into(),
                    ..Field::text("count_4", "≥4 µm(c)")
                }
                .with_value(n_text(s.counts_per_ml[0])),
                Field {
                    unit: "/mL".into(),
                    ..Field::text("count_6", "≥6 µm(c)")
                }
                .with_value(n_text(s.counts_per_ml[1])),
                Field {
                    unit: "/mL".into(),
                    ..Field::text("count_14", "≥14 µm(c)")
                }
                .with_value(n_text(s.counts_per_ml[2])),
                Field::text("iso4406", "ISO 4406 code")
                    .with_value(s.iso4406.clone().unwrap_or_default()),
                Field {
                    unit: "ppm".into(),
                    ..Field::text("water_ppm", "Water")
                }
                .with_value(n_text(s.water_ppm)),
                Field {
                    unit: "mg KOH/g".into(),
                    ..Field::text("acid", "Acid number")
                }
                .with_value(n_text(s.acid_mgkoh_g)),
                Field::text("lab_ref", "Lab reference").with_value(s.lab_ref),
                Field::text("note", "Note").with_value(s.note),
            ]
        }
        Reading::Event => {
            let e = store.event(id).map_err(store_error)?.ok_or_else(missing)?;
            let kinds: Vec<&str> = EventKind::ALL.iter().map(|k| k.as_str()).collect();
            vec![
                Field::choice("kind", "What was done", &kinds, e.kind.as_str()),
                Field::quantity("volume", "Fluid volume", Kind::Volume, system).with_value(q_text(
                    Kind::Volume,
                    e.volume.map(|v| v.si()),
                    system,
                )),
                Field::text("by", "Done by").with_value(e.by),
                Field::text("note", "Note").with_value(e.note),
            ]
        }
    })
}

/// Where a stored reading stands in the edit history, for a form that shows it to keep and hand
/// to [`edit_reading_seen`] when it saves.
pub fn reading_mark(shop: &Shop, which: Reading, id: Id) -> Result<i64, AppError> {
    shop.store()
        .edit_mark(reading_table(which), id)
        .map_err(store_error)
}

fn reading_table(which: Reading) -> &'static str {
    match which {
        Reading::Check => "checks",
        Reading::Sample => "samples",
        Reading::Event => "events",
    }
}

/// [`edit_reading`] for a form opened at edit mark `seen` ([`reading_mark`]): if someone else
/// corrected the reading since, nothing is saved and the error says who and when.
pub fn edit_reading_seen(
    shop: &Shop,
    which: Reading,
    id: Id,
    seen: i64,
    entered: &Entered,
    by: &str,
    reason: &str,
) -> Result<SaveOutcome<()>, AppError> {
    let mut out = None;
    let result = shop
        .store()
        .correcting(reading_table(which), id, seen, |_| {
            out = Some(edit_reading(shop, which, id, entered, by, reason));
            Ok(())
        });
    match (result, out) {
        (Err(e), _) => Err(store_error(e)),
        (Ok(()), Some(r)) => r,
        (Ok(()), None) => Err(AppError::Failed("the correction did not run".into())),
    }
}

/// Corrects a stored reading; the old value goes to the edit history with who and why.
pub fn edit_reading(
    shop: &Shop,
    which: Reading,
    id: Id,
    entered: &Entered,
    by: &str,
    reason: &str,
) -> Result<SaveOutcome<()>, AppError> {
    let by = need("Changed by", by)?;
    let reason = reason.trim();
    if reason.is_empty() {
        return Ok(SaveOutcome::Refused(vec![Problem::refused(
            "reason",
            "say why the reading is changed; it is kept with the change",
        )]));
    }
    let store = shop.store();
    let system = settings(store)?.unit_system;
    let missing = || AppError::BadInput(format!("that reading ({id}) is no longer stored"));
    match which {
        Reading::Check => {
            let c = store.check(id).map_err(store_error)?.ok_or_else(missing)?;
            let unit = unit_of(store, c.unit_id)?;
            let earlier = store
                .checks_for_unit(c.unit_id, None)
                .map_err(store_error)?;
            let events = store
                .events_for_unit(c.unit_id, None)
                .map_err(store_error)?;
            let review = judge_check(&unit, &earlier, &events, entered, c, system);
            let refused: Vec<Problem> = review
                .problems
                .iter()
                .filter(|p| p.verdict == Verdict::Refused)
                .cloned()
                .collect();
            match review.check {
                Some(new) if refused.is_empty() => {
                    store.update_check(&new, &by, reason).map_err(store_error)?
                }
                _ => return Ok(SaveOutcome::Refused(refused)),
            }
        }
        Reading::Sample => {
            let s = store.sample(id).map_err(store_error)?.ok_or_else(missing)?;
            let mut e = entered.clone();
            e.set(
                "sampled_at",
                &s.sampled_at
                    .with_timezone(&Local)
                    .format("%Y-%m-%d %H:%M:%S")
                    .to_string(),
            );
            // Judge as a new sample of the same unit, without the stored one clashing.
            let mut problems = Vec::new();
            let new = judge_sample_edit(&s, &e, system, &mut problems);
            match new {
                Some(n) if problems.iter().all(|p| p.verdict != Verdict::Refused) => {
                    store.update_sample(&n, &by, reason).map_err(store_error)?
                }
                _ => return Ok(SaveOutcome::Refused(problems)),
            }
        }
        Reading::Event => {
            let ev = store.event(id).map_err(store_error)?.ok_or_else(missing)?;
            let kind: EventKind = match entered.get("kind").parse() {
                Ok(k) => k,
                Err(e) => return Ok(SaveOutcome::Refused(vec![Problem::refused("kind", e)])),
            };
            let volume = match read_quantity(entered.get("volume"), Kind::Volume, system) {
                Ok(Some(v)) if v <= 0.0 => {
                    return Ok(SaveOutcome::Refused(vec![Problem::refused(
                        "volume",
                        "a volume must be more than zero",
                    )]))
                }
                Ok(v) => v.map(Volume),
                Err(e) => return Ok(SaveOutcome::Refused(vec![Problem::refused("volume", e)])),
            };
            let new = Event {
                kind,
                volume,
                by: entered.get("by").to_string(),
                note: entered.get("note").to_string(),
                ..ev
            };
            store.update_event(&new, &by, reason).map_err(store_error)?;
        }
    }
    Ok(SaveOutcome::Saved(()))
}

fn judge_sample_edit(
    old: &Sample,
    e: &Entered,
    system: UnitSystem,
    p: &mut Vec<Problem>,
) -> Option<Sample> {
    let visc = |key: &str, p: &mut Vec<Problem>| match read_quantity(
        e.get(key),
        Kind::Viscosity,
        system,
    ) {
        Ok(Some(v)) if v <= 0.0 => {
            p.push(Problem::refused(key, "a viscosity must be more than zero"));
            None
        }
        Ok(v) => v.map(Viscosity),
        Err(m) => {
            p.push(Problem::refused(key, m));
            None
        }
    };
    let kv40 = visc("kv40", p);
    let kv100 = visc("kv100", p);
    if let (Some(a), Some(b)) = (kv40, kv100) {
        if b.si() >= a.si() {
            p.push(Problem::refused(
                "kv100",
                "viscosity at 100 °C must be below that at 40 °C",
            ));
        }
    }
    let mut counts = [None; 3];
    for (i, key) in ["count_4", "count_6", "count_14"].iter().enumerate() {
        match read_number(e.get(key)) {
            Ok(Some(v)) if v < 0.0 => {
                p.push(Problem::refused(key, "a particle count cannot be negative"))
            }
            Ok(v) => counts[i] = v,
            Err(m) => p.push(Problem::refused(key, m)),
        }
    }
    for i in 0..3 {
        for j in i + 1..3 {
            if let (Some(a), Some(b)) = (counts[i], counts[j]) {
                if b > a {
                    p.push(Problem::refused(
                        ["count_4", "count_6", "count_14"][j],
                        "counts cannot rise with particle size",
                    ));
                }
            }
        }
    }
    let code = e.get("iso4406");
    let iso4406 = if code.is_empty() {
        None
    } else {
        match code.parse::<Iso4406Code>() {
            Ok(c) => Some(c.to_string()),
            Err(m) => {
                p.push(Problem::refused("iso4406", m.to_string()));
                None
            }
        }
    };
    let plain = |key: &str, p: &mut Vec<Problem>| match read_number(e.get(key)) {
        Ok(Some(v)) if v < 0.0 => {
            p.push(Problem::refused(key, "cannot be negative"));
            None
        }
        Ok(v) => v,
        Err(m) => {
            p.push(Problem::refused(key, m));
            None
        }
    };
    let water = plain("water_ppm", p);
    let acid = plain("acid", p);
    Some(Sample {
        kv40,
        kv100,
        counts_per_ml: counts,
        iso4406,
        water_ppm: water,
        acid_mgkoh_g: acid,
        lab_ref: e.get("lab_ref").to_string(),
        note: e.get("note").to_string(),
        ..old.clone()
    })
}

/// Deletes a stored reading; the old value goes to the edit history with who and why.
pub fn delete_reading(
    shop: &Shop,
    which: Reading,
    id: Id,
    by: &str,
    reason: &str,
) -> Result<(), AppError> {
    let by = need("Changed by", by)?;
    let reason = reason.trim();
    if reason.is_empty() {
        return Err(AppError::BadInput(
            "say why the reading is deleted; it is kept with the deletion".into(),
        ));
    }
    let store = shop.store();
    match which {
        Reading::Check => store.delete_check(id, &by, reason),
        Reading::Sample => store.delete_sample(id, &by, reason),
        Reading::Event => store.delete_event(id, &by, reason),
    }
    .map_err(store_error)
}

// ---------------------------------------------------------------------------------------------
// Setup

/// The shop's settings.
pub fn shop_settings(shop: &Shop) -> Result<Settings, AppError> {
    settings(shop.store())
}

/// A time zone must be one the time-zone database knows (IANA names such as
/// `America/New_York`; `UTC` too), so that times can be read and shown in it.
pub fn check_time_zone(zone: &str) -> Result<(), AppError> {
    zone.trim()
        .parse::<chrono_tz::Tz>()
        .map(|_| ())
        .map_err(|_| {
            AppError::BadInput(format!(
                "time zone `{}` is not known; give an IANA name such as America/New_York, \
             Europe/Berlin or UTC",
                zone.trim()
            ))
        })
}

/// Changes the shop's name, unit system and time zone. A blank reason is filled in with what
/// changed.
pub fn save_settings(shop: &Shop, new: &Settings, by: &str, reason: &str) -> Result<(), AppError> {
    let by = need("Changed by", by)?;
    if new.shop_name.trim().is_empty() {
        return Err(AppError::BadInput("the shop needs a name".into()));
    }
    check_time_zone(&new.time_zone)?;
    let store = shop.store();
    let old = settings(store)?;
    if &old == new {
        return Ok(());
    }
    let reason = if reason.trim().is_empty() {
        let mut what = Vec::new();
        if old.shop_name != new.shop_name {
            what.push("shop name");
        }
        if old.unit_system != new.unit_system {
            what.push("unit system");
        }
        if old.time_zone != new.time_zone {
            what.push("time zone");
        }
        format!("changed {} in setup", what.join(", "))
    } else {
        reason.trim().to_string()
    };
    store.set_settings(new, &by, &reason).map_err(store_error)
}

/// Which kind of setup record.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Record {
    Machine,
    Unit,
    Fluid,
}

/// The records of one kind: id and the line shown in the list.
pub fn records(shop: &Shop, kind: Record) -> Result<Vec<(Id, String)>, AppError> {
    let store = shop.store();
    Ok(match kind {
        Record::Machine => store
            .machines()
            .map_err(store_error)?
            .into_iter()
            .map(|m| {
                (
                    m.id,
                    format!(
                        "{} {}{}",
                        m.tag,
                        m.name,
                        if m.archived { " (archived)" } else { "" }
                    ),
                )
            })
            .collect(),
        Record::Unit => {
            let machines = store.machines().map_err(store_error)?;
            store
                .units()
                .map_err(store_error)?
                .into_iter()
                .map(|u| {
                    let m = machines
                        .iter()
                        .find(|m| m.id == u.machine_id)
                        .map(|m| m.tag.as_str())
                        .unwrap_or("?");
                    (
                        u.id,
                        format!(
                            "{} on {}{}",
                            u.tag,
                            m,
                            if u.archived { " (archived)" } else { "" }
                        ),
                    )
                })
                .collect()
        }
        Record::Fluid => store
            .fluids()
            .map_err(store_error)?
            .into_iter()
            .map(|f| {
                (
                    f.id,
                    format!(
                        "{}{}",
                        f.name,
                        f.iso_vg.map(|v| format!(" (VG {v})")).unwrap_or_default()
                    ),
                )
            })
            .collect(),
    })
}

const NO_FLUID: &str = "(none)";
const YES_NO: [&str; 2] = ["no", "yes"];

/// The fields of a setup record (`id` `None`: a new one), filled with its values.
pub fn record_fields(shop: &Shop, kind: Record, id: Option<Id>) -> Result<Vec<Field>, AppError> {
    let store = shop.store();
    let system = settings(store)?.unit_system;
    let missing = || AppError::BadInput("that record is no longer stored".to_string());
    Ok(match kind {
        Record::Machine => {
            let m = match id {
                Some(id) => store
                    .machine(id)
                    .map_err(store_error)?
                    .ok_or_else(missing)?,
                None => Machine {
                    id: 0,
                    tag: String::new(),
                    name: String::new(),
                    kind: "press".into(),
                    route_order: store
                        .machines()
                        .map_err(store_error)?
                        .iter()
                        .map(|m| m.route_order)
                        .max()
                        .unwrap_or(0)
                        + 10,
                    notes: String::new(),
                    archived: false,
                },
            };
            vec![
                Field::text("tag", "Tag")
                    .with_value(m.tag)
                    .with_placeholder("e.g. PR-07"),
                Field::text("name", "Name").with_value(m.name),
                Field::text("kind", "Kind")
                    .with_value(m.kind)
                    .with_hint("press, press brake, …"),
                Field::text("route_order", "Route order").with_value(m.route_order.to_string()),
                Field::text("notes", "Notes").with_value(m.notes),
                Field::choice(
                    "archived",
                    "Archived",
                    &YES_NO,
                    YES_NO[usize::from(m.archived)],
                ),
            ]
        }
        Record::Unit => {
            let machines = store.machines().map_err(store_error)?;
            let fluids = store.fluids().map_err(store_error)?;
            let u = match id {
                Some(id) => store.unit(id).map_err(store_error)?.ok_or_else(missing)?,
                None => Unit {
                    id: 0,
                    machine_id: machines.first().map(|m| m.id).unwrap_or(0),
                    tag: String::new(),
                    pump_kind: PumpKind::Gear,
                    rated_flow: None,
                    relief: None,
                    reservoir: None,
                    sensitive_component: SensitiveComponent::Cylinder,
                    fluid_id: None,
                    stroke: None,
                    route_order: store
                        .units()
                        .map_err(store_error)?
                        .iter()
                        .map(|u| u.route_order)
                        .max()
                        .unwrap_or(0)
                        + 10,
                    archived: false,
                },
            };
            let machine_tags: Vec<&str> = machines.iter().map(|m| m.tag.as_str()).collect();
            let mtag = machines
                .iter()
                .find(|m| m.id == u.machine_id)
                .map(|m| m.tag.clone())
                .unwrap_or_default();
            let mut fluid_names: Vec<&str> = vec![NO_FLUID];
            fluid_names.extend(fluids.iter().map(|f| f.name.as_str()));
            let fname = u
                .fluid_id
                .and_then(|id| fluids.iter().find(|f| f.id == id))
                .map(|f| f.name.clone())
                .unwrap_or(NO_FLUID.into());
            let pumps: Vec<&str> = PumpKind::ALL.iter().map(|k| k.as_str()).collect();
            let comps: Vec<&str> = SensitiveComponent::ALL.iter().map(|k| k.as_str()).collect();
            let dirs: Vec<&str> = StrokeDirection::ALL.iter().map(|k| k.as_str()).collect();
            let s = u.stroke;
            vec![
                Field::choice("machine", "Machine", &machine_tags, &mtag),
                Field::text("tag", "Unit tag")
                    .with_value(u.tag)
                    .with_placeholder("e.g. PR-07-A"),
                Field::choice("pump_kind", "Pump", &pumps, u.pump_kind.as_str()),
                Field::quantity("rated_flow", "Rated pump flow", Kind::Flow, system)
                    .with_value(q_text(Kind::Flow, u.rated_flow.map(|q| q.si()), system)),
                Field::quantity("relief", "Relief setting", Kind::Pressure, system)
                    .with_value(q_text(Kind::Pressure, u.relief.map(|p| p.si()), system)),
                Field::quantity("reservoir", "Reservoir volume", Kind::Volume, system)
                    .with_value(q_text(Kind::Volume, u.reservoir.map(|v| v.si()), system)),
                Field::choice(
                    "sensitive",
                    "Most sensitive component",
                    &comps,
                    u.sensitive_component.as_str(),
                ),
                Field::choice("fluid", "Fluid in service", &fluid_names, &fname),
                Field::quantity("bore", "Timed stroke: bore", Kind::Length, system)
                    .with_value(q_text(Kind::Length, s.map(|s| s.bore.si()), system)),
                Field::quantity("rod", "Timed stroke: rod", Kind::Length, system)
                    .with_value(q_text(
                        Kind::Length,
                        s.and_then(|s| s.rod).map(|r| r.si()),
                        system,
                    ))
                    .with_hint("needed to retract"),
                Field::quantity("length", "Timed stroke: length", Kind::Length, system)
                    .with_value(q_text(Kind::Length, s.map(|s| s.length.si()), system)),
                Field::choice(
                    "direction",
                    "Timed stroke: direction",
                    &dirs,
                    s.map(|s| s.direction)
                        .unwrap_or(StrokeDirection::Extend)
                        .as_str(),
                ),
                Field::text("route_order", "Route order").with_value(u.route_order.to_string()),
                Field::choice(
                    "archived",
                    "Archived",
                    &YES_NO,
                    YES_NO[usize::from(u.archived)],
                ),
            ]
        }
        Record::Fluid => {
            let f = match id {
                Some(id) => store.fluid(id).map_err(store_error)?.ok_or_else(missing)?,
                None => Fluid {
                    id: 0,
                    name: String::new(),
                    iso_vg: None,
                    kv40_new: None,
                    kv100_new: None,
                    acid_new_mgkoh_g: None,
                    base_type: "mineral".into(),
                },
            };
            let cst = |v: Option<Viscosity>| {
                v.map(|v| format!("{}", crate::store::columns::tidy(v.cst())))
                    .unwrap_or_default()
            };
            vec![
                Field::text("name", "Name").with_value(f.name),
                Field::text("iso_vg", "ISO VG")
                    .with_value(f.iso_vg.map(|v| v.to_string()).unwrap_or_default())
                    .with_hint("e.g. 46"),
                Field {
                    unit: "cSt".into(),
                    ..Field::text("kv40", "KV40 of new oil")
                }
                .with_value(cst(f.kv40_new)),
                Field {
                    unit: "cSt".into(),
                    ..Field::text("kv100", "KV100 of new oil")
                }
                .with_value(cst(f.kv100_new)),
                Field {
                    unit: "mg KOH/g".into(),
                    ..Field::text("acid", "Acid number of new oil")
                }
                .with_value(n_text(f.acid_new_mgkoh_g)),
                Field::text("base_type", "Base type")
                    .with_value(f.base_type)
                    .with_hint("mineral, ester, …"),
            ]
        }
    })
}

fn choice_of<T: std::str::FromStr<Err = String>>(
    key: &str,
    e: &Entered,
    p: &mut Vec<Problem>,
) -> Option<T> {
    match e.get(key).parse::<T>() {
        Ok(v) => Some(v),
        Err(m) => {
            p.push(Problem::refused(key, m));
            None
        }
    }
}

/// Adds (`id` `None`) or changes a setup record. Changing one needs who and why.
pub fn save_record(
    shop: &Shop,
    kind: Record,
    id: Option<Id>,
    e: &Entered,
    by: &str,
    reason: &str,
) -> Result<SaveOutcome<Id>, AppError> {
    let store = shop.store();
    let system = settings(store)?.unit_system;
    let mut p = Vec::new();
    if id.is_some() {
        if by.trim().is_empty() {
            p.push(Problem::refused(
                "by",
                "Changed by: give a name or initials",
            ));
        }
        if reason.trim().is_empty() {
            p.push(Problem::refused(
                "reason",
                "Reason: say why the record is changed",
            ));
        }
    }
    let text = |key: &str, label: &str, p: &mut Vec<Problem>| -> String {
        let t = e.get(key).to_string();
        if t.is_empty() {
            p.push(Problem::refused(key, format!("{label} is needed")));
        }
        t
    };
    let int = |key: &str, p: &mut Vec<Problem>| -> i64 {
        match e.get(key).parse::<i64>() {
            Ok(v) => v,
            Err(_) => {
                p.push(Problem::refused(key, "a whole number, e.g. 10"));
                0
            }
        }
    };
    let q = |key: &str, kind: Kind, p: &mut Vec<Problem>| -> Option<f64> {
        match read_quantity(e.get(key), kind, system) {
            Ok(Some(v)) if v <= 0.0 => {
                p.push(Problem::refused(key, "must be more than zero"));
                None
            }
            Ok(v) => v,
            Err(m) => {
                p.push(Problem::refused(key, m));
                None
            }
        }
    };
    let archived = e.get("archived") == "yes";
    let by_t = by.trim();
    let reason_t = reason.trim();
    let result: Result<Id, crate::store::StoreError> = match kind {
        Record::Machine => {
            let m = Machine {
                id: id.unwrap_or(0),
                tag: text("tag", "a tag", &mut p),
                name: e.get("name").to_string(),
                kind: e.get("kind").to_string(),
                route_order: int("route_order", &mut p),
                notes: e.get("notes").to_string(),
                archived,
            };
            if !p.is_empty() {
                return Ok(SaveOutcome::Refused(p));
            }
            match id {
                Some(id) => store.update_machine(&m, by_t, reason_t).map(|_| id),
                None => store.insert_machine(&m),
            }
        }
        Record::Unit => {
            let machine = store
                .machine_by_tag(e.get("machine"))
                .map_err(store_error)?;
            if machine.is_none() {
                p.push(Problem::refused(
                    "machine",
                    "choose the machine the unit belongs to (add machines first)",
                ));
            }
            let fluid_name = e.get("fluid");
            let fluid = if fluid_name.is_empty() || fluid_name == NO_FLUID {
                None
            } else {
                match store.fluid_by_name(fluid_name).map_err(store_error)? {
                    Some(f) => Some(f.id),
                    None => {
                        p.push(Problem::refused(
                            "fluid",
                            format!("no fluid `{fluid_name}`"),
                        ));
                        None
                    }
                }
            };
            let bore = q("bore", Kind::Length, &mut p);
            let rod = q("rod", Kind::Length, &mut p);
            let length = q("length", Kind::Length, &mut p);
            let direction: Option<StrokeDirection> = choice_of("direction", e, &mut p);
            if let (Some(b), Some(r)) = (bore, rod) {
                if r >= b {
                    p.push(Problem::refused(
                        "rod",
                        "the rod must be thinner than the bore",
                    ));
                }
            }
            if direction == Some(StrokeDirection::Retract) && bore.is_some() && rod.is_none() {
                p.push(Problem::refused(
                    "rod",
                    "a retracting stroke needs the rod diameter (it fills the annulus)",
                ));
            }
            let stroke = match (bore, length) {
                (Some(b), Some(l)) => Some(TimedStroke {
                    bore: Length(b),
                    rod: rod.map(Length),
                    length: Length(l),
                    direction: direction.unwrap_or(StrokeDirection::Extend),
                }),
                (None, None) => None,
                _ => {
                    p.push(Problem::refused(
                        "length",
                        "give both the bore and the stroke length, or neither",
                    ));
                    None
                }
            };
            let u = Unit {
                id: id.unwrap_or(0),
                machine_id: machine.map(|m| m.id).unwrap_or(0),
                tag: text("tag", "a unit tag", &mut p),
                pump_kind: choice_of("pump_kind", e, &mut p).unwrap_or(PumpKind::Gear),
                rated_flow: q("rated_flow", Kind::Flow, &mut p).map(Flow),
                relief: q("relief", Kind::Pressure, &mut p).map(Pressure),
                reservoir: q("reservoir", Kind::Volume, &mut p).map(Volume),
                sensitive_component: choice_of("sensitive", e, &mut p)
                    .unwrap_or(SensitiveComponent::Cylinder),
                fluid_id: fluid,
                stroke,
                route_order: int("route_order", &mut p),
                archived,
            };
            if !p.is_empty() {
                return Ok(SaveOutcome::Refused(p));
            }
            match id {
                Some(id) => store.update_unit(&u, by_t, reason_t).map(|_| id),
                None => store.insert_unit(&u),
            }
        }
        Record::Fluid => {
            let vg = match e.get("iso_vg") {
                "" => None,
                t => match t.parse::<u32>() {
                    Ok(v) => Some(v),
                    Err(_) => {
                        p.push(Problem::refused(
                            "iso_vg",
                            "a grade is a whole number, e.g. 46",
                        ));
                        None
                    }
                },
            };
            let kv40 = q("kv40", Kind::Viscosity, &mut p);
            let kv100 = q("kv100", Kind::Viscosity, &mut p);
            if let (Some(a), Some(b)) = (kv40, kv100) {
                if b >= a {
                    p.push(Problem::refused(
                        "kv100",
                        "KV100 must be below KV40: oil thins as it warms",
                    ));
                }
            }
            let acid = match read_number(e.get("acid")) {
                Ok(Some(v)) if v < 0.0 => {
                    p.push(Problem::refused("acid", "cannot be negative"));
                    None
                }
                Ok(v) => v,
                Err(m) => {
                    p.push(Problem::refused("acid", m));
                    None
                }
            };
            let f = Fluid {
                id: id.unwrap_or(0),
                name: text("name", "a name", &mut p),
                iso_vg: vg,
                kv40_new: kv40.map(Viscosity),
                kv100_new: kv100.map(Viscosity),
                acid_new_mgkoh_g: acid,
                base_type: e.get("base_type").to_string(),
            };
            if !p.is_empty() {
                return Ok(SaveOutcome::Refused(p));
            }
            match id {
                Some(id) => store.update_fluid(&f, by_t, reason_t).map(|_| id),
                None => store.insert_fluid(&f),
            }
        }
    };
    match result {
        Ok(id) => Ok(SaveOutcome::Saved(id)),
        Err(e) => match store_error(e) {
            AppError::BadInput(m) => Ok(SaveOutcome::Refused(vec![Problem::refused("", m)])),
            other => Err(other),
        },
    }
}

/// The limits in force for the shop (`unit` `None`) or one unit, with where each comes from.
/// The limits in force, their values and units in the shop's unit system (a US shop sees the
/// temperature limits in °F); [`save_limits`] reads edits the same way.
pub fn limits(shop: &Shop, unit: Option<&str>) -> Result<work::LimitsView, AppError> {
    let system = shop_settings(shop)?.unit_system;
    let mut view = work::limits_in(shop.store(), unit)?;
    for r in &mut view.rows {
        if let Some(scale) = LimitScale::of(&r.unit, system) {
            // Two decimals: 82 °C shows as 179.6 °F, not as its binary expansion.
            let show = |v: f64| ((scale.shown)(v) * 100.0).round() / 100.0;
            r.watch = r.watch.map(show);
            r.act = r.act.map(show);
            r.unit = scale.unit.to_string();
        }
    }
    Ok(view)
}

/// How a stored limit reads in a unit system other than the one it is stored in: only the
/// temperature limits differ (°C and °F for the reservoir, K and °F steps for heat rise).
struct LimitScale {
    unit: &'static str,
    shown: fn(f64) -> f64,
    stored: fn(f64) -> f64,
}

impl LimitScale {
    fn of(stored_unit: &str, system: UnitSystem) -> Option<LimitScale> {
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

/// One limit as the setup screen edits it: blank watch and act = inherit.
#[derive(Clone, Debug, PartialEq)]
pub struct LimitEdit {
    pub key: String,
    pub watch: String,
    pub act: String,
}

/// Applies the limits a person changed for the shop (`unit` `None`) or one unit. A row with
/// both values blank removes the stored setting, so the inherited one applies again.
pub fn save_limits(
    shop: &Shop,
    unit: Option<&str>,
    edits: &[LimitEdit],
    by: &str,
) -> Result<SaveOutcome<usize>, AppError> {
    let by = need("Changed by", by)?;
    let store = shop.store();
    let system = shop_settings(shop)?.unit_system;
    let units: std::collections::HashMap<String, String> = work::limits_in(store, unit)?
        .rows
        .into_iter()
        .map(|r| (r.key, r.unit))
        .collect();
    let mut problems = Vec::new();
    let mut parsed = Vec::new();
    for e in edits {
        // Typed in the units the screen showed (`limits`), stored in the limit's own.
        let scale = units.get(&e.key).and_then(|u| LimitScale::of(u, system));
        let to_stored = |v: Option<f64>| match &scale {
            Some(s) => v.map(s.stored),
            None => v,
        };
        let w = read_number(&e.watch).map(to_stored);
        let a = read_number(&e.act).map(to_stored);
        match (w, a) {
            (Ok(w), Ok(a)) => parsed.push((e.key.as_str(), w, a)),
            (Err(m), _) | (_, Err(m)) => problems.push(Problem::refused(&e.key, m)),
        }
    }
    if !problems.is_empty() {
        return Ok(SaveOutcome::Refused(problems));
    }
    // All in one transaction would need the store's; each change is its own kept edit.
    let mut n = 0;
    for (key, w, a) in parsed {
        let r = if w.is_none() && a.is_none() {
            work::reset_limit_in(store, key, unit, &by).map(|_| ())
        } else {
            work::set_limit_in(store, key, w, a, unit, &by).map(|_| ())
        };
        match r {
            Ok(()) => n += 1,
            Err(AppError::BadInput(m)) => problems.push(Problem::refused(key, m)),
            Err(other) => return Err(other),
        }
    }
    if problems.is_empty() {
        Ok(SaveOutcome::Saved(n))
    } else {
        Ok(SaveOutcome::Refused(problems))
    }
}

// ---------------------------------------------------------------------------------------------
// Cancellation for long work

/// A flag another thread sets to ask long work to stop.
#[derive(Debug, Default)]
pub struct Cancel(AtomicBool);

impl Cancel {
    pub fn new() -> Self {
        Cancel(AtomicBool::new(false))
    }
    pub fn cancel(&self) {
        self.0.store(true, Ordering::SeqCst);
    }
    pub fn is_cancelled(&self) -> bool {
        self.0.load(Ordering::SeqCst)
    }
}

// ---------------------------------------------------------------------------------------------
// Import with preview, progress and cancel

/// A reader that reports how far through the file it is and stops when asked to: the
/// importer then fails with an I/O error, its transaction is dropped, and nothing is written.
struct Watched<'a, R> {
    inner: R,
    read: u64,
    total: u64,
    reported: u64,
    progress: &'a dyn Fn(f32),
    cancel: &'a Cancel,
}

impl<R: std::io::Read> std::io::Read for Watched<'_, R> {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        if self.cancel.is_cancelled() {
            // Not `Interrupted`: readers retry on that.
            return Err(std::io::Error::other("import cancelled"));
        }
        let n = self.inner.read(buf)?;
        self.read += n as u64;
        if self.total > 0 && (self.read - self.reported) * 100 >= self.total {
            self.reported = self.read;
            (self.progress)((self.read as f64 / self.total as f64).min(1.0) as f32);
        }
        Ok(n)
    }
}

/// The kind of a CSV file, told from its header line: the kind whose columns include every
/// name in it and whose required columns are all there.
pub fn detect_kind(header: &[String]) -> Option<FileKind> {
    let names: Vec<&str> = header
        .iter()
        .map(|h| h.trim())
        .filter(|h| !h.is_empty())
        .collect();
    let mut fits = FileKind::ALL.iter().copied().filter(|&k| {
        let specs = crate::exchange::csv_in::specs(k);
        names.iter().all(|n| specs.iter().any(|s| s.name == *n))
    });
    let first = fits.next();
    // Ambiguous (only columns common to several kinds): let the fullest match win.
    match (first, fits.next()) {
        (Some(a), None) => Some(a),
        (Some(a), Some(b)) => {
            let key = |k: FileKind| match k {
                FileKind::Checks => names.contains(&"taken_at"),
                FileKind::Samples => names.contains(&"sampled_at"),
                FileKind::Events => names.contains(&"done_at"),
                FileKind::Units => names.contains(&"machine_tag"),
            };
            [a, b].into_iter().chain(fits).find(|&k| key(k))
        }
        _ => None,
    }
}

/// The first rows of a CSV file as text, for showing before anything is imported. Reads only
/// what it shows; the real reading, with every rule, is the importer's.
fn head_rows(
    path: &std::path::Path,
    max: usize,
) -> Result<(Vec<String>, Vec<Vec<String>>), AppError> {
    let bytes =
        std::fs::read(path).map_err(|e| AppError::BadInput(format!("{}: {e}", path.display())))?;
    let text =
        String::from_utf8_lossy(bytes.strip_prefix(b"\xEF\xBB\xBF").unwrap_or(&bytes)).into_owned();
    let first = text.lines().next().unwrap_or("");
    let delimiter = [b',', b';', b'\t']
        .into_iter()
        .max_by_key(|d| first.bytes().filter(|b| b == d).count())
        .unwrap_or(b',');
    let mut r = csv::ReaderBuilder::new()
        .delimiter(delimiter)
        .has_headers(false)
        .flexible(true)
        .from_reader(text.as_bytes());
    let mut rows = r
        .records()
        .filter_map(Result::ok)
        .map(|rec| rec.iter().map(|c| c.to_string()).collect::<Vec<_>>());
    let header = rows.next().unwrap_or_default();
    Ok((
        header,
        rows.filter(|r| r.iter().any(|c| !c.trim().is_empty()))
            .take(max)
            .collect(),
    ))
}

/// What an import would do, found by importing into a scratch copy of the shop.
#[derive(Clone, Debug, PartialEq)]
pub struct ImportPreview {
    pub kind: FileKind,
    pub header: Vec<String>,
    /// The first rows, as written.
    pub rows: Vec<Vec<String>>,
    /// What importing would write; `Err` lists every bad row (then nothing can be imported).
    pub outcome: Result<ImportSummary, Vec<RowError>>,
}

/// How an import ended.
#[derive(Clone, Debug, PartialEq)]
pub enum ImportRun {
    Done(ImportSummary),
    /// Stopped on request; nothing was written.
    Cancelled,
    /// Bad rows; nothing was written.
    Refused(Vec<RowError>),
}

fn scratch_path(db: &std::path::Path) -> std::path::PathBuf {
    static N: std::sync::atomic::AtomicU64 = std::sync::atomic::AtomicU64::new(0);
    let n = N.fetch_add(1, Ordering::SeqCst);
    let stem = db
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_default();
    std::env::temp_dir().join(format!("{stem}-preview-{}-{n}.sqlite", std::process::id()))
}

fn remove_db_files(path: &std::path::Path) {
    for suffix in ["", "-wal", "-shm", "-journal"] {
        let mut p = path.as_os_str().to_owned();
        p.push(suffix);
        let _ = std::fs::remove_file(std::path::PathBuf::from(p));
    }
}

fn import_into(
    store: &mut Store,
    kind: FileKind,
    file: &std::path::Path,
    progress: &dyn Fn(f32),
    cancel: &Cancel,
) -> Result<ImportRun, AppError> {
    let f = std::fs::File::open(file)
        .map_err(|e| AppError::BadInput(format!("{}: {e}", file.display())))?;
    let total = f.metadata().map(|m| m.len()).unwrap_or(0);
    let watched = Watched {
        inner: f,
        read: 0,
        total,
        reported: 0,
        progress,
        cancel,
    };
    let label = file
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    match crate::exchange::csv_in::import_reader(store, kind, &label, watched, None) {
        Ok(mut summary) => {
            super::shop::mark_questioned(store, kind, &mut summary)?;
            progress(1.0);
            Ok(ImportRun::Done(summary))
        }
        Err(_) if cancel.is_cancelled() => Ok(ImportRun::Cancelled),
        Err(ExchangeError::Rows(rows)) => Ok(ImportRun::Refused(rows)),
        Err(ExchangeError::Store(e)) => Err(store_error(e)),
        Err(other) => Err(AppError::Failed(other.to_string())),
    }
}

/// Reads a CSV file for import without changing the shop: tells its kind from the header,
/// shows its first rows, and imports it into a scratch copy of the shop to find every bad row
/// (and what a good file would add).
pub fn preview_import(
    db: &std::path::Path,
    file: &std::path::Path,
    progress: &dyn Fn(f32),
    cancel: &Cancel,
) -> Result<Option<ImportPreview>, AppError> {
    if !file.is_file() {
        return Err(AppError::BadInput(format!(
            "{}: no such file",
            file.display()
        )));
    }
    let (header, rows) = head_rows(file, 200)?;
    let kind = detect_kind(&header).ok_or_else(|| {
        AppError::BadInput(format!(
            "cannot tell what the file holds from its header ({}); a checks, samples, events or unit register \
             file names its columns, e.g. unit_tag,taken_at,reservoir_temp_c",
            header.join(",")
        ))
    })?;
    let scratch = scratch_path(db);
    let result = (|| {
        Store::open(db, crate::store::OpenMode::MustExist)
            .and_then(|s| s.backup_to(&scratch))
            .map_err(store_error)?;
        let mut copy =
            Store::open(&scratch, crate::store::OpenMode::MustExist).map_err(store_error)?;
        import_into(&mut copy, kind, file, progress, cancel)
    })();
    remove_db_files(&scratch);
    Ok(match result? {
        ImportRun::Cancelled => None,
        ImportRun::Done(s) => Some(ImportPreview {
            kind,
            header,
            rows,
            outcome: Ok(s),
        }),
        ImportRun::Refused(e) => Some(ImportPreview {
            kind,
            header,
            rows,
            outcome: Err(e),
        }),
    })
}

/// Imports a CSV file of `kind` into the shop at `db` on a connection of its own (so it can
/// run beside the app's), reporting progress; all or nothing, and nothing when cancelled.
pub fn run_import(
    db: &std::path::Path,
    kind: FileKind,
    file: &std::path::Path,
    progress: &dyn Fn(f32),
    cancel: &Cancel,
) -> Result<ImportRun, AppError> {
    let mut store = Store::open(db, crate::store::OpenMode::MustExist).map_err(store_error)?;
    // Nothing is written into a shop that is already damaged.
    store.quick_check().map_err(store_error)?;
    import_into(&mut store, kind, file, progress, cancel)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn demo() -> (tempfile::TempDir, Shop) {
        let dir = tempfile::tempdir().unwrap();
        let shop = Shop::create_demo(&dir.path().join("shop.sqlite")).unwrap();
        (dir, shop)
    }

    fn first_unit(shop: &Shop) -> Unit {
        let id = route(shop).unwrap()[0].unit_id;
        shop.store().unit(id).unwrap().unwrap()
    }

    fn entered(pairs: &[(&str, &str)]) -> Entered {
        let mut e = Entered::new();
        for (k, v) in pairs {
            e.set(k, v);
        }
        e
    }

    #[test]
    fn a_us_shop_sees_and_sets_temperature_limits_in_fahrenheit() {
        let (_d, shop) = demo();
        let mut st = shop_settings(&shop).unwrap();
        st.unit_system = UnitSystem::Us;
        save_settings(&shop, &st, "tester", "US units").unwrap();
        let view = limits(&shop, None).unwrap();
        let row = |k: &str| view.rows.iter().find(|r| r.key == k).unwrap().clone();
        // Built-in 60 / 70 °C = 140 / 158 °F; a 5 / 10 K rise = 9 / 18 °F steps
        // (°F = °C × 9/5 + 32, NIST SP 811).
        let t = row("reservoir_temp_c");
        assert_eq!(
            (t.watch, t.act, t.unit.as_str()),
            (Some(140.0), Some(158.0), "°F")
        );
        let h = row("heat_rise_drift_k");
        assert_eq!(
            (h.watch, h.act, h.unit.as_str()),
            (Some(9.0), Some(18.0), "°F")
        );
        // Units without a US form are unchanged.
        assert_eq!(row("water_ppm").unit, "ppm");
        // 149 °F typed = 65 °C stored; a 27 °F-step act = 15 K.
        let edits = [
            LimitEdit {
                key: "reservoir_temp_c".into(),
                watch: "149".into(),
                act: "158".into(),
            },
            LimitEdit {
                key: "heat_rise_drift_k".into(),
                watch: "9".into(),
                act: "27".into(),
            },
        ];
        assert_eq!(
            save_limits(&shop, None, &edits, "tester").unwrap(),
            SaveOutcome::Saved(2)
        );
        let stored = work::limits_in(shop.store(), None).unwrap();
        let srow = |k: &str| stored.rows.iter().find(|r| r.key == k).unwrap().clone();
        let t = srow("reservoir_temp_c");
        assert!((t.watch.unwrap() - 65.0).abs() < 1e-9 && (t.act.unwrap() - 70.0).abs() < 1e-9);
        let h = srow("heat_rise_drift_k");
        assert!((h.watch.unwrap() - 5.0).abs() < 1e-9 && (h.act.unwrap() - 15.0).abs() < 1e-9);
    }

    #[test]
    fn bare_numbers_are_read_in_the_shop_units_and_units_win() {
        // 140 °F = 60 °C and 2500 psi = 2500 × 6894.757293168 Pa (NIST SP 811).
        let c =
            |t: &str, s| Temperature(read_quantity(t, Kind::Temperature, s).unwrap().unwrap()).c();
        assert!((c("62", UnitSystem::Metric) - 62.0).abs() < 1e-9);
        assert!((c("140", UnitSystem::Us) - 60.0).abs() < 1e-9);
        assert!((c("140F", UnitSystem::Metric) - 60.0).abs() < 1e-9);
        let p = read_quantity("2500psi", Kind::Pressure, UnitSystem::Metric)
            .unwrap()
            .unwrap();
        assert!((p - 2500.0 * 6_894.757_293_168).abs() < 1e-6);
        assert_eq!(
            read_quantity("  ", Kind::Pressure, UnitSystem::Metric),
            Ok(None)
        );
        assert!(read_quantity("12 bananas", Kind::Pressure, UnitSystem::Metric).is_err());
    }

    #[test]
    fn a_time_in_the_future_is_refused() {
        let now: DateTime<Utc> = "2025-03-04T12:00:00Z".parse().unwrap();
        assert_eq!(read_when("", now), Ok(now));
        assert!(read_when("2031-01-01 08:00", now)
            .unwrap_err()
            .contains("future"));
        assert!(read_when("03/04/2025", now).is_err());
    }

    #[test]
    fn an_impossible_temperature_is_refused_and_nothing_is_written() {
        let (_d, shop) = demo();
        let u = first_unit(&shop);
        let n = shop.store().checks_for_unit(u.id, None).unwrap().len();
        // Design §10: above 150 °C is impossible for a reservoir.
        let out = save_check(
            &shop,
            u.id,
            &entered(&[("reservoir_temp", "151")]),
            "",
            "T. T",
            true,
            Utc::now(),
        )
        .unwrap();
        let SaveOutcome::Refused(p) = out else {
            panic!("refused expected: {out:?}")
        };
        assert_eq!(p[0].field, "reservoir_temp");
        assert!(p[0].message.contains("150"), "{}", p[0].message);
        assert_eq!(shop.store().checks_for_unit(u.id, None).unwrap().len(), n);
        // A negative pressure and a zero stroke time are refused too.
        let e = entered(&[("pressure", "-3"), ("stroke_time", "0")]);
        let SaveOutcome::Refused(p) =
            save_check(&shop, u.id, &e, "", "T. T", true, Utc::now()).unwrap()
        else {
            panic!()
        };
        assert!(
            p.iter().any(|x| x.field == "pressure") && p.iter().any(|x| x.field == "stroke_time")
        );
        // Who took it is part of the record.
        let out = save_check(
            &shop,
            u.id,
            &entered(&[("reservoir_temp", "45")]),
            "",
            " ",
            true,
            Utc::now(),
        )
        .unwrap();
        assert!(matches!(out, SaveOutcome::Refused(ref p) if p.iter().any(|x| x.field == "by")));
    }

    #[test]
    fn an_unusual_stroke_time_asks_first_and_is_kept_when_confirmed() {
        let (_d, shop) = demo();
        let u = first_unit(&shop);
        let checks = shop.store().checks_for_unit(u.id, None).unwrap();
        let last = checks
            .iter()
            .rev()
            .find_map(|c| c.stroke_time)
            .unwrap()
            .si();
        let e = entered(&[("stroke_time", &format!("{:.2}", last * 2.0))]);
        let out = save_check(&shop, u.id, &e, "", "T. T", false, Utc::now()).unwrap();
        let SaveOutcome::NeedsConfirmation(p) = out else {
            panic!("{out:?}")
        };
        assert_eq!(p[0].field, "stroke_time");
        assert_eq!(
            shop.store().checks_for_unit(u.id, None).unwrap().len(),
            checks.len()
        );
        let out = save_check(&shop, u.id, &e, "", "T. T", true, Utc::now()).unwrap();
        let SaveOutcome::Saved(s) = out else {
            panic!("{out:?}")
        };
        let stored = shop.store().check(s.check_id).unwrap().unwrap();
        assert!(
            (stored.stroke_time.unwrap().si() - (last * 2.0 * 100.0).round() / 100.0).abs() < 1e-9
        );
        assert_eq!(stored.by, "T. T");
        // Asked and kept: stored as confirmed by the technician at the moment of saving.
        let k = stored
            .confirmed
            .expect("a confirmed unusual reading is stored as confirmed");
        assert_eq!(k.by, "T. T");
        assert!(k.at <= Utc::now() && k.at > Utc::now() - Duration::minutes(5));
        // A reading nobody questioned is stored without a confirmation: the usual stroke time.
        let plain = entered(&[("stroke_time", &format!("{last:.2}"))]);
        let later = Utc::now() + Duration::seconds(1);
        let out = save_check(&shop, u.id, &plain, "", "T. T", false, later).unwrap();
        let SaveOutcome::Saved(s) = out else {
            panic!("the unit's usual stroke time is not unusual: {out:?}")
        };
        assert_eq!(
            shop.store().check(s.check_id).unwrap().unwrap().confirmed,
            None
        );
    }

    #[test]
    fn a_sample_preview_derives_the_code_and_refuses_rising_counts() {
        let (_d, shop) = demo();
        let u = first_unit(&shop);
        // ISO 4406 Table 1: 2400/mL is in 1300–2500 → 18; 610 in 320–640 → 16; 45 in 40–80 → 13.
        let e = entered(&[
            ("count_4", "2400"),
            ("count_6", "610"),
            ("count_14", "45"),
            ("by", "T. T"),
        ]);
        let r = review_sample(&shop, u.id, &e, Utc::now()).unwrap();
        assert!(
            r.problems.iter().all(|p| p.verdict != Verdict::Refused),
            "{:?}",
            r.problems
        );
        let code = r.preview.unwrap().point.unwrap().code.unwrap();
        assert_eq!(code.to_string(), "18/16/13");
        // More particles ≥6 µm than ≥4 µm cannot be: every one ≥6 µm is also ≥4 µm.
        let e = entered(&[("count_4", "600"), ("count_6", "610")]);
        let r = review_sample(&shop, u.id, &e, Utc::now()).unwrap();
        assert!(r.sample.is_none());
        assert!(r
            .problems
            .iter()
            .any(|p| p.field == "count_6" && p.verdict == Verdict::Refused));
        // Oil thins as it warms: KV100 at or above KV40 is refused.
        let e = entered(&[("kv40", "46"), ("kv100", "50")]);
        let r = review_sample(&shop, u.id, &e, Utc::now()).unwrap();
        assert!(r.problems.iter().any(|p| p.field == "kv100"));
    }

    #[test]
    fn the_kind_of_a_csv_file_is_told_from_its_header() {
        let h = |s: &str| s.split(',').map(String::from).collect::<Vec<_>>();
        assert_eq!(
            detect_kind(&h("unit_tag,taken_at,reservoir_temp_c")),
            Some(FileKind::Checks)
        );
        assert_eq!(
            detect_kind(&h("unit_tag,sampled_at,kv40_cst,water_ppm")),
            Some(FileKind::Samples)
        );
        assert_eq!(
            detect_kind(&h("unit_tag,done_at,kind")),
            Some(FileKind::Events)
        );
        assert_eq!(
            detect_kind(&h("machine_tag,unit_tag,pump_kind")),
            Some(FileKind::Units)
        );
        assert_eq!(detect_kind(&h("tag,when,temp")), None);
    }

    #[test]
    fn a_preview_writes_nothing_and_a_cancelled_import_writes_nothing() {
        let (dir, shop) = demo();
        let u = first_unit(&shop);
        let db = shop.path().to_path_buf();
        let n = shop.store().checks_for_unit(u.id, None).unwrap().len();
        let csv = dir.path().join("checks.csv");
        std::fs::write(
            &csv,
            format!("unit_tag,taken_at,reservoir_temp_c\n{0},2020-01-06T08:00:00Z,40\n{0},2020-01-13T08:00:00Z,41\n", u.tag),
        )
        .unwrap();
        let p = preview_import(&db, &csv, &|_| {}, &Cancel::new())
            .unwrap()
            .unwrap();
        assert_eq!(p.kind, FileKind::Checks);
        assert_eq!(p.outcome.as_ref().unwrap().inserted, 2);
        assert_eq!(shop.store().checks_for_unit(u.id, None).unwrap().len(), n);
        let cancel = Cancel::new();
        cancel.cancel();
        assert_eq!(
            run_import(&db, FileKind::Checks, &csv, &|_| {}, &cancel).unwrap(),
            ImportRun::Cancelled
        );
        assert_eq!(shop.store().checks_for_unit(u.id, None).unwrap().len(), n);
        let done = run_import(&db, FileKind::Checks, &csv, &|_| {}, &Cancel::new()).unwrap();
        assert!(
            matches!(done, ImportRun::Done(ref s) if s.inserted == 2),
            "{done:?}"
        );
        assert_eq!(
            shop.store().checks_for_unit(u.id, None).unwrap().len(),
            n + 2
        );
        // A bad row: every problem listed with its line, nothing written.
        std::fs::write(
            &csv,
            format!(
                "unit_tag,taken_at,reservoir_temp_c\n{},2020-02-03T08:00:00Z,400\n",
                u.tag
            ),
        )
        .unwrap();
        let p = preview_import(&db, &csv, &|_| {}, &Cancel::new())
            .unwrap()
            .unwrap();
        let errors = p.outcome.unwrap_err();
        assert_eq!(errors[0].line, 2);
        assert_eq!(
            shop.store().checks_for_unit(u.id, None).unwrap().len(),
            n + 2
        );
    }

    #[test]
    fn corrections_need_a_reason_and_are_kept() {
        let (_d, shop) = demo();
        let u = first_unit(&shop);
        let c = shop
            .store()
            .checks_for_unit(u.id, None)
            .unwrap()
            .pop()
            .unwrap();
        let fields = reading_fields(&shop, Reading::Check, c.id).unwrap();
        let mut e = Entered::from_fields(&fields);
        e.set("note", "gauge re-read");
        let out = edit_reading(&shop, Reading::Check, c.id, &e, "R. E", "").unwrap();
        assert!(matches!(out, SaveOutcome::Refused(ref p) if p[0].field == "reason"));
        let out =
            edit_reading(&shop, Reading::Check, c.id, &e, "R. E", "typo on the sheet").unwrap();
        assert_eq!(out, SaveOutcome::Saved(()));
        assert_eq!(
            shop.store().check(c.id).unwrap().unwrap().note,
            "gauge re-read"
        );
        let hist = shop.store().edit_history("checks", c.id).unwrap();
        assert_eq!(hist.len(), 1);
        assert_eq!(hist[0].reason, "typo on the sheet");
        delete_reading(&shop, Reading::Check, c.id, "R. E", "double entry").unwrap();
        assert!(shop.store().check(c.id).unwrap().is_none());
        assert_eq!(shop.store().edit_history("checks", c.id).unwrap().len(), 2);
    }
}
