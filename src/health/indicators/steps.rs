//! How consecutive checks are read: a sudden loss of flow over two checks, a step in flow and
//! heat that closes a growing baseline, and the confirmed level a flag judges. No baseline
//! and no limits of its own: it is given both.

use super::*;

/// The sudden loss of two checks in a row, % below the checks before them, from the earlier
/// one's loss `first` and the later one's `second`. Where the earlier one already showed at
/// least the watch limit `watch` (a step seen at once and confirmed a check later: watch may
/// show at once, act needs the second check), the later check's; and where the later one is
/// beyond the watch limit too, both stand for the same step, and where the earlier read more
/// their mean weighs it with half the stopwatch's variance of either (a bypass of 18 % timed
/// at 20.5 and then 14.8 % is 17.65 %). Else the smaller of the two, so that one slow check
/// never makes a sudden loss on its own (a slip of the first check's stroke time included: a
/// second check within the watch limit undoes it).
pub fn sudden_loss(first: f64, second: f64, watch: Option<f64>) -> f64 {
    match watch {
        Some(w) if first >= w && second >= w => second.max((first + second) / 2.0),
        Some(w) if first >= w => second,
        _ => first.min(second),
    }
}

/// One timed stroke as the sudden loss reads it, SI: the timed flow `q`, the flow it is
/// compared by where the hall explains nothing (`flow`: the corrected flow where the leakage
/// is resolved, else the timed one), and where read the working pressure `p`, the oil's
/// viscosity `nu` at its temperature and the hall temperature `ambient`.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct Stroke {
    pub q: f64,
    pub flow: f64,
    pub p: Option<f64>,
    pub nu: Option<f64>,
    pub ambient: Option<f64>,
    /// Where `flow` is the corrected flow: the leakage scale k it was moved by (`flow_scale`).
    pub scale: Option<f64>,
    /// The oil's viscosity as far as a sound unit's own heat explains it: `nu`, or where the
    /// oil reads hotter than a sound unit settles at this pressure in this hall
    /// (`HeatLoad::settled_rise`), the settled oil's. None where the heat model cannot tell.
    pub nu_sound: Option<f64>,
}

impl Stroke {
    /// The leakage driver p/ν of laminar gap flow.
    fn x(&self) -> Option<f64> {
        Some(self.p? / self.nu.filter(|n| *n > 0.0)?).filter(|x| x.is_finite() && *x > 0.0)
    }

    /// p/ν with the oil a sound unit's own heat explains (`nu_sound`).
    fn x_sound(&self) -> Option<f64> {
        Some(self.p? / self.nu_sound.filter(|n| *n > 0.0)?).filter(|x| x.is_finite() && *x > 0.0)
    }
}

/// Whether `now`'s job cannot be told against the checks `before` it: its own pressure was
/// not read, or was held as a slip, where most of theirs were read. A harder job reads as a
/// loss against them (150 bar typed as 15 on a check 30 % above the jobs before), so such a
/// check's loss, the plain comparison, shows at watch at most and confirms no step, as a
/// questioned reading feeds no detector. A unit whose pressure is never read is compared on
/// its flows as usual.
pub fn job_unknown(before: &[Stroke], now: &Stroke) -> bool {
    now.p.is_none() && 2 * before.iter().filter(|s| s.p.is_some()).count() > before.len()
}

