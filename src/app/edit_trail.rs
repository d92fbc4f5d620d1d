//! The edit trail of one unit: every correction, deletion and restore of its readings, work
//! records and register entry, with when (in the shop's time), who and why, and each changed
//! field as old → new; and putting a deleted reading back, which is itself an edit. Read from
//! and written through the store's edit history; it must not print or know the screens.

use chrono::{DateTime, Utc};
use serde::Serialize;
use serde_json::{Map, Value};

use super::local_time::Zone;
use super::shop::{zone_of, Shop};
use super::status::store_error;
use super::AppError;
use crate::model::{EditRecord, Id};
use crate::quantity::{self, Quantity};
use crate::store::Store;
use crate::units::{Flow, Length, Pressure, Seconds, Temperature, UnitSystem, Viscosity, Volume};

/// What happened to a record.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum EditAction {
    Changed,
    Deleted,
    /// A deleted reading put back as it was.
    Restored,
}

/// One field's value before and after an edit, as stored (the column name says its unit),
/// and as the shop reads it.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct FieldChange {
    pub field: String,
    pub old: String,
    /// `None` when the record was deleted; a restore's fields are `—` → the value put back.
    pub new: Option<String>,
    /// The field in words, without the stored unit (`pressure` for `pressure_bar`).
    pub label: String,
    /// `old` and `new` in the shop's units and time zone (`2495 psi`, `2026-12-01 08:00 EST`);
    /// other values as stored.
    pub old_shown: String,
    pub new_shown: Option<String>,
}

/// The quantity a stored number of a column makes, from its stored unit.
type FromStored = fn(f64) -> Quantity;

/// The stored unit suffix of a column, and the quantity a stored number there makes.
fn stored_quantity(field: &str) -> Option<(&'static str, FromStored)> {
    const SUFFIXES: [(&str, FromStored); 7] = [
        ("_bar", |v| Quantity::Pressure(Pressure::from_bar(v))),
        ("_c", |v| Quantity::Temperature(Temperature::from_c(v))),
        ("_lpm", |v| Quantity::Flow(Flow::from_lpm(v))),
        ("_mm", |v| Quantity::Length(Length::from_mm(v))),
        ("_l", |v| Quantity::Volume(Volume::from_l(v))),
        ("_cst", |v| Quantity::Viscosity(Viscosity::from_cst(v))),
        ("_s", |v| Quantity::Time(Seconds(v))),
    ];
    SUFFIXES
        .iter()
        .find(|(suffix, _)| field.ends_with(suffix))
        .map(|&(suffix, q)| (suffix, q))
}

/// A column's name in words: without its stored unit, underscores as spaces.
fn label_of(field: &str) -> String {
    let bare = match stored_quantity(field) {
        Some((suffix, _)) => &field[..field.len() - suffix.len()],
        None => field,
    };
    bare.replace('_', " ")
}

/// A stored value as the shop reads it: a number of a column with a stored unit in the shop's
/// units, an instant (a column ending `_at`) in the shop's time zone; the rest as stored.
fn shown(field: &str, stored: &str, sys: UnitSystem, zone: Zone) -> String {
    if field.ends_with("_at") {
        if let Ok(t) = stored.parse::<DateTime<Utc>>() {
            return zone.show_marked(t);
        }
    }
    match (stored_quantity(field), stored.parse::<f64>()) {
        (Some((_, q)), Ok(v)) if v.is_finite() => quantity::format(q(v), sys),
        // The hour meter is stored as a bare number of hours, the same in either system.
        (None, Ok(v)) if field == "hours" && v.is_finite() => format!("{v} h"),
        _ => stored.to_string(),
    }
}

impl FieldChange {
    fn new(field: &str, old: String, new: Option<String>, sys: UnitSystem, zone: Zone) -> Self {
        FieldChange {
            label: label_of(field),
            old_shown: shown(field, &old, sys, zone),
            new_shown: new.as_deref().map(|n| shown(field, n, sys, zone)),
            field: field.to_string(),
            old,
            new,
        }
    }
}

