//! Flags: each indicator judged against its limits (docs/engineering.md, "Default limits") check
//! by check, so that a flag
//! knows its state, value, limit, the date it began and a sentence a technician can act on;
//! and acknowledgements laid over them.
//!
//! Pure: the computed indicators, the planned work, the limits and a date in; flags out.

use chrono::{DateTime, NaiveDate, Utc};
use serde::{Deserialize, Serialize};

use super::baseline::BaselineIndicator;
use super::indicators::{CheckPoint, Computed, Dim, Restart, SamplePoint};
use super::limits::{LimitKey, Limits};
use super::plan::WorkItem;
use super::text::{flow, num, tdiff, temp, visc};
use super::{day, State};
use crate::model::{Acknowledgement, EventKind, FilterState, OilLevel, UnitHistory};
use crate::units::UnitSystem;

macro_rules! flag_kinds {
    ($($variant:ident = $text:literal),+ $(,)?) => {
        /// The kinds of flag (a fixed set; the names are part of the JSON output).
        #[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
        pub enum FlagKind { $(#[serde(rename = $text)] $variant),+ }

        impl FlagKind {
            pub const ALL: &'static [FlagKind] = &[$(FlagKind::$variant),+];
            pub fn as_str(self) -> &'static str {
                match self { $(FlagKind::$variant => $text),+ }
            }
        }
    };
}

flag_kinds! {
    LostFlow = "lost_flow",
    LeakConductance = "leak_conductance",
    CaseDrain = "case_drain",
    HeatRise = "heat_rise",
    ReservoirTemp = "reservoir_temp",
    Viscosity = "viscosity",
    Cleanliness = "cleanliness",
    Water = "water",
    Acid = "acid",
    Filter = "filter",
    OilLevel = "oil_level",
    Drift = "drift",
    Overdue = "overdue",
}

impl std::fmt::Display for FlagKind {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.as_str())
    }
}

impl std::str::FromStr for FlagKind {
    type Err = String;
    fn from_str(s: &str) -> Result<Self, String> {
        FlagKind::ALL
            .iter()
            .copied()
            .find(|k| k.as_str() == s.trim())
            .ok_or_else(|| {
                format!(
                    "`{}` is not a flag kind; expected one of {}",
                    s.trim(),
                    FlagKind::ALL
                        .iter()
                        .map(|k| k.as_str())
                        .collect::<Vec<_>>()
                        .join("|")
                )
            })
    }
}

/// Who acknowledged a flag, when and with what note.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct AckInfo {
    pub by: String,
    pub at: DateTime<Utc>,
    pub note: String,
}

/// One flag raised on a unit.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Flag {
    pub kind: FlagKind,
    /// `Watch` or `Act`.
    pub state: State,
    /// The date the flag began (first check or sample of the current run at watch or worse).
    pub since: NaiveDate,
    /// When the flag reached its current state.
    pub state_since: DateTime<Utc>,
    /// One sentence: what drifted, by how much, what to check first.
    pub message: String,
    /// The first part of `message`: what drifted and by how much.
    pub what: String,
    /// The second part of `message`: what a technician usually checks or does next.
    pub next_step: String,
    pub acknowledged: bool,
    pub acknowledgement: Option<AckInfo>,
    /// The figure that raised it, in the form a tile carries figures (SI for physical
    /// dimensions, with its dimension), so every face shows the same number for it and
    /// converts it through `units`; `None` for a flag that is read, not measured (filter
    /// indicator, oil level).
    pub figure: Option<Figure>,
    /// The last maintenance in the era that restarted this flag's detectors: the flag is
    /// judged on what was read after it.
    pub restarted: Option<Restart>,
}

/// A flag's figure: the judged value, the limit it reached and the baseline it is measured
/// from, all in `dim` (SI for physical dimensions, as `Tile`).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Figure {
    pub dim: Dim,
    pub value: f64,
    pub limit: Option<f64>,
    pub baseline: Option<f64>,
}

