//! Kept evaluations (`app::kept`, schema 7) on a real shop file: a status with nothing changed
//! reads every unit's kept evaluation, and whatever changes behind the program's back — another
//! connection writing, a direct SQL edit, a changed limit or setting, another engine, another
//! date, the clock passing a stored record or a day — is seen: the status is always the one a
//! fresh evaluation gives, and only the units it touches are evaluated again.
//!
//! "A fresh evaluation" is the same engine run on every unit without anything kept
//! (`Detail::Full`, then cut to a summary by `UnitStatus::summary`); `status --json`, which
//! reads the summary, is compared with the one of the full evaluation itself.

use chrono::{DateTime, Duration, Utc};
use rusqlite::Connection;
use sumpbook::app::shop::Shop;
use sumpbook::app::status::{fleet_status_in, Detail, FleetStatus, UnitStatus};
use sumpbook::store::Store;

fn demo() -> (tempfile::TempDir, std::path::PathBuf, Shop) {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("demo.sqlite");
    let shop = Shop::create_demo(&path).unwrap();
    (dir, path, shop)
}

/// An instant within the demo shop's data (its last walk-round is in late November 2026).
fn at(s: &str) -> DateTime<Utc> {
    s.parse().unwrap()
}

/// What a fleet status says of each unit, in the status's order.
fn units(f: &FleetStatus) -> Vec<UnitStatus> {
    f.units.clone()
}

/// Every unit evaluated afresh at `when`, as a summary.
fn fresh(store: &Store, when: DateTime<Utc>) -> Vec<UnitStatus> {
    let f = fleet_status_in(store, Some(when), Detail::Full).unwrap();
    assert_eq!(f.evaluated, f.units.len(), "a full status keeps nothing");
    f.units.into_iter().map(UnitStatus::summary).collect()
}

/// The status at `when` through the kept path: asserts it is the fresh one and that
/// `evaluated` units were evaluated for it.
fn status_is_fresh(
    store: &Store,
    when: DateTime<Utc>,
    evaluated: usize,
    what: &str,
) -> FleetStatus {
    let f = fleet_status_in(store, Some(when), Detail::Summary).unwrap();
    assert_eq!(
        units(&f),
        fresh(store, when),
        "{what}: the status differs from a fresh evaluation"
    );
    assert_eq!(f.evaluated, evaluated, "{what}: units evaluated");
    f
}

/// Another connection to the same file, as another program or the sqlite3 shell would open.
fn other(path: &std::path::Path) -> Connection {
    let c = Connection::open(path).unwrap();
    c.execute_batch("PRAGMA foreign_keys = ON").unwrap();
    c
}

/// Runs `sql` on another connection inside an edit context, as a direct SQL correction must.
fn edit_behind_the_back(path: &std::path::Path, sql: &str) {
    other(path)
        .execute_batch(&format!(
            "BEGIN; INSERT INTO edit_context (id, edited_by, reason, edited_at) \
             VALUES (1, 'shell', 'direct edit', '2026-12-01T08:00:00Z'); {sql}; \
             DELETE FROM edit_context; COMMIT;"
        ))
        .unwrap();
}

/// The instant most tests judge at: the day after the demo shop's last walk-round.
fn noon() -> DateTime<Utc> {
    at("2026-11-28T12:00:00Z")
}

/// The demo shop with every unit evaluated (and kept) at [`noon`], and how many units a
/// status shows.
fn demo_evaluated() -> (tempfile::TempDir, std::path::PathBuf, Shop, usize) {
    let (dir, path, shop) = demo();
    let n = active(shop.store_for_tests());
    status_is_fresh(shop.store_for_tests(), noon(), n, "before");
    (dir, path, shop, n)
}

/// The units a fleet status shows (neither the unit nor its machine archived).
fn active(store: &Store) -> usize {
    fleet_status_in(store, Some(at("2000-01-01T00:00:00Z")), Detail::Full)
        .unwrap()
        .units
        .len()
}

/// The id of the `i`-th unit a fleet status shows, in id order.
fn unit_id(shop: &Shop, i: usize) -> i64 {
    let mut ids: Vec<i64> = fleet_status_in(
        shop.store_for_tests(),
        Some(at("2000-01-01T00:00:00Z")),
        Detail::Full,
    )
    .unwrap()
    .units
    .iter()
    .map(|u| u.unit_id)
    .collect();
    ids.sort();
    ids[i]
}

