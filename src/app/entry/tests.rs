//! Tests of the form rules on the demo shop.

use super::*;

use chrono::{DateTime, Duration, Utc};

use crate::app::shop::Shop;
use crate::app::work::{self as work};
use crate::exchange::FileKind;
use crate::model::Unit;
use crate::quantity::Kind;
use crate::units::{Temperature, UnitSystem};

/// The import as the app's import screen runs it: with a cancel flag, files named by name.
fn in_app(cancel: &Cancel) -> crate::app::import::ImportOptions<'_> {
    crate::app::import::ImportOptions {
        cancel: Some(cancel),
        name_only: true,
        ..Default::default()
    }
}

fn demo() -> (tempfile::TempDir, Shop) {
    let dir = tempfile::tempdir().unwrap();
    let shop = Shop::create_demo(&dir.path().join("shop.sqlite")).unwrap();
    (dir, shop)
}

fn first_unit(shop: &Shop) -> Unit {
    let id = route(shop).unwrap()[0].unit_id;
    shop.store().unit(id).unwrap().unwrap()
}

fn entered(pairs: &[(&str, &str)]) -> Entered {
    let mut e = Entered::new();
    for (k, v) in pairs {
        e.set(k, v);
    }
    e
}

#[test]
fn a_us_shop_sees_and_sets_temperature_limits_in_fahrenheit() {
    let (_d, shop) = demo();
    let mut st = shop_settings(&shop).unwrap();
    st.unit_system = UnitSystem::Us;
    save_settings(&shop, &st, "tester", "US units").unwrap();
    let view = limits(&shop, None).unwrap();
    let row = |k: &str| view.rows.iter().find(|r| r.key == k).unwrap().clone();
    // Built-in 60 / 70 °C = 140 / 158 °F; a 5 / 10 K rise = 9 / 18 °F steps
    // (°F = °C × 9/5 + 32, NIST SP 811).
    let t = row("reservoir_temp_c");
    assert_eq!(
        (t.watch, t.act, t.unit.as_str()),
        (Some(140.0), Some(158.0), "°F")
    );
    let h = row("heat_rise_drift_k");
    assert_eq!(
        (h.watch, h.act, h.unit.as_str()),
        (Some(9.0), Some(18.0), "°F")
    );
    // Units without a US form are unchanged.
    assert_eq!(row("water_ppm").unit, "ppm");
    // 149 °F typed = 65 °C stored; a 27 °F-step act = 15 K.
    let edits = [
        LimitEdit {
            key: "reservoir_temp_c".into(),
            watch: "149".into(),
            act: "158".into(),
        },
        LimitEdit {
            key: "heat_rise_drift_k".into(),
            watch: "9".into(),
            act: "27".into(),
        },
    ];
    assert_eq!(
        save_limits(&shop, None, &edits, "tester").unwrap(),
        SaveOutcome::Saved(2)
    );
    let stored = work::limits_in(shop.store(), None).unwrap();
    let srow = |k: &str| stored.rows.iter().find(|r| r.key == k).unwrap().clone();
    let t = srow("reservoir_temp_c");
    assert!((t.watch.unwrap() - 65.0).abs() < 1e-9 && (t.act.unwrap() - 70.0).abs() < 1e-9);
    let h = srow("heat_rise_drift_k");
    assert!((h.watch.unwrap() - 5.0).abs() < 1e-9 && (h.act.unwrap() - 15.0).abs() < 1e-9);
}

#[test]
fn bare_numbers_are_read_in_the_shop_units_and_units_win() {
    // 140 °F = 60 °C and 2500 psi = 2500 × 6894.757293168 Pa (NIST SP 811).
    let c = |t: &str, s| Temperature(read_quantity(t, Kind::Temperature, s).unwrap().unwrap()).c();
    assert!((c("62", UnitSystem::Metric) - 62.0).abs() < 1e-9);
    assert!((c("140", UnitSystem::Us) - 60.0).abs() < 1e-9);
    assert!((c("140F", UnitSystem::Metric) - 60.0).abs() < 1e-9);
    let p = read_quantity("2500psi", Kind::Pressure, UnitSystem::Metric)
        .unwrap()
        .unwrap();
    assert!((p - 2500.0 * 6_894.757_293_168).abs() < 1e-6);
    assert_eq!(
        read_quantity("  ", Kind::Pressure, UnitSystem::Metric),
        Ok(None)
    );
    assert!(read_quantity("12 bananas", Kind::Pressure, UnitSystem::Metric).is_err());
}

