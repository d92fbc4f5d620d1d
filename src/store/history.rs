//! Loading everything the health engine needs: one unit's history, or the whole shop's in a
//! fixed number of queries (one per table, grouped here), whatever the size of the fleet.

use std::collections::HashMap;
use std::path::Path;

use rusqlite::{Connection, OpenFlags};

use chrono::{DateTime, Utc};

use super::acks::{ack_from_row, ACK_COLS};
use super::baselines_limits::{baseline_from_row, baseline_sql};
use super::checks::{check_from_row, CHECK_COLS};
use super::db::{params, Row};
use super::events::{event_from_row, EVENT_COLS};
use super::samples::{sample_from_row, SAMPLE_COLS};
use super::{fmt_time_stamp, parse_time, Store, StoreError};
use crate::model::{Check, Id, UnitHistory};

/// The upper time bound of a history as column text; `None` means everything.
pub(crate) fn until_text(at: Option<DateTime<Utc>>) -> String {
    match at {
        Some(t) => fmt_time_stamp(&t),
        None => "9999-12-31T23:59:59Z".to_string(),
    }
}

/// The fleet's reads of checks, samples and events: every row up to a time (`?1`), in time
/// order. The time indexes serve each as one range read that visits the table in about the
/// order its rows were written (a walk-round adds a row per unit each week), where a read in
/// unit order jumps to another page for nearly every row: 2 to 3 times slower on a shop of
/// 1,000 units with ten years of weekly checks (benches/run.sh). Rows are grouped per unit in
/// [`Store::unit_histories`], so each unit's rows stay in time order (events by time, kind, id).
pub(crate) fn fleet_checks_sql() -> String {
    format!("SELECT {CHECK_COLS} FROM checks WHERE taken_at <= ?1 ORDER BY taken_at, unit_id")
}

/// The later part of the checks of [`fleet_checks_sql`] when the read is split in two
/// (see [`Store::unit_histories`]): after `?1`, up to `?2`, in the same order.
pub(crate) fn fleet_later_checks_sql() -> String {
    format!(
        "SELECT {CHECK_COLS} FROM checks WHERE taken_at > ?1 AND taken_at <= ?2 \
         ORDER BY taken_at, unit_id"
    )
}

/// The first and the last check time up to `?1`, each one step down the time index.
pub(crate) fn first_check_time_sql() -> &'static str {
    "SELECT min(taken_at) FROM checks"
}

pub(crate) fn last_check_time_sql() -> &'static str {
    "SELECT max(taken_at) FROM checks WHERE taken_at <= ?1"
}

/// From this many checks on, the fleet read takes the later half of them on a second
/// connection at the same time: reading through the time index is most of a fleet status on
/// a large shop, and a second core halves it. Below it a thread costs more than it saves.
const SPLIT_READ_CHECKS: i64 = 40_000;

/// Reads the checks after `from` up to `until` on a connection of its own (read-only).
fn read_later_checks(path: &Path, from: &str, until: &str) -> Result<Vec<Check>, StoreError> {
    let conn = Connection::open_with_flags(
        path,
        OpenFlags::SQLITE_OPEN_READ_ONLY | OpenFlags::SQLITE_OPEN_NO_MUTEX,
    )?;
    conn.pragma_update(None, "cache_size", -16384)?;
    let mut st = conn.prepare(&fleet_later_checks_sql())?;
    let mut rows = st.query([from, until])?;
    let mut out = Vec::new();
    while let Some(r) = rows.next()? {
        out.push(check_from_row(&Row::Lite(r))?);
    }
    Ok(out)
}

pub(crate) fn fleet_samples_sql() -> String {
    format!("SELECT {SAMPLE_COLS} FROM samples WHERE sampled_at <= ?1 ORDER BY sampled_at, unit_id")
}

pub(crate) fn fleet_events_sql() -> String {
    format!(
        "SELECT {EVENT_COLS} FROM events WHERE done_at <= ?1 ORDER BY done_at, unit_id, kind, id"
    )
}

/// How many checks each unit has up to a time (`?1`), read from the narrow (unit, time) index
/// alone, so that each unit's list of checks is allocated once at its full size instead of
/// growing while half a million rows are read (a tenth of the fleet status on 1,000 units with
/// ten years of weekly checks). Samples are ten times fewer and just grow.
pub(crate) fn fleet_check_counts_sql() -> &'static str {
    "SELECT unit_id, count(*) FROM checks WHERE unit_id IN (SELECT id FROM units) AND taken_at <= ?1 \
     GROUP BY unit_id"
}

