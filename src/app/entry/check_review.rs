//! Check review: the walk-round — its route, the check form with last time's values, judging a
//! typed check and saving it. It must not know slint or SQL.

use super::*;

use chrono::{DateTime, SubsecRound, Utc};

use crate::app::local_time::Zone;
use crate::app::shop::Shop;
use crate::app::status::{store_error, unit_status_in, UnitStatus};
use crate::app::AppError;
use crate::health::{self, State};
use crate::model::{
    Check, Confirmation, FilterState, Id, OilLevel, PumpKind, StrokeDirection, TimedStroke, Unit,
};
use crate::quantity::Kind;
use crate::store::events::HourMeterAround;
use crate::units::{Flow, Length, Pressure, Seconds, Temperature, UnitSystem};

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
    Ok(route_from(&crate::app::status::fleet_status(shop, None)?))
}

/// The walk-round order of a fleet status already evaluated.
pub fn route_from(fleet: &crate::app::status::FleetStatus) -> Vec<RouteStop> {
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
        Field::quantity("cycle_time", "Cycle time", Kind::Time, system).with_hint(hint_q(
            Kind::Time,
            last_of(checks, |c| c.cycle_time.map(|s| s.si())),
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
        Field::in_unit("hours", "Hour meter", "h").with_hint(
            // The last reading by a check or by work done, as the question after it uses.
            store
                .hour_meter_around(unit_id, now, None)
                .map_err(store_error)?
                .before
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
/// (`earlier` checks, oldest first, its maintenance `events`, and the hour meter read `around`
/// the check, by checks and work done alike). `base` gives the id, time and author of an
/// edited check.
#[allow(clippy::too_many_arguments)]
pub(super) fn judge_check(
    unit: &Unit,
    earlier: &[Check],
    events: &[crate::model::Event],
    around: &HourMeterAround,
    entered: &Entered,
    base: Check,
    system: UnitSystem,
    zone: Zone,
) -> CheckReview {
    let mut p = Vec::new();
    let t = typed(entered, system, &mut p);
    frame_questions(&t, base.taken_at, around, system, zone, &mut p);
    let note = entered.get("note").to_string();
    let any = t.res.is_some()
        || t.amb.is_some()
        || t.pressure.is_some()
        || t.stroke.is_some()
        || t.cycle.is_some()
        || t.case_drain.is_some()
        || t.oil_level.is_some()
        || t.filter.is_some()
        || t.hours.is_some();
    if !any && note.is_empty() && p.is_empty() {
        p.push(Problem::refused(
            "",
            "nothing was entered; type at least one reading, or skip the unit",
        ));
    }
    let refused = p.iter().any(|x| x.verdict == Verdict::Refused);
    let check = Check {
        reservoir_temp: t.res.map(Temperature),
        ambient_temp: t.amb.map(Temperature),
        pressure: t.pressure.map(Pressure),
        stroke_time: t.stroke.map(Seconds),
        // A form without the field (an older correction) keeps the stored cycle time.
        cycle_time: t.cycle.map(Seconds).or(base.cycle_time),
        oil_level: t.oil_level,
        filter: t.filter,
        hours: t.hours,
        case_drain: t.case_drain.map(Flow),
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

/// The readings of a walk-round form, read in the shop's units (SI); a cell that cannot be
/// read is refused on `p` and left out.
struct Typed {
    res: Option<f64>,
    amb: Option<f64>,
    pressure: Option<f64>,
    stroke: Option<f64>,
    cycle: Option<f64>,
    case_drain: Option<f64>,
    oil_level: Option<OilLevel>,
    filter: Option<FilterState>,
    hours: Option<f64>,
}

/// Reads each cell of the form.
fn typed(entered: &Entered, system: UnitSystem, p: &mut Vec<Problem>) -> Typed {
    let q = |key: &str, kind: Kind, p: &mut Vec<Problem>| -> Option<f64> {
        match read_quantity(entered.get(key), kind, system) {
            Ok(v) => v,
            Err(e) => {
                p.push(Problem::refused(key, e));
                None
            }
        }
    };
    let res = q("reservoir_temp", Kind::Temperature, p);
    let amb = q("ambient_temp", Kind::Temperature, p);
    let pressure = q("pressure", Kind::Pressure, p);
    let stroke = q("stroke_time", Kind::Time, p);
    let cycle = q("cycle_time", Kind::Time, p);
    let case_drain = q("case_drain", Kind::Flow, p);
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
    Typed {
        res,
        amb,
        pressure,
        stroke,
        cycle,
        case_drain,
        oil_level,
        filter,
        hours,
    }
}

/// Each reading against the physical bounds of a press circuit and what a person can time,
/// and the hour meter against the readings around it (the rule of marking work done).
fn frame_questions(
    t: &Typed,
    at: chrono::DateTime<chrono::Utc>,
    around: &HourMeterAround,
    system: UnitSystem,
    zone: Zone,
    p: &mut Vec<Problem>,
) {
    let Typed {
        res,
        amb,
        pressure,
        stroke,
        case_drain,
        hours,
        ..
    } = *t;
    let res_ok =
        res.filter(|&t| bound_temp("reservoir_temp", "Reservoir temperature", t, system, p));
    let amb_ok = amb.filter(|&t| bound_temp("ambient_temp", "Ambient temperature", t, system, p));
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
        } else {
            // One rule with marking work done: the readings around it, checks and work done.
            p.extend(
                crate::app::work::hour_meter_questions(h, at, around, zone)
                    .into_iter()
                    .map(|q| Problem::unusual("hours", q)),
            );
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
    let shop_settings = settings(store)?;
    let system = shop_settings.unit_system;
    let zone = Zone::of_setting(&shop_settings.time_zone);
    let unit = unit_of(store, unit_id)?;
    let earlier = store.checks_for_unit(unit_id, None).map_err(store_error)?;
    let events = store.events_for_unit(unit_id, None).map_err(store_error)?;
    let mut pre = Vec::new();
    let at = read_when(taken_at, now, zone).unwrap_or_else(|e| {
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
                show_time(at, zone)
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
    let around = store
        .hour_meter_around(unit_id, at, None)
        .map_err(store_error)?;
    let mut review = judge_check(
        &unit, &earlier, &events, &around, entered, base, system, zone,
    );
    if pre.iter().any(|p| p.verdict == Verdict::Refused) {
        review.check = None;
    }
    if let Some(check) = &review.check {
        let previous = earlier
            .iter()
            .filter(|c| c.taken_at < at)
            .max_by_key(|c| c.taken_at);
        if let Some(previous) = previous {
            pre.extend(left_blank(check, previous, entered, system, zone));
        }
    }
    pre.append(&mut review.problems);
    pre.sort_by_key(|x| std::cmp::Reverse(x.verdict));
    review.problems = pre;
    Ok(review)
}

/// The readings of `check` left blank that the unit's `previous` check had, each a question
/// naming last time's value: a case drain or oil level skipped by mistake is asked about before
/// the check is saved without it. Fields with something typed in (even refused) are not asked.
fn left_blank(
    check: &Check,
    previous: &Check,
    entered: &Entered,
    system: UnitSystem,
    zone: Zone,
) -> Vec<Problem> {
    let q = |kind: Kind, v: Option<f64>| v.map(|si| show(kind, si, system));
    let readings: [(&str, &str, Option<String>, bool); 9] = [
        (
            "reservoir_temp",
            "Reservoir temperature",
            q(Kind::Temperature, previous.reservoir_temp.map(|t| t.si())),
            check.reservoir_temp.is_none(),
        ),
        (
            "ambient_temp",
            "Ambient temperature",
            q(Kind::Temperature, previous.ambient_temp.map(|t| t.si())),
            check.ambient_temp.is_none(),
        ),
        (
            "pressure",
            "Working pressure",
            q(Kind::Pressure, previous.pressure.map(|p| p.si())),
            check.pressure.is_none(),
        ),
        (
            "stroke_time",
            "Timed stroke",
            q(Kind::Time, previous.stroke_time.map(|s| s.si())),
            check.stroke_time.is_none(),
        ),
        (
            "cycle_time",
            "Cycle time",
            q(Kind::Time, previous.cycle_time.map(|s| s.si())),
            check.cycle_time.is_none(),
        ),
        (
            "oil_level",
            "Oil level",
            previous.oil_level.map(|v| v.to_string()),
            check.oil_level.is_none(),
        ),
        (
            "filter",
            "Filter indicator",
            previous.filter.map(|v| v.to_string()),
            check.filter.is_none(),
        ),
        (
            "hours",
            "Hour meter",
            previous.hours.map(|h| format!("{h:.0} h")),
            check.hours.is_none(),
        ),
        (
            "case_drain",
            "Case-drain flow",
            q(Kind::Flow, previous.case_drain.map(|f| f.si())),
            check.case_drain.is_none(),
        ),
    ];
    readings
        .into_iter()
        .filter(|(key, _, _, blank)| *blank && entered.get(key).is_empty())
        .filter_map(|(key, label, last, _)| {
            last.map(|v| {
                Problem::blank(
                    key,
                    format!(
                        "{label} is blank; the last check ({}) had {v}",
                        show_date(previous.taken_at, zone)
                    ),
                )
            })
        })
        .collect()
}

/// A stored check and what the unit looks like now.
#[derive(Clone, Debug, PartialEq)]
pub struct SavedCheck {
    pub check_id: Id,
    pub status: UnitStatus,
    /// The unusual values that were confirmed.
    pub confirmed: Vec<Problem>,
    /// The fields left blank that the unit's last check had.
    pub left_blank: Vec<Problem>,
}

/// Saves a walk-round check: refused values stop it; unusual ones and fields left blank that
/// the last check had stop it unless `answers` says to go on.
pub fn save_check(
    shop: &Shop,
    unit_id: Id,
    entered: &Entered,
    taken_at: &str,
    by: &str,
    answers: Answers,
    now: DateTime<Utc>,
) -> Result<SaveOutcome<SavedCheck>, AppError> {
    let review = review_check(shop, unit_id, entered, taken_at, by, now)?;
    let Some(mut check) = review.check else {
        return Ok(SaveOutcome::Refused(review.problems));
    };
    if !answers.settle(&review.problems) {
        return Ok(SaveOutcome::NeedsConfirmation(review.problems));
    }
    let (left_blank, unusual): (Vec<Problem>, Vec<Problem>) = review
        .problems
        .into_iter()
        .partition(|p| p.verdict == Verdict::Blank);
    if !unusual.is_empty() {
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
        confirmed: unusual,
        left_blank,
    }))
}