/// One edit of one record.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Edit {
    pub edit_id: Id,
    /// When the edit was made (UTC in JSON).
    pub at: DateTime<Utc>,
    /// The same instant in the shop's time, as shown.
    pub at_shown: String,
    pub by: String,
    pub reason: String,
    /// `check`, `sample`, `event` or `unit`.
    pub record: String,
    pub record_id: Id,
    /// The record in words: `check of 2026-12-01 08:00 EST`.
    pub record_text: String,
    /// When the reading was taken (or the work done), as it stood before the edit; `None` for
    /// the unit's register entry.
    pub record_at: Option<DateTime<Utc>>,
    pub action: EditAction,
    /// Every field that differs (a deletion or a restore lists the fields the record held).
    pub changes: Vec<FieldChange>,
    /// A deletion of a reading (check, sample or event) that can be put back: nothing was done
    /// to that reading since, and no later record took its number.
    pub restorable: bool,
}

/// A unit's edit trail, oldest first.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct UnitEdits {
    pub unit: String,
    pub time_zone: String,
    pub edits: Vec<Edit>,
}

impl UnitEdits {
    /// The edits of the unit's readings and work records (checks, samples, events: changes,
    /// deletions and restores) that were made from `from` up to `to`, or that touch a reading
    /// taken then (a later correction of a reading of the period changes the period's figures
    /// too), oldest first.
    pub fn of_readings_between(&self, from: DateTime<Utc>, to: DateTime<Utc>) -> Vec<&Edit> {
        let within = |t: DateTime<Utc>| t >= from && t <= to;
        self.edits
            .iter()
            .filter(|e| table_of(&e.record).is_some())
            .filter(|e| within(e.at) || e.record_at.is_some_and(within))
            .collect()
    }

    /// The ids of the readings of `record` (`check`, `sample`, `event`) that were corrected and
    /// are still stored, so a table can mark them.
    pub fn corrected(&self, record: &str) -> Vec<Id> {
        let mut ids: Vec<Id> = self
            .edits
            .iter()
            .filter(|e| e.record == record && e.action == EditAction::Changed)
            .map(|e| e.record_id)
            .collect();
        ids.sort_unstable();
        ids.dedup();
        ids
    }
}

impl Edit {
    /// The edit in one line of words, then one line a changed field (`field: old → new`).
    pub fn lines(&self) -> Vec<String> {
        let what = match self.action {
            EditAction::Changed => "changed",
            EditAction::Deleted => "DELETED",
            EditAction::Restored => "RESTORED",
        };
        let why = if self.reason.trim().is_empty() {
            "no reason given"
        } else {
            self.reason.as_str()
        };
        let mut out = vec![format!(
            "{}  {}  {what} by {}: {why}  (edit {})",
            self.at_shown, self.record_text, self.by, self.edit_id
        )];
        out.extend(self.changes.iter().map(|c| match &c.new_shown {
            Some(new) => format!("    {}: {} → {new}", c.label, c.old_shown),
            None => format!("    {}: {}", c.label, c.old_shown),
        }));
        out
    }
}

/// The edit trail of the unit tagged `tag`.
pub fn unit_edits(shop: &Shop, tag: &str) -> Result<UnitEdits, AppError> {
    unit_edits_in(shop.store(), tag)
}

/// [`unit_edits`] on a store.
pub(crate) fn unit_edits_in(store: &Store, tag: &str) -> Result<UnitEdits, AppError> {
    let tag = tag.trim();
    let unit = store
        .unit_by_tag(tag)
        .map_err(store_error)?
        .ok_or_else(|| AppError::BadInput(format!("no unit `{tag}` in this shop")))?;
    let log = store.edit_log().map_err(store_error)?;
    unit_edits_from(store, &log, unit.id, &unit.tag)
}

/// The trail of unit `unit_id` (tagged `tag`) from the whole edit history `log`, read once by
/// a caller that needs the trails of many units (the report).
pub fn unit_edits_from(
    store: &Store,
    log: &[EditRecord],
    unit_id: Id,
    tag: &str,
) -> Result<UnitEdits, AppError> {
    let zone = zone_of(store);
    let sys = store
        .settings()
        .map(|s| s.unit_system)
        .unwrap_or(UnitSystem::Metric);
    let mut edits: Vec<Edit> = log
        .iter()
        .filter_map(|r| edit_of_unit(r, unit_id, zone, sys))
        .collect();
    for i in 0..edits.len() {
        let e = &edits[i];
        let last_of_its_record = !edits[i + 1..]
            .iter()
            .any(|l| l.record == e.record && l.record_id == e.record_id);
        let table = table_of(&e.record);
        let free = match table {
            Some(t) if e.action == EditAction::Deleted && last_of_its_record => {
                !store.reading_stored(t, e.record_id).map_err(store_error)?
            }
            _ => false,
        };
        edits[i].restorable = free;
    }
    Ok(UnitEdits {
        unit: tag.to_string(),
        time_zone: zone.name().to_string(),
        edits,
    })
}

