//! Eras and baselines of one unit.
//!
//! An era starts at commissioning (the unit's first check), at each fluid change and at each
//! rebuild; its baseline is the median and robust spread of the era's first checks — formed
//! from a few and growing with each check until it is well determined — or a value a person
//! entered by hand, and it always says where it came from and how sure it is. Pure: records
//! in, eras and baselines out.

use chrono::{DateTime, Utc};
use serde::{Deserialize, Serialize};

use crate::model::{Event, EventKind, Id, ManualBaseline, UnitHistory};

/// What started an era.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum EraStart {
    /// The unit's first check.
    Commissioning,
    FluidChange,
    Rebuild,
}

impl EraStart {
    pub fn as_str(self) -> &'static str {
        match self {
            EraStart::Commissioning => "commissioning",
            EraStart::FluidChange => "fluid change",
            EraStart::Rebuild => "rebuild",
        }
    }
}

/// One era of a unit: from `start` until the next era's start (or open).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Era {
    pub start: DateTime<Utc>,
    /// Start of the next era; `None` for the era in force.
    pub end: Option<DateTime<Utc>>,
    pub started_by: EraStart,
    /// The event that started it (fluid change or rebuild).
    pub event_id: Option<Id>,
    /// The fluid in service during the era, as far as the records tell.
    pub fluid_id: Option<Id>,
}

impl Era {
    /// Whether `t` falls in this era (start inclusive, end exclusive).
    pub fn contains(&self, t: DateTime<Utc>) -> bool {
        t >= self.start && self.end.is_none_or(|e| t < e)
    }
}

/// Splits a unit's history into eras, oldest first. A fluid change or rebuild logged before the
/// first check starts the first era itself; with no checks and no such events there is no era.
///
/// The fluid of an era is the one its fluid change put in; a rebuild keeps the fluid of the era
/// before; where the records do not say, the fluid in the unit register is assumed.
pub fn eras(history: &UnitHistory) -> Vec<Era> {
    let mut starts: Vec<(DateTime<Utc>, EraStart, Option<&Event>)> = history
        .events
        .iter()
        .filter(|e| e.kind.starts_era())
        .map(|e| {
            let kind = if e.kind == EventKind::FluidChange {
                EraStart::FluidChange
            } else {
                EraStart::Rebuild
            };
            (e.done_at, kind, Some(e))
        })
        .collect();
    starts.sort_by_key(|s| s.0);
    if let Some(first) = history.checks.iter().map(|c| c.taken_at).min() {
        if starts.first().is_none_or(|s| s.0 > first) {
            starts.insert(0, (first, EraStart::Commissioning, None));
        }
    }
    // Two era events at the same instant make one era; the fluid change wins (it sets the fluid).
    starts.dedup_by(|later, earlier| {
        if later.0 == earlier.0 {
            if later.1 == EraStart::FluidChange {
                *earlier = *later;
            }
            true
        } else {
            false
        }
    });
    let mut out: Vec<Era> = Vec::with_capacity(starts.len());
    for (i, (start, kind, event)) in starts.iter().enumerate() {
        let end = starts.get(i + 1).map(|s| s.0);
        let previous_fluid = out.last().and_then(|e| e.fluid_id);
        let fluid_id = match kind {
            EraStart::FluidChange => event.and_then(|e| e.fluid_id).or(history.unit.fluid_id),
            EraStart::Rebuild => previous_fluid.or(history.unit.fluid_id),
            EraStart::Commissioning => history.unit.fluid_id,
        };
        out.push(Era {
            start: *start,
            end,
            started_by: *kind,
            event_id: event.map(|e| e.id),
            fluid_id,
        });
    }
    out
}

/// The indicators that are measured against an era baseline.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum BaselineIndicator {
    /// Effective flow of the timed stroke, m³/s.
    EffectiveFlow,
    /// Effective flow corrected to the baseline's oil viscosity and pressure, m³/s: the
    /// flow the pump would give if only wear changed (see `indicators`).
    CorrectedFlow,
    /// Reservoir minus ambient temperature, K.
    HeatRise,
    /// Temperature-compensated leak conductance, m³/s · m²/s / Pa.
    LeakConductance,
    /// Case-drain flow corrected to the baseline's oil viscosity and pressure, m³/s.
    CaseDrain,
}

