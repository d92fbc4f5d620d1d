//! A shop on a PostgreSQL server through the binary: `init` on an empty database, refusing a
//! database of another program or of a newer schema, `copy` file → server → file with every
//! table identical, the three roles' allowed and refused actions, and eight programs logging
//! checks at once, two windows seeing each other's saves, a server that goes away, and upserts
//! going through the edit history while acknowledgements stay as written. Each test has a
//! database of its own on the test server (see `backends`); without PostgreSQL binaries on the
//! machine they do nothing (the reason is printed once).

use std::path::Path;
use std::process::{Command, Output};

use crate::run::{ok, refused, sumpbook, text};

use sumpbook::app::entry::shop_changed;
use sumpbook::app::shop::Shop;
use sumpbook::store::{OpenMode, Store, StoreError};

use crate::backends::{as_user, new_database, server};

fn admin(url: &str) -> postgres::Client {
    postgres::Client::connect(url, postgres::NoTls).unwrap()
}

fn count(url: &str, table: &str) -> i64 {
    admin(url)
        .query_one(&format!("SELECT count(*) FROM {table}"), &[])
        .unwrap()
        .get(0)
}

/// A new server login `NAME_…` (unique to this test run and database) holding the shop role
/// `role`; its address.
fn login_as(d: &Path, admin_url: &str, url: &str, name: &str, role: &str) -> String {
    let suffix = format!("{}_{}", std::process::id(), url.rsplit('_').next().unwrap());
    let name = format!("{name}_{suffix}");
    admin(admin_url)
        .batch_execute(&format!("CREATE ROLE {name} LOGIN"))
        .unwrap();
    ok(d, &["--db", url, "roles", "--grant", &name, "--role", role]);
    as_user(url, &name)
}

/// A new database holding the demo shop, with the shop's roles made; its address.
fn demo_shop_with_roles(d: &Path) -> String {
    let url = new_database();
    ok(d, &["--db", &url, "demo"]);
    ok(d, &["--db", &url, "roles", "--create"]);
    url
}

/// The unit tags of a shop, from its own export.
fn unit_tags(dir: &Path, db: &str) -> Vec<String> {
    let csv = ok(dir, &["--db", db, "export", "units"]);
    let mut lines = csv.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let at = header.iter().position(|h| *h == "unit_tag").unwrap();
    lines
        .filter_map(|l| l.split(',').nth(at).map(str::to_string))
        .filter(|t| !t.is_empty())
        .collect()
}

#[test]
fn init_makes_a_shop_of_an_empty_database_and_other_databases_are_refused() {
    let Some(_) = server() else { return };
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let url = new_database();
    let out = ok(d, &["--db", &url, "init", "--name", "Hill Road Presses"]);
    assert!(out.contains("created shop"), "{out}");
    let known = Store::latest_schema_version();
    assert!(out.contains(&format!("schema version {known}")), "{out}");
    let out = ok(d, &["--db", &url, "init"]);
    assert!(out.contains("already a shop"), "{out}");
    // The address may also come from the environment, as for the app started from an icon.
    let out = Command::new(env!("CARGO_BIN_EXE_sumpbook"))
        .args(["status"])
        .current_dir(d)
        .env("XDG_DATA_HOME", d.join("data"))
        .env("SUMPBOOK_DB", &url)
        .output()
        .unwrap();
    assert!(out.status.success(), "{}", text(&out.stderr));
    assert!(text(&out.stdout).contains("Hill Road Presses"));
    assert!(
        !d.join("data").exists(),
        "no default shop file is made when the environment names a server"
    );

    // Another program's database.
    let other = new_database();
    admin(&other)
        .batch_execute("CREATE TABLE invoices (id bigint)")
        .unwrap();
    refused(d, &["--db", &other, "status"], "not a sumpbook shop");
    assert_eq!(count(&other, "invoices"), 0);

    // A shop of a newer schema is refused and left alone.
    admin(&url)
        .batch_execute(&format!(
            "UPDATE sumpbook_schema_version SET version = {}",
            known + 1
        ))
        .unwrap();
    refused(d, &["--db", &url, "status"], "newer sumpbook");
    let v: i64 = admin(&url)
        .query_one("SELECT version FROM sumpbook_schema_version", &[])
        .unwrap()
        .get(0);
    assert_eq!(v as usize, known + 1);
}

