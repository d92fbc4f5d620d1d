//! Tests of `evaluate` on a unit's state as a whole: not judged yet, overdue work, limits per
//! unit, acknowledgements, absolute limits without a baseline, and planned work.

use super::*;

#[test]
fn a_new_unit_is_not_judged_yet_with_what_is_missing_and_when() {
    let mut h = press();
    h.checks.push(timed(1, 0, 4.0, 45.0, 20.0));
    h.checks.push(timed(2, 1, 4.0, 45.0, 20.0));
    let r = eval(&h, &Limits::builtin(), week(1));
    assert_eq!(r.state, State::NotJudged);
    assert!(r.state > State::Steady && r.state < State::Watch);
    let lost = r.not_judged.iter().find(|n| n.key == "lost_flow").unwrap();
    // The baseline takes 4 checks (the built-in `baseline_checks`): 2 more.
    assert_eq!(lost.checks_needed, Some(2));
    assert_eq!(lost.until, "after 2 more checks");
    assert!(lost.missing.contains("2 of 4"), "{}", lost.missing);
    assert!(lost.expected);
    let heat = r.tiles.iter().find(|t| t.key == "heat_rise").unwrap();
    assert_eq!(heat.state, State::NotJudged);
    // The next check is due a week after the last.
    assert_eq!(lost.due, Some(day(week(2))));
    // No stroke geometry: never judged until it is set.
    h.unit.stroke = None;
    let r = eval(&h, &Limits::builtin(), week(1));
    let lost = r.not_judged.iter().find(|n| n.key == "lost_flow").unwrap();
    assert!(lost.missing.contains("no timed stroke"), "{}", lost.missing);
    // An act flag wins over "not judged" (two readings above 70 °C: confirmed).
    h.checks[0].reservoir_temp = Some(Temperature::from_c(75.0));
    h.checks[1].reservoir_temp = Some(Temperature::from_c(75.0));
    assert_eq!(eval(&h, &Limits::builtin(), week(1)).state, State::Act);
    // The text and the JSON key.
    assert_eq!(State::NotJudged.to_string(), "not judged yet");
    assert_eq!(
        serde_json::to_string(&State::NotJudged).unwrap(),
        "\"not_judged\""
    );
    assert_eq!("not_judged".parse::<State>(), Ok(State::NotJudged));
}

#[test]
fn overdue_work_at_below_and_above_its_limits() {
    // One check on 2024-01-01: the next is due 2024-01-08. Watch from 1 day past,
    // act from 14 days past (docs/engineering.md, "Default limits").
    let mut h = press();
    h.checks.push(check(1, t("2024-01-01T08:00:00Z")));
    let l = Limits::builtin();
    for (at, want, days) in [
        ("2024-01-08T20:00:00Z", State::Steady, 0),
        ("2024-01-09T06:00:00Z", State::Watch, 1),
        ("2024-01-21T23:00:00Z", State::Watch, 13),
        ("2024-01-22T00:00:00Z", State::Act, 14),
    ] {
        let r = eval(&h, &l, t(at));
        assert_eq!(state_of(&r, FlagKind::Overdue), want, "{at}");
        let w = r.work.iter().find(|w| w.kind == WorkKind::Check).unwrap();
        assert_eq!(w.due, NaiveDate::from_ymd_opt(2024, 1, 8).unwrap());
        assert_eq!(w.days_overdue, days);
        assert!(w.caution.is_none());
    }
}

#[test]
fn a_unit_override_wins_over_the_shop_default() {
    use crate::model::LimitSetting;
    let rows = vec![
        LimitSetting {
            unit_id: None,
            key: "water_ppm".into(),
            watch: Some(100.0),
            act: Some(400.0),
        },
        LimitSetting {
            unit_id: Some(1),
            key: "water_ppm".into(),
            watch: None,
            act: Some(600.0),
        },
    ];
    let h = with_sample(press(), |s| s.water_ppm = Some(550.0));
    let r = eval(&h, &Limits::resolve(&rows, Some(1)), week(1));
    assert_eq!(state_of(&r, FlagKind::Water), State::Watch);
    let f = r.flags.iter().find(|f| f.kind == FlagKind::Water).unwrap();
    let fig = f.figure.as_ref().unwrap();
    assert_eq!((fig.value, fig.limit), (550.0, Some(100.0)));
    let r = eval(&h, &Limits::resolve(&rows, Some(2)), week(1));
    assert_eq!(state_of(&r, FlagKind::Water), State::Act);
    let r = eval(
        &h,
        &Limits::resolve(&rows, Some(1)).with(LimitKey::WaterPpm, None, Some(500.0)),
        week(1),
    );
    assert_eq!(state_of(&r, FlagKind::Water), State::Act);
}