#[test]
fn a_status_with_nothing_changed_reads_every_unit_kept_and_says_the_same() {
    let (_dir, _path, shop) = demo();
    let store = shop.store_for_tests();
    let when = at("2026-11-27T18:00:00Z");
    let n = active(store);
    let first = status_is_fresh(store, when, n, "first status");
    let again = status_is_fresh(store, when, 0, "nothing changed");
    assert_eq!((first.units, first.counts), (again.units, again.counts));
    // Later the same day, with nothing recorded since: still kept, judged at the new instant.
    let later = fleet_status_in(store, Some(when + Duration::hours(2)), Detail::Summary).unwrap();
    assert_eq!(later.evaluated, 0);
    assert!(later.units.iter().all(|u| u.health.at == later.at));
    assert_eq!(units(&later), fresh(store, when + Duration::hours(2)));
}

#[test]
fn the_present_is_kept_too_and_a_replay_does_not_push_it_out() {
    let (_dir, _path, shop) = demo();
    let store = shop.store_for_tests();
    let n = active(store);
    let now = fleet_status_in(store, None, Detail::Summary).unwrap();
    assert_eq!(now.evaluated, n);
    let replay = at("2026-06-30T23:59:59Z");
    status_is_fresh(store, replay, n, "a replay");
    let again = fleet_status_in(store, None, Detail::Summary).unwrap();
    assert_eq!(again.evaluated, 0, "the present is still kept");
    assert_eq!(units(&again), fresh(store, again.at));
    status_is_fresh(store, replay, 0, "the same replay again");
}

#[test]
fn a_check_written_by_another_program_is_seen_and_only_its_unit_is_evaluated() {
    let (_dir, path, shop) = demo();
    let store = shop.store_for_tests();
    let when = at("2026-11-28T12:00:00Z");
    let n = active(store);
    let before = status_is_fresh(store, when, n, "before");
    let unit = unit_id(&shop, 2);
    other(&path)
        .execute(
            "INSERT INTO checks (unit_id, taken_at, reservoir_temp_c, ambient_temp_c, pressure_bar, \
             oil_level, filter) VALUES (?1, '2026-11-28T07:00:00Z', 92.0, 21.0, 150.0, 'low', 'bypass')",
            [unit],
        )
        .unwrap();
    let after = status_is_fresh(store, when, 1, "after another program's check");
    // A unit evaluated alone beside kept ones is not kept (writing it costs more than
    // evaluating it again): the next status evaluates it again, and only it.
    status_is_fresh(store, when, 1, "the same again");
    let changed = |f: &FleetStatus| f.units.iter().find(|u| u.unit_id == unit).cloned().unwrap();
    assert_ne!(
        changed(&before).health.last_check,
        changed(&after).health.last_check
    );
    assert_ne!(changed(&before).health.flags, changed(&after).health.flags);
}

#[test]
fn a_direct_sql_correction_and_deletion_are_seen() {
    let (_dir, path, shop, _) = demo_evaluated();
    let store = shop.store_for_tests();
    let when = noon();
    let unit = unit_id(&shop, 0);
    edit_behind_the_back(
        &path,
        &format!(
            "UPDATE checks SET reservoir_temp_c = 88.0, filter = 'bypass' WHERE id = \
             (SELECT max(id) FROM checks WHERE unit_id = {unit})"
        ),
    );
    status_is_fresh(store, when, 1, "after a correction");
    edit_behind_the_back(
        &path,
        &format!(
            "DELETE FROM samples WHERE id = (SELECT max(id) FROM samples WHERE unit_id = {unit})"
        ),
    );
    status_is_fresh(store, when, 1, "after a deletion");
}