#[test]
fn a_time_in_the_future_is_refused() {
    let now: DateTime<Utc> = "2025-03-04T12:00:00Z".parse().unwrap();
    let z = crate::app::local_time::Zone::default();
    assert_eq!(read_when("", now, z), Ok(now));
    assert!(read_when("2031-01-01 08:00", now, z)
        .unwrap_err()
        .contains("future"));
    assert!(read_when("03/04/2025", now, z).is_err());
}

#[test]
fn an_impossible_temperature_is_refused_and_nothing_is_written() {
    let (_d, shop) = demo();
    let u = first_unit(&shop);
    let n = shop.store().checks_for_unit(u.id, None).unwrap().len();
    // docs/engineering.md, "Physical bounds of readings": above 150 °C is impossible for a
    // reservoir.
    let out = save_check(
        &shop,
        u.id,
        &entered(&[("reservoir_temp", "151")]),
        "",
        "T. T",
        Answers::ALL,
        Utc::now(),
    )
    .unwrap();
    let SaveOutcome::Refused(p) = out else {
        panic!("refused expected: {out:?}")
    };
    assert_eq!(p[0].field, "reservoir_temp");
    assert!(p[0].message.contains("150"), "{}", p[0].message);
    assert_eq!(shop.store().checks_for_unit(u.id, None).unwrap().len(), n);
    // A negative pressure and a zero stroke time are refused too.
    let e = entered(&[("pressure", "-3"), ("stroke_time", "0")]);
    let SaveOutcome::Refused(p) =
        save_check(&shop, u.id, &e, "", "T. T", Answers::ALL, Utc::now()).unwrap()
    else {
        panic!()
    };
    assert!(p.iter().any(|x| x.field == "pressure") && p.iter().any(|x| x.field == "stroke_time"));
    // Who took it is part of the record.
    let out = save_check(
        &shop,
        u.id,
        &entered(&[("reservoir_temp", "45")]),
        "",
        " ",
        Answers::ALL,
        Utc::now(),
    )
    .unwrap();
    assert!(matches!(out, SaveOutcome::Refused(ref p) if p.iter().any(|x| x.field == "by")));
}

#[test]
fn an_unusual_stroke_time_asks_first_and_is_kept_when_confirmed() {
    let (_d, shop) = demo();
    let u = first_unit(&shop);
    let checks = shop.store().checks_for_unit(u.id, None).unwrap();
    let last = checks
        .iter()
        .rev()
        .find_map(|c| c.stroke_time)
        .unwrap()
        .si();
    let e = entered(&[("stroke_time", &format!("{:.2}", last * 2.0))]);
    let out = save_check(&shop, u.id, &e, "", "T. T", Answers::NONE, Utc::now()).unwrap();
    let SaveOutcome::NeedsConfirmation(p) = out else {
        panic!("{out:?}")
    };
    assert_eq!(p[0].field, "stroke_time");
    assert_eq!(
        shop.store().checks_for_unit(u.id, None).unwrap().len(),
        checks.len()
    );
    let out = save_check(&shop, u.id, &e, "", "T. T", Answers::ALL, Utc::now()).unwrap();
    let SaveOutcome::Saved(s) = out else {
        panic!("{out:?}")
    };
    let stored = shop.store().check(s.check_id).unwrap().unwrap();
    assert!((stored.stroke_time.unwrap().si() - (last * 2.0 * 100.0).round() / 100.0).abs() < 1e-9);
    assert_eq!(stored.by, "T. T");
    // Asked and kept: stored as confirmed by the technician at the moment of saving.
    let k = stored
        .confirmed
        .expect("a confirmed unusual reading is stored as confirmed");
    assert_eq!(k.by, "T. T");
    assert!(k.at <= Utc::now() && k.at > Utc::now() - Duration::minutes(5));
    // A reading nobody questioned is stored without a confirmation: the usual stroke time.
    let plain = entered(&[("stroke_time", &format!("{last:.2}"))]);
    let later = Utc::now() + Duration::seconds(1);
    let leave = Answers {
        keep_unusual: false,
        leave_blank: true,
    };
    let out = save_check(&shop, u.id, &plain, "", "T. T", leave, later).unwrap();
    let SaveOutcome::Saved(s) = out else {
        panic!("the unit's usual stroke time is not unusual: {out:?}")
    };
    assert_eq!(
        shop.store().check(s.check_id).unwrap().unwrap().confirmed,
        None
    );
}

