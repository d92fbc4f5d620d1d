//! Limits and intervals of the health engine: the built-in shop defaults, the stored shop
//! defaults and per-unit overrides merged into the set in force for one unit.
//!
//! Pure: the stored rows (`model::LimitSetting`) come in, a `Limits` value goes out. Reading and
//! writing the rows is the store's job, choosing which unit is the application layer's.
//!
//! Every built-in value below is *common practice* (a rule of thumb of the trade with no
//! published source) unless its comment names a source, and every one can be overridden for the
//! shop or for one unit.

use serde::{Deserialize, Serialize};

use crate::model::{Id, LimitSetting};

/// How a value is compared with a limit.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Compare {
    /// The limit is reached when the value is equal to it or beyond (`≥`).
    AtLeast,
    /// The limit is passed only when the value is strictly beyond it (`>`).
    Above,
}

impl Compare {
    /// Whether `value` has reached `limit` under this comparison. A value within rounding noise
    /// of the limit (1e-9 of it) counts as equal to it, so that a computed 7.999999999999 %
    /// is at an 8 % limit and 60.000000000001 °C is not above a 60 °C one.
    pub fn reached(self, value: f64, limit: f64) -> bool {
        let eps = 1e-9 * limit.abs().max(1.0);
        match self {
            Compare::AtLeast => value >= limit - eps,
            Compare::Above => value > limit + eps,
        }
    }

    /// The sign a person reads (`≥` or `>`).
    pub fn symbol(self) -> &'static str {
        match self {
            Compare::AtLeast => "≥",
            Compare::Above => ">",
        }
    }
}

/// Whether a key holds a pair of limits or a single setting.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum LimitShape {
    /// `watch` and `act` limits (either may be absent).
    Threshold(Compare),
    /// One value (an interval or a detector parameter), stored in the `act` column.
    Value,
}

macro_rules! limit_keys {
    ($($variant:ident = $text:literal, $shape:expr, $watch:expr, $act:expr, $unit:literal, $what:literal;)+) => {
        /// Every limit and interval the engine knows, by its stored key.
        #[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
        pub enum LimitKey { $(#[serde(rename = $text)] $variant),+ }

        impl LimitKey {
            pub const ALL: &'static [LimitKey] = &[$(LimitKey::$variant),+];

            /// The key as stored and typed on the command line.
            pub fn as_str(self) -> &'static str {
                match self { $(LimitKey::$variant => $text),+ }
            }
            pub fn shape(self) -> LimitShape {
                match self { $(LimitKey::$variant => $shape),+ }
            }
            /// The built-in default `(watch, act)`; a `Value` key has only `act`.
            pub fn builtin(self) -> (Option<f64>, Option<f64>) {
                match self { $(LimitKey::$variant => ($watch, $act)),+ }
            }
            /// The unit the value is written in (`%`, `K`, `°C`, `ppm`, ...).
            pub fn unit(self) -> &'static str {
                match self { $(LimitKey::$variant => $unit),+ }
            }
            /// One line saying what the key limits.
            pub fn describe(self) -> &'static str {
                match self { $(LimitKey::$variant => $what),+ }
            }
        }
    };
}

use Compare::{Above, AtLeast};
use LimitShape::{Threshold, Value};