/// The table of a reading that can be put back after a deletion.
fn table_of(record: &str) -> Option<&'static str> {
    match record {
        "check" => Some("checks"),
        "sample" => Some("samples"),
        "event" => Some("events"),
        _ => None,
    }
}

/// Puts back the reading of unit `tag` that the edit `edit_id` deleted (a deletion listed as
/// restorable in the unit's trail), as it was and with its own number; the restore goes to the
/// edit history with `by`, `reason` and the time. Returns the restore as the trail shows it.
pub fn restore_reading(
    shop: &Shop,
    tag: &str,
    edit_id: Id,
    by: &str,
    reason: &str,
) -> Result<Edit, AppError> {
    let by = by.trim();
    if by.is_empty() {
        return Err(AppError::BadInput(
            "say who puts the reading back: a name or initials".into(),
        ));
    }
    let reason = reason.trim();
    if reason.is_empty() {
        return Err(AppError::BadInput(
            "say why the reading is put back; it is kept with the restore".into(),
        ));
    }
    let trail = unit_edits(shop, tag)?;
    let Some(deletion) = trail.edits.iter().find(|e| e.edit_id == edit_id) else {
        return Err(AppError::BadInput(format!(
            "edit {edit_id} is not in the edit trail of {}",
            trail.unit
        )));
    };
    if !deletion.restorable {
        let later = trail
            .edits
            .iter()
            .find(|e| {
                e.edit_id > edit_id
                    && e.record == deletion.record
                    && e.record_id == deletion.record_id
            })
            .map(|e| e.edit_id);
        let why = match (deletion.action, later) {
            (EditAction::Deleted, Some(n)) => format!("it was put back already (edit {n})"),
            (EditAction::Deleted, None) if table_of(&deletion.record).is_some() => {
                "a later record holds its number; enter its values anew".to_string()
            }
            _ => "it is not the deletion of a check, sample or event".to_string(),
        };
        return Err(AppError::BadInput(format!(
            "edit {edit_id} ({}) cannot be restored: {why}",
            deletion.record_text
        )));
    }
    let (record, record_id) = (deletion.record.clone(), deletion.record_id);
    shop.store()
        .restore_deleted(edit_id, by, reason)
        .map_err(store_error)?;
    unit_edits(shop, tag)?
        .edits
        .into_iter()
        .rev()
        .find(|e| {
            e.action == EditAction::Restored && e.record == record && e.record_id == record_id
        })
        .ok_or_else(|| AppError::BadInput("the restore is missing from the edit trail".into()))
}

/// The record kind of a table holding a unit's records, and the column of its time.
fn record_of(table: &str) -> Option<(&'static str, Option<&'static str>)> {
    match table {
        "checks" => Some(("check", Some("taken_at"))),
        "samples" => Some(("sample", Some("sampled_at"))),
        "events" => Some(("event", Some("done_at"))),
        "units" => Some(("unit", None)),
        _ => None,
    }
}

/// `r` as an edit of unit `unit_id`'s records, or `None` when it is another unit's or not a
/// unit's record at all.
fn edit_of_unit(r: &EditRecord, unit_id: Id, zone: Zone, sys: UnitSystem) -> Option<Edit> {
    let (record, time_col) = record_of(&r.table)?;
    let old = parse_object(&r.old_value);
    let new = r.new_value.as_deref().map(parse_object);
    let owner = match record {
        "unit" => r.row_id,
        _ => old.get("unit_id").and_then(Value::as_i64)?,
    };
    if owner != unit_id {
        return None;
    }
    let when = time_col
        .and_then(|c| old.get(c))
        .and_then(Value::as_str)
        .and_then(|t| crate::store::parse_time(t).ok());
    let record_text = match (record, when) {
        ("event", Some(t)) => format!(
            "{} of {}",
            old.get("kind").and_then(Value::as_str).unwrap_or("event"),
            zone.show_marked(t)
        ),
        (_, Some(t)) => format!("{record} of {}", zone.show_marked(t)),
        _ => format!(
            "unit {}",
            old.get("tag").and_then(Value::as_str).unwrap_or_default()
        ),
    };
    let (action, changes) = match &new {
        Some(_) if r.action == "restore" => {
            (EditAction::Restored, restored_fields(&old, sys, zone))
        }
        Some(n) => (
            EditAction::Changed,
            changed_fields(&old, Some(n), sys, zone),
        ),
        None => (EditAction::Deleted, changed_fields(&old, None, sys, zone)),
    };
    Some(Edit {
        edit_id: r.id,
        at: r.at,
        at_shown: zone.show_marked(r.at),
        by: r.by.clone(),
        reason: r.reason.clone(),
        record: record.to_string(),
        record_id: r.row_id,
        record_text,
        record_at: when,
        action,
        changes,
        restorable: false,
    })
}

