//! Importer: the resolved columns of one file kind, and checks turned into records and written,
//! with a row already stored adding nothing when it agrees and refused when it differs. No SQL
//! here; the store does that.

use super::*;
use crate::bounds;

use crate::exchange::{ExchangeError, FileKind, ImportSummary};
use crate::model::{Check, Confirmation, FilterState, Id, OilLevel};
use crate::store::columns::{self};
use crate::store::{Bulk, Put, StoreError};
use crate::units::Seconds;

pub(super) enum Outcome {
    /// Written; the row id for checks and samples.
    Inserted(Option<Id>),
    Unchanged,
}

/// A store refusal of one row, as a row error; other store failures stop the import.
pub(super) fn row_store_error(
    row: &mut RowReader<'_>,
    e: StoreError,
    column_of: impl Fn(&str) -> String,
) -> Result<(), ExchangeError> {
    match e {
        StoreError::Invalid { field, reason } => row.err(&column_of(&field), reason),
        StoreError::Duplicate { what } => row.err("row", format!("{what} already exists")),
        StoreError::BadReference => row.err("row", "refers to a unit or fluid that does not exist"),
        StoreError::Refused(msg) => row.err("row", msg),
        other => return Err(ExchangeError::Store(other)),
    }
    Ok(())
}

/// Equal within conversion noise, compared in the column's metric unit.
fn near(a: f64, b: f64) -> bool {
    a == b || (a - b).abs() <= 1e-9 * a.abs().max(b.abs())
}

/// Whether a given value disagrees with the stored one (an absent value never does).
pub(super) fn differs(given: Option<f64>, stored: Option<f64>) -> bool {
    match (given, stored) {
        (None, _) => false,
        (Some(_), None) => true,
        (Some(a), Some(b)) => !near(a, b),
    }
}

pub(super) fn differs_text(given: &str, stored: &str) -> bool {
    !given.is_empty() && given != stored
}

