//! The `sumpbook` binary on real shops (files and, where marked, databases on a server): init,
//! demo, import, export, backup, the default shop (made with the demo on first use), and clear
//! refusals (exit code 2, no panic) for wrong files and bad rows.

use std::path::Path;
use std::process::Command;

use crate::run::{ok, refused, text};

/// `--db` for a new shop of the backend the test runs on: a file name in the test's directory
/// (where the commands run), or the address of a new database on the server.
fn shop_name(name: &str) -> String {
    crate::backends::shop_at(Path::new(""), name)
        .display()
        .to_string()
}

/// A command's words: `base`, then `more`.
fn words(base: &[&str], more: &[&str]) -> Vec<String> {
    base.iter().chain(more).map(|s| s.to_string()).collect()
}

/// Words made by [`words`], as `ok` and `refused` take them.
fn as_str(a: &[String]) -> Vec<&str> {
    a.iter().map(String::as_str).collect()
}

#[test]
fn init_demo_export_import_and_backup_through_the_binary() {
    crate::backends::on_each_backend(|| {
        let dir = tempfile::tempdir().unwrap();
        let d = dir.path();
        let demo = shop_name("demo.sqlite");
        let shop = shop_name("shop.sqlite");
        let out = ok(d, &["--db", &shop, "init", "--name", "Test works"]);
        assert!(out.contains("created shop"), "{out}");
        let out = ok(d, &["--db", &shop, "init"]);
        assert!(out.contains("already a shop"), "{out}");

        let out = ok(d, &["--db", &demo, "demo"]);
        assert!(out.contains("11 units"), "{out}");
        refused(d, &["--db", &demo, "demo"], "already has 11 unit(s)");

        for kind in ["units", "checks", "samples", "events"] {
            ok(
                d,
                &[
                    "--db",
                    &demo,
                    "export",
                    kind,
                    "--units",
                    "us",
                    "--out",
                    &format!("{kind}.csv"),
                ],
            );
            let out = ok(d, &["--db", &shop, "import", kind, &format!("{kind}.csv")]);
            assert!(out.contains("added"), "{out}");
        }
        let again = ok(d, &["--db", &shop, "import", "checks", "checks.csv"]);
        assert!(again.contains(" 0 added, 1147 already stored"), "{again}");
        // Exported to standard output in metric, the copy is the original.
        let a = ok(d, &["--db", &demo, "export", "checks", "--units", "metric"]);
        let b = ok(d, &["--db", &shop, "export", "checks", "--units", "metric"]);
        assert_eq!(a, b);
        assert!(a.starts_with("unit_tag,taken_at,reservoir_temp_c,"));

        let out = ok(d, &["--db", &demo, "backup", "--out", "copy.sqlite"]);
        assert!(out.contains("copy.sqlite"));
        let c = ok(
            d,
            &[
                "--db",
                "copy.sqlite",
                "export",
                "checks",
                "--units",
                "metric",
            ],
        );
        assert_eq!(a, c);
        refused(
            d,
            &["--db", &demo, "backup", "--out", "copy.sqlite"],
            "exists",
        );

        let out = ok(d, &["--db", &demo, "status"]);
        assert!(
            out.contains("PB-03-A") && out.contains("Quarry Lane Forming Works"),
            "{out}"
        );
    });
}

#[test]
fn output_into_a_pipe_whose_reader_has_gone_ends_quietly() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    ok(d, &["--db", "demo.sqlite", "demo"]);
    // `sumpbook export checks | head -1`: the export is larger than a pipe holds, and its
    // reader closes the pipe before reading anything.
    let mut child = Command::new(env!("CARGO_BIN_EXE_sumpbook"))
        .args(["--db", "demo.sqlite", "export", "checks"])
        .current_dir(d)
        .stdout(std::process::Stdio::piped())
        .stderr(std::process::Stdio::piped())
        .spawn()
        .unwrap();
    drop(child.stdout.take());
    let out = child.wait_with_output().unwrap();
    let err = text(&out.stderr);
    assert!(err.is_empty(), "nothing to say: {err}");
    assert_eq!(out.status.code(), Some(0));
    // The export is indeed more than a pipe holds (64 KiB on Linux), so the write met the
    // closed pipe.
    assert!(ok(d, &["--db", "demo.sqlite", "export", "checks"]).len() > 65_536);
}

#[test]
fn settings_are_shown_and_set_from_the_command_line_and_an_unknown_time_zone_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    ok(d, &["--db", "s.sqlite", "init"]);
    let shown = ok(d, &["--db", "s.sqlite", "settings"]);
    assert!(
        shown.contains("New shop") && shown.contains("metric"),
        "{shown}"
    );
    ok(
        d,
        &[
            "--db",
            "s.sqlite",
            "settings",
            "--name",
            "Press hall 2",
            "--units",
            "us",
            "--time-zone",
            "America/New_York",
            "--by",
            "T. Tester",
        ],
    );
    let json: serde_json::Value =
        serde_json::from_str(&ok(d, &["--db", "s.sqlite", "settings", "--json"])).unwrap();
    assert_eq!(json["shop_name"], "Press hall 2");
    assert_eq!(json["unit_system"], "us");
    assert_eq!(json["time_zone"], "America/New_York");
    // A zone the time-zone database does not know is refused, and nothing changes.
    refused(
        d,
        &[
            "--db",
            "s.sqlite",
            "settings",
            "--units",
            "metric",
            "--time-zone",
            "Mars/Olympus",
        ],
        "time zone `Mars/Olympus` is not known",
    );
    let json: serde_json::Value =
        serde_json::from_str(&ok(d, &["--db", "s.sqlite", "settings", "--json"])).unwrap();
    assert_eq!(json["unit_system"], "us");
    assert_eq!(json["time_zone"], "America/New_York");
}

