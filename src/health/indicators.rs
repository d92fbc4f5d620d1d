//! Indicators of one unit's era in force: per check (effective flow, lost flow, volumetric
//! efficiency, hydraulic power, heat rise and its drift, leak conductance ratio, case-drain
//! change, EWMA and CUSUM), per sample (KV40, viscosity drift, ISO VG band, VI, ISO 4406 code
//! against the target, water, acid rise), and over the era (oil life used, top-up rate); then
//! the tiles and chart series a unit page or report shows.
//!
//! Pure: records in, figures out. The formulas themselves live in `physics`; this module
//! decides which readings feed them and against what they are measured.

use chrono::{DateTime, Utc};
use serde::{Deserialize, Serialize};

use super::baseline::{self, Baseline, BaselineIndicator, BaselineSource, Era};
use super::flags::Flag;
use super::limits::{LimitKey, Limits};
use super::State;
use crate::model::{Check, EventKind, FilterState, Fluid, Id, OilLevel, Sample, UnitHistory};
use crate::physics::cleanliness::{self as clean, Iso4406Code};
use crate::physics::hydraulics as hyd;
use crate::physics::oil_life;
use crate::physics::stats;
use crate::physics::viscosity::{self as visc, Walther};
use crate::units::{Flow, Pressure, Temperature, Viscosity};

/// How many checks the median of a check indicator is taken over (lost flow in
/// docs/engineering.md, "Default limits").
pub const MEDIAN_OF: usize = 3;
/// A sudden loss compares two checks with the median of up to this many checks before them,
/// and needs at least `SUDDEN_BEFORE_MIN` of those (common practice, no published source).
pub const SUDDEN_BEFORE: usize = 6;
pub const SUDDEN_BEFORE_MIN: usize = 4;
/// How many points a trend line is fitted to (docs/engineering.md, "Computations").
pub const TREND_POINTS: usize = 12;

/// One detector's reading at one check.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct DriftPoint {
    pub indicator: BaselineIndicator,
    /// EWMA of the indicator, SI.
    pub ewma: f64,
    /// The EWMA control limit on the side that means trouble, SI.
    pub ewma_limit: f64,
    /// Tabular CUSUM on the side that means trouble, in σ of the baseline.
    pub cusum_sigma: f64,
    /// Whether either detector signals at this check.
    pub signal: bool,
    /// Consecutive checks signalling, this one included (0 when it does not signal).
    pub run: usize,
    /// Whether the EWMA has moved from the baseline by at least the watch limit of the
    /// indicator's own flag (lost flow, case-drain rise, heat-rise drift) and two baseline
    /// spreads: a shift that is both real and large enough to matter, which a statistical
    /// flag needs to reach act.
    pub material: bool,
}

/// The indicators of one check. SI values unless the name carries a unit.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct CheckPoint {
    pub check_id: Id,
    pub at: DateTime<Utc>,
    /// Whether this check is one of those the baseline was computed from.
    pub in_baseline: bool,
    pub reservoir_temp: Option<f64>,
    pub ambient_temp: Option<f64>,
    pub pressure: Option<f64>,
    pub hours: Option<f64>,
    pub effective_flow: Option<f64>,
    /// Effective flow corrected to the baseline's oil viscosity and pressure:
    /// Q_rated − (Q_rated − Q)·(ν/ν_ref)·(p_ref/p). Only wear moves it.
    pub corrected_flow: Option<f64>,
    pub lost_flow_pct: Option<f64>,
    /// Median of the lost flow of the last 3 checks of the era that have one.
    pub lost_flow_median_pct: Option<f64>,
    pub vol_eff_pct: Option<f64>,
    pub hydraulic_power: Option<f64>,
    pub heat_rise: Option<f64>,
    /// The heat load a sound unit would have at this check against the reference's
    /// (`HeatLoad::ratio`): what the baseline heat rise is scaled by here.
    pub heat_load_ratio: Option<f64>,
    /// Heat rise moved to the baseline's pressure and oil: ΔT / `heat_load_ratio`; the raw heat
    /// rise where the ratio is unknown.
    pub heat_rise_corrected: Option<f64>,
    /// Heat rise over what the baseline gives at this check's conditions, K.
    pub heat_rise_drift: Option<f64>,
    pub heat_rise_drift_median: Option<f64>,
    /// Kinematic viscosity of the oil at the check's temperature (D341 fit of the fluid).
    pub viscosity_at_temp: Option<f64>,
    pub leak_conductance: Option<f64>,
    pub leak_ratio: Option<f64>,
    pub leak_ratio_median: Option<f64>,
    pub case_drain: Option<f64>,
    /// Case-drain flow corrected to the baseline's oil viscosity and pressure (leakage flow
    /// ∝ p/ν), so a hot day does not read as wear; the raw flow where ν or p is unknown.
    pub case_drain_corrected: Option<f64>,
    pub case_drain_rise_pct: Option<f64>,
    pub case_drain_rise_median_pct: Option<f64>,
    /// A sudden loss of flow, %: how far the better of this check and the one before fell
    /// below the median of the up to 6 checks before them (corrected to the reference
    /// conditions where the leakage is resolved, else as timed): the seasons do not move a
    /// flow that far in two weeks; a relief valve starting to pass oil does.
    pub sudden_loss_pct: Option<f64>,
    pub filter: Option<FilterState>,
    pub oil_level: Option<OilLevel>,
    pub drift: Vec<DriftPoint>,
}

/// Where a sample's KV40 came from.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum Kv40Source {
    Measured,
    /// A field reading at another temperature, shifted along the fluid's D341 line.
    FieldReading {
        at_k: f64,
    },
}

/// The indicators of one sample.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct SamplePoint {
    pub sample_id: Id,
    pub at: DateTime<Utc>,
    pub kv40: Option<f64>,
    pub kv40_source: Option<Kv40Source>,
    pub kv40_drift_pct: Option<f64>,
    /// ISO 3448 band of the fluid's grade, m²/s.
    pub vg_band: Option<(f64, f64)>,
    pub in_vg_band: Option<bool>,
    pub viscosity_index: Option<f64>,
    /// ISO 4406 code at ≥4, ≥6, ≥14 µm(c), from the counts or as written.
    pub code: Option<Iso4406Code>,
    /// log2 of the counts per mL, where counts were given (the trended form).
    pub log2_counts: [Option<f64>; 3],
    /// Range numbers above the target, per size.
    pub over_target: [Option<i32>; 3],
    /// The largest of `over_target`.
    pub over_target_max: Option<i32>,
    pub water_ppm: Option<f64>,
    pub acid_mgkoh_g: Option<f64>,
    pub acid_rise: Option<f64>,
}

