//! The reads behind the fleet board and the unit page use indexes (design §9): no full scan of
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
        "fleet.samples",
        "unit.checks",
        "unit.samples",
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
        ("fleet.samples", "samples"),
        ("unit.checks", "checks"),
        ("unit.samples", "samples"),
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