#[test]
fn limits_are_shown_and_taken_in_the_shops_units() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    ok(d, &["--db", "l.sqlite", "init"]);
    let json = |args: &[&str]| -> serde_json::Value {
        let mut all = vec!["--db", "l.sqlite"];
        all.extend(args);
        serde_json::from_str(&ok(d, &all)).unwrap()
    };
    let row = |v: &serde_json::Value, key: &str| -> serde_json::Value {
        v["rows"]
            .as_array()
            .unwrap()
            .iter()
            .find(|r| r["key"] == key)
            .unwrap()
            .clone()
    };
    let metric = json(&["limits", "--json"]);
    assert_eq!(row(&metric, "reservoir_temp_c")["unit"], "°C");
    assert_eq!(row(&metric, "reservoir_temp_c")["act"], 70.0);
    // A ratio is stored as `x` and shown as the multiplication sign with the word, in the
    // table as on the Setup screen.
    let ratio = row(&metric, "leak_conductance_ratio");
    assert_eq!(
        (ratio["unit"].as_str(), ratio["unit_words"].as_str()),
        (Some("x"), Some("× (ratio)"))
    );
    let table = ok(d, &["--db", "l.sqlite", "limits"]);
    let line = table
        .lines()
        .find(|l| l.starts_with("leak_conductance_ratio"))
        .unwrap();
    assert!(line.contains("× (ratio)"), "{line}");
    ok(
        d,
        &[
            "--db",
            "l.sqlite",
            "settings",
            "--units",
            "us",
            "--by",
            "T. Tester",
        ],
    );
    // °F = °C × 9/5 + 32 and a difference of 1 K is 9/5 °F (the definition of the scales):
    // 60/70 °C → 140/158 °F, 5/10 K → 9/18 °F.
    let us = json(&["limits", "--json"]);
    let temp = row(&us, "reservoir_temp_c");
    assert_eq!(
        (
            temp["unit"].as_str(),
            temp["watch"].as_f64(),
            temp["act"].as_f64()
        ),
        (Some("°F"), Some(140.0), Some(158.0))
    );
    let rise = row(&us, "heat_rise_drift_k");
    assert_eq!(
        (
            rise["unit"].as_str(),
            rise["watch"].as_f64(),
            rise["act"].as_f64()
        ),
        (Some("°F"), Some(9.0), Some(18.0))
    );
    assert!(temp["range"].as_str().unwrap().contains("°F"), "{temp}");
    // A bare number is in the shop's unit; a temperature may carry its own.
    let set = json(&[
        "limits",
        "--json",
        "set",
        "reservoir_temp_c",
        "--act",
        "167",
        "--by",
        "T. Tester",
    ]);
    assert_eq!(set["act"].as_f64(), Some(167.0));
    ok(
        d,
        &[
            "--db",
            "l.sqlite",
            "settings",
            "--units",
            "metric",
            "--by",
            "T. Tester",
        ],
    );
    assert_eq!(
        row(&json(&["limits", "--json"]), "reservoir_temp_c")["act"],
        75.0
    );
    ok(
        d,
        &[
            "--db",
            "l.sqlite",
            "limits",
            "set",
            "heat_rise_drift_k",
            "--act",
            "18F",
            "--by",
            "T. Tester",
        ],
    );
    assert_eq!(
        row(&json(&["limits", "--json"]), "heat_rise_drift_k")["act"],
        10.0
    );
    refused(
        d,
        &[
            "--db",
            "l.sqlite",
            "limits",
            "set",
            "water_ppm",
            "--act",
            "140F",
            "--by",
            "T. Tester",
        ],
        "is not a number",
    );
}

#[test]
fn without_db_the_default_shop_is_used_and_starts_as_the_demo() {
    let dir = tempfile::tempdir().unwrap();
    let default = dir.path().join("data/sumpbook/sumpbook.sqlite");
    assert!(!default.exists());
    let out = ok(dir.path(), &["export", "units"]);
    assert!(out.contains("PB-03-A"), "{out}");
    assert!(default.is_file());
    let again = ok(
        dir.path(),
        &["--db", default.to_str().unwrap(), "export", "units"],
    );
    assert_eq!(out, again);
    // The first start's demo is moved to this week: its last walk-round is a Friday at most
    // seven days before today, so no unit opens with its walk-round late. `demo` alone keeps
    // the dates of sample-data/ (2026-11-27 last); `demo --this-week` moves them too.
    let last_check = |args: &[&str]| -> chrono::NaiveDate {
        let csv = ok(dir.path(), args);
        let last = csv
            .lines()
            .skip(1)
            .filter_map(|l| l.split(',').nth(1))
            .max()
            .unwrap()
            .to_string();
        chrono::NaiveDate::parse_from_str(&last[..10], "%Y-%m-%d").unwrap()
    };
    let today = chrono::Utc::now().date_naive();
    let this_week = |d: chrono::NaiveDate| {
        let behind = (today - d).num_days();
        assert_eq!(chrono::Datelike::weekday(&d), chrono::Weekday::Fri, "{d}");
        assert!((0..=7).contains(&behind), "{d} against {today}");
    };
    this_week(last_check(&["export", "checks"]));
    let fixed = dir.path().join("fixed.sqlite");
    let moved = dir.path().join("moved.sqlite");
    ok(dir.path(), &["--db", fixed.to_str().unwrap(), "demo"]);
    ok(
        dir.path(),
        &["--db", moved.to_str().unwrap(), "demo", "--this-week"],
    );
    assert_eq!(
        last_check(&["--db", fixed.to_str().unwrap(), "export", "checks"]),
        demo_end()
    );
    this_week(last_check(&[
        "--db",
        moved.to_str().unwrap(),
        "export",
        "checks",
    ]));
}

/// The demo's own last walk-round (sample-data/README.md).
fn demo_end() -> chrono::NaiveDate {
    chrono::NaiveDate::from_ymd_opt(2026, 11, 27).unwrap()
}

#[test]
fn wrong_files_as_db_give_exit_code_2_and_a_clear_message() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    std::fs::write(d.join("notes.txt"), "not a database at all\n").unwrap();
    refused(
        d,
        &["--db", "notes.txt", "status"],
        "not an SQLite database",
    );
    refused(
        d,
        &["--db", "notes.txt", "export", "checks"],
        "not an SQLite database",
    );
    {
        let c = rusqlite::Connection::open(d.join("other.sqlite")).unwrap();
        c.execute_batch("CREATE TABLE t (x)").unwrap();
    }
    refused(
        d,
        &["--db", "other.sqlite", "export", "units"],
        "not a sumpbook shop",
    );
    refused(
        d,
        &["--db", "missing.sqlite", "import", "checks", "x.csv"],
        "no such file",
    );
    assert!(!d.join("missing.sqlite").exists());
}

#[test]
fn an_import_with_bad_rows_exits_2_and_lists_every_bad_row() {
    crate::backends::on_each_backend(|| {
        let dir = tempfile::tempdir().unwrap();
        let d = dir.path();
        let demo = shop_name("demo.sqlite");
        ok(d, &["--db", &demo, "demo"]);
        std::fs::write(
            d.join("week.csv"),
            "unit_tag,taken_at,reservoir_temp_c,pressure_bar\n\
             PR-01-M,2026-11-30T06:00:00Z,41,120\n\
             PR-01-M,03/12/2026,41,120\n\
             PR-77-X,2026-11-30T06:00:00Z,41,120\n",
        )
        .unwrap();
        let err = refused(
            d,
            &["--db", &demo, "import", "checks", "week.csv"],
            "nothing was imported",
        );
        assert!(err.contains("week.csv:3: taken_at:"), "{err}");
        assert!(
            err.contains("week.csv:4: unit_tag: no unit `PR-77-X`"),
            "{err}"
        );
        let checks = ok(d, &["--db", &demo, "export", "checks"]);
        assert!(!checks.contains("2026-11-30"), "nothing may be written");
        refused(
            d,
            &["--db", &demo, "import", "checks", "absent.csv"],
            "absent.csv",
        );
    });
}