/// The fleet's reads of hand-entered baselines and acknowledgements (few rows), unit by unit.
pub(crate) fn fleet_baselines_sql() -> String {
    format!(
        "{} WHERE entered_at <= ?1 ORDER BY unit_id, era_start, entered_at, id",
        baseline_sql()
    )
}

pub(crate) fn fleet_acks_sql() -> String {
    format!("SELECT {ACK_COLS} FROM acknowledgements WHERE acked_at <= ?1 ORDER BY unit_id, acked_at, id")
}

impl Store {
    /// The history of every active unit (neither the unit nor its machine archived), in route
    /// order, with records up to `at` (all when `None`). Runs one query per table; on a large
    /// shop the later half of the checks is read at the same time on a second connection. If
    /// another connection commits meanwhile, the two halves might not be of one moment, so
    /// the read is done again on this connection alone.
    pub fn unit_histories(
        &self,
        at: Option<DateTime<Utc>>,
    ) -> Result<Vec<UnitHistory>, StoreError> {
        // The data version moves only with other connections' commits; this one only reads.
        let before = self.change_stamp()?.0;
        let out = self.read_histories(at, true)?;
        if self.change_stamp()?.0 == before {
            return Ok(out);
        }
        self.read_histories(at, false)
    }

    /// The time halfway between the first and the last check up to `until`, if there are
    /// enough checks to be worth a second reader.
    fn split_time(&self, until: &str, checks: i64) -> Result<Option<String>, StoreError> {
        // A second reader is a second connection to the same file; a server shop reads on one.
        if checks < SPLIT_READ_CHECKS || self.path == Path::new(":memory:") || self.is_server() {
            return Ok(None);
        }
        let first: Option<String> = self
            .query_opt(first_check_time_sql(), params![], |r| r.get(0))?
            .flatten();
        let last: Option<String> = self
            .query_opt(last_check_time_sql(), params![until], |r| r.get(0))?
            .flatten();
        let (Some(first), Some(last)) = (first, last) else {
            return Ok(None);
        };
        let (Ok(a), Ok(b)) = (parse_time(&first), parse_time(&last)) else {
            return Ok(None);
        };
        if b <= a {
            return Ok(None);
        }
        Ok(Some(fmt_time_stamp(&(a + (b - a) / 2))))
    }

    fn read_histories(
        &self,
        at: Option<DateTime<Utc>>,
        may_split: bool,
    ) -> Result<Vec<UnitHistory>, StoreError> {
        let until = until_text(at);
        let mut out = self.active_unit_shells()?;
        let slot: HashMap<Id, usize> = out
            .iter()
            .enumerate()
            .map(|(i, h)| (h.unit.id, i))
            .collect();

        let mut total = 0i64;
        let counts = self.query(fleet_check_counts_sql(), params![until], |r| {
            Ok((r.get::<Id>(0)?, r.get::<i64>(1)?))
        })?;
        for (unit_id, n) in counts {
            total += n;
            if let Some(&i) = slot.get(&unit_id) {
                out[i].checks.reserve_exact(usize::try_from(n).unwrap_or(0));
            }
        }
        let split = if may_split {
            self.split_time(&until, total)?
        } else {
            None
        };
        std::thread::scope(|scope| -> Result<(), StoreError> {
            let later = split.as_ref().map(|mid| {
                let (path, until) = (self.path.clone(), until.clone());
                scope.spawn(move || read_later_checks(&path, mid, &until))
            });
            // Checks up to the split (all of them without one), then the later half after
            // them: both in time order, so each unit's rows stay in time order.
            let first_until = split.as_deref().unwrap_or(&until);
            self.query_each(&fleet_checks_sql(), params![first_until], |r| {
                let c = check_from_row(r)?;
                if let Some(&i) = slot.get(&c.unit_id) {
                    out[i].checks.push(c);
                }
                Ok::<(), StoreError>(())
            })?;
            self.read_other_rows(&until, &slot, &mut out)?;
            if let Some(h) = later {
                let rows = h
                    .join()
                    .map_err(|_| StoreError::Corrupt("the second reader stopped".into()))??;
                for c in rows {
                    if let Some(&i) = slot.get(&c.unit_id) {
                        out[i].checks.push(c);
                    }
                }
            }
            Ok(())
        })?;
        Ok(out)
    }