#[test]
fn copy_file_to_server_to_file_keeps_every_table_identical() {
    let Some(_) = server() else { return };
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    ok(d, &["--db", "demo.sqlite", "demo"]);
    // An edit, so that the edit history is copied too.
    let tag = unit_tags(d, "demo.sqlite").remove(0);
    // The file's lost-flow limit, for one unit or (`None`) the shop.
    let lost_flow_limit = |watch: &str, act: &str, unit: Option<&str>| {
        let mut args = vec!["--db", "demo.sqlite", "limits", "set", "lost_flow_pct"];
        args.extend(["--watch", watch, "--act", act, "--by", "T. Varga"]);
        if let Some(unit) = unit {
            args.extend(["--unit", unit]);
        }
        ok(d, &args);
    };
    lost_flow_limit("12", "22", Some(&tag));
    lost_flow_limit("11", "21", Some(&tag));
    let url = new_database();
    let out = ok(d, &["copy", "--from", "demo.sqlite", "--to", &url]);
    assert!(out.contains("every table matches"), "{out}");
    assert!(out.contains("checks") && out.contains("edit_log"), "{out}");
    // Into a shop that is not empty: refused, nothing changes; with --replace, replaced.
    let before = count(&url, "checks");
    refused(
        d,
        &["copy", "--from", "demo.sqlite", "--to", &url],
        "already holds a shop",
    );
    assert_eq!(count(&url, "checks"), before);
    // What the server kept before it is replaced is not read after: it evaluates (and keeps),
    // the file moves on (the shop's lost-flow limit, which changes what status says), and the
    // copy replaces the server's shop; the file and the server must then answer alike (below).
    let at = ["status", "--json", "--at", "2026-06-01"];
    let on = |db: &str| {
        let mut args = vec!["--db", db];
        args.extend(at);
        ok(d, &args)
    };
    on(&url);
    let was = on("demo.sqlite");
    lost_flow_limit("0.5", "0.6", None);
    assert_ne!(on("demo.sqlite"), was, "the limit should change the status");
    ok(
        d,
        &["copy", "--from", "demo.sqlite", "--to", &url, "--replace"],
    );
    assert_eq!(count(&url, "checks"), before);

    let out = ok(
        d,
        &["copy", "--from", &url, "--to", "back.sqlite", "--json"],
    );
    let report: serde_json::Value = serde_json::from_str(&out).unwrap();
    let tables = report["tables"].as_array().unwrap();
    assert_eq!(tables.len(), 12);
    for pair in tables {
        assert_eq!(pair[0], pair[1], "{pair}");
    }

    let a = Store::open(&d.join("demo.sqlite"), OpenMode::MustExist).unwrap();
    let b = Store::open(&d.join("back.sqlite"), OpenMode::MustExist).unwrap();
    let (da, db) = (a.table_digests().unwrap(), b.table_digests().unwrap());
    assert_eq!(da, db);
    assert!(da.iter().any(|t| t.table == "edit_log" && t.rows >= 1));
    assert!(da.iter().any(|t| t.table == "checks" && t.rows > 1000));

    // The same answers from the file and the server.
    for args in [
        vec!["status", "--json", "--at", "2026-06-01"],
        vec!["export", "checks"],
        vec!["export", "samples", "--units", "us"],
        vec!["due", "--json", "--at", "2026-06-01"],
    ] {
        let mut file_args = vec!["--db", "demo.sqlite"];
        file_args.extend(&args);
        let mut server_args = vec!["--db", url.as_str()];
        server_args.extend(&args);
        let (a, b) = (ok(d, &file_args), ok(d, &server_args));
        assert!(a == b, "{args:?} differs between the file and the server");
    }

    // A file that holds a shop is not overwritten unless asked; the copy then is whole.
    refused(
        d,
        &["copy", "--from", &url, "--to", "back.sqlite"],
        "already holds a shop",
    );
    ok(
        d,
        &["copy", "--from", &url, "--to", "back.sqlite", "--replace"],
    );
    let b = Store::open(&d.join("back.sqlite"), OpenMode::MustExist).unwrap();
    assert_eq!(b.table_digests().unwrap(), da);
}