/// The key indicators of a unit now: the fixed set of `status --json` plus a few more for the
/// fleet board. Units are in the names; `None` means no data.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct Indicators {
    pub lost_flow_pct: Option<f64>,
    pub vol_eff_pct: Option<f64>,
    pub heat_rise_k: Option<f64>,
    pub heat_rise_drift_k: Option<f64>,
    pub leak_conductance_ratio: Option<f64>,
    pub kv40_cst: Option<f64>,
    pub kv40_drift_pct: Option<f64>,
    pub iso4406: Option<String>,
    pub iso4406_target: Option<String>,
    pub water_ppm: Option<f64>,
    pub acid_rise: Option<f64>,
    pub oil_life_used_pct: Option<f64>,
    // Beyond the fixed set.
    pub effective_flow_lpm: Option<f64>,
    pub hydraulic_power_kw: Option<f64>,
    pub reservoir_temp_c: Option<f64>,
    pub case_drain_rise_pct: Option<f64>,
    pub viscosity_index: Option<f64>,
    pub top_up_l_per_100h: Option<f64>,
    pub oil_equivalent_hours: Option<f64>,
    pub era_run_hours: Option<f64>,
    /// Leak conductance now (the confirmed level of the last checks), m³/s · m²/s / Pa, with
    /// its standard error; and the standard error of `leak_conductance_ratio`.
    pub leak_conductance: Option<f64>,
    pub leak_conductance_se: Option<f64>,
    pub leak_conductance_ratio_se: Option<f64>,
}

/// What `compute` hands to the flag and plan steps.
#[derive(Clone, Debug, Default)]
pub struct Computed {
    pub era: Option<Era>,
    pub fluid: Option<Fluid>,
    pub baseline: Baseline,
    /// Checks of the era in force.
    pub checks: Vec<CheckPoint>,
    /// Samples of the era in force.
    pub samples: Vec<SamplePoint>,
    pub target: Option<Iso4406Code>,
    pub summary: Indicators,
    /// Run-hours per day over the last 13 weeks of hour-meter readings.
    pub hours_per_day: Option<f64>,
    /// Equivalent oil hours per day over the same window.
    pub equiv_hours_per_day: Option<f64>,
    /// The oil conditions the corrected flows refer to.
    pub reference: Option<Reference>,
    /// The heat-load model the heat rise is judged with (`HeatLoad`).
    pub heat_load: Option<HeatLoad>,
    /// Whether the baseline leakage is large enough against the scatter of the timed flow for
    /// the leak conductance to be judged (`None`: no baseline to tell).
    pub leak_resolved: Option<bool>,
    /// How many checks with a reading a computed baseline needs before it is formed.
    pub baseline_needs: usize,
    /// Displacement and leak conductance fitted over the baseline checks, where the era's
    /// spread of p/ν resolves them.
    pub fit: Option<hyd::LeakageFit>,
    /// Maintenance in the era that restarted detectors and flags, in time order.
    pub restarts: Vec<Restart>,
}

/// The mean oil viscosity and pressure of the baseline checks: corrected flows are the flows
/// at these conditions.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct Reference {
    /// m²/s.
    pub viscosity: f64,
    /// Pa.
    pub pressure: f64,
}

/// The value of a baselined indicator at a check.
fn value_of(p: &CheckPoint, ind: BaselineIndicator) -> Option<f64> {
    match ind {
        BaselineIndicator::EffectiveFlow => p.effective_flow,
        BaselineIndicator::CorrectedFlow => p.corrected_flow,
        BaselineIndicator::HeatRise => p.heat_rise_corrected,
        BaselineIndicator::LeakConductance => p.leak_conductance,
        BaselineIndicator::CaseDrain => p.case_drain_corrected,
    }
}

fn median_last(values: &[f64]) -> Option<f64> {
    stats::median_of_last(values, MEDIAN_OF)
}

