//! The store and the CSV exchange against real shops, files in a temporary directory and, where
//! marked, the same on a PostgreSQL server: migrations, the schema's physical bounds, the edit
//! history (and no row replaced around it), refusing wrong files, the bounded fleet load, import
//! (all-or-nothing, keep-going, re-import), export round trips in both unit systems, the sample
//! data and the bad-input fixtures.

use std::path::{Path, PathBuf};

use chrono::{DateTime, TimeZone, Utc};
use sumpbook::exchange::csv_in::{import_file, import_reader};
use sumpbook::exchange::csv_out::export;
use sumpbook::exchange::{demo, ExchangeError, FileKind};
use sumpbook::model::{
    Check, Event, EventKind, FilterState, Fluid, Machine, OilLevel, PumpKind, Sample,
    SensitiveComponent, StrokeDirection, TimedStroke, Unit, ViscReading,
};
use sumpbook::store::{OpenMode, Store, StoreError, MIGRATIONS};
use sumpbook::units::{
    Flow, Length, Pressure, Seconds, Temperature, UnitSystem, Viscosity, Volume,
};

fn tmp() -> tempfile::TempDir {
    tempfile::tempdir().unwrap()
}

/// A new shop of the backend the test runs on (a file in `dir`, or a database on the server).
fn new_store(dir: &Path, name: &str) -> Store {
    Store::open(&crate::backends::shop_at(dir, name), OpenMode::Create).unwrap()
}

fn t(s: &str) -> DateTime<Utc> {
    DateTime::parse_from_rfc3339(s).unwrap().with_timezone(&Utc)
}

/// A shop with one machine, one fluid and one unit; returns the unit id.
fn small_shop(store: &Store) -> (i64, i64) {
    let m = store
        .insert_machine(&Machine {
            id: 0,
            tag: "PR-01".into(),
            name: "Press".into(),
            kind: "press".into(),
            route_order: 1,
            notes: String::new(),
            archived: false,
        })
        .unwrap();
    let f = store
        .insert_fluid(&Fluid {
            id: 0,
            name: "Stock HM 46".into(),
            iso_vg: Some(46),
            kv40_new: Some(Viscosity::from_cst(46.0)),
            kv100_new: Some(Viscosity::from_cst(6.8)),
            acid_new_mgkoh_g: Some(0.4),
            base_type: "mineral".into(),
        })
        .unwrap();
    let u = store
        .insert_unit(&Unit {
            id: 0,
            machine_id: m,
            tag: "PR-01-M".into(),
            pump_kind: PumpKind::PistonVariable,
            rated_flow: Some(Flow::from_lpm(120.0)),
            relief: Some(Pressure::from_bar(210.0)),
            reservoir: Some(Volume::from_l(400.0)),
            sensitive_component: SensitiveComponent::ProportionalValve,
            fluid_id: Some(f),
            stroke: Some(TimedStroke {
                bore: Length::from_mm(160.0),
                rod: Some(Length::from_mm(110.0)),
                length: Length::from_mm(300.0),
                direction: StrokeDirection::Extend,
            }),
            route_order: 1,
            archived: false,
        })
        .unwrap();
    (u, f)
}

fn check(unit_id: i64, at: &str) -> Check {
    Check {
        id: 0,
        unit_id,
        taken_at: t(at),
        reservoir_temp: Some(Temperature::from_c(45.0)),
        ambient_temp: Some(Temperature::from_c(21.0)),
        pressure: Some(Pressure::from_bar(172.0)),
        stroke_time: Some(Seconds(3.9)),
        cycle_time: Some(Seconds(12.0)),
        oil_level: Some(OilLevel::Ok),
        filter: Some(FilterState::Ok),
        hours: Some(10_040.0),
        case_drain: Some(Flow::from_lpm(2.1)),
        by: "AK".into(),
        note: String::new(),
        confirmed: None,
    }
}

fn sample(unit_id: i64, at: &str) -> Sample {
    Sample {
        id: 0,
        unit_id,
        sampled_at: t(at),
        kv40: Some(Viscosity::from_cst(45.2)),
        kv100: Some(Viscosity::from_cst(6.7)),
        visc_reading: None,
        counts_per_ml: [Some(1800.0), Some(420.0), Some(30.0)],
        iso4406: None,
        water_ppm: Some(120.0),
        acid_mgkoh_g: Some(0.55),
        lab_ref: "L-1".into(),
        note: String::new(),
        confirmed: None,
    }
}

fn invalid_field(e: StoreError) -> String {
    match e {
        StoreError::Invalid { field, .. } => field,
        other => panic!("expected a refused field, got {other:?}"),
    }
}

fn sample_data_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("sample-data")
}

#[test]
fn migrations_validate_and_a_new_file_is_a_marked_shop_in_wal_mode() {
    MIGRATIONS.validate().unwrap();
    let dir = tmp();
    let path = dir.path().join("shop.sqlite");
    let store = Store::open(&path, OpenMode::Create).unwrap();
    assert_eq!(
        store.schema_version().unwrap(),
        Store::latest_schema_version()
    );
    assert_eq!(
        store.meta("application").unwrap().as_deref(),
        Some("sumpbook")
    );
    assert!(store.integrity_ok().unwrap());
    drop(store);
    // The marker, the version and the journal mode are visible to any SQLite tool.
    let raw = rusqlite::Connection::open(&path).unwrap();
    let app_id: i64 = raw
        .query_row("PRAGMA application_id", [], |r| r.get(0))
        .unwrap();
    assert_eq!(app_id, i64::from(sumpbook::store::APPLICATION_ID));
    let mode: String = raw
        .query_row("PRAGMA journal_mode", [], |r| r.get(0))
        .unwrap();
    assert_eq!(mode, "wal");
    drop(raw);
    // Opening again migrates nothing and keeps the data.
    let store = Store::open(&path, OpenMode::MustExist).unwrap();
    assert_eq!(store.unit_count().unwrap(), 0);
}

