//! Column-mapping profiles for importing files named their own way: the `import_profiles`
//! table. Saved and read whole; what a profile means is `exchange::mapping`'s. A profile is a
//! way of reading files, not evidence: saving one under a stored name replaces it.

use super::db::{params, Row};

use super::{fmt_time_stamp, time_col, Store, StoreError};
use crate::model::ImportProfile;

const COLS: &str = "name, kind, header, columns, date_order, saved_at";

fn json_err(e: serde_json::Error) -> StoreError {
    StoreError::Corrupt(format!("an import profile: {e}"))
}

fn from_row(r: &Row<'_>) -> Result<ImportProfile, StoreError> {
    let header: String = r.get(2)?;
    let columns: String = r.get(3)?;
    Ok(ImportProfile {
        name: r.get(0)?,
        kind: r.get(1)?,
        header: serde_json::from_str(&header).map_err(json_err)?,
        columns: serde_json::from_str(&columns).map_err(json_err)?,
        date_order: r.get(4)?,
        saved_at: time_col(r, 5)?,
    })
}

impl Store {
    /// Saves a profile, replacing a stored one of the same name.
    pub fn save_import_profile(&self, p: &ImportProfile) -> Result<(), StoreError> {
        let header = serde_json::to_string(&p.header).map_err(json_err)?;
        let columns = serde_json::to_string(&p.columns).map_err(json_err)?;
        let at = fmt_time_stamp(&p.saved_at);
        let name = p.name.trim();
        let changed = self.exec(
            "UPDATE import_profiles SET kind = ?2, header = ?3, columns = ?4, date_order = ?5, \
             saved_at = ?6 WHERE name = ?1",
            params![name, p.kind, header, columns, p.date_order, at],
        )?;
        if changed == 0 {
            self.insert_row(
                "INSERT INTO import_profiles (name, kind, header, columns, date_order, saved_at) \
                 VALUES (?1, ?2, ?3, ?4, ?5, ?6)",
                params![name, p.kind, header, columns, p.date_order, at],
            )?;
        }
        Ok(())
    }

    /// Every saved profile, by name.
    pub fn import_profiles(&self) -> Result<Vec<ImportProfile>, StoreError> {
        self.query(
            &format!("SELECT {COLS} FROM import_profiles ORDER BY name"),
            params![],
            from_row,
        )
    }

    /// The profile named `name`, if saved.
    pub fn import_profile(&self, name: &str) -> Result<Option<ImportProfile>, StoreError> {
        self.query_opt(
            &format!("SELECT {COLS} FROM import_profiles WHERE name = ?1"),
            params![name.trim()],
            from_row,
        )
    }
}