#[test]
fn a_reading_left_blank_that_the_last_check_had_is_asked_about_before_saving() {
    let (_d, shop) = demo();
    let u = first_unit(&shop);
    let checks = shop.store().checks_for_unit(u.id, None).unwrap();
    let last = checks.last().unwrap().clone();
    let level = last
        .oil_level
        .expect("the demo's last check has an oil level");
    let t = last.reservoir_temp.unwrap().c();
    // Everything the last check had, but the oil level.
    let mut all = vec![("reservoir_temp", format!("{t:.1}"))];
    let q = |v: Option<f64>| v.map(|x| format!("{x}"));
    for (key, v) in [
        ("ambient_temp", q(last.ambient_temp.map(|x| x.c()))),
        ("pressure", q(last.pressure.map(|x| x.bar()))),
        ("stroke_time", q(last.stroke_time.map(|x| x.si()))),
        ("cycle_time", q(last.cycle_time.map(|x| x.si()))),
        ("filter", last.filter.map(|x| x.to_string())),
        ("hours", q(last.hours.map(|h| h + 24.0))),
        ("case_drain", q(last.case_drain.map(|x| x.si() * 60_000.0))),
    ] {
        if let Some(v) = v {
            all.push((key, v));
        }
    }
    let pairs: Vec<(&str, &str)> = all.iter().map(|(k, v)| (*k, v.as_str())).collect();
    let e = entered(&pairs);
    let now = last.taken_at + Duration::days(1);
    let out = save_check(&shop, u.id, &e, "", "T. T", Answers::NONE, now).unwrap();
    let SaveOutcome::NeedsConfirmation(p) = out else {
        panic!("a question expected: {out:?}")
    };
    assert_eq!(p.len(), 1, "{p:?}");
    assert_eq!(p[0].field, "oil_level");
    assert_eq!(p[0].verdict, Verdict::Blank);
    assert!(
        p[0].message.contains(&format!("had {level}")),
        "{}",
        p[0].message
    );
    assert_eq!(
        shop.store().checks_for_unit(u.id, None).unwrap().len(),
        checks.len()
    );
    // Keeping unusual values does not answer it; leaving it blank does, and the check is not
    // marked as confirmed (nothing unusual was kept).
    let keep = Answers {
        keep_unusual: true,
        leave_blank: false,
    };
    let out = save_check(&shop, u.id, &e, "", "T. T", keep, now).unwrap();
    assert!(matches!(out, SaveOutcome::NeedsConfirmation(_)), "{out:?}");
    let leave = Answers {
        keep_unusual: false,
        leave_blank: true,
    };
    let out = save_check(&shop, u.id, &e, "", "T. T", leave, now).unwrap();
    let SaveOutcome::Saved(s) = out else {
        panic!("{out:?}")
    };
    assert_eq!(s.left_blank.len(), 1);
    let stored = shop.store().check(s.check_id).unwrap().unwrap();
    assert_eq!(stored.oil_level, None);
    assert_eq!(stored.confirmed, None);
    // The next check is judged against that one: the oil level it lacked is not asked again.
    let out = save_check(
        &shop,
        u.id,
        &e,
        "",
        "T. T",
        Answers::NONE,
        now + Duration::days(1),
    )
    .unwrap();
    assert!(matches!(out, SaveOutcome::Saved(_)), "{out:?}");
}