/// The fields a restored record holds again, each as `—` → its value.
fn restored_fields(held: &Map<String, Value>, sys: UnitSystem, zone: Zone) -> Vec<FieldChange> {
    changed_fields(held, None, sys, zone)
        .into_iter()
        .map(|c| FieldChange::new(&c.field, "—".into(), Some(c.old), sys, zone))
        .collect()
}

fn parse_object(text: &str) -> Map<String, Value> {
    match serde_json::from_str::<Value>(text) {
        Ok(Value::Object(m)) => m,
        _ => Map::new(),
    }
}

/// The fields of `old` that `new` holds otherwise (all that held a value when `new` is `None`),
/// by field name; the record's own and its unit's ids are left out.
fn changed_fields(
    old: &Map<String, Value>,
    new: Option<&Map<String, Value>>,
    sys: UnitSystem,
    zone: Zone,
) -> Vec<FieldChange> {
    old.iter()
        .filter(|(k, _)| !matches!(k.as_str(), "id" | "unit_id"))
        .filter_map(|(k, v)| match new {
            Some(n) => {
                let after = n.get(k).unwrap_or(&Value::Null);
                (after != v)
                    .then(|| FieldChange::new(k, value_text(v), Some(value_text(after)), sys, zone))
            }
            None => (!v.is_null()).then(|| FieldChange::new(k, value_text(v), None, sys, zone)),
        })
        .collect()
}

