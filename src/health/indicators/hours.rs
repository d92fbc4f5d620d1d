//! Run hours and equivalent oil hours from the hour-meter readings: rates per day and the
//! reading at a given time. No limits and no flags.

use super::*;

/// Hour-meter readings (time, hours, oil temperature) in time order, dropping any that go
/// backwards (a replaced meter).
pub(super) fn hour_readings(h: &UnitHistory) -> Vec<(DateTime<Utc>, f64, Option<Temperature>)> {
    let mut out: Vec<(DateTime<Utc>, f64, Option<Temperature>)> = Vec::new();
    for c in &h.checks {
        let Some(hrs) = c.hours.filter(|v| v.is_finite() && *v >= 0.0) else {
            continue;
        };
        if out.last().is_some_and(|l| hrs < l.1) {
            continue;
        }
        out.push((c.taken_at, hrs, c.reservoir_temp));
    }
    out
}

/// Equivalent oil hours over consecutive readings (`physics::oil_life`). A reading without an
/// oil temperature takes its neighbour's, and with none known the hours count at the rate of
/// cool oil (1 per run-hour).
pub(super) fn equivalent_over(r: &[(DateTime<Utc>, f64, Option<Temperature>)]) -> f64 {
    let cool = oil_life::AgeingRule::default().threshold;
    let pts: Vec<(f64, Temperature)> = r
        .iter()
        .enumerate()
        .map(|(i, x)| {
            let t =
                x.2.or_else(|| r.get(i + 1).and_then(|n| n.2))
                    .or_else(|| i.checked_sub(1).and_then(|p| r[p].2));
            (x.1, t.unwrap_or(cool))
        })
        .collect();
    oil_life::equivalent_hours(&pts).unwrap_or(0.0)
}

const RATE_WINDOW_DAYS: i64 = 91;

fn rate_window(h: &UnitHistory) -> Vec<(DateTime<Utc>, f64, Option<Temperature>)> {
    let r = hour_readings(h);
    let Some(last) = r.last().map(|l| l.0) else {
        return r;
    };
    let from = last - chrono::Duration::days(RATE_WINDOW_DAYS);
    r.into_iter().filter(|x| x.0 >= from).collect()
}

fn per_day(first: DateTime<Utc>, last: DateTime<Utc>, amount: f64) -> Option<f64> {
    let days = (last - first).num_seconds() as f64 / 86_400.0;
    (days >= 1.0 && amount >= 0.0).then(|| amount / days)
}

pub(crate) fn hours_per_day(h: &UnitHistory) -> Option<f64> {
    let r = rate_window(h);
    let (f, l) = (r.first()?, r.last()?);
    per_day(f.0, l.0, l.1 - f.1)
}

pub(super) fn equiv_hours_per_day(h: &UnitHistory) -> Option<f64> {
    let r = rate_window(h);
    per_day(r.first()?.0, r.last()?.0, equivalent_over(&r))
}

/// The hour-meter reading at `t`, interpolated between the readings around it (or the nearest
/// reading when `t` is outside them).
pub(crate) fn hours_at(h: &UnitHistory, t: DateTime<Utc>) -> Option<f64> {
    let r = hour_readings(h);
    let after = r.iter().position(|x| x.0 >= t);
    match after {
        Some(0) => r.first().map(|x| x.1),
        Some(i) => {
            let (a, b) = (&r[i - 1], &r[i]);
            let span = (b.0 - a.0).num_seconds() as f64;
            if span <= 0.0 {
                return Some(b.1);
            }
            let frac = (t - a.0).num_seconds() as f64 / span;
            Some(a.1 + frac * (b.1 - a.1))
        }
        None => r.last().map(|x| x.1),
    }
}
