//! The reads behind the fleet board and the unit page use indexes (docs/engineering.md,
//! "Performance targets"): no full scan of
//! checks or samples in their query plans, on a shop that is large enough for SQLite's planner
//! to care. Not timed; `benches/run.sh` measures the speed.

use sumpbook::exchange::large_shop::{self, Spec};
use sumpbook::store::{OpenMode, Store};

/// A step of a plan that reads a whole table or a whole index of `table`.
fn full_scan_of<'p>(plan: &'p str, table: &str) -> Option<&'p str> {
    plan.lines().map(str::trim).find(|step| {
        step.strip_prefix("SCAN ")
            .is_some_and(|rest| rest == table || rest.starts_with(&format!("{table} ")))
    })
}

fn assert_indexed_reads(store: &Store, when: &str) {
    let plans = store.explain_fleet_queries().unwrap();
    let names: Vec<&str> = plans.iter().map(|(n, _)| n.as_str()).collect();
    for expected in [
        "fleet.checks",
        "fleet.later_checks",
        "fleet.first_check_time",
        "fleet.last_check_time",
        "fleet.samples",
        "unit.checks",
        "unit.samples",
        "batch.checks",
        "batch.samples",
        "batch.events",
        "batch.next_records",
    ] {
        assert!(
            names.contains(&expected),
            "no plan for {expected}: {names:?}"
        );
    }
    for (name, plan) in &plans {
        assert!(!plan.is_empty(), "{name}: empty plan");
        for table in ["checks", "samples"] {
            assert!(
                full_scan_of(plan, table).is_none(),
                "{when}: {name} scans all of {table}:\n{plan}"
            );
        }
    }
    // Each reads its own table through an index, in the order it needs (no sort step).
    for (name, table) in [
        ("fleet.checks", "checks"),
        ("fleet.later_checks", "checks"),
        ("fleet.samples", "samples"),
        ("unit.checks", "checks"),
        ("unit.samples", "samples"),
        ("batch.checks", "checks"),
        ("batch.samples", "samples"),
    ] {
        let plan = &plans.iter().find(|(n, _)| n == name).unwrap().1;
        assert!(
            plan.lines()
                .any(|s| s.trim().starts_with(&format!("SEARCH {table} USING INDEX"))),
            "{when}: {name} does not search {table} by an index:\n{plan}"
        );
        assert!(
            !plan.contains("TEMP B-TREE"),
            "{when}: {name} sorts its rows:\n{plan}"
        );
    }
}

#[test]
fn fleet_board_and_unit_page_read_checks_and_samples_through_indexes() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("shop.sqlite");
    let mut store = Store::open(&path, OpenMode::Create).unwrap();
    let spec = Spec {
        units: 40,
        checks: 60,
        samples: 6,
    };
    large_shop::load(&mut store, &spec, false).unwrap();
    assert_indexed_reads(&store, "without statistics");
    // And once the planner has statistics (after ANALYZE or `PRAGMA optimize`).
    drop(store);
    rusqlite::Connection::open(&path)
        .unwrap()
        .execute_batch("ANALYZE")
        .unwrap();
    let store = Store::open(&path, OpenMode::MustExist).unwrap();
    assert_indexed_reads(&store, "with statistics");
}

#[test]
fn a_full_scan_is_recognised_in_a_plan() {
    // The detector itself, on the plans SQLite gives for reads that do scan.
    let conn = rusqlite::Connection::open_in_memory().unwrap();
    conn.execute_batch("CREATE TABLE checks (id INTEGER PRIMARY KEY, unit_id INT, taken_at TEXT)")
        .unwrap();
    let plan: String = conn
        .query_row(
            "EXPLAIN QUERY PLAN SELECT * FROM checks WHERE taken_at < 'x'",
            [],
            |r| r.get(3),
        )
        .unwrap();
    assert_eq!(full_scan_of(&plan, "checks"), Some("SCAN checks"));
    assert_eq!(
        full_scan_of("SCAN checks USING INDEX i", "checks"),
        Some("SCAN checks USING INDEX i")
    );
    assert_eq!(full_scan_of("SCAN checks_old", "checks"), None);
    assert_eq!(
        full_scan_of("SEARCH checks USING INDEX i (unit_id=?)", "checks"),
        None
    );
}

#[test]
fn the_split_fleet_read_gives_each_unit_the_rows_of_its_own_read() {
    // Enough checks (80 units x 520, over the 40,000 of the split) for the fleet read to take the later half on a second
    // connection; each unit's checks must be those the unit page's own query reads, in order.
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("shop.sqlite");
    let mut store = Store::open(&path, OpenMode::Create).unwrap();
    let spec = Spec {
        units: 80,
        checks: 520,
        samples: 10,
    };
    large_shop::load(&mut store, &spec, false).unwrap();
    for at in [None, Some(chrono::Utc::now() - chrono::Duration::days(900))] {
        let fleet = store.unit_histories(at).unwrap();
        assert_eq!(fleet.len(), 80);
        let total: usize = fleet.iter().map(|h| h.checks.len()).sum();
        assert!(total > 0);
        if at.is_none() {
            assert_eq!(total, 80 * 520);
        }
        for h in &fleet {
            let own = store.unit_history(h.unit.id, at).unwrap().unwrap();
            assert_eq!(h.checks, own.checks, "unit {}", h.unit.tag);
            assert_eq!(h.samples, own.samples, "unit {}", h.unit.tag);
            assert!(h.checks.windows(2).all(|w| w[0].taken_at < w[1].taken_at));
        }
    }
}