/// The checks of an era, in time order.
fn era_checks<'a>(h: &'a UnitHistory, era: Option<&Era>) -> Vec<&'a Check> {
    match era {
        Some(e) => h.checks.iter().filter(|c| e.contains(c.taken_at)).collect(),
        None => Vec::new(),
    }
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
    let volume = unit
        .stroke
        .as_ref()
        .and_then(|s| hyd::displaced_volume(s).ok());
    let rated = unit.rated_flow.filter(|q| q.si() > 0.0);

    // Raw per-check values, before the baseline.
    let checks = era_checks(h, era);
    let mut points: Vec<CheckPoint> = checks
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
        .collect();

    // The baseline forms from the era's first `n_min` checks with a reading and grows to
    // `n_max`.
    let n_min = limits.value(LimitKey::BaselineChecks).round().max(0.0) as usize;
    let n_max = (limits.value(LimitKey::BaselineChecksMax).round().max(0.0) as usize).max(n_min);
    // Maintenance that restarts what it addresses.
    let restarts = restarts_in(h, era);
    // A baseline still growing takes in no check from a step in flow and heat on (`step_at`):
    // what follows such a step is the fault, not the sound unit.
    let admit_before = step_at(&points, limits, &restarts);
    let admitted = |p: &CheckPoint| admit_before.is_none_or(|t| p.at < t);

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
    });
    let displacement = fit.map(|f| f.displacement).or(rated.map(|r| r.si()));
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
        p.corrected_flow = match (displacement, p.effective_flow, scale) {
            (Some(d), Some(q), Some(k)) => Some(d - (d - q) * k),
            _ => None,
        };
        p.case_drain_corrected = match (p.case_drain, scale) {
            (Some(c), Some(k)) => Some(c * k),
            (c, _) => c,
        };
    }
    // The baseline.
    let series_of =
        |ind: BaselineIndicator, points: &[CheckPoint]| -> Vec<(Id, DateTime<Utc>, f64)> {
            points
                .iter()
                .filter(|p| admitted(p))
                .filter_map(|p| {
                    let v = value_of(p, ind)?;
                    Some((p.check_id, p.at, v))
                })
                .collect()
        };
    let per: Vec<_> = BaselineIndicator::ALL
        .iter()
        .map(|&i| (i, series_of(i, &points)))
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
    // Heat rise at the baseline's pressure and oil (`HeatLoad`). Its model takes the pump's
    // leakage at the reference from the flow baseline (displacement less the corrected flow);
    // without a flow model, the heat load goes with the pressure alone.
    let heat_load = {
        let leak_ref = match (displacement, reference) {
            (Some(d), Some(_)) => baseline
                .get(BaselineIndicator::CorrectedFlow)
                .map(|b| (d - b.value).max(0.0)),
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
        let per_heat = [(heat, series_of(heat, &points))];
        let rebuilt = baseline::build_baseline(e, n_min, n_max, &per_heat, &h.manual_baselines);
        baseline.values.retain(|v| v.indicator != heat);
        if let Some(v) = rebuilt.get(heat) {
            baseline.values.push(v.clone());
        }
    }
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
    let by_hand = |i: BaselineIndicator| {
        baseline
            .get(i)
            .is_some_and(|b| matches!(b.source, BaselineSource::Manual { .. }))
    };
    // A flow entered by hand is what a person says the pump gives: it wins over a computed
    // corrected one.
    let lost_base = if base(BaselineIndicator::CorrectedFlow).is_some()
        && (by_hand(BaselineIndicator::CorrectedFlow) || !by_hand(BaselineIndicator::EffectiveFlow))
    {
        BaselineIndicator::CorrectedFlow
    } else {
        BaselineIndicator::EffectiveFlow
    };
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
        }
        let ratio = |g: f64, gb: f64| hyd::LeakConductance(g).ratio_to(hyd::LeakConductance(gb));
        if let Some(v) = p
            .leak_conductance
            .zip(base(BaselineIndicator::LeakConductance))
            .and_then(|(g, gb)| ratio(g, gb))
        {
            p.leak_ratio = Some(v);
            lr.push(v);
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

    run_detectors(&mut points, &baseline, limits, &restarts);

    // Can the leakage be resolved at all? Where the era's fit resolved it, yes; else the
    // baseline leakage against the rated flow must stand well above the spread of the
    // (corrected) timed flow, never taken below the stopwatch floor.
    let floor_rel = limits.value(LimitKey::MinSpreadPct) / 100.0;
    let leak_margin = limits
        .get(LimitKey::LeakConductanceRatio)
        .watch
        .unwrap_or(1.3)
        - 1.0;
    let fit_judged = fit.filter(|f| 2.0 * f.conductance_se <= leak_margin * f.conductance);
    let leak_resolved = match baseline.get(BaselineIndicator::LeakConductance) {
        Some(b) if matches!(b.source, BaselineSource::Manual { .. }) => Some(true),
        // The fitted conductance is judged where it is well determined: two of its standard
        // errors within the watch margin (1.3× → 0.15 of G), so its own error cannot raise a
        // flag.
        Some(_) if fit_judged.is_some() => Some(true),
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
    };

    // Sudden loss: two checks in a row well below the weeks just before them — on the flow
    // corrected to the reference conditions where the leakage is resolved (a hot week moves a
    // leaky pump's timed flow), as timed where it is not (nor then is its move with the oil).
    let watch_pct = limits.get(LimitKey::LostFlowPct).watch;
    let corrected_sudden = leak_resolved == Some(true);
    let mut flows: Vec<(DateTime<Utc>, f64)> = Vec::new();
    for p in points.iter_mut() {
        let flow = if corrected_sudden {
            p.corrected_flow
        } else {
            p.effective_flow
        };
        let Some(q) = flow else { continue };
        if restarts.iter().any(|r| {
            r.addresses(BaselineIndicator::EffectiveFlow)
                && flows.last().is_some_and(|l| r.at > l.0)
        }) {
            flows.clear();
        }
        flows.push((p.at, q));
        let n = flows.len();
        if n >= 2 + SUDDEN_BEFORE_MIN {
            let before: Vec<f64> = flows[n.saturating_sub(2 + SUDDEN_BEFORE)..n - 2]
                .iter()
                .map(|f| f.1)
                .collect();
            if let Some(m) = stats::median(&before).filter(|m| *m > 0.0) {
                p.sudden_loss_pct = Some(sudden_loss(
                    (1.0 - flows[n - 2].1 / m) * 100.0,
                    (1.0 - flows[n - 1].1 / m) * 100.0,
                    watch_pct,
                ));
            }
        }
    }

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
        reference,
        heat_load,
        leak_resolved,
        baseline_needs: n_min,
        fit,
        restarts,
        ..Computed::default()
    };
    c.hours_per_day = hours_per_day(h);
    c.equiv_hours_per_day = equiv_hours_per_day(h);
    c.summary = summarise(h, &c, limits);
    c
}

/// What the cooler must carry off, as far as the readings tell: the model the heat rise is
/// judged with. The oil settles where the cooler and the tank walls carry off the power the
/// unit turns into heat, ΔT = R · P_loss (Newton's law of cooling; R, in K/W, the thermal
/// resistance of cooler and tank), so ΔT / P_loss stays put while only the job and the hall
/// change, and a fouled cooler (R up) or a new leak path (P_loss up) moves it. A
/// fixed-displacement pump delivers about its displacement D whatever the job; of that, the
/// pump's own leakage is all heat and goes as p/ν (laminar gaps, Hagen–Poiseuille, as the
/// flow correction takes it), and what the circuit throttles and loses otherwise goes with the
/// pressure:
///
/// P_loss(p, ν) = p · (q_throttled + q_leak,ref · (ν_ref/ν) · (p/p_ref)),
///
/// with q_leak,ref the leakage at the reference (D less the corrected flow's baseline) and
/// q_throttled = share · D − q_leak,ref (never below 0), `share` being the part of the input
/// power D·p a sound unit turns into heat (`heat_share_pct`, common practice). The leakage is
/// modelled, not taken from the check's own timed flow, whose stopwatch scatter is as large
/// as the leakage itself.
///
/// The oil viscosity in it is the one a sound unit would settle at in this hall at this
/// pressure — ΔT = R · P_loss(p, ν(T_ambient + ΔT)) solved for ΔT, as the oil itself settles —
/// not the one read: a fouled cooler or a relief valve passing oil heats the oil, and the
/// thinner hot oil must not then count as the reason for the heat. Without a flow model, the
/// load goes with the pressure alone.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct HeatLoad {
    /// The working pressure of the reference, Pa.
    pub pressure: f64,
    /// The oil viscosity of the reference, m²/s (`None`: the leakage is not modelled).
    pub viscosity: Option<f64>,
    /// Flow throttled or otherwise lost in the circuit, m³/s (any positive number where the
    /// leakage is not modelled: only ratios of the load are used).
    pub throttled: f64,
    /// The pump's leakage at the reference, m³/s.
    pub leak: f64,
    /// The sound unit's thermal resistance, K per unit of `at`, from the baseline checks.
    pub resistance: Option<f64>,
}

impl HeatLoad {
    /// The load going with the pressure alone, about `pressure`.
    pub fn pressure_only(pressure: f64) -> HeatLoad {
        HeatLoad {
            pressure,
            viscosity: None,
            throttled: 1.0,
            leak: 0.0,
            resistance: None,
        }
    }

    /// The load of a pump of displacement `displacement` leaking `leak` at the reference
    /// conditions `r`, a sound unit turning `share` (0–1) of its input power into heat there.
    pub fn with_leakage(r: Reference, displacement: f64, leak: f64, share: f64) -> HeatLoad {
        let leak = leak.max(0.0);
        HeatLoad {
            pressure: r.pressure,
            viscosity: Some(r.viscosity),
            throttled: (share * displacement - leak).max(0.0),
            leak,
            resistance: None,
        }
    }

    /// The load at working pressure `p` with oil of viscosity `nu` (the reference's where it is
    /// unknown), in m³/s · Pa = W.
    pub fn at(&self, p: f64, nu: Option<f64>) -> Option<f64> {
        if !(p > 0.0 && p.is_finite() && self.pressure > 0.0) {
            return None;
        }
        let thin = match (self.viscosity, nu) {
            (Some(r), Some(n)) if n > 0.0 && n.is_finite() => r / n,
            _ => 1.0,
        };
        let load = p * (self.throttled + self.leak * thin * p / self.pressure);
        (load > 0.0 && load.is_finite()).then_some(load)
    }