limit_keys! {
    // docs/engineering.md, "Default limits"; all common practice.
    LostFlowPct = "lost_flow_pct", Threshold(AtLeast), Some(8.0), Some(15.0), "%",
        "lost flow against the era baseline, median of the last 3 checks";
    LeakConductanceRatio = "leak_conductance_ratio", Threshold(AtLeast), Some(1.3), Some(1.6), "x",
        "temperature-compensated leak conductance against the baseline, median of the last 3 checks";
    CaseDrainRisePct = "case_drain_rise_pct", Threshold(AtLeast), Some(50.0), Some(100.0), "%",
        "case-drain flow rise over the baseline, median of the last 3 checks";
    HeatRiseDriftK = "heat_rise_drift_k", Threshold(AtLeast), Some(5.0), Some(10.0), "K",
        "heat rise (oil minus ambient) above the baseline, median of the last 3 checks";
    ReservoirTempC = "reservoir_temp_c", Threshold(Above), Some(60.0), Some(70.0), "°C",
        "reservoir oil temperature at a check";
    ReservoirTempCeilingC = "reservoir_temp_ceiling_c", Threshold(Above), None, Some(82.0), "°C",
        "reservoir temperature ceiling: always act above it";
    Kv40DriftPct = "kv40_drift_pct", Threshold(AtLeast), Some(5.0), Some(10.0), "%",
        "KV40 of a sample against the new oil, either way (outside the ISO VG band is always act)";
    CleanlinessOverTarget = "cleanliness_over_target", Threshold(AtLeast), Some(1.0), Some(2.0), "range numbers",
        "ISO 4406 range numbers above the unit's target on any size";
    WaterPpm = "water_ppm", Threshold(Above), Some(200.0), Some(500.0), "ppm",
        "water in a sample";
    AcidRiseMgKohG = "acid_rise_mgkoh_g", Threshold(Above), Some(0.2), Some(0.3), "mg KOH/g",
        "acid number rise over the new oil";
    DriftChecks = "drift_checks", Threshold(AtLeast), Some(2.0), Some(3.0), "checks",
        "consecutive checks with an EWMA or CUSUM signal (2 = confirmed by the next check)";
    OverdueDays = "overdue_days", Threshold(AtLeast), Some(1.0), Some(14.0), "days",
        "days past the due date of planned work";
    // Intervals (docs/engineering.md, "Work planning"); common practice for mineral hydraulic oil
    // in a shop that samples
    // its oil and changes it on condition: the calendar and hour limits are the backstop, not
    // the rule.
    CheckIntervalDays = "check_interval_days", Value, None, Some(7.0), "days",
        "walk-round check interval";
    SampleIntervalWeeks = "sample_interval_weeks", Value, None, Some(13.0), "weeks",
        "fluid sample interval";
    FluidChangeHours = "fluid_change_hours", Value, None, Some(10000.0), "h",
        "fluid change interval in run-hours";
    FluidChangeMonths = "fluid_change_months", Value, None, Some(36.0), "months",
        "fluid change interval in calendar months";
    OilLifeEquivHours = "oil_life_equiv_hours", Value, None, Some(10000.0), "equivalent h",
        "fluid life in equivalent hours at 60 °C (ageing doubles per 10 °C above)";
    FilterChangeHours = "filter_change_hours", Value, None, Some(5000.0), "h",
        "filter change interval in run-hours (or at once on the indicator)";
    DueSoonDays = "due_soon_days", Value, None, Some(14.0), "days",
        "work due within this many days is listed as due soon";
    // Baseline and drift detectors.
    // A baseline forms from the era's first `baseline_checks` and keeps growing with each check
    // to `baseline_checks_max`: with a stopwatch's 2–4 % scatter the median of 4 is off by
    // about 1.25·σ/√4 ≈ 2 %, of 12 by about 1 % (the standard error of a median); until it is
    // complete, the detectors widen their limits by that error.
    BaselineChecks = "baseline_checks", Value, None, Some(4.0), "checks",
        "checks at the start of an era from which its baseline is formed";
    BaselineChecksMax = "baseline_checks_max", Value, None, Some(12.0), "checks",
        "checks the baseline keeps growing to before it is fixed";
    // λ = 0.25, L = 3, k = 0.5σ, h = 5σ: within the usual choices in D. C. Montgomery,
    // Introduction to Statistical Quality Control (EWMA and tabular CUSUM chapters; from
    // memory: λ between 0.05 and 0.25 works well, L = 3 particularly with the larger λ). The
    // top of that range: a worn pump's leakage grows faster and faster, and the EWMA trails
    // a ramp by (1 − λ)/λ checks, 3 here against 4 at λ = 0.2 (pump wear at act up to 2
    // weeks sooner on the detection benchmark, no false act added; DEVELOPERS.md).
    EwmaLambda = "ewma_lambda", Value, None, Some(0.25), "",
        "EWMA smoothing weight λ";
    EwmaL = "ewma_l", Value, None, Some(3.0), "σ",
        "EWMA control-limit width L";
    CusumK = "cusum_k", Value, None, Some(0.5), "σ",
        "CUSUM reference value k";
    CusumH = "cusum_h", Value, None, Some(5.0), "σ",
        "CUSUM decision interval h";
    // A baseline of 4 hand-timed strokes can by chance have a tiny spread; a stopwatch is good
    // to about 5 % on a 4 s stroke (docs/engineering.md, "Readings"), so the spread used by the
    // detectors is never
    // taken below these floors. Heat rise moves by a few kelvin with load and season (a warmer
    // hall, thinner oil leaking more), which the 4 checks of a winter baseline cannot show.
    MinSpreadPct = "min_spread_pct", Value, None, Some(2.5), "%",
        "smallest relative spread used for flow, conductance and case-drain baselines";
    MinSpreadHeatK = "min_spread_heat_k", Value, None, Some(2.5), "K",
        "smallest spread used for the heat-rise baseline";
    // Leakage is the small difference of two flows: a leak of 3 % of the pump's flow cannot be
    // told from a 2.5 % stopwatch scatter. The leak conductance is judged only where the
    // baseline leakage is at least this many spreads of the timed flow (statistics of a
    // difference; the factor is common practice, no published source).
    LeakMinSpreads = "leak_min_spreads", Value, None, Some(4.0), "spreads",
        "baseline leakage, in spreads of the timed flow, below which leak conductance is not judged";
    // The heat rise is judged against what the baseline gives at the check's pressure and hall
    // (`indicators::HeatLoad`): the pump's leakage, all of it heat, moves with p²/ν; the rest of
    // the circuit's loss with p. A hydraulic circuit commonly turns about a fifth to a third of
    // its input power into heat (common practice, no published source).
    HeatSharePct = "heat_share_pct", Value, None, Some(25.0), "%",
        "share of the pump's input power (D × p) a sound unit turns into heat, leakage included";
}