#[test]
fn a_sample_preview_derives_the_code_and_refuses_rising_counts() {
    let (_d, shop) = demo();
    let u = first_unit(&shop);
    // ISO 4406 Table 1: 2400/mL is in 1300–2500 → 18; 610 in 320–640 → 16; 45 in 40–80 → 13.
    let e = entered(&[
        ("count_4", "2400"),
        ("count_6", "610"),
        ("count_14", "45"),
        ("by", "T. T"),
    ]);
    let r = review_sample(&shop, u.id, &e, Utc::now()).unwrap();
    assert!(
        r.problems.iter().all(|p| p.verdict != Verdict::Refused),
        "{:?}",
        r.problems
    );
    let code = r.preview.unwrap().point.unwrap().code.unwrap();
    assert_eq!(code.to_string(), "18/16/13");
    // More particles ≥6 µm than ≥4 µm cannot be: every one ≥6 µm is also ≥4 µm.
    let e = entered(&[("count_4", "600"), ("count_6", "610")]);
    let r = review_sample(&shop, u.id, &e, Utc::now()).unwrap();
    assert!(r.sample.is_none());
    assert!(r
        .problems
        .iter()
        .any(|p| p.field == "count_6" && p.verdict == Verdict::Refused));
    // Oil thins as it warms: KV100 at or above KV40 is refused.
    let e = entered(&[("kv40", "46"), ("kv100", "50")]);
    let r = review_sample(&shop, u.id, &e, Utc::now()).unwrap();
    assert!(r.problems.iter().any(|p| p.field == "kv100"));
    // A field viscosity needs the temperature it was read at, and the other way round.
    let e = entered(&[("visc_value", "52"), ("by", "T. T")]);
    let r = review_sample(&shop, u.id, &e, Utc::now()).unwrap();
    assert!(r
        .problems
        .iter()
        .any(|p| p.field == "visc_temp" && p.verdict == Verdict::Refused));
    let e = entered(&[("visc_temp", "35"), ("by", "T. T")]);
    let r = review_sample(&shop, u.id, &e, Utc::now()).unwrap();
    assert!(r
        .problems
        .iter()
        .any(|p| p.field == "visc_value" && p.verdict == Verdict::Refused));
    // Water and acid number cannot be negative; a figure that is no number is refused too.
    let e = entered(&[("water_ppm", "-5"), ("acid", "0.4x"), ("by", "T. T")]);
    let r = review_sample(&shop, u.id, &e, Utc::now()).unwrap();
    for key in ["water_ppm", "acid"] {
        assert!(
            r.problems
                .iter()
                .any(|p| p.field == key && p.verdict == Verdict::Refused),
            "{key}: {:?}",
            r.problems
        );
    }
    let e = entered(&[("water_ppm", "120"), ("acid", "0.4"), ("by", "T. T")]);
    let s = review_sample(&shop, u.id, &e, Utc::now())
        .unwrap()
        .sample
        .unwrap();
    assert_eq!((s.water_ppm, s.acid_mgkoh_g), (Some(120.0), Some(0.4)));
    let e = entered(&[("visc_value", "52"), ("visc_temp", "35"), ("by", "T. T")]);
    let r = review_sample(&shop, u.id, &e, Utc::now()).unwrap();
    let reading = r
        .sample
        .and_then(|s| s.visc_reading)
        .expect("a field reading");
    // 35 °C is 308.15 K (NIST SP 811: T/K = t/°C + 273.15); 52 cSt is 52 × 10⁻⁶ m²/s.
    assert!((reading.at.si() - 308.15).abs() < 1e-9);
    assert!((reading.visc.si() - 52e-6).abs() < 1e-15);
}

#[test]
fn the_kind_of_a_csv_file_is_told_from_its_header() {
    let h = |s: &str| s.split(',').map(String::from).collect::<Vec<_>>();
    assert_eq!(
        detect_kind(&h("unit_tag,taken_at,reservoir_temp_c")),
        Some(FileKind::Checks)
    );
    assert_eq!(
        detect_kind(&h("unit_tag,sampled_at,kv40_cst,water_ppm")),
        Some(FileKind::Samples)
    );
    assert_eq!(
        detect_kind(&h("unit_tag,done_at,kind")),
        Some(FileKind::Events)
    );
    assert_eq!(
        detect_kind(&h("machine_tag,unit_tag,pump_kind")),
        Some(FileKind::Units)
    );
    assert_eq!(detect_kind(&h("tag,when,temp")), None);
}