#[test]
fn every_physical_bound_refuses_an_out_of_range_value_and_names_the_field() {
    crate::backends::on_each_backend(|| {
        let dir = tmp();
        let store = new_store(dir.path(), "bounds.sqlite");
        let (u, _) = small_shop(&store);
        let mut n = 0;
        let mut at = || {
            n += 1;
            format!("2025-01-{:02}T07:00:00Z", n)
        };
        type Edit = fn(&mut Check);
        let check_cases: Vec<(Edit, &str)> = vec![
            (
                |c| c.reservoir_temp = Some(Temperature::from_c(150.5)),
                "reservoir_temp_c",
            ),
            (
                |c| c.reservoir_temp = Some(Temperature::from_c(-40.5)),
                "reservoir_temp_c",
            ),
            (
                |c| c.ambient_temp = Some(Temperature::from_c(151.0)),
                "ambient_temp_c",
            ),
            (
                |c| c.pressure = Some(Pressure::from_bar(-0.5)),
                "pressure_bar",
            ),
            (
                |c| c.pressure = Some(Pressure::from_bar(1000.5)),
                "pressure_bar",
            ),
            (|c| c.stroke_time = Some(Seconds(0.0)), "stroke_time_s"),
            (|c| c.stroke_time = Some(Seconds(-1.0)), "stroke_time_s"),
            (|c| c.cycle_time = Some(Seconds(0.0)), "cycle_time_s"),
            (|c| c.hours = Some(-1.0), "hours"),
            (
                |c| c.case_drain = Some(Flow::from_lpm(-0.1)),
                "case_drain_lpm",
            ),
        ];
        for (edit, field) in check_cases {
            let mut c = check(u, &at());
            edit(&mut c);
            assert_eq!(invalid_field(store.insert_check(&c).unwrap_err()), field);
        }
        // The limits themselves are allowed.
        let mut c = check(u, &at());
        c.reservoir_temp = Some(Temperature::from_c(150.0));
        c.ambient_temp = Some(Temperature::from_c(-40.0));
        c.pressure = Some(Pressure::from_bar(0.0));
        store.insert_check(&c).unwrap();
        let mut c = check(u, &at());
        c.pressure = Some(Pressure::from_bar(1000.0));
        store.insert_check(&c).unwrap();

        type SEdit = fn(&mut Sample);
        let sample_cases: Vec<(SEdit, &str)> = vec![
            (|s| s.kv40 = Some(Viscosity::from_cst(0.0)), "kv40_cst"),
            (|s| s.kv100 = Some(Viscosity::from_cst(50.0)), "kv100_cst"),
            (|s| s.counts_per_ml[0] = Some(-1.0), "count_4um_per_ml"),
            (|s| s.counts_per_ml[1] = Some(2000.0), "count_6um_per_ml"),
            (|s| s.counts_per_ml[2] = Some(500.0), "count_14um_per_ml"),
            (|s| s.water_ppm = Some(-1.0), "water_ppm"),
            (|s| s.water_ppm = Some(1.0e6 + 1.0), "water_ppm"),
            (|s| s.acid_mgkoh_g = Some(-0.1), "acid_mgkoh_g"),
            (|s| s.iso4406 = Some("18".into()), "iso4406"),
            (
                |s| {
                    s.visc_reading = Some(ViscReading {
                        visc: Viscosity::from_cst(40.0),
                        at: Temperature::from_c(200.0),
                    })
                },
                "visc_temp_c",
            ),
        ];
        for (edit, field) in sample_cases {
            let mut s = sample(u, &at());
            edit(&mut s);
            assert_eq!(invalid_field(store.insert_sample(&s).unwrap_err()), field);
        }

        let event = |volume: f64| Event {
            id: 0,
            unit_id: u,
            done_at: t("2025-02-01T10:00:00Z"),
            kind: EventKind::TopUp,
            volume: Some(Volume::from_l(volume)),
            fluid_id: None,
            by: "AK".into(),
            note: String::new(),
        };
        assert_eq!(
            invalid_field(store.insert_event(&event(0.0)).unwrap_err()),
            "volume_l"
        );
        assert_eq!(
            invalid_field(store.insert_event(&event(-2.0)).unwrap_err()),
            "volume_l"
        );

        let mut unit = store.unit(u).unwrap().unwrap();
        unit.tag = "PR-01-X".into();
        type UEdit = fn(&mut Unit);
        let unit_cases: Vec<(UEdit, &str)> = vec![
            (
                |u| u.rated_flow = Some(Flow::from_lpm(0.0)),
                "rated_flow_lpm",
            ),
            (
                |u| u.relief = Some(Pressure::from_bar(1001.0)),
                "relief_bar",
            ),
            (|u| u.reservoir = Some(Volume::from_l(0.0)), "reservoir_l"),
            (
                |u| {
                    u.stroke = Some(TimedStroke {
                        bore: Length::from_mm(100.0),
                        rod: Some(Length::from_mm(120.0)),
                        length: Length::from_mm(300.0),
                        direction: StrokeDirection::Extend,
                    })
                },
                "stroke_rod_mm",
            ),
            (
                |u| {
                    u.stroke = Some(TimedStroke {
                        bore: Length::from_mm(100.0),
                        rod: None,
                        length: Length::from_mm(300.0),
                        direction: StrokeDirection::Retract,
                    })
                },
                "stroke_rod_mm",
            ),
        ];
        for (edit, field) in unit_cases {
            let mut v = unit.clone();
            edit(&mut v);
            assert_eq!(invalid_field(store.insert_unit(&v).unwrap_err()), field);
        }
        let fluid = Fluid {
            id: 0,
            name: "Thin".into(),
            iso_vg: Some(46),
            kv40_new: Some(Viscosity::from_cst(6.0)),
            kv100_new: Some(Viscosity::from_cst(7.0)),
            acid_new_mgkoh_g: None,
            base_type: String::new(),
        };
        assert_eq!(
            invalid_field(store.insert_fluid(&fluid).unwrap_err()),
            "kv100_new_cst"
        );
        // A message names the field and the rule.
        let mut c = check(u, &at());
        c.reservoir_temp = Some(Temperature::from_c(500.0));
        assert_eq!(
            store.insert_check(&c).unwrap_err().to_string(),
            "reservoir_temp_c: must be between -40 and 150 °C"
        );
    });
}

#[test]
fn edit_history_keeps_an_updated_and_a_deleted_check_with_who_when_and_why() {
    crate::backends::on_each_backend(|| {
        let dir = tmp();
        let path = crate::backends::shop_at(dir.path(), "edits.sqlite");
        let store = Store::open(&path, OpenMode::Create).unwrap();
        let (u, _) = small_shop(&store);
        let a = store
            .insert_check(&check(u, "2025-01-06T07:30:00Z"))
            .unwrap();
        let b = store
            .insert_check(&check(u, "2025-01-13T07:30:00Z"))
            .unwrap();
        let before = Utc::now() - chrono::Duration::seconds(2);

        let mut changed = store.check(a).unwrap().unwrap();
        changed.pressure = Some(Pressure::from_bar(127.0));
        store
            .update_check(&changed, "R. Quennell", "typed 172 for 127")
            .unwrap();
        store
            .delete_check(b, "M. Okafor-Lund", "entered on the wrong unit")
            .unwrap();
        assert!(store.check(b).unwrap().is_none());
        assert_eq!(
            store
                .check(a)
                .unwrap()
                .unwrap()
                .pressure
                .map(|p| p.bar().round()),
            Some(127.0)
        );

        let upd = store.edit_history("checks", a).unwrap();
        assert_eq!(upd.len(), 1);
        assert_eq!(upd[0].action, "update");
        assert_eq!(upd[0].by, "R. Quennell");
        assert_eq!(upd[0].reason, "typed 172 for 127");
        assert!(upd[0].at >= before && upd[0].at <= Utc::now());
        let old: serde_json::Value = serde_json::from_str(&upd[0].old_value).unwrap();
        let new: serde_json::Value =
            serde_json::from_str(upd[0].new_value.as_deref().unwrap()).unwrap();
        assert_eq!(old["pressure_bar"], 172.0);
        assert_eq!(new["pressure_bar"], 127.0);
        assert_eq!(old["taken_at"], "2025-01-06T07:30:00Z");

        let del = store.edit_history("checks", b).unwrap();
        assert_eq!(del.len(), 1);
        assert_eq!(del[0].action, "delete");
        assert_eq!(del[0].by, "M. Okafor-Lund");
        assert_eq!(del[0].reason, "entered on the wrong unit");
        assert!(del[0].new_value.is_none());
        let old: serde_json::Value = serde_json::from_str(&del[0].old_value).unwrap();
        assert_eq!(old["stroke_time_s"], 3.9);
        assert_eq!(old["taken_by"], "AK");

        // An edit without who and why is refused, by the store and by the file itself.
        assert!(matches!(
            store.delete_check(a, " ", "x"),
            Err(StoreError::Invalid { .. })
        ));
        drop(store);
        let (quiet_edit, log_delete, logged) = match crate::backends::current() {
            crate::backends::Backend::File => {
                let raw = rusqlite::Connection::open(&path).unwrap();
                let quiet = raw
                    .execute("UPDATE checks SET note = 'quiet edit'", [])
                    .unwrap_err()
                    .to_string();
                let delete = raw
                    .execute("DELETE FROM edit_log", [])
                    .unwrap_err()
                    .to_string();
                let n: i64 = raw
                    .query_row("SELECT count(*) FROM edit_log", [], |r| r.get(0))
                    .unwrap();
                (quiet, delete, n)
            }
            crate::backends::Backend::Server => {
                let mut raw =
                    postgres::Client::connect(path.to_str().unwrap(), postgres::NoTls).unwrap();
                let quiet = raw
                    .batch_execute("UPDATE checks SET note = 'quiet edit'")
                    .unwrap_err();
                let quiet = format!("{quiet:?}");
                let delete = raw.batch_execute("DELETE FROM edit_log").unwrap_err();
                let delete = format!("{delete:?}");
                let n: i64 = raw
                    .query_one("SELECT count(*) FROM edit_log", &[])
                    .unwrap()
                    .get(0);
                (quiet, delete, n)
            }
        };
        // SQLite names the column as table.column, the server names each apart.
        assert!(
            quiet_edit.contains("edit_log.edited_by")
                || (quiet_edit.contains("edit_log") && quiet_edit.contains("edited_by")),
            "{quiet_edit}"
        );
        assert!(log_delete.contains("append-only"), "{log_delete}");
        assert_eq!(logged, 2);
    });
}