impl std::fmt::Display for LimitKey {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.as_str())
    }
}

impl std::str::FromStr for LimitKey {
    type Err = LimitError;
    fn from_str(s: &str) -> Result<Self, LimitError> {
        let s = s.trim();
        LimitKey::ALL
            .iter()
            .copied()
            .find(|k| k.as_str() == s)
            .ok_or_else(|| LimitError::UnknownKey(s.to_string()))
    }
}

/// Where a limit in force came from.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum LimitOrigin {
    Builtin,
    Shop,
    Unit,
}

/// One limit in force.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct Limit {
    pub key: LimitKey,
    pub watch: Option<f64>,
    pub act: Option<f64>,
    /// Where `watch` came from.
    pub watch_origin: LimitOrigin,
    /// Where `act` came from.
    pub act_origin: LimitOrigin,
}

impl Limit {
    /// The state `value` reaches: `Some(true)` = act, `Some(false)` = watch, `None` = neither.
    pub fn grade(&self, value: f64) -> Option<bool> {
        let cmp = match self.key.shape() {
            Threshold(c) => c,
            Value => return None,
        };
        if !value.is_finite() {
            return None;
        }
        if self.act.is_some_and(|a| cmp.reached(value, a)) {
            Some(true)
        } else if self.watch.is_some_and(|w| cmp.reached(value, w)) {
            Some(false)
        } else {
            None
        }
    }

    /// The comparison of a threshold key (`AtLeast` for a value key, where it is not used).
    pub fn compare(&self) -> Compare {
        match self.key.shape() {
            Threshold(c) => c,
            Value => AtLeast,
        }
    }
}

#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum LimitError {
    #[error("`{0}` is not a limit key; known keys: {keys}", keys = LimitKey::ALL.iter().map(|k| k.as_str()).collect::<Vec<_>>().join(", "))]
    UnknownKey(String),
    #[error("{key}: {reason}")]
    Invalid { key: LimitKey, reason: String },
}

/// The limits and intervals in force for one unit (or for the shop when no unit is given).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Limits {
    limits: Vec<Limit>,
}

impl Default for Limits {
    fn default() -> Self {
        Limits::builtin()
    }
}

impl Limits {
    /// The built-in defaults.
    pub fn builtin() -> Self {
        let limits = LimitKey::ALL
            .iter()
            .map(|&key| {
                let (watch, act) = key.builtin();
                Limit {
                    key,
                    watch,
                    act,
                    watch_origin: LimitOrigin::Builtin,
                    act_origin: LimitOrigin::Builtin,
                }
            })
            .collect();
        Limits { limits }
    }

