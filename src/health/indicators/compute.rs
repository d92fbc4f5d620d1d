//! One unit's indicators over the era in force, computed stage by stage ([`compute`]): the
//! raw per-check values, the flow model (reference conditions, leakage fit, the corrections),
//! the era's baseline, the heat load, every check against the baseline, the drift detectors,
//! whether the leakage can be resolved, the sudden losses and the samples. Pure, as the rest of
//! the engine; what each figure means is on the types in `indicators`.

use super::*;

/// What the stages after the raw readings share.
struct Stage<'a> {
    h: &'a UnitHistory,
    era: Option<&'a Era>,
    limits: &'a Limits,
    /// The baseline forms from the era's first `n_min` checks with a reading and grows to
    /// `n_max`.
    n_min: usize,
    n_max: usize,
    /// A baseline still growing takes in no check from a step in flow and heat on
    /// (`step_at`): what follows such a step is the fault, not the sound unit.
    admit_before: Option<DateTime<Utc>>,
}

impl Stage<'_> {
    /// Whether a growing baseline may take this check in.
    fn admitted(&self, p: &CheckPoint) -> bool {
        self.admit_before.is_none_or(|t| p.at < t)
    }

    /// The values of a baselined indicator at the admitted checks, in time order.
    fn series_of(
        &self,
        ind: BaselineIndicator,
        points: &[CheckPoint],
    ) -> Vec<(Id, DateTime<Utc>, f64)> {
        points
            .iter()
            .filter(|p| self.admitted(p))
            .filter_map(|p| {
                let v = value_of(p, ind)?;
                Some((p.check_id, p.at, v))
            })
            .collect()
    }
}

/// What the flow correction rests on.
struct FlowModel {
    reference: Option<Reference>,
    /// The era's leakage fit, and the same where it is well determined (`well_determined`).
    fit: Option<hyd::LeakageFit>,
    fit_judged: Option<hyd::LeakageFit>,
    /// The displacement the corrections use (`displacement_of`), m³/s.
    displacement: Option<f64>,
    /// The leak-conductance watch margin (1.3× → 0.3).
    leak_margin: f64,
}

/// Computes the indicators of the era in force (`era`), with `fluid` its fluid.
pub fn compute(
    h: &UnitHistory,
    era: Option<&Era>,
    fluid: Option<&Fluid>,
    limits: &Limits,
) -> Computed {
    let unit = &h.unit;
    let walther = fluid.and_then(|f| Walther::from_kv40_kv100(f.kv40_new?, f.kv100_new?).ok());
    let rated = unit.rated_flow.filter(|q| q.si() > 0.0);

    let mut points = raw_points(h, era, walther, rated);
    let n_min = limits.value(LimitKey::BaselineChecks).round().max(0.0) as usize;
    // Maintenance that restarts what it addresses.
    let restarts = restarts_in(h, era);
    let stage = Stage {
        h,
        era,
        limits,
        n_min,
        n_max: (limits.value(LimitKey::BaselineChecksMax).round().max(0.0) as usize).max(n_min),
        admit_before: step_at(&points, limits, &restarts),
    };
    let flow = flow_model(&stage, &mut points, rated);
    let mut baseline = era_baseline(&stage, &points, flow.fit);
    let heat_load = heat_load(&stage, &mut points, &mut baseline, &flow, walther);
    against_baseline(&mut points, &baseline, &restarts);
    run_detectors(&mut points, &baseline, limits, &restarts, flow.displacement);
    let leak_resolved = leak_resolved(&baseline, flow.fit_judged.is_some(), rated, limits);
    sudden_losses(
        &mut points,
        &restarts,
        &flow,
        (heat_load, walther),
        leak_resolved,
        rated,
        limits,
    );

    // The target goes by working pressure: the relief setting, or the highest pressure logged.
    let target = era.map(|_| {
        let working = unit.relief.or_else(|| {
            points
                .iter()
                .filter_map(|p| p.pressure)
                .reduce(f64::max)
                .map(Pressure)
        });
        clean::target_for(unit.sensitive_component, working)
    });
    let samples = sample_points(h, era, fluid, walther, target);

    let mut c = Computed {
        era: era.cloned(),
        fluid: fluid.cloned(),
        baseline,
        checks: points,
        samples,
        target,
        reference: flow.reference,
        heat_load,
        leak_resolved,
        baseline_needs: n_min,
        fit: flow.fit,
        restarts,
        displacement: flow.displacement,
        stroke_volume: unit
            .stroke
            .as_ref()
            .and_then(|s| hyd::displaced_volume(s).ok())
            .map(|v| v.si()),
        ..Computed::default()
    };
    c.hours_per_day = hours_per_day(h);
    c.equiv_hours_per_day = equiv_hours_per_day(h);
    c.summary = summarise(h, &c, limits);
    c
}

