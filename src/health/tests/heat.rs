//! Tests of `evaluate` on the heat indicators: heat-rise drift, reservoir temperature, the
//! drift detectors and a cooler clean restarting them.

use super::*;

#[test]
fn heat_rise_drift_at_below_and_above_its_limits() {
    // Baseline 45 − 20 = 25 K; drift = ΔT − 25; ≥ +5 K / ≥ +10 K (docs/engineering.md,
    // "Default limits").
    for (d, want) in [
        (4.99, State::Steady),
        (5.0, State::Watch),
        (5.01, State::Watch),
        (9.99, State::Watch),
        (10.0, State::Act),
        (10.01, State::Act),
    ] {
        let mut h = stroke_history(4.0);
        for c in h.checks.iter_mut().skip(4) {
            c.reservoir_temp = Some(Temperature::from_c(45.0 + d));
        }
        let r = eval(&h, &Limits::builtin(), week(6));
        assert_eq!(state_of(&r, FlagKind::HeatRise), want, "drift {d} K");
        assert!((r.indicators.heat_rise_drift_k.unwrap() - d).abs() < 1e-9);
    }
}

#[test]
fn a_heat_rise_that_follows_the_job_pressure_is_not_a_drift() {
    // No timed stroke, so no flow model: the heat load goes with the pressure, and a
    // unit's heat rise is judged against the baseline's at today's pressure (Newton's law
    // of cooling with the load ∝ p). Baseline: 12 checks alternating 80 and 120 bar at
    // 0.2 K per bar (16 and 24 K); the reference is their mean pressure, 100 bar, and the
    // baseline heat rise there 20 K.
    let mut h = press();
    h.unit.stroke = None;
    h.unit.relief = Some(crate::units::Pressure::from_bar(160.0));
    let add = |h: &mut UnitHistory, id: i64, w: i64, bar: f64, rise: f64| {
        let mut c = check(id, week(w));
        c.pressure = Some(crate::units::Pressure::from_bar(bar));
        c.reservoir_temp = Some(Temperature::from_c(20.0 + rise));
        c.ambient_temp = Some(Temperature::from_c(20.0));
        h.checks.push(c);
    };
    for w in 0..12 {
        let bar = if w % 2 == 0 { 80.0 } else { 120.0 };
        add(&mut h, w + 1, w, bar, 0.2 * bar);
    }
    // A job at 130 bar: 26 K, 6 K over the baseline's 20 K but just what 130 bar gives.
    for w in 12..18 {
        add(&mut h, w + 1, w, 130.0, 26.0);
    }
    let l = Limits::builtin();
    let r = eval(&h, &l, week(17));
    assert_eq!(state_of(&r, FlagKind::HeatRise), State::Steady);
    assert_eq!(state_of(&r, FlagKind::Drift), State::Steady);
    assert!(r.indicators.heat_rise_drift_k.unwrap().abs() < 1e-9);
    let b = r.baseline.get(BaselineIndicator::HeatRise).unwrap();
    assert!((b.value - 20.0).abs() < 1e-9);
    // 10.5 K over what 130 bar gives (26 + 10.5): act, and the figure says so.
    for (i, c) in h.checks.iter_mut().enumerate().skip(12) {
        if i >= 15 {
            c.reservoir_temp = Some(Temperature::from_c(20.0 + 36.5));
        }
    }
    let r = eval(&h, &l, week(17));
    let f = r
        .flags
        .iter()
        .find(|f| f.kind == FlagKind::HeatRise)
        .unwrap();
    assert_eq!(f.state, State::Act);
    let fig = f.figure.as_ref().unwrap();
    assert!((fig.value - 10.5).abs() < 1e-9, "{:?}", f.figure);
    assert!(
        f.message.contains("at this working pressure"),
        "{}",
        f.message
    );
}

