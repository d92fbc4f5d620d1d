//! How consecutive checks are read: a sudden loss of flow over two checks, a step in flow and
//! heat that closes a growing baseline, and the confirmed level a flag judges. No baseline
//! and no limits of its own: it is given both.

use super::*;

/// The sudden loss of two checks in a row, % below the checks before them, from the earlier
/// one's loss `first` and the later one's `second`: the later check's, where the earlier one
/// already showed at least the watch limit `watch` (a step seen at once and confirmed a check
/// later: watch may show at once, act needs the second check); else the smaller of the two,
/// so that one slow check never makes a sudden loss on its own.
pub fn sudden_loss(first: f64, second: f64, watch: Option<f64>) -> f64 {
    match watch {
        Some(w) if first >= w => second,
        _ => first.min(second),
    }
}

/// Where a step in flow and heat began, if one did: the first of two checks in a row whose
/// timed flow is below, and whose heat rise at the same pressure is above, the median of up
/// to `SUDDEN_BEFORE` checks before them, each by at least the watch limit of its own flag
/// (lost flow, heat-rise drift). That is how a relief valve, or any new path to tank, that
/// starts to pass oil shows at once: what it passes is missing from the stroke and turned into
/// heat at the same checks. A hot week moves oil and hall together and leaves the heat rise;
/// a heavier job moves the heat rise with the pressure, which the comparison at the same
/// pressure (heat load ∝ p) takes out. Judged on the readings against the checks just before
/// them, so it does not depend on the baseline it decides about (common practice, no
/// published source).
pub fn step_at(
    points: &[CheckPoint],
    limits: &Limits,
    restarts: &[Restart],
) -> Option<DateTime<Utc>> {
    /// One check with all three readings.
    struct Seen {
        at: DateTime<Utc>,
        flow: f64,
        rise: f64,
        pressure: f64,
    }
    let flow_watch = limits.get(LimitKey::LostFlowPct).watch?;
    let heat_watch = limits.get(LimitKey::HeatRiseDriftK).watch?;
    let mut seen: Vec<Seen> = Vec::new();
    for p in points {
        let (Some(flow), Some(rise), Some(pressure)) = (p.effective_flow, p.heat_rise, p.pressure)
        else {
            continue;
        };
        if restarts.iter().any(|r| {
            r.addresses(BaselineIndicator::EffectiveFlow)
                && seen.last().is_some_and(|l| r.at > l.at)
        }) {
            seen.clear();
        }
        seen.push(Seen {
            at: p.at,
            flow,
            rise,
            pressure,
        });
        let n = seen.len();
        if n < 2 + SUDDEN_BEFORE_MIN {
            continue;
        }
        let before = &seen[n.saturating_sub(2 + SUDDEN_BEFORE)..n - 2];
        let med =
            |f: &dyn Fn(&Seen) -> f64| stats::median(&before.iter().map(f).collect::<Vec<_>>());
        let (Some(q_ref), Some(p_ref)) = (med(&|s| s.flow), med(&|s| s.pressure)) else {
            continue;
        };
        if q_ref <= 0.0 || p_ref <= 0.0 {
            continue;
        }
        let heat_at_ref = |s: &Seen| s.rise * p_ref / s.pressure;
        let Some(d_ref) = med(&heat_at_ref) else {
            continue;
        };
        let stepped = |s: &Seen| {
            (1.0 - s.flow / q_ref) * 100.0 >= flow_watch && heat_at_ref(s) - d_ref >= heat_watch
        };
        if stepped(&seen[n - 2]) && stepped(&seen[n - 1]) {
            return Some(seen[n - 2].at);
        }
    }
    None
}

