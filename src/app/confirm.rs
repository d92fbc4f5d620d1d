//! Confirming a questioned reading, and lifting a confirmation: the person's word that a
//! reading the screening doubted is what was measured.
//!
//! A reading is found by unit tag and the time it was taken (a check, or a sample with
//! `ReadingKind::Sample`). Confirming stores who and when on the reading; lifting clears it.
//! Both are edits of a stored reading, so the store keeps the row as it was in the edit history
//! with who and why. No SQL, no printing.

use chrono::{DateTime, SubsecRound, Utc};
use serde::{Deserialize, Serialize};

use super::status::{store_error, unit_status_in, UnitStatus};
use super::AppError;
use crate::model::{Confirmation, Id};
use crate::store::{Store, StoreError};

/// Which kind of reading is meant.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum ReadingKind {
    /// A walk-round check.
    Check,
    /// A fluid sample result.
    Sample,
}

impl ReadingKind {
    pub fn as_str(self) -> &'static str {
        match self {
            ReadingKind::Check => "check",
            ReadingKind::Sample => "sample",
        }
    }
}

impl std::fmt::Display for ReadingKind {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.as_str())
    }
}

/// What was done to a reading's confirmation.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum ConfirmAction {
    Confirmed,
    Lifted,
}

/// The outcome of confirming a reading or lifting its confirmation.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct ConfirmResult {
    pub unit: String,
    pub kind: ReadingKind,
    /// The reading's row id.
    pub reading_id: Id,
    /// When the reading was taken.
    pub taken_at: DateTime<Utc>,
    pub action: ConfirmAction,
    /// The confirmation as it now stands (`None` after lifting).
    pub confirmed: Option<Confirmation>,
    /// The confirmation that was lifted.
    pub lifted: Option<Confirmation>,
    /// The reason kept in the edit history.
    pub reason: String,
    /// The unit as it stands after the change.
    pub status: UnitStatus,
}

fn need(what: &str, text: &str) -> Result<String, AppError> {
    let t = text.trim();
    if t.is_empty() {
        return Err(AppError::BadInput(format!("{what} must be given")));
    }
    Ok(t.to_string())
}

/// The stored reading of `kind` of the unit tagged `tag` taken at `at`: its id, its unit's
/// tag and its confirmation. A reading that does not exist is bad input that names the
/// nearest readings of that unit.
fn find_reading(
    store: &Store,
    tag: &str,
    kind: ReadingKind,
    at: DateTime<Utc>,
) -> Result<(Id, String, Option<Confirmation>), AppError> {
    let zone = crate::app::shop::zone_of(store);
    let tag = tag.trim();
    let unit = store
        .unit_by_tag(tag)
        .map_err(store_error)?
        .ok_or_else(|| AppError::BadInput(format!("no unit `{tag}` in this shop")))?;
    let found = match kind {
        ReadingKind::Check => store
            .check_at(unit.id, &at)
            .map_err(store_error)?
            .map(|c| (c.id, c.confirmed)),
        ReadingKind::Sample => store
            .sample_at(unit.id, &at)
            .map_err(store_error)?
            .map(|s| (s.id, s.confirmed)),
    };
    if let Some((id, confirmed)) = found {
        return Ok((id, unit.tag, confirmed));
    }
    let times: Vec<DateTime<Utc>> = match kind {
        ReadingKind::Check => store
            .checks_for_unit(unit.id, None)
            .map_err(store_error)?
            .into_iter()
            .map(|c| c.taken_at)
            .collect(),
        ReadingKind::Sample => store
            .samples_for_unit(unit.id, None)
            .map_err(store_error)?
            .into_iter()
            .map(|s| s.sampled_at)
            .collect(),
    };
    let mut near = times;
    near.sort_by_key(|t| (*t - at).num_seconds().abs());
    near.truncate(3);
    near.sort();
    let hint = if near.is_empty() {
        format!("; {} has no {kind}s", unit.tag)
    } else {
        format!(
            "; the nearest {kind}s of {} were taken at {}",
            unit.tag,
            near.iter()
                .map(|t| zone.show_exact(*t))
                .collect::<Vec<_>>()
                .join(", ")
        )
    };
    Err(AppError::BadInput(format!(
        "no {kind} of {} taken at {}{hint}",
        unit.tag,
        zone.show_exact(at)
    )))
}