#[test]
fn confirm_marks_a_reading_by_unit_and_time_and_refuses_one_that_does_not_exist() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    ok(d, &["--db", "shop.sqlite", "demo"]);
    let checks = ok(d, &["--db", "shop.sqlite", "export", "checks"]);
    let row: Vec<&str> = checks
        .lines()
        .find(|l| l.starts_with("SH-04-A,"))
        .unwrap()
        .split(',')
        .collect();
    let (unit, at) = (row[0], row[1]);
    let db = ["--db", "shop.sqlite"];
    let args = |extra: &[&str]| -> Vec<String> {
        db.iter()
            .chain(["confirm", unit, "--at", at].iter())
            .chain(extra.iter())
            .map(|s| s.to_string())
            .collect()
    };
    let run = |extra: &[&str]| {
        ok(
            d,
            &args(extra).iter().map(String::as_str).collect::<Vec<_>>(),
        )
    };
    let refuse = |extra: &[&str], needle: &str| {
        refused(
            d,
            &args(extra).iter().map(String::as_str).collect::<Vec<_>>(),
            needle,
        )
    };

    let out = run(&["--by", "R. Quennell", "--note", "re-read the gauge"]);
    assert!(out.contains("confirmed by R. Quennell"), "{out}");
    refuse(&["--by", "AK"], "already confirmed by R. Quennell");
    let exported = ok(d, &["--db", "shop.sqlite", "export", "checks"]);
    let line = exported
        .lines()
        .find(|l| l.starts_with(&format!("{unit},{at},")))
        .unwrap();
    assert!(line.contains(",R. Quennell,"), "{line}");
    assert!(exported
        .lines()
        .next()
        .unwrap()
        .ends_with("confirmed_by,confirmed_at"));

    // Lifting needs a reason; the JSON says what was lifted.
    refuse(&["--by", "AK", "--lift"], "why the confirmation is lifted");
    let out = run(&[
        "--by",
        "AK",
        "--lift",
        "--note",
        "gauge found broken",
        "--json",
    ]);
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["action"], "lifted");
    assert_eq!(v["lifted"]["by"], "R. Quennell");
    assert_eq!(v["confirmed"], serde_json::Value::Null);
    refuse(
        &["--by", "AK", "--lift", "--note", "again"],
        "is not confirmed",
    );

    // Both changes are in the edit history with who and why.
    let conn = rusqlite::Connection::open(d.join("shop.sqlite")).unwrap();
    let log: Vec<(String, String)> = conn
        .prepare("SELECT edited_by, reason FROM edit_log WHERE table_name = 'checks' ORDER BY id")
        .unwrap()
        .query_map([], |r| Ok((r.get(0)?, r.get(1)?)))
        .unwrap()
        .map(Result::unwrap)
        .collect();
    assert_eq!(
        log,
        vec![
            (
                "R. Quennell".to_string(),
                "reading confirmed as measured: re-read the gauge".to_string()
            ),
            (
                "AK".to_string(),
                "confirmation lifted: gauge found broken".to_string()
            ),
        ]
    );

    // No such reading: exit 2, naming the nearest readings; nothing written.
    let e = refused(
        d,
        &[
            "--db",
            "shop.sqlite",
            "confirm",
            unit,
            "--at",
            "2020-01-01T00:00:00Z",
            "--by",
            "AK",
        ],
        // The demo shop keeps Europe/Berlin time (CET, UTC+1, in January).
        &format!("no check of {unit} taken at 2020-01-01 01:00:00 CET"),
    );
    assert!(e.contains("the nearest checks"), "{e}");
    refused(
        d,
        &[
            "--db",
            "shop.sqlite",
            "confirm",
            unit,
            "--at",
            at,
            "--sample",
            "--by",
            "AK",
        ],
        "no sample of",
    );
    refused(
        d,
        &[
            "--db",
            "shop.sqlite",
            "confirm",
            "NO-SUCH",
            "--at",
            at,
            "--by",
            "AK",
        ],
        "no unit `NO-SUCH`",
    );
    refused(
        d,
        &[
            "--db",
            "shop.sqlite",
            "confirm",
            unit,
            "--at",
            "03/04/2025",
            "--by",
            "AK",
        ],
        "--at:",
    );
    let n: i64 = conn
        .query_row(
            "SELECT count(*) FROM edit_log WHERE table_name = 'checks'",
            [],
            |r| r.get(0),
        )
        .unwrap();
    assert_eq!(n, 2);
}