#[test]
fn reservoir_temperature_at_below_and_above_its_limits() {
    // > 60 °C watch, > 70 °C act, and always act above 82 °C (docs/engineering.md, "Default
    // limits").
    let builtin = Limits::builtin();
    let lenient = Limits::builtin().with(LimitKey::ReservoirTempC, None, Some(90.0));
    for (c, limits, want) in [
        (60.0, &builtin, State::Steady),
        (60.01, &builtin, State::Watch),
        (70.0, &builtin, State::Watch),
        (70.01, &builtin, State::Act),
        (81.99, &lenient, State::Watch),
        (82.0, &lenient, State::Watch),
        (82.01, &lenient, State::Act),
    ] {
        // Two checks at the temperature: a reading at act is confirmed by the next one.
        let mut h = press();
        for i in 0..2 {
            let mut ch = check(i + 1, week(i));
            ch.reservoir_temp = Some(Temperature::from_c(c));
            h.checks.push(ch);
        }
        let r = eval(&h, limits, week(1));
        assert_eq!(state_of(&r, FlagKind::ReservoirTemp), want, "{c} °C");
        let f = r.flags.iter().find(|f| f.kind == FlagKind::ReservoirTemp);
        if let Some(f) = f {
            // The figure is the temperature in kelvin, as a tile carries it.
            let fig = f.figure.as_ref().unwrap();
            assert_eq!(fig.dim, indicators::Dim::Temperature);
            assert!((fig.value - Temperature::from_c(c).si()).abs() < 1e-9);
        }
    }
    // A single reading at act shows watch until the next check confirms it (a single
    // reading never raises act on its own); above the 82 °C ceiling it is act at once.
    for (c, want) in [(75.0, State::Watch), (82.01, State::Act)] {
        let mut h = press();
        let mut ch = check(1, week(0));
        ch.reservoir_temp = Some(Temperature::from_c(c));
        h.checks.push(ch);
        let r = eval(&h, &builtin, week(0));
        assert_eq!(state_of(&r, FlagKind::ReservoirTemp), want, "{c} °C once");
    }
}

#[test]
fn a_questioned_hot_oil_shows_at_watch_until_the_next_check_confirms_it() {
    // Eight checks with the oil at 45 °C, then 88 °C: 43 K over a median whose spread is
    // floored at 2.5 K (Hampel's limit 12.5 K), so the screen holds it. It is still shown, at
    // watch, not at the 82 °C ceiling's act, with the question in the sentence.
    let mut h = eight_then(45.0, timed(9, 8, 4.0, 88.0, 20.0));
    let r = eval(&h, &Limits::builtin(), week(8));
    assert_eq!(r.suspects.len(), 1, "{:?}", r.suspects);
    let (f, v) = at_watch(&r, FlagKind::ReservoirTemp);
    assert!((v - Temperature::from_c(88.0).si()).abs() < 1e-9, "{v}");
    assert!(
        f.what.contains("questioned and held at watch"),
        "{}",
        f.what
    );
    assert!(f.next_step.contains("let the oil cool"), "{}", f.next_step);
    // The next check back at 45 °C: nothing shows.
    h.checks.push(timed(10, 9, 4.0, 45.0, 20.0));
    let r = eval(&h, &Limits::builtin(), week(9));
    assert_eq!(state_of(&r, FlagKind::ReservoirTemp), State::Steady);
    // The next check at 88.5 °C confirms it (held too, on the same side, close to it): both
    // count, and above the ceiling that is act.
    h.checks[9] = timed(10, 9, 4.0, 88.5, 20.0);
    let r = eval(&h, &Limits::builtin(), week(9));
    assert_eq!(state_of(&r, FlagKind::ReservoirTemp), State::Act);
}