/// The level a flag judges from the last readings of an indicator whose high values mean
/// trouble: the median of the last 3, and of only 2 the lower — so a single reading never
/// raises a flag on its own, and one normal reading after two takes it down.
pub fn confirmed_level(values: &[f64]) -> Option<f64> {
    match values.len() {
        0 | 1 => None,
        2 => Some(values[0].min(values[1])),
        _ => median_last(values),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A check `week` weeks in: timed flow `q` L/min, heat rise `rise` K, `bar`.
    fn stepping(week: i64, q: f64, rise: f64, bar: f64) -> CheckPoint {
        CheckPoint {
            check_id: week,
            at: crate::health::testutil::t("2024-01-01") + chrono::Duration::weeks(week),
            effective_flow: Some(q / 60_000.0),
            heat_rise: Some(rise),
            pressure: Some(bar * 1.0e5),
            ..CheckPoint::default()
        }
    }

    #[test]
    fn a_step_in_flow_and_heat_at_two_checks_in_a_row_is_found_at_its_first() {
        // Six checks at 100 L/min and 20 K over ambient at 100 bar, then a relief valve passes
        // oil: 90 L/min (10 % below, past the 8 % watch limit) and 26 K (+6 K, past the 5 K
        // watch limit) at two checks in a row (worked by hand).
        let l = Limits::builtin();
        let mut pts: Vec<CheckPoint> = (0..6).map(|w| stepping(w, 100.0, 20.0, 100.0)).collect();
        pts.push(stepping(6, 90.0, 26.0, 100.0));
        assert_eq!(step_at(&pts, &l, &[]), None, "one check is no step yet");
        pts.push(stepping(7, 90.0, 26.0, 100.0));
        assert_eq!(step_at(&pts, &l, &[]), Some(pts[6].at));
        // A repair between the checks before and the step starts the comparison afresh: too
        // few checks after it to judge.
        let repair = Restart {
            at: pts[5].at + chrono::Duration::days(1),
            event_id: 1,
            event: EventKind::Repair,
        };
        assert_eq!(step_at(&pts, &l, &[repair]), None);
    }

    #[test]
    fn a_hot_week_a_heavier_job_or_one_slow_check_is_no_step() {
        let l = Limits::builtin();
        let before: Vec<CheckPoint> = (0..6).map(|w| stepping(w, 100.0, 20.0, 100.0)).collect();
        // (why, the two checks as (L/min, K over ambient, bar)).
        for (why, a, b) in [
            (
                "a hot hall: thin oil, the flow down 10 %, the heat rise as before",
                (90.0, 20.0, 100.0),
                (90.0, 21.0, 100.0),
            ),
            (
                "a job at 130 bar: 26 K is 20 K at 100 bar (heat load ∝ p), flow down 10 %",
                (90.0, 26.0, 130.0),
                (90.0, 26.0, 130.0),
            ),
            (
                "heat up with the flow as before: a fouling cooler, not a path to tank",
                (99.0, 30.0, 100.0),
                (99.0, 30.0, 100.0),
            ),
            (
                "a step at one check and back at the next",
                (90.0, 26.0, 100.0),
                (100.0, 20.0, 100.0),
            ),
        ] {
            let mut v = before.clone();
            v.push(stepping(6, a.0, a.1, a.2));
            v.push(stepping(7, b.0, b.1, b.2));
            assert_eq!(step_at(&v, &l, &[]), None, "{why}");
        }
    }

    #[test]
    fn a_sudden_loss_needs_the_first_check_at_watch_to_take_the_second() {
        // Limits 8 % watch: 9 then 20 → 20 (a step seen, then confirmed); 5 then 20 → 5
        // (one slow check alone); 20 then 16 → 16; no watch limit → the smaller.
        assert_eq!(sudden_loss(9.0, 20.0, Some(8.0)), 20.0);
        assert_eq!(sudden_loss(5.0, 20.0, Some(8.0)), 5.0);
        assert_eq!(sudden_loss(20.0, 16.0, Some(8.0)), 16.0);
        assert_eq!(sudden_loss(9.0, 20.0, None), 9.0);
    }
}