#[test]
fn an_imported_slipped_decimal_is_kept_questioned_reported_and_counts_once_confirmed() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    ok(d, &["--db", "shop.sqlite", "demo"]);
    let checks = ok(d, &["--db", "shop.sqlite", "export", "checks"]);
    let header = checks.lines().next().unwrap().to_string();
    let last = checks
        .lines()
        .rfind(|l| l.starts_with("PR-01-C,"))
        .unwrap()
        .to_string();
    let mut cells: Vec<String> = last.split(',').map(str::to_string).collect();
    let cols: Vec<&str> = header.split(',').collect();
    let col = |name: &str| cols.iter().position(|c| *c == name).unwrap();
    // A week after the last check, the oil temperature typed with its decimal point one place
    // to the left (26.2 → 2.62): the slip the screening is there to catch.
    let taken = chrono::DateTime::parse_from_rfc3339(&cells[col("taken_at")]).unwrap()
        + chrono::Duration::days(7);
    let at = taken.format("%Y-%m-%dT%H:%M:%SZ").to_string();
    assert!(
        taken < chrono::Utc::now(),
        "the demo's last check is a week old or more"
    );
    let oil: f64 = cells[col("reservoir_temp_c")].parse().unwrap();
    cells[col("taken_at")] = at.clone();
    cells[col("reservoir_temp_c")] = format!("{}", oil / 10.0);
    std::fs::write(
        d.join("round.csv"),
        format!("{header}\n{}\n", cells.join(",")),
    )
    .unwrap();

    let out = ok(d, &["--db", "shop.sqlite", "import", "checks", "round.csv"]);
    assert!(out.contains("1 rows read, 1 added"), "{out}");
    assert!(out.contains("1 reading questioned"), "{out}");
    assert!(
        out.contains(&format!("PR-01-C {at} reservoir_temp")),
        "{out}"
    );
    // Kept, as typed.
    let stored = ok(d, &["--db", "shop.sqlite", "export", "checks"]);
    assert!(
        stored.contains(&format!("PR-01-C,{at},{},", oil / 10.0)),
        "the row is stored"
    );

    let questioned = |json: &str| -> serde_json::Value {
        let v: serde_json::Value = serde_json::from_str(json).unwrap();
        let unit = v["units"]
            .as_array()
            .unwrap()
            .iter()
            .find(|u| u["unit"] == "PR-01-C")
            .unwrap()
            .clone();
        unit["questioned"]
            .as_array()
            .unwrap()
            .iter()
            .find(|q| q["taken_at"] == at.as_str())
            .cloned()
            .unwrap_or(serde_json::Value::Null)
    };
    let q = questioned(&ok(d, &["--db", "shop.sqlite", "status", "--json"]));
    assert_eq!(q["field"], "reservoir_temp");
    assert_eq!(q["confirmed"], false);
    assert!(
        q["reason"].as_str().unwrap().contains("decimal point"),
        "{q}"
    );
    let text = ok(d, &["--db", "shop.sqlite", "status"]);
    assert!(
        text.contains("Questioned readings, not confirmed"),
        "{text}"
    );
    // Shown in the shop's zone (the demo keeps Europe/Berlin time).
    let shown = sumpbook::app::local_time::Zone::named("Europe/Berlin")
        .unwrap()
        .show_exact(chrono::DateTime::parse_from_rfc3339(&at).unwrap().into());
    assert!(
        text.contains(&format!("PR-01-C   check {shown} reservoir temperature")),
        "{text}"
    );

    // The heat rise of the unit is not thrown by it: the figure it shows is the one before.
    let unit_json = |s: &str| -> serde_json::Value {
        let v: serde_json::Value = serde_json::from_str(s).unwrap();
        v["units"][0].clone()
    };
    let before = unit_json(&ok(
        d,
        &[
            "--db",
            "shop.sqlite",
            "status",
            "--unit",
            "PR-01-C",
            "--json",
        ],
    ));

    ok(
        d,
        &[
            "--db",
            "shop.sqlite",
            "confirm",
            "PR-01-C",
            "--at",
            &at,
            "--by",
            "R. Quennell",
            "--note",
            "cold start",
        ],
    );
    let q = questioned(&ok(d, &["--db", "shop.sqlite", "status", "--json"]));
    assert_eq!(q["confirmed"], true);
    assert_eq!(q["confirmed_by"], "R. Quennell");
    let after = unit_json(&ok(
        d,
        &[
            "--db",
            "shop.sqlite",
            "status",
            "--unit",
            "PR-01-C",
            "--json",
        ],
    ));
    assert_ne!(
        before["indicators"]["heat_rise_k"], after["indicators"]["heat_rise_k"],
        "a confirmed reading counts: the heat rise now uses it"
    );

    // The same slip typed at the command line (on another unit, whose history has no slip)
    // asks first, naming the screening's reason, and a confirmed one is stored as confirmed by
    // the technician.
    let other = checks
        .lines()
        .rfind(|l| l.starts_with("IM-05-B,"))
        .unwrap()
        .split(',')
        .map(str::to_string)
        .collect::<Vec<_>>();
    let next = (chrono::DateTime::parse_from_rfc3339(&other[col("taken_at")]).unwrap()
        + chrono::Duration::days(7))
    .format("%Y-%m-%dT%H:%M:%SZ")
    .to_string();
    let their_oil: f64 = other[col("reservoir_temp_c")].parse().unwrap();
    let slip = format!("{}C", their_oil / 10.0);
    let e = refused(
        d,
        &[
            "--db",
            "shop.sqlite",
            "log-check",
            "--leave-blank",
            "IM-05-B",
            "--at",
            &next,
            "--reservoir-temp",
            &slip,
            "--by",
            "AK",
        ],
        "unusual",
    );
    assert!(e.contains("decimal point"), "{e}");
    ok(
        d,
        &[
            "--db",
            "shop.sqlite",
            "log-check",
            "--leave-blank",
            "IM-05-B",
            "--at",
            &next,
            "--reservoir-temp",
            &slip,
            "--by",
            "AK",
            "--confirm",
        ],
    );
    let stored = ok(d, &["--db", "shop.sqlite", "export", "checks"]);
    let row = stored
        .lines()
        .find(|l| l.starts_with(&format!("IM-05-B,{next},")))
        .unwrap();
    assert!(row.contains(",AK,"), "{row}");
    assert!(
        row.ends_with("Z"),
        "stored with its confirmation time: {row}"
    );
}

/// The lines of `kind` exported from `db` for unit `tag` entered by `by`.
fn exported_by(d: &Path, db: &str, kind: &str, tag: &str, by: &str) -> Vec<String> {
    ok(d, &["--db", db, "export", kind])
        .lines()
        .filter(|l| l.starts_with(&format!("{tag},")) && l.contains(&format!(",{by},")))
        .map(str::to_string)
        .collect()
}

#[test]
fn a_new_york_shop_reads_and_shows_new_york_time_and_handles_the_clock_changes() {
    // Offsets and change-overs of America/New_York: US Energy Policy Act of 2005 (daylight
    // saving time from 02:00 on the second Sunday of March to 02:00 on the first Sunday of
    // November; EST = UTC-5, EDT = UTC-4), as the IANA time-zone database holds them.
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let db = "ny.sqlite";
    ok(d, &["--db", db, "demo"]);
    ok(
        d,
        &[
            "--db",
            db,
            "settings",
            "--time-zone",
            "America/New_York",
            "--by",
            "T. Tester",
        ],
    );
    let check = |at: &str| {
        ok(
            d,
            &[
                "--db",
                db,
                "log-check",
                "--leave-blank",
                "SH-04-A",
                "--at",
                at,
                "--oil-level",
                "ok",
                "--by",
                "NY",
            ],
        )
    };
    // A wall-clock time is New York's; the message shows it back with the zone's mark.
    let out = check("2026-12-01 08:00");
    assert!(
        out.contains("check of 2026-12-01 08:00:00 EST saved"),
        "{out}"
    );
    // A date alone is noon there, for a check and for work done alike.
    check("2026-12-02");
    let out = ok(
        d,
        &[
            "--db",
            db,
            "log-event",
            "SH-04-A",
            "note",
            "--at",
            "2026-12-03",
            "--by",
            "NY",
        ],
    );
    assert!(out.contains("at 2026-12-03 12:00 EST"), "{out}");
    // The hour repeated when daylight saving time ends is its first pass (EDT); an offset
    // picks the second.
    let out = check("2026-11-01 01:30");
    assert!(out.contains("2026-11-01 01:30:00 EDT"), "{out}");
    let out = check("2026-11-01 01:30-05:00");
    assert!(out.contains("2026-11-01 01:30:00 EST"), "{out}");
    // The hour skipped when it begins is refused, naming the time after the change.
    let e = refused(
        d,
        &[
            "--db",
            db,
            "log-check",
            "--leave-blank",
            "SH-04-A",
            "--at",
            "2026-03-08 02:30",
            "--oil-level",
            "ok",
            "--by",
            "NY",
        ],
        "does not exist in America/New_York",
    );
    assert!(e.contains("(03:00)"), "{e}");

    // Stored as UTC: export writes each instant with Z, so it reads back the same anywhere.
    let checks = exported_by(d, db, "checks", "SH-04-A", "NY");
    let times: Vec<&str> = checks
        .iter()
        .map(|l| l.split(',').nth(1).unwrap())
        .collect();
    assert_eq!(
        times,
        [
            "2026-11-01T05:30:00Z",
            "2026-11-01T06:30:00Z",
            "2026-12-01T13:00:00Z",
            "2026-12-02T17:00:00Z"
        ]
    );
    let events = exported_by(d, db, "events", "SH-04-A", "NY");
    assert!(
        events[0].starts_with("SH-04-A,2026-12-03T17:00:00Z,note"),
        "{events:?}"
    );

    // A time without an offset in an imported file is New York's too.
    std::fs::write(
        d.join("late.csv"),
        "unit_tag,taken_at,oil_level,by\nSH-04-A,2026-12-04 07:15,ok,CSV\n",
    )
    .unwrap();
    ok(d, &["--db", db, "import", "checks", "late.csv"]);
    let imported = exported_by(d, db, "checks", "SH-04-A", "CSV");
    assert!(
        imported[0].starts_with("SH-04-A,2026-12-04T12:15:00Z,"),
        "{imported:?}"
    );

    // status names the shop's clock; confirm takes the time as the shop's clock shows it.
    let page = ok(
        d,
        &[
            "--db",
            db,
            "status",
            "--unit",
            "SH-04-A",
            "--at",
            "2026-12-04",
        ],
    );
    assert!(
        page.lines()
            .next()
            .unwrap()
            .ends_with("at 2026-12-04 23:59 EST"),
        "{page}"
    );
    let e = refused(
        d,
        &[
            "--db",
            db,
            "confirm",
            "SH-04-A",
            "--at",
            "2026-12-01 08:00:01",
            "--by",
            "NY",
        ],
        "no check of SH-04-A taken at 2026-12-01 08:00:01 EST",
    );
    assert!(
        e.contains("2026-12-01 08:00:00 EST"),
        "the nearest, in New York time: {e}"
    );
}

