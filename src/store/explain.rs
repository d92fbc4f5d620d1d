//! The query plans of the reads behind the fleet board and the unit page on a shop file, so that
//! a test can hold them to one rule: checks and samples are read through an index (a `SEARCH`),
//! never by a full scan of the table or of an index (a `SCAN`), whatever the size of the shop.
//!
//! Uses the very statements the store runs (`history::fleet_*_sql`, `checks::unit_checks_sql`,
//! ...) and only asks SQLite for their `EXPLAIN QUERY PLAN`; nothing is read or written.

use super::{Store, StoreError};

/// A stored time later than any reading, bound where a query takes an upper time.
const UNTIL: &str = "9999-12-31T23:59:59Z";

impl Store {
    /// `(name, plan)` for each query the fleet board (`fleet.*`, one query per table for the
    /// whole shop; `batch.*`, a run of units at a time) and the unit page (`unit.*`, one unit)
    /// run on the tables of readings. The plan
    /// is SQLite's `EXPLAIN QUERY PLAN`, one step per line, nested steps indented by two spaces,
    /// e.g. `SEARCH checks USING INDEX checks_taken_at (taken_at<?)`.
    pub fn explain_fleet_queries(&self) -> Result<Vec<(String, String)>, StoreError> {
        use super::{checks, events, history, samples};
        let fleet = [
            (
                "fleet.check_counts",
                history::fleet_check_counts_sql().to_string(),
            ),
            ("fleet.checks", history::fleet_checks_sql()),
            ("fleet.samples", history::fleet_samples_sql()),
            ("fleet.events", history::fleet_events_sql()),
            ("fleet.manual_baselines", history::fleet_baselines_sql()),
            ("fleet.acknowledgements", history::fleet_acks_sql()),
        ];
        let unit = [
            ("unit.checks", checks::unit_checks_sql()),
            ("unit.samples", samples::unit_samples_sql()),
            ("unit.events", events::unit_events_sql()),
        ];
        let mut out = Vec::new();
        for (name, sql) in fleet {
            out.push((name.to_string(), self.plan(&sql, &[&UNTIL])?));
        }
        // The split read of a large shop: the split point, then the later half of the checks.
        for (name, sql) in [
            ("fleet.first_check_time", history::first_check_time_sql()),
            ("fleet.last_check_time", history::last_check_time_sql()),
        ] {
            let params: &[&dyn rusqlite::ToSql] = if sql.contains("?1") { &[&UNTIL] } else { &[] };
            out.push((name.to_string(), self.plan(sql, params)?));
        }
        out.push((
            "fleet.later_checks".to_string(),
            self.plan(
                &history::fleet_later_checks_sql(),
                &[&"2000-01-01T00:00:00Z", &UNTIL],
            )?,
        ));
        for (name, sql) in unit {
            out.push((name.to_string(), self.plan(&sql, &[&1i64, &UNTIL])?));
        }
        // The streaming read of a full evaluation (`unit_batches`): a run of units at a time.
        use super::unit_batches as b;
        for (name, sql) in [
            ("batch.checks", b::batch_checks_sql()),
            ("batch.samples", b::batch_samples_sql()),
            ("batch.events", b::batch_events_sql()),
            (
                "batch.next_records",
                b::batch_next_records_sql().to_string(),
            ),
        ] {
            out.push((name.to_string(), self.plan(&sql, &[&1i64, &40i64, &UNTIL])?));
        }
        Ok(out)
    }

    /// The `EXPLAIN QUERY PLAN` of `sql` with `params` bound, as indented lines.
    fn plan(&self, sql: &str, params: &[&dyn rusqlite::ToSql]) -> Result<String, StoreError> {
        self.count();
        let mut st = self.lite()?.prepare(&format!("EXPLAIN QUERY PLAN {sql}"))?;
        // Rows are (id, parent, notused, detail); a step's depth is that of its parent plus one.
        let rows = st
            .query_map(params, |r| {
                Ok((
                    r.get::<_, i64>(0)?,
                    r.get::<_, i64>(1)?,
                    r.get::<_, String>(3)?,
                ))
            })?
            .collect::<Result<Vec<_>, _>>()?;
        let mut depth: Vec<(i64, usize)> = Vec::new();
        let mut lines = Vec::new();
        for (id, parent, detail) in rows {
            let d = depth
                .iter()
                .find(|(i, _)| *i == parent)
                .map_or(0, |(_, d)| d + 1);
            depth.push((id, d));
            lines.push(format!("{}{detail}", "  ".repeat(d)));
        }
        Ok(lines.join("\n"))
    }
}
