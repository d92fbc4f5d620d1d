//! The statistical drift detectors (EWMA and CUSUM against the era's baseline) and the
//! maintenance that restarts them. It marks drift points on checks; flags are raised elsewhere.

use super::*;

/// Maintenance that restarts the detectors and flags of what it addresses: a cooler clean the
/// heat rise and the corrected flow's drift; a repair the flow, leakage and case drain, and the heat rise too (what passed oil
/// to tank — a relief or directional valve — heated it as much as it robbed the stroke); a
/// filter change the cleanliness (its samples before the change no longer stand for the oil). Fluid changes and rebuilds start a
/// new era instead.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Restart {
    pub at: DateTime<Utc>,
    pub event_id: Id,
    pub event: EventKind,
}

impl Restart {
    pub fn addresses(&self, ind: BaselineIndicator) -> bool {
        match self.event {
            // The flow corrected to the reference was read through oil the fouled cooler had
            // thinned, where the correction is least sure (its error grows with the distance
            // from the reference oil): what its detectors summed then does not describe the
            // cooled unit.
            EventKind::CoolerClean => matches!(
                ind,
                BaselineIndicator::HeatRise | BaselineIndicator::CorrectedFlow
            ),
            EventKind::Repair => true,
            _ => false,
        }
    }

    /// The flag kinds it restarts.
    pub fn flag_kinds(&self) -> &'static [crate::health::flags::FlagKind] {
        use crate::health::flags::FlagKind as K;
        match self.event {
            EventKind::CoolerClean => &[K::HeatRise, K::Drift],
            EventKind::Repair => &[
                K::LostFlow,
                K::LeakConductance,
                K::CaseDrain,
                K::HeatRise,
                K::Drift,
            ],
            EventKind::FilterChange => &[K::Cleanliness, K::Filter],
            _ => &[],
        }
    }
}

/// The restarting events of the era, in time order.
pub(super) fn restarts_in(h: &UnitHistory, era: Option<&Era>) -> Vec<Restart> {
    let Some(era) = era else { return Vec::new() };
    h.events
        .iter()
        .filter(|e| {
            matches!(
                e.kind,
                EventKind::CoolerClean | EventKind::Repair | EventKind::FilterChange
            ) && era.contains(e.done_at)
        })
        .map(|e| Restart {
            at: e.done_at,
            event_id: e.id,
            event: e.kind,
        })
        .collect()
}

