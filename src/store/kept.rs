//! Kept evaluations: each unit's evaluation stored with what it was computed from (schema 7),
//! read back only while all of it still matches, and written without ever holding up a user.
//!
//! The counters in `eval_revisions` are raised by the schema's triggers on every write of a row
//! that feeds a unit's evaluation, so a kept evaluation whose counters, engine and span of
//! instants match is the evaluation the engine would give now. What an evaluation is and how
//! long it holds is the application's business (`app::kept`); here are only the rows. It must
//! not compute health.

use std::collections::HashMap;

use chrono::{DateTime, Utc};

use super::db::{params, ToDb};
use super::lock_wait::set_give_up;
use super::{fmt_time_stamp, Store, StoreError};
use crate::model::Id;

/// The counters as read with the kept evaluations (one statement, so of one moment).
#[derive(Clone, Debug, Default)]
pub struct KeptRead {
    /// The shop-wide counter; `None` when the shop has none (nothing is then kept or read).
    pub shop_rev: Option<i64>,
    /// Each unit's counter.
    pub units: HashMap<Id, i64>,
}

/// One evaluation to keep.
#[derive(Clone, Debug, PartialEq)]
pub struct KeptEvaluation {
    pub unit_id: Id,
    /// 0: the present; 1: the latest replay of an earlier date.
    pub slot: u8,
    pub unit_rev: i64,
    pub shop_rev: i64,
    pub engine: String,
    pub evaluated_at: DateTime<Utc>,
    /// The first instant at which it may no longer hold.
    pub holds_until: DateTime<Utc>,
    pub body: String,
}

/// The counters and the kept evaluations that hold at `?2` for engine `?1`, in one statement so
/// that both are of one moment. Each unit's kept evaluation is looked up by its key, the present
/// slot first: a join would leave the way to the planner, and a server's planner, misled by
/// statistics taken before the table was filled, was measured joining every counter with every
/// kept row (a million comparisons, 80 ms), or with fitting ones reading the whole kept table,
/// dead rows of earlier evaluations included (12 ms), where the look-ups take 2 ms. On a server
/// only the signed-in login's own rows are read (`OWN_ROWS`).
fn kept_sql(server: bool) -> String {
    let own = if server { OWN_ROWS } else { "" };
    format!(
        "SELECT r.unit_id, r.rev, s.rev, coalesce(\
         (SELECT k.body FROM kept_evaluations k WHERE k.unit_id = r.unit_id AND k.slot = 0{own} \
          AND k.unit_rev = r.rev AND k.shop_rev = s.rev AND k.engine = ?1 \
          AND k.evaluated_at <= ?2 AND ?2 < k.holds_until), \
         (SELECT k.body FROM kept_evaluations k WHERE k.unit_id = r.unit_id AND k.slot = 1{own} \
          AND k.unit_rev = r.rev AND k.shop_rev = s.rev AND k.engine = ?1 \
          AND k.evaluated_at <= ?2 AND ?2 < k.holds_until)) \
         FROM eval_revisions r \
         JOIN eval_revisions s ON s.unit_id = 0 \
         WHERE r.unit_id <> 0"
    )
}

/// On a server each login keeps its own evaluations (schema 10: `kept_by`, the session's user,
/// and row-level security to match), so that no signed-in role can show another login a kept
/// evaluation of its own making; the schema's owner, whom the server's policy does not bind,
/// reads its own rows only by this condition too.
const OWN_ROWS: &str = " AND k.kept_by = session_user";

/// Kept evaluations written by one statement (one round trip to a server).
const KEEP_ROWS: usize = 50;

/// Writes `rows` kept evaluations, replacing what is kept in their slots (on a server, the
/// signed-in login's slots: `kept_by` is the session's user by default).
fn keep_sql(rows: usize, server: bool) -> String {
    let values: Vec<String> = (0..rows)
        .map(|r| {
            let p: Vec<String> = (1..=8).map(|c| format!("?{}", r * 8 + c)).collect();
            format!("({})", p.join(", "))
        })
        .collect();
    format!(
        "INSERT INTO kept_evaluations \
         (unit_id, slot, unit_rev, shop_rev, engine, evaluated_at, holds_until, body) \
         VALUES {} \
         ON CONFLICT (unit_id, slot{}) DO UPDATE SET unit_rev = excluded.unit_rev, \
         shop_rev = excluded.shop_rev, engine = excluded.engine, \
         evaluated_at = excluded.evaluated_at, holds_until = excluded.holds_until, \
         body = excluded.body",
        values.join(", "),
        if server { ", kept_by" } else { "" }
    )
}