/// A stored value as text: `—` for none, strings without quotes.
fn value_text(v: &Value) -> String {
    match v {
        Value::Null => "—".into(),
        Value::String(s) if s.is_empty() => "—".into(),
        Value::String(s) => s.clone(),
        other => other.to_string(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Each change as stored: (field, old, new).
    fn stored(e: &Edit) -> Vec<(&str, &str, Option<&str>)> {
        e.changes
            .iter()
            .map(|c| (c.field.as_str(), c.old.as_str(), c.new.as_deref()))
            .collect()
    }

    fn record(table: &str, row_id: Id, old: &str, new: Option<&str>) -> EditRecord {
        EditRecord {
            id: 7,
            table: table.into(),
            row_id,
            action: if new.is_some() { "update" } else { "delete" }.into(),
            old_value: old.into(),
            new_value: new.map(str::to_string),
            by: "AK".into(),
            reason: "typo".into(),
            at: "2026-12-01T14:00:00Z".parse().unwrap(),
        }
    }

    #[test]
    fn a_correction_lists_only_the_fields_that_changed_with_the_shops_time() {
        let old = r#"{"id":5,"unit_id":2,"taken_at":"2026-12-01T13:00:00Z","pressure_bar":172.0,"note":""}"#;
        let new = r#"{"id":5,"unit_id":2,"taken_at":"2026-12-01T13:00:00Z","pressure_bar":17.2,"note":"gauge re-read"}"#;
        // America/New_York keeps EST (UTC-5) in December: US Energy Policy Act of 2005.
        let ny = Zone::named("America/New_York").unwrap();
        let e = edit_of_unit(
            &record("checks", 5, old, Some(new)),
            2,
            ny,
            UnitSystem::Metric,
        )
        .unwrap();
        assert_eq!(e.action, EditAction::Changed);
        assert_eq!(e.record_text, "check of 2026-12-01 08:00 EST");
        assert_eq!(e.at_shown, "2026-12-01 09:00 EST");
        assert_eq!(
            stored(&e),
            [
                ("note", "—", Some("gauge re-read")),
                ("pressure_bar", "172.0", Some("17.2")),
            ]
        );
        assert_eq!(e.lines()[2], "    pressure: 172.0 bar → 17.2 bar");
        // The hour meter reads in hours: 31581.0 as stored, 31581 h as shown.
        let meter = edit_of_unit(
            &record(
                "checks",
                5,
                r#"{"id":5,"unit_id":2,"hours":31581.0}"#,
                Some(r#"{"id":5,"unit_id":2,"hours":31518.5}"#),
            ),
            2,
            ny,
            UnitSystem::Us,
        )
        .unwrap();
        assert_eq!(meter.lines()[1], "    hours: 31581 h → 31518.5 h");
        // Another unit's record is not this unit's trail.
        assert!(edit_of_unit(
            &record("checks", 5, old, Some(new)),
            3,
            ny,
            UnitSystem::Metric
        )
        .is_none());
        assert!(edit_of_unit(
            &record("fluids", 5, old, Some(new)),
            2,
            ny,
            UnitSystem::Metric
        )
        .is_none());
    }

    #[test]
    fn a_deletion_lists_what_the_record_held() {
        let old = r#"{"id":9,"unit_id":2,"done_at":"2026-12-01T13:00:00Z","kind":"top_up","volume_l":null}"#;
        let e = edit_of_unit(
            &record("events", 9, old, None),
            2,
            Zone::default(),
            UnitSystem::Metric,
        )
        .unwrap();
        assert_eq!(e.action, EditAction::Deleted);
        assert_eq!(e.record_text, "top_up of 2026-12-01 13:00 UTC");
        let fields: Vec<&str> = e.changes.iter().map(|c| c.field.as_str()).collect();
        assert_eq!(fields, ["done_at", "kind"]);
        assert!(e.changes.iter().all(|c| c.new.is_none()));
    }

    #[test]
    fn a_restore_lists_the_fields_put_back_and_reads_as_one() {
        let held = r#"{"id":9,"unit_id":2,"done_at":"2026-12-01T13:00:00Z","kind":"top_up","volume_l":null}"#;
        let mut r = record("events", 9, held, Some(held));
        r.action = "restore".into();
        let e = edit_of_unit(&r, 2, Zone::default(), UnitSystem::Metric).unwrap();
        assert_eq!(e.action, EditAction::Restored);
        assert_eq!(
            stored(&e),
            [
                ("done_at", "—", Some("2026-12-01T13:00:00Z")),
                ("kind", "—", Some("top_up")),
            ]
        );
        assert_eq!(e.lines()[1], "    done at: — → 2026-12-01 13:00 UTC");
        assert_eq!(
            e.lines()[0],
            "2026-12-01 14:00 UTC  top_up of 2026-12-01 13:00 UTC  RESTORED by AK: typo  (edit 7)"
        );
    }

    #[test]
    fn a_us_shop_reads_its_trail_in_its_own_units_and_time() {
        // 172 bar is 2494.7 psi and 17.2 bar 249.5 psi (1 bar = 100 kPa, 1 psi = 6.894757 kPa:
        // NIST SP 811, Appendix B); 45 °C is 113 °F; 13:00 UTC is 08:00 EST.
        let old = r#"{"id":5,"unit_id":2,"taken_at":"2026-12-01T13:00:00Z","pressure_bar":172.0,"reservoir_temp_c":45.0}"#;
        let new = r#"{"id":5,"unit_id":2,"taken_at":"2026-12-01T14:00:00Z","pressure_bar":17.2,"reservoir_temp_c":45.0}"#;
        let ny = Zone::named("America/New_York").unwrap();
        let e = edit_of_unit(&record("checks", 5, old, Some(new)), 2, ny, UnitSystem::Us).unwrap();
        let shown: Vec<(&str, &str, Option<&str>)> = e
            .changes
            .iter()
            .map(|c| {
                (
                    c.label.as_str(),
                    c.old_shown.as_str(),
                    c.new_shown.as_deref(),
                )
            })
            .collect();
        assert_eq!(
            shown,
            [
                ("pressure", "2495 psi", Some("249 psi")),
                (
                    "taken at",
                    "2026-12-01 08:00 EST",
                    Some("2026-12-01 09:00 EST")
                ),
            ]
        );
        // The stored values stay as stored, for the JSON.
        assert_eq!(e.changes[0].old, "172.0");
        let d = r#"{"id":9,"unit_id":2,"done_at":"2026-12-01T13:00:00Z","volume_l":20.0}"#;
        let e = edit_of_unit(&record("events", 9, d, None), 2, ny, UnitSystem::Us).unwrap();
        // 20 L is 5.28 US gallons (1 gal = 3.785411784 L: NIST Handbook 44, Appendix C).
        assert_eq!(e.changes[1].old_shown, "5.28 gal");
    }
}