/// EWMA and one-sided tabular CUSUM of each baselined indicator, on the side that means
/// trouble (flow falling; heat and case drain rising), over the era's checks after those that
/// formed the baseline (all checks of the era for a hand-entered baseline), both started
/// afresh after maintenance that addresses the indicator (`Restart`).
///
/// The baseline median of N checks is itself uncertain (its standard error, `value_se`), and
/// a chart run on an estimated centre as if it were known signals on that error alone
/// (Montgomery discusses the effect of estimated parameters). So the EWMA limits are widened
/// to L·√(σ_z² + se²) — the spread of the difference between the EWMA and the baseline — and
/// the CUSUM only accumulates shifts beyond k·σ + se. A hand-entered baseline is taken as
/// known. A check signals only while its own reading is on the side that means trouble,
/// beyond k·σ + se, so a signal ends with the first normal check once its cause is gone.
pub(super) fn run_detectors(
    points: &mut [CheckPoint],
    baseline: &Baseline,
    limits: &Limits,
    restarts: &[Restart],
    displacement: Option<f64>,
) {
    let lambda = limits.value(LimitKey::EwmaLambda);
    let l = limits.value(LimitKey::EwmaL);
    let k = limits.value(LimitKey::CusumK);
    let hh = limits.value(LimitKey::CusumH);
    let floor_rel = limits.value(LimitKey::MinSpreadPct) / 100.0;
    let floor_heat = limits.value(LimitKey::MinSpreadHeatK);
    // Flow is watched corrected for the oil's temperature and the job pressure where that can
    // be done, else as timed; leak conductance carries the same information as the corrected
    // flow with the scatter of a small difference, so it is not watched twice.
    let watched: Vec<&super::baseline::BaselineValue> = baseline
        .values
        .iter()
        .filter(|b| match b.indicator {
            BaselineIndicator::LeakConductance => false,
            BaselineIndicator::EffectiveFlow => {
                baseline.get(BaselineIndicator::CorrectedFlow).is_none()
            }
            _ => true,
        })
        .collect();
    for b in watched {
        let falling = matches!(
            b.indicator,
            BaselineIndicator::EffectiveFlow | BaselineIndicator::CorrectedFlow
        );
        let floor = match b.indicator {
            BaselineIndicator::HeatRise => floor_heat,
            _ => floor_rel * b.value.abs(),
        };
        let sigma = b.spread.max(floor);
        if sigma.is_nan() || sigma <= 0.0 {
            continue;
        }
        let se = match &b.source {
            BaselineSource::Checks { check_ids, .. } if !check_ids.is_empty() => {
                baseline::MEDIAN_SE_FACTOR * sigma / (check_ids.len() as f64).sqrt()
            }
            _ => 0.0,
        };
        let start = || {
            Some((
                stats::Ewma::with_params(b.value, sigma, lambda, l).ok()?,
                stats::Cusum::with_params(b.value, sigma, k + se / sigma, hh).ok()?,
            ))
        };
        let Some((mut ewma, mut cusum)) = start() else {
            continue;
        };
        let bad = if falling {
            stats::Side::Low
        } else {
            stats::Side::High
        };
        let manual = matches!(b.source, BaselineSource::Manual { .. });
        // The watch limit of the indicator's own flag, in its terms (% of the baseline, or K).
        let material_at = match b.indicator {
            BaselineIndicator::EffectiveFlow | BaselineIndicator::CorrectedFlow => {
                limits.get(LimitKey::LostFlowPct).watch
            }
            BaselineIndicator::CaseDrain => limits.get(LimitKey::CaseDrainRisePct).watch,
            BaselineIndicator::HeatRise => limits.get(LimitKey::HeatRiseDriftK).watch,
            BaselineIndicator::LeakConductance => None,
        };
        let mut run = 0usize;
        let mut prev_at: Option<DateTime<Utc>> = None;
        for p in points.iter_mut().filter(|p| manual || !p.in_baseline) {
            let Some(mut x) = value_of(p, b.indicator) else {
                continue;
            };
            // A check corrected from thicker oil or a lighter job than the baseline's carries
            // the stopwatch's scatter k times over (k = the leakage's scale to the reference,
            // `flow_scale`), while the limits rest on the baseline's own scatter: its distance
            // from the baseline is weighed by 1/k, as a chart weighs a reading by its own
            // spread (the standardised statistic of an EWMA with unequal variances,
            // Montgomery), so a baseline formed in summer does not read every winter check as
            // a drift. A check corrected from thinner oil keeps its full weight.
            if b.indicator == BaselineIndicator::CorrectedFlow {
                if let Some(k) = p.flow_scale.filter(|k| *k > 1.0 && k.is_finite()) {
                    x = b.value + (x - b.value) / k;
                }
            }
            if let Some(from) = prev_at {
                if restarts
                    .iter()
                    .any(|r| r.at > from && r.at <= p.at && r.addresses(b.indicator))
                {
                    if let Some((e, c)) = start() {
                        ewma = e;
                        cusum = c;
                    }
                    run = 0;
                }
            }
            prev_at = Some(p.at);
            let (Ok(e), Ok(c)) = (ewma.update(x), cusum.update(x)) else {
                continue;
            };
            // σ_z of this step, read back from the chart's own limit: (upper − μ0)/L.
            let sigma_z = (e.upper - b.value) / l;
            let half = l * (sigma_z * sigma_z + se * se).sqrt();
            let (z, ewma_limit, sum) = if falling {
                (e.z, b.value - half, c.lo)
            } else {
                (e.z, b.value + half, c.hi)
            };
            let beyond = if falling {
                z < ewma_limit
            } else {
                z > ewma_limit
            };
            let margin = k * sigma + se;
            let reading_bad = if falling {
                x < b.value - margin
            } else {
                x > b.value + margin
            };
            let signal = (beyond || c.signal == Some(bad)) && reading_bad;
            run = if signal { run + 1 } else { 0 };
            // …and by at least two of the baseline's own spreads, so that a unit whose
            // readings scatter widely (a heat rise that follows its jobs) needs a shift beyond
            // its own scatter. A corrected flow's shift that passes the spreads at the
            // reference may reach the watch limit at the check's own oil and pressure instead:
            // a pump worn by the same leakage loses more of its stroke in a hot week, and that
            // is what the press feels.
            let here = match (b.indicator, falling) {
                (BaselineIndicator::CorrectedFlow, true) => {
                    shift_at_check(b.value, z, displacement, p.flow_scale)
                }
                _ => None,
            };
            let material = match (b.indicator, material_at) {
                (_, None) => false,
                (BaselineIndicator::HeatRise, Some(w)) => z - b.value >= w.max(2.0 * sigma),
                (_, Some(w)) if b.value.abs() > 0.0 => {
                    let shift_pct = if falling {
                        (b.value - z) / b.value * 100.0
                    } else {
                        (z - b.value) / b.value * 100.0
                    };
                    shift_pct >= 2.0 * sigma / b.value.abs() * 100.0
                        && shift_pct.max(here.unwrap_or(f64::NEG_INFINITY)) >= w
                }
                _ => false,
            };
            p.drift.push(DriftPoint {
                indicator: b.indicator,
                ewma: z,
                ewma_limit,
                cusum_sigma: sum / sigma,
                signal,
                run,
                material,
                shift_here_pct: here,
            });
        }
    }
}