#[test]
fn a_drift_signal_needs_the_next_check_to_confirm_it_and_three_to_act() {
    // Worked by hand (Montgomery's EWMA λ = 0.25, L = 3 and tabular CUSUM k = 0.5, h = 5,
    // with the baseline's own standard error added): baseline ΔT 19, 21, 19, 21 K (the
    // baseline held at 4 checks here) → median 20 K, MAD 1 K, σ = 1.4826 K (the floor is
    // set to 1 K), se of the median = 1.2533·σ/√4 = 0.92906 K.
    // CUSUM K = 0.5σ + se = 1.67037, H = 5σ = 7.41301. With 24 K, C⁺ grows by
    // 4 − 1.67037 = 2.32963 a check: 2.330, 4.659, 6.989, 9.319 (> H: signal at the 4th).
    // EWMA z = 21, 21.75, 22.313, 22.734, 23.051 stays inside 20 + 3·√(σ_z² + se²)
    // (23.00 at the first, 23.23 at the fifth). Each 24 K reading is beyond 20 + K. So the
    // run is 0, 0, 0, 1, 2, 3.
    let l = Limits::builtin()
        .with(LimitKey::MinSpreadHeatK, None, Some(1.0))
        .with(LimitKey::BaselineChecksMax, None, Some(4.0));
    let sigma = crate::physics::stats::MAD_TO_SIGMA;
    let se = baseline::MEDIAN_SE_FACTOR * sigma / 2.0;
    for (n, want) in [
        (1, State::Steady),
        (3, State::Steady),
        (4, State::Steady),
        (5, State::Watch),
        // Three signals in a row, but the EWMA has moved 2.6 K, less than the heat rise's
        // own 5 K watch limit: not material, so it stays at watch.
        (6, State::Watch),
        (9, State::Watch),
    ] {
        let r = eval(&heat_history(&vec![24.0; n]), &l, week(3 + n as i64));
        assert_eq!(state_of(&r, FlagKind::Drift), want, "{n} checks at 24 K");
        // The heat-rise drift itself (4 K) stays below its own 5 K limit.
        assert_eq!(state_of(&r, FlagKind::HeatRise), State::Steady);
    }
    let r = eval(&heat_history(&[24.0; 4]), &l, week(7));
    let d = &r.checks.last().unwrap().drift[0];
    assert_eq!((d.signal, d.run), (true, 1));
    assert!((d.ewma - 22.734375).abs() < 1e-9);
    let half = 3.0 * (sigma * sigma * 0.25 / 1.75 * (1.0 - 0.75f64.powi(8)) + se * se).sqrt();
    assert!((d.ewma_limit - (20.0 + half)).abs() < 1e-9);
    let c4 = 4.0 * (24.0 - 20.0 - 0.5 * sigma - se);
    assert!((d.cusum_sigma - c4 / sigma).abs() < 1e-9);
    // A 7 K step: signals from the 2nd check (C⁺ = 2·(7 − 1.67) > H), a run of 3 at the
    // 4th, but the EWMA 20 + 7·(1 − 0.75ⁱ) passes +5 K only at i = 5 (5.34 K; 4.79 K at
    // i = 4): act there.
    for (n, want) in [(4, State::Watch), (5, State::Act), (6, State::Act)] {
        let r = eval(&heat_history(&vec![27.0; n]), &l, week(3 + n as i64));
        assert_eq!(state_of(&r, FlagKind::Drift), want, "{n} checks at 27 K");
    }
    // The drift flag carries its figure: the EWMA of the heat rise, its limit and baseline.
    let r = eval(&heat_history(&[24.0; 5]), &l, week(8));
    let f = r.flags.iter().find(|f| f.kind == FlagKind::Drift).unwrap();
    let fig = f.figure.as_ref().unwrap();
    assert_eq!(fig.dim, indicators::Dim::TempDiff);
    assert!((fig.value - (0.25 * 24.0 + 0.75 * 22.734375)).abs() < 1e-9);
    assert_eq!(fig.baseline, Some(20.0));
    // One normal check after the signals ends the run at once: the reading is back.
    let r = eval(
        &heat_history(&[24.0, 24.0, 24.0, 24.0, 24.0, 20.0]),
        &l,
        week(9),
    );
    assert_eq!(state_of(&r, FlagKind::Drift), State::Steady);
    // The rule is configurable: flag on the first signal.
    let eager = l.clone().with(LimitKey::DriftChecks, Some(1.0), Some(2.0));
    let r = eval(&heat_history(&[24.0; 4]), &eager, week(7));
    assert_eq!(state_of(&r, FlagKind::Drift), State::Watch);
    // With the default 2.5 K floor the same 4 K step is within the season's scatter:
    // K = 1.25 + 1.5666 = 2.8166, C⁺ grows 1.18 K a check and stays below H = 12.5 K
    // for ten checks.
    let wide = Limits::builtin().with(LimitKey::BaselineChecksMax, None, Some(4.0));
    let r = eval(&heat_history(&[24.0; 10]), &wide, week(13));
    assert_eq!(state_of(&r, FlagKind::Drift), State::Steady);
}

