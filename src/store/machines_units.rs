//! Machines and their hydraulic units: the shop's register.
//!
//! Typed reads and writes of the `machines` and `units` tables. Register edits go through the
//! edit history like readings do. No CSV, no health.

use super::db::{params, Row, ToDb};

use super::columns::{bar, litres, lpm, mm};
use super::{enum_col, opt_enum_col, Store, StoreError};
use crate::model::{Id, Machine, TimedStroke, Unit};
use crate::units::{Flow, Length, Pressure, Volume};

pub(crate) const MACHINE_COLS: &str = "id, tag, name, kind, route_order, notes, archived";

pub(crate) fn machine_from_row(r: &Row<'_>) -> Result<Machine, StoreError> {
    Ok(Machine {
        id: r.get(0)?,
        tag: r.get(1)?,
        name: r.get(2)?,
        kind: r.get(3)?,
        route_order: r.get(4)?,
        notes: r.get(5)?,
        archived: r.get::<i64>(6)? != 0,
    })
}

pub(crate) const UNIT_COLS: &str = "id, machine_id, tag, pump_kind, rated_flow_lpm, relief_bar, reservoir_l, \
     sensitive_component, fluid_id, stroke_bore_mm, stroke_rod_mm, stroke_length_mm, stroke_direction, route_order, archived";

pub(crate) fn unit_from_row(r: &Row<'_>) -> Result<Unit, StoreError> {
    let bore: Option<f64> = r.get(9)?;
    let rod: Option<f64> = r.get(10)?;
    let length: Option<f64> = r.get(11)?;
    let direction = opt_enum_col(r, 12)?;
    let stroke = match (bore, length, direction) {
        (Some(bore), Some(length), Some(direction)) => Some(TimedStroke {
            bore: Length::from_mm(bore),
            rod: rod.map(Length::from_mm),
            length: Length::from_mm(length),
            direction,
        }),
        _ => None,
    };
    Ok(Unit {
        id: r.get(0)?,
        machine_id: r.get(1)?,
        tag: r.get(2)?,
        pump_kind: enum_col(r, 3)?,
        rated_flow: r.get::<Option<f64>>(4)?.map(Flow::from_lpm),
        relief: r.get::<Option<f64>>(5)?.map(Pressure::from_bar),
        reservoir: r.get::<Option<f64>>(6)?.map(Volume::from_l),
        sensitive_component: enum_col(r, 7)?,
        fluid_id: r.get(8)?,
        stroke,
        route_order: r.get(13)?,
        archived: r.get::<i64>(14)? != 0,
    })
}

/// The unit's columns in column units, in `UNIT_COLS` order after `id`.
pub(crate) struct UnitRow<'a> {
    pub machine_id: Id,
    pub tag: &'a str,
    pub pump_kind: &'static str,
    pub rated_flow_lpm: Option<f64>,
    pub relief_bar: Option<f64>,
    pub reservoir_l: Option<f64>,
    pub sensitive_component: &'static str,
    pub fluid_id: Option<Id>,
    pub bore_mm: Option<f64>,
    pub rod_mm: Option<f64>,
    pub length_mm: Option<f64>,
    pub direction: Option<&'static str>,
    pub route_order: i64,
    pub archived: i64,
}

impl<'a> UnitRow<'a> {
    pub fn from_model(u: &'a Unit) -> Result<Self, StoreError> {
        if u.tag.trim().is_empty() {
            return Err(StoreError::Invalid {
                field: "tag".into(),
                reason: "must not be empty".into(),
            });
        }
        Ok(UnitRow {
            machine_id: u.machine_id,
            tag: u.tag.trim(),
            pump_kind: u.pump_kind.as_str(),
            rated_flow_lpm: u.rated_flow.map(lpm),
            relief_bar: u.relief.map(bar),
            reservoir_l: u.reservoir.map(litres),
            sensitive_component: u.sensitive_component.as_str(),
            fluid_id: u.fluid_id,
            bore_mm: u.stroke.map(|s| mm(s.bore)),
            rod_mm: u.stroke.and_then(|s| s.rod).map(mm),
            length_mm: u.stroke.map(|s| mm(s.length)),
            direction: u.stroke.map(|s| s.direction.as_str()),
            route_order: u.route_order,
            archived: i64::from(u.archived),
        })
    }

    pub fn params(&self) -> [&dyn ToDb; 14] {
        [
            &self.machine_id,
            &self.tag,
            &self.pump_kind,
            &self.rated_flow_lpm,
            &self.relief_bar,
            &self.reservoir_l,
            &self.sensitive_component,
            &self.fluid_id,
            &self.bore_mm,
            &self.rod_mm,
            &self.length_mm,
            &self.direction,
            &self.route_order,
            &self.archived,
        ]
    }
}

pub(crate) const INSERT_MACHINE: &str =
    "INSERT INTO machines (tag, name, kind, route_order, notes, archived) VALUES (?1, ?2, ?3, ?4, ?5, ?6)";