    /// Merges stored rows: built-in defaults, then the shop's rows (`unit_id` `None`), then the
    /// rows of `unit` — a per-unit value wins over the shop's, a missing one inherits it. Rows of
    /// other units and unknown keys (written by a newer version) are skipped.
    pub fn resolve(rows: &[LimitSetting], unit: Option<Id>) -> Self {
        let mut limits = Limits::builtin();
        let layers = [(None, LimitOrigin::Shop), (unit, LimitOrigin::Unit)];
        for (layer, origin) in layers {
            if origin == LimitOrigin::Unit && unit.is_none() {
                continue;
            }
            for row in rows.iter().filter(|r| r.unit_id == layer) {
                let Ok(key) = row.key.parse::<LimitKey>() else {
                    continue;
                };
                let l = limits.entry_mut(key);
                if let Some(w) = row.watch {
                    l.watch = Some(w);
                    l.watch_origin = origin;
                }
                if let Some(a) = row.act {
                    l.act = Some(a);
                    l.act_origin = origin;
                }
            }
        }
        limits
    }

    fn entry_mut(&mut self, key: LimitKey) -> &mut Limit {
        let i = LimitKey::ALL.iter().position(|&k| k == key).unwrap_or(0);
        &mut self.limits[i]
    }

    /// The limit in force for `key`.
    pub fn get(&self, key: LimitKey) -> Limit {
        let i = LimitKey::ALL.iter().position(|&k| k == key).unwrap_or(0);
        self.limits[i]
    }

    /// The single value of a `Value` key (its `act`), or the built-in one if it was cleared.
    pub fn value(&self, key: LimitKey) -> f64 {
        self.get(key).act.or(key.builtin().1).unwrap_or(0.0)
    }

    /// All limits in force, in key order.
    pub fn all(&self) -> &[Limit] {
        &self.limits
    }

    /// Sets one limit in memory (after `validate_setting`); used by tests and previews.
    pub fn with(mut self, key: LimitKey, watch: Option<f64>, act: Option<f64>) -> Self {
        let l = self.entry_mut(key);
        if watch.is_some() {
            l.watch = watch;
            l.watch_origin = LimitOrigin::Unit;
        }
        if act.is_some() {
            l.act = act;
            l.act_origin = LimitOrigin::Unit;
        }
        self
    }
}

/// The range a key's value may take, in the key's unit: from `lo` (itself allowed when
/// `lo_incl`) up to and including `hi`, whole numbers only when `whole`.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct ValueRange {
    pub lo: f64,
    pub lo_incl: bool,
    pub hi: f64,
    pub whole: bool,
}

/// A temperature sumpbook accepts at all (oil or hall), in °C: the walk-round form and the
/// importer refuse a reading outside it, and a temperature limit outside it could never be
/// reached.
pub const TEMP_RANGE_C: (f64, f64) = crate::bounds::TEMP_C;

const fn from(lo: f64, hi: f64) -> ValueRange {
    ValueRange {
        lo,
        lo_incl: true,
        hi,
        whole: false,
    }
}
const fn above(lo: f64, hi: f64) -> ValueRange {
    ValueRange {
        lo,
        lo_incl: false,
        hi,
        whole: false,
    }
}
const fn whole(lo: f64, hi: f64) -> ValueRange {
    ValueRange {
        lo,
        lo_incl: true,
        hi,
        whole: true,
    }
}

impl ValueRange {
    pub fn contains(&self, v: f64) -> bool {
        let lo_ok = if self.lo_incl {
            v >= self.lo
        } else {
            v > self.lo
        };
        lo_ok && v <= self.hi && (!self.whole || v.fract() == 0.0)
    }

    /// In words, with the unit: `from 1 to 366 days`, `above 0 and up to 100 %`.
    pub fn describe(&self, unit: &str) -> String {
        let u = if unit.is_empty() {
            String::new()
        } else {
            format!(" {unit}")
        };
        let (lo, hi) = (super::text::num(self.lo, 3), super::text::num(self.hi, 3));
        let kind = if self.whole { "a whole number " } else { "" };
        if self.lo_incl {
            format!("{kind}from {lo} to {hi}{u}")
        } else {
            format!("{kind}above {lo} and up to {hi}{u}")
        }
    }
}

