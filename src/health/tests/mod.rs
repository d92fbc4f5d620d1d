//! Tests of `health::evaluate` on hand-made histories, by what they judge; the helpers they
//! share.

mod flow;
mod fluid;
mod heat;
mod state;

use super::testutil::*;
use super::*;
use crate::model::{Acknowledgement, Check, EventKind, FilterState, OilLevel};
use crate::units::{Flow, Temperature, Viscosity};

pub(super) fn eval(h: &UnitHistory, limits: &Limits, at: DateTime<Utc>) -> UnitHealth {
    evaluate(h, &[], limits, at, UnitSystem::Metric, Calendar::default())
}

/// Eight weekly checks at 4.0 s with the oil at `oil_c` (20 °C hall), then the ninth, `odd`:
/// the set-up of the screen's hold tests.
pub(super) fn eight_then(oil_c: f64, odd: Check) -> UnitHistory {
    let mut h = press();
    for w in 0..8 {
        h.checks.push(timed(w + 1, w, 4.0, oil_c, 20.0));
    }
    h.checks.push(odd);
    h
}

/// The flag of `kind`, which the test expects to be raised.
pub(super) fn flag_of(health: &UnitHealth, kind: FlagKind) -> &Flag {
    health
        .flags
        .iter()
        .find(|f| f.kind == kind)
        .unwrap_or_else(|| panic!("a {kind:?} flag in {:?}", health.flags))
}

pub(super) fn state_of(health: &UnitHealth, kind: FlagKind) -> State {
    health
        .flags
        .iter()
        .find(|f| f.kind == kind)
        .map(|f| f.state)
        .unwrap_or(State::Steady)
}

/// The flag of `kind`, which must be at watch, and its figure's value.
pub(super) fn at_watch(health: &UnitHealth, kind: FlagKind) -> (&Flag, f64) {
    let f = health
        .flags
        .iter()
        .find(|f| f.kind == kind)
        .unwrap_or_else(|| panic!("no {kind:?} flag"));
    assert_eq!(f.state, State::Watch, "{kind:?}");
    let v = f.figure.as_ref().map(|g| g.value).expect("a figure");
    (f, v)
}

pub(super) fn week(w: i64) -> DateTime<Utc> {
    t("2024-01-01") + chrono::Duration::weeks(w)
}

/// 4 baseline checks at 4.0 s, then 3 checks at `t_s`; oil 45 °C, ambient 20 °C.
pub(super) fn stroke_history(t_s: f64) -> UnitHistory {
    let mut h = press();
    for w in 0..4 {
        h.checks.push(timed(w + 1, w, 4.0, 45.0, 20.0));
    }
    for w in 4..7 {
        h.checks.push(timed(w + 1, w, t_s, 45.0, 20.0));
    }
    h
}

/// Baseline at 36 L/min against 40 rated (leak 4 L/min), then 3 checks leaking `ratio`×4;
/// all at 50 °C and 100 bar, so ν and p cancel and the conductance ratio is the leak ratio.
pub(super) fn leak_history(ratio: f64) -> UnitHistory {
    let mut h = press();
    let v = press_volume_m3();
    let t_of = |lpm: f64| v / Flow::from_lpm(lpm).si();
    for w in 0..4 {
        h.checks.push(timed(w + 1, w, t_of(36.0), 50.0, 25.0));
    }
    for w in 4..7 {
        h.checks
            .push(timed(w + 1, w, t_of(40.0 - 4.0 * ratio), 50.0, 25.0));
    }
    h
}

pub(super) fn with_sample(
    mut h: UnitHistory,
    f: impl FnOnce(&mut crate::model::Sample),
) -> UnitHistory {
    h.checks.push(check(1, week(0)));
    let mut s = sample(1, week(1));
    f(&mut s);
    h.samples.push(s);
    h
}

/// Heat-rise-only checks: baseline ΔT 19, 21, 19, 21 K, then `then`.
pub(super) fn heat_history(then: &[f64]) -> UnitHistory {
    let mut h = press();
    for (i, d) in [19.0, 21.0, 19.0, 21.0].iter().chain(then).enumerate() {
        let mut c = check(i as i64 + 1, week(i as i64));
        c.reservoir_temp = Some(Temperature::from_c(20.0 + d));
        c.ambient_temp = Some(Temperature::from_c(20.0));
        h.checks.push(c);
    }
    h
}
