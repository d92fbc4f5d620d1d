//! Unit histories read a batch of units at a time, for an evaluation that streams through the
//! fleet: one query per table for a run of units (by id), each unit's rows in its own time
//! order through the (unit, time) keys, so that only the batch is ever held, however long the
//! histories. Also when each unit's next record after the instant judged falls, which bounds
//! how long an evaluation holds. It must not evaluate.

use std::collections::HashMap;

use chrono::{DateTime, Utc};

use super::acks::{ack_from_row, ACK_COLS};
use super::baselines_limits::{baseline_from_row, baseline_sql};
use super::checks::{check_from_row, CHECK_COLS};
use super::db::{params, Row};
use super::events::{event_from_row, EVENT_COLS};
use super::history::until_text;
use super::samples::{sample_from_row, SAMPLE_COLS};
use super::{parse_time, Store, StoreError};
use crate::model::{Id, UnitHistory};

/// Checks of the units `?1..=?2` up to `?3`, unit by unit, in time order (the `(unit_id,
/// taken_at)` key serves both the range and the order).
pub(crate) fn batch_checks_sql() -> String {
    format!(
        "SELECT {CHECK_COLS} FROM checks WHERE unit_id BETWEEN ?1 AND ?2 AND taken_at <= ?3 \
         ORDER BY unit_id, taken_at"
    )
}

pub(crate) fn batch_samples_sql() -> String {
    format!(
        "SELECT {SAMPLE_COLS} FROM samples WHERE unit_id BETWEEN ?1 AND ?2 AND sampled_at <= ?3 \
         ORDER BY unit_id, sampled_at"
    )
}

pub(crate) fn batch_events_sql() -> String {
    format!(
        "SELECT {EVENT_COLS} FROM events WHERE unit_id BETWEEN ?1 AND ?2 AND done_at <= ?3 \
         ORDER BY unit_id, done_at, kind"
    )
}

fn batch_baselines_sql() -> String {
    format!(
        "{} WHERE unit_id BETWEEN ?1 AND ?2 AND entered_at <= ?3 \
         ORDER BY unit_id, era_start, entered_at, id",
        baseline_sql()
    )
}

fn batch_acks_sql() -> String {
    format!(
        "SELECT {ACK_COLS} FROM acknowledgements WHERE unit_id BETWEEN ?1 AND ?2 AND acked_at <= ?3 \
         ORDER BY unit_id, acked_at, id"
    )
}

/// Each unit's first record of any kind after `?3`: one step down each (unit, time) key.
pub(crate) fn batch_next_records_sql() -> &'static str {
    "SELECT u.id, \
         (SELECT min(taken_at) FROM checks WHERE checks.unit_id = u.id AND taken_at > ?3), \
         (SELECT min(sampled_at) FROM samples WHERE samples.unit_id = u.id AND sampled_at > ?3), \
         (SELECT min(done_at) FROM events WHERE events.unit_id = u.id AND done_at > ?3), \
         (SELECT min(entered_at) FROM manual_baselines \
              WHERE manual_baselines.unit_id = u.id AND entered_at > ?3), \
         (SELECT min(acked_at) FROM acknowledgements \
              WHERE acknowledgements.unit_id = u.id AND acked_at > ?3) \
     FROM units u WHERE u.id BETWEEN ?1 AND ?2"
}

/// Per unit of a batch, the time of its first record (check, sample, event, hand baseline or
/// acknowledgement) after the instant judged; absent when there is none.
pub type NextRecords = HashMap<Id, DateTime<Utc>>;

impl Store {
    /// The checks a unit has on average, from the highest check id (one step down the key; a
    /// deleted check still counts): sizes the first batch of a streaming read.
    pub fn checks_per_unit_estimate(&self) -> Result<usize, StoreError> {
        let (checks, units): (Option<i64>, i64) = self.query_one(
            "SELECT (SELECT max(id) FROM checks), (SELECT count(*) FROM units)",
            params![],
            |r| Ok((r.get(0)?, r.get(1)?)),
        )?;
        let checks = usize::try_from(checks.unwrap_or(0)).unwrap_or(0);
        Ok(checks.div_ceil(usize::try_from(units).unwrap_or(1).max(1)))
    }

    /// Every active unit (neither it nor its machine archived) with its machine and fluid and
    /// no records yet, in route order: the shells [`Store::fill_histories`] fills.
    pub fn active_unit_shells(&self) -> Result<Vec<UnitHistory>, StoreError> {
        let machines: HashMap<Id, _> = self.machines()?.into_iter().map(|m| (m.id, m)).collect();
        let fluids: HashMap<Id, _> = self.fluids()?.into_iter().map(|f| (f.id, f)).collect();
        let mut out = Vec::new();
        for unit in self.units()? {
            let Some(machine) = machines.get(&unit.machine_id) else {
                continue;
            };
            if unit.archived || machine.archived {
                continue;
            }
            out.push(UnitHistory {
                machine: machine.clone(),
                fluid: unit.fluid_id.and_then(|f| fluids.get(&f).cloned()),
                unit,
                checks: Vec::new(),
                samples: Vec::new(),
                events: Vec::new(),
                manual_baselines: Vec::new(),
                acknowledgements: Vec::new(),
            });
        }
        Ok(out)
    }

    /// Fills `batch` (shells of units, any order) with their records up to `at`, reading the
    /// units from the lowest id to the highest of the batch in one query per table (rows of
    /// units between them that are not in the batch are passed over, so a batch should be a
    /// run of neighbouring ids), and returns when each unit's next record after `at` falls.
    pub fn fill_histories(
        &self,
        batch: &mut [UnitHistory],
        at: DateTime<Utc>,
    ) -> Result<NextRecords, StoreError> {
        let mut next = NextRecords::new();
        let (Some(lo), Some(hi)) = (
            batch.iter().map(|h| h.unit.id).min(),
            batch.iter().map(|h| h.unit.id).max(),
        ) else {
            return Ok(next);
        };
        let slot: HashMap<Id, usize> = batch
            .iter()
            .enumerate()
            .map(|(i, h)| (h.unit.id, i))
            .collect();
        let until = until_text(Some(at));
        macro_rules! read_into {
            ($sql:expr, $from_row:path, $field:ident) => {
                self.query_each::<StoreError>(&$sql, params![lo, hi, until], |r: &Row<'_>| {
                    let rec = $from_row(r)?;
                    if let Some(&i) = slot.get(&rec.unit_id) {
                        batch[i].$field.push(rec);
                    }
                    Ok(())
                })?
            };
        }
        read_into!(batch_checks_sql(), check_from_row, checks);
        read_into!(batch_samples_sql(), sample_from_row, samples);
        read_into!(batch_events_sql(), event_from_row, events);
        read_into!(batch_baselines_sql(), baseline_from_row, manual_baselines);
        read_into!(batch_acks_sql(), ack_from_row, acknowledgements);
        self.query_each::<StoreError>(batch_next_records_sql(), params![lo, hi, until], |r| {
            let unit: Id = r.get(0)?;
            let mut first: Option<DateTime<Utc>> = None;
            for i in 1..=5 {
                if let Some(t) = r.text(i)? {
                    let t = parse_time(t)?;
                    first = Some(first.map_or(t, |f| f.min(t)));
                }
            }
            if let Some(t) = first.filter(|_| slot.contains_key(&unit)) {
                next.insert(unit, t);
            }
            Ok(())
        })?;
        Ok(next)
    }
}