impl BaselineIndicator {
    pub const ALL: &'static [BaselineIndicator] = &[
        BaselineIndicator::EffectiveFlow,
        BaselineIndicator::CorrectedFlow,
        BaselineIndicator::HeatRise,
        BaselineIndicator::LeakConductance,
        BaselineIndicator::CaseDrain,
    ];

    /// The key used for hand-entered baselines (`model::ManualBaseline::indicator`).
    pub fn key(self) -> &'static str {
        match self {
            BaselineIndicator::EffectiveFlow => "effective_flow",
            BaselineIndicator::CorrectedFlow => "corrected_flow",
            BaselineIndicator::HeatRise => "heat_rise",
            BaselineIndicator::LeakConductance => "leak_conductance",
            BaselineIndicator::CaseDrain => "case_drain",
        }
    }

    pub fn from_key(key: &str) -> Option<Self> {
        Self::ALL.iter().copied().find(|i| i.key() == key.trim())
    }
}

/// Where a baseline value came from.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum BaselineSource {
    /// Median and scaled median absolute deviation of these checks (ids), the first of the era.
    Checks {
        check_ids: Vec<Id>,
        from: DateTime<Utc>,
        to: DateTime<Utc>,
    },
    /// Entered by hand.
    Manual { by: String, at: DateTime<Utc> },
}

/// The reference value and spread of one indicator in one era.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct BaselineValue {
    pub indicator: BaselineIndicator,
    /// Reference value, SI.
    pub value: f64,
    /// One standard deviation, SI, as measured (1.4826 × the median absolute deviation) or
    /// entered (before any floor).
    pub spread: f64,
    /// Standard error of `value` itself, SI, from the spread and the number of checks (0 for a
    /// value entered by hand, which is taken as known).
    pub value_se: f64,
    /// Whether the baseline has all the checks it takes (`baseline_checks_max`); until then it
    /// grows with each check of the era.
    pub complete: bool,
    pub source: BaselineSource,
}

/// The baseline of one era: one value per indicator that has one.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct Baseline {
    pub values: Vec<BaselineValue>,
    /// Where a step in flow and heat (`indicators::step_at`) stopped the baseline growing
    /// before it had all its checks: the time of the step's first check. Checks from then on
    /// are judged against the baseline, never taken into it.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub closed_at: Option<DateTime<Utc>>,
}

impl Baseline {
    pub fn get(&self, indicator: BaselineIndicator) -> Option<&BaselineValue> {
        self.values.iter().find(|v| v.indicator == indicator)
    }

    pub fn is_empty(&self) -> bool {
        self.values.is_empty()
    }

    /// The flow the lost flow is judged on: the flow corrected to the reference conditions
    /// where it has a baseline (so the seasons and the job pressure do not move it), unless a
    /// person entered the timed flow's baseline by hand and not the corrected one's (what a
    /// person says the pump gives wins over a computed figure); else the timed flow.
    pub fn lost_flow_base(&self) -> BaselineIndicator {
        let by_hand = |i: BaselineIndicator| {
            self.get(i)
                .is_some_and(|b| matches!(b.source, BaselineSource::Manual { .. }))
        };
        if self.get(BaselineIndicator::CorrectedFlow).is_some()
            && (by_hand(BaselineIndicator::CorrectedFlow)
                || !by_hand(BaselineIndicator::EffectiveFlow))
        {
            BaselineIndicator::CorrectedFlow
        } else {
            BaselineIndicator::EffectiveFlow
        }
    }
}

/// Mean and sample standard deviation (n − 1); the spread of a single value is 0.
pub fn mean_and_spread(values: &[f64]) -> Option<(f64, f64)> {
    if values.is_empty() {
        return None;
    }
    let n = values.len() as f64;
    let mean = values.iter().sum::<f64>() / n;
    if values.len() < 2 {
        return Some((mean, 0.0));
    }
    let ss: f64 = values.iter().map(|v| (v - mean).powi(2)).sum();
    Some((mean, (ss / (n - 1.0)).sqrt()))
}

/// √(π/2): the standard error of the median of n normal values is about √(π/2) · σ/√n, the
/// median's asymptotic efficiency against the mean being 2/π (e.g. M. G. Kendall and A. Stuart,
/// *The Advanced Theory of Statistics*, vol. 1, sampling distribution of the median).
pub const MEDIAN_SE_FACTOR: f64 = 1.253_314_137_315_500_3;