    /// Samples, events, hand-entered baselines and acknowledgements up to `until`, into the
    /// histories of `out` (indexed by unit through `slot`).
    fn read_other_rows(
        &self,
        until: &str,
        slot: &HashMap<Id, usize>,
        out: &mut [UnitHistory],
    ) -> Result<(), StoreError> {
        self.query_each(&fleet_samples_sql(), params![until], |r| {
            let s = sample_from_row(r)?;
            if let Some(&i) = slot.get(&s.unit_id) {
                out[i].samples.push(s);
            }
            Ok::<(), StoreError>(())
        })?;
        self.query_each(&fleet_events_sql(), params![until], |r| {
            let e = event_from_row(r)?;
            if let Some(&i) = slot.get(&e.unit_id) {
                out[i].events.push(e);
            }
            Ok::<(), StoreError>(())
        })?;
        self.query_each(&fleet_baselines_sql(), params![until], |r| {
            let b = baseline_from_row(r)?;
            if let Some(&i) = slot.get(&b.unit_id) {
                out[i].manual_baselines.push(b);
            }
            Ok::<(), StoreError>(())
        })?;
        self.query_each(&fleet_acks_sql(), params![until], |r| {
            let a = ack_from_row(r)?;
            if let Some(&i) = slot.get(&a.unit_id) {
                out[i].acknowledgements.push(a);
            }
            Ok::<(), StoreError>(())
        })?;
        Ok(())
    }

    /// The history of one unit (archived or not) up to `at`; `None` if there is no such unit.
    pub fn unit_history(
        &self,
        unit_id: Id,
        at: Option<DateTime<Utc>>,
    ) -> Result<Option<UnitHistory>, StoreError> {
        let Some(unit) = self.unit(unit_id)? else {
            return Ok(None);
        };
        let Some(machine) = self.machine(unit.machine_id)? else {
            return Err(StoreError::Corrupt(format!(
                "unit {} has no machine",
                unit.tag
            )));
        };
        let fluid = match unit.fluid_id {
            Some(f) => self.fluid(f)?,
            None => None,
        };
        let until = until_text(at);
        let checks = self.checks_for_unit(unit_id, at)?;
        let samples = self.samples_for_unit(unit_id, at)?;
        let events = self.events_for_unit(unit_id, at)?;
        let manual_baselines = self
            .manual_baselines(unit_id)?
            .into_iter()
            .filter(|b| fmt_time_stamp(&b.entered_at) <= until)
            .collect();
        let acknowledgements = self
            .acks(unit_id)?
            .into_iter()
            .filter(|a| fmt_time_stamp(&a.at) <= until)
            .collect();
        Ok(Some(UnitHistory {
            machine,
            unit,
            fluid,
            checks,
            samples,
            events,
            manual_baselines,
            acknowledgements,
        }))
    }
}

impl Store {
    /// The units with a check (or, with `samples`, a sample) whose row id is in `lo..=hi`:
    /// the units an import wrote to.
    pub fn units_with_rows(&self, samples: bool, lo: Id, hi: Id) -> Result<Vec<Id>, StoreError> {
        let table = if samples { "samples" } else { "checks" };
        self.query(
            &format!(
                "SELECT DISTINCT unit_id FROM {table} WHERE id BETWEEN ?1 AND ?2 ORDER BY unit_id"
            ),
            params![lo, hi],
            |r: &Row<'_>| r.get::<Id>(0),
        )
    }
}

impl Store {
    /// Number of checks and samples stored per unit (units with neither are absent).
    pub fn reading_counts(&self) -> Result<HashMap<Id, (u64, u64)>, StoreError> {
        let mut out: HashMap<Id, (u64, u64)> = HashMap::new();
        let pair = |r: &Row<'_>| Ok((r.get::<Id>(0)?, r.get::<i64>(1)?));
        for (u, n) in self.query(
            "SELECT unit_id, count(*) FROM checks GROUP BY unit_id",
            params![],
            pair,
        )? {
            out.entry(u).or_default().0 = n.max(0) as u64;
        }
        for (u, n) in self.query(
            "SELECT unit_id, count(*) FROM samples GROUP BY unit_id",
            params![],
            pair,
        )? {
            out.entry(u).or_default().1 = n.max(0) as u64;
        }
        Ok(out)
    }
}

impl Store {
    /// `EXPLAIN QUERY PLAN` of the per-unit reads of a unit page (checks, samples and events of
    /// one unit), as `(query, plan)`: lets a test prove that they use the indexes.
    pub fn unit_page_query_plans(&self) -> Result<Vec<(String, String)>, StoreError> {
        let mut out = Vec::new();
        for sql in [
            super::checks::unit_checks_sql(),
            super::samples::unit_samples_sql(),
            super::events::unit_events_sql(),
        ] {
            self.count();
            let mut st = self.lite()?.prepare(&format!("EXPLAIN QUERY PLAN {sql}"))?;
            let plan = st
                .query_map(rusqlite::params![1, "9999-12-31T23:59:59Z"], |r| {
                    r.get::<_, String>(3)
                })?
                .collect::<Result<Vec<_>, _>>()?
                .join("; ");
            out.push((sql, plan));
        }
        Ok(out)
    }
}