/// One graded point of an indicator's history.
#[derive(Clone, Copy, Debug)]
struct Graded {
    at: DateTime<Utc>,
    state: State,
    value: Option<f64>,
    limit: Option<f64>,
}

/// The current run of a graded history: the last point, when the run at watch or worse began
/// and when the current state began. `None` when the last point is steady.
fn episode(points: &[Graded]) -> Option<(Graded, DateTime<Utc>, DateTime<Utc>)> {
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

fn grade(limits: &Limits, key: LimitKey, value: f64) -> (State, Option<f64>) {
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
fn graded_levels(
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

fn graded_samples(
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

fn new_flag(
    kind: FlagKind,
    g: &Graded,
    since: NaiveDate,
    state_since: DateTime<Utc>,
    message: String,
) -> Flag {
    // Every message is written "what drifted, by how much: what to check first."
    let (what, next_step) = match message.split_once(": ") {
        Some((w, n)) => (w.to_string(), n.trim_end_matches('.').to_string()),
        None => (message.clone(), String::new()),
    };
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
fn figure_of(kind: FlagKind, g: &Graded) -> Option<Figure> {
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
    })
}

/// Raises the condition flags of one unit (all kinds but `overdue`, which comes from the plan).
pub fn raise(h: &UnitHistory, c: &Computed, limits: &Limits, sys: UnitSystem) -> Vec<Flag> {
    let mut out = Vec::new();
    let mut push = |kind: FlagKind, g: Vec<Graded>, message: &dyn Fn(&Graded) -> String| {
        if let Some((last, since, state_since)) = episode(&g) {
            out.push(new_flag(
                kind,
                &last,
                day(since),
                state_since,
                message(&last),
            ));
        }
    };
    let pct = |v: Option<f64>| num(v.unwrap_or(0.0).abs(), 1);
    let base = |i: BaselineIndicator| c.baseline.get(i).map(|b| b.value);

    // Checks against the era baseline (median of the last 3).
    push(
        FlagKind::LostFlow,
        // Lost flow at the reference conditions, or a sudden loss of the timed flow over two
        // checks (a step such as a relief valve starting to pass oil, which heats the oil
        // and so hides part of itself in the correction), whichever is larger.
        graded_levels(
            &c.checks,
            limits,
            LimitKey::LostFlowPct,
            |p| p.lost_flow_pct.or(p.sudden_loss_pct),
            |p| match (p.lost_flow_median_pct, p.sudden_loss_pct) {
                (Some(a), Some(b)) => Some(a.max(b)),
                (a, b) => a.or(b),
            },
        ),
        &|g| {
            // At the reference conditions (the baseline's oil viscosity and pressure) where the
            // flow can be corrected to them, as the lost flow itself is.
            let corrected = base(BaselineIndicator::CorrectedFlow).is_some();
            let now = if corrected {
                c.checks.iter().rev().find_map(|p| p.corrected_flow)
            } else {
                c.checks.iter().rev().find_map(|p| p.effective_flow)
            };
            let b = if corrected {
                base(BaselineIndicator::CorrectedFlow)
            } else {
                base(BaselineIndicator::EffectiveFlow)
            };
            let from = match (now, b) {
                (Some(n), Some(b)) => format!(" ({} against {})", flow(n, sys), flow(b, sys)),
                _ => String::new(),
            };
            let what = if corrected {
                "Effective flow at baseline oil and pressure"
            } else {
                "Effective flow"
            };
            format!(
                "{what} is down {} % on the baseline{from} over the last 3 checks: check the pump for wear \
                 (case drain, inlet, noise) and the relief valve for bypass first, then the cylinder seals.",
                pct(g.value)
            )
        },
    );
    push(
        FlagKind::LeakConductance,
        // Not judged where a stopwatch cannot resolve the leakage (see `leak_min_spreads`).
        if c.leak_resolved == Some(false) {
            Vec::new()
        } else {
            graded_levels(
                &c.checks,
                limits,
                LimitKey::LeakConductanceRatio,
                |p| p.leak_ratio,
                |p| p.leak_ratio_median,
            )
        },
        &|g| {
            format!(
                "Internal leakage, corrected for oil temperature, is {}× the baseline over the last 3 checks: \
                 look for a worn pump or a relief or directional valve passing oil (a hot spot, a hissing valve) \
                 before the cylinder seals.",
                num(g.value.unwrap_or(0.0), 2)
            )
        },
    );
    push(
        FlagKind::CaseDrain,
        graded_levels(
            &c.checks,
            limits,
            LimitKey::CaseDrainRisePct,
            |p| p.case_drain_rise_pct,
            |p| p.case_drain_rise_median_pct,
        ),
        &|g| {
            format!(
                "Case-drain flow is up {} % on the baseline over the last 3 checks: the pump is wearing inside; \
                 plan a pump inspection and check the case-drain filter and line.",
                pct(g.value)
            )
        },
    );
    push(
        FlagKind::HeatRise,
        graded_levels(
            &c.checks,
            limits,
            LimitKey::HeatRiseDriftK,
            |p| p.heat_rise_drift,
            |p| p.heat_rise_drift_median,
        ),
        &|g| {
            let at = match c.heat_load {
                Some(m) if m.viscosity.is_some() => {
                    "than the baseline gives at this working pressure and hall temperature"
                }
                Some(_) => "than the baseline gives at this working pressure",
                None => "than at baseline",
            };
            format!(
                "The oil runs {} hotter over ambient {at} (median of the last 3 checks): clean the cooler \
                 and check its fan or water flow first, then look for a relief valve or leak path dumping flow.",
                tdiff(g.value.unwrap_or(0.0), sys)
            )
        },
    );

    // Reservoir temperature: every check, against absolute limits. A single reading at act
    // shows watch until the next check confirms it; above the ceiling it is act at once.
    let ceiling = limits.get(LimitKey::ReservoirTempCeilingC);
    let mut prev_act = false;
    let temps: Vec<Graded> = h
        .checks
        .iter()
        .filter_map(|ch| {
            let t = ch.reservoir_temp?.c();
            let (mut state, mut limit) = grade(limits, LimitKey::ReservoirTempC, t);
            let at_act = state == State::Act;
            if at_act && !prev_act {
                state = State::Watch;
                limit = limits.get(LimitKey::ReservoirTempC).watch.or(limit);
            }
            prev_act = at_act;
            if ceiling.grade(t) == Some(true) {
                state = State::Act;
                limit = ceiling.act;
            }
            Some(Graded {
                at: ch.taken_at,
                state,
                value: Some(t),
                limit,
            })
        })
        .collect();
    push(FlagKind::ReservoirTemp, temps, &|g| {
        let v = g.value.unwrap_or(0.0) + crate::units::KELVIN_AT_0C;
        let l = g.limit.unwrap_or(0.0) + crate::units::KELVIN_AT_0C;
        format!(
            "Reservoir oil at {} (limit {}): check the cooler and its fan or water, the oil level and the relief \
             setting, and let the oil cool before work on the circuit.",
            temp(v, sys),
            temp(l, sys)
        )
    });

    // Samples of the era against the new oil and the target.
    let kv = limits.get(LimitKey::Kv40DriftPct);
    let visc_points: Vec<Graded> = c
        .samples
        .iter()
        .filter_map(|s| {
            let d = s.kv40_drift_pct?;
            let mut state = State::from_grade(kv.grade(d.abs()));
            let mut limit = match state {
                State::Act => kv.act,
                _ => kv.watch.or(kv.act),
            };
            if s.in_vg_band == Some(false) {
                state = State::Act;
                limit = kv.act;
            }
            Some(Graded {
                at: s.at,
                state,
                value: Some(d),
                limit: limit.map(|l| l.copysign(d)),
            })
        })
        .collect();
    push(FlagKind::Viscosity, visc_points, &|g| {
        let s = c.samples.iter().rev().find(|s| s.kv40_drift_pct.is_some());
        let new = c.fluid.as_ref().and_then(|f| f.kv40_new).map(|v| v.si());
        let now = s.and_then(|s| s.kv40);
        let figures = match (now, new) {
            (Some(n), Some(b)) => format!("KV40 {} against {} new", visc(n, sys), visc(b, sys)),
            _ => "KV40".to_string(),
        };
        let band = if s.and_then(|s| s.in_vg_band) == Some(false) {
            ", outside its ISO VG band"
        } else {
            ""
        };
        let cause = if g.value.unwrap_or(0.0) < 0.0 {
            "check for a top-up with a thinner oil, water or fuel dilution, or shear"
        } else {
            "check for a top-up with a thicker oil and for oxidation (acid number, oil temperature)"
        };
        format!(
            "{figures}, {} % {}{band}: {cause}, and resample.",
            pct(g.value),
            if g.value.unwrap_or(0.0) < 0.0 {
                "thinner"
            } else {
                "thicker"
            }
        )
    });
    // Cleanliness: the samples since the last filter change of the era (those before it no
    // longer stand for the oil).
    let filtered_since = c
        .restarts
        .iter()
        .filter(|r| r.event == EventKind::FilterChange)
        .map(|r| r.at)
        .max();
    let clean_samples: Vec<SamplePoint> = c
        .samples
        .iter()
        .filter(|s| filtered_since.is_none_or(|f| s.at > f))
        .cloned()
        .collect();
    push(
        FlagKind::Cleanliness,
        graded_samples(
            &clean_samples,
            limits,
            LimitKey::CleanlinessOverTarget,
            |s| s.over_target_max.map(f64::from),
        ),
        &|g| {
            let s = clean_samples
                .iter()
                .rev()
                .find(|s| s.over_target_max.is_some());
            let code = s
                .and_then(|s| s.code)
                .map(|c| c.to_string())
                .unwrap_or_default();
            let target = c.target.map(|t| t.to_string()).unwrap_or_default();
            let sizes: Vec<&str> = s
                .map(|s| {
                    s.over_target
                        .iter()
                        .zip(["≥4", "≥6", "≥14"])
                        .filter(|(o, _)| o.is_some_and(|o| f64::from(o) >= g.limit.unwrap_or(1.0)))
                        .map(|(_, n)| n)
                        .collect()
                })
                .unwrap_or_default();
            format!(
                "ISO 4406 {code} is {} over the target {target} on {} µm: check the filter \
                 indicator, the breather and any recent seal failure or open work, change the filter and resample.",
                {
                    let n = num(g.value.unwrap_or(0.0), 0);
                    format!("{n} range number{}", if n == "1" { "" } else { "s" })
                },
                if sizes.is_empty() { "one size".to_string() } else { sizes.join(", ") }
            )
        },
    );
    push(
        FlagKind::Water,
        graded_samples(&c.samples, limits, LimitKey::WaterPpm, |s| s.water_ppm),
        &|g| {
            format!(
            "Water at {} ppm (limit {} ppm): find the ingress first — breather and desiccant, cooler, rod seals, \
             wash-down — then dry or change the fluid.",
            num(g.value.unwrap_or(0.0), 0),
            num(g.limit.unwrap_or(0.0), 0)
        )
        },
    );
    push(
        FlagKind::Acid,
        graded_samples(&c.samples, limits, LimitKey::AcidRiseMgKohG, |s| {
            s.acid_rise
        }),
        &|g| {
            format!(
            "Acid number up {} mg KOH/g on the new oil: the oil is oxidising — check the oil temperature and \
             aeration, and plan a fluid change.",
            num(g.value.unwrap_or(0.0), 2)
        )
        },
    );

    // Filter and oil level: the latest reading, cleared by the work that answers it.
    let cleared_after = |t: DateTime<Utc>, kinds: &[EventKind]| {
        h.events
            .iter()
            .any(|e| kinds.contains(&e.kind) && e.done_at > t)
    };
    let filters: Vec<Graded> = h
        .checks
        .iter()
        .filter_map(|ch| {
            let state = match ch.filter? {
                FilterState::Ok => State::Steady,
                FilterState::Alert => State::Watch,
                FilterState::Bypass => State::Act,
            };
            let state = if cleared_after(ch.taken_at, &[EventKind::FilterChange]) {
                State::Steady
            } else {
                state
            };
            Some(Graded {
                at: ch.taken_at,
                state,
                value: None,
                limit: None,
            })
        })
        .collect();
    push(FlagKind::Filter, filters, &|g| {
        if g.state == State::Act {
            "The filter indicator shows bypass: unfiltered oil is reaching the system — change the element now and \
             take a sample."
                .to_string()
        } else {
            "The filter indicator shows alert: change the filter element soon and note the hours."
                .to_string()
        }
    });
    let levels: Vec<Graded> = h
        .checks
        .iter()
        .filter_map(|ch| {
            let state = match ch.oil_level? {
                OilLevel::Ok => State::Steady,
                OilLevel::Low => State::Watch,
            };
            let state = if cleared_after(ch.taken_at, &[EventKind::TopUp, EventKind::FluidChange]) {
                State::Steady
            } else {
                state
            };
            Some(Graded {
                at: ch.taken_at,
                state,
                value: None,
                limit: None,
            })
        })
        .collect();
    push(FlagKind::OilLevel, levels, &|_| {
        let fluid = c
            .fluid
            .as_ref()
            .map(|f| format!(" with {}", f.name))
            .unwrap_or_default();
        format!("Oil level low at the last check: top up{fluid} and look for an external leak (hoses, fittings, rod seals).")
    });

    // Statistical drift: the longest run of EWMA or CUSUM signals over the indicators.
    let dl = limits.get(LimitKey::DriftChecks);
    let drift: Vec<Graded> = c
        .checks
        .iter()
        .filter(|p| !p.drift.is_empty())
        .map(|p| {
            let run = p.drift.iter().map(|d| d.run).max().unwrap_or(0) as f64;
            let mut state = State::from_grade(dl.grade(run));
            // Act needs a material shift as well as a persisting signal: a healthy unit's
            // jobs and weather move the indicators in runs that a chart built for independent
            // readings takes for drift, by less than the indicator's own watch limit.
            if state == State::Act
                && !p
                    .drift
                    .iter()
                    .any(|d| dl.grade(d.run as f64) == Some(true) && d.material)
            {
                state = State::Watch;
            }
            let limit = if state == State::Act {
                dl.act
            } else {
                dl.watch
            };
            Graded {
                at: p.at,
                state,
                value: Some(run),
                limit,
            }
        })
        .collect();
    push(FlagKind::Drift, drift, &|g| {
        let p = c.checks.iter().rev().find(|p| !p.drift.is_empty());
        let d = p.and_then(|p| p.drift.iter().max_by_key(|d| d.run));
        let what = match d {
            Some(d) => {
                let (name, fmt): (&str, Box<dyn Fn(f64) -> String>) = match d.indicator {
                    BaselineIndicator::EffectiveFlow => {
                        ("Effective flow", Box::new(|v| flow(v, sys)))
                    }
                    BaselineIndicator::CorrectedFlow => (
                        "Effective flow (corrected for oil temperature)",
                        Box::new(|v| flow(v, sys)),
                    ),
                    BaselineIndicator::HeatRise => (
                        match c.heat_load {
                            Some(m) if m.viscosity.is_some() => {
                                "Heat rise at baseline pressure and oil"
                            }
                            Some(_) => "Heat rise at baseline pressure",
                            None => "Heat rise",
                        },
                        Box::new(|v| tdiff(v, sys)),
                    ),
                    BaselineIndicator::LeakConductance => (
                        "Leak conductance",
                        Box::new(|v| format!("{v:.3e} m³/s·m²/s/Pa")),
                    ),
                    BaselineIndicator::CaseDrain => (
                        "Case-drain flow (corrected for oil temperature)",
                        Box::new(|v| flow(v, sys)),
                    ),
                };
                let b = c
                    .baseline
                    .get(d.indicator)
                    .map(|b| fmt(b.value))
                    .unwrap_or_default();
                let side = if matches!(
                    d.indicator,
                    BaselineIndicator::EffectiveFlow | BaselineIndicator::CorrectedFlow
                ) {
                    "below"
                } else {
                    "above"
                };
                format!(
                    "{name} has run {side} its baseline {b} for {} checks (EWMA {}, limit {})",
                    num(g.value.unwrap_or(0.0), 0),
                    fmt(d.ewma),
                    fmt(d.ewma_limit)
                )
            }
            None => "An indicator has drifted from its baseline".to_string(),
        };
        format!("{what}: a small steady shift, not noise — look at it now, before it reaches the limits.")
    });

    // The drift flag's figure: the EWMA of the indicator that drifted, its limit and baseline.
    if let Some(f) = out.iter_mut().find(|f| f.kind == FlagKind::Drift) {
        let p = c.checks.iter().rev().find(|p| !p.drift.is_empty());
        if let Some(d) = p.and_then(|p| p.drift.iter().max_by_key(|d| d.run)) {
            let dim = match d.indicator {
                BaselineIndicator::HeatRise => Dim::TempDiff,
                BaselineIndicator::LeakConductance => Dim::Ratio,
                _ => Dim::Flow,
            };
            f.figure = Some(Figure {
                dim,
                value: d.ewma,
                limit: Some(d.ewma_limit),
                baseline: c.baseline.get(d.indicator).map(|b| b.value),
            });
        }
    }
    // Baselines of the figures measured against one, and the restart each flag follows.
    for f in out.iter_mut() {
        if let Some(fig) = f.figure.as_mut() {
            fig.baseline = fig.baseline.or(match f.kind {
                FlagKind::LostFlow | FlagKind::CaseDrain | FlagKind::Viscosity => Some(0.0),
                FlagKind::LeakConductance => Some(1.0),
                FlagKind::HeatRise => Some(0.0),
                _ => None,
            });
        }
        f.restarted = c
            .restarts
            .iter()
            .rev()
            .find(|r| r.flag_kinds().contains(&f.kind))
            .cloned();
    }

    out
}

/// The `overdue` flag of a unit from its planned work: the worst overdue item sets the state,
/// the earliest sets the date it began.
pub fn overdue(work: &[WorkItem], limits: &Limits, at: DateTime<Utc>) -> Option<Flag> {
    let overdue: Vec<&WorkItem> = work.iter().filter(|w| w.state > State::Steady).collect();
    let worst = overdue.iter().max_by_key(|w| (w.state, w.days_overdue))?;
    let ol = limits.get(LimitKey::OverdueDays);
    let watch_days = ol.watch.unwrap_or(1.0).max(0.0) as i64;
    let act_days = ol.act.unwrap_or(14.0).max(0.0) as i64;
    let start = overdue.iter().map(|w| w.due).min().unwrap_or(worst.due)
        + chrono::Duration::days(watch_days);
    let state_since = worst.due
        + chrono::Duration::days(if worst.state == State::Act {
            act_days
        } else {
            watch_days
        });
    let list: Vec<String> = overdue
        .iter()
        .map(|w| {
            format!(
                "the {} due {} ({} days over)",
                w.kind.label(),
                w.due,
                w.days_overdue
            )
        })
        .collect();
    let g = Graded {
        at: state_since
            .and_hms_opt(0, 0, 0)
            .map(|d| d.and_utc())
            .unwrap_or(at),
        state: worst.state,
        value: Some(worst.days_overdue as f64),
        limit: if worst.state == State::Act {
            ol.act
        } else {
            ol.watch
        },
    };
    let verb = if list.len() > 1 { "are" } else { "is" };
    let mut message = format!(
        "{} {verb} overdue: do it, or record it done.",
        list.join(" and ")
    );
    if let Some(first) = message.get(..1) {
        message = first.to_uppercase() + &message[1..];
    }
    Some(new_flag(FlagKind::Overdue, &g, start, g.at, message))
}

/// Marks flags someone has seen: an acknowledgement of the same kind and state given since the
/// flag reached that state. A flag whose state has changed since is not acknowledged.
pub fn mark_acknowledged(flags: &mut [Flag], acks: &[Acknowledgement]) {
    for f in flags.iter_mut() {
        let seen = acks
            .iter()
            .filter(|a| {
                a.kind == f.kind.as_str() && a.state == f.state.as_str() && a.at >= f.state_since
            })
            .max_by_key(|a| (a.at, a.id));
        if let Some(a) = seen {
            f.acknowledged = true;
            f.acknowledgement = Some(AckInfo {
                by: a.by.clone(),
                at: a.at,
                note: a.note.clone(),
            });
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn g(day: u32, state: State) -> Graded {
        let at: DateTime<Utc> = format!("2024-03-{day:02}T08:00:00Z").parse().unwrap();
        Graded {
            at,
            state,
            value: None,
            limit: None,
        }
    }

    #[test]
    fn an_episode_knows_when_it_began_and_when_its_state_began() {
        use State::*;
        let pts = [
            g(1, Watch),
            g(2, Steady),
            g(3, Watch),
            g(4, Watch),
            g(5, Act),
            g(6, Act),
        ];
        let (last, since, state_since) = episode(&pts).unwrap();
        assert_eq!(last.state, Act);
        assert_eq!(since, g(3, Watch).at);
        assert_eq!(state_since, g(5, Act).at);
        assert!(episode(&[g(1, Act), g(2, Steady)]).is_none());
        assert!(episode(&[]).is_none());
        // Act then back to watch: the watch state is new again.
        let (_, since, state_since) = episode(&[g(1, Watch), g(2, Act), g(3, Watch)]).unwrap();
        assert_eq!(since, g(1, Watch).at);
        assert_eq!(state_since, g(3, Watch).at);
    }

    #[test]
    fn kinds_read_back() {
        for k in FlagKind::ALL {
            assert_eq!(k.as_str().parse::<FlagKind>(), Ok(*k));
        }
        assert!("lost-flow".parse::<FlagKind>().is_err());
    }

    fn flag(state: State, state_since: &str) -> Flag {
        Flag {
            kind: FlagKind::Water,
            state,
            since: NaiveDate::from_ymd_opt(2024, 3, 1).unwrap(),
            state_since: state_since.parse().unwrap(),
            message: String::new(),
            what: String::new(),
            next_step: String::new(),
            acknowledged: false,
            acknowledgement: None,
            figure: None,
            restarted: None,
        }
    }

    fn ack(state: &str, at: &str) -> Acknowledgement {
        Acknowledgement {
            id: 1,
            unit_id: 1,
            kind: "water".into(),
            state: state.into(),
            by: "T. Tech".into(),
            note: "breather ordered".into(),
            at: at.parse().unwrap(),
        }
    }

    #[test]
    fn an_acknowledgement_holds_until_the_state_changes() {
        let mut f = [flag(State::Act, "2024-03-10T08:00:00Z")];
        mark_acknowledged(&mut f, &[ack("act", "2024-03-11T09:00:00Z")]);
        assert!(f[0].acknowledged);
        assert_eq!(f[0].acknowledgement.as_ref().unwrap().by, "T. Tech");
        // Seen while it was watch: the move to act is news.
        let mut f = [flag(State::Act, "2024-03-10T08:00:00Z")];
        mark_acknowledged(&mut f, &[ack("watch", "2024-03-05T09:00:00Z")]);
        assert!(!f[0].acknowledged);
        // An acknowledgement of an earlier act episode does not carry over.
        let mut f = [flag(State::Act, "2024-03-10T08:00:00Z")];
        mark_acknowledged(&mut f, &[ack("act", "2024-02-01T09:00:00Z")]);
        assert!(!f[0].acknowledged);
    }
}