/// The resolved columns of one file kind and the per-row logic.
pub(super) struct Importer {
    kind: FileKind,
    /// Each field of the kind with where it is in this file; a short list, scanned in order.
    s: Vec<(&'static str, Option<Slot>)>,
}

impl Importer {
    pub(super) fn new(kind: FileKind, header: &Header) -> Self {
        let mut s: Vec<(&'static str, Option<Slot>)> = Vec::new();
        for c in specs(kind) {
            if !s.iter().any(|(f, _)| *f == c.field) {
                s.push((c.field, header.slot(c.field)));
            }
        }
        Importer { kind, s }
    }

    pub(super) fn slot(&self, field: &str) -> Option<Slot> {
        self.s
            .iter()
            .find(|(f, _)| *f == field)
            .and_then(|(_, slot)| *slot)
    }

    pub(super) fn name(&self, field: &str) -> String {
        self.slot(field)
            .map_or_else(|| field.to_string(), |s| s.name.to_string())
    }

    pub(super) fn row(
        &mut self,
        bulk: &mut Bulk<'_>,
        row: &mut RowReader<'_>,
        summary: &mut ImportSummary,
    ) -> Result<Option<Outcome>, ExchangeError> {
        match self.kind {
            FileKind::Checks => self.check_row(bulk, row),
            FileKind::Samples => self.sample_row(bulk, row),
            FileKind::Events => self.event_row(bulk, row, summary),
            FileKind::Units => self.unit_row(bulk, row, summary),
        }
    }

    /// Who confirmed a questioned reading and when (`confirmed_by`, `confirmed_at`): both or
    /// neither; absent columns are neither.
    pub(super) fn confirmation(&self, row: &mut RowReader<'_>) -> Option<Confirmation> {
        let by_slot = self.slot("confirmed_by");
        let at_slot = self.slot("confirmed_at");
        let by = row.text(by_slot).map(str::to_string);
        let at_given = row.text(at_slot).is_some();
        match (by, at_given) {
            (None, false) => None,
            (Some(by), true) => row
                .when(at_slot, "confirmed_at")
                .map(|at| Confirmation { by, at }),
            (Some(_), false) => {
                row.err(
                    &self.name("confirmed_at"),
                    "confirmed_by needs the time of the confirmation in confirmed_at",
                );
                None
            }
            (None, true) => {
                row.err(
                    &self.name("confirmed_by"),
                    "confirmed_at needs who confirmed the reading in confirmed_by",
                );
                None
            }
        }
    }

    pub(super) fn unit_id(&self, bulk: &Bulk<'_>, row: &mut RowReader<'_>) -> Option<Id> {
        let tag = row.need(self.slot("unit_tag"), "unit_tag")?;
        match bulk.unit_by_tag(tag) {
            Some(u) => Some(u.id),
            None => {
                row.err(
                    &self.name("unit_tag"),
                    format!(
                        "no unit `{tag}` in this shop (import the unit register, units.csv, first)"
                    ),
                );
                None
            }
        }
    }

    fn check_row(
        &self,
        bulk: &mut Bulk<'_>,
        row: &mut RowReader<'_>,
    ) -> Result<Option<Outcome>, ExchangeError> {
        let unit_id = self.unit_id(bulk, row);
        let taken_at = row.when(self.slot("taken_at"), "taken_at");
        let reservoir_temp = row.temperature(self.slot("reservoir_temp"));
        let ambient_temp = row.temperature(self.slot("ambient_temp"));
        let pressure = row.pressure(self.slot("pressure"), bound(bounds::PRESSURE_BAR));
        let stroke_time = row
            .plain(self.slot("stroke_time"), bound(bounds::STROKE_TIME_S))
            .map(Seconds);
        let cycle_time = row
            .plain(self.slot("cycle_time"), bound(bounds::CYCLE_TIME_S))
            .map(Seconds);
        let oil_level: Option<OilLevel> = row.parsed(self.slot("oil_level"));
        let filter: Option<FilterState> = row.parsed(self.slot("filter"));
        let hours = row.plain(self.slot("hours"), bound(bounds::HOURS));
        let case_drain = row.flow(self.slot("case_drain"), bound(bounds::CASE_DRAIN_LPM));
        let by = row.free(self.slot("by"));
        let note = row.free(self.slot("note"));
        let confirmed = self.confirmation(row);
        let (Some(unit_id), Some(taken_at)) = (unit_id, taken_at) else {
            return Ok(None);
        };
        if !row.errors.is_empty() {
            return Ok(None);
        }
        let check = Check {
            id: 0,
            unit_id,
            taken_at,
            reservoir_temp,
            ambient_temp,
            pressure,
            stroke_time,
            cycle_time,
            oil_level,
            filter,
            hours,
            case_drain,
            by,
            note,
            confirmed,
        };
        match bulk.put_check(&check) {
            Ok(Put::Inserted(id)) => Ok(Some(Outcome::Inserted(Some(id)))),
            Ok(Put::Exists(stored)) => {
                let c = columns::temp_c;
                let mut diff = Vec::new();
                let mut cmp = |field: &str, d: bool| {
                    if d {
                        diff.push(self.name(field));
                    }
                };
                cmp(
                    "reservoir_temp",
                    differs(check.reservoir_temp.map(c), stored.reservoir_temp.map(c)),
                );
                cmp(
                    "ambient_temp",
                    differs(check.ambient_temp.map(c), stored.ambient_temp.map(c)),
                );
                cmp(
                    "pressure",
                    differs(
                        check.pressure.map(columns::bar),
                        stored.pressure.map(columns::bar),
                    ),
                );
                cmp(
                    "stroke_time",
                    differs(
                        check.stroke_time.map(|s| s.0),
                        stored.stroke_time.map(|s| s.0),
                    ),
                );
                cmp(
                    "cycle_time",
                    differs(
                        check.cycle_time.map(|s| s.0),
                        stored.cycle_time.map(|s| s.0),
                    ),
                );
                cmp(
                    "oil_level",
                    check.oil_level.is_some() && check.oil_level != stored.oil_level,
                );
                cmp(
                    "filter",
                    check.filter.is_some() && check.filter != stored.filter,
                );
                cmp("hours", differs(check.hours, stored.hours));
                cmp(
                    "case_drain",
                    differs(
                        check.case_drain.map(columns::lpm),
                        stored.case_drain.map(columns::lpm),
                    ),
                );
                cmp("by", differs_text(&check.by, &stored.by));
                cmp("note", differs_text(&check.note, &stored.note));
                cmp(
                    "confirmed_by",
                    check.confirmed.is_some() && check.confirmed != stored.confirmed,
                );
                self.existing(row, "taken_at", "a check of this unit at this time", diff)
            }
            Err(e) => {
                row_store_error(row, e, |f| self.name(f))?;
                Ok(None)
            }
        }
    }

    /// A row whose key is stored: harmless when nothing differs, refused otherwise.
    pub(super) fn existing(
        &self,
        row: &mut RowReader<'_>,
        key_field: &str,
        what: &str,
        diff: Vec<String>,
    ) -> Result<Option<Outcome>, ExchangeError> {
        if diff.is_empty() {
            Ok(Some(Outcome::Unchanged))
        } else {
            row.err(
                &self.name(key_field),
                format!(
                    "{what} is already stored with other values in {}; stored data is not overwritten by an import",
                    diff.join(", ")
                ),
            );
            Ok(None)
        }
    }
}