#[test]
fn each_role_may_do_its_own_work_and_is_refused_the_rest_with_exit_code_2() {
    let Some(admin_url) = server() else { return };
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let url = new_database();
    ok(d, &["--db", &url, "demo"]);
    let out = ok(d, &["--db", &url, "roles", "--create"]);
    assert!(
        out.contains("technician") && out.contains("supervisor"),
        "{out}"
    );
    // Running it again changes nothing and fails nothing.
    ok(d, &["--db", &url, "roles", "--create"]);

    let login = |role: &str| {
        let user_url = login_as(d, admin_url, &url, role, role);
        let out = ok(d, &["--db", &user_url, "roles"]);
        assert!(out.contains(&format!("{role}: may")), "{out}");
        user_url
    };
    let tech = login("technician");
    let eng = login("engineer");
    let sup = login("supervisor");
    let tag = unit_tags(d, &url).remove(0);

    let log_check = |db: &str, at: &str| {
        sumpbook(
            d,
            &[
                "--db",
                db,
                "log-check",
                "--leave-blank",
                &tag,
                "--at",
                at,
                "--reservoir-temp",
                "45C",
                "--pressure",
                "172bar",
                "--by",
                "AK",
                "--confirm",
            ],
        )
    };
    let set_limit = |db: &str| {
        sumpbook(
            d,
            &[
                "--db",
                db,
                "limits",
                "set",
                "lost_flow_pct",
                "--watch",
                "12",
                "--act",
                "22",
                "--by",
                "J. Okoro",
            ],
        )
    };
    let assert_refused = |out: Output, what: &str| {
        let err = text(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{what}: {err}");
        assert!(
            err.contains("not allowed for your database role"),
            "{what}: {err}"
        );
        assert!(!err.contains("panicked"), "{err}");
    };
    let assert_ok = |out: Output, what: &str| {
        assert!(
            out.status.success(),
            "{what}: {}{}",
            text(&out.stdout),
            text(&out.stderr)
        );
    };

    // Technician: logs checks and events; may not set limits or baselines.
    let checks = count(&url, "checks");
    assert_ok(
        log_check(&tech, "2025-03-03T07:00:00Z"),
        "technician logs a check",
    );
    assert_eq!(count(&url, "checks"), checks + 1);
    assert_ok(
        sumpbook(
            d,
            &[
                "--db",
                &tech,
                "log-event",
                &tag,
                "top_up",
                "--at",
                "2025-03-03T08:00:00Z",
                "--volume",
                "20L",
                "--by",
                "AK",
            ],
        ),
        "technician logs an event",
    );
    let limits = count(&url, "limits");
    let edits = count(&url, "edit_log");
    assert_refused(set_limit(&tech), "technician sets a limit");
    assert_refused(
        sumpbook(
            d,
            &[
                "--db",
                &tech,
                "baseline",
                &tag,
                "effective_flow",
                "100lpm",
                "--spread",
                "2lpm",
                "--by",
                "AK",
            ],
        ),
        "technician enters a baseline",
    );
    assert_eq!(
        count(&url, "limits"),
        limits,
        "a refused write writes nothing"
    );
    assert_eq!(count(&url, "edit_log"), edits);
    assert_eq!(count(&url, "manual_baselines"), 0);

    // Engineer: also limits and baselines, and checks.
    assert_ok(set_limit(&eng), "engineer sets a limit");
    assert_eq!(count(&url, "limits"), limits + 1);
    assert_ok(
        sumpbook(
            d,
            &[
                "--db",
                &eng,
                "baseline",
                &tag,
                "effective_flow",
                "100lpm",
                "--spread",
                "2lpm",
                "--by",
                "JO",
            ],
        ),
        "engineer enters a baseline",
    );
    assert_eq!(count(&url, "manual_baselines"), 1);
    assert_ok(
        log_check(&eng, "2025-03-10T07:00:00Z"),
        "engineer logs a check",
    );

    // Supervisor: reads everything; writes no readings and no limits.
    assert_ok(
        sumpbook(d, &["--db", &sup, "status", "--json"]),
        "supervisor reads the fleet",
    );
    assert_ok(
        sumpbook(d, &["--db", &sup, "export", "checks"]),
        "supervisor exports",
    );
    let checks = count(&url, "checks");
    assert_refused(
        log_check(&sup, "2025-03-17T07:00:00Z"),
        "supervisor logs a check",
    );
    assert_refused(set_limit(&sup), "supervisor sets a limit");
    assert_eq!(count(&url, "checks"), checks);

    // Nobody but the owner writes the history or the roles.
    let mut as_tech = postgres::Client::connect(&tech, postgres::NoTls).unwrap();
    assert!(as_tech
        .batch_execute("INSERT INTO edit_log (table_name, row_id, action, old_value, edited_by, reason, edited_at) VALUES ('checks', 1, 'delete', '{}', 'x', 'x', 'x')")
        .is_err());
    let err = refused(d, &["--db", &tech, "roles", "--create"], "");
    assert!(
        err.contains("not allowed") || err.contains("permission"),
        "{err}"
    );
}

#[test]
fn eight_programs_logging_200_checks_each_into_one_server_lose_nothing_and_never_report_a_lock() {
    let Some(_) = server() else { return };
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path().to_path_buf();
    let url = new_database();
    ok(&d, &["--db", &url, "demo"]);
    let tags = unit_tags(&d, &url);
    let before = count(&url, "checks");
    let writers = 8;
    let per_writer = 200;
    let handles: Vec<_> = (0..writers)
        .map(|w| {
            let (d, url, tag) = (d.clone(), url.clone(), tags[w % tags.len()].clone());
            std::thread::spawn(move || {
                let mut failures = Vec::new();
                for i in 0..per_writer {
                    // Each writer its own hours, far from the demo's readings.
                    let hour = w * per_writer + i;
                    let at = (chrono::DateTime::parse_from_rfc3339("2020-01-01T00:00:00Z")
                        .unwrap()
                        + chrono::Duration::hours(hour as i64))
                    .format("%Y-%m-%dT%H:%M:%SZ")
                    .to_string();
                    let out = sumpbook(
                        &d,
                        &[
                            "--db",
                            &url,
                            "log-check",
                            "--leave-blank",
                            &tag,
                            "--at",
                            &at,
                            "--reservoir-temp",
                            "45C",
                            "--pressure",
                            "172bar",
                            "--by",
                            "W",
                            "--confirm",
                        ],
                    );
                    let err = text(&out.stderr).to_lowercase();
                    if !out.status.success() || err.contains("locked") || err.contains("busy") {
                        failures.push(format!("{tag} {at}: {:?} {err}", out.status.code()));
                    }
                }
                failures
            })
        })
        .collect();
    let failures: Vec<String> = handles
        .into_iter()
        .flat_map(|h| h.join().unwrap())
        .collect();
    assert!(failures.is_empty(), "{}", failures.join("\n"));
    assert_eq!(
        count(&url, "checks"),
        before + (writers * per_writer) as i64,
        "no check lost"
    );
    let n: i64 = admin(&url)
        .query_one(
            "SELECT count(*) FROM checks WHERE taken_by = 'W' AND pressure_bar = 172 AND reservoir_temp_c = 45",
            &[],
        )
        .unwrap()
        .get(0);
    assert_eq!(
        n,
        (writers * per_writer) as i64,
        "every value arrived as typed"
    );
}

/// A check of the shop's first unit at `at`, like its latest one.
fn another_check(shop: &Shop, at: &str) -> sumpbook::model::Check {
    let mut c = shop.store_for_tests().latest_checks().unwrap().remove(0);
    c.id = 0;
    c.taken_at = chrono::DateTime::parse_from_rfc3339(at)
        .unwrap()
        .with_timezone(&chrono::Utc);
    c
}

#[test]
fn two_windows_on_one_shop_see_each_others_saves() {
    crate::backends::on_each_backend(|| {
        let dir = tempfile::tempdir().unwrap();
        let db = crate::backends::shop_at(dir.path(), "shared.sqlite");
        let mut loader = Shop::create(&db).unwrap();
        loader.load_demo().unwrap();
        drop(loader);
        let (a, b) = (Shop::open(&db).unwrap(), Shop::open(&db).unwrap());
        let (mut seen_a, mut seen_b) = (None, None);
        assert!(
            shop_changed(&a, &mut seen_a).unwrap(),
            "the first look is a change"
        );
        assert!(shop_changed(&b, &mut seen_b).unwrap());
        assert!(
            !shop_changed(&b, &mut seen_b).unwrap(),
            "nothing saved since"
        );

        let c = another_check(&a, "2019-01-07T07:00:00Z");
        let before = b
            .store_for_tests()
            .checks_for_unit(c.unit_id, None)
            .unwrap()
            .len();
        a.store_for_tests().insert_check(&c).unwrap();
        // The other window's next polls see it: a server announces the save when it commits,
        // and the announcement may take a moment on the wire, so poll a bounded number of times.
        let mut changed = false;
        for _ in 0..200 {
            if shop_changed(&b, &mut seen_b).unwrap() {
                changed = true;
                break;
            }
            std::thread::sleep(std::time::Duration::from_millis(25));
        }
        assert!(
            changed,
            "the other window is told of the save ({:?})",
            crate::backends::current()
        );
        assert_eq!(
            b.store_for_tests()
                .checks_for_unit(c.unit_id, None)
                .unwrap()
                .len(),
            before + 1,
            "and reads it"
        );
        // The writer's own window is told too, so that it shows what it saved.
        assert!(shop_changed(&a, &mut seen_a).unwrap());
    });
}

#[test]
fn a_server_that_goes_away_is_reported_plainly_and_the_next_call_connects_again() {
    let Some(admin_url) = server() else { return };
    let dir = tempfile::tempdir().unwrap();
    let url = new_database();
    ok(dir.path(), &["--db", &url, "init"]);
    let shop = Shop::open(Path::new(&url)).unwrap();
    assert!(shop.store_for_tests().units().unwrap().is_empty());
    let db_name = url.rsplit('/').next().unwrap().to_string();
    // The server ends the shop's connection, as a restart or a network drop would.
    let ended: i64 = admin(admin_url)
        .query_one(
            "SELECT count(*) FROM (SELECT pg_terminate_backend(pid) FROM pg_stat_activity \
             WHERE datname = $1 AND pid <> pg_backend_pid()) AS t",
            &[&db_name],
        )
        .unwrap()
        .get(0);
    assert!(ended >= 1);
    let err = shop.store_for_tests().units().unwrap_err();
    assert!(
        matches!(err, StoreError::ServerGone(_)),
        "the call that met the loss is told so: {err:?}"
    );
    assert!(err.to_string().contains("cannot be reached"), "{err}");
    // The next call connects again.
    assert!(shop.store_for_tests().units().unwrap().is_empty());
    assert_eq!(
        shop.store_for_tests().settings().unwrap().shop_name,
        "New shop"
    );
}

/// A new shop on the test server holding the sample units (`sample-data/units.csv`): its
/// folder, address and the sample-data folder.
fn server_shop_with_sample_units() -> (tempfile::TempDir, String, std::path::PathBuf) {
    let dir = tempfile::tempdir().unwrap();
    let url = new_database();
    let data = Path::new(env!("CARGO_MANIFEST_DIR")).join("sample-data");
    ok(dir.path(), &["--db", &url, "init"]);
    let units = data.join("units.csv");
    ok(
        dir.path(),
        &["--db", &url, "import", "units", units.to_str().unwrap()],
    );
    (dir, url, data)
}

#[test]
fn an_import_whose_server_goes_away_half_way_writes_nothing() {
    let Some(admin_url) = server() else { return };
    let (dir, url, data) = server_shop_with_sample_units();
    let db_name = url.rsplit('/').next().unwrap().to_string();
    // Once a third of the file is read (rows are being written in the import's transaction),
    // the server ends the import's connection.
    let ended = std::cell::Cell::new(false);
    let progress = |done: f32| {
        if !ended.get() && (0.3..1.0).contains(&done) {
            admin(admin_url)
                .execute(
                    "SELECT pg_terminate_backend(pid) FROM pg_stat_activity \
                     WHERE datname = $1 AND pid <> pg_backend_pid()",
                    &[&db_name],
                )
                .unwrap();
            ended.set(true);
        }
    };
    let cancel = sumpbook::app::entry::Cancel::new();
    let opts = sumpbook::app::import::ImportOptions {
        progress: &progress,
        cancel: Some(&cancel),
        name_only: true,
        ..Default::default()
    };
    let run = sumpbook::app::shop::Shop::open_for_writing(Path::new(&url)).and_then(|mut shop| {
        shop.import(
            sumpbook::exchange::FileKind::Checks,
            &data.join("checks.csv"),
            &opts,
        )
    });
    assert!(ended.get(), "the connection was ended during the import");
    match run {
        Err(e) => assert!(e.is_connection_lost(), "told plainly: {e}"),
        Ok(other) => panic!("the import went on without its server: {other:?}"),
    }
    assert_eq!(
        count(&url, "checks"),
        0,
        "not one row of the half-done import"
    );
    // The shop is whole: the same import, run again, takes every row.
    let out = ok(
        dir.path(),
        &[
            "--db",
            &url,
            "import",
            "checks",
            data.join("checks.csv").to_str().unwrap(),
        ],
    );
    assert!(count(&url, "checks") > 1000, "{out}");
}

#[test]
fn a_reading_the_server_refuses_after_the_importer_passed_it_ends_the_import_and_writes_nothing() {
    let Some(_) = server() else { return };
    let (dir, url, data) = server_shop_with_sample_units();
    // A rule of the server's that the importer does not know (as a shop's DBA might add): the
    // importer passes 120 °C, the server refuses it.
    postgres::Client::connect(&url, postgres::NoTls)
        .unwrap()
        .batch_execute(
            "ALTER TABLE checks ADD CONSTRAINT house_rule CHECK (reservoir_temp_c < 100)",
        )
        .unwrap();
    let header = std::fs::read_to_string(data.join("checks.csv")).unwrap();
    let header = header.lines().next().unwrap();
    let row = |at: &str, temp: &str| {
        format!("PR-01-M,{at},{temp},13.7,121,7.25,14,ok,ok,31283,5.6,R. Quennell,")
    };
    for (name, rows) in [
        (
            "middle.csv",
            [
                "2024-12-01T06:00:00Z",
                "2024-12-08T06:00:00Z",
                "2024-12-15T06:00:00Z",
            ],
        ),
        (
            "last.csv",
            [
                "2024-12-01T06:00:00Z",
                "2024-12-08T06:00:00Z",
                "2024-12-22T06:00:00Z",
            ],
        ),
    ] {
        let hot = if name == "middle.csv" { 1 } else { 2 };
        let body: Vec<String> = rows
            .iter()
            .enumerate()
            .map(|(i, at)| row(at, if i == hot { "120" } else { "35.3" }))
            .collect();
        let file = dir.path().join(name);
        std::fs::write(&file, format!("{header}\n{}\n", body.join("\n"))).unwrap();
        for keep_going in [false, true] {
            let mut args = vec![
                "--db",
                url.as_str(),
                "import",
                "checks",
                file.to_str().unwrap(),
            ];
            if keep_going {
                args.push("--keep-going");
            }
            let out = sumpbook(dir.path(), &args);
            let err = text(&out.stderr);
            assert!(
                !out.status.success(),
                "{name} {keep_going}: {}",
                text(&out.stdout)
            );
            assert!(
                err.contains("house_rule") || err.contains("refused"),
                "{err}"
            );
            assert!(!err.contains("panicked"), "{err}");
            assert_eq!(
                count(&url, "checks"),
                0,
                "{name} {keep_going}: nothing written"
            );
        }
    }
}

#[test]
fn a_correction_over_someone_elses_is_refused_naming_who_and_when() {
    crate::backends::on_each_backend(|| {
        let dir = tempfile::tempdir().unwrap();
        let db = crate::backends::shop_at(dir.path(), "corrections.sqlite");
        let mut loader = Shop::create(&db).unwrap();
        loader.load_demo().unwrap();
        drop(loader);
        let (a, b) = (Shop::open(&db).unwrap(), Shop::open(&db).unwrap());
        let stored = a.store_for_tests().latest_checks().unwrap().remove(0);
        // Both open the same check.
        let seen_a = a.store_for_tests().edit_mark("checks", stored.id).unwrap();
        let seen_b = b.store_for_tests().edit_mark("checks", stored.id).unwrap();
        assert_eq!(seen_a, seen_b);

        let mut by_b = stored.clone();
        by_b.note = "gauge re-read".into();
        b.store_for_tests()
            .correcting("checks", stored.id, seen_b, |s| {
                s.update_check(&by_b, "B. Lindqvist", "note added")
            })
            .unwrap();

        let mut by_a = stored.clone();
        by_a.pressure = Some(sumpbook::units::Pressure::from_bar(99.5));
        let err = a
            .store_for_tests()
            .correcting("checks", stored.id, seen_a, |s| {
                s.update_check(&by_a, "A. Ruiz", "typed twice the value")
            })
            .unwrap_err();
        match &err {
            StoreError::Conflict { by, at, .. } => {
                assert_eq!(by, "B. Lindqvist");
                assert!(at.ends_with('Z'), "{at}");
            }
            other => panic!("expected a conflict, got {other:?}"),
        }
        assert!(err.to_string().contains("B. Lindqvist"), "{err}");
        // Nothing was overwritten: B's correction stands, A's is not in the history.
        let now = a.store_for_tests().check(stored.id).unwrap().unwrap();
        assert_eq!(now, by_b);
        let history = a
            .store_for_tests()
            .edit_history("checks", stored.id)
            .unwrap();
        assert_eq!(history.len(), 1);
        assert_eq!(history[0].by, "B. Lindqvist");

        // Having looked again, A saves over B's version.
        let seen_again = a.store_for_tests().edit_mark("checks", stored.id).unwrap();
        let mut again = now.clone();
        again.pressure = by_a.pressure;
        a.store_for_tests()
            .correcting("checks", stored.id, seen_again, |s| {
                s.update_check(&again, "A. Ruiz", "typed twice the value")
            })
            .unwrap();
        assert_eq!(
            a.store_for_tests().check(stored.id).unwrap().unwrap(),
            again
        );
    });
}

/// The value a replacement puts in: the table's text or number, made different for each
/// statement so that every statement is a real change.
fn nth_value(value: &str, i: usize) -> String {
    if value.starts_with('\'') {
        format!("'replaced {i}'")
    } else {
        format!("{}", 90 + i)
    }
}

/// The server has no REPLACE: an upsert (`INSERT … ON CONFLICT DO UPDATE`, on the id or on the
/// identifying key) and a MERGE change a stored row through UPDATE, so on every table with an
/// edit history they are refused without who and why, and with them each is in the edit
/// history with the old and the new row; no row is added. Acknowledgements are never updated,
/// deleted, upserted or merged, with who and why or without.
#[test]
fn an_upsert_on_a_server_is_an_update_in_the_edit_history_and_acknowledgements_stay() {
    use crate::store_and_exchange::{KEPT_TABLES, ROWS_TO_KEEP};
    let Some(_) = server() else { return };
    let url = new_database();
    drop(Store::open(Path::new(&url), OpenMode::Create).unwrap());
    let mut raw = admin(&url);
    raw.batch_execute(ROWS_TO_KEEP).unwrap();
    let with_context = |sql: &str| {
        format!(
            "BEGIN; SELECT set_config('sumpbook.edited_by', 'Someone', true); \
             SELECT set_config('sumpbook.reason', 'upsert', true); \
             SELECT set_config('sumpbook.edited_at', '2025-02-01T00:00:00Z', true); \
             {sql}; COMMIT"
        )
    };
    let history = |raw: &mut postgres::Client, table: &str| -> Vec<(String, String)> {
        raw.query(
            "SELECT action, coalesce(new_value, '') FROM edit_log WHERE table_name = $1 AND row_id = 1 ORDER BY id",
            &[&table],
        )
        .unwrap()
        .iter()
        .map(|r| (r.get(0), r.get(1)))
        .collect()
    };
    let mut i = 0;
    for (table, key, col, value) in KEPT_TABLES {
        let cols: Vec<String> = raw
            .query(
                "SELECT column_name::text FROM information_schema.columns \
                 WHERE table_schema = current_schema() AND table_name = $1 ORDER BY ordinal_position",
                &[&table],
            )
            .unwrap()
            .iter()
            .map(|r| r.get(0))
            .collect();
        let all = cols.join(", ");
        let no_id = cols
            .iter()
            .filter(|c| *c != "id")
            .cloned()
            .collect::<Vec<_>>()
            .join(", ");
        let rows_before = count(&url, table);
        let mut forms: Vec<(&str, String)> = vec![
            (
                "upsert on the id",
                format!(
                    "INSERT INTO {table} ({all}) SELECT {all} FROM {table} WHERE id = 1 \
                     ON CONFLICT (id) DO UPDATE SET {col} = {{v}}"
                ),
            ),
            (
                "MERGE",
                format!(
                    "MERGE INTO {table} USING (SELECT 1 AS id) AS s ON {table}.id = s.id \
                     WHEN MATCHED THEN UPDATE SET {col} = {{v}}"
                ),
            ),
        ];
        if !key.is_empty() {
            // The limits' key is a unique index on an expression, named as it is written.
            let target = if table == "limits" {
                "(coalesce(unit_id, 0)), key".to_string()
            } else {
                key.join(", ")
            };
            forms.push((
                "upsert on the key",
                format!(
                    "INSERT INTO {table} ({no_id}) SELECT {no_id} FROM {table} WHERE id = 1 \
                     ON CONFLICT ({target}) DO UPDATE SET {col} = {{v}}"
                ),
            ));
        }
        if table == "acknowledgements" {
            forms.push((
                "UPDATE",
                "UPDATE acknowledgements SET note = {v} WHERE id = 1".into(),
            ));
            forms.push(("DELETE", "DELETE FROM acknowledgements WHERE id = 1".into()));
            forms.push((
                "MERGE … DELETE",
                "MERGE INTO acknowledgements USING (SELECT 1 AS id) AS s \
                 ON acknowledgements.id = s.id WHEN MATCHED THEN DELETE"
                    .into(),
            ));
        }
        for (form, sql) in forms {
            i += 1;
            let sql = sql.replace("{v}", &nth_value(value, i));
            let bare = raw.batch_execute(&sql).unwrap_err();
            let bare = format!("{bare:?}");
            let logged_before = history(&mut raw, table).len();
            let stated = raw.batch_execute(&with_context(&sql));
            if table == "acknowledgements" {
                let stated = format!("{:?}", stated.unwrap_err());
                raw.batch_execute("ROLLBACK").unwrap();
                for e in [&bare, &stated] {
                    assert!(
                        e.contains("acknowledgements are never changed or deleted"),
                        "{form}: {e}"
                    );
                }
                continue;
            }
            assert!(
                bare.contains("edited_by"),
                "{table}, {form} without who and why: {bare}"
            );
            stated.unwrap_or_else(|e| panic!("{table}, {form}: {e:?}"));
            let logged = history(&mut raw, table);
            assert_eq!(
                logged.len(),
                logged_before + 1,
                "{table}, {form}: {logged:?}"
            );
            let (action, new_value) = logged.last().unwrap();
            assert_eq!(action, "update", "{table}, {form}");
            let shown = nth_value(value, i);
            assert!(
                new_value.contains(shown.trim_matches('\'')),
                "{table}, {form}: {new_value}"
            );
        }
        assert_eq!(count(&url, table), rows_before, "{table}: a row was added");
    }
    let acks: Vec<String> = raw
        .query("SELECT note FROM acknowledgements ORDER BY id", &[])
        .unwrap()
        .iter()
        .map(|r| r.get(0))
        .collect();
    assert_eq!(acks, ["first", "second"]);
}

/// A deleted reading put back on a server: the server's own function writes the restore into
/// the history (no role may write it), a technician is refused as the server refuses a right
/// it lacks, and an engineer puts the check back column for column with who and why.
#[test]
fn a_deleted_check_is_restored_by_an_engineer_and_refused_to_a_technician() {
    let Some(admin_url) = server() else { return };
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let url = demo_shop_with_roles(d);
    let (tech, eng) = (
        login_as(d, admin_url, &url, "rtechnician", "technician"),
        login_as(d, admin_url, &url, "rengineer", "engineer"),
    );
    let tag = unit_tags(d, &url).remove(0);
    let row_json = |id: i64| -> Option<String> {
        admin(&url)
            .query_opt(
                "SELECT row_to_json(c)::text FROM checks c WHERE id = $1",
                &[&id],
            )
            .unwrap()
            .map(|r| r.get(0))
    };

    // The owner deletes the unit's newest check, as the unit page does.
    let newest = {
        let shop = Shop::open(Path::new(&url)).unwrap();
        let unit = shop.store_for_tests().unit_by_tag(&tag).unwrap().unwrap();
        shop.store_for_tests()
            .checks_for_unit(unit.id, None)
            .unwrap()
            .pop()
            .unwrap()
            .id
    };
    let before = row_json(newest).unwrap();
    let id = crate::run::delete_newest_check(Path::new(&url), &tag);
    assert_eq!(id, newest);
    assert_eq!(row_json(id), None);
    let deletion: i64 = admin(&url)
        .query_one("SELECT max(id) FROM edit_log", &[])
        .unwrap()
        .get(0);
    let edit = deletion.to_string();
    let restore = |db: &str| {
        sumpbook(
            d,
            &[
                "--db",
                db,
                "history",
                &tag,
                "--restore",
                &edit,
                "--by",
                "RE",
                "--reason",
                "the right unit after all",
            ],
        )
    };

    let out = restore(&tech);
    let err = text(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(err.contains("not allowed for your database role"), "{err}");
    assert_eq!(row_json(id), None, "nothing put back");
    // Nor can anyone call the function without who and why.
    let mut as_eng = postgres::Client::connect(&eng, postgres::NoTls).unwrap();
    assert!(as_eng
        .query_one("SELECT sumpbook_restore($1)", &[&deletion])
        .is_err());

    let out = restore(&eng);
    assert!(out.status.success(), "{}", text(&out.stderr));
    assert_eq!(row_json(id), Some(before.clone()), "the check as it was");
    let (action, by, reason, old, new): (String, String, String, String, String) = {
        let r = admin(&url)
            .query_one(
                "SELECT action, edited_by, reason, old_value, new_value FROM edit_log WHERE id = (SELECT max(id) FROM edit_log)",
                &[],
            )
            .unwrap();
        (r.get(0), r.get(1), r.get(2), r.get(3), r.get(4))
    };
    assert_eq!(
        (action.as_str(), by.as_str(), reason.as_str()),
        ("restore", "RE", "the right unit after all")
    );
    assert_eq!(old, new);
    let held: serde_json::Value = serde_json::from_str(&new).unwrap();
    let now: serde_json::Value = serde_json::from_str(&before).unwrap();
    assert_eq!(held, now, "the history holds the record put back");
    // Twice is refused, by the program and by the server's function alike.
    let out = restore(&eng);
    assert_eq!(out.status.code(), Some(2));
    assert!(text(&out.stderr).contains("put back already"));
    let mut owner = admin(&url);
    let mut tx = owner.transaction().unwrap();
    tx.batch_execute("SELECT set_config('sumpbook.edited_by', 'x', true)")
        .unwrap();
    let err = tx
        .query_one("SELECT sumpbook_restore($1)", &[&deletion])
        .unwrap_err();
    assert!(
        err.to_string().contains("put back already")
            || format!("{err:?}").contains("put back already"),
        "{err:?}"
    );
}

#[test]
fn kept_evaluations_on_a_server_follow_direct_sql() {
    // The kept path of `app::kept` on PostgreSQL: a status with nothing changed reads every
    // unit kept; a check or a shop-wide limit written in plain SQL by another session is seen,
    // and the status is the one a fresh evaluation gives (`Detail::Full` cut to a summary).
    use sumpbook::app::status::{fleet_status_in, Detail, UnitStatus};
    let Some(_) = server() else { return };
    let url = new_database();
    let mut shop = Shop::create(std::path::Path::new(&url)).unwrap();
    shop.load_demo().unwrap();
    let store = shop.store_for_tests();
    let when: chrono::DateTime<chrono::Utc> = "2026-11-28T12:00:00Z".parse().unwrap();
    let fresh = || -> Vec<UnitStatus> {
        let f = fleet_status_in(store, Some(when), Detail::Full).unwrap();
        f.units.into_iter().map(UnitStatus::summary).collect()
    };
    let status = |evaluated: usize, what: &str| {
        let f = fleet_status_in(store, Some(when), Detail::Summary).unwrap();
        assert_eq!(f.units, fresh(), "{what}: differs from a fresh evaluation");
        assert_eq!(f.evaluated, evaluated, "{what}: units evaluated");
        f
    };
    let first = fleet_status_in(store, Some(when), Detail::Summary).unwrap();
    assert_eq!(first.evaluated, first.units.len(), "nothing kept at first");
    assert_eq!(first.units, fresh());
    status(0, "nothing changed");
    let unit = first.units[0].unit_id;
    let mut sql = admin(&url);
    sql.execute(
        "INSERT INTO checks (unit_id, taken_at, reservoir_temp_c, ambient_temp_c, pressure_bar, filter) \
         VALUES ($1, '2026-11-28T07:00:00Z', 93.0, 20.0, 150.0, 'bypass')",
        &[&unit],
    )
    .unwrap();
    status(1, "a check written in SQL");
    sql.execute(
        "INSERT INTO limits (unit_id, key, watch, act) VALUES (NULL, 'reservoir_temp_c', 30.0, 35.0)",
        &[],
    )
    .unwrap();
    status(first.units.len(), "a shop-wide limit written in SQL");
    assert!(count(&url, "kept_evaluations") >= first.units.len() as i64);
}

#[test]
fn a_login_reads_only_the_evaluations_it_kept_itself() {
    // Every role may keep evaluations, so a technician could once rewrite, in plain SQL, the
    // kept evaluation a supervisor's board reads. Each login now keeps and reads its own
    // (schema 10): a technician's forgery reaches its own board and nobody else's.
    let Some(admin_url) = server() else { return };
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let url = demo_shop_with_roles(d);
    let tech = login_as(d, admin_url, &url, "keeper_tech", "technician");
    let sup = login_as(d, admin_url, &url, "keeper_sup", "supervisor");
    let states = |db: &str| -> Vec<(String, String)> {
        let out = ok(d, &["--db", db, "status", "--json"]);
        let v: serde_json::Value = serde_json::from_str(&out).unwrap();
        v["units"]
            .as_array()
            .unwrap()
            .iter()
            .map(|u| {
                (
                    u["unit"].as_str().unwrap().to_string(),
                    u["state"].as_str().unwrap().to_string(),
                )
            })
            .collect()
    };
    let truth = states(&sup);
    assert_eq!(states(&tech), truth);
    let kept_by = |login_url: &str| -> i64 {
        let user = login_url
            .split("://")
            .nth(1)
            .unwrap()
            .split('@')
            .next()
            .unwrap();
        admin(&url)
            .query_one(
                "SELECT count(*) FROM kept_evaluations WHERE kept_by = $1",
                &[&user],
            )
            .unwrap()
            .get(0)
    };
    let units = truth.len() as i64;
    assert_eq!(
        (kept_by(&sup), kept_by(&tech)),
        (units, units),
        "each kept its own"
    );

    // The technician gives the unit at act the kept evaluation of a unit at watch.
    let (at_act, _) = truth.iter().find(|(_, s)| s == "act").unwrap().clone();
    let (at_watch, _) = truth.iter().find(|(_, s)| s == "watch").unwrap().clone();
    let mut as_tech = postgres::Client::connect(&tech, postgres::NoTls).unwrap();
    let id_of = |c: &mut postgres::Client, tag: &str| -> i64 {
        c.query_one("SELECT id FROM units WHERE tag = $1", &[&tag])
            .unwrap()
            .get(0)
    };
    let (act_id, watch_id) = (id_of(&mut as_tech, &at_act), id_of(&mut as_tech, &at_watch));
    let changed = as_tech
        .execute(
            "UPDATE kept_evaluations SET body = \
             (SELECT body FROM kept_evaluations WHERE unit_id = $2 AND slot = 0) \
             WHERE unit_id = $1",
            &[&act_id, &watch_id],
        )
        .unwrap();
    assert_eq!(
        changed, 1,
        "only its own row of that unit is the technician's to change"
    );
    // The forgery works on the technician's own board (so this test would see it elsewhere)…
    let forged = states(&tech);
    assert_ne!(
        forged.iter().find(|(u, _)| *u == at_act).unwrap().1,
        "act",
        "{forged:?}"
    );
    // …and not on the supervisor's, nor does an update of every row, a row written in the
    // supervisor's name (refused by the server) or a deletion of every row.
    assert_eq!(states(&sup), truth);
    as_tech
        .execute("UPDATE kept_evaluations SET body = 'x'", &[])
        .unwrap();
    let sup_user = sup.split("://").nth(1).unwrap().split('@').next().unwrap();
    let err = as_tech
        .execute(
            "INSERT INTO kept_evaluations \
             (unit_id, slot, unit_rev, shop_rev, engine, evaluated_at, holds_until, body, kept_by) \
             SELECT unit_id, 1, unit_rev, shop_rev, engine, evaluated_at, holds_until, body, $1 \
             FROM kept_evaluations",
            &[&sup_user],
        )
        .unwrap_err();
    assert!(format!("{err:?}").contains("row-level security"), "{err:?}");
    assert_eq!(states(&sup), truth);
    as_tech
        .execute("DELETE FROM kept_evaluations", &[])
        .unwrap();
    assert_eq!(
        kept_by(&sup),
        units,
        "the supervisor's rows are not the technician's to delete"
    );
    assert_eq!(states(&sup), truth);
}