fn set(
    store: &Store,
    kind: ReadingKind,
    id: Id,
    confirmed: Option<&Confirmation>,
    by: &str,
    reason: &str,
) -> Result<(), AppError> {
    let r = match kind {
        ReadingKind::Check => store.set_check_confirmation(id, confirmed, by, reason),
        ReadingKind::Sample => store.set_sample_confirmation(id, confirmed, by, reason),
    };
    r.map_err(|e| match e {
        StoreError::NotFound(what) => {
            AppError::BadInput(format!("{what} was deleted meanwhile; nothing was changed"))
        }
        other => store_error(other),
    })
}

/// Reads the time of the reading to confirm: an ISO 8601 date-time, in the shop's zone `zone`
/// unless it carries `Z` or an offset (`app::local_time`).
pub fn read_at(text: &str, zone: crate::app::local_time::Zone) -> Result<DateTime<Utc>, String> {
    crate::app::local_time::read(text, zone).map_err(|e| e.to_string())
}

/// `by` confirms the `kind` reading of unit `tag` taken at `at`: it is what was measured, so
/// it counts in baselines and detectors like any other. `note` says why (kept in the edit
/// history). A reading already confirmed is refused, naming who confirmed it.
pub(crate) fn confirm_reading_in(
    store: &Store,
    tag: &str,
    kind: ReadingKind,
    at: DateTime<Utc>,
    by: &str,
    note: &str,
    now: DateTime<Utc>,
) -> Result<ConfirmResult, AppError> {
    let by = need("who confirms the reading (--by NAME)", by)?;
    let now = now.trunc_subsecs(0);
    let zone = crate::app::shop::zone_of(store);
    let (id, unit, before) = find_reading(store, tag, kind, at)?;
    if let Some(k) = before {
        return Err(AppError::BadInput(format!(
            "the {kind} of {unit} at {} is already confirmed by {} on {}",
            zone.show_exact(at),
            k.by,
            zone.show_marked(k.at)
        )));
    }
    let confirmation = Confirmation {
        by: by.clone(),
        at: now,
    };
    let reason = match note.trim() {
        "" => "reading confirmed as measured".to_string(),
        n => format!("reading confirmed as measured: {n}"),
    };
    set(store, kind, id, Some(&confirmation), &by, &reason)?;
    let status = unit_status_in(store, &unit, Some(now.max(at)))?;
    Ok(ConfirmResult {
        unit,
        kind,
        reading_id: id,
        taken_at: at,
        action: ConfirmAction::Confirmed,
        confirmed: Some(confirmation),
        lifted: None,
        reason,
        status,
    })
}

/// `by` lifts the confirmation of the `kind` reading of unit `tag` taken at `at`, saying `why`
/// (required: the edit history keeps it). A questioned reading is then held out of baselines
/// and detectors again. A reading that is not confirmed is refused.
pub(crate) fn lift_confirmation_in(
    store: &Store,
    tag: &str,
    kind: ReadingKind,
    at: DateTime<Utc>,
    by: &str,
    why: &str,
    now: DateTime<Utc>,
) -> Result<ConfirmResult, AppError> {
    let by = need("who lifts the confirmation (--by NAME)", by)?;
    let why = need("why the confirmation is lifted (--note TEXT)", why)?;
    let now = now.trunc_subsecs(0);
    let zone = crate::app::shop::zone_of(store);
    let (id, unit, before) = find_reading(store, tag, kind, at)?;
    let Some(before) = before else {
        return Err(AppError::BadInput(format!(
            "the {kind} of {unit} at {} is not confirmed; there is nothing to lift",
            zone.show_exact(at)
        )));
    };
    let reason = format!("confirmation lifted: {why}");
    set(store, kind, id, None, &by, &reason)?;
    let status = unit_status_in(store, &unit, Some(now.max(at)))?;
    Ok(ConfirmResult {
        unit,
        kind,
        reading_id: id,
        taken_at: at,
        action: ConfirmAction::Lifted,
        confirmed: None,
        lifted: Some(before),
        reason,
        status,
    })
}

/// [`confirm_reading_in`] on a shop.
pub fn confirm_reading(
    shop: &super::shop::Shop,
    tag: &str,
    kind: ReadingKind,
    at: DateTime<Utc>,
    by: &str,
    note: &str,
    now: DateTime<Utc>,
) -> Result<ConfirmResult, AppError> {
    confirm_reading_in(shop.store(), tag, kind, at, by, note, now)
}

/// [`lift_confirmation_in`] on a shop.
pub fn lift_confirmation(
    shop: &super::shop::Shop,
    tag: &str,
    kind: ReadingKind,
    at: DateTime<Utc>,
    by: &str,
    why: &str,
    now: DateTime<Utc>,
) -> Result<ConfirmResult, AppError> {
    lift_confirmation_in(shop.store(), tag, kind, at, by, why, now)
}