#[test]
fn history_lists_a_units_corrections_and_deletions_with_who_why_and_old_to_new() {
    crate::backends::on_each_backend(history_on_one_backend);
}

fn history_on_one_backend() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let db = &shop_name("shop.sqlite");
    let path = if db.starts_with("postgres") {
        std::path::PathBuf::from(db)
    } else {
        d.join(db)
    };
    ok(d, &["--db", db, "demo"]);
    let out = ok(d, &["--db", db, "history", "SH-04-A"]);
    assert!(out.contains("times in Europe/Berlin"), "{out}");
    assert!(out.contains("No reading or record of this unit"), "{out}");

    // A confirmation (a change of the stored reading) from the command line.
    let checks = ok(d, &["--db", db, "export", "checks"]);
    let at = checks
        .lines()
        .find(|l| l.starts_with("SH-04-A,"))
        .unwrap()
        .split(',')
        .nth(1)
        .unwrap()
        .to_string();
    ok(
        d,
        &[
            "--db",
            db,
            "confirm",
            "SH-04-A",
            "--at",
            &at,
            "--by",
            "R. Quennell",
            "--note",
            "cold",
        ],
    );
    let before_delete = ok(d, &["--db", db, "export", "checks"]);
    // A deletion, as the unit page makes it.
    crate::run::delete_newest_check(&path, "SH-04-A");
    let out = ok(d, &["--db", db, "history", "SH-04-A"]);
    let lines: Vec<&str> = out.lines().collect();
    let confirmed = lines
        .iter()
        .position(|l| l.contains("changed by R. Quennell: reading confirmed as measured: cold"))
        .unwrap_or_else(|| panic!("{out}"));
    assert!(lines[confirmed].contains("check of "), "{out}");
    assert!(
        lines[confirmed + 1..]
            .iter()
            .any(|l| l.trim() == "confirmed by: — → R. Quennell"),
        "{out}"
    );
    let deleted = lines
        .iter()
        .position(|l| l.contains("DELETED by AK: typed on the wrong unit"))
        .unwrap_or_else(|| panic!("{out}"));
    assert!(deleted > confirmed, "oldest first: {out}");
    assert!(
        lines[deleted + 1..]
            .iter()
            .any(|l| l.trim().starts_with("reservoir temp: ") && l.trim().ends_with(" °C")),
        "{out}"
    );

    // JSON: UTC times and the shop's, every field old → new.
    let v: serde_json::Value =
        serde_json::from_str(&ok(d, &["--db", db, "history", "SH-04-A", "--json"])).unwrap();
    assert_eq!(v["unit"], "SH-04-A");
    assert_eq!(v["time_zone"], "Europe/Berlin");
    let edits = v["edits"].as_array().unwrap();
    assert_eq!(edits.len(), 2);
    assert_eq!(edits[0]["action"], "changed");
    assert_eq!(edits[0]["record"], "check");
    assert_eq!(edits[1]["action"], "deleted");
    assert!(edits[1]["at"].as_str().unwrap().ends_with('Z'));
    assert_eq!(edits[1]["restorable"], true);
    // Another unit's trail holds none of it; an unknown unit is refused.
    let other = ok(d, &["--db", db, "history", "PB-03-A"]);
    assert!(other.contains("No reading or record"), "{other}");
    refused(d, &["--db", db, "history", "XX-99"], "no unit `XX-99`");

    // The deletion put back from the command line: the check is exported as it was, and the
    // restore is an edit of its own with who, when and why.
    let deletion = edits[1]["edit_id"].as_i64().unwrap().to_string();
    let confirmation = edits[0]["edit_id"].as_i64().unwrap().to_string();
    fn restore<'a>(db: &'a str, extra: &[&'a str]) -> Vec<&'a str> {
        let mut args = vec!["--db", db, "history", "SH-04-A", "--restore"];
        args.extend_from_slice(extra);
        args
    }
    refused(
        d,
        &restore(db, &[&deletion, "--by", "RE", "--reason", " "]),
        "say why the reading is put back",
    );
    refused(
        d,
        &restore(db, &[&confirmation, "--by", "RE", "--reason", "undo"]),
        "not the deletion of a check, sample or event",
    );
    refused(
        d,
        &[
            "--db",
            db,
            "history",
            "PB-03-A",
            "--restore",
            &deletion,
            "--by",
            "RE",
            "--reason",
            "x",
        ],
        "is not in the edit trail of PB-03-A",
    );
    let deleted = ok(d, &["--db", db, "export", "checks"]);
    assert_eq!(deleted.lines().count() + 1, before_delete.lines().count());
    let out = ok(
        d,
        &restore(
            db,
            &[
                &deletion,
                "--by",
                "R. Engineer",
                "--reason",
                "the right unit after all",
            ],
        ),
    );
    assert!(out.contains("Put back the check of "), "{out}");
    assert_eq!(
        ok(d, &["--db", db, "export", "checks"]),
        before_delete,
        "the check is back as it was"
    );
    let v: serde_json::Value =
        serde_json::from_str(&ok(d, &["--db", db, "history", "SH-04-A", "--json"])).unwrap();
    let edits = v["edits"].as_array().unwrap();
    assert_eq!(edits.len(), 3);
    assert_eq!(edits[2]["action"], "restored");
    assert_eq!(edits[2]["by"], "R. Engineer");
    assert_eq!(edits[2]["reason"], "the right unit after all");
    assert_eq!(edits[2]["record_id"], edits[1]["record_id"]);
    assert_eq!(edits[1]["restorable"], false);
    let out = ok(d, &["--db", db, "history", "SH-04-A"]);
    assert!(
        out.contains("RESTORED by R. Engineer: the right unit after all"),
        "{out}"
    );
    refused(
        d,
        &restore(db, &[&deletion, "--by", "RE", "--reason", "twice"]),
        "it was put back already",
    );
}