/// Raw per-check values of the era, before the baseline.
fn raw_points(
    h: &UnitHistory,
    era: Option<&Era>,
    walther: Option<Walther>,
    rated: Option<Flow>,
) -> Vec<CheckPoint> {
    let volume = h
        .unit
        .stroke
        .as_ref()
        .and_then(|s| hyd::displaced_volume(s).ok());
    let checks = era_checks(h, era);
    checks
        .iter()
        .map(|c| {
            let t_res = c.reservoir_temp.map(|t| t.si());
            let q: Option<Flow> = match (volume, c.stroke_time) {
                (Some(v), Some(t)) => hyd::effective_flow(v, t).ok(),
                _ => None,
            };
            let p: Option<Pressure> = c.pressure.filter(|p| p.si() > 0.0);
            let nu: Option<Viscosity> = match (walther, c.reservoir_temp) {
                (Some(w), Some(t)) => Some(w.at(t)).filter(|v| v.si().is_finite() && v.si() > 0.0),
                _ => None,
            };
            CheckPoint {
                check_id: c.id,
                at: c.taken_at,
                reservoir_temp: t_res,
                ambient_temp: c.ambient_temp.map(|t| t.si()),
                pressure: p.map(|p| p.si()),
                hours: c.hours.filter(|v| v.is_finite()),
                effective_flow: q.map(|q| q.si()),
                vol_eff_pct: match (q, rated) {
                    (Some(q), Some(r)) => hyd::vol_efficiency(q, r).ok().map(|e| e * 100.0),
                    _ => None,
                },
                hydraulic_power: match (q, p) {
                    (Some(q), Some(p)) => Some(hyd::hydraulic_power(q, p).si()),
                    _ => None,
                },
                heat_rise: match (c.reservoir_temp, c.ambient_temp) {
                    (Some(r), Some(a)) => Some(r.minus(a).k()),
                    _ => None,
                },
                viscosity_at_temp: nu.map(|v| v.si()),
                case_drain: c.case_drain.map(|f| f.si()).filter(|f| *f >= 0.0),
                filter: c.filter,
                oil_level: c.oil_level,
                ..CheckPoint::default()
            }
        })
        .collect()
}