    /// The heat rise a sound unit settles at in a hall at `ambient` (K) at pressure `p`, its oil
    /// of viscosity `oil(T)` at T (K): ΔT = R · P(p, ν(ambient + ΔT)), by damped fixed-point
    /// iteration from the reference's oil. `None` without the resistance or where it does not
    /// settle (a thermal runaway the model cannot place).
    pub fn settled_rise(
        &self,
        p: f64,
        ambient: f64,
        oil: impl Fn(f64) -> Option<f64>,
    ) -> Option<f64> {
        let r = self.resistance?;
        let mut dt = r * self.at(p, self.viscosity)?;
        for _ in 0..200 {
            let t = (ambient + dt).min(ambient + SETTLE_MAX_RISE_K);
            let next = r * self.at(p, oil(t))?;
            if (next - dt).abs() < 1e-6 {
                return (next <= SETTLE_MAX_RISE_K).then_some(next);
            }
            dt = 0.5 * (dt + next.min(SETTLE_MAX_RISE_K));
        }
        None
    }

    /// The heat load a sound unit has at a check — pressure `p`, hall at `ambient` (K), the oil
    /// read at `nu_read` — against the reference's: the factor its baseline heat rise is
    /// scaled by there. The oil is taken where a sound unit would settle (`settled_rise`); the
    /// oil as read where that cannot be told (no hall reading, no resistance).
    pub fn ratio(
        &self,
        p: f64,
        ambient: Option<f64>,
        nu_read: Option<f64>,
        oil: impl Fn(f64) -> Option<f64>,
    ) -> Option<f64> {
        let nu = match (self.viscosity, ambient) {
            (Some(_), Some(a)) => self
                .settled_rise(p, a, &oil)
                .and_then(|dt| oil(a + dt))
                .or(nu_read),
            _ => nu_read,
        };
        let here = self.at(p, nu)?;
        let there = self.at(self.pressure, self.viscosity)?;
        Some(here / there)
    }
}

/// A settled heat rise beyond this is taken as no settling at all, K (the oil would boil off
/// its additives long before).
const SETTLE_MAX_RISE_K: f64 = 120.0;

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

/// Maintenance that restarts the detectors and flags of what it addresses: a cooler clean the
/// heat rise; a repair the flow, leakage and case drain; a filter change the cleanliness (its
/// samples before the change no longer stand for the oil). Fluid changes and rebuilds start a
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
            EventKind::CoolerClean => ind == BaselineIndicator::HeatRise,
            EventKind::Repair => ind != BaselineIndicator::HeatRise,
            _ => false,
        }
    }

    /// The flag kinds it restarts.
    pub fn flag_kinds(&self) -> &'static [super::flags::FlagKind] {
        use super::flags::FlagKind as K;
        match self.event {
            EventKind::CoolerClean => &[K::HeatRise, K::Drift],
            EventKind::Repair => &[K::LostFlow, K::LeakConductance, K::CaseDrain, K::Drift],
            EventKind::FilterChange => &[K::Cleanliness, K::Filter],
            _ => &[],
        }
    }
}

/// The restarting events of the era, in time order.
fn restarts_in(h: &UnitHistory, era: Option<&Era>) -> Vec<Restart> {
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
fn run_detectors(
    points: &mut [CheckPoint],
    baseline: &Baseline,
    limits: &Limits,
    restarts: &[Restart],
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
            let Some(x) = value_of(p, b.indicator) else {
                continue;
            };
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
            // its own scatter.
            let material = match (b.indicator, material_at) {
                (_, None) => false,
                (BaselineIndicator::HeatRise, Some(w)) => z - b.value >= w.max(2.0 * sigma),
                (_, Some(w)) if b.value.abs() > 0.0 => {
                    let shift_pct = if falling {
                        (b.value - z) / b.value * 100.0
                    } else {
                        (z - b.value) / b.value * 100.0
                    };
                    shift_pct >= w.max(2.0 * sigma / b.value.abs() * 100.0)
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
            });
        }
    }
}

fn sample_points(
    h: &UnitHistory,
    era: Option<&Era>,
    fluid: Option<&Fluid>,
    walther: Option<Walther>,
    target: Option<Iso4406Code>,
) -> Vec<SamplePoint> {
    let Some(era) = era else { return Vec::new() };
    let era_samples: Vec<&Sample> = h
        .samples
        .iter()
        .filter(|s| era.contains(s.sampled_at))
        .collect();
    let kv40_new = fluid.and_then(|f| f.kv40_new).filter(|v| v.si() > 0.0);
    // Acid rise is over the new oil; where the fluid record has no new-oil figure, over the
    // era's first acid reading.
    let acid_ref = fluid
        .and_then(|f| f.acid_new_mgkoh_g)
        .or_else(|| era_samples.iter().find_map(|s| s.acid_mgkoh_g));
    let band = fluid
        .and_then(|f| f.iso_vg)
        .and_then(|vg| visc::iso_vg_band(vg).ok());
    era_samples
        .iter()
        .map(|s| {
            let (kv40, src) = match (s.kv40, s.visc_reading, walther) {
                (Some(v), _, _) => (Some(v), Some(Kv40Source::Measured)),
                (None, Some(r), Some(w)) => (
                    w.kv40_from_reading(r.visc, r.at).ok(),
                    Some(Kv40Source::FieldReading { at_k: r.at.si() }),
                ),
                _ => (None, None),
            };
            let code = sample_code(s);
            let over = match (code, target) {
                (Some(c), Some(t)) => clean::ranges_above(&c, &t),
                _ => [None; 3],
            };
            SamplePoint {
                sample_id: s.id,
                at: s.sampled_at,
                kv40: kv40.map(|v| v.si()),
                kv40_source: kv40.and(src),
                kv40_drift_pct: match (kv40, kv40_new) {
                    (Some(v), Some(n)) => visc::viscosity_drift(v, n).ok().map(|d| d * 100.0),
                    _ => None,
                },
                vg_band: band.map(|b| (b.min.si(), b.max.si())),
                in_vg_band: match (kv40, band) {
                    (Some(v), Some(b)) => Some(b.contains(v)),
                    _ => None,
                },
                viscosity_index: match (kv40, s.kv100) {
                    (Some(a), Some(b)) => visc::viscosity_index(a, b).ok().map(|r| r.vi),
                    _ => None,
                },
                code,
                log2_counts: s.counts_per_ml.map(|c| c.and_then(clean::log2_count)),
                over_target: over,
                over_target_max: over.iter().flatten().copied().max(),
                water_ppm: s.water_ppm,
                acid_mgkoh_g: s.acid_mgkoh_g,
                acid_rise: match (s.acid_mgkoh_g, acid_ref) {
                    (Some(a), Some(r)) => Some(a - r),
                    _ => None,
                },
            }
        })
        .collect()
}