#[test]
fn acknowledged_until_the_state_changes() {
    let mut h = press();
    h.checks.push(check(1, week(0)));
    let mut s1 = sample(1, week(1));
    s1.water_ppm = Some(300.0);
    h.samples.push(s1);
    h.acknowledgements.push(Acknowledgement {
        id: 1,
        unit_id: 1,
        kind: "water".into(),
        state: "watch".into(),
        by: "T. Tech".into(),
        note: "breather ordered".into(),
        at: week(1) + chrono::Duration::hours(4),
    });
    let l = Limits::builtin();
    let r = eval(&h, &l, week(2));
    let f = r.flags.iter().find(|f| f.kind == FlagKind::Water).unwrap();
    assert!(f.acknowledged);
    // Replayed to before the acknowledgement: not yet seen.
    let r = eval(&h, &l, week(1) + chrono::Duration::hours(1));
    assert!(
        !r.flags
            .iter()
            .find(|f| f.kind == FlagKind::Water)
            .unwrap()
            .acknowledged
    );
    // Still watch at the next sample: still acknowledged.
    let mut s2 = sample(2, week(3));
    s2.water_ppm = Some(350.0);
    h.samples.push(s2);
    assert!(
        eval(&h, &l, week(3))
            .flags
            .iter()
            .find(|f| f.kind == FlagKind::Water)
            .unwrap()
            .acknowledged
    );
    // Worse: act is news.
    let mut s3 = sample(3, week(4));
    s3.water_ppm = Some(800.0);
    h.samples.push(s3);
    let r = eval(&h, &l, week(4));
    let f = r.flags.iter().find(|f| f.kind == FlagKind::Water).unwrap();
    assert_eq!(f.state, State::Act);
    assert!(!f.acknowledged);
    assert_eq!(f.since, day(week(1)));
}

#[test]
fn a_unit_without_baseline_still_gets_absolute_flags() {
    let mut h = press();
    for i in 0..2 {
        let mut c = timed(i + 1, i, 4.0, 75.0, 20.0);
        c.filter = Some(FilterState::Bypass);
        h.checks.push(c);
    }
    let mut s = sample(1, week(1));
    s.water_ppm = Some(900.0);
    s.iso4406 = Some("20/18/15".into());
    h.samples.push(s);
    let r = eval(&h, &Limits::builtin(), week(1));
    assert!(r.baseline.is_empty());
    assert!(r.indicators.lost_flow_pct.is_none());
    for k in [
        FlagKind::ReservoirTemp,
        FlagKind::Filter,
        FlagKind::Water,
        FlagKind::Cleanliness,
    ] {
        assert_eq!(state_of(&r, k), State::Act, "{k}");
    }
    assert_eq!(r.state, State::Act);
    assert!(r
        .flags
        .iter()
        .all(|f| f.kind != FlagKind::LostFlow && f.kind != FlagKind::HeatRise));
}