#[test]
fn a_preview_writes_nothing_and_a_cancelled_import_writes_nothing() {
    let (dir, shop) = demo();
    let u = first_unit(&shop);
    let db = shop.path().to_path_buf();
    let n = shop.store().checks_for_unit(u.id, None).unwrap().len();
    let csv = dir.path().join("checks.csv");
    std::fs::write(
        &csv,
        format!("unit_tag,taken_at,reservoir_temp_c\n{0},2020-01-06T08:00:00Z,40\n{0},2020-01-13T08:00:00Z,41\n", u.tag),
    )
    .unwrap();
    let p = preview_import(&db, &csv, &|_| {}, &Cancel::new())
        .unwrap()
        .unwrap();
    assert_eq!(p.kind, FileKind::Checks);
    assert_eq!(p.outcome.as_ref().unwrap().inserted, 2);
    assert_eq!(shop.store().checks_for_unit(u.id, None).unwrap().len(), n);
    let cancel = Cancel::new();
    cancel.cancel();
    assert_eq!(
        Shop::open_for_writing(&db)
            .unwrap()
            .import(FileKind::Checks, &csv, &in_app(&cancel))
            .unwrap(),
        ImportRun::Cancelled
    );
    assert_eq!(shop.store().checks_for_unit(u.id, None).unwrap().len(), n);
    let go = Cancel::new();
    let done = Shop::open_for_writing(&db)
        .unwrap()
        .import(FileKind::Checks, &csv, &in_app(&go))
        .unwrap();
    assert!(
        matches!(done, ImportRun::Done(ref s) if s.inserted == 2),
        "{done:?}"
    );
    assert_eq!(
        shop.store().checks_for_unit(u.id, None).unwrap().len(),
        n + 2
    );
    // A bad row: every problem listed with its line, nothing written.
    std::fs::write(
        &csv,
        format!(
            "unit_tag,taken_at,reservoir_temp_c\n{},2020-02-03T08:00:00Z,400\n",
            u.tag
        ),
    )
    .unwrap();
    let p = preview_import(&db, &csv, &|_| {}, &Cancel::new())
        .unwrap()
        .unwrap();
    let errors = p.outcome.unwrap_err();
    assert_eq!(errors[0].line, 2);
    assert_eq!(
        shop.store().checks_for_unit(u.id, None).unwrap().len(),
        n + 2
    );
}

#[test]
fn corrections_need_a_reason_and_are_kept() {
    let (_d, shop) = demo();
    let u = first_unit(&shop);
    let c = shop
        .store()
        .checks_for_unit(u.id, None)
        .unwrap()
        .pop()
        .unwrap();
    let fields = reading_fields(&shop, Reading::Check, c.id).unwrap();
    let mut e = Entered::from_fields(&fields);
    e.set("note", "gauge re-read");
    let out = edit_reading(&shop, Reading::Check, c.id, &e, "R. E", "").unwrap();
    assert!(matches!(out, SaveOutcome::Refused(ref p) if p[0].field == "reason"));
    let out = edit_reading(&shop, Reading::Check, c.id, &e, "R. E", "typo on the sheet").unwrap();
    assert_eq!(out, SaveOutcome::Saved(()));
    assert_eq!(
        shop.store().check(c.id).unwrap().unwrap().note,
        "gauge re-read"
    );
    let hist = shop.store().edit_history("checks", c.id).unwrap();
    assert_eq!(hist.len(), 1);
    assert_eq!(hist[0].reason, "typo on the sheet");
    delete_reading(&shop, Reading::Check, c.id, "R. E", "double entry").unwrap();
    assert!(shop.store().check(c.id).unwrap().is_none());
    assert_eq!(shop.store().edit_history("checks", c.id).unwrap().len(), 2);
}