pub(crate) const INSERT_UNIT: &str = "INSERT INTO units (machine_id, tag, pump_kind, rated_flow_lpm, relief_bar, \
     reservoir_l, sensitive_component, fluid_id, stroke_bore_mm, stroke_rod_mm, stroke_length_mm, stroke_direction, \
     route_order, archived) VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10, ?11, ?12, ?13, ?14)";

pub(crate) fn check_machine(m: &Machine) -> Result<(), StoreError> {
    if m.tag.trim().is_empty() {
        return Err(StoreError::Invalid {
            field: "tag".into(),
            reason: "must not be empty".into(),
        });
    }
    Ok(())
}

impl Store {
    /// All machines, archived ones included, in route order.
    pub fn machines(&self) -> Result<Vec<Machine>, StoreError> {
        let sql = format!("SELECT {MACHINE_COLS} FROM machines ORDER BY route_order, tag");
        self.query(&sql, params![], machine_from_row)
    }

    pub fn machine(&self, id: Id) -> Result<Option<Machine>, StoreError> {
        let sql = format!("SELECT {MACHINE_COLS} FROM machines WHERE id = ?1");
        self.query_opt(&sql, params![id], machine_from_row)
    }

    pub fn machine_by_tag(&self, tag: &str) -> Result<Option<Machine>, StoreError> {
        let sql = format!("SELECT {MACHINE_COLS} FROM machines WHERE tag = ?1");
        self.query_opt(&sql, params![tag.trim()], machine_from_row)
    }

    /// Adds a machine (its `id` is ignored) and returns the new id.
    pub fn insert_machine(&self, m: &Machine) -> Result<Id, StoreError> {
        check_machine(m)?;
        self.insert_row(
            INSERT_MACHINE,
            params![
                m.tag.trim(),
                m.name,
                m.kind,
                m.route_order,
                m.notes,
                i64::from(m.archived)
            ],
        )
    }

    /// Changes a machine (found by `m.id`); the old values go to the edit history.
    pub fn update_machine(&self, m: &Machine, by: &str, reason: &str) -> Result<(), StoreError> {
        check_machine(m)?;
        self.with_edit(by, reason, |s| {
            let n = s.exec(
                    "UPDATE machines SET tag = ?2, name = ?3, kind = ?4, route_order = ?5, notes = ?6, archived = ?7 \
                     WHERE id = ?1",
                params![m.id, m.tag.trim(), m.name, m.kind, m.route_order, m.notes, i64::from(m.archived)])?;
            if n == 0 {
                return Err(StoreError::NotFound(format!("machine {}", m.id)));
            }
            Ok(())
        })
    }

    /// All hydraulic units, archived ones included, in route order.
    pub fn units(&self) -> Result<Vec<Unit>, StoreError> {
        let sql = format!("SELECT {UNIT_COLS} FROM units ORDER BY route_order, tag");
        self.query(&sql, params![], unit_from_row)
    }

    pub fn unit(&self, id: Id) -> Result<Option<Unit>, StoreError> {
        let sql = format!("SELECT {UNIT_COLS} FROM units WHERE id = ?1");
        self.query_opt(&sql, params![id], unit_from_row)
    }

    pub fn unit_by_tag(&self, tag: &str) -> Result<Option<Unit>, StoreError> {
        let sql = format!("SELECT {UNIT_COLS} FROM units WHERE tag = ?1");
        self.query_opt(&sql, params![tag.trim()], unit_from_row)
    }

    /// Number of hydraulic units in the shop, archived ones included.
    pub fn unit_count(&self) -> Result<u64, StoreError> {
        let n: i64 = self.query_one("SELECT count(*) FROM units", params![], |r| r.get(0))?;
        Ok(n.max(0) as u64)
    }

    /// Adds a hydraulic unit (its `id` is ignored) and returns the new id.
    pub fn insert_unit(&self, u: &Unit) -> Result<Id, StoreError> {
        let row = UnitRow::from_model(u)?;
        self.insert_row(INSERT_UNIT, &row.params()[..])
    }

    /// Changes a unit (found by `u.id`); the old values go to the edit history.
    pub fn update_unit(&self, u: &Unit, by: &str, reason: &str) -> Result<(), StoreError> {
        let row = UnitRow::from_model(u)?;
        self.with_edit(by, reason, |s| {
            let mut p: Vec<&dyn ToDb> = row.params().to_vec();
            p.push(&u.id);
            let n = s.exec(
                    "UPDATE units SET machine_id = ?1, tag = ?2, pump_kind = ?3, rated_flow_lpm = ?4, relief_bar = ?5, \
                     reservoir_l = ?6, sensitive_component = ?7, fluid_id = ?8, stroke_bore_mm = ?9, stroke_rod_mm = ?10, \
                     stroke_length_mm = ?11, stroke_direction = ?12, route_order = ?13, archived = ?14 WHERE id = ?15",
                &p[..])?;
            if n == 0 {
                return Err(StoreError::NotFound(format!("unit {}", u.id)));
            }
            Ok(())
        })
    }
}