#[test]
fn wrong_files_are_refused_with_a_typed_error_never_a_panic() {
    let dir = tmp();
    let text = dir.path().join("notes.txt");
    std::fs::write(&text, "this is a shopping list\n").unwrap();
    assert!(matches!(
        Store::open(&text, OpenMode::MustExist),
        Err(StoreError::NotSqlite { .. })
    ));
    let short = dir.path().join("short.sqlite");
    std::fs::write(&short, "SQLite").unwrap();
    assert!(matches!(
        Store::open(&short, OpenMode::Create),
        Err(StoreError::NotSqlite { .. })
    ));

    let other = dir.path().join("other.sqlite");
    {
        let c = rusqlite::Connection::open(&other).unwrap();
        c.execute_batch("CREATE TABLE recipes (name TEXT); INSERT INTO recipes VALUES ('soup');")
            .unwrap();
    }
    let e = Store::open(&other, OpenMode::MustExist).unwrap_err();
    assert!(matches!(e, StoreError::NotSumpbook { .. }), "{e:?}");
    assert!(e.to_string().contains("not a sumpbook shop"));
    // It was left alone.
    let c = rusqlite::Connection::open(&other).unwrap();
    let n: i64 = c
        .query_row("SELECT count(*) FROM sqlite_schema", [], |r| r.get(0))
        .unwrap();
    assert_eq!(n, 1);

    let newer = dir.path().join("newer.sqlite");
    drop(Store::open(&newer, OpenMode::Create).unwrap());
    {
        let c = rusqlite::Connection::open(&newer).unwrap();
        c.execute_batch("PRAGMA user_version = 99").unwrap();
    }
    match Store::open(&newer, OpenMode::MustExist) {
        Err(StoreError::TooNew { found, known, .. }) => {
            assert_eq!((found, known), (99, Store::latest_schema_version()))
        }
        other => panic!("expected TooNew, got {other:?}"),
    }

    let missing = dir.path().join("missing.sqlite");
    assert!(matches!(
        Store::open(&missing, OpenMode::MustExist),
        Err(StoreError::Missing { .. })
    ));
    assert!(!missing.exists());
    // A truncated shop (half copied) is damaged, and said to be so before anything is read.
    let cut = dir.path().join("cut.sqlite");
    {
        let mut s = Store::open(&cut, OpenMode::Create).unwrap();
        demo::load(&mut s, &demo::generate().unwrap()).unwrap();
    }
    let bytes = std::fs::read(&cut).unwrap();
    std::fs::write(&cut, &bytes[..8192]).unwrap();
    match Store::open(&cut, OpenMode::MustExist) {
        Err(e @ StoreError::Damaged { .. }) => assert!(e.to_string().contains("damaged"), "{e}"),
        other => panic!("expected Damaged, got {other:?}"),
    }
    // An empty file is no shop unless the caller may create one (init, first start).
    let empty = dir.path().join("empty.sqlite");
    std::fs::write(&empty, "").unwrap();
    assert!(matches!(
        Store::open(&empty, OpenMode::MustExist),
        Err(StoreError::NoShop { .. })
    ));
    assert_eq!(std::fs::metadata(&empty).unwrap().len(), 0);
    Store::open(&empty, OpenMode::Create).unwrap();
    assert!(matches!(
        Store::open(dir.path(), OpenMode::MustExist),
        Err(StoreError::CannotOpen { .. })
    ));
}

#[test]
fn the_fleet_loads_in_a_fixed_number_of_queries_whatever_its_size() {
    crate::backends::on_each_backend(|| {
        let dir = tmp();
        let mut store = new_store(dir.path(), "fleet.sqlite");
        let shop = demo::generate().unwrap();
        demo::load(&mut store, &shop).unwrap();
        let q0 = store.query_count();
        let hist = store.unit_histories(None).unwrap();
        let small = store.query_count() - q0;
        assert_eq!(hist.len(), shop.units.len());
        assert_eq!(
            hist.iter().map(|h| h.checks.len()).sum::<usize>(),
            shop.checks.len()
        );
        assert_eq!(
            hist.iter().map(|h| h.samples.len()).sum::<usize>(),
            shop.samples.len()
        );
        assert_eq!(
            hist.iter().map(|h| h.events.len()).sum::<usize>(),
            shop.events.len()
        );
        assert!(hist
            .iter()
            .all(|h| h.checks.windows(2).all(|w| w[0].taken_at < w[1].taken_at)));

        // Twice the units and checks: the same number of queries.
        let mut more = shop.clone();
        for m in &mut more.machines {
            m.tag = format!("{}-B", m.tag);
        }
        for u in &mut more.units {
            u.tag = format!("{}-B", u.tag);
        }
        for f in &mut more.fluids {
            f.name = format!("{} B", f.name);
        }
        more.limits.clear();
        demo::load(&mut store, &more).unwrap();
        let q1 = store.query_count();
        let hist = store.unit_histories(None).unwrap();
        assert_eq!(store.query_count() - q1, small);
        assert_eq!(hist.len(), 2 * shop.units.len());

        // As of a date: only what was recorded by then.
        let at = t("2025-06-01T00:00:00Z");
        let past = store.unit_histories(Some(at)).unwrap();
        assert!(past
            .iter()
            .all(|h| h.checks.iter().all(|c| c.taken_at <= at)));
        let one = store
            .unit_history(past[0].unit.id, Some(at))
            .unwrap()
            .unwrap();
        assert_eq!(one.checks, past[0].checks);
        assert_eq!(one.samples, past[0].samples);
        assert_eq!(one.events, past[0].events);
    });
}