/// A lab's own file: the first try is refused at its header (nothing read), showing the mapping
/// proposed from the header's words and the column left to decide; a save with a column still
/// undecided is refused; the second try saves the corrected mapping and imports, US dates
/// included; a later file with the same header goes in through it by itself; a column the
/// mapping does not know is refused, never dropped.
#[test]
fn a_labs_own_file_goes_in_through_a_saved_column_mapping_in_two_steps() {
    crate::backends::on_each_backend(|| {
        let dir = tempfile::tempdir().unwrap();
        let d = dir.path();
        let demo = shop_name("lab.sqlite");
        ok(d, &["--db", &demo, "demo"]);
        let header = "Sample Date,Equipment ID,Visc @ 40C (cSt),ISO Code,Water (ppm),TAN,Tech";
        std::fs::write(
            d.join("lab-nov.csv"),
            format!(
                "{header}\n11/20/2026,PR-01-M,45.8,18/16/13,85,0.45,JR\n\
                 11/04/2026,SH-04-A,46.2,17/15/12,60,0.4,JR\n"
            ),
        )
        .unwrap();
        let args = |extra: &[&'static str]| {
            let mut v = vec!["--db", demo.as_str(), "import", "samples", "lab-nov.csv"];
            v.extend_from_slice(extra);
            v
        };
        let err = refused(d, &args(&[]), "no row was read");
        assert!(!err.contains("bad row"), "{err}");
        for line in [
            "Sample Date → sampled_at",
            "Equipment ID → unit_tag",
            "Visc @ 40C (cSt) → kv40_cst",
            "ISO Code → iso4406",
            "Water (ppm) → water_ppm",
            "TAN → acid_mgkoh_g",
            "Tech → NOT MAPPED",
            "Dates: month first",
            "--save-map NAME",
        ] {
            assert!(err.contains(line), "`{line}` missing from: {err}");
        }
        refused(d, &args(&["--save-map", "north-lab"]), "Tech");
        let out = ok(d, &["--db", &demo, "import-maps"]);
        assert!(!out.contains("north-lab"), "nothing may be saved: {out}");

        let out = ok(d, &args(&["--save-map", "north-lab", "--ignore", "Tech"]));
        assert!(out.contains("column mapping north-lab saved"), "{out}");
        assert!(out.contains("2 added"), "{out}");
        // A date alone is noon in the shop's time zone (the demo's is an hour east of UTC).
        let samples = ok(d, &["--db", &demo, "export", "samples"]);
        assert!(
            samples.contains("PR-01-M,2026-11-20T11:00:00Z,45.8,"),
            "{samples}"
        );
        assert!(
            samples.contains("SH-04-A,2026-11-04T11:00:00Z,46.2,"),
            "{samples}"
        );
        let out = ok(d, &["--db", &demo, "import-maps"]);
        assert!(
            out.contains("north-lab") && out.contains("samples") && out.contains("month-first"),
            "{out}"
        );

        // Same header next month: the saved mapping is chosen by itself; 12/01 is December.
        std::fs::write(
            d.join("lab-dec.csv"),
            format!("{header}\n12/01/2026,PR-01-M,45.9,18/16/13,90,0.46,KT\n"),
        )
        .unwrap();
        let out = ok(d, &["--db", &demo, "import", "samples", "lab-dec.csv"]);
        assert!(out.contains("saved mapping north-lab"), "{out}");
        assert!(out.contains("1 added"), "{out}");
        let samples = ok(d, &["--db", &demo, "export", "samples"]);
        assert!(
            samples.contains("PR-01-M,2026-12-01T11:00:00Z,45.9,"),
            "{samples}"
        );

        // A column the mapping does not know is refused by name, also when asked for by name.
        std::fs::write(
            d.join("lab-new.csv"),
            format!("{header},Colour\n12/02/2026,PR-01-M,45.9,18/16/13,90,0.46,KT,amber\n"),
        )
        .unwrap();
        let err = refused(
            d,
            &[
                "--db",
                &demo,
                "import",
                "samples",
                "lab-new.csv",
                "--map",
                "north-lab",
            ],
            "Colour",
        );
        assert!(err.contains("neither maps nor ignores"), "{err}");
        refused(
            d,
            &[
                "--db",
                &demo,
                "import",
                "samples",
                "lab-new.csv",
                "--map",
                "south-lab",
            ],
            "no saved column mapping is named `south-lab`",
        );
        let samples = ok(d, &["--db", &demo, "export", "samples"]);
        assert!(!samples.contains("2026-12-02"), "{samples}");
    });
}

#[test]
fn status_gives_the_cost_of_waiting_at_the_shops_electricity_price() {
    crate::backends::on_each_backend(cost_on_one_backend);
}

fn cost_on_one_backend() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let db = &shop_name("shop.sqlite");
    ok(d, &["--db", db, "demo"]);
    ok(
        d,
        &[
            "--db",
            db,
            "settings",
            "--electricity-price",
            "0.25",
            "--by",
            "T. Tester",
        ],
    );
    assert!(ok(d, &["--db", db, "settings"]).contains("electricity price 0.25 per kWh"));
    let unit = |json: &str, tag: &str| -> serde_json::Value {
        let v: serde_json::Value = serde_json::from_str(json).unwrap();
        v["units"]
            .as_array()
            .unwrap()
            .iter()
            .find(|u| u["unit"] == tag)
            .unwrap()
            .clone()
    };
    // The demo's worn pump (PB-03-A) has lost flow; its cost follows from the figures given:
    // hp = kW / 0.7457 (NIST SP 811), kWh a year = kW × run hours, cost = kWh × price.
    let pb = unit(&ok(d, &["--db", db, "status", "--json"]), "PB-03-A");
    let c = &pb["cost_of_waiting"];
    let kw = c["heat_kw"].as_f64().unwrap();
    assert!(kw > 0.0, "{c}");
    assert!(
        (c["heat_hp"].as_f64().unwrap() - kw / 0.745_699_872).abs() < 0.002,
        "{c}"
    );
    let hours = c["run_hours_per_year"].as_f64().unwrap();
    let kwh = c["energy_kwh_per_year"].as_f64().unwrap();
    assert!((kwh - kw * hours).abs() <= 0.5 + kwh * 0.001, "{c}");
    assert_eq!(c["price_per_kwh"], 0.25);
    assert!(
        (c["cost_per_year"].as_f64().unwrap() - kwh * 0.25).abs() < 0.2,
        "{c}"
    );
    // A unit that has lost no flow costs nothing.
    let steady = unit(&ok(d, &["--db", db, "status", "--json"]), "PB-06-A");
    assert!(steady["indicators"]["lost_flow_pct"].as_f64().unwrap() <= 0.0);
    assert_eq!(steady["cost_of_waiting"], serde_json::Value::Null);
    // The unit page says it in words.
    let page = ok(d, &["--db", db, "status", "--unit", "PB-03-A"]);
    assert!(
        page.contains("Cost of waiting:") && page.contains("per kWh"),
        "{page}"
    );

    // A bad price is refused and changes nothing; `none` clears it, and then no cost is given.
    refused(
        d,
        &["--db", db, "settings", "--electricity-price", "-1"],
        "not a price per kWh",
    );
    refused(
        d,
        &["--db", db, "settings", "--electricity-price", "cheap"],
        "not a number",
    );
    ok(
        d,
        &[
            "--db",
            db,
            "settings",
            "--electricity-price",
            "none",
            "--by",
            "T. Tester",
        ],
    );
    let c = unit(&ok(d, &["--db", db, "status", "--json"]), "PB-03-A")["cost_of_waiting"].clone();
    assert_eq!(c["cost_per_year"], serde_json::Value::Null);
    assert!(c["heat_kw"].as_f64().unwrap() > 0.0);
}

