//! Grading an indicator's history against its limits, point by point, into the episode a flag
//! reports, and the flag made from it. No wording of its own beyond the flag's two halves.

use super::*;

/// One graded point of an indicator's history.
#[derive(Clone, Copy, Debug)]
pub(super) struct Graded {
    pub(super) at: DateTime<Utc>,
    pub(super) state: State,
    pub(super) value: Option<f64>,
    pub(super) limit: Option<f64>,
}

/// The current run of a graded history: the last point, when the run at watch or worse began
/// and when the current state began. `None` when the last point is steady.
pub(super) fn episode(points: &[Graded]) -> Option<(Graded, DateTime<Utc>, DateTime<Utc>)> {
    let last = *points.last()?;
    if last.state == State::Steady {
        return None;
    }
    let mut since = last.at;
    let mut state_since = last.at;
    let mut same = true;
    for p in points.iter().rev().skip(1) {
        if p.state == State::Steady {
            break;
        }
        since = p.at;
        if same && p.state == last.state {
            state_since = p.at;
        } else {
            same = false;
        }
    }
    Some((last, since, state_since))
}

pub(super) fn grade(limits: &Limits, key: LimitKey, value: f64) -> (State, Option<f64>) {
    let l = limits.get(key);
    let s = State::from_grade(l.grade(value));
    let limit = match s {
        State::Act => l.act,
        _ => l.watch.or(l.act),
    };
    (s, limit)
}

/// Grades the confirmed level (`level`) of a raw reading (`raw`) at each check: a check
/// with a reading but no level yet (the first after a restart) is steady, which ends the run.
pub(super) fn graded_levels(
    points: &[CheckPoint],
    limits: &Limits,
    key: LimitKey,
    raw: fn(&CheckPoint) -> Option<f64>,
    level: fn(&CheckPoint) -> Option<f64>,
) -> Vec<Graded> {
    points
        .iter()
        .filter(|p| raw(p).is_some())
        .map(|p| match level(p) {
            Some(v) => {
                let (state, limit) = grade(limits, key, v);
                Graded {
                    at: p.at,
                    state,
                    value: Some(v),
                    limit,
                }
            }
            None => Graded {
                at: p.at,
                state: State::Steady,
                value: None,
                limit: None,
            },
        })
        .collect()
}

pub(super) fn graded_samples(
    points: &[SamplePoint],
    limits: &Limits,
    key: LimitKey,
    f: fn(&SamplePoint) -> Option<f64>,
) -> Vec<Graded> {
    points
        .iter()
        .filter_map(|p| {
            let v = f(p)?;
            let (state, limit) = grade(limits, key, v);
            Some(Graded {
                at: p.at,
                state,
                value: Some(v),
                limit,
            })
        })
        .collect()
}

pub(super) fn new_flag(
    kind: FlagKind,
    g: &Graded,
    since: NaiveDate,
    state_since: DateTime<Utc>,
    message: String,
) -> Flag {
    let (what, next_step) = message_parts(&message);
    Flag {
        kind,
        state: g.state,
        since,
        state_since,
        message,
        what,
        next_step,
        acknowledged: false,
        acknowledgement: None,
        figure: figure_of(kind, g),
        restarted: None,
    }
}

/// The figure of a flag from its graded point (value and limit in the flag's `unit`).
pub(super) fn figure_of(kind: FlagKind, g: &Graded) -> Option<Figure> {
    let dim = match kind {
        FlagKind::LostFlow | FlagKind::CaseDrain | FlagKind::Viscosity => Dim::Percent,
        FlagKind::LeakConductance => Dim::Ratio,
        FlagKind::HeatRise => Dim::TempDiff,
        FlagKind::ReservoirTemp => Dim::Temperature,
        FlagKind::Cleanliness => Dim::RangeNumber,
        FlagKind::Water => Dim::Ppm,
        FlagKind::Acid => Dim::AcidNumber,
        FlagKind::Overdue => Dim::Days,
        // Filter and oil level are read, not measured; drift sets its own figure.
        FlagKind::Filter | FlagKind::OilLevel | FlagKind::Drift => return None,
    };
    let si = |v: f64| {
        if dim == Dim::Temperature {
            v + crate::units::KELVIN_AT_0C
        } else {
            v
        }
    };
    Some(Figure {
        dim,
        value: si(g.value?),
        limit: g.limit.map(si),
        baseline: None,
        of: None,
    })
}

