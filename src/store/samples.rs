//! Fluid sample results: typed reads and writes of the `samples` table.
//!
//! One row per unit and sampling time. Any subset of viscosity, particle counts or a written
//! ISO 4406 code, water and acid number may be given. No CSV, no health.

use super::db::{params, Row, ToDb};
use chrono::{DateTime, Utc};

use super::columns::{cst, temp_c, tidy};
use super::{
    confirmation_cols, confirmation_time, fmt_time, fmt_time_stamp, time_col, Store, StoreError,
};
use crate::model::{Confirmation, Id, Sample, ViscReading};
use crate::units::{Temperature, Viscosity};

pub(crate) const SAMPLE_COLS: &str = "id, unit_id, sampled_at, kv40_cst, kv100_cst, visc_cst, visc_temp_c, \
     count_4um_per_ml, count_6um_per_ml, count_14um_per_ml, iso4406, water_ppm, acid_mgkoh_g, lab_ref, note, \
     confirmed_by, confirmed_at";

pub(crate) fn sample_from_row(r: &Row<'_>) -> Result<Sample, StoreError> {
    let visc: Option<f64> = r.get(5)?;
    let visc_t: Option<f64> = r.get(6)?;
    Ok(Sample {
        id: r.get(0)?,
        unit_id: r.get(1)?,
        sampled_at: time_col(r, 2)?,
        kv40: r.get::<Option<f64>>(3)?.map(Viscosity::from_cst),
        kv100: r.get::<Option<f64>>(4)?.map(Viscosity::from_cst),
        visc_reading: match (visc, visc_t) {
            (Some(v), Some(t)) => Some(ViscReading {
                visc: Viscosity::from_cst(v),
                at: Temperature::from_c(t),
            }),
            _ => None,
        },
        counts_per_ml: [r.get(7)?, r.get(8)?, r.get(9)?],
        iso4406: r.get(10)?,
        water_ppm: r.get(11)?,
        acid_mgkoh_g: r.get(12)?,
        lab_ref: r.get(13)?,
        note: r.get(14)?,
        confirmed: confirmation_cols(r, 15)?,
    })
}

/// A sample in column units, ready to bind (`SAMPLE_COLS` order after `id`).
#[derive(Debug, PartialEq)]
pub(crate) struct SampleRow<'a> {
    pub unit_id: Id,
    pub sampled_at: String,
    pub kv40_cst: Option<f64>,
    pub kv100_cst: Option<f64>,
    pub visc_cst: Option<f64>,
    pub visc_temp_c: Option<f64>,
    pub counts: [Option<f64>; 3],
    pub iso4406: Option<&'a str>,
    pub water_ppm: Option<f64>,
    pub acid_mgkoh_g: Option<f64>,
    pub lab_ref: &'a str,
    pub note: &'a str,
    pub confirmed_by: Option<&'a str>,
    pub confirmed_at: Option<String>,
}

impl<'a> SampleRow<'a> {
    pub fn from_model(s: &'a Sample) -> Result<Self, StoreError> {
        Ok(SampleRow {
            unit_id: s.unit_id,
            sampled_at: fmt_time("sampled_at", &s.sampled_at)?,
            kv40_cst: s.kv40.map(cst),
            kv100_cst: s.kv100.map(cst),
            visc_cst: s.visc_reading.map(|v| cst(v.visc)),
            visc_temp_c: s.visc_reading.map(|v| temp_c(v.at)),
            counts: s.counts_per_ml.map(|c| c.map(tidy)),
            iso4406: s.iso4406.as_deref().map(str::trim),
            water_ppm: s.water_ppm.map(tidy),
            acid_mgkoh_g: s.acid_mgkoh_g.map(tidy),
            lab_ref: &s.lab_ref,
            note: &s.note,
            confirmed_by: s.confirmed.as_ref().map(|k| k.by.as_str()),
            confirmed_at: confirmation_time(&s.confirmed)?,
        })
    }

    pub fn params(&self) -> [&dyn ToDb; 16] {
        [
            &self.unit_id,
            &self.sampled_at,
            &self.kv40_cst,
            &self.kv100_cst,
            &self.visc_cst,
            &self.visc_temp_c,
            &self.counts[0],
            &self.counts[1],
            &self.counts[2],
            &self.iso4406,
            &self.water_ppm,
            &self.acid_mgkoh_g,
            &self.lab_ref,
            &self.note,
            &self.confirmed_by,
            &self.confirmed_at,
        ]
    }
}

/// The samples of one unit up to a time (`?1` unit, `?2` time), oldest first.
pub(crate) fn unit_samples_sql() -> String {
    format!("SELECT {SAMPLE_COLS} FROM samples WHERE unit_id = ?1 AND sampled_at <= ?2 ORDER BY sampled_at")
}

pub(crate) const INSERT_SAMPLE: &str = "INSERT INTO samples (unit_id, sampled_at, kv40_cst, kv100_cst, visc_cst, \
     visc_temp_c, count_4um_per_ml, count_6um_per_ml, count_14um_per_ml, iso4406, water_ppm, acid_mgkoh_g, lab_ref, note, \
     confirmed_by, confirmed_at) \
     VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10, ?11, ?12, ?13, ?14, ?15, ?16)";