#[test]
fn log_check_asks_about_readings_the_last_check_had_and_goes_on_with_leave_blank() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    ok(d, &["--db", "shop.sqlite", "demo"]);
    let (tag, last, zone) = {
        let shop = sumpbook::app::shop::Shop::open(&d.join("shop.sqlite")).unwrap();
        let zone = shop.zone();
        let stop = sumpbook::app::entry::route(&shop).unwrap().remove(0);
        let last = shop
            .store_for_tests()
            .checks_for_unit(stop.unit_id, None)
            .unwrap()
            .pop()
            .unwrap();
        (stop.tag, last, zone)
    };
    let at = (last.taken_at + chrono::Duration::days(1))
        .format("%Y-%m-%dT%H:%M:%SZ")
        .to_string();
    let temp = format!("{:.1}C", last.reservoir_temp.unwrap().c());
    let args = |more: &[&str]| -> Vec<String> {
        words(
            &[
                "--db",
                "shop.sqlite",
                "log-check",
                &tag,
                "--at",
                &at,
                "--reservoir-temp",
                &temp,
                "--by",
                "AK",
            ],
            more,
        )
    };
    // Only the reservoir temperature: the readings the last check had are listed, each with
    // the option that gives it, and nothing is saved.
    let asked = args(&[]);
    let e = refused(d, &as_str(&asked), "--leave-blank");
    assert!(e.contains("the check was not saved"), "{e}");
    assert!(e.contains("--oil-level"), "{e}");
    let expected = format!(
        "oil_level: Oil level is blank; the last check ({}) had {}",
        zone.show_date(last.taken_at),
        last.oil_level.unwrap()
    );
    assert!(e.contains(&expected), "{e}");
    let before = ok(d, &["--db", "shop.sqlite", "export", "checks"]);
    assert!(!before.contains(",AK,"), "nothing saved: {before}");
    // --confirm keeps unusual values; it does not answer this.
    refused(d, &as_str(&args(&["--confirm"])), "--leave-blank");
    // --leave-blank goes on and says what was left blank.
    let out = ok(d, &as_str(&args(&["--leave-blank"])));
    assert!(out.contains("saved"), "{out}");
    assert!(out.contains("left blank: oil_level:"), "{out}");
    let after = ok(d, &["--db", "shop.sqlite", "export", "checks"]);
    assert_eq!(after.matches(",AK,").count(), 1, "{after}");
}

/// Work marked done from the command line carries its hour meter, the fluid put in, the filter
/// part and the work order: stored, echoed, listed in JSON, exported and imported back the
/// same in both unit systems. An hour meter below the reading before it or above the one after
/// it is asked about (kept only with --confirm), a date in the future refused; neither writes.
#[test]
fn log_event_records_hour_meter_fluid_filter_part_and_work_order_and_they_round_trip() {
    crate::backends::on_each_backend(|| {
        let dir = tempfile::tempdir().unwrap();
        let d = dir.path();
        let db = &shop_name("shop.sqlite");
        ok(d, &["--db", db, "demo"]);
        // SH-04-A's hour meter read 45868 h on 2026-11-20 and 45905 h on 2026-11-27 (demo).
        let hours_of = |day: &str| -> f64 {
            ok(d, &["--db", db, "export", "checks"])
                .lines()
                .find(|l| l.starts_with(&format!("SH-04-A,{day}")))
                .unwrap()
                .split(',')
                .nth(9)
                .unwrap()
                .parse()
                .unwrap()
        };
        let (before, after) = (hours_of("2026-11-20"), hours_of("2026-11-27"));
        assert!(before < after);
        let events_before = ok(d, &["--db", db, "export", "events"]);
        let log = |extra: &[&str]| -> Vec<String> {
            words(
                &[
                    "--db",
                    db,
                    "log-event",
                    "SH-04-A",
                    "fluid_change",
                    "--at",
                    "2026-11-25 10:00",
                    "--by",
                    "T. Fitter",
                    "--volume",
                    "180l",
                    "--fluid",
                    "Stock HM 32",
                ],
                extra,
            )
        };
        let e = refused(
            d,
            &as_str(&log(&["--hours", &(before - 8.0).to_string()])),
            "is below the",
        );
        assert!(e.contains(&format!("{before} h read at 2026-11-20")), "{e}");
        assert!(e.contains("repeat with --confirm"), "{e}");
        let e = refused(
            d,
            &as_str(&log(&["--hours", &(after + 1.0).to_string()])),
            "is above the",
        );
        assert!(e.contains("later, at 2026-11-27"), "{e}");
        refused(d, &as_str(&log(&["--hours", "lots"])), "--hours: `lots`");
        let mut future = log(&[]);
        future[6] = "2099-01-01 08:00".into();
        refused(d, &as_str(&future), "is in the future");
        let long = "W".repeat(61);
        refused(
            d,
            &as_str(&log(&["--work-order", &long])),
            "the work order is 61 characters long",
        );
        assert_eq!(
            ok(d, &["--db", db, "export", "events"]),
            events_before,
            "a refusal writes nothing"
        );

        let mid = ((before + after) / 2.0).round();
        let out = ok(
            d,
            &as_str(&log(&[
                "--hours",
                &format!("{mid}h"),
                "--filter-part",
                " RF-10-BN ",
                "--work-order",
                "WO-4471",
                "--json",
            ])),
        );
        let v: serde_json::Value = serde_json::from_str(&out).unwrap();
        assert_eq!(v["details"]["hours"], mid);
        assert_eq!(v["details"]["filter_part"], "RF-10-BN");
        assert_eq!(v["details"]["work_order"], "WO-4471");
        assert_eq!(v["fluid"], "Stock HM 32");
        // A filter change with only a part, in words.
        let out = ok(
            d,
            &[
                "--db",
                db,
                "log-event",
                "SH-04-A",
                "filter_change",
                "--at",
                "2026-11-26 09:00",
                "--by",
                "T. Fitter",
                "--filter-part",
                "RF-10-BN",
            ],
        );
        assert!(out.contains("  filter part RF-10-BN"), "{out}");

        let lines = exported_by(d, db, "events", "SH-04-A", "T. Fitter");
        assert_eq!(lines.len(), 2, "{lines:?}");
        assert!(
            lines[0].ends_with(&format!(",{mid},RF-10-BN,WO-4471")),
            "{lines:?}"
        );
        assert!(lines[1].ends_with(",,RF-10-BN,"), "{lines:?}");

        // Exported and imported into a new shop, in each unit system: the same events.
        for units in ["metric", "us"] {
            let copy = &shop_name(&format!("copy-{units}.sqlite"));
            ok(d, &["--db", copy, "init"]);
            for kind in ["units", "events"] {
                let file = format!("{kind}-{units}.csv");
                ok(
                    d,
                    &["--db", db, "export", kind, "--units", units, "--out", &file],
                );
                ok(d, &["--db", copy, "import", kind, &file]);
            }
            assert_eq!(
                ok(d, &["--db", copy, "export", "events", "--units", "metric"]),
                ok(d, &["--db", db, "export", "events", "--units", "metric"]),
                "events through a {units} file"
            );
        }

        // A meter replaced: the work is recorded with the new meter's figure once confirmed.
        let replaced = [
            "--db",
            db,
            "log-event",
            "SH-04-A",
            "filter_change",
            "--at",
            "2026-11-26 15:00",
            "--by",
            "M. Fitter",
            "--hours",
            "12",
        ];
        let e = refused(d, &replaced, "was the meter replaced?");
        assert!(e.contains("repeat with --confirm"), "{e}");
        assert!(exported_by(d, db, "events", "SH-04-A", "M. Fitter").is_empty());
        let out = ok(
            d,
            &words(&replaced, &["--confirm"])
                .iter()
                .map(String::as_str)
                .collect::<Vec<_>>(),
        );
        assert!(
            out.contains("  kept as confirmed: hours: the hour meter 12 h is below the"),
            "{out}"
        );
        let lines = exported_by(d, db, "events", "SH-04-A", "M. Fitter");
        assert_eq!(lines.len(), 1, "{lines:?}");
        assert!(lines[0].ends_with(",12,,"), "{lines:?}");
    });
}