/// Median, robust spread (1.4826 · MAD) and the standard error of the median.
pub fn robust_centre(values: &[f64]) -> Option<(f64, f64, f64)> {
    let (m, s) = crate::physics::stats::median_and_mad_sigma(values)?;
    let se = MEDIAN_SE_FACTOR * s / (values.len() as f64).sqrt();
    Some((m, s, se))
}

/// Values of one indicator at the era's checks, in time order: (check id, time, SI value).
pub type IndicatorPoints = Vec<(Id, DateTime<Utc>, f64)>;

/// Builds an era's baseline.
///
/// `per_indicator` gives, per indicator, the values of the era's checks in time order with the
/// check id and time. The baseline forms once `n_min` of them exist, from all there are up to
/// `n_max` (the first `n_max` after that): a median and a robust spread, which one gross
/// reading cannot drag, and the standard error of the median, which the detectors add to
/// their limits while the baseline is young. A hand-entered value for the era (the latest
/// entered, if several) replaces the computed one.
pub fn build_baseline(
    era: &Era,
    n_min: usize,
    n_max: usize,
    per_indicator: &[(BaselineIndicator, IndicatorPoints)],
    manual: &[ManualBaseline],
) -> Baseline {
    let n_max = n_max.max(n_min);
    let mut values = Vec::new();
    for &indicator in BaselineIndicator::ALL {
        let by_hand = manual
            .iter()
            .filter(|m| {
                BaselineIndicator::from_key(&m.indicator) == Some(indicator)
                    && era.contains(m.era_start)
                    && m.value.is_finite()
                    && m.spread.is_finite()
            })
            .max_by_key(|m| (m.entered_at, m.id));
        if let Some(m) = by_hand {
            values.push(BaselineValue {
                indicator,
                value: m.value,
                spread: m.spread.abs(),
                value_se: 0.0,
                complete: true,
                source: BaselineSource::Manual {
                    by: m.entered_by.clone(),
                    at: m.entered_at,
                },
            });
            continue;
        }
        let Some((_, points)) = per_indicator.iter().find(|(i, _)| *i == indicator) else {
            continue;
        };
        if n_min == 0 || points.len() < n_min {
            continue;
        }
        let n = points.len().min(n_max);
        let first = &points[..n];
        let vals: Vec<f64> = first.iter().map(|p| p.2).collect();
        let Some((value, spread, value_se)) = robust_centre(&vals) else {
            continue;
        };
        values.push(BaselineValue {
            indicator,
            value,
            spread,
            value_se,
            complete: n == n_max,
            source: BaselineSource::Checks {
                check_ids: first.iter().map(|p| p.0).collect(),
                from: first[0].1,
                to: first[n - 1].1,
            },
        });
    }
    Baseline {
        values,
        closed_at: None,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::health::testutil::{check, event, history, t};

    #[test]
    fn commissioning_fluid_change_and_rebuild_start_eras() {
        let mut h = history();
        h.unit.fluid_id = Some(1);
        h.checks = vec![
            check(1, t("2024-01-08")),
            check(2, t("2024-01-15")),
            check(3, t("2024-06-03")),
        ];
        h.events = vec![
            event(10, t("2024-03-01"), EventKind::FluidChange, Some(2)),
            event(11, t("2024-04-01"), EventKind::TopUp, None),
            event(12, t("2024-05-01"), EventKind::Rebuild, None),
        ];
        let e = eras(&h);
        assert_eq!(e.len(), 3);
        assert_eq!(e[0].started_by, EraStart::Commissioning);
        assert_eq!(e[0].start, t("2024-01-08"));
        assert_eq!(e[0].end, Some(t("2024-03-01")));
        assert_eq!(e[0].fluid_id, Some(1));
        assert_eq!(e[1].started_by, EraStart::FluidChange);
        assert_eq!(e[1].fluid_id, Some(2));
        assert_eq!(e[2].started_by, EraStart::Rebuild);
        assert_eq!(e[2].fluid_id, Some(2), "a rebuild keeps the fluid");
        assert_eq!(e[2].end, None);
        assert!(e[2].contains(t("2024-06-03")));
        assert!(!e[1].contains(t("2024-05-01")));
    }

    #[test]
    fn an_era_event_before_the_first_check_is_the_first_era() {
        let mut h = history();
        h.checks = vec![check(1, t("2024-01-08"))];
        h.events = vec![event(10, t("2024-01-02"), EventKind::FluidChange, None)];
        let e = eras(&h);
        assert_eq!(e.len(), 1);
        assert_eq!(e[0].started_by, EraStart::FluidChange);
        assert!(eras(&history()).is_empty());
    }

    #[test]
    fn baseline_is_the_median_and_robust_spread_and_grows_to_its_maximum() {
        let era = Era {
            start: t("2024-01-01"),
            end: None,
            started_by: EraStart::Commissioning,
            event_id: None,
            fluid_id: None,
        };
        let pts: Vec<(Id, DateTime<Utc>, f64)> = [10.0, 12.0, 11.0, 13.0, 30.0, 11.5, 9.0]
            .iter()
            .enumerate()
            .map(|(i, v)| (i as Id, t("2024-01-01"), *v))
            .collect();
        let per = |k: usize| vec![(BaselineIndicator::HeatRise, pts[..k].to_vec())];
        // Worked by hand: the first 5 (10, 12, 11, 13, 30) have median 12; deviations 2, 0, 1,
        // 1, 18 → MAD 1, spread 1.4826; the 30 moves neither (a mean would be 15.2).
        let b = build_baseline(&era, 4, 6, &per(5), &[]);
        let v = b.get(BaselineIndicator::HeatRise).unwrap();
        assert!((v.value - 12.0).abs() < 1e-12);
        assert!((v.spread - crate::physics::stats::MAD_TO_SIGMA).abs() < 1e-12);
        assert!((v.value_se - MEDIAN_SE_FACTOR * v.spread / 5f64.sqrt()).abs() < 1e-12);
        assert!(!v.complete);
        // It grows to 6 and stops there: the 7th check is not in it.
        let b = build_baseline(&era, 4, 6, &per(7), &[]);
        let v = b.get(BaselineIndicator::HeatRise).unwrap();
        assert!(v.complete);
        match &v.source {
            BaselineSource::Checks { check_ids, .. } => {
                assert_eq!(check_ids, &vec![0, 1, 2, 3, 4, 5])
            }
            other => panic!("unexpected {other:?}"),
        }
        // Median of 10, 12, 11, 13, 30, 11.5 = (11.5 + 12)/2 = 11.75.
        assert!((v.value - 11.75).abs() < 1e-12);
        // Three checks: not formed yet.
        assert!(build_baseline(&era, 4, 6, &per(3), &[]).is_empty());
    }

    #[test]
    fn mean_and_sample_spread_by_hand() {
        let era = Era {
            start: t("2024-01-01"),
            end: None,
            started_by: EraStart::Commissioning,
            event_id: None,
            fluid_id: None,
        };
        let pts: Vec<(Id, DateTime<Utc>, f64)> = [10.0, 12.0, 11.0, 13.0, 30.0]
            .iter()
            .enumerate()
            .map(|(i, v)| (i as Id, t("2024-01-01"), *v))
            .collect();
        let _ = era;
        let vals: Vec<f64> = pts[..4].iter().map(|p| p.2).collect();
        let (m, s) = mean_and_spread(&vals).unwrap();
        // Worked by hand: mean (10+12+11+13)/4 = 11.5; deviations −1.5, 0.5, −0.5, 1.5;
        // squares sum 2.25+0.25+0.25+2.25 = 5; s = √(5/3) = 1.290994.
        assert!((m - 11.5).abs() < 1e-12);
        assert!((s - (5.0f64 / 3.0).sqrt()).abs() < 1e-12);
    }

    #[test]
    fn a_hand_entered_baseline_replaces_the_computed_one() {
        let era = Era {
            start: t("2024-01-01"),
            end: None,
            started_by: EraStart::Commissioning,
            event_id: None,
            fluid_id: None,
        };
        let pts: Vec<(Id, DateTime<Utc>, f64)> =
            (0..4).map(|i| (i, t("2024-01-01"), 1.0)).collect();
        let m = |id, value, at: &str| ManualBaseline {
            id,
            unit_id: 1,
            era_start: t("2024-01-01"),
            indicator: "heat_rise".into(),
            value,
            spread: 0.5,
            entered_by: "R. Engineer".into(),
            entered_at: t(at),
        };
        let b = build_baseline(
            &era,
            4,
            8,
            &[(BaselineIndicator::HeatRise, pts)],
            &[m(1, 20.0, "2024-02-01"), m(2, 21.0, "2024-03-01")],
        );
        let v = b.get(BaselineIndicator::HeatRise).unwrap();
        assert_eq!(v.value, 21.0);
        assert!(matches!(&v.source, BaselineSource::Manual { by, .. } if by == "R. Engineer"));
    }
}