/// How many samples in a row must move away from good before a trend can raise act.
pub(super) const TREND_SAMPLES: usize = 3;

/// Raises to act a sample indicator that is past its watch limit and heading for its act limit
/// faster than the samples come: the last `TREND_SAMPLES` values of the era each further than
/// the one before in the direction the latest lies from good, the latest at watch, and the
/// least-squares line through them, carried on from the latest value at its slope for the time to the next sample due
/// (`horizon_days`, or the samples' own mean spacing if shorter), at or past `act`. Projecting a
/// trend to its alarm limit is the usual estimate of time left in condition monitoring (ISO
/// 13381-1, from memory); asking for a run of moves away, rather than any two samples, keeps the
/// scatter of a lab result from raising it (common practice, no published source). The slope is
/// `physics::stats::linear_trend`'s, checked against scipy.
///
/// The projection must clear `act` by its own standard error, σ·√(1 + step²/Sxx) — the
/// latest reading's scatter and the slope's over the run, ordinary least squares — with σ the
/// readings' scatter, `scatter` of the latest value: a lab's repeatability, so that an oil
/// ageing slowly past watch is not carried past act by the scatter of three results.
///
/// The escalated point carries the projected value and the act limit as its figure. Returns the
/// date the last point's projection is for, when the last point was escalated.
pub(super) fn act_on_trend(
    points: &mut [Graded],
    act: Option<f64>,
    horizon_days: f64,
    scatter: &dyn Fn(f64) -> f64,
) -> Option<DateTime<Utc>> {
    let act = act?;
    // The readings as graded by their limits alone: an escalated point's projection is no
    // reading for the next point's run.
    let read: Vec<Graded> = points.to_vec();
    let mut last_by = None;
    for i in (TREND_SAMPLES - 1)..read.len() {
        last_by = None;
        let run = &read[i + 1 - TREND_SAMPLES..=i];
        let p = read[i];
        if p.state != State::Watch {
            continue;
        }
        let Some(values) = run.iter().map(|g| g.value).collect::<Option<Vec<f64>>>() else {
            continue;
        };
        // Away from good on the latest value's side: a drift may start on the other side of
        // new (a batch a little off its data sheet) and move steadily through it.
        let side = values[values.len() - 1].signum();
        let away: Vec<f64> = values.iter().map(|v| v * side).collect();
        // Each step further from good, and by a move the lab can tell from its own scatter:
        // 46.3, 46.2, then 41.7 cSt is one step (a slip, or a top-up), not a run of three.
        if away.windows(2).any(|w| {
            let step = w[1] - w[0];
            step <= 0.0 || step < scatter(w[1].abs())
        }) {
            continue;
        }
        let first = run[0].at;
        let days = |t: DateTime<Utc>| (t - first).num_seconds() as f64 / 86_400.0;
        let line: Vec<(f64, f64)> = run
            .iter()
            .zip(&away)
            .map(|(g, &v)| (days(g.at), v))
            .collect();
        let Ok(fit) = crate::physics::stats::linear_trend(&line) else {
            continue;
        };
        let spacing = days(p.at) / (TREND_SAMPLES - 1) as f64;
        let step = horizon_days.min(spacing).max(0.0);
        let ahead = away[away.len() - 1] + fit.slope * step;
        // The projection's standard error: the latest reading's scatter, the slope's over the
        // run, and their covariance (`physics::stats::step_ahead_se`).
        let sigma = scatter(away[away.len() - 1].abs());
        let t: Vec<f64> = line.iter().map(|q| q.0).collect();
        let se = crate::physics::stats::step_ahead_se(&t, step, sigma);
        if ahead - se >= act {
            points[i].state = State::Act;
            points[i].value = Some(ahead.copysign(side));
            points[i].limit = Some(act.copysign(side));
            last_by = Some(p.at + chrono::Duration::seconds((step * 86_400.0).round() as i64));
        }
    }
    last_by
}