/// The reference conditions, the leakage fit and the displacement, and with them each check's
/// leak conductance and its flow and case drain moved to the reference conditions.
fn flow_model(stage: &Stage, points: &mut [CheckPoint], rated: Option<Flow>) -> FlowModel {
    let (n_min, n_max, limits) = (stage.n_min, stage.n_max, stage.limits);
    let admitted = |p: &CheckPoint| stage.admitted(p);
    // The reference conditions: mean viscosity and pressure of the checks the baseline is
    // formed from. Leakage flow goes as p/ν (laminar gaps), so a leakage seen at (ν, p) would
    // be (ν/ν_ref)·(p_ref/p) times as large at the reference conditions.
    let cond: Vec<(f64, f64, Option<f64>)> = points
        .iter()
        .filter(|p| admitted(p))
        .filter_map(|p| Some((p.viscosity_at_temp?, p.pressure?, p.effective_flow)))
        .take(n_max)
        .collect();
    let reference = (n_min > 0 && cond.len() >= n_min).then(|| Reference {
        viscosity: cond.iter().map(|c| c.0).sum::<f64>() / cond.len() as f64,
        pressure: cond.iter().map(|c| c.1).sum::<f64>() / cond.len() as f64,
    });
    // Displacement and leakage separated by the era's own spread of p/ν where it allows
    // (`physics::hydraulics::fit_leakage`), else the rated flow stands in for the displacement.
    let fit = reference.and_then(|_| {
        let pts: Vec<(Flow, Viscosity, Pressure)> = cond
            .iter()
            .filter_map(|c| Some((Flow(c.2?), Viscosity(c.0), Pressure(c.1))))
            .collect();
        (pts.len() >= n_min)
            .then(|| hyd::fit_leakage(&pts))
            .flatten()
            .filter(|f| plausible_fit(f, rated.map(|r| r.si())))
    });
    let leak_margin = limits
        .get(LimitKey::LeakConductanceRatio)
        .watch
        .unwrap_or(1.3)
        - 1.0;
    let fit_judged = fit.filter(|f| well_determined(f, leak_margin));
    let displacement = displacement_of(fit, rated.map(|r| r.si()), leak_margin);
    for p in points.iter_mut() {
        // Laminar gap leakage Q_leak ∝ Δp/μ, so (D − Q)·ν/p stays put while only the oil
        // temperature or the job pressure moves (Hagen–Poiseuille gap flow).
        p.leak_conductance = match (
            displacement,
            p.effective_flow,
            p.viscosity_at_temp,
            p.pressure,
        ) {
            (Some(d), Some(q), Some(nu), Some(pr)) => {
                hyd::leak_conductance(Flow(d), Flow(q), Viscosity(nu), Pressure(pr))
                    .ok()
                    .map(|g| g.si())
            }
            _ => None,
        };
    }
    // The whole leakage seen at (ν, p) is moved to the reference conditions: D − (D − Q)·k and
    // the case drain c·k, k = (ν/ν_ref)·(p_ref/p).
    for p in points.iter_mut() {
        let scale = match (reference, p.viscosity_at_temp, p.pressure) {
            (Some(r), Some(nu), Some(pr)) => Some(nu / r.viscosity * r.pressure / pr),
            _ => None,
        };
        p.flow_scale = scale;
        p.corrected_flow = match (displacement, p.effective_flow, scale) {
            (Some(d), Some(q), Some(k)) => Some(d - (d - q) * k),
            _ => None,
        };
        p.case_drain_corrected = match (p.case_drain, scale) {
            (Some(c), Some(k)) => Some(c * k),
            (c, _) => c,
        };
    }
    FlowModel {
        reference,
        fit,
        fit_judged,
        displacement,
        leak_margin,
    }
}

/// The era's baseline from its first checks (or entered by hand), the fitted conductance in
/// place of the median of single checks where the fit was made.
fn era_baseline(stage: &Stage, points: &[CheckPoint], fit: Option<hyd::LeakageFit>) -> Baseline {
    let (h, era, n_min, n_max, admit_before) = (
        stage.h,
        stage.era,
        stage.n_min,
        stage.n_max,
        stage.admit_before,
    );
    let series_of = |ind: BaselineIndicator, points: &[CheckPoint]| stage.series_of(ind, points);
    let per: Vec<_> = BaselineIndicator::ALL
        .iter()
        .map(|&i| (i, series_of(i, points)))
        .collect();
    let mut baseline = match era {
        Some(e) => baseline::build_baseline(e, n_min, n_max, &per, &h.manual_baselines),
        None => Baseline::default(),
    };
    // A step that came while the baseline was still growing closed it (what it would have
    // taken in is the fault).
    baseline.closed_at = admit_before.filter(|_| {
        baseline
            .values
            .iter()
            .any(|v| matches!(v.source, BaselineSource::Checks { .. }) && !v.complete)
    });
    // The fitted conductance is the baseline's where the fit was made (a better estimate than
    // the median of single checks, with its own standard error).
    if let (Some(f), Some(b)) = (
        fit,
        baseline
            .values
            .iter_mut()
            .find(|b| b.indicator == BaselineIndicator::LeakConductance),
    ) {
        if matches!(b.source, BaselineSource::Checks { .. }) {
            b.value = f.conductance;
            b.value_se = f.conductance_se;
        }
    }
    baseline
}