/// The ISO 4406 code of a sample: from its counts where all three were given, else per size
/// from the counts there are, else as written.
fn sample_code(s: &Sample) -> Option<Iso4406Code> {
    match s.counts_per_ml {
        [Some(a), Some(b), Some(c)] => clean::code_from_counts([a, b, c], None).ok(),
        counts if counts.iter().any(Option::is_some) => {
            let mut parts = [clean::CodePart {
                scale: None,
                at_least: false,
            }; 3];
            for (part, c) in parts.iter_mut().zip(counts) {
                part.scale = c.and_then(|c| clean::scale_number(c).ok());
            }
            Some(Iso4406Code { parts })
        }
        _ => s.iso4406.as_deref().and_then(|t| t.parse().ok()),
    }
}

/// Hour-meter readings (time, hours, oil temperature) in time order, dropping any that go
/// backwards (a replaced meter).
fn hour_readings(h: &UnitHistory) -> Vec<(DateTime<Utc>, f64, Option<Temperature>)> {
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
fn equivalent_over(r: &[(DateTime<Utc>, f64, Option<Temperature>)]) -> f64 {
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

fn equiv_hours_per_day(h: &UnitHistory) -> Option<f64> {
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

fn summarise(h: &UnitHistory, c: &Computed, limits: &Limits) -> Indicators {
    let last = |f: &dyn Fn(&CheckPoint) -> Option<f64>| c.checks.iter().rev().find_map(f);
    let last_s = |f: &dyn Fn(&SamplePoint) -> Option<f64>| c.samples.iter().rev().find_map(f);
    // The level at the last check with a reading: its confirmed level, or its own reading
    // where there is no level yet (the first check after a restart).
    let level = |raw: fn(&CheckPoint) -> Option<f64>, lvl: fn(&CheckPoint) -> Option<f64>| {
        c.checks
            .iter()
            .rev()
            .find(|p| raw(p).is_some())
            .and_then(|p| lvl(p).or(raw(p)))
    };
    let mut s = Indicators {
        lost_flow_pct: level(|p| p.lost_flow_pct, |p| p.lost_flow_median_pct),
        vol_eff_pct: last(&|p| p.vol_eff_pct),
        heat_rise_k: last(&|p| p.heat_rise),
        heat_rise_drift_k: level(|p| p.heat_rise_drift, |p| p.heat_rise_drift_median),
        // The ratio where the leakage is resolved well enough to be judged; the tile shows it
        // with its uncertainty in any case, and `leak_conductance` carries the number.
        leak_conductance_ratio: level(|p| p.leak_ratio, |p| p.leak_ratio_median)
            .filter(|_| c.leak_resolved != Some(false)),
        kv40_cst: last_s(&|p| p.kv40).map(|v| v * 1.0e6),
        kv40_drift_pct: last_s(&|p| p.kv40_drift_pct),
        iso4406: c
            .samples
            .iter()
            .rev()
            .find_map(|p| p.code.map(|c| c.to_string())),
        iso4406_target: c.target.map(|t| t.to_string()),
        water_ppm: last_s(&|p| p.water_ppm),
        acid_rise: last_s(&|p| p.acid_rise),
        effective_flow_lpm: last(&|p| p.effective_flow).map(|q| q * 60_000.0),
        hydraulic_power_kw: last(&|p| p.hydraulic_power).map(|w| w / 1000.0),
        reservoir_temp_c: h
            .checks
            .iter()
            .rev()
            .find_map(|ch| ch.reservoir_temp)
            .map(|t| t.c()),
        case_drain_rise_pct: level(|p| p.case_drain_rise_pct, |p| p.case_drain_rise_median_pct),
        viscosity_index: last_s(&|p| p.viscosity_index),
        ..Indicators::default()
    };
    // The leak conductance as a number with its uncertainty: each check's G = (D − Q)·ν/p
    // carries the flow's scatter divided by its p/ν; the level of the last 3 is a median
    // (standard error √(π/2)·σ/√n), the baseline's is the fit's or the median's own.
    let ratio_now = level(|p| p.leak_ratio, |p| p.leak_ratio_median);
    if ratio_now.is_some() {
        let floor_rel = limits.value(LimitKey::MinSpreadPct) / 100.0;
        let flow_sd = c.fit.map(|f| f.residual_sd).or_else(|| {
            c.baseline
                .get(BaselineIndicator::CorrectedFlow)
                .or(c.baseline.get(BaselineIndicator::EffectiveFlow))
                .map(|b| b.spread.max(floor_rel * b.value.abs()))
        });
        let recent: Vec<&CheckPoint> = c
            .checks
            .iter()
            .rev()
            .filter(|p| p.leak_ratio.is_some())
            .take(MEDIAN_OF)
            .collect();
        let sd_g: Vec<f64> = recent
            .iter()
            .filter_map(|p| Some(flow_sd? * p.viscosity_at_temp? / p.pressure?))
            .collect();
        let g_base = c.baseline.get(BaselineIndicator::LeakConductance);
        if let (Some(ratio), Some(b), false) = (ratio_now, g_base, sd_g.is_empty()) {
            let n = sd_g.len() as f64;
            let se = baseline::MEDIAN_SE_FACTOR * (sd_g.iter().sum::<f64>() / n) / n.sqrt();
            let g = ratio * b.value;
            s.leak_conductance = Some(g);
            s.leak_conductance_se = Some(se);
            if g != 0.0 && b.value != 0.0 {
                s.leak_conductance_ratio_se =
                    Some(ratio.abs() * ((se / g).powi(2) + (b.value_se / b.value).powi(2)).sqrt());
            }
        }
    }
    // Oil life and top-ups over the era.
    if let Some(era) = &c.era {
        let r: Vec<_> = hour_readings(h)
            .into_iter()
            .filter(|x| era.contains(x.0))
            .collect();
        if let (Some(f), Some(l)) = (r.first(), r.last()) {
            let run = l.1 - f.1;
            let eq = equivalent_over(&r);
            s.era_run_hours = Some(run);
            s.oil_equivalent_hours = Some(eq);
            let life = limits.value(LimitKey::OilLifeEquivHours);
            if life > 0.0 {
                s.oil_life_used_pct = Some(eq / life * 100.0);
            }
            let topped: f64 = h
                .events
                .iter()
                .filter(|e| e.kind == EventKind::TopUp && era.contains(e.done_at))
                .filter_map(|e| e.volume.map(|v| v.litres()))
                .sum();
            // Fewer than 50 run-hours say nothing about a rate.
            if run >= 50.0 {
                s.top_up_l_per_100h = Some(topped / run * 100.0);
            }
        }
    }
    s
}

// ---------------------------------------------------------------------------------------------
// Tiles and chart series.

/// The dimension of a tile or series value, so that a screen or report can convert and label
/// it. Physical values are SI (m³/s, K, m²/s); the others are plain numbers in the unit named.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Dim {
    Flow,
    Temperature,
    TempDiff,
    Viscosity,
    Percent,
    Ratio,
    Ppm,
    AcidNumber,
    /// ISO 4406 range numbers.
    RangeNumber,
    /// Calendar days (work overdue).
    Days,
}

/// Direction of a trend, as an arrow would show it.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Direction {
    Rising,
    Falling,
    /// The slope is not significant (|t| < 2).
    Flat,
}

/// When a trend line reaches a limit, with its range (slope ± 2 standard errors).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Forecast {
    pub state: State,
    pub limit: f64,
    pub date: DateTime<Utc>,
    pub earliest: DateTime<Utc>,
    /// `None` when the shallow side of the range never reaches the limit.
    pub latest: Option<DateTime<Utc>>,
}