#[test]
fn work_is_planned_from_hours_months_and_condition() {
    // 40 run-hours a week from 1000 h; checks weekly for 10 weeks.
    let mut h = press();
    for w in 0..=10 {
        let mut c = check(w + 1, week(w));
        c.hours = Some(1000.0 + 40.0 * w as f64);
        c.reservoir_temp = Some(Temperature::from_c(50.0));
        h.checks.push(c);
    }
    // Intervals set for the test (the defaults are common practice and may change).
    let l = Limits::builtin()
        .with(LimitKey::FilterChangeHours, None, Some(2000.0))
        .with(LimitKey::FluidChangeHours, None, Some(5000.0))
        .with(LimitKey::FluidChangeMonths, None, Some(24.0));
    let r = eval(&h, &l, week(10));
    let get = |r: &UnitHealth, k: WorkKind| r.work.iter().find(|w| w.kind == k).cloned().unwrap();
    // Filter every 2000 h: 1600 h left at 40 h per 7 days = 280 days after the last check
    // (worked by hand).
    let f = get(&r, WorkKind::FilterChange);
    assert_eq!(f.due, day(week(10)) + chrono::Duration::days(280));
    assert!(f.caution.is_some());
    // Fluid every 24 months (first check 2024-01-01 → 2026-01-01), sooner than 5000 h
    // (4600 h left → 805 days) or 10 000 equivalent hours at ≤ 60 °C.
    let fc = get(&r, WorkKind::FluidChange);
    assert_eq!(fc.due, NaiveDate::from_ymd_opt(2026, 1, 1).unwrap());
    assert!(fc.pulled_forward.is_none());
    // Sample every 13 weeks from the first check: 2024-04-01.
    assert_eq!(
        get(&r, WorkKind::Sample).due,
        NaiveDate::from_ymd_opt(2024, 4, 1).unwrap()
    );
    // Oil life used: 400 run-hours at 50 °C age at rate 1 → 400 of 10 000 = 4 %.
    assert!((r.indicators.oil_life_used_pct.unwrap() - 4.0).abs() < 1e-9);

    // An acid number at act pulls the fluid change to the sample's date.
    let mut s = sample(1, week(9));
    s.acid_mgkoh_g = Some(0.9);
    h.samples.push(s);
    let r = eval(&h, &l, week(10));
    let fc = get(&r, WorkKind::FluidChange);
    assert_eq!(fc.due, day(week(9)));
    assert!(fc
        .pulled_forward
        .as_deref()
        .unwrap_or("")
        .contains("oxidising"));
    assert_eq!(fc.days_overdue, 7);
    assert_eq!(state_of(&r, FlagKind::Overdue), State::Watch);
    // A fluid change restarts the clock and, with the new oil, the condition.
    h.events.push(event(
        20,
        week(10) + chrono::Duration::hours(1),
        EventKind::FluidChange,
        Some(1),
    ));
    let r = eval(&h, &l, week(10) + chrono::Duration::hours(2));
    let fc = get(&r, WorkKind::FluidChange);
    assert_eq!(
        fc.due,
        day(week(10))
            .checked_add_months(chrono::Months::new(24))
            .unwrap()
    );
    assert_eq!(state_of(&r, FlagKind::Acid), State::Steady);
}

#[test]
fn dates_the_engine_writes_fall_on_the_shop_s_own_day() {
    // A check at 20:00 on Monday 2024-03-04 in New York (EST, UTC−5) is stored as 01:00 UTC
    // on Tuesday. The next check is due a week after that evening: Monday 2024-03-11 in the
    // shop, Tuesday 2024-03-12 in UTC (tz database offsets; worked by hand).
    let mut h = press();
    let mut c = timed(1, 0, 4.0, 45.0, 20.0);
    c.taken_at = t("2024-03-05T01:00:00Z");
    h.checks.push(c);
    let at = t("2024-03-05T02:00:00Z");
    let due = |cal: Calendar| {
        let r = evaluate(&h, &[], &Limits::builtin(), at, UnitSystem::Metric, cal);
        let w = r
            .work
            .iter()
            .find(|w| w.kind == WorkKind::Check)
            .cloned()
            .unwrap();
        (w.due, w.basis)
    };
    let (shop, basis) = due(Calendar::of(chrono_tz::America::New_York));
    assert_eq!(shop.to_string(), "2024-03-11");
    assert!(basis.contains("last check 2024-03-04"), "{basis}");
    assert_eq!(due(Calendar::default()).0.to_string(), "2024-03-12");
    // The shop's day begins at its own midnight: 05:00 UTC in winter, 04:00 in summer.
    let ny = Calendar::of(chrono_tz::America::New_York);
    let d = |s: &str| s.parse::<chrono::NaiveDate>().unwrap();
    assert_eq!(ny.start(d("2024-03-04")), Some(t("2024-03-04T05:00:00Z")));
    assert_eq!(ny.start(d("2024-07-04")), Some(t("2024-07-04T04:00:00Z")));
    assert_eq!(ny.day(t("2024-03-05T01:00:00Z")), d("2024-03-04"));
}