/// The heat-load model of the sound unit, each check's heat rise moved to the baseline's load,
/// and the heat-rise baseline formed again on those.
fn heat_load(
    stage: &Stage,
    points: &mut [CheckPoint],
    baseline: &mut Baseline,
    flow: &FlowModel,
    walther: Option<Walther>,
) -> Option<HeatLoad> {
    let (h, era, limits, n_min, n_max) =
        (stage.h, stage.era, stage.limits, stage.n_min, stage.n_max);
    let (displacement, reference) = (flow.displacement, flow.reference);
    let admitted = |p: &CheckPoint| stage.admitted(p);
    let series_of = |ind: BaselineIndicator, points: &[CheckPoint]| stage.series_of(ind, points);
    // No pump seals better than about this share of its displacement at working pressure
    // (the best piston pumps' volumetric efficiency, about 98 %, from memory): where the rated
    // flow standing for the displacement is a little under the true one, the flow baseline
    // leaves no leakage at all, and the heat thin summer oil's leakage makes would go
    // unpredicted.
    const MIN_LEAK_SHARE: f64 = 0.02;
    // Heat rise at the baseline's pressure and oil (`HeatLoad`). Its model takes the pump's
    // leakage at the reference from the flow baseline (displacement less the corrected flow);
    // without a flow model, the heat load goes with the pressure alone.
    let heat_load = {
        let leak_ref = match (displacement, reference) {
            (Some(d), Some(_)) => baseline
                .get(BaselineIndicator::CorrectedFlow)
                .map(|b| (d - b.value).max(MIN_LEAK_SHARE * d)),
            _ => None,
        };
        let model = match (displacement, reference, leak_ref) {
            (Some(d), Some(r), Some(l)) => Some(HeatLoad::with_leakage(
                r,
                d,
                l,
                limits.value(LimitKey::HeatSharePct) / 100.0,
            )),
            _ => {
                let ps: Vec<f64> = points
                    .iter()
                    .filter(|p| admitted(p) && p.heat_rise.is_some())
                    .take(n_max)
                    .filter_map(|p| p.pressure)
                    .collect();
                (n_min > 0 && ps.len() >= n_min)
                    .then(|| HeatLoad::pressure_only(ps.iter().sum::<f64>() / ps.len() as f64))
            }
        };
        // The thermal resistance of the sound unit: the median of ΔT / P over the checks the
        // baseline is formed from, at their own oil.
        model.map(|m| {
            let r: Vec<f64> = points
                .iter()
                .filter(|p| admitted(p) && p.heat_rise.is_some())
                .take(n_max)
                .filter_map(|p| Some(p.heat_rise? / m.at(p.pressure?, p.viscosity_at_temp)?))
                .collect();
            HeatLoad {
                resistance: stats::median(&r).filter(|r| r.is_finite() && *r > 0.0),
                ..m
            }
        })
    };
    let oil_at = |t: f64| -> Option<f64> {
        let w = walther?;
        Some(w.at(Temperature(t)).si()).filter(|v| v.is_finite() && *v > 0.0)
    };
    for p in points.iter_mut() {
        p.heat_load_ratio = match (heat_load, p.pressure) {
            (Some(m), Some(pr)) => m.ratio(pr, p.ambient_temp, p.viscosity_at_temp, oil_at),
            _ => None,
        };
        p.heat_rise_corrected = match (p.heat_rise, p.heat_load_ratio) {
            (Some(d), Some(k)) => Some(d / k),
            (d, _) => d,
        };
    }
    let heat = BaselineIndicator::HeatRise;
    if let Some(e) = era {
        let per_heat = [(heat, series_of(heat, points))];
        let rebuilt = baseline::build_baseline(e, n_min, n_max, &per_heat, &h.manual_baselines);
        baseline.values.retain(|v| v.indicator != heat);
        if let Some(v) = rebuilt.get(heat) {
            baseline.values.push(v.clone());
        }
    }
    heat_load
}