/// Least-squares trend over the last 12 points.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Trend {
    /// Change per week, in the tile's dimension.
    pub slope_per_week: f64,
    pub slope_se: f64,
    pub t: f64,
    pub points: usize,
    pub direction: Direction,
    pub forecast: Option<Forecast>,
}

/// One indicator as a unit page or report shows it.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Tile {
    /// Indicator key: `lost_flow`, `effective_flow`, `heat_rise`, ...
    pub key: String,
    pub label: String,
    pub dim: Dim,
    pub value: Option<f64>,
    /// Text form where a number does not say it (an ISO 4406 code).
    pub text: Option<String>,
    pub at: Option<DateTime<Utc>>,
    pub baseline: Option<f64>,
    pub baseline_spread: Option<f64>,
    /// Limit lines in the tile's dimension (two for a two-sided limit).
    pub watch: Vec<f64>,
    pub act: Vec<f64>,
    pub state: State,
    pub trend: Option<Trend>,
    /// One standard error of `value`, where the engine knows it (the leak conductance ratio).
    pub uncertainty: Option<f64>,
}

/// A point of a chart series.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct SeriesPoint {
    pub at: DateTime<Utc>,
    pub value: f64,
}

/// A chart: points of the era in force with the baseline band and limit lines.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Series {
    pub key: String,
    pub label: String,
    pub dim: Dim,
    pub points: Vec<SeriesPoint>,
    pub baseline: Option<f64>,
    pub baseline_spread: Option<f64>,
    pub watch: Vec<f64>,
    pub act: Vec<f64>,
}

struct Spec {
    key: &'static str,
    label: &'static str,
    dim: Dim,
    flag: Option<super::flags::FlagKind>,
    points: Vec<SeriesPoint>,
    value: Option<(DateTime<Utc>, f64)>,
    text: Option<String>,
    baseline: Option<(f64, f64)>,
    watch: Vec<f64>,
    act: Vec<f64>,
}

fn pts(v: impl Iterator<Item = (DateTime<Utc>, Option<f64>)>) -> Vec<SeriesPoint> {
    v.filter_map(|(at, x)| x.map(|value| SeriesPoint { at, value }))
        .collect()
}

