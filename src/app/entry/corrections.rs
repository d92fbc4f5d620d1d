//! Corrections: the fields of a stored check, sample or event for editing, judging and saving a
//! correction (refused when someone else corrected it meanwhile), and deleting a reading. It
//! must not know slint or SQL.

use super::*;

use crate::app::shop::Shop;
use crate::app::status::store_error;
use crate::app::AppError;
use crate::model::{Event, EventDetails, EventKind, Id, Sample};
use crate::physics::cleanliness::Iso4406Code;
use crate::quantity::{self, Kind, Quantity};
use crate::units::{UnitSystem, Viscosity, Volume};

/// Which table a stored reading is in.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Reading {
    Check,
    Sample,
    Event,
}

pub(super) fn q_text(kind: Kind, si: Option<f64>, system: UnitSystem) -> String {
    si.and_then(|v| quantity::format_in(Quantity::from_si(kind, v), kind.display_unit(system)))
        .map(|s| s.rsplit_once(' ').map(|(n, _)| n.to_string()).unwrap_or(s))
        .unwrap_or_default()
}

pub(super) fn n_text(v: Option<f64>) -> String {
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
                Field::in_unit("hours", "Hour meter", "h").with_value(n_text(c.hours)),
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
                Field::in_unit("kv40", "KV40", "cSt").with_value(cst(s.kv40)),
                Field::in_unit("kv100", "KV100", "cSt").with_value(cst(s.kv100)),
                Field::in_unit("count_4", "≥4 µm(c)", "/mL").with_value(n_text(s.counts_per_ml[0])),
                Field::in_unit("count_6", "≥6 µm(c)", "/mL").with_value(n_text(s.counts_per_ml[1])),
                Field::in_unit("count_14", "≥14 µm(c)", "/mL")
                    .with_value(n_text(s.counts_per_ml[2])),
                Field::text("iso4406", "ISO 4406 code")
                    .with_value(s.iso4406.clone().unwrap_or_default()),
                Field::in_unit("water_ppm", "Water", "ppm").with_value(n_text(s.water_ppm)),
                Field::in_unit("acid", "Acid number", "mg KOH/g")
                    .with_value(n_text(s.acid_mgkoh_g)),
                Field::text("lab_ref", "Lab reference").with_value(s.lab_ref),
                Field::text("note", "Note").with_value(s.note),
            ]
        }
        Reading::Event => {
            let e = store.event(id).map_err(store_error)?.ok_or_else(missing)?;
            let d = store
                .event_details(id)
                .map_err(store_error)?
                .unwrap_or_default();
            let kinds: Vec<&str> = EventKind::ALL.iter().map(|k| k.as_str()).collect();
            vec![
                Field::choice("kind", "What was done", &kinds, e.kind.as_str()),
                Field::quantity("volume", "Fluid volume", Kind::Volume, system).with_value(q_text(
                    Kind::Volume,
                    e.volume.map(|v| v.si()),
                    system,
                )),
                Field::text("by", "Done by").with_value(e.by),
                Field::in_unit("hours", "Hour meter", "h")
                    .with_value(d.hours.map(|h| h.to_string()).unwrap_or_default()),
                Field::text("filter_part", "Filter part").with_value(d.filter_part),
                Field::text("work_order", "Work order").with_value(d.work_order),
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
    let shop_settings = settings(store)?;
    let system = shop_settings.unit_system;
    let zone = crate::app::local_time::Zone::of_setting(&shop_settings.time_zone);
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
            let around = store
                .hour_meter_around(
                    c.unit_id,
                    c.taken_at,
                    Some(crate::store::events::OwnReading::Check(c.id)),
                )
                .map_err(store_error)?;
            let review = judge_check(&unit, &earlier, &events, &around, entered, c, system, zone);
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
            e.set("sampled_at", &zone.show_seconds(s.sampled_at));
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
            let hours = match read_number(entered.get("hours").trim().trim_end_matches('h')) {
                Ok(h) => h,
                Err(e) => return Ok(SaveOutcome::Refused(vec![Problem::refused("hours", e)])),
            };
            let tag = unit_of(store, ev.unit_id)?.tag;
            let details = EventDetails {
                hours,
                filter_part: entered.get("filter_part").to_string(),
                work_order: entered.get("work_order").to_string(),
            };
            let details = match crate::app::work::check_details_in(
                store,
                &tag,
                ev.done_at,
                &details,
                Some(id),
            ) {
                // A correction keeps an hour meter out of step with its neighbours (a replaced
                // meter), as a corrected check keeps an unusual value: the engineer gives why.
                Ok(checked) => checked.details,
                Err(r) => {
                    return Ok(SaveOutcome::Refused(vec![Problem::refused(
                        r.field,
                        r.error.to_string(),
                    )]))
                }
            };
            let new = Event {
                kind,
                volume,
                by: entered.get("by").to_string(),
                note: entered.get("note").to_string(),
                ..ev
            };
            store
                .update_event_with(&new, &details, &by, reason)
                .map_err(store_error)?;
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
    let water = non_negative("water_ppm", e.get("water_ppm"), p);
    let acid = non_negative("acid", e.get("acid"), p);
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