/// Every check against the baseline: lost flow, leak-conductance ratio, case-drain rise and
/// heat-rise drift, each with the confirmed level of its last 3 (see `confirmed_level`),
/// started afresh after maintenance that addresses it.
fn against_baseline(points: &mut [CheckPoint], baseline: &Baseline, restarts: &[Restart]) {
    let base = |i: BaselineIndicator| baseline.get(i).map(|b| b.value);
    let in_baseline: Vec<Id> = baseline
        .values
        .iter()
        .filter_map(|v| match &v.source {
            BaselineSource::Checks { check_ids, .. } => Some(check_ids.clone()),
            BaselineSource::Manual { .. } => None,
        })
        .flatten()
        .collect();

    let restarted = |ind: BaselineIndicator, from: DateTime<Utc>, to: DateTime<Utc>| {
        restarts
            .iter()
            .any(|r| r.at > from && r.at <= to && r.addresses(ind))
    };

    // Values against the baseline, and the confirmed level of the last 3 (see
    // `confirmed_level`). Lost flow is taken at the reference conditions where the flow can be
    // corrected, so the seasons and the job pressure do not move it.
    // A flow entered by hand is what a person says the pump gives: it wins over a computed
    // corrected one (`Baseline::lost_flow_base`).
    let lost_base = baseline.lost_flow_base();
    let (mut lf, mut lr, mut cd, mut hd) = (Vec::new(), Vec::new(), Vec::new(), Vec::new());
    let mut prev_at: Option<DateTime<Utc>> = None;
    for p in points.iter_mut() {
        p.in_baseline = in_baseline.contains(&p.check_id);
        if let Some(from) = prev_at {
            if restarted(BaselineIndicator::EffectiveFlow, from, p.at) {
                lf.clear();
                lr.clear();
            }
            if restarted(BaselineIndicator::CaseDrain, from, p.at) {
                cd.clear();
            }
            if restarted(BaselineIndicator::HeatRise, from, p.at) {
                hd.clear();
            }
        }
        prev_at = Some(p.at);
        if let (Some(q), Some(qb)) = (value_of(p, lost_base), base(lost_base)) {
            if let Ok(lost) = hyd::lost_flow(Flow(q), Flow(qb)) {
                let v = lost * 100.0;
                p.lost_flow_pct = Some(v);
                lf.push(v);
                p.lost_flow_median_pct = confirmed_level(&lf);
            }
        } else if p.effective_flow.is_some() && base(lost_base).is_some() {
            // A timed stroke that cannot be corrected (its oil temperature not read, or held
            // as a possible slip) judges nothing: the level stands where the last corrected
            // check left it, so a questioned reading neither raises the flag nor clears it.
            p.lost_flow_median_pct = confirmed_level(&lf);
        }
        let ratio = |g: f64, gb: f64| hyd::LeakConductance(g).ratio_to(hyd::LeakConductance(gb));
        if let Some(v) = p
            .leak_conductance
            .zip(base(BaselineIndicator::LeakConductance))
            .and_then(|(g, gb)| ratio(g, gb))
        {
            p.leak_ratio = Some(v);
            lr.push(weighed_from_thick_oil(v, p.flow_scale));
            p.leak_ratio_median = confirmed_level(&lr);
        }
        if let (Some(c), Some(cb)) = (
            p.case_drain_corrected,
            base(BaselineIndicator::CaseDrain).filter(|v| *v > 0.0),
        ) {
            let v = (c / cb - 1.0) * 100.0;
            p.case_drain_rise_pct = Some(v);
            cd.push(v);
            p.case_drain_rise_median_pct = confirmed_level(&cd);
        }
        if let (Some(d), Some(db)) = (p.heat_rise, base(BaselineIndicator::HeatRise)) {
            // Over what the baseline gives at this check's pressure and hall.
            let predicted = db * p.heat_load_ratio.unwrap_or(1.0);
            let v = d - predicted;
            p.heat_rise_drift = Some(v);
            hd.push(v);
            p.heat_rise_drift_median = confirmed_level(&hd);
        }
    }
}

/// A leak-conductance ratio as its flag weighs it. The conductance is a property of the pump,
/// the same whatever the oil, but its estimate from a check in oil thicker than the
/// reference's (k > 1, `flow_scale`) divides the leakage by a p/ν k times smaller and so
/// carries the stopwatch's scatter k times over: its departure from the baseline is weighed by
/// 1/k, as the drift detectors weigh the corrected flow (the standardised statistic of a chart
/// with unequal variances, Montgomery). A check in thinner oil keeps its full weight.
pub(super) fn weighed_from_thick_oil(ratio: f64, k: Option<f64>) -> f64 {
    match k.filter(|k| *k > 1.0 && k.is_finite()) {
        Some(k) => 1.0 + (ratio - 1.0) / k,
        None => ratio,
    }
}

/// Whether the leakage can be resolved at all.
fn leak_resolved(
    baseline: &Baseline,
    fit_judged: bool,
    rated: Option<Flow>,
    limits: &Limits,
) -> Option<bool> {
    // Can the leakage be resolved at all? Where the era's fit resolved it, yes; else the
    // baseline leakage against the rated flow must stand well above the spread of the
    // (corrected) timed flow, never taken below the stopwatch floor.
    let floor_rel = limits.value(LimitKey::MinSpreadPct) / 100.0;
    match baseline.get(BaselineIndicator::LeakConductance) {
        Some(b) if matches!(b.source, BaselineSource::Manual { .. }) => Some(true),
        // The fitted conductance is judged where it is well determined: two of its standard
        // errors within the watch margin (1.3× → 0.15 of G), so its own error cannot raise a
        // flag.
        Some(_) if fit_judged => Some(true),
        Some(_) => {
            let flow_base = baseline
                .get(BaselineIndicator::CorrectedFlow)
                .or(baseline.get(BaselineIndicator::EffectiveFlow));
            match (rated, flow_base) {
                (Some(r), Some(q)) => {
                    // The leakage against the rated flow must stand `leak_min_spreads`
                    // spreads of one timed flow above zero.
                    let sigma = q.spread.max(floor_rel * q.value.abs());
                    Some(r.si() - q.value >= limits.value(LimitKey::LeakMinSpreads) * sigma)
                }
                _ => None,
            }
        }
        None => None,
    }
}