fn specs(c: &Computed, limits: &Limits) -> Vec<Spec> {
    use super::flags::FlagKind as K;
    let lim = |k: LimitKey| limits.get(k);
    let ck = |f: fn(&CheckPoint) -> Option<f64>| pts(c.checks.iter().map(|p| (p.at, f(p))));
    let sk = |f: &dyn Fn(&SamplePoint) -> Option<f64>| pts(c.samples.iter().map(|p| (p.at, f(p))));
    let last = |v: &[SeriesPoint]| v.last().map(|p| (p.at, p.value));
    let bl = |i: BaselineIndicator| c.baseline.get(i).map(|b| (b.value, b.spread));
    let mut out = Vec::new();

    let lost = ck(|p| p.lost_flow_median_pct);
    let l = lim(LimitKey::LostFlowPct);
    out.push(Spec {
        key: "lost_flow",
        label: "Lost flow (median of 3)",
        dim: Dim::Percent,
        flag: Some(K::LostFlow),
        value: last(&lost),
        points: lost,
        text: None,
        baseline: bl(BaselineIndicator::EffectiveFlow).map(|_| (0.0, 0.0)),
        watch: l.watch.into_iter().collect(),
        act: l.act.into_iter().collect(),
    });

    let flow = ck(|p| p.effective_flow);
    let qb = bl(BaselineIndicator::EffectiveFlow);
    out.push(Spec {
        key: "effective_flow",
        label: "Effective flow",
        dim: Dim::Flow,
        flag: Some(K::LostFlow),
        value: last(&flow),
        points: flow,
        text: None,
        baseline: qb,
        watch: qb
            .iter()
            .flat_map(|b| l.watch.map(|w| b.0 * (1.0 - w / 100.0)))
            .collect(),
        act: qb
            .iter()
            .flat_map(|b| l.act.map(|a| b.0 * (1.0 - a / 100.0)))
            .collect(),
    });

    let corrected = ck(|p| p.corrected_flow);
    if !corrected.is_empty() {
        let cb = bl(BaselineIndicator::CorrectedFlow);
        out.push(Spec {
            key: "corrected_flow",
            label: "Effective flow corrected to baseline oil",
            dim: Dim::Flow,
            flag: Some(K::Drift),
            value: last(&corrected),
            points: corrected,
            text: None,
            baseline: cb,
            watch: Vec::new(),
            act: Vec::new(),
        });
    }

    // The heat rise at the baseline's working pressure, as its baseline and flag take it.
    let heat = ck(|p| p.heat_rise_corrected);
    let hb = bl(BaselineIndicator::HeatRise);
    let hl = lim(LimitKey::HeatRiseDriftK);
    out.push(Spec {
        key: "heat_rise",
        // Short enough for a tile; docs/engineering.md ("Computations", heat rise) says that
        // "baseline load" means the baseline's pressure (and oil, where the leakage is known).
        label: match c.heat_load {
            Some(_) => "Heat rise at baseline load",
            None => "Heat rise (oil − ambient)",
        },
        dim: Dim::TempDiff,
        flag: Some(K::HeatRise),
        value: last(&heat),
        points: heat,
        text: None,
        baseline: hb,
        watch: hb.iter().flat_map(|b| hl.watch.map(|w| b.0 + w)).collect(),
        act: hb.iter().flat_map(|b| hl.act.map(|a| b.0 + a)).collect(),
    });

    let leak = ck(|p| p.leak_ratio_median);
    let ll = lim(LimitKey::LeakConductanceRatio);
    let resolved = c.leak_resolved != Some(false);
    out.push(Spec {
        key: "leak_conductance",
        label: "Leak conductance ratio (median of 3)",
        dim: Dim::Ratio,
        flag: Some(K::LeakConductance),
        value: last(&leak),
        points: leak,
        text: (!resolved).then(|| "too uncertain to judge".to_string()),
        baseline: bl(BaselineIndicator::LeakConductance).map(|_| (1.0, 0.0)),
        watch: ll.watch.into_iter().collect(),
        act: ll.act.into_iter().collect(),
    });

    let drain = ck(|p| p.case_drain_corrected);
    if !drain.is_empty() {
        let db = bl(BaselineIndicator::CaseDrain);
        let dl = lim(LimitKey::CaseDrainRisePct);
        out.push(Spec {
            key: "case_drain",
            label: "Case drain (corrected to baseline oil)",
            dim: Dim::Flow,
            flag: Some(K::CaseDrain),
            value: last(&drain),
            points: drain,
            text: None,
            baseline: db,
            watch: db
                .iter()
                .flat_map(|b| dl.watch.map(|w| b.0 * (1.0 + w / 100.0)))
                .collect(),
            act: db
                .iter()
                .flat_map(|b| dl.act.map(|a| b.0 * (1.0 + a / 100.0)))
                .collect(),
        });
    }

    let temp = ck(|p| p.reservoir_temp);
    let tl = lim(LimitKey::ReservoirTempC);
    out.push(Spec {
        key: "reservoir_temp",
        label: "Reservoir temperature",
        dim: Dim::Temperature,
        flag: Some(K::ReservoirTemp),
        value: last(&temp),
        points: temp,
        text: None,
        baseline: None,
        watch: tl
            .watch
            .map(|w| w + crate::units::KELVIN_AT_0C)
            .into_iter()
            .collect(),
        act: tl
            .act
            .map(|a| a + crate::units::KELVIN_AT_0C)
            .into_iter()
            .collect(),
    });

    let kv = sk(&|p| p.kv40);
    let kl = lim(LimitKey::Kv40DriftPct);
    let new = c.fluid.as_ref().and_then(|f| f.kv40_new).map(|v| v.si());
    let two_sided = |n: f64, pct: Option<f64>| -> Vec<f64> {
        pct.map(|p| vec![n * (1.0 - p / 100.0), n * (1.0 + p / 100.0)])
            .unwrap_or_default()
    };
    out.push(Spec {
        key: "kv40",
        label: "KV40",
        dim: Dim::Viscosity,
        flag: Some(K::Viscosity),
        value: last(&kv),
        points: kv,
        text: None,
        baseline: new.map(|n| (n, 0.0)),
        watch: new.map(|n| two_sided(n, kl.watch)).unwrap_or_default(),
        act: new.map(|n| two_sided(n, kl.act)).unwrap_or_default(),
    });

    let over = sk(&|p| p.over_target_max.map(f64::from));
    let cl = lim(LimitKey::CleanlinessOverTarget);
    out.push(Spec {
        key: "cleanliness",
        label: "ISO 4406 over target (range numbers)",
        dim: Dim::RangeNumber,
        flag: Some(K::Cleanliness),
        value: last(&over),
        text: c
            .samples
            .iter()
            .rev()
            .find_map(|p| p.code.map(|c| c.to_string())),
        points: over,
        baseline: Some((0.0, 0.0)),
        watch: cl.watch.into_iter().collect(),
        act: cl.act.into_iter().collect(),
    });
    for (i, size) in ["4", "6", "14"].iter().enumerate() {
        let code = sk(&|p| {
            p.code
                .and_then(|c| c.parts[i].scale)
                .map(|s| f64::from(s.rank()))
        });
        if code.is_empty() {
            continue;
        }
        let t = c
            .target
            .and_then(|t| t.parts[i].scale)
            .map(|s| f64::from(s.rank()));
        out.push(Spec {
            key: match i {
                0 => "iso4406_4um",
                1 => "iso4406_6um",
                _ => "iso4406_14um",
            },
            label: match *size {
                "4" => "ISO 4406 ≥4 µm(c)",
                "6" => "ISO 4406 ≥6 µm(c)",
                _ => "ISO 4406 ≥14 µm(c)",
            },
            dim: Dim::RangeNumber,
            flag: None,
            value: last(&code),
            points: code,
            text: None,
            baseline: t.map(|t| (t, 0.0)),
            watch: t.iter().flat_map(|t| cl.watch.map(|w| t + w)).collect(),
            act: t.iter().flat_map(|t| cl.act.map(|a| t + a)).collect(),
        });
    }

    let water = sk(&|p| p.water_ppm);
    let wl = lim(LimitKey::WaterPpm);
    out.push(Spec {
        key: "water",
        label: "Water",
        dim: Dim::Ppm,
        flag: Some(K::Water),
        value: last(&water),
        points: water,
        text: None,
        baseline: None,
        watch: wl.watch.into_iter().collect(),
        act: wl.act.into_iter().collect(),
    });

    let acid = sk(&|p| p.acid_rise);
    let al = lim(LimitKey::AcidRiseMgKohG);
    out.push(Spec {
        key: "acid_rise",
        label: "Acid number rise",
        dim: Dim::AcidNumber,
        flag: Some(K::Acid),
        value: last(&acid),
        points: acid,
        text: None,
        baseline: Some((0.0, 0.0)),
        watch: al.watch.into_iter().collect(),
        act: al.act.into_iter().collect(),
    });
    out
}

/// Least-squares trend of the last 12 points (`physics::stats`), with the date the first
/// limit line ahead is reached when the slope is significant.
pub fn trend(points: &[SeriesPoint], watch: &[f64], act: &[f64]) -> Option<Trend> {
    let from = points.len().saturating_sub(TREND_POINTS);
    let p: Vec<(DateTime<Utc>, f64)> = points[from..].iter().map(|q| (q.at, q.value)).collect();
    let tt = stats::linear_trend_over_time(&p).ok()?;
    let t = tt.trend.t_stat();
    let direction = match (tt.is_significant(), tt.slope_per_week() > 0.0) {
        (false, _) => Direction::Flat,
        (true, true) => Direction::Rising,
        (true, false) => Direction::Falling,
    };
    let forecast = watch
        .iter()
        .map(|&v| (v, State::Watch))
        .chain(act.iter().map(|&v| (v, State::Act)))
        .filter_map(|(limit, state)| {
            let f = tt.forecast(limit)?;
            Some(Forecast {
                state,
                limit,
                date: f.at,
                earliest: f.earliest,
                latest: f.latest,
            })
        })
        .min_by_key(|f| f.date);
    Some(Trend {
        slope_per_week: tt.slope_per_week(),
        slope_se: tt.trend.slope_se,
        t,
        points: p.len(),
        direction,
        forecast,
    })
}

/// Tiles of the era in force, in a fixed order; the state of each is that of its flag, or "not
/// judged yet" where it is in `not_judged`, else steady.
pub fn tiles(
    c: &Computed,
    limits: &Limits,
    flags: &[Flag],
    not_judged: &[super::judged::NotJudged],
) -> Vec<Tile> {
    specs(c, limits)
        .into_iter()
        .filter(|s| !s.key.starts_with("iso4406_") && s.key != "corrected_flow")
        .map(|s| {
            let judged = !not_judged.iter().any(|n| n.key == s.key);
            let state = s
                .flag
                .and_then(|k| flags.iter().find(|f| f.kind == k))
                .map(|f| f.state)
                .unwrap_or(if judged {
                    State::Steady
                } else {
                    State::NotJudged
                });
            Tile {
                key: s.key.to_string(),
                label: s.label.to_string(),
                dim: s.dim,
                value: s.value.map(|v| v.1),
                text: s.text,
                at: s.value.map(|v| v.0),
                baseline: s.baseline.map(|b| b.0),
                baseline_spread: s.baseline.map(|b| b.1),
                trend: trend(&s.points, &s.watch, &s.act),
                uncertainty: if s.key == "leak_conductance" {
                    c.summary.leak_conductance_ratio_se
                } else {
                    None
                },
                watch: s.watch,
                act: s.act,
                state,
            }
        })
        .collect()
}