#[test]
fn changed_limits_settings_fluids_and_machines_are_seen() {
    let (_dir, path, shop, n) = demo_evaluated();
    let store = shop.store_for_tests();
    let when = noon();
    // A shop-wide limit: every unit.
    other(&path)
        .execute_batch(
            "INSERT INTO limits (unit_id, key, watch, act) VALUES (NULL, 'reservoir_temp_c', 30.0, 35.0)",
        )
        .unwrap();
    status_is_fresh(store, when, n, "a shop-wide limit");
    // One unit's own limit: that unit.
    let unit = unit_id(&shop, 1);
    other(&path)
        .execute(
            "INSERT INTO limits (unit_id, key, watch, act) VALUES (?1, 'reservoir_temp_c', 70.0, 80.0)",
            [unit],
        )
        .unwrap();
    status_is_fresh(store, when, 1, "a unit's own limit");
    edit_behind_the_back(&path, "UPDATE settings SET unit_system = 'us'");
    status_is_fresh(store, when, n, "the shop's units of measure");
    edit_behind_the_back(&path, "UPDATE fluids SET kv40_new_cst = kv40_new_cst * 1.2");
    status_is_fresh(store, when, n, "a fluid's data");
    let units = store.units().unwrap();
    let machine = units
        .iter()
        .find(|u| u.id == unit_id(&shop, 3))
        .unwrap()
        .machine_id;
    let on_it = units
        .iter()
        .filter(|u| u.machine_id == machine && !u.archived)
        .count();
    edit_behind_the_back(
        &path,
        &format!("UPDATE machines SET name = 'Renamed press' WHERE id = {machine}"),
    );
    status_is_fresh(store, when, on_it, "a machine renamed");
}

#[test]
fn an_evaluation_kept_by_another_engine_is_never_read() {
    let (_dir, path, shop, _) = demo_evaluated();
    let store = shop.store_for_tests();
    let when = noon();
    let unit = unit_id(&shop, 0);
    // What an older engine kept for the unit, under the counters of now: a different state
    // (another unit's kept text; a kept text names no unit, the unit's own row gives that).
    let conn = other(&path);
    let fleet = fleet_status_in(store, Some(when), Detail::Summary).unwrap();
    let state = fleet
        .units
        .iter()
        .find(|u| u.unit_id == unit)
        .unwrap()
        .state
        .key();
    let donor = fleet.units.iter().find(|u| u.state.key() != state).unwrap();
    let other_state = donor.state.key();
    let planted: String = conn
        .query_row(
            "SELECT body FROM kept_evaluations WHERE unit_id = ?1",
            [donor.unit_id],
            |r| r.get(0),
        )
        .unwrap();
    conn.execute(
        "UPDATE kept_evaluations SET engine = 'an older engine', body = ?2 WHERE unit_id = ?1",
        rusqlite::params![unit, planted],
    )
    .unwrap();
    let f = status_is_fresh(store, when, 1, "another engine's evaluation");
    let u = f.units.iter().find(|u| u.unit_id == unit).unwrap();
    assert_eq!(u.state.key(), state);

    // The same text under this engine's name is read as it is: the key is all that guards it,
    // which is why every input of an evaluation is in the key. (The unit evaluated alone just
    // now was not kept, so its row still names the older engine: it is given this one's, as
    // the other units' rows name it.)
    conn.execute(
        "UPDATE kept_evaluations SET body = ?2, engine = \
         (SELECT engine FROM kept_evaluations WHERE unit_id <> ?1 LIMIT 1) WHERE unit_id = ?1",
        rusqlite::params![unit, planted],
    )
    .unwrap();
    let f = fleet_status_in(store, Some(when), Detail::Summary).unwrap();
    assert_eq!(f.evaluated, 0);
    let u = f.units.iter().find(|u| u.unit_id == unit).unwrap();
    assert_eq!(u.state.key(), other_state);
}

#[test]
fn each_date_judged_gets_its_own_evaluation() {
    let (_dir, _path, shop) = demo();
    let store = shop.store_for_tests();
    let n = active(store);
    let (a, b) = (at("2026-03-31T23:59:59Z"), at("2026-09-30T23:59:59Z"));
    let fa = status_is_fresh(store, a, n, "first date");
    let fb = status_is_fresh(store, b, n, "second date");
    assert_ne!(units(&fa), units(&fb), "the two dates differ");
    status_is_fresh(store, b, 0, "second date again");
    // The replay slot now holds the second date: the first is evaluated again, rightly.
    status_is_fresh(store, a, n, "first date again");
}

