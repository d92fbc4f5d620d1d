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
use super::{Calendar, State};
use crate::model::{Check, EventKind, FilterState, Fluid, Id, OilLevel, Sample, UnitHistory};
use crate::physics::cleanliness::{self as clean, Iso4406Code};
use crate::physics::hydraulics as hyd;
use crate::physics::oil_life;
use crate::physics::stats;
use crate::physics::viscosity::{self as visc, Walther};
use crate::units::{Flow, Pressure, Temperature, Viscosity};

mod drift;
mod fluid;
mod heat;
mod hours;
mod steps;
mod summary;
mod tiles;

pub use drift::Restart;
use drift::{restarts_in, run_detectors};
use fluid::sample_points;
pub use heat::HeatLoad;
use hours::{equiv_hours_per_day, equivalent_over, hour_readings};
pub(crate) use hours::{hours_at, hours_per_day};
pub use steps::{confirmed_level, step_at, sudden_loss};
use steps::{loss_against, Stroke};
use summary::summarise;
pub use tiles::{series, tiles, trend, Dim, Direction, Forecast, Series, SeriesPoint, Tile, Trend};

/// How many checks the median of a check indicator is taken over (lost flow in
/// docs/engineering.md, "Default limits").
pub const MEDIAN_OF: usize = 3;
/// A sudden loss compares two checks with the median of up to this many checks before them,
/// and needs at least `SUDDEN_BEFORE_MIN` of those (common practice, no published source).
pub const SUDDEN_BEFORE: usize = 6;
pub const SUDDEN_BEFORE_MIN: usize = 4;
/// How many points a trend line is fitted to (docs/engineering.md, "Computations").
pub const TREND_POINTS: usize = 12;

/// Whether an era's leakage fit is well determined: two standard errors of its conductance
/// within `margin` of it (the leak-conductance watch margin, 1.3× → 0.3), so its own error
/// cannot raise a flag.
fn well_determined(f: &hyd::LeakageFit, margin: f64) -> bool {
    2.0 * f.conductance_se <= margin * f.conductance
}

/// The displacement the flow is corrected with (m³/s): the era's leakage fit where it is well
/// determined, else the rated flow, else a looser fit. A loose fit's displacement is often
/// well above the pump's, and carried to warmer oil it takes a pump's wear for the season's
/// thinner oil: a flow that fell by a third through a spring read as no loss at all.
pub fn displacement_of(
    fit: Option<hyd::LeakageFit>,
    rated: Option<f64>,
    margin: f64,
) -> Option<f64> {
    fit.filter(|f| well_determined(f, margin))
        .map(|f| f.displacement)
        .or(rated)
        .or(fit.map(|f| f.displacement))
}

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
    /// For the corrected flow at a check in thinner oil or at a harder job than the
    /// reference: the EWMA's shift below the baseline as the share of flow it takes at this
    /// check's own oil and pressure, % (`drift::shift_at_check`). The same wear robs a hot
    /// week's stroke of more, and a shift that is real at the reference (two of its spreads)
    /// is material when it reaches the lost-flow watch limit here.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub shift_here_pct: Option<f64>,
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
    /// The factor (ν/ν_ref)·(p_ref/p) the leakage was scaled by to correct this check's flow:
    /// the stopwatch's scatter reaches the corrected flow this many times over.
    #[serde(default)]
    pub flow_scale: Option<f64>,
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
    /// The shop's calendar, for the dates the flags and the plan write.
    pub calendar: Calendar,
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

    run_detectors(&mut points, &baseline, limits, &restarts, displacement);

    // Can the leakage be resolved at all? Where the era's fit resolved it, yes; else the
    // baseline leakage against the rated flow must stand well above the spread of the
    // (corrected) timed flow, never taken below the stopwatch floor.
    let floor_rel = limits.value(LimitKey::MinSpreadPct) / 100.0;
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

    // Sudden loss: two checks in a row well below what the weeks just before them give
    // (`loss_against`): compared on the flow corrected to the reference conditions where the
    // leakage is resolved (a hot week moves a leaky pump's timed flow), as timed where it is
    // not; in a hall warmer than at the checks before, against their leakage moved to the
    // check's oil. The displacement is the era's fit where it is well determined, else the
    // rated flow: a loose fit's displacement, carried to a hot week's p/ν, would expect a
    // loss that hides a real one.
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
            },
        ));
        let n = strokes.len();
        if n >= 2 + SUDDEN_BEFORE_MIN {
            let before: Vec<Stroke> = strokes[n.saturating_sub(2 + SUDDEN_BEFORE)..n - 2]
                .iter()
                .map(|s| s.1)
                .collect();
            if let (Some(first), Some(second)) = (
                loss_against(&before, &strokes[n - 2].1, sudden_d, warmer),
                loss_against(&before, &strokes[n - 1].1, sudden_d, warmer),
            ) {
                p.sudden_loss_pct = Some(sudden_loss(first, second, watch_pct));
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
