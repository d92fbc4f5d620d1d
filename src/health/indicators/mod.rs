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

mod compute;
mod drift;
mod fluid;
mod heat;
mod hours;
mod steps;
mod summary;
mod tiles;

pub use compute::compute;
pub use drift::Restart;
use drift::{restarts_in, run_detectors};
use fluid::sample_points;
pub use heat::HeatLoad;
use hours::{equiv_hours_per_day, equivalent_over, hour_readings};
pub(crate) use hours::{hours_at, hours_per_day};
pub use steps::{confirmed_level, step_at, sudden_loss};
use steps::{job_unknown, loss_against, Stroke};
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

/// How far a leakage fit's displacement may stand from the rated flow and still be believed,
/// as a share of the rated flow: a pump's displacement and its motor's speed are within a few
/// per cent of what the register's rated flow says (common practice, no published source).
pub const DISPLACEMENT_BAND: f64 = 0.05;

/// Whether a leakage fit's displacement is one the pump could have: within `DISPLACEMENT_BAND`
/// of the rated flow where that is known. A fit over a few weeks takes in more than leakage
/// (two people timing the stroke a little differently in the cold and the warm weeks tilt its
/// line), and its displacement then stands well off the pump's; carried to oil far thicker or
/// thinner than the baseline's, that error grows with the distance and reads as wear or as
/// a gain. Such a fit is set aside and the rated flow stands for the displacement.
pub fn plausible_fit(f: &hyd::LeakageFit, rated: Option<f64>) -> bool {
    match rated.filter(|r| *r > 0.0) {
        Some(r) => (f.displacement / r - 1.0).abs() <= DISPLACEMENT_BAND,
        None => true,
    }
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
    /// Whether this check's working pressure was not read, or was held as a slip, among checks
    /// whose pressure was read (`steps::job_unknown`): its sudden loss compares its flow with
    /// theirs as read, and a harder job would read as a loss too, so it shows at watch at most
    /// and confirms no step.
    #[serde(default)]
    pub sudden_job_unknown: bool,
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
    /// The displacement the flows are corrected with, m³/s (`displacement_of`).
    pub displacement: Option<f64>,
    /// The oil volume of the timed stroke, m³.
    pub stroke_volume: Option<f64>,
}

impl Computed {
    /// The flow a stroke timed at `stroke_s` on the check `p` gives as the era's flows are
    /// judged: at the reference conditions (D − (D − Q)·k, as the corrected flows) where the
    /// baseline is a corrected flow — k from the check's oil and pressure, or, where the
    /// screen held those, from `read`, the oil temperature (K) and pressure (Pa) as read —
    /// `None` if this check cannot be corrected; as timed where the era's flows are not
    /// corrected at all; m³/s.
    pub fn flow_at_reference(
        &self,
        p: &CheckPoint,
        stroke_s: f64,
        read: (Option<f64>, Option<f64>),
    ) -> Option<f64> {
        use super::baseline::BaselineIndicator;
        let q = self.stroke_volume.filter(|_| stroke_s > 0.0)? / stroke_s;
        if self
            .baseline
            .get(BaselineIndicator::CorrectedFlow)
            .is_some()
        {
            let k = p.flow_scale.or_else(|| self.scale_at(read.0?, read.1?))?;
            let d = self.displacement?;
            Some(d - (d - q) * k)
        } else {
            Some(q)
        }
    }

    /// The leakage scale k = (ν/ν_ref)·(p_ref/p) of an oil at `oil_temp_k` and a pressure
    /// `pressure_pa`, as each check's `flow_scale` (the fluid's viscosity line).
    fn scale_at(&self, oil_temp_k: f64, pressure_pa: f64) -> Option<f64> {
        let f = self.fluid.as_ref()?;
        let w =
            crate::physics::viscosity::Walther::from_kv40_kv100(f.kv40_new?, f.kv100_new?).ok()?;
        let nu = w.at(crate::units::Temperature(oil_temp_k)).si();
        let r = self.reference?;
        (nu.is_finite() && nu > 0.0 && pressure_pa > 0.0)
            .then(|| nu / r.viscosity * r.pressure / pressure_pa)
    }
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