/// Each check's sudden loss against the checks just before it.
fn sudden_losses(
    points: &mut [CheckPoint],
    restarts: &[Restart],
    flow: &FlowModel,
    (heat_load, walther): (Option<HeatLoad>, Option<Walther>),
    leak_resolved: Option<bool>,
    rated: Option<Flow>,
    limits: &Limits,
) {
    let (fit_judged, leak_margin) = (flow.fit_judged, flow.leak_margin);
    // Sudden loss: two checks in a row well below what the weeks just before them give
    // (`loss_against`): their leakage moved to the check's pressure and to the oil a sound
    // unit's own heat explains (`sound_viscosity`; in a hall warmer than at the checks before,
    // the oil as read). Where the heat model cannot tell, or the oil reads well above a sound
    // unit's, compared on the flow corrected to the reference conditions where the leakage is
    // resolved (a hot week moves a leaky pump's timed flow), as timed where it is not. The
    // displacement is the era's fit where it is well determined, else the rated flow: a loose
    // fit's displacement, carried to a hot week's p/ν, would expect a loss that hides a real
    // one.
    let watch_pct = limits.get(LimitKey::LostFlowPct).watch;
    let warmer = limits.get(LimitKey::HeatRiseDriftK).watch.unwrap_or(5.0);
    let corrected_sudden = leak_resolved == Some(true);
    let sudden_d = displacement_of(fit_judged, rated.map(|r| r.si()), leak_margin);
    let mut strokes: Vec<(DateTime<Utc>, Stroke)> = Vec::new();
    for p in points.iter_mut() {
        let Some(q) = p.effective_flow else { continue };
        let flow = if corrected_sudden {
            p.corrected_flow
        } else {
            Some(q)
        };
        let Some(flow) = flow else { continue };
        if restarts.iter().any(|r| {
            r.addresses(BaselineIndicator::EffectiveFlow)
                && strokes.last().is_some_and(|l| r.at > l.0)
        }) {
            strokes.clear();
        }
        strokes.push((
            p.at,
            Stroke {
                q,
                flow,
                p: p.pressure,
                nu: p.viscosity_at_temp,
                ambient: p.ambient_temp,
                scale: p.flow_scale.filter(|_| corrected_sudden),
                nu_sound: sound_viscosity(p, heat_load, walther, warmer),
            },
        ));
        let n = strokes.len();
        if n >= 2 + SUDDEN_BEFORE_MIN {
            let before: Vec<Stroke> = strokes[n.saturating_sub(2 + SUDDEN_BEFORE)..n - 2]
                .iter()
                .map(|s| s.1)
                .collect();
            // A check whose job cannot be told (its pressure held or not read) confirms no
            // step: as the first of two it makes none, as the second it shows at watch at
            // most (`sudden_job_unknown`).
            if job_unknown(&before, &strokes[n - 2].1) {
                continue;
            }
            if let (Some(first), Some(second)) = (
                loss_against(&before, &strokes[n - 2].1, sudden_d, warmer),
                loss_against(&before, &strokes[n - 1].1, sudden_d, warmer),
            ) {
                p.sudden_loss_pct = Some(sudden_loss(first, second, watch_pct));
                p.sudden_job_unknown = job_unknown(&before, &strokes[n - 1].1);
            }
        }
    }
}