/// Chart series of the era in force.
pub fn series(c: &Computed, limits: &Limits) -> Vec<Series> {
    specs(c, limits)
        .into_iter()
        .map(|s| Series {
            key: s.key.to_string(),
            label: s.label.to_string(),
            dim: s.dim,
            points: s.points,
            baseline: s.baseline.map(|b| b.0),
            baseline_spread: s.baseline.map(|b| b.1),
            watch: s.watch,
            act: s.act,
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn heat_load_without_a_flow_model_goes_with_the_pressure() {
        // ΔT = R · P with P ∝ p (Newton's law of cooling, a fixed pump's flow): at 120 bar
        // against a 100 bar reference the load is 1.2 times, whatever the oil (by hand).
        let m = HeatLoad::pressure_only(100.0e5);
        let k = m
            .ratio(120.0e5, Some(293.15), Some(30e-6), |_| None)
            .unwrap();
        assert!((k - 1.2).abs() < 1e-12, "{k}");
        assert!(m.ratio(0.0, None, None, |_| None).is_none());
    }

    #[test]
    fn heat_load_with_leakage_by_hand() {
        // D = 1, leak 0.05 at the reference (100 bar, 30 cSt), share 0.25: throttled 0.20.
        // At 120 bar and 15 cSt: P = p · (0.20 + 0.05 · (30/15) · 1.2) = p · 0.32, against
        // 100 bar · 0.25 at the reference: 120 · 0.32 / (100 · 0.25) = 1.536 (by hand).
        let r = Reference {
            viscosity: 30e-6,
            pressure: 100.0e5,
        };
        let m = HeatLoad::with_leakage(r, 1.0, 0.05, 0.25);
        assert!((m.throttled - 0.20).abs() < 1e-15);
        let here = m.at(120.0e5, Some(15e-6)).unwrap();
        let there = m.at(100.0e5, Some(30e-6)).unwrap();
        assert!((here / there - 1.536).abs() < 1e-12, "{}", here / there);
        // A leak beyond the share leaves nothing throttled, never less.
        assert_eq!(HeatLoad::with_leakage(r, 1.0, 0.4, 0.25).throttled, 0.0);
    }

    #[test]
    fn a_sound_unit_settles_where_its_heat_balance_closes() {
        // With the oil's thinning set to ν_ref/ν = (T − T_a)/20 K, at the reference pressure
        // the balance ΔT = R · p · (q_t + q_l · ΔT/20) is linear in ΔT:
        // ΔT = R·p·q_t / (1 − R·p·q_l/20) (worked by hand). R·p·q_t = 16 K and R·p·q_l = 4 K
        // give ΔT = 16 / 0.8 = 20 K, where ν = ν_ref: the load ratio is 1.
        let r = Reference {
            viscosity: 30e-6,
            pressure: 100.0e5,
        };
        let m = HeatLoad {
            resistance: Some(16.0 / (100.0e5 * 0.20)),
            ..HeatLoad::with_leakage(r, 1.0, 0.05, 0.25)
        };
        let amb = 293.15;
        let oil = |t: f64| Some(30e-6 * 20.0 / (t - amb).max(1e-9));
        let dt = m.settled_rise(100.0e5, amb, oil).unwrap();
        assert!((dt - 20.0).abs() < 1e-5, "{dt}");
        let k = m.ratio(100.0e5, Some(amb), Some(10e-6), oil).unwrap();
        assert!((k - 1.0).abs() < 1e-6, "{k}");
        // At 120 bar the leakage goes as p too: ΔT = 1.2·16 + 1.2·4·1.2 · ΔT/20, so
        // ΔT = 19.2 / (1 − 0.288) = 26.966 K, and the load ratio is ΔT/20 = 1.3483 (by hand).
        let dt = m.settled_rise(120.0e5, amb, oil).unwrap();
        assert!((dt - 19.2 / 0.712).abs() < 1e-5, "{dt}");
        let k = m.ratio(120.0e5, Some(amb), None, oil).unwrap();
        assert!((k - 19.2 / 0.712 / 20.0).abs() < 1e-6, "{k}");
        // The oil read (10 cSt, as a fouled cooler would leave it) does not enter: the hall
        // and the pressure set the load. Without a hall reading, it does.
        let read = m.ratio(100.0e5, None, Some(10e-6), oil).unwrap();
        assert!((read - (0.20 + 0.05 * 3.0) / 0.25).abs() < 1e-12, "{read}");
        // A balance that cannot close (R·p·q_l ≥ 20 K: each kelvin brings more than a kelvin)
        // has no settled rise.
        let runaway = HeatLoad {
            resistance: Some(16.0 / (100.0e5 * 0.20) * 6.0),
            ..m
        };
        assert!(runaway.settled_rise(100.0e5, amb, oil).is_none());
    }

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

    fn sp(week: f64, v: f64) -> SeriesPoint {
        let t0: DateTime<Utc> = "2024-01-01T00:00:00Z".parse().unwrap();
        SeriesPoint {
            at: t0 + chrono::Duration::seconds((week * 7.0 * 86_400.0) as i64),
            value: v,
        }
    }

    #[test]
    fn a_significant_trend_forecasts_the_next_limit() {
        // y = 1 + 0.5·x exactly (weeks 0..5): slope 0.5/week, se 0, limit 8 reached at x = 14
        // (worked by hand: (8 − 1)/0.5 = 14 weeks after the first point).
        let p: Vec<SeriesPoint> = (0..6)
            .map(|i| sp(f64::from(i), 1.0 + 0.5 * f64::from(i)))
            .collect();
        let tr = trend(&p, &[8.0], &[15.0]).unwrap();
        assert!((tr.slope_per_week - 0.5).abs() < 1e-9);
        assert_eq!(tr.direction, Direction::Rising);
        let f = tr.forecast.unwrap();
        assert_eq!(f.state, State::Watch);
        assert_eq!(f.date, sp(14.0, 0.0).at);
        // Flat noise: no forecast.
        let n: Vec<SeriesPoint> = [5.0, 5.2, 4.9, 5.1, 5.0, 4.8]
            .iter()
            .enumerate()
            .map(|(i, v)| sp(i as f64, *v))
            .collect();
        let tr = trend(&n, &[8.0], &[15.0]).unwrap();
        assert_eq!(tr.direction, Direction::Flat);
        assert!(tr.forecast.is_none());
    }
}