/// A new reading never takes the number of a deleted one: the shop's newest check (the
/// highest number given so far) deleted, a check added after it, and the deleted one is still
/// put back as it was, its edits its own, on a shop file and on a server, and on a server the
/// shop file was copied onto after the deletion.
#[test]
fn a_reading_added_after_the_newest_was_deleted_leaves_the_deletion_restorable() {
    crate::backends::on_each_backend(|| {
        let dir = tempfile::tempdir().unwrap();
        let d = dir.path();
        let db = &shop_name("shop.sqlite");
        let path = if db.starts_with("postgres") {
            std::path::PathBuf::from(db)
        } else {
            d.join(db)
        };
        ok(d, &["--db", db, "demo"]);
        let tag = delete_the_newest_check(&path);
        added_then_restored(d, db, &tag);
        if crate::backends::server().is_some()
            && crate::backends::current() == crate::backends::Backend::File
        {
            // The file with that deletion outstanding, copied onto a server: the server's
            // numbering goes on past the deleted reading's too.
            let url = crate::backends::new_database();
            ok(d, &["--db", "copied.sqlite", "demo"]);
            let tag = delete_the_newest_check(&d.join("copied.sqlite"));
            ok(d, &["copy", "--from", "copied.sqlite", "--to", &url]);
            added_then_restored(d, &url, &tag);
        }
    });
}

/// Deletes the check with the highest number in the shop at `path` (the last one written) as
/// the unit page does; its unit's tag.
fn delete_the_newest_check(path: &Path) -> String {
    let shop = sumpbook::app::shop::Shop::open(path).unwrap();
    let store = shop.store_for_tests();
    let (tag, _) = store
        .units()
        .unwrap()
        .into_iter()
        .filter_map(|u| {
            let last = store
                .checks_for_unit(u.id, None)
                .unwrap()
                .into_iter()
                .map(|c| c.id)
                .max()?;
            Some((u.tag, last))
        })
        .max_by_key(|(_, id)| *id)
        .unwrap();
    drop(shop);
    let deleted = crate::run::delete_newest_check(path, &tag);
    let shop = sumpbook::app::shop::Shop::open(path).unwrap();
    let highest = shop
        .store_for_tests()
        .units()
        .unwrap()
        .into_iter()
        .flat_map(|u| shop.store_for_tests().checks_for_unit(u.id, None).unwrap())
        .map(|c| c.id)
        .max()
        .unwrap();
    assert!(
        highest < deleted,
        "the deleted check had the highest number"
    );
    tag
}

/// With the newest check of `tag` deleted: a check logged after it has no edits of its own,
/// and the deletion is put back, both checks then stored.
fn added_then_restored(d: &Path, db: &str, tag: &str) {
    let edits = |db: &str| -> Vec<serde_json::Value> {
        let v: serde_json::Value =
            serde_json::from_str(&ok(d, &["--db", db, "history", tag, "--json"])).unwrap();
        v["edits"].as_array().unwrap().clone()
    };
    let before = edits(db);
    let deletion = before.last().unwrap().clone();
    assert_eq!(deletion["action"], "deleted");
    assert_eq!(deletion["restorable"], true);
    let checks = ok(d, &["--db", db, "export", "checks"]).lines().count();
    ok(
        d,
        &[
            "--db",
            db,
            "log-check",
            "--leave-blank",
            tag,
            "--at",
            "2026-12-01 08:00",
            "--oil-level",
            "ok",
            "--by",
            "T. New",
        ],
    );
    // The new check took no number of the history: the deletion is still the reading's latest
    // edit, still restorable, and no edit reads as the new check's.
    let after = edits(db);
    assert_eq!(after.len(), before.len(), "{after:?}");
    assert_eq!(after.last().unwrap()["restorable"], true, "{after:?}");
    let out = ok(
        d,
        &[
            "--db",
            db,
            "history",
            tag,
            "--restore",
            &deletion["edit_id"].as_i64().unwrap().to_string(),
            "--by",
            "R. Engineer",
            "--reason",
            "the right unit after all",
        ],
    );
    assert!(out.contains("Put back the check of "), "{out}");
    let export = ok(d, &["--db", db, "export", "checks"]);
    assert_eq!(export.lines().count(), checks + 2, "both checks stored");
    assert_eq!(export.matches(",T. New,").count(), 1);
}