impl Store {
    /// Adds one sample result and returns its id.
    pub fn insert_sample(&self, s: &Sample) -> Result<Id, StoreError> {
        let row = SampleRow::from_model(s)?;
        self.insert_row(
            &self.reading_insert(INSERT_SAMPLE, "samples"),
            &row.params()[..],
        )
    }

    pub fn sample(&self, id: Id) -> Result<Option<Sample>, StoreError> {
        let sql = format!("SELECT {SAMPLE_COLS} FROM samples WHERE id = ?1");
        self.query_opt(&sql, params![id], sample_from_row)
    }

    /// The samples of one unit, oldest first; with `at`, only those taken at or before it.
    pub fn samples_for_unit(
        &self,
        unit_id: Id,
        at: Option<DateTime<Utc>>,
    ) -> Result<Vec<Sample>, StoreError> {
        let until = super::history::until_text(at);
        self.query(
            &unit_samples_sql(),
            params![unit_id, until],
            sample_from_row,
        )
    }

    /// The latest sample of every unit that has one, ordered by unit id.
    pub fn latest_samples(&self) -> Result<Vec<Sample>, StoreError> {
        // (unit, time) is unique, so each unit's latest time names one row.
        let sql = format!(
            "SELECT {SAMPLE_COLS} FROM samples WHERE (unit_id, sampled_at) IN \
             (SELECT unit_id, max(sampled_at) FROM samples GROUP BY unit_id) ORDER BY unit_id"
        );
        self.query(&sql, params![], sample_from_row)
    }

    /// Changes a stored sample (found by `s.id`), keeping the old values in the edit history.
    pub fn update_sample(&self, s: &Sample, by: &str, reason: &str) -> Result<(), StoreError> {
        let row = SampleRow::from_model(s)?;
        self.with_edit(by, reason, |st| {
            let mut p: Vec<&dyn ToDb> = row.params().to_vec();
            p.push(&s.id);
            let n = st.exec(
                    "UPDATE samples SET unit_id = ?1, sampled_at = ?2, kv40_cst = ?3, kv100_cst = ?4, visc_cst = ?5, \
                     visc_temp_c = ?6, count_4um_per_ml = ?7, count_6um_per_ml = ?8, count_14um_per_ml = ?9, \
                     iso4406 = ?10, water_ppm = ?11, acid_mgkoh_g = ?12, lab_ref = ?13, note = ?14, \
                     confirmed_by = ?15, confirmed_at = ?16 WHERE id = ?17",
                &p[..])?;
            if n == 0 {
                return Err(StoreError::NotFound(format!("sample {}", s.id)));
            }
            Ok(())
        })
    }

    /// The sample of unit `unit_id` taken at exactly `at`, if there is one.
    pub fn sample_at(&self, unit_id: Id, at: &DateTime<Utc>) -> Result<Option<Sample>, StoreError> {
        let sql =
            format!("SELECT {SAMPLE_COLS} FROM samples WHERE unit_id = ?1 AND sampled_at = ?2");
        self.query_opt(&sql, params![unit_id, fmt_time_stamp(at)], sample_from_row)
    }

    /// Whether any stored sample is confirmed (an export then carries the confirmation columns).
    pub fn any_confirmed_sample(&self) -> Result<bool, StoreError> {
        self.query_one(
            "SELECT EXISTS (SELECT 1 FROM samples WHERE confirmed_by IS NOT NULL)",
            params![],
            |r| r.get(0),
        )
    }

    /// Marks a stored sample as confirmed by a person (`Some`), or lifts its confirmation
    /// (`None`), keeping the row as it was in the edit history with `by` and `reason`.
    pub fn set_sample_confirmation(
        &self,
        id: Id,
        confirmed: Option<&Confirmation>,
        by: &str,
        reason: &str,
    ) -> Result<(), StoreError> {
        let at = confirmation_time(&confirmed.cloned())?;
        let who = confirmed.map(|k| k.by.trim());
        self.with_edit(by, reason, |s| {
            let n = s.exec(
                "UPDATE samples SET confirmed_by = ?1, confirmed_at = ?2 WHERE id = ?3",
                params![who, at, id],
            )?;
            if n == 0 {
                return Err(StoreError::NotFound(format!("sample {id}")));
            }
            Ok(())
        })
    }

    /// Deletes a stored sample; its values stay in the edit history.
    pub fn delete_sample(&self, id: Id, by: &str, reason: &str) -> Result<(), StoreError> {
        self.with_edit(by, reason, |s| {
            let n = s.exec("DELETE FROM samples WHERE id = ?1", params![id])?;
            if n == 0 {
                return Err(StoreError::NotFound(format!("sample {id}")));
            }
            Ok(())
        })
    }
}

impl Store {
    /// Every sample of the shop in time order (then by unit), one at a time.
    pub fn each_sample<E: From<StoreError>>(
        &self,
        mut f: impl FnMut(Sample) -> Result<(), E>,
    ) -> Result<(), E> {
        let sql = format!("SELECT {SAMPLE_COLS} FROM samples ORDER BY sampled_at, unit_id");
        self.query_each(&sql, params![], |r| f(sample_from_row(r)?))
    }
}