impl LimitKey {
    /// The physical range of the key's value. Every key has one, so that no value a person
    /// can store makes a due date or a chart impossible to compute. The bounds are common
    /// practice (no published source) unless a comment names one: wide enough for any shop,
    /// narrow enough that dates stay within the calendar and figures within a page.
    pub fn range(self) -> ValueRange {
        use LimitKey::*;
        let (t_lo, t_hi) = TEMP_RANGE_C;
        match self {
            // A share of the pump's flow or of the new oil's viscosity: at most all of it.
            LostFlowPct | Kv40DriftPct => above(0.0, 100.0),
            LeakConductanceRatio => above(1.0, 100.0),
            CaseDrainRisePct => above(0.0, 10_000.0),
            // The widest rise the accepted temperature range allows.
            HeatRiseDriftK => above(0.0, t_hi - t_lo),
            ReservoirTempC | ReservoirTempCeilingC => from(t_lo, t_hi),
            // ISO 4406:2021 Table 1: range numbers run from 0 to 28.
            CleanlinessOverTarget => above(0.0, 28.0),
            // One million parts per million is all water.
            WaterPpm => above(0.0, 1_000_000.0),
            AcidRiseMgKohG => above(0.0, 50.0),
            DriftChecks => whole(1.0, 52.0),
            OverdueDays => from(0.0, 3_660.0),
            CheckIntervalDays => from(1.0, 366.0),
            SampleIntervalWeeks => from(1.0, 260.0),
            FluidChangeHours | OilLifeEquivHours => above(0.0, 500_000.0),
            FilterChangeHours => above(0.0, 100_000.0),
            FluidChangeMonths => whole(1.0, 240.0),
            DueSoonDays => from(0.0, 366.0),
            BaselineChecks | BaselineChecksMax => whole(2.0, 50.0),
            // Montgomery's tables use λ in (0, 1], L, k and h of a few σ.
            EwmaLambda => above(0.0, 1.0),
            EwmaL => above(0.0, 10.0),
            CusumK => from(0.0, 10.0),
            CusumH => above(0.0, 100.0),
            MinSpreadPct => from(0.0, 100.0),
            MinSpreadHeatK => from(0.0, 50.0),
            LeakMinSpreads => above(0.0, 100.0),
            HeatSharePct => above(0.0, 100.0),
        }
    }
}

