//! Tests of the flags: episodes, grading and acknowledgements.

use super::*;

fn g(day: u32, state: State) -> Graded {
    let at: DateTime<Utc> = format!("2024-03-{day:02}T08:00:00Z").parse().unwrap();
    Graded {
        at,
        state,
        value: None,
        limit: None,
    }
}

#[test]
fn an_episode_knows_when_it_began_and_when_its_state_began() {
    use State::*;
    let pts = [
        g(1, Watch),
        g(2, Steady),
        g(3, Watch),
        g(4, Watch),
        g(5, Act),
        g(6, Act),
    ];
    let (last, since, state_since) = episode(&pts).unwrap();
    assert_eq!(last.state, Act);
    assert_eq!(since, g(3, Watch).at);
    assert_eq!(state_since, g(5, Act).at);
    assert!(episode(&[g(1, Act), g(2, Steady)]).is_none());
    assert!(episode(&[]).is_none());
    // Act then back to watch: the watch state is new again.
    let (_, since, state_since) = episode(&[g(1, Watch), g(2, Act), g(3, Watch)]).unwrap();
    assert_eq!(since, g(1, Watch).at);
    assert_eq!(state_since, g(3, Watch).at);
}

#[test]
fn kinds_read_back() {
    for k in FlagKind::ALL {
        assert_eq!(k.as_str().parse::<FlagKind>(), Ok(*k));
    }
    assert!("lost-flow".parse::<FlagKind>().is_err());
}

fn flag(state: State, state_since: &str) -> Flag {
    Flag {
        kind: FlagKind::Water,
        state,
        since: NaiveDate::from_ymd_opt(2024, 3, 1).unwrap(),
        state_since: state_since.parse().unwrap(),
        message: String::new(),
        what: String::new(),
        next_step: String::new(),
        acknowledged: false,
        acknowledgement: None,
        figure: None,
        restarted: None,
    }
}

fn ack(state: &str, at: &str) -> Acknowledgement {
    Acknowledgement {
        id: 1,
        unit_id: 1,
        kind: "water".into(),
        state: state.into(),
        by: "T. Tech".into(),
        note: "breather ordered".into(),
        at: at.parse().unwrap(),
    }
}

#[test]
fn an_acknowledgement_holds_until_the_state_changes() {
    let mut f = [flag(State::Act, "2024-03-10T08:00:00Z")];
    mark_acknowledged(&mut f, &[ack("act", "2024-03-11T09:00:00Z")]);
    assert!(f[0].acknowledged);
    assert_eq!(f[0].acknowledgement.as_ref().unwrap().by, "T. Tech");
    // Seen while it was watch: the move to act is news.
    let mut f = [flag(State::Act, "2024-03-10T08:00:00Z")];
    mark_acknowledged(&mut f, &[ack("watch", "2024-03-05T09:00:00Z")]);
    assert!(!f[0].acknowledged);
    // An acknowledgement of an earlier act episode does not carry over.
    let mut f = [flag(State::Act, "2024-03-10T08:00:00Z")];
    mark_acknowledged(&mut f, &[ack("act", "2024-02-01T09:00:00Z")]);
    assert!(!f[0].acknowledged);
}

fn gv(day: u32, state: State, value: f64) -> Graded {
    Graded {
        value: Some(value),
        limit: None,
        ..g(day, state)
    }
}