/// The oil's viscosity at a check as far as a sound unit's own heat explains it: the one read,
/// or, where the oil reads hotter than a sound unit settles at the check's pressure in its hall
/// (`HeatLoad::settled_rise`) or was not read, the settled oil's. None where the heat model
/// cannot place it, and where the oil reads hotter than that by `beyond` K or more: a unit
/// heating its own oil (a fouled cooler, a path to tank) is not excused its job either.
fn sound_viscosity(
    p: &CheckPoint,
    heat_load: Option<HeatLoad>,
    walther: Option<Walther>,
    beyond: f64,
) -> Option<f64> {
    let (m, w) = (heat_load?, walther?);
    let oil = |t: f64| Some(w.at(Temperature(t)).si()).filter(|v| v.is_finite() && *v > 0.0);
    let ambient = p.ambient_temp?;
    let settled = ambient + m.settled_rise(p.pressure?, ambient, oil)?;
    let sound = oil(settled)?;
    // No oil temperature (not read, or held by the screen as a possible slip): the settled
    // oil's, which excuses what the job and the hall explain and nothing of a fault's heat.
    let (Some(t), Some(read)) = (p.reservoir_temp, p.viscosity_at_temp) else {
        return Some(sound);
    };
    if t - settled >= beyond {
        return None;
    }
    Some(read.max(sound))
}

#[cfg(test)]
mod tests {
    use super::weighed_from_thick_oil;
    use super::{sound_viscosity, CheckPoint, HeatLoad, Temperature, Viscosity, Walther};

    #[test]
    fn the_oil_a_sound_units_heat_explains_is_capped_at_where_it_settles() {
        // A heat load going with the pressure alone, R chosen by hand so that a sound unit
        // settles 20 K over the hall at 100 bar: R · p = 20 K (the load at p is p · 1), so in
        // a hall at 20 °C it settles at 40 °C. An ISO VG 46 oil (46 and 6.8 cSt).
        let m = HeatLoad {
            resistance: Some(20.0 / 100.0e5),
            ..HeatLoad::pressure_only(100.0e5)
        };
        let w = Walther::from_kv40_kv100(Viscosity::from_cst(46.0), Viscosity::from_cst(6.8))
            .expect("a valid oil");
        let nu = |c: f64| w.at(Temperature::from_c(c)).si();
        let at = |read_c: f64| {
            let p = CheckPoint {
                reservoir_temp: Some(Temperature::from_c(read_c).si()),
                ambient_temp: Some(Temperature::from_c(20.0).si()),
                pressure: Some(100.0e5),
                viscosity_at_temp: Some(nu(read_c)),
                ..CheckPoint::default()
            };
            sound_viscosity(&p, Some(m), Some(w), 5.0)
        };
        let near = |a: Option<f64>, b: f64| a.is_some_and(|a| (a / b - 1.0).abs() < 1e-6);
        // Cooler than it settles (the oil not yet settled): as read.
        assert!(near(at(35.0), nu(35.0)), "{:?}", at(35.0));
        // 3 K hotter: only the settled oil's thinning is explained.
        assert!(near(at(43.0), nu(40.0)), "{:?}", at(43.0));
        // 5 K hotter or more (the watch limit given): a unit heating its own oil, nothing.
        assert_eq!(at(45.0), None);
        // No oil temperature (held as a slip, or not read): the settled oil's.
        let held = CheckPoint {
            ambient_temp: Some(Temperature::from_c(20.0).si()),
            pressure: Some(100.0e5),
            ..CheckPoint::default()
        };
        assert!(near(
            sound_viscosity(&held, Some(m), Some(w), 5.0),
            nu(40.0)
        ));
        // No heat model: nothing either.
        let p = CheckPoint {
            viscosity_at_temp: Some(nu(35.0)),
            ..CheckPoint::default()
        };
        assert_eq!(sound_viscosity(&p, None, Some(w), 5.0), None);
    }

    #[test]
    fn a_leak_ratio_from_thick_oil_is_weighed_by_its_scatter() {
        // By hand: 2.5× the baseline from oil three times the reference's leakage scale is a
        // departure of 1.5, weighed by 1/3: 1.5×. From thinner oil (k = 0.5) or with no scale
        // it stands as read; below the baseline the same (0.7× at k = 2 is 0.85×).
        let near = |a: f64, b: f64| (a - b).abs() < 1e-12;
        assert!(near(weighed_from_thick_oil(2.5, Some(3.0)), 1.5));
        assert!(near(weighed_from_thick_oil(2.5, Some(0.5)), 2.5));
        assert!(near(weighed_from_thick_oil(2.5, None), 2.5));
        assert!(near(weighed_from_thick_oil(0.7, Some(2.0)), 0.85));
    }
}