/// The hour meter, filter part and work order of work done are corrected like the rest of the
/// event: in the form with their stored values and kept in the edit history.
#[test]
fn work_done_details_are_corrected_in_the_form_and_kept() {
    let (_d, shop) = demo();
    let u = first_unit(&shop);
    let store = shop.store();
    let last = store.checks_for_unit(u.id, None).unwrap().pop().unwrap();
    let read = last.hours.expect("the demo's checks read the hour meter");
    let at = last.taken_at + Duration::hours(10);
    let input = work::EventInput {
        kind: crate::model::EventKind::FilterChange,
        at: Some(at),
        volume: None,
        fluid: None,
        by: "T. Fitter".into(),
        note: String::new(),
        details: crate::model::EventDetails {
            hours: Some(read + 9.0),
            filter_part: "RF-10-BN".into(),
            work_order: "WO-4417".into(),
        },
        confirmed: false,
    };
    let id = work::log_event_in(store, &u.tag, &input, at)
        .unwrap()
        .event
        .id;
    // The form opens at the clock's time, fraction of a second and all.
    let now = at + Duration::nanoseconds(123_456_789);
    let prompt =
        mark_done_prompt(&shop, &u.tag, crate::health::WorkKind::FilterChange, now).unwrap();
    assert!(
        prompt
            .last_hours
            .starts_with(&format!("{} h on ", read + 9.0)),
        "{}",
        prompt.last_hours
    );
    let fields = reading_fields(&shop, Reading::Event, id).unwrap();
    let value = |k: &str| fields.iter().find(|f| f.key == k).unwrap().value.clone();
    assert_eq!(value("hours"), format!("{}", read + 9.0));
    assert_eq!(value("work_order"), "WO-4417");

    // Below the check before it (a meter replaced and the work typed with its old figure):
    // a correction keeps it, as a corrected check keeps an unusual value, with the reason.
    let mut e = Entered::from_fields(&fields);
    e.set("hours", &format!("{}", read - 1.0));
    e.set("work_order", "WO-4471");
    let out = edit_reading(&shop, Reading::Event, id, &e, "R. E", "new meter").unwrap();
    assert_eq!(out, SaveOutcome::Saved(()));
    let d = store.event_details(id).unwrap().unwrap();
    assert_eq!(d.hours, Some(read - 1.0));
    assert_eq!(d.work_order, "WO-4471");
    assert_eq!(d.filter_part, "RF-10-BN");
    let hist = store.edit_history("events", id).unwrap();
    assert_eq!(hist.len(), 1);
    assert!(
        hist[0].old_value.contains("\"work_order\":\"WO-4417\""),
        "{}",
        hist[0].old_value
    );
}