/// Checks a limit a person wants to store, against the limits already in force (so that a new
/// `watch` alone is checked against the `act` it will sit beside). Returns the row to store.
pub fn validate_setting(
    key: LimitKey,
    watch: Option<f64>,
    act: Option<f64>,
    current: &Limits,
) -> Result<(Option<f64>, Option<f64>), LimitError> {
    let invalid = |reason: String| LimitError::Invalid { key, reason };
    if watch.is_none() && act.is_none() {
        return Err(invalid("give --watch, --act or both".into()));
    }
    for v in [watch, act].into_iter().flatten() {
        if !v.is_finite() {
            return Err(invalid(format!("{v} is not a number")));
        }
    }
    let range = key.range();
    for v in [watch, act].into_iter().flatten() {
        if !range.contains(v) {
            // A huge number in exponent form, not 300 digits.
            let shown = if v.abs() >= 1e9 {
                format!("{v:e}")
            } else {
                super::text::num(v, 6)
            };
            return Err(invalid(format!(
                "{shown} {} is outside its range: {}",
                key.unit(),
                range.describe(key.unit())
            )));
        }
    }
    match key.shape() {
        Value => {
            if watch.is_some() {
                return Err(invalid(
                    "is a single setting: give it with --act (or --value)".into(),
                ));
            }
        }
        Threshold(_) => {
            let cur = current.get(key);
            let w = watch.or(cur.watch);
            let a = act.or(cur.act);
            if let (Some(w), Some(a)) = (w, a) {
                if w > a {
                    return Err(invalid(format!(
                        "watch {w} {u} would be beyond act {a} {u}; watch must come first",
                        u = key.unit()
                    )));
                }
            }
        }
    }
    Ok((watch, act))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn row(unit: Option<Id>, key: &str, watch: Option<f64>, act: Option<f64>) -> LimitSetting {
        LimitSetting {
            unit_id: unit,
            key: key.into(),
            watch,
            act,
        }
    }

    #[test]
    fn builtin_defaults_are_the_design_table() {
        // docs/engineering.md, "Default limits" (common practice, no published source).
        let l = Limits::builtin();
        let lf = l.get(LimitKey::LostFlowPct);
        assert_eq!((lf.watch, lf.act), (Some(8.0), Some(15.0)));
        let w = l.get(LimitKey::WaterPpm);
        assert_eq!((w.watch, w.act), (Some(200.0), Some(500.0)));
        assert_eq!(l.value(LimitKey::BaselineChecks), 4.0);
        assert_eq!(l.value(LimitKey::CheckIntervalDays), 7.0);
    }

    #[test]
    fn at_least_and_above_differ_only_at_the_boundary() {
        let l = Limits::builtin();
        let lf = l.get(LimitKey::LostFlowPct); // ≥ 8 / ≥ 15
        assert_eq!(lf.grade(7.999), None);
        assert_eq!(lf.grade(8.0), Some(false));
        assert_eq!(lf.grade(14.999), Some(false));
        assert_eq!(lf.grade(15.0), Some(true));
        let w = l.get(LimitKey::WaterPpm); // > 200 / > 500
        assert_eq!(w.grade(200.0), None);
        assert_eq!(w.grade(200.001), Some(false));
        assert_eq!(w.grade(500.0), Some(false));
        assert_eq!(w.grade(500.001), Some(true));
        assert_eq!(w.grade(f64::NAN), None);
        // Rounding noise of a computed value does not move it across a boundary.
        assert_eq!(lf.grade(8.0 - 1e-12), Some(false));
        assert_eq!(w.grade(200.0 + 1e-10), None);
        let t = l.get(LimitKey::ReservoirTempC);
        assert_eq!(t.grade(crate::units::Temperature::from_c(60.0).c()), None);
    }

    #[test]
    fn unit_override_wins_over_shop_and_shop_over_builtin() {
        let rows = vec![
            row(None, "water_ppm", Some(150.0), None),
            row(Some(7), "water_ppm", None, Some(300.0)),
            row(Some(8), "water_ppm", Some(100.0), Some(120.0)),
            row(None, "no_such_key", Some(1.0), None),
        ];
        let shop = Limits::resolve(&rows, None).get(LimitKey::WaterPpm);
        assert_eq!((shop.watch, shop.act), (Some(150.0), Some(500.0)));
        assert_eq!(
            (shop.watch_origin, shop.act_origin),
            (LimitOrigin::Shop, LimitOrigin::Builtin)
        );
        let u7 = Limits::resolve(&rows, Some(7)).get(LimitKey::WaterPpm);
        assert_eq!((u7.watch, u7.act), (Some(150.0), Some(300.0)));
        assert_eq!(u7.act_origin, LimitOrigin::Unit);
        let u9 = Limits::resolve(&rows, Some(9)).get(LimitKey::WaterPpm);
        assert_eq!((u9.watch, u9.act), (Some(150.0), Some(500.0)));
    }

    #[test]
    fn settings_are_checked_before_they_are_stored() {
        let cur = Limits::builtin();
        assert!(validate_setting(LimitKey::LostFlowPct, Some(10.0), Some(20.0), &cur).is_ok());
        // A watch beyond the act in force is refused.
        assert!(validate_setting(LimitKey::LostFlowPct, Some(16.0), None, &cur).is_err());
        assert!(validate_setting(LimitKey::LostFlowPct, None, None, &cur).is_err());
        assert!(validate_setting(LimitKey::BaselineChecks, None, Some(4.5), &cur).is_err());
        assert!(validate_setting(LimitKey::BaselineChecks, Some(3.0), None, &cur).is_err());
        assert!(validate_setting(LimitKey::BaselineChecks, None, Some(6.0), &cur).is_ok());
        assert!(validate_setting(LimitKey::LeakConductanceRatio, Some(0.9), None, &cur).is_err());
    }

    #[test]
    fn every_key_has_a_range_its_default_is_inside_and_the_refusal_names_it() {
        let cur = Limits::builtin();
        for &key in LimitKey::ALL {
            let r = key.range();
            assert!(r.lo < r.hi && r.hi.is_finite(), "{key}");
            let (w, a) = key.builtin();
            for v in [w, a].into_iter().flatten() {
                assert!(r.contains(v), "{key}: default {v} outside {r:?}");
            }
            let (watch, act) = match key.shape() {
                Value => (None, Some(1e308)),
                Threshold(_) => (Some(1e308), None),
            };
            let e = validate_setting(key, watch, act, &cur)
                .unwrap_err()
                .to_string();
            assert!(
                e.contains("1e308") && e.contains(&r.describe(key.unit())),
                "{e}"
            );
        }
        let e = validate_setting(LimitKey::CheckIntervalDays, None, Some(100_000_000.0), &cur)
            .unwrap_err()
            .to_string();
        assert_eq!(
            e,
            "check_interval_days: 100000000 days is outside its range: from 1 to 366 days"
        );
        assert!("lost_flow".parse::<LimitKey>().is_err());
        assert_eq!("water_ppm".parse::<LimitKey>(), Ok(LimitKey::WaterPpm));
    }
}