/// The shift of a corrected flow's EWMA `z` below its baseline `base` (both at the reference
/// conditions), as the share of flow it takes at this check's own oil and pressure, %: a
/// leakage grown by Δ at the reference is Δ/k at a check whose leakage scales by k to the
/// reference (`flow_scale`), against the sound pump's D − (D − base)/k there. Only for a
/// check in thinner oil or at a harder job than the reference (k < 1), where the same wear
/// robs the stroke of more; elsewhere the reference's own figure stands.
fn shift_at_check(base: f64, z: f64, d: Option<f64>, k: Option<f64>) -> Option<f64> {
    let (d, k) = (d?, k?);
    if !(k > 0.0 && k < 1.0 && d.is_finite()) {
        return None;
    }
    let sound = d - (d - base) / k;
    (sound > 0.0).then(|| (base - z) / k / sound * 100.0)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::health::baseline::BaselineValue;
    use crate::health::testutil::t;

    /// A baseline of one indicator entered by hand: known, no standard error.
    fn by_hand(indicator: BaselineIndicator, value: f64, spread: f64) -> Baseline {
        Baseline {
            values: vec![BaselineValue {
                indicator,
                value,
                spread,
                value_se: 0.0,
                complete: true,
                source: BaselineSource::Manual {
                    by: "test".into(),
                    at: t("2024-01-01"),
                },
            }],
            closed_at: None,
        }
    }

    /// Ten checks whose flow, corrected to the baseline's oil, reads `reading` against a
    /// baseline of 100 (entered by hand, spread 2.5: known, no standard error), each corrected
    /// by the scale `k`, with the displacement `d`.
    fn corrected_run(reading: f64, k: f64, d: Option<f64>) -> Vec<CheckPoint> {
        let b = by_hand(BaselineIndicator::CorrectedFlow, 100.0, 2.5);
        let mut pts: Vec<CheckPoint> = (0..10)
            .map(|w| CheckPoint {
                check_id: w,
                at: t("2024-01-08") + chrono::Duration::weeks(w),
                corrected_flow: Some(reading),
                flow_scale: Some(k),
                ..CheckPoint::default()
            })
            .collect();
        run_detectors(&mut pts, &b, &Limits::builtin(), &[], d);
        pts
    }

    /// Readings of 90 (see `corrected_run`), no displacement.
    fn drifted(k: f64) -> Vec<CheckPoint> {
        corrected_run(90.0, k, None)
    }

    #[test]
    fn a_check_corrected_from_thick_oil_weighs_by_its_own_scatter() {
        // Worked by hand, λ = 0.25: an EWMA of a constant x from 100 stands at
        // 100 − (100 − x)(1 − 0.75ⁿ) after n checks, 1 − 0.75¹⁰ = 0.94369. At the baseline's
        // own oil (k = 1) the tenth reads 90.56, 9.44 % under the baseline: past the 8 % watch
        // limit of lost flow (and two spreads, 5 %), a material drift.
        let at_ref = drifted(1.0);
        let last = at_ref[9].drift[0].clone();
        assert!(
            (last.ewma - (100.0 - 10.0 * 0.943_686_5)).abs() < 1e-4,
            "{last:?}"
        );
        assert!(last.material && last.signal, "{last:?}");
        // Corrected from oil three times as thick: each reading is 10/3 under, the EWMA
        // 100 − 3.333 · 0.94369 = 96.85, 3.15 % under: not material.
        let thick = drifted(3.0);
        let last = thick[9].drift[0].clone();
        assert!(
            (last.ewma - (100.0 - 10.0 / 3.0 * 0.943_686_5)).abs() < 1e-4,
            "{last:?}"
        );
        assert!(!last.material, "{last:?}");
        // From thinner oil (k < 1) a reading keeps its full weight.
        let thin = drifted(0.5);
        assert_eq!(thin[9].drift[0].ewma, at_ref[9].drift[0].ewma);
    }

    #[test]
    fn a_shift_at_the_reference_is_weighed_again_at_the_checks_own_oil() {
        // Worked by hand: a baseline of 100 at the reference, an EWMA of 96, displacement
        // 110 and a check whose leakage is 1/0.4 = 2.5 times the reference's (k = 0.4). The
        // sound pump gives 110 − (110 − 100)/0.4 = 85 there, the shift is 4/0.4 = 10, and
        // 10/85 = 11.7647 %.
        let h = shift_at_check(100.0, 96.0, Some(110.0), Some(0.4)).expect("k < 1");
        assert!((h - 1000.0 / 85.0).abs() < 1e-9, "{h}");
        // At the reference's oil or thicker, and without a displacement, nothing.
        assert_eq!(shift_at_check(100.0, 96.0, Some(110.0), Some(1.0)), None);
        assert_eq!(shift_at_check(100.0, 96.0, Some(110.0), Some(1.6)), None);
        assert_eq!(shift_at_check(100.0, 96.0, None, Some(0.4)), None);
        // A sound pump that would give nothing there (110 − 10/0.08 < 0): no share to give.
        assert_eq!(shift_at_check(100.0, 96.0, Some(110.0), Some(0.08)), None);
    }

    /// The tenth of ten readings of 93 (see `corrected_run`): its drift point.
    fn shifted_seven(k: f64, d: Option<f64>) -> DriftPoint {
        corrected_run(93.0, k, d)[9].drift[0].clone()
    }

    #[test]
    fn a_real_shift_in_hot_oil_is_material_where_the_stroke_feels_it() {
        // The EWMA after ten checks: 100 − 7 · 0.94369 = 93.39 (λ = 0.25, by hand), 6.61 %
        // under the baseline: past two spreads (2 · 2.5 %) but short of the 8 % watch limit
        // of lost flow at the reference.
        let at_ref = shifted_seven(1.0, Some(110.0));
        assert!(at_ref.signal && !at_ref.material, "{at_ref:?}");
        assert_eq!(at_ref.shift_here_pct, None);
        // At k = 0.4 the sound pump gives 110 − 10/0.4 = 85 and the shift is 6.6058/0.4 =
        // 16.51, 19.43 % of it: material.
        let hot = shifted_seven(0.4, Some(110.0));
        let here = hot.shift_here_pct.expect("a share at the check");
        assert!(
            (here - (100.0 - hot.ewma) / 0.4 / 85.0 * 100.0).abs() < 1e-9,
            "{hot:?}"
        );
        assert!((here - 19.429).abs() < 0.001, "{here}");
        assert!(hot.material, "{hot:?}");
        // Without a displacement the share cannot be taken: the reference's figure stands.
        assert!(!shifted_seven(0.4, None).material);
    }

    /// Seven weekly checks of one indicator against its baseline `b` — the first six reading
    /// `before`, the seventh `after` (`set` puts a reading on a check) — with `event` done two
    /// days after the sixth, run through the detectors; and the restart.
    fn six_then_event(
        b: &Baseline,
        set: fn(&mut CheckPoint, f64),
        (before, after): (f64, f64),
        event: EventKind,
    ) -> (Vec<CheckPoint>, Restart) {
        let mut pts: Vec<CheckPoint> = (0..7)
            .map(|w| {
                let mut p = CheckPoint {
                    check_id: w,
                    at: t("2024-01-08") + chrono::Duration::weeks(w),
                    ..CheckPoint::default()
                };
                set(&mut p, if w < 6 { before } else { after });
                p
            })
            .collect();
        let restart = Restart {
            at: pts[5].at + chrono::Duration::days(2),
            event_id: 1,
            event,
        };
        run_detectors(
            &mut pts,
            b,
            &Limits::builtin(),
            std::slice::from_ref(&restart),
            None,
        );
        (pts, restart)
    }

    #[test]
    fn a_repair_restarts_the_heat_rise_detectors() {
        // A heat rise of 30 K against a baseline of 20 K (entered by hand) for six checks, a
        // repair (a relief valve that passed oil), then the first check after it at 20 K: the
        // EWMA starts afresh from the baseline, 20 + 0.2 · (20 − 20) = 20 (by hand), where
        // without the restart it would carry the shift on.
        let b = by_hand(BaselineIndicator::HeatRise, 20.0, 2.0);
        let heat = |p: &mut CheckPoint, v: f64| {
            p.heat_rise_corrected = Some(v);
            p.heat_rise = Some(v);
        };
        let (pts, repair) = six_then_event(&b, heat, (30.0, 20.0), EventKind::Repair);
        assert!(repair
            .flag_kinds()
            .contains(&crate::health::flags::FlagKind::HeatRise));
        assert!(pts[5].drift[0].ewma > 25.0, "{:?}", pts[5].drift);
        assert!(
            (pts[6].drift[0].ewma - 20.0).abs() < 1e-9,
            "{:?}",
            pts[6].drift
        );
        assert!(!pts[6].drift[0].signal);
    }

    #[test]
    fn a_cooler_clean_restarts_the_corrected_flows_detectors_too() {
        // Six checks whose flow, corrected to the baseline's oil, reads 95 against a baseline
        // of 100 (entered by hand, spread 2.5), then a cooler clean and a check at 100: the
        // EWMA starts afresh from the baseline, 100 + 0.2 · (100 − 100) = 100 (by hand).
        // Those six were read through oil the fouled cooler had thinned, where the
        // correction is least sure.
        let b = by_hand(BaselineIndicator::CorrectedFlow, 100.0, 2.5);
        let flow = |p: &mut CheckPoint, v: f64| {
            p.corrected_flow = Some(v);
            p.flow_scale = Some(1.0);
        };
        let (pts, clean) = six_then_event(&b, flow, (95.0, 100.0), EventKind::CoolerClean);
        assert!(pts[5].drift[0].ewma < 97.5, "{:?}", pts[5].drift);
        assert!(
            (pts[6].drift[0].ewma - 100.0).abs() < 1e-9,
            "{:?}",
            pts[6].drift
        );
        // A clean touches neither the pump's leakage nor its case drain.
        assert!(clean.addresses(BaselineIndicator::CorrectedFlow));
        assert!(!clean.addresses(BaselineIndicator::CaseDrain));
        assert!(!clean.addresses(BaselineIndicator::EffectiveFlow));
    }
}