impl Store {
    /// The counters of every unit, and each kept evaluation that holds at `at` for `engine`
    /// handed to `f` as `(unit, text)` while it is read (the texts are never all held at once;
    /// on a server `f` works while the server sends the rest, and must not use the store).
    pub fn kept_evaluations<E: From<StoreError>>(
        &self,
        engine: &str,
        at: DateTime<Utc>,
        mut f: impl FnMut(Id, &str) -> Result<(), E>,
    ) -> Result<KeptRead, E> {
        let at = fmt_time_stamp(&at);
        let mut out = KeptRead::default();
        self.count();
        self.db
            .stream::<E>(&kept_sql(self.is_server()), params![engine, at], |r| {
                let unit: Id = r.get(0)?;
                let rev: i64 = r.get(1)?;
                out.shop_rev = Some(r.get(2)?);
                if out.units.insert(unit, rev).is_none() {
                    if let Some(body) = r.text(3)? {
                        f(unit, body)?;
                    }
                }
                Ok(())
            })?;
        if out.shop_rev.is_none() {
            // No unit yet: the shop-wide counter alone.
            out.shop_rev = self.query_opt(
                "SELECT rev FROM eval_revisions WHERE unit_id = 0",
                params![],
                |r| r.get::<i64>(0),
            )?;
        }
        Ok(out)
    }

    /// Keeps `rows`, replacing what was kept in the same slots. A kept evaluation only saves
    /// time, so this never waits: when another program holds the shop's write lock, or the
    /// signed-in role may not write them, nothing is kept and `Ok(false)` is returned.
    pub fn keep_evaluations(
        &self,
        rows: impl IntoIterator<Item = KeptEvaluation>,
    ) -> Result<bool, StoreError> {
        let mut rows = rows.into_iter().peekable();
        if rows.peek().is_none() {
            return Ok(true);
        }
        let _patience = GiveUpOnLocks::on(self);
        let changes = || self.lite().map_or(0, |c| c.total_changes());
        let before = changes();
        let written = (|| {
            let tx = self.begin()?;
            if self.is_server() {
                // A row another session is writing is skipped rather than waited for.
                self.db.batch("SET LOCAL lock_timeout = '200ms'")?;
            }
            loop {
                let part: Vec<KeptEvaluation> = rows.by_ref().take(KEEP_ROWS).collect();
                if part.is_empty() {
                    break;
                }
                let cols: Vec<(i64, String, String)> = part
                    .iter()
                    .map(|k| {
                        (
                            i64::from(k.slot),
                            fmt_time_stamp(&k.evaluated_at),
                            fmt_time_stamp(&k.holds_until),
                        )
                    })
                    .collect();
                let mut values: Vec<&dyn ToDb> = Vec::with_capacity(part.len() * 8);
                for (k, (slot, at, until)) in part.iter().zip(&cols) {
                    values.extend([
                        &k.unit_id as &dyn ToDb,
                        slot,
                        &k.unit_rev,
                        &k.shop_rev,
                        &k.engine,
                        at,
                        until,
                        &k.body,
                    ]);
                }
                self.exec(&keep_sql(part.len(), self.is_server()), &values)?;
            }
            tx.commit()
        })();
        self.own_keeping
            .set(self.own_keeping.get() + changes().saturating_sub(before));
        match written {
            Ok(()) => Ok(true),
            Err(
                StoreError::Busy
                | StoreError::Locked { .. }
                | StoreError::NotAllowed(_)
                | StoreError::ReadOnly
                | StoreError::Server(_),
            ) => Ok(false),
            Err(e) => Err(e),
        }
    }
}

/// While alive, SQLite's busy handler of this connection gives up at once instead of waiting
/// for the lock holder.
struct GiveUpOnLocks {
    key: Option<usize>,
}

impl GiveUpOnLocks {
    fn on(store: &Store) -> GiveUpOnLocks {
        let key = store.lite().ok().map(|c| {
            // SAFETY: only the handle's address is used, as the key of WAITS.
            unsafe { c.handle() as usize }
        });
        Self::set(key, true);
        GiveUpOnLocks { key }
    }

    fn set(key: Option<usize>, give_up: bool) {
        if let Some(key) = key {
            set_give_up(key, give_up);
        }
    }
}

impl Drop for GiveUpOnLocks {
    fn drop(&mut self) {
        Self::set(self.key, false);
    }
}
