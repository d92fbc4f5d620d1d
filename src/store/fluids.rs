//! Fluids in the shop's store: typed reads and writes of the `fluids` table.
//!
//! New-oil properties are the reference for viscosity and acid drift. No CSV, no health.

use super::db::{params, Row, ToDb};

use super::columns::{cst, tidy};
use super::{Store, StoreError};
use crate::model::{Fluid, Id};
use crate::units::Viscosity;

pub(crate) const FLUID_COLS: &str =
    "id, name, iso_vg, kv40_new_cst, kv100_new_cst, acid_new_mgkoh_g, base_type";

pub(crate) fn fluid_from_row(r: &Row<'_>) -> Result<Fluid, StoreError> {
    Ok(Fluid {
        id: r.get(0)?,
        name: r.get(1)?,
        iso_vg: r.get(2)?,
        kv40_new: r.get::<Option<f64>>(3)?.map(Viscosity::from_cst),
        kv100_new: r.get::<Option<f64>>(4)?.map(Viscosity::from_cst),
        acid_new_mgkoh_g: r.get(5)?,
        base_type: r.get(6)?,
    })
}

pub(crate) const INSERT_FLUID: &str =
    "INSERT INTO fluids (name, iso_vg, kv40_new_cst, kv100_new_cst, acid_new_mgkoh_g, \
     base_type) VALUES (?1, ?2, ?3, ?4, ?5, ?6)";

/// The fluid's columns in column units.
pub(crate) struct FluidRow<'a> {
    pub name: &'a str,
    pub iso_vg: Option<u32>,
    pub kv40_cst: Option<f64>,
    pub kv100_cst: Option<f64>,
    pub acid: Option<f64>,
    pub base_type: &'a str,
}

impl<'a> FluidRow<'a> {
    pub fn from_model(f: &'a Fluid) -> Result<Self, StoreError> {
        if f.name.trim().is_empty() {
            return Err(StoreError::Invalid {
                field: "name".into(),
                reason: "must not be empty".into(),
            });
        }
        Ok(FluidRow {
            name: f.name.trim(),
            iso_vg: f.iso_vg,
            kv40_cst: f.kv40_new.map(cst),
            kv100_cst: f.kv100_new.map(cst),
            acid: f.acid_new_mgkoh_g.map(tidy),
            base_type: &f.base_type,
        })
    }

    pub fn params(&self) -> [&dyn ToDb; 6] {
        [
            &self.name,
            &self.iso_vg,
            &self.kv40_cst,
            &self.kv100_cst,
            &self.acid,
            &self.base_type,
        ]
    }
}

impl Store {
    /// All fluids, by name.
    pub fn fluids(&self) -> Result<Vec<Fluid>, StoreError> {
        let sql = format!("SELECT {FLUID_COLS} FROM fluids ORDER BY name");
        self.query(&sql, params![], fluid_from_row)
    }

    pub fn fluid(&self, id: Id) -> Result<Option<Fluid>, StoreError> {
        let sql = format!("SELECT {FLUID_COLS} FROM fluids WHERE id = ?1");
        self.query_opt(&sql, params![id], fluid_from_row)
    }

    pub fn fluid_by_name(&self, name: &str) -> Result<Option<Fluid>, StoreError> {
        let sql = format!("SELECT {FLUID_COLS} FROM fluids WHERE name = ?1");
        self.query_opt(&sql, params![name.trim()], fluid_from_row)
    }

    /// Adds a fluid (its `id` is ignored) and returns the new id.
    pub fn insert_fluid(&self, f: &Fluid) -> Result<Id, StoreError> {
        let row = FluidRow::from_model(f)?;
        self.insert_row(INSERT_FLUID, &row.params()[..])
    }

    /// Changes a fluid (found by `f.id`); the old values go to the edit history.
    pub fn update_fluid(&self, f: &Fluid, by: &str, reason: &str) -> Result<(), StoreError> {
        let row = FluidRow::from_model(f)?;
        self.with_edit(by, reason, |s| {
            let n = s.exec(
                "UPDATE fluids SET name = ?2, iso_vg = ?3, kv40_new_cst = ?4, kv100_new_cst = ?5, \
                     acid_new_mgkoh_g = ?6, base_type = ?7 WHERE id = ?1",
                params![
                    f.id,
                    row.name,
                    row.iso_vg,
                    row.kv40_cst,
                    row.kv100_cst,
                    row.acid,
                    row.base_type
                ],
            )?;
            if n == 0 {
                return Err(StoreError::NotFound(format!("fluid {}", f.id)));
            }
            Ok(())
        })
    }
}