#[test]
fn a_cooler_clean_restarts_the_heat_rise_detectors_and_flags() {
    // Heat rise 20 K for 12 checks (the baseline), then a fouling cooler: 32 K for 5
    // checks, then the cooler is cleaned and the heat rise is back at 20 K.
    let mut h = press();
    let mut id = 0;
    let mut add = |h: &mut UnitHistory, w: i64, d: f64| {
        id += 1;
        let mut c = check(id, week(w));
        c.reservoir_temp = Some(Temperature::from_c(20.0 + d));
        c.ambient_temp = Some(Temperature::from_c(20.0));
        h.checks.push(c);
    };
    for w in 0..12 {
        add(&mut h, w, 20.0 + if w % 2 == 0 { 0.5 } else { -0.5 });
    }
    for w in 12..17 {
        add(&mut h, w, 32.0);
    }
    let l = Limits::builtin();
    let r = eval(&h, &l, week(16));
    assert_eq!(state_of(&r, FlagKind::HeatRise), State::Act);
    assert_eq!(state_of(&r, FlagKind::Drift), State::Act);
    h.events.push(event(
        90,
        week(16) + chrono::Duration::days(3),
        EventKind::CoolerClean,
        None,
    ));
    add(&mut h, 17, 20.0);
    let r = eval(&h, &l, week(17));
    // The first check after the clean: the detectors start afresh and the median of the
    // heat rise counts only what was read after it — both flags are gone.
    assert_eq!(state_of(&r, FlagKind::HeatRise), State::Steady);
    assert_eq!(state_of(&r, FlagKind::Drift), State::Steady);
    assert_eq!(r.restarts.len(), 1);
    assert_eq!(r.restarts[0].event, EventKind::CoolerClean);
    // A cooler clean that does not help: the flag comes back on the second check after
    // it (two readings confirm it), and says which restart it follows.
    h.checks.pop();
    add(&mut h, 17, 32.0);
    let r = eval(&h, &l, week(17));
    assert_eq!(state_of(&r, FlagKind::HeatRise), State::Steady);
    add(&mut h, 18, 32.0);
    let r = eval(&h, &l, week(18));
    let f = r
        .flags
        .iter()
        .find(|f| f.kind == FlagKind::HeatRise)
        .unwrap();
    assert_eq!(f.state, State::Act);
    assert_eq!(f.restarted.as_ref().map(|r| r.event_id), Some(90));
    let fig = f.figure.as_ref().unwrap();
    assert_eq!(
        (fig.dim, fig.value, fig.limit),
        (indicators::Dim::TempDiff, 12.0, Some(10.0))
    );
}

#[test]
fn the_heat_model_counts_some_leakage_where_the_rated_flow_leaves_none() {
    // Twelve checks timing 41 L/min on a pump rated 40 L/min: the rated flow, standing for
    // the displacement, leaves no leakage at the reference (40 − 41 < 0). No pump seals
    // better than about 98 %: the heat model takes 2 % of the 40 L/min, 0.8 L/min (by hand).
    let mut h = press();
    let stroke = press_volume_m3() / Flow::from_lpm(41.0).si();
    for w in 0..12 {
        h.checks.push(timed(w + 1, w, stroke, 40.0, 20.0));
    }
    let era = crate::health::baseline::eras(&h).last().cloned();
    let c =
        crate::health::indicators::compute(&h, era.as_ref(), h.fluid.as_ref(), &Limits::builtin());
    let m = c.heat_load.expect("a heat model");
    assert!((Flow(m.leak).lpm() - 0.8).abs() < 1e-9, "{m:?}");
    // Where the timed flow is under the rated one, its shortfall is the leakage: 36 L/min
    // timed leaves 4 L/min.
    let mut h = press();
    let stroke = press_volume_m3() / Flow::from_lpm(36.0).si();
    for w in 0..12 {
        h.checks.push(timed(w + 1, w, stroke, 40.0, 20.0));
    }
    let c =
        crate::health::indicators::compute(&h, era.as_ref(), h.fluid.as_ref(), &Limits::builtin());
    let m = c.heat_load.expect("a heat model");
    assert!((Flow(m.leak).lpm() - 4.0).abs() < 1e-6, "{m:?}");
}