/// How far below what the checks `before` give (%) one stroke `now` is. With the displacement
/// `d` known and every check's pressure read, the expected flow is `d` less the leakage of the
/// checks before — the median of their conductances (d − q)/(p/ν), never below zero, a check
/// whose oil was not read (or was held as a slip) taken at the oil a sound unit settles at —
/// moved to `now`'s pressure and to the oil a sound unit's own heat explains
/// (`Stroke::nu_sound`): laminar gap leakage goes as p/ν (Hagen–Poiseuille), so a harder job,
/// and the warmer oil it brings, take their share from the expectation, while a relief valve
/// starting to pass oil shows in full. In a hall warmer than at the checks before (the median
/// of more than half of them) by at least `warmer` K, the oil as read is taken: a hot spell
/// thins it. Else (the heat model cannot tell, or the oil reads well above what a sound unit
/// settles at) `now.flow` against the median of theirs: a unit that heats its own oil (a
/// fouling cooler, a path to tank) loses the flow its thinner oil leaks as part of its fault;
/// a corrected flow from oil thicker than the reference's is weighed by 1/k there. None with
/// no reference.
pub fn loss_against(before: &[Stroke], now: &Stroke, d: Option<f64>, warmer: f64) -> Option<f64> {
    // The hall of the checks before: the median of the air temperatures read, where most of
    // them were (one the screen held, a slip such as 92.9 °C for 29.9, leaves the rest).
    let halls: Vec<f64> = before.iter().filter_map(|s| s.ambient).collect();
    let hall = (2 * halls.len() > before.len())
        .then(|| stats::median(&halls))
        .flatten();
    let hot_spell = match (now.ambient, hall) {
        (Some(a), Some(m)) => a - m >= warmer,
        _ => false,
    };
    // The conductances of the checks before whose leakage can be told: a check whose
    // pressure was not read (or was held as a slip) has none and is left out, as a questioned
    // reading feeds no detector, while at least `SUDDEN_BEFORE_MIN` of them remain (all of
    // them, of fewer checks); else none.
    let gs: Option<Vec<f64>> = d
        .map(|d| {
            before
                .iter()
                .filter_map(|s| Some(((d - s.q) / s.x().or(s.x_sound())?).max(0.0)))
                .collect::<Vec<f64>>()
        })
        .filter(|g| g.len() >= SUDDEN_BEFORE_MIN.min(before.len()));
    let x_now = if hot_spell {
        now.x().or(now.x_sound())
    } else {
        now.x_sound()
    };
    let moved = match (hot_spell || now.nu_sound.is_some(), d, gs, x_now) {
        (true, Some(d), Some(gs), Some(x)) => Some(stats::median(&gs).map(|g| d - g * x)),
        _ => None,
    };
    let (expected, q, weigh) = match moved {
        Some(e) => (e, now.q, 1.0),
        None => (
            stats::median(&before.iter().map(|s| s.flow).collect::<Vec<_>>()),
            now.flow,
            // A corrected flow from oil thicker than the reference's carries the stopwatch's
            // scatter k times over (its leakage was multiplied by k): its departure is weighed
            // by 1/k, as the leak conductance and the drift detectors weigh it.
            match now.scale {
                Some(k) if k > 1.0 && k.is_finite() => 1.0 / k,
                _ => 1.0,
            },
        ),
    };
    expected
        .filter(|e| *e > 0.0)
        .map(|e| (1.0 - q / e) * 100.0 * weigh)
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
    fn a_sudden_loss_in_a_hot_spell_is_read_against_the_leakage_before() {
        // Worked by hand. Displacement 100, pressure 1; an oil whose viscosity is 1/(T − 250)
        // (any falling line will do for the arithmetic). Four checks at 95 in a hall at 280 K
        // with the oil at 300 K: ν = 1/50, p/ν = 50, conductance 5/50 = 0.1.
        let s = |q: f64, ambient: f64, oil: f64| Stroke {
            q,
            flow: q,
            p: Some(1.0),
            nu: Some(1.0 / (oil - 250.0)),
            ambient: Some(ambient),
            scale: None,
            nu_sound: None,
        };
        let before = [s(95.0, 280.0, 300.0); 4];
        // A hot spell, the hall 10 K warmer and the oil at 350 K: p/ν = 100, leakage 10,
        // 90 expected, 90 timed: no loss.
        let hot = loss_against(&before, &s(90.0, 290.0, 350.0), Some(100.0), 5.0).unwrap();
        assert!(hot.abs() < 1e-9, "{hot}");
        // A relief valve passing oil in that hot spell: 70 timed, 1 − 70/90 = 22.22 % below.
        let bypass = loss_against(&before, &s(70.0, 290.0, 350.0), Some(100.0), 5.0).unwrap();
        assert!((bypass - 22.222).abs() < 1e-3, "{bypass}");
        // The same hot oil in the same hall (a unit heating its own oil): against the flow
        // before, 1 − 90/95 = 5.263 %.
        let own = loss_against(&before, &s(90.0, 282.0, 350.0), Some(100.0), 5.0).unwrap();
        assert!((own - 5.263).abs() < 1e-3, "{own}");
        // No displacement, or a check before without its oil: the same plain reading.
        let plain = loss_against(&before, &s(90.0, 290.0, 350.0), None, 5.0);
        assert_eq!(plain, Some(own));
        let mut gap = before;
        gap[0].nu = None;
        assert_eq!(
            loss_against(&gap, &s(90.0, 290.0, 350.0), Some(100.0), 5.0),
            plain
        );
        // Six checks before, one without its pressure (not read, or held as a slip): its
        // leakage cannot be told and it is left out; the five others give the same
        // expectation, and the hot spell is read as before. With three of them out, fewer than
        // SUDDEN_BEFORE_MIN remain: the plain reading.
        let mut six = [s(95.0, 280.0, 300.0); 6];
        six[2].p = None;
        let moved = loss_against(&six, &s(90.0, 290.0, 350.0), Some(100.0), 5.0).unwrap();
        assert!(moved.abs() < 1e-9, "{moved}");
        six[0].p = None;
        six[4].p = None;
        assert_eq!(
            loss_against(&six, &s(90.0, 290.0, 350.0), Some(100.0), 5.0),
            plain
        );
        // One check before without its hall (the screen held a slip of it): the hall is the
        // median of the other three, and the hot spell is read as before.
        let mut held_air = before;
        held_air[1].ambient = None;
        let again = loss_against(&held_air, &s(90.0, 290.0, 350.0), Some(100.0), 5.0).unwrap();
        assert!(again.abs() < 1e-9, "{again}");
        // With most of them without it there is no hall to compare: the plain reading.
        held_air[0].ambient = None;
        held_air[2].ambient = None;
        assert_eq!(
            loss_against(&held_air, &s(90.0, 290.0, 350.0), Some(100.0), 5.0),
            Some(own)
        );
        // Timed flows above the displacement (negative conductance) count as no leakage.
        let over = [s(101.0, 280.0, 300.0); 4];
        let none = loss_against(&over, &s(90.0, 290.0, 350.0), Some(100.0), 5.0).unwrap();
        assert!((none - 10.0).abs() < 1e-9, "{none}");
    }

    #[test]
    fn a_sudden_loss_of_a_corrected_flow_from_thick_oil_is_weighed_by_its_scale() {
        // By hand: four corrected flows of 100 before, then 80 corrected from oil whose
        // leakage was scaled by k = 2 to the reference: 20 % below, weighed by 1/2: 10 %. From
        // thinner oil (k = 0.5), or a timed flow (no scale), it stands at 20 %.
        let s = |flow: f64, scale: Option<f64>| Stroke {
            q: flow,
            flow,
            p: Some(1.0),
            nu: Some(1.0),
            ambient: Some(290.0),
            scale,
            nu_sound: None,
        };
        let before = [s(100.0, Some(1.0)); 4];
        let at = |k: Option<f64>| loss_against(&before, &s(80.0, k), Some(110.0), 5.0).unwrap();
        assert!((at(Some(2.0)) - 10.0).abs() < 1e-9, "{}", at(Some(2.0)));
        assert!((at(Some(0.5)) - 20.0).abs() < 1e-9, "{}", at(Some(0.5)));
        assert!((at(None) - 20.0).abs() < 1e-9, "{}", at(None));
    }

    #[test]
    fn a_sudden_loss_needs_the_first_check_at_watch_to_take_the_second() {
        // Limits 8 % watch (by hand): 9 then 20 → 20 (a step seen, then confirmed, reading
        // more); 5 then 20 → 5 (one slow check alone); 20 then 16 → their mean, 18; 20.5 then
        // 14.8 → 17.65; 30 then 6 → 6 (the second undoes the first: a slip, or no step); no
        // watch limit → the smaller.
        assert_eq!(sudden_loss(9.0, 20.0, Some(8.0)), 20.0);
        assert_eq!(sudden_loss(5.0, 20.0, Some(8.0)), 5.0);
        assert_eq!(sudden_loss(20.0, 16.0, Some(8.0)), 18.0);
        assert!((sudden_loss(20.5, 14.8, Some(8.0)) - 17.65).abs() < 1e-12);
        assert_eq!(sudden_loss(30.0, 6.0, Some(8.0)), 6.0);
        assert_eq!(sudden_loss(9.0, 20.0, None), 9.0);
    }

    #[test]
    fn a_harder_job_takes_its_share_from_a_sudden_loss_expectation() {
        // Worked by hand, as the hot-spell case: displacement 100, four checks at 95 with
        // p/ν = 50 (conductance 0.1), all in the same hall. A job at 1.4 times the pressure
        // with the oil a sound unit settles at: p/ν = 70, leakage 7, 93 expected; 93 timed is
        // no loss, where against the flow before it reads 1 − 93/95 = 2.105 %.
        let s = |q: f64, p: f64, nu_sound: Option<f64>| Stroke {
            q,
            flow: q,
            p: Some(p),
            nu: Some(1.0 / 50.0),
            ambient: Some(290.0),
            scale: None,
            nu_sound,
        };
        let before = [s(95.0, 1.0, Some(1.0 / 50.0)); 4];
        let job = loss_against(&before, &s(93.0, 1.4, Some(1.0 / 50.0)), Some(100.0), 5.0);
        assert!(job.is_some_and(|l| l.abs() < 1e-9), "{job:?}");
        // Where the heat model cannot tell (or the oil reads well above a sound unit's), the
        // flow before is the expectation.
        let plain = loss_against(&before, &s(93.0, 1.4, None), Some(100.0), 5.0).unwrap();
        assert!((plain - 200.0 / 95.0).abs() < 1e-9, "{plain}");
        // A relief valve passing oil at that job: 73 timed, 1 − 73/93 = 21.51 %.
        let bypass = loss_against(&before, &s(73.0, 1.4, Some(1.0 / 50.0)), Some(100.0), 5.0);
        assert!(
            bypass.is_some_and(|l| (l - 2000.0 / 93.0).abs() < 1e-9),
            "{bypass:?}"
        );
        // The same check with its pressure held (or not read): its job cannot be told, and it
        // is compared with the flow before it, reading the harder job as 2.1 %.
        let held = Stroke {
            p: None,
            ..s(93.0, 1.4, Some(1.0 / 50.0))
        };
        assert!(job_unknown(&before, &held));
        let plain_held = loss_against(&before, &held, Some(100.0), 5.0).unwrap();
        assert!((plain_held - 200.0 / 95.0).abs() < 1e-9, "{plain_held}");
        // A unit whose pressure is never read is compared on its flows.
        let unread = |q: f64| Stroke {
            p: None,
            ..s(q, 1.0, None)
        };
        assert!(!job_unknown(&[unread(95.0); 4], &unread(93.0)));
        let never = loss_against(&[unread(95.0); 4], &unread(93.0), Some(100.0), 5.0).unwrap();
        assert!((never - 200.0 / 95.0).abs() < 1e-9, "{never}");
    }
}