#[test]
fn a_trend_past_watch_that_reaches_act_by_the_next_sample_raises_act() {
    use State::*;
    // Worked by hand: three samples 10 days apart at 100, 250, 400 ppm lie on a line of
    // 15 ppm a day (the least-squares slope of collinear points is their slope); carried
    // 10 days on from 400 (the samples' spacing, shorter than the 30-day horizon) it is at
    // 550 ppm, past the act limit of 500.
    let mut pts = [
        gv(1, Steady, 100.0),
        gv(11, Watch, 250.0),
        gv(21, Watch, 400.0),
    ];
    let by = act_on_trend(&mut pts, Some(500.0), 30.0, &|_| 0.0);
    assert_eq!(by, Some(g(31, Steady).at));
    assert_eq!(pts[2].state, Act);
    assert!((pts[2].value.unwrap() - 550.0).abs() < 1e-9);
    assert_eq!(pts[2].limit, Some(500.0));
    assert_eq!((pts[0].state, pts[1].state), (Steady, Watch));
    // A horizon of 5 days carries it only to 475: watch.
    let mut pts = [
        gv(1, Steady, 100.0),
        gv(11, Watch, 250.0),
        gv(21, Watch, 400.0),
    ];
    assert_eq!(act_on_trend(&mut pts, Some(500.0), 5.0, &|_| 0.0), None);
    assert_eq!(pts[2].state, Watch);
    // A value that fell back on the way is no run, however steep the line.
    let mut pts = [
        gv(1, Steady, 100.0),
        gv(11, Watch, 420.0),
        gv(21, Watch, 400.0),
    ];
    assert_eq!(act_on_trend(&mut pts, Some(500.0), 30.0, &|_| 0.0), None);
    assert_eq!(pts[2].state, Watch);
    // Only two samples: no run yet.
    let mut pts = [gv(11, Watch, 250.0), gv(21, Watch, 400.0)];
    assert_eq!(act_on_trend(&mut pts, Some(500.0), 30.0, &|_| 0.0), None);
    // A drift below new runs the same way on its own side: −2, −5, −8 % with 10 % act.
    let mut pts = [
        gv(1, Steady, -2.0),
        gv(11, Watch, -5.0),
        gv(21, Watch, -8.0),
    ];
    assert!(act_on_trend(&mut pts, Some(10.0), 30.0, &|_| 0.0).is_some());
    assert_eq!((pts[2].value, pts[2].limit), (Some(-11.0), Some(-10.0)));
    // A drift may pass through new on its way: +2, −5, −8 % lie on a least-squares line of
    // −0.5 % a day (Sxy = −100 over Sxx = 200, worked by hand), −13 % ten days on.
    let mut pts = [gv(1, Steady, 2.0), gv(11, Watch, -5.0), gv(21, Watch, -8.0)];
    assert!(act_on_trend(&mut pts, Some(10.0), 30.0, &|_| 0.0).is_some());
    assert!((pts[2].value.unwrap() + 13.0).abs() < 1e-9);
    // Back towards new on the way is no run.
    let mut pts = [
        gv(1, Steady, -6.0),
        gv(11, Watch, -5.0),
        gv(21, Watch, -8.0),
    ];
    assert_eq!(act_on_trend(&mut pts, Some(10.0), 30.0, &|_| 0.0), None);
    // A later point is judged on the readings, not on an earlier point's projection; and
    // only the last point's date is returned.
    let mut pts = [
        gv(1, Steady, 100.0),
        gv(11, Watch, 250.0),
        gv(21, Watch, 400.0),
        gv(31, Watch, 300.0),
    ];
    assert_eq!(act_on_trend(&mut pts, Some(500.0), 30.0, &|_| 0.0), None);
    assert_eq!((pts[2].state, pts[3].state), (Act, Watch));
    // The projection must clear the limit by its own standard error: the latest reading's
    // scatter σ, the slope's and their covariance, σ·√(1 + (step² + 2·step·(x_n − x̄))/Sxx)
    // with Sxx = 10² + 0 + 10² = 200, x_n − x̄ = 10 and a 10-day step, √2.5 σ = 1.5811 σ (by
    // hand; numpy's in tests/reference/stats_cases.json, "ahead"). At σ = 30 ppm that is
    // 47.4, and 550 − 47.4 clears 500: act; at σ = 40 it is 63.2, and 486.8 does not: watch.
    for (sigma, want) in [(30.0, Act), (40.0, Watch)] {
        let mut pts = [
            gv(1, Steady, 100.0),
            gv(11, Watch, 250.0),
            gv(21, Watch, 400.0),
        ];
        act_on_trend(&mut pts, Some(500.0), 30.0, &|_| sigma);
        assert_eq!(pts[2].state, want, "σ {sigma}");
    }
    // Each step must be a move the lab can tell (here σ = 1, a KV40 drift in %): −0.5, −0.7,
    // −9.3 is one step after a move of 0.2, no run; −3.5, −6.4, −9.3 moves 2.9 a sample and,
    // carried the 14 days of its spacing, is at −12.2, clearing −10 by more than its √2.5 σ
    // (1.58): act (by hand).
    for (first, second, want) in [(-0.5, -0.7, Watch), (-3.5, -6.4, Act)] {
        let mut pts = [
            gv(1, Steady, first),
            gv(15, Watch, second),
            gv(29, Watch, -9.3),
        ];
        act_on_trend(&mut pts, Some(10.0), 30.0, &|_| 1.0);
        assert_eq!(pts[2].state, want, "{first}, {second}");
    }
    // Without an act limit nothing is raised.
    let mut pts = [
        gv(1, Steady, 100.0),
        gv(11, Watch, 250.0),
        gv(21, Watch, 400.0),
    ];
    assert_eq!(act_on_trend(&mut pts, None, 30.0, &|_| 0.0), None);
}

fn drifted(indicator: BaselineIndicator, run: usize, material: bool) -> DriftPoint {
    DriftPoint {
        indicator,
        ewma: 0.0,
        ewma_limit: 0.0,
        cusum_sigma: 0.0,
        signal: true,
        run,
        material,
        shift_here_pct: None,
    }
}

#[test]
fn a_drift_flag_at_act_names_the_drift_that_raised_it() {
    // The flow has signalled for 8 checks without a material shift, the heat rise for 6 with
    // one, the case drain for 2 with one (act needs 3 checks with the built-in limits, watch
    // 2): the act is the heat rise's, and the flag names it; at watch the longest run stands.
    let dl = Limits::builtin().get(LimitKey::DriftChecks);
    assert_eq!((dl.grade(2.0), dl.grade(3.0)), (Some(false), Some(true)));
    let p = CheckPoint {
        drift: vec![
            drifted(BaselineIndicator::CorrectedFlow, 8, false),
            drifted(BaselineIndicator::HeatRise, 6, true),
            drifted(BaselineIndicator::CaseDrain, 2, true),
        ],
        ..CheckPoint::default()
    };
    let at = |s| super::raise::raising_drift(&p, &dl, s).map(|d| d.indicator);
    assert_eq!(at(State::Act), Some(BaselineIndicator::HeatRise));
    assert_eq!(at(State::Watch), Some(BaselineIndicator::CorrectedFlow));
}