fn import(store: &mut Store, kind: FileKind, path: &Path) -> sumpbook::exchange::ImportSummary {
    import_file(store, kind, path, false).unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

#[test]
fn sample_data_is_what_the_generator_makes_today() {
    // SUMPBOOK_WRITE_SAMPLE_DATA=1 rewrites the files after a deliberate change of the demo.
    let files = demo::csv_files().unwrap();
    let write = std::env::var_os("SUMPBOOK_WRITE_SAMPLE_DATA").is_some();
    for (kind, bytes) in files {
        let path = sample_data_dir().join(kind.file_name());
        if write {
            std::fs::write(&path, &bytes).unwrap();
        }
        let on_disk = std::fs::read(&path).unwrap_or_default();
        assert!(
            on_disk == bytes,
            "{} differs from what the demo generator makes; run the test with SUMPBOOK_WRITE_SAMPLE_DATA=1 \
             after a deliberate change and update sample-data/README.md",
            path.display()
        );
    }
}

#[test]
fn sample_data_imports_and_importing_it_again_adds_nothing() {
    crate::backends::on_each_backend(|| {
        let dir = tmp();
        let mut store = new_store(dir.path(), "imported.sqlite");
        let shop = demo::generate().unwrap();
        let expect = [
            (FileKind::Units, shop.units.len()),
            (FileKind::Checks, shop.checks.len()),
            (FileKind::Samples, shop.samples.len()),
            (FileKind::Events, shop.events.len()),
        ];
        for (kind, n) in expect {
            let s = import(&mut store, kind, &sample_data_dir().join(kind.file_name()));
            assert_eq!(
                (s.inserted as usize, s.unchanged, s.rejected),
                (n, 0, 0),
                "{kind}"
            );
        }
        let units = store.units().unwrap();
        assert_eq!(units.len(), shop.units.len());
        assert_eq!(store.machines().unwrap().len(), shop.machines.len());
        assert_eq!(store.fluids().unwrap().len(), shop.fluids.len());
        for (kind, n) in expect {
            let s = import(&mut store, kind, &sample_data_dir().join(kind.file_name()));
            assert_eq!(
                (s.inserted, s.unchanged as usize),
                (0, n),
                "re-import of {kind}"
            );
        }
        let hist = store.unit_histories(None).unwrap();
        assert_eq!(
            hist.iter().map(|h| h.checks.len()).sum::<usize>(),
            shop.checks.len()
        );
    });
}

fn export_all(store: &Store, system: UnitSystem) -> Vec<(FileKind, Vec<u8>)> {
    FileKind::ALL
        .iter()
        .map(|&k| {
            let mut out = Vec::new();
            export(store, k, &mut out, system).unwrap();
            (k, out)
        })
        .collect()
}

#[test]
fn export_then_import_into_a_new_shop_keeps_every_value_in_both_unit_systems() {
    crate::backends::on_each_backend(|| {
        let dir = tmp();
        let mut original = new_store(dir.path(), "original.sqlite");
        demo::load(&mut original, &demo::generate().unwrap()).unwrap();
        let metric = export_all(&original, UnitSystem::Metric);
        let us = export_all(&original, UnitSystem::Us);
        for (system, files) in [("metric", &metric), ("us", &us)] {
            let mut copy = new_store(dir.path(), &format!("copy-{system}.sqlite"));
            for (kind, bytes) in files.iter() {
                let path = dir.path().join(format!("{system}-{}", kind.file_name()));
                std::fs::write(&path, bytes).unwrap();
                import(&mut copy, *kind, &path);
            }
            // The copy exports exactly the same files, in either system.
            assert_eq!(
                export_all(&copy, UnitSystem::Metric),
                metric,
                "via {system}"
            );
            assert_eq!(export_all(&copy, UnitSystem::Us), us, "via {system}");
            // And the records behind them are the same.
            let a = original.unit_histories(None).unwrap();
            let b = copy.unit_histories(None).unwrap();
            for (x, y) in a.iter().zip(&b) {
                assert_eq!(x.unit.tag, y.unit.tag);
                let cols = |c: &Check| {
                    (
                        c.taken_at,
                        c.reservoir_temp.map(sumpbook::store::columns::temp_c),
                        c.pressure.map(sumpbook::store::columns::bar),
                        c.stroke_time,
                        c.case_drain.map(sumpbook::store::columns::lpm),
                        c.by.clone(),
                        c.note.clone(),
                    )
                };
                assert_eq!(
                    x.checks.iter().map(cols).collect::<Vec<_>>(),
                    y.checks.iter().map(cols).collect::<Vec<_>>()
                );
                assert_eq!(x.samples.len(), y.samples.len());
                assert_eq!(x.events.len(), y.events.len());
            }
        }
        // US numbers are in US units.
        let us_checks = String::from_utf8(us[1].1.clone()).unwrap();
        assert!(us_checks
            .starts_with("unit_tag,taken_at,reservoir_temp_f,ambient_temp_f,pressure_psi,"));
    });
}

/// A fluid that only work done names (put in once, no unit has it in service now) is not in
/// the unit register's file; the events file carries its grade and viscosities beside its
/// name, so importing both into a new shop adds it with the same values and the files read back
/// the same. A name alone that a shop lacks is still refused, and data that differ from the
/// stored fluid's are refused, not written over it.
#[test]
fn a_fluid_only_work_done_names_reaches_a_new_shop_through_the_events_file() {
    let dir = tmp();
    let original = new_store(dir.path(), "original.sqlite");
    let (unit, _) = small_shop(&original);
    let trial = Fluid {
        id: 0,
        name: "Trial HV 32".into(),
        iso_vg: Some(32),
        kv40_new: Some(Viscosity::from_cst(32.4)),
        kv100_new: Some(Viscosity::from_cst(6.3)),
        acid_new_mgkoh_g: None,
        base_type: String::new(),
    };
    let trial_id = original.insert_fluid(&trial).unwrap();
    original
        .insert_event(&Event {
            id: 0,
            unit_id: unit,
            done_at: t("2026-03-02T09:00:00Z"),
            kind: EventKind::TopUp,
            volume: Some(Volume::from_l(20.0)),
            fluid_id: Some(trial_id),
            by: "T. Fitter".into(),
            note: String::new(),
        })
        .unwrap();
    for system in [UnitSystem::Metric, UnitSystem::Us] {
        let files = export_all(&original, system);
        let units = String::from_utf8(files[0].1.clone()).unwrap();
        assert!(!units.contains("Trial HV 32"), "{units}");
        let mut copy = new_store(dir.path(), &format!("copy-{system:?}.sqlite"));
        // The shop has no checks or samples: the unit register, then the work done.
        for (kind, bytes) in files
            .iter()
            .filter(|(k, _)| matches!(k, FileKind::Units | FileKind::Events))
        {
            let path = dir.path().join(format!("{system:?}-{}", kind.file_name()));
            std::fs::write(&path, bytes).unwrap();
            let summary = import(&mut copy, *kind, &path);
            if *kind == FileKind::Events {
                assert_eq!(summary.fluids_added, 1, "{system:?}");
            }
        }
        let added = copy
            .fluids()
            .unwrap()
            .into_iter()
            .find(|f| f.name == trial.name)
            .expect("the trial fluid in the new shop");
        assert_eq!(
            (added.iso_vg, added.kv40_new, added.kv100_new),
            (trial.iso_vg, trial.kv40_new, trial.kv100_new)
        );
        assert_eq!(export_all(&copy, system), files, "{system:?}");
    }

    // A name the shop lacks, without the fluid's data: refused, naming the cell.
    let mut other = new_store(dir.path(), "other.sqlite");
    small_shop(&other);
    let name_only = dir.path().join("name-only.csv");
    std::fs::write(
        &name_only,
        "unit_tag,done_at,kind,volume_l,fluid_name\nPR-01-M,2026-03-02T09:00:00Z,top_up,20,Trial HV 32\n",
    )
    .unwrap();
    let e = import_file(&mut other, FileKind::Events, &name_only, false).unwrap_err();
    assert!(e.to_string().contains("no fluid `Trial HV 32`"), "{e}");
    // The stored fluid's name with another grade: refused, the stored fluid unchanged.
    let other_grade = dir.path().join("other-grade.csv");
    std::fs::write(
        &other_grade,
        "unit_tag,done_at,kind,volume_l,fluid_name,fluid_vg\nPR-01-M,2026-03-02T09:00:00Z,top_up,20,Stock HM 46,68\n",
    )
    .unwrap();
    let e = import_file(&mut other, FileKind::Events, &other_grade, false).unwrap_err();
    assert!(
        e.to_string().contains("already stored with other values"),
        "{e}"
    );
    assert!(other.events_for_unit(1, None).unwrap().is_empty());
}

#[test]
fn text_that_a_spreadsheet_would_run_is_guarded_on_export_and_restored_on_import() {
    crate::backends::on_each_backend(|| {
        let dir = tmp();
        let store = new_store(dir.path(), "guard.sqlite");
        let (u, _) = small_shop(&store);
        let mut c = check(u, "2025-03-03T07:00:00Z");
        c.note = "=HYPERLINK(\"x\")".into();
        c.by = "-AK".into();
        c.ambient_temp = Some(Temperature::from_c(-5.5));
        store.insert_check(&c).unwrap();
        let mut out = Vec::new();
        export(&store, FileKind::Checks, &mut out, UnitSystem::Metric).unwrap();
        let text = String::from_utf8(out.clone()).unwrap();
        assert!(
            text.contains(",-5.5,"),
            "negative numbers stay numbers: {text}"
        );
        assert!(text.contains(",'-AK,\"'=HYPERLINK(\"\"x\"\")\""), "{text}");

        let mut copy = new_store(dir.path(), "guard-copy.sqlite");
        small_shop(&copy);
        import_reader(
            &mut copy,
            FileKind::Checks,
            "checks.csv",
            out.as_slice(),
            None,
        )
        .unwrap();
        let back = &copy.unit_histories(None).unwrap()[0].checks[0];
        assert_eq!(back.note, "=HYPERLINK(\"x\")");
        assert_eq!(back.by, "-AK");
    });
}

const CHECK_HEADER: &str =
    "unit_tag,taken_at,reservoir_temp_c,ambient_temp_c,pressure_bar,stroke_time_s,by,note\n";

fn rows_error(
    r: Result<sumpbook::exchange::ImportSummary, ExchangeError>,
) -> Vec<sumpbook::exchange::RowError> {
    match r {
        Err(ExchangeError::Rows(rows)) => rows,
        other => panic!("expected bad rows, got {other:?}"),
    }
}

#[test]
fn bad_rows_among_good_ones_import_nothing_and_each_is_named_by_line_and_column() {
    crate::backends::on_each_backend(|| {
        let dir = tmp();
        let mut store = new_store(dir.path(), "allornothing.sqlite");
        small_shop(&store);
        let csv = format!(
            "{CHECK_HEADER}\
             PR-01-M,2025-01-06T07:30:00Z,45,21,172,3.9,AK,\n\
             PR-01-M,2025-01-13T07:30:00Z,45,21,-5,3.9,AK,\n\
             PR-01-M,2025-01-20T07:30:00Z,45,21,172,3.9,AK,\n\
             PR-01-M,2025-01-27T07:30:00Z,200,21,172,0,AK,\n"
        );
        let path = dir.path().join("checks.csv");
        std::fs::write(&path, &csv).unwrap();
        let rows = rows_error(import_file(&mut store, FileKind::Checks, &path, false));
        let shown: Vec<String> = rows.iter().map(ToString::to_string).collect();
        let file = path.display().to_string();
        assert_eq!(
            shown,
            vec![
                format!("{file}:3: pressure_bar: must be between 0 and 1000 bar"),
                format!("{file}:5: reservoir_temp_c: must be between -40 and 150 °C"),
                format!("{file}:5: stroke_time_s: must be above 0"),
            ]
        );
        assert_eq!(
            store.unit_histories(None).unwrap()[0].checks.len(),
            0,
            "nothing written"
        );

        // Keep-going: the good rows go in, the bad ones to a side file in the same format.
        let semi = csv.replace(',', ";");
        let path = dir.path().join("week.csv");
        std::fs::write(&path, &semi).unwrap();
        let s = import_file(&mut store, FileKind::Checks, &path, true).unwrap();
        assert_eq!((s.rows, s.inserted, s.rejected), (4, 2, 2));
        let rejects = s.rejects_file.unwrap();
        assert_eq!(rejects, dir.path().join("week.rejects.csv"));
        let text = std::fs::read_to_string(&rejects).unwrap();
        let lines: Vec<&str> = text.lines().collect();
        assert_eq!(lines[0], "unit_tag;taken_at;reservoir_temp_c;ambient_temp_c;pressure_bar;stroke_time_s;by;note;reject_reason");
        assert_eq!(lines[1], "PR-01-M;2025-01-13T07:30:00Z;45;21;-5;3.9;AK;;pressure_bar: must be between 0 and 1000 bar");
        // The reason holds the delimiter, so it is quoted (RFC 4180).
        assert!(lines[2].ends_with(
            ";\"reservoir_temp_c: must be between -40 and 150 °C; stroke_time_s: must be above 0\""
        ));
        assert_eq!(store.unit_histories(None).unwrap()[0].checks.len(), 2);
    });
}

#[test]
fn an_unknown_column_and_both_units_of_one_quantity_are_refused() {
    crate::backends::on_each_backend(|| {
        let dir = tmp();
        let mut store = new_store(dir.path(), "columns.sqlite");
        small_shop(&store);
        let rows = rows_error(import_reader(
            &mut store,
            FileKind::Checks,
            "typo.csv",
            "unit_tag,taken_at,reservoir_tmp_c\nPR-01-M,2025-01-06,45\n".as_bytes(),
            None,
        ));
        assert_eq!(rows.len(), 1);
        assert_eq!(
            (rows[0].line, rows[0].column.as_str()),
            (1, "reservoir_tmp_c")
        );
        assert!(rows[0]
            .reason
            .starts_with("unknown column for a checks file"));
        let rows = rows_error(import_reader(
            &mut store,
            FileKind::Checks,
            "both.csv",
            "unit_tag,taken_at,pressure_bar,pressure_psi\nPR-01-M,2025-01-06,172,2500\n".as_bytes(),
            None,
        ));
        assert_eq!(rows[0].column, "pressure_psi");
        assert!(rows[0].reason.contains("same quantity in two units"));
    });
}

#[test]
fn a_check_for_an_unknown_unit_is_refused_naming_the_unit_tag() {
    crate::backends::on_each_backend(|| {
        let dir = tmp();
        let mut store = new_store(dir.path(), "unknown.sqlite");
        small_shop(&store);
        let rows = rows_error(import_reader(
            &mut store,
            FileKind::Checks,
            "c.csv",
            "unit_tag,taken_at,stroke_time_s\nPR-01-M,2025-01-06,3.9\nPR-99-Z,2025-01-06,3.9\n"
                .as_bytes(),
            None,
        ));
        assert_eq!(rows.len(), 1);
        assert_eq!(rows[0].to_string(), "c.csv:3: unit_tag: no unit `PR-99-Z` in this shop (import the unit register, units.csv, first)");
    });
}

#[test]
fn a_reimport_with_other_values_for_a_stored_key_is_an_error_not_an_overwrite() {
    crate::backends::on_each_backend(|| {
        let dir = tmp();
        let mut store = new_store(dir.path(), "conflict.sqlite");
        small_shop(&store);
        let first = format!("{CHECK_HEADER}PR-01-M,2025-01-06T07:30:00Z,45,21,172,3.9,AK,\n");
        import_reader(
            &mut store,
            FileKind::Checks,
            "a.csv",
            first.as_bytes(),
            None,
        )
        .unwrap();
        // The same check in °F and psi is the same check.
        let us = "unit_tag,taken_at,reservoir_temp_f,pressure_psi\nPR-01-M,2025-01-06T08:30:00+01:00,113,2494.6531\n";
        let rows = rows_error(import_reader(
            &mut store,
            FileKind::Checks,
            "b.csv",
            us.as_bytes(),
            None,
        ));
        assert_eq!(rows[0].column, "taken_at");
        assert!(
            rows[0]
                .reason
                .contains("already stored with other values in pressure_psi"),
            "{}",
            rows[0].reason
        );
        let same = "unit_tag,taken_at,reservoir_temp_f\nPR-01-M,2025-01-06T08:30:00+01:00,113\n";
        let s =
            import_reader(&mut store, FileKind::Checks, "c.csv", same.as_bytes(), None).unwrap();
        assert_eq!((s.inserted, s.unchanged), (0, 1));
        let stored = &store.unit_histories(None).unwrap()[0].checks;
        assert_eq!(stored.len(), 1);
        assert_eq!(
            stored[0].pressure.map(sumpbook::store::columns::bar),
            Some(172.0)
        );
    });
}

/// Runs one line of `tests/bad_input/expected.tsv`.
fn shop_for_fixtures(dir: &Path) -> Store {
    let base = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/bad_input/shop");
    let mut store = new_store(dir, "fixtures.sqlite");
    import(&mut store, FileKind::Units, &base.join("units.csv"));
    import(&mut store, FileKind::Checks, &base.join("checks.csv"));
    store
}

#[test]
fn bad_input_fixtures_report_line_column_and_reason_and_write_nothing() {
    crate::backends::on_each_backend(|| {
        let base = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/bad_input");
        let table = std::fs::read_to_string(base.join("expected.tsv")).unwrap();
        let dir = tmp();
        let mut store = shop_for_fixtures(dir.path());
        let before = export_all(&store, UnitSystem::Metric);
        let mut cases = 0;
        for line in table
            .lines()
            .filter(|l| !l.starts_with('#') && !l.trim().is_empty())
        {
            let cols: Vec<&str> = line.split('\t').collect();
            let [file, kind, line_no, column, reason] = cols[..] else {
                panic!("bad fixture line {line:?}")
            };
            let kind: FileKind = kind.parse().unwrap();
            let rows = match import_file(&mut store, kind, &base.join(file), false) {
                Err(ExchangeError::Rows(rows)) => rows,
                other => panic!("{file}: expected bad rows, got {other:?}"),
            };
            let line_no: u64 = line_no.parse().unwrap();
            assert!(
                rows.iter()
                    .any(|r| r.line == line_no && r.column == column && r.reason.contains(reason)),
                "{file}: expected {line_no}: {column}: …{reason}…, got:\n{}",
                rows.iter()
                    .map(ToString::to_string)
                    .collect::<Vec<_>>()
                    .join("\n")
            );
            assert!(rows.iter().all(|r| r.file.ends_with(file)));
            cases += 1;
        }
        assert!(cases >= 60, "{cases} cases");
        assert_eq!(
            export_all(&store, UnitSystem::Metric),
            before,
            "a refused file wrote something"
        );

        for entry in std::fs::read_dir(base.join("good")).unwrap() {
            let path = entry.unwrap().path();
            let name = path.file_name().unwrap().to_string_lossy().into_owned();
            let kind: FileKind = name.split('_').next().unwrap().parse().unwrap();
            let s = import(&mut store, kind, &path);
            assert!(s.inserted > 0, "{name}");
        }
        let checks = &store
            .unit_histories(None)
            .unwrap()
            .into_iter()
            .find(|h| h.unit.tag == "PR-07-HPU")
            .unwrap()
            .checks;
        let guarded = checks
            .iter()
            .find(|c| c.taken_at == Utc.with_ymd_and_hms(2025, 2, 17, 7, 30, 0).unwrap())
            .unwrap();
        assert_eq!(guarded.note, "=SUM(A1:A3)");
        let us = checks
            .iter()
            .find(|c| c.taken_at == Utc.with_ymd_and_hms(2025, 2, 15, 7, 30, 0).unwrap())
            .unwrap();
        // 113 °F = 45 °C and 2500 psi = 172.3689 bar (NIST SP 811 factors).
        assert_eq!(
            us.reservoir_temp.map(sumpbook::store::columns::temp_c),
            Some(45.0)
        );
        assert!((us.pressure.unwrap().bar() - 172.368_932).abs() < 1e-6);
    });
}

#[test]
fn demo_shop_limits_use_keys_the_health_engine_knows() {
    let shop = demo::generate().unwrap();
    for l in &shop.limits {
        assert!(
            sumpbook::health::limits::LimitKey::ALL
                .iter()
                .any(|k| k.as_str() == l.key),
            "unknown limit key {}",
            l.key
        );
    }
}

#[test]
fn unit_page_reads_use_the_indexes() {
    let dir = tmp();
    let mut store = new_store(dir.path(), "plans.sqlite");
    demo::load(&mut store, &demo::generate().unwrap()).unwrap();
    let plans = store.unit_page_query_plans().unwrap();
    assert_eq!(plans.len(), 3);
    for (sql, plan) in plans {
        assert!(
            plan.contains("USING INDEX") || plan.contains("USING COVERING INDEX"),
            "{sql}: {plan}"
        );
        assert!(
            !plan.contains("TEMP B-TREE") && !plan.starts_with("SCAN"),
            "{sql}: {plan}"
        );
    }
}

#[cfg(unix)]
#[test]
fn keep_going_never_removes_or_replaces_a_rejects_target_that_is_not_a_regular_file() {
    crate::backends::on_each_backend(|| {
        let dir = tmp();
        let mut store = new_store(dir.path(), "target.sqlite");
        small_shop(&store);
        let link = dir.path().join("week.rejects.csv");
        std::os::unix::fs::symlink("/dev/null", &link).unwrap();
        let csv = format!("{CHECK_HEADER}PR-01-M,2025-01-13T07:30:00Z,45,21,-5,3.9,AK,\n");
        let s = import_reader(
            &mut store,
            FileKind::Checks,
            "week.csv",
            csv.as_bytes(),
            Some(link.clone()),
        )
        .unwrap();
        assert_eq!(s.rejected, 1);
        assert!(std::fs::symlink_metadata(&link)
            .unwrap()
            .file_type()
            .is_symlink());
        use std::os::unix::fs::FileTypeExt;
        assert!(std::fs::metadata("/dev/null")
            .unwrap()
            .file_type()
            .is_char_device());
    });
}

#[test]
fn a_confirmation_is_stored_read_back_lifted_and_each_change_is_in_the_edit_history() {
    use sumpbook::model::Confirmation;
    let dir = tmp();
    let path = dir.path().join("confirm.sqlite");
    let store = Store::open(&path, OpenMode::Create).unwrap();
    let (u, _) = small_shop(&store);
    // Oil typed as 4.65 for 46.5: the kind of reading a screening questions.
    let mut slipped = check(u, "2025-02-03T07:30:00Z");
    slipped.reservoir_temp = Some(Temperature::from_c(4.65));
    let a = store.insert_check(&slipped).unwrap();
    let s = store
        .insert_sample(&sample(u, "2025-02-04T00:00:00Z"))
        .unwrap();
    assert_eq!(store.check(a).unwrap().unwrap().confirmed, None);
    assert!(!store.any_confirmed_check().unwrap());

    // A confirmation written with the reading (entry: the person confirmed before saving).
    let at_entry = Confirmation {
        by: "AK".into(),
        at: t("2025-02-10T07:31:00Z"),
    };
    let mut confirmed_at_entry = check(u, "2025-02-10T07:30:00Z");
    confirmed_at_entry.confirmed = Some(at_entry.clone());
    let b = store.insert_check(&confirmed_at_entry).unwrap();
    assert_eq!(store.check(b).unwrap().unwrap().confirmed, Some(at_entry));

    // Confirmed later: the row changes only in its confirmation, and the log says who and why.
    let k = Confirmation {
        by: "R. Quennell".into(),
        at: t("2025-02-05T09:00:00Z"),
    };
    store
        .set_check_confirmation(a, Some(&k), "R. Quennell", "oil was cold after the weekend")
        .unwrap();
    let back = store.check(a).unwrap().unwrap();
    assert_eq!(back.confirmed, Some(k.clone()));
    assert_eq!(back.reservoir_temp, slipped.reservoir_temp);
    assert!(store.any_confirmed_check().unwrap());
    // The whole-shop read carries it too.
    let h = store.unit_histories(None).unwrap();
    assert_eq!(h[0].checks[0].confirmed, Some(k.clone()));
    assert_eq!(
        store
            .check_at(u, &t("2025-02-03T07:30:00Z"))
            .unwrap()
            .unwrap()
            .id,
        a
    );
    assert!(store
        .check_at(u, &t("2025-02-03T07:30:01Z"))
        .unwrap()
        .is_none());

    store
        .set_check_confirmation(a, None, "M. Okafor-Lund", "gauge found broken")
        .unwrap();
    assert_eq!(store.check(a).unwrap().unwrap().confirmed, None);
    let log = store.edit_history("checks", a).unwrap();
    assert_eq!(log.len(), 2, "{log:?}");
    let new0: serde_json::Value =
        serde_json::from_str(log[0].new_value.as_deref().unwrap()).unwrap();
    let old0: serde_json::Value = serde_json::from_str(&log[0].old_value).unwrap();
    assert_eq!(old0["confirmed_by"], serde_json::Value::Null);
    assert_eq!(new0["confirmed_by"], "R. Quennell");
    assert_eq!(new0["confirmed_at"], "2025-02-05T09:00:00Z");
    assert_eq!(log[0].reason, "oil was cold after the weekend");
    assert_eq!(log[1].by, "M. Okafor-Lund");
    assert_eq!(log[1].reason, "gauge found broken");
    let new1: serde_json::Value =
        serde_json::from_str(log[1].new_value.as_deref().unwrap()).unwrap();
    assert_eq!(new1["confirmed_by"], serde_json::Value::Null);

    // Samples likewise.
    store
        .set_sample_confirmation(s, Some(&k), "R. Quennell", "lab re-ran it")
        .unwrap();
    assert_eq!(store.sample(s).unwrap().unwrap().confirmed, Some(k));
    let slog = store.edit_history("samples", s).unwrap();
    assert_eq!(slog.len(), 1);
    assert_eq!(slog[0].reason, "lab re-ran it");

    // Unknown rows and a nameless confirmation are refused.
    assert!(matches!(
        store.set_check_confirmation(9999, None, "AK", "x"),
        Err(StoreError::NotFound(_))
    ));
    let nameless = Confirmation {
        by: " ".into(),
        at: t("2025-02-05T09:00:00Z"),
    };
    let e = store
        .set_check_confirmation(a, Some(&nameless), "AK", "x")
        .unwrap_err();
    assert_eq!(invalid_field(e), "confirmed_by");
    // The file itself refuses half a confirmation.
    drop(store);
    let raw = rusqlite::Connection::open(&path).unwrap();
    raw.execute_batch("INSERT INTO edit_context VALUES (1, 'x', 'y', '2025-02-05T09:00:00Z');")
        .unwrap();
    let err = raw
        .execute(
            "UPDATE checks SET confirmed_by = 'AK' WHERE confirmed_by IS NULL",
            [],
        )
        .unwrap_err();
    assert!(
        err.to_string()
            .contains("who confirmed and when go together"),
        "{err}"
    );
}

#[test]
fn confirmations_round_trip_through_export_and_import_and_a_shop_without_any_exports_as_before() {
    use sumpbook::model::Confirmation;
    let dir = tmp();
    let a = new_store(dir.path(), "a.sqlite");
    let (u, _) = small_shop(&a);
    let c1 = a.insert_check(&check(u, "2025-03-03T07:30:00Z")).unwrap();
    a.insert_check(&check(u, "2025-03-10T07:30:00Z")).unwrap();
    let s1 = a.insert_sample(&sample(u, "2025-03-04T00:00:00Z")).unwrap();
    let mut plain = Vec::new();
    export(&a, FileKind::Checks, &mut plain, UnitSystem::Metric).unwrap();
    let plain = String::from_utf8(plain).unwrap();
    assert!(!plain.contains("confirmed_by"), "{plain}");

    let k = Confirmation {
        by: "=R. Quennell".into(),
        at: t("2025-03-05T09:00:00Z"),
    };
    a.set_check_confirmation(c1, Some(&k), "RQ", "re-timed")
        .unwrap();
    a.set_sample_confirmation(s1, Some(&k), "RQ", "re-run")
        .unwrap();
    let files: Vec<(FileKind, Vec<u8>)> = [FileKind::Units, FileKind::Checks, FileKind::Samples]
        .iter()
        .map(|&kind| {
            let mut out = Vec::new();
            export(&a, kind, &mut out, UnitSystem::Us).unwrap();
            (kind, out)
        })
        .collect();
    let checks_csv = String::from_utf8(files[1].1.clone()).unwrap();
    let lines: Vec<&str> = checks_csv.lines().collect();
    assert!(
        lines[0].ends_with(",confirmed_by,confirmed_at"),
        "{}",
        lines[0]
    );
    // The name is guarded like any text a spreadsheet would run.
    assert!(
        lines[1].ends_with(",'=R. Quennell,2025-03-05T09:00:00Z"),
        "{}",
        lines[1]
    );
    assert!(lines[2].ends_with(",,"), "{}", lines[2]);

    let mut b = new_store(dir.path(), "b.sqlite");
    for (kind, bytes) in &files {
        let p = dir.path().join(kind.file_name());
        std::fs::write(&p, bytes).unwrap();
        import(&mut b, *kind, &p);
    }
    let hb = b.unit_histories(None).unwrap();
    assert_eq!(hb[0].checks[0].confirmed, Some(k.clone()));
    assert_eq!(hb[0].checks[1].confirmed, None);
    assert_eq!(hb[0].samples[0].confirmed, Some(k.clone()));
    // Importing the same file again adds nothing and changes nothing.
    let p = dir.path().join(FileKind::Checks.file_name());
    let again = import(&mut b, FileKind::Checks, &p);
    assert_eq!(again.inserted, 0);

    // Half a confirmation in a file is refused with its line and column.
    let half = dir.path().join("half.csv");
    std::fs::write(
        &half,
        "unit_tag,taken_at,pressure_bar,confirmed_by,confirmed_at\n\
         PR-01-M,2025-04-01T07:30:00Z,170,AK,\n",
    )
    .unwrap();
    let e = import_file(&mut b, FileKind::Checks, &half, false).unwrap_err();
    let ExchangeError::Rows(rows) = e else {
        panic!("expected bad rows, got {e:?}")
    };
    assert_eq!(rows[0].line, 2);
    assert_eq!(rows[0].column, "confirmed_at");
}

/// Rows in every table whose rows only an UPDATE may change, two of each, written with plain
/// SQL that both backends take (ids 1 and 2 in a new shop).
pub(crate) const ROWS_TO_KEEP: &str = "
INSERT INTO machines (tag, name) VALUES ('M-1', 'Press one'), ('M-2', 'Press two');
INSERT INTO fluids (name, iso_vg) VALUES ('Fluid A', 46), ('Fluid B', 32);
INSERT INTO units (machine_id, tag, pump_kind, sensitive_component, fluid_id)
    VALUES (1, 'U-1', 'gear', 'gear_pump', 1), (2, 'U-2', 'vane', 'vane_pump', 2);
INSERT INTO checks (unit_id, taken_at, pressure_bar, note)
    VALUES (1, '2025-01-06T07:30:00Z', 172, 'first'), (1, '2025-01-13T07:30:00Z', 171, 'second');
INSERT INTO samples (unit_id, sampled_at, water_ppm, note)
    VALUES (1, '2025-01-07T00:00:00Z', 120, 'first'), (1, '2025-01-14T00:00:00Z', 130, 'second');
INSERT INTO events (unit_id, done_at, kind, note)
    VALUES (1, '2025-01-08T10:00:00Z', 'filter_change', 'first'), (1, '2025-01-15T10:00:00Z', 'filter_change', 'second');
INSERT INTO limits (unit_id, key, watch, act) VALUES (NULL, 'water_ppm', 150, 400), (1, 'water_ppm', 200, 500);
INSERT INTO manual_baselines (unit_id, era_start, indicator, value_si, spread_si, entered_by, entered_at)
    VALUES (1, '2025-01-01T00:00:00Z', 'effective_flow', 0.0015, 0.00002, 'RE', '2025-01-02T00:00:00Z'),
           (1, '2025-01-01T00:00:00Z', 'case_drain', 0.00002, 0.000001, 'RE', '2025-01-02T00:00:00Z');
INSERT INTO acknowledgements (unit_id, kind, state, ack_by, note, acked_at)
    VALUES (1, 'water', 'watch', 'SV', 'first', '2025-01-09T00:00:00Z'),
           (1, 'water', 'act', 'SV', 'second', '2025-01-16T00:00:00Z');
";

/// The tables of [`ROWS_TO_KEEP`]: the columns of each one's identifying key beside the id,
/// and a column with the value a replacement would put there.
pub(crate) const KEPT_TABLES: [(&str, &[&str], &str, &str); 10] = [
    ("checks", &["unit_id", "taken_at"], "note", "'replaced'"),
    ("samples", &["unit_id", "sampled_at"], "note", "'replaced'"),
    (
        "events",
        &["unit_id", "done_at", "kind"],
        "note",
        "'replaced'",
    ),
    ("units", &["tag"], "route_order", "99"),
    ("fluids", &["name"], "base_type", "'replaced'"),
    ("machines", &["tag"], "name", "'replaced'"),
    ("limits", &["unit_id", "key"], "watch", "99"),
    ("manual_baselines", &[], "value_si", "99"),
    ("acknowledgements", &[], "note", "'replaced'"),
    ("settings", &[], "shop_name", "'replaced'"),
];

/// Every statement that would replace row 1 of `table` (or delete it by moving row 2 onto its
/// id or key) as SQLite spells them, with a name for the failure message.
fn replacing_statements(
    table: &str,
    key: &[&str],
    col: &str,
    value: &str,
    cols: &[String],
) -> Vec<(String, String)> {
    let all = cols.join(", ");
    let changed = |c: &String| {
        if c == col {
            value.to_string()
        } else {
            c.clone()
        }
    };
    let with_change = cols.iter().map(changed).collect::<Vec<_>>().join(", ");
    let no_id: Vec<&String> = cols.iter().filter(|c| *c != "id").collect();
    let no_id_list = no_id
        .iter()
        .map(|c| c.as_str())
        .collect::<Vec<_>>()
        .join(", ");
    let no_id_changed = no_id
        .iter()
        .map(|c| changed(c))
        .collect::<Vec<_>>()
        .join(", ");
    let mut out = vec![
        (
            "REPLACE INTO on the id".to_string(),
            format!("REPLACE INTO {table} ({all}) SELECT {with_change} FROM {table} WHERE id = 1"),
        ),
        (
            "INSERT OR REPLACE on the id".to_string(),
            format!(
                "INSERT OR REPLACE INTO {table} ({all}) SELECT {with_change} FROM {table} WHERE id = 1"
            ),
        ),
        (
            "upsert on the id".to_string(),
            format!(
                "INSERT INTO {table} ({all}) SELECT {all} FROM {table} WHERE id = 1 \
                 ON CONFLICT (id) DO UPDATE SET {col} = {value}"
            ),
        ),
    ];
    if table != "settings" {
        out.push((
            "UPDATE OR REPLACE onto another id".to_string(),
            format!("UPDATE OR REPLACE {table} SET id = 1 WHERE id = 2"),
        ));
    }
    if !key.is_empty() {
        let keys = key.join(", ");
        out.extend([
            (
                "REPLACE INTO on the key, new id".to_string(),
                format!(
                    "REPLACE INTO {table} ({no_id_list}) SELECT {no_id_changed} FROM {table} WHERE id = 1"
                ),
            ),
            (
                "INSERT OR REPLACE on the key, new id".to_string(),
                format!(
                    "INSERT OR REPLACE INTO {table} ({no_id_list}) SELECT {no_id_changed} FROM {table} WHERE id = 1"
                ),
            ),
            (
                "upsert on the key".to_string(),
                format!(
                    "INSERT INTO {table} ({no_id_list}) SELECT {no_id_list} FROM {table} WHERE id = 1 \
                     ON CONFLICT DO UPDATE SET {col} = {value}"
                ),
            ),
            (
                "UPDATE OR REPLACE onto another key".to_string(),
                format!(
                    "UPDATE OR REPLACE {table} SET ({keys}) = (SELECT {keys} FROM {table} WHERE id = 1) WHERE id = 2"
                ),
            ),
        ]);
    }
    out
}

/// Every row of every table of a shop file, in one text per table.
fn every_row(conn: &rusqlite::Connection) -> Vec<(String, Vec<String>)> {
    let tables: Vec<String> = conn
        .prepare("SELECT name FROM sqlite_schema WHERE type = 'table' AND name NOT LIKE 'sqlite_%' ORDER BY name")
        .unwrap()
        .query_map([], |r| r.get(0))
        .unwrap()
        .map(Result::unwrap)
        .collect();
    tables
        .into_iter()
        .map(|t| {
            let mut st = conn
                .prepare(&format!("SELECT * FROM \"{t}\" ORDER BY rowid"))
                .unwrap();
            let n = st.column_count();
            let rows = st
                .query_map([], |r| {
                    Ok((0..n)
                        .map(|i| format!("{:?}", r.get_ref(i).unwrap()))
                        .collect::<Vec<_>>()
                        .join("|"))
                })
                .unwrap()
                .map(Result::unwrap)
                .collect();
            (t, rows)
        })
        .collect()
}

/// SQLite's REPLACE deletes the row in its way without firing DELETE triggers (unless the
/// connection set `recursive_triggers`, which the sqlite3 shell does not): every such
/// statement, on every table with an edit history, and every upsert, insert or update meeting
/// a stored id or key, is refused by the file itself, also with who and why stated; nothing
/// moves. Acknowledgements are never updated or deleted. The program's own writes still work.
#[test]
fn no_statement_replaces_a_stored_row_of_a_shop_file_unseen() {
    let dir = tmp();
    let path = dir.path().join("kept.sqlite");
    drop(Store::open(&path, OpenMode::Create).unwrap());
    // As the sqlite3 shell opens a file: no recursive triggers, no foreign keys.
    let raw = rusqlite::Connection::open(&path).unwrap();
    raw.execute_batch("PRAGMA recursive_triggers = OFF; PRAGMA foreign_keys = OFF;")
        .unwrap();
    raw.execute_batch(ROWS_TO_KEEP).unwrap();
    let before = every_row(&raw);
    let mut tried = 0;
    for (table, key, col, value) in KEPT_TABLES {
        let cols: Vec<String> = raw
            .prepare(&format!(
                "SELECT name FROM pragma_table_info('{table}') ORDER BY cid"
            ))
            .unwrap()
            .query_map([], |r| r.get(0))
            .unwrap()
            .map(Result::unwrap)
            .collect();
        let mut statements = replacing_statements(table, key, col, value, &cols);
        if table == "acknowledgements" {
            statements.extend([
                (
                    "UPDATE".to_string(),
                    "UPDATE acknowledgements SET note = 'changed' WHERE id = 1".to_string(),
                ),
                (
                    "DELETE".to_string(),
                    "DELETE FROM acknowledgements WHERE id = 1".to_string(),
                ),
            ]);
        }
        for (form, sql) in statements {
            for with_context in [false, true] {
                if with_context {
                    raw.execute_batch(
                        "INSERT INTO edit_context (id, edited_by, reason, edited_at) \
                         VALUES (1, 'Someone', 'replacing', '2025-02-01T00:00:00Z')",
                    )
                    .unwrap();
                }
                let result = raw.execute(&sql, []);
                if with_context {
                    raw.execute_batch("DELETE FROM edit_context").unwrap();
                }
                let e = match result {
                    Ok(n) => panic!("{table}, {form} (who and why stated: {with_context}): {n} rows written by {sql}"),
                    Err(e) => e.to_string(),
                };
                let expected = if table == "acknowledgements" {
                    "acknowledgements are never changed or deleted"
                } else {
                    "changed only by UPDATE, which edit_log records"
                };
                assert!(
                    e.contains(expected),
                    "{table}, {form}: refused for another reason: {e}"
                );
                tried += 1;
            }
        }
    }
    assert_eq!(
        tried,
        2 * (3 * 10 + 9 + 4 * 7 + 2),
        "every form on every table"
    );
    assert_eq!(
        every_row(&raw),
        before,
        "a refused statement changed something"
    );
    drop(raw);

    // The program's own writes: a plain insert of a stored key is a duplicate as before, a
    // correction is an UPDATE in the edit history, a new acknowledgement is a new row.
    let store = Store::open(&path, OpenMode::MustExist).unwrap();
    let dup = store
        .insert_check(&check(1, "2025-01-06T07:30:00Z"))
        .unwrap_err();
    assert_eq!(
        dup.to_string(),
        "a check of this unit at this time already exists"
    );
    let mut first = store.check(1).unwrap().unwrap();
    first.note = "corrected".into();
    store
        .update_check(&first, "RE", "note typed on the wrong check")
        .unwrap();
    assert_eq!(store.edit_history("checks", 1).unwrap().len(), 1);
    store
        .insert_ack(&sumpbook::model::Acknowledgement {
            id: 0,
            unit_id: 1,
            kind: "water".into(),
            state: "act".into(),
            by: "SV".into(),
            note: "seen again".into(),
            at: t("2025-01-20T00:00:00Z"),
        })
        .unwrap();
    assert_eq!(store.acks(1).unwrap().len(), 3);
}