#[test]
fn the_clock_passing_a_stored_record_or_a_day_is_seen() {
    let (_dir, path, shop) = demo();
    let store = shop.store_for_tests();
    let n = active(store);
    let unit = unit_id(&shop, 4);
    // A check stored with a time after the instant judged (entered ahead of time).
    other(&path)
        .execute(
            "INSERT INTO checks (unit_id, taken_at, reservoir_temp_c, ambient_temp_c, pressure_bar, \
             filter) VALUES (?1, '2026-11-28T15:00:00Z', 91.0, 20.0, 150.0, 'bypass')",
            [unit],
        )
        .unwrap();
    let morning = at("2026-11-28T09:00:00Z");
    status_is_fresh(store, morning, n, "the morning");
    status_is_fresh(
        store,
        morning + Duration::hours(3),
        0,
        "before the stored check",
    );
    status_is_fresh(
        store,
        morning + Duration::hours(7),
        1,
        "after the stored check",
    );
    // Past midnight: due dates and overdue days move, every unit is judged again.
    status_is_fresh(store, at("2026-11-29T00:30:00Z"), n, "the next day");
}

#[test]
fn a_counter_removed_or_lowered_takes_its_kept_evaluations_along() {
    let (_dir, path, shop, n) = demo_evaluated();
    let store = shop.store_for_tests();
    let when = noon();
    let unit = unit_id(&shop, 0);
    let conn = other(&path);
    let kept = |c: &Connection| -> i64 {
        c.query_row("SELECT count(*) FROM kept_evaluations", [], |r| r.get(0))
            .unwrap()
    };
    let all = kept(&conn);
    conn.execute(
        "UPDATE eval_revisions SET rev = 1 WHERE unit_id = ?1",
        [unit],
    )
    .unwrap();
    assert!(
        kept(&conn) < all,
        "a lowered counter drops what was kept under it"
    );
    conn.execute("DELETE FROM eval_revisions WHERE unit_id = 0", [])
        .unwrap();
    assert_eq!(kept(&conn), 0, "without the shop's counter nothing is kept");
    // Nothing can be kept without the shop's counter, and the status is still right.
    status_is_fresh(store, when, n, "without counters");
    status_is_fresh(store, when, n, "still without counters");
}

#[test]
fn what_the_faces_show_from_kept_summaries_is_what_a_full_evaluation_shows() {
    // The kept form holds a summary only; `status --json`, the board's lines and the due list
    // read from it must be those of the full evaluation, in metric and in US units.
    use sumpbook::app::view::fleet_line;
    use sumpbook::app::work::due_list_from;
    let (_dir, path, shop, _) = demo_evaluated();
    let store = shop.store_for_tests();
    for round in 0..2 {
        if round == 1 {
            edit_behind_the_back(&path, "UPDATE settings SET unit_system = 'us'");
            fleet_status_in(store, Some(noon()), Detail::Summary).unwrap();
        }
        let kept = fleet_status_in(store, Some(noon()), Detail::Summary).unwrap();
        assert_eq!(kept.evaluated, 0, "every unit read kept");
        let full = fleet_status_in(store, Some(noon()), Detail::Full).unwrap();
        assert!(full.units.iter().any(|u| !u.health.tiles.is_empty()));
        assert_eq!(
            serde_json::to_string_pretty(&kept.to_json_view()).unwrap(),
            serde_json::to_string_pretty(&full.to_json_view()).unwrap(),
            "status --json"
        );
        let lines = |f: &FleetStatus| -> Vec<_> {
            f.units
                .iter()
                .map(|u| fleet_line(u, f.unit_system))
                .collect()
        };
        assert_eq!(lines(&kept), lines(&full), "the board's lines");
        assert_eq!(
            due_list_from(store, &kept, None).unwrap(),
            due_list_from(store, &full, None).unwrap(),
            "the due list"
        );
    }
}

#[test]
fn a_day_ends_at_the_shop_s_own_midnight() {
    // A shop in Tokyo (UTC+9 all year, tz database): its day ends at 15:00 UTC. Due dates
    // and overdue days are counted on that day, so an evaluation kept at 23:00 there is not
    // served at 00:30 there, though both are the same UTC day.
    let (_dir, path, shop) = demo();
    let store = shop.store_for_tests();
    let n = active(store);
    edit_behind_the_back(&path, "UPDATE settings SET time_zone = 'Asia/Tokyo'");
    let late = at("2026-11-28T14:00:00Z");
    status_is_fresh(store, late, n, "23:00 in Tokyo");
    status_is_fresh(store, late + Duration::minutes(30), 0, "23:30 in Tokyo");
    status_is_fresh(
        store,
        at("2026-11-28T15:30:00Z"),
        n,
        "00:30 the next day in Tokyo",
    );
}