/// After a real meter replacement the work is still recorded with its hour meter: "Mark done"
/// asks about a reading below the unit's last one and writes nothing, then keeps it when the
/// person answers yes (the walk-round's Enter again on the same values). The walk-round check
/// after it is judged against that work's reading, not only against earlier checks.
#[test]
fn an_hour_meter_below_the_last_reading_is_asked_about_kept_when_confirmed_and_read_on_from() {
    let (_d, shop) = demo();
    let u = first_unit(&shop);
    let store = shop.store();
    let last = store.checks_for_unit(u.id, None).unwrap().pop().unwrap();
    let read = last.hours.expect("the demo's checks read the hour meter");
    assert!(read > 100.0, "{read}");
    let now = last.taken_at + Duration::hours(2);
    let form = MarkDoneForm {
        by: "T. Fitter".into(),
        hours: "12".into(),
        filter_part: "RF-10-BN".into(),
        ..MarkDoneForm::default()
    };
    let events = || store.events_for_unit(u.id, None).unwrap().len();
    let n = events();
    let kind = crate::health::WorkKind::FilterChange;
    let asked = match mark_done(&shop, &u.tag, kind, &form, Answers::NONE, now).unwrap() {
        SaveOutcome::NeedsConfirmation(p) => p,
        other => panic!("{other:?}"),
    };
    assert_eq!(asked.len(), 1, "{asked:?}");
    assert_eq!(
        (asked[0].field.as_str(), asked[0].verdict),
        ("hours", Verdict::Unusual)
    );
    assert!(
        asked[0]
            .message
            .contains(&format!("is below the {read} h read at"))
            && asked[0].message.contains("was the meter replaced?"),
        "{}",
        asked[0].message
    );
    assert_eq!(events(), n, "a question writes nothing");
    let logged = match mark_done(&shop, &u.tag, kind, &form, Answers::ALL, now).unwrap() {
        SaveOutcome::Saved(l) => l,
        other => panic!("{other:?}"),
    };
    assert_eq!(logged.details.hours, Some(12.0));
    assert_eq!(logged.confirmed.len(), 1, "{:?}", logged.confirmed);
    assert_eq!(events(), n + 1);

    // A week on, the walk-round reads on from the new meter: 12 h + 60 h run is no question
    // (the old rule, earlier checks only, asked it below the old meter's figure); below the
    // work's 12 h is asked.
    let week = now + Duration::days(7);
    let hours_asked = |typed: &str| -> Vec<Problem> {
        review_check(
            &shop,
            u.id,
            &entered(&[("hours", typed)]),
            "",
            "T. Tech",
            week,
        )
        .unwrap()
        .problems
        .into_iter()
        .filter(|p| p.field == "hours")
        .collect()
    };
    assert_eq!(hours_asked("72"), vec![]);
    let below = hours_asked("10");
    assert_eq!(below.len(), 1, "{below:?}");
    assert_eq!(below[0].verdict, Verdict::Unusual);
    assert!(
        below[0].message.contains("is below the 12 h read at"),
        "{}",
        below[0].message
    );
    // The form's hint names the last reading, the work's.
    let form = check_form(&shop, u.id, week).unwrap();
    let hint = &form.fields.iter().find(|f| f.key == "hours").unwrap().hint;
    assert!(hint.starts_with("12 h · 7 d ago"), "{hint}");
}

#[test]
fn setup_records_are_refused_on_each_field_at_fault_and_saved_when_sound() {
    let (_dir, shop) = demo();
    let fields = |out: &SaveOutcome<crate::model::Id>| -> Vec<String> {
        match out {
            SaveOutcome::Refused(p) => p.iter().map(|p| p.field.clone()).collect(),
            other => panic!("expected a refusal, got {other:?}"),
        }
    };
    // A machine without a tag and with a route order that is no number.
    let out = save_record(
        &shop,
        Record::Machine,
        None,
        &entered(&[("tag", ""), ("route_order", "ten")]),
        "",
        "",
    )
    .unwrap();
    assert_eq!(fields(&out), vec!["tag", "route_order"]);

    // A fluid whose KV100 is not below its KV40 (oil thins as it warms).
    let oil = [
        ("name", "Bench oil 46"),
        ("iso_vg", "46"),
        ("kv40", "46"),
        ("kv100", "50"),
        ("acid", "0.4"),
    ];
    let out = save_record(&shop, Record::Fluid, None, &entered(&oil), "", "").unwrap();
    assert_eq!(fields(&out), vec!["kv100"]);
    let mut sound = entered(&oil);
    sound.set("kv100", "6.8");
    let id = match save_record(&shop, Record::Fluid, None, &sound, "", "").unwrap() {
        SaveOutcome::Saved(id) => id,
        other => panic!("{other:?}"),
    };
    let stored = shop.store().fluid_by_name("Bench oil 46").unwrap().unwrap();
    assert_eq!(stored.id, id);
    assert_eq!(stored.iso_vg, Some(46));

    // A unit on no machine, without a tag, its rod as thick as its bore.
    let out = save_record(
        &shop,
        Record::Unit,
        None,
        &entered(&[
            ("machine", "no such machine"),
            ("tag", ""),
            ("bore", "100"),
            ("rod", "100"),
            ("length", "200"),
            ("route_order", "1"),
        ]),
        "",
        "",
    )
    .unwrap();
    let f = fields(&out);
    for want in ["machine", "rod", "tag"] {
        assert!(f.iter().any(|x| x == want), "{want} in {f:?}");
    }

    // Changing a stored record needs who and why, before anything else.
    let out = save_record(&shop, Record::Fluid, Some(id), &sound, " ", "").unwrap();
    assert_eq!(fields(&out)[..2], ["by", "reason"]);
}
