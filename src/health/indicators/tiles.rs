//! Tiles, chart series and trend lines of the era in force, as a unit page or report shows them.
//! Presentation data only: no state is decided here, it is taken from the flags.

use super::*;

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
    flag: Option<crate::health::flags::FlagKind>,
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

/// Every tile's spec: the checks' indicators, then the samples'.
fn specs(c: &Computed, limits: &Limits) -> Vec<Spec> {
    let mut out = check_specs(c, limits);
    out.extend(sample_specs(c, limits));
    out
}

/// The latest point of a series, as a tile shows it.
fn last(v: &[SeriesPoint]) -> Option<(DateTime<Utc>, f64)> {
    v.last().map(|p| (p.at, p.value))
}

/// The tiles of the walk-round checks: flows, heat, leak conductance, case drain, oil
/// temperature.
fn check_specs(c: &Computed, limits: &Limits) -> Vec<Spec> {
    use crate::health::flags::FlagKind as K;
    let lim = |k: LimitKey| limits.get(k);
    let ck = |f: fn(&CheckPoint) -> Option<f64>| pts(c.checks.iter().map(|p| (p.at, f(p))));
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
    // The lost-flow limits as flows, where the lost flow is judged on the timed flow. Where it
    // is judged on the flow corrected to the baseline's oil and pressure, a line on the timed
    // flow would be crossed by a sound pump's summer strokes while its flag says otherwise:
    // the limits are then on the lost flow's own tile and chart only.
    let timed_judged = c.baseline.lost_flow_base() == BaselineIndicator::EffectiveFlow;
    // A lost-flow limit as a flow on the baseline `base` of the flow it is judged on.
    let on = |base: Option<(f64, f64)>, judged: bool, pct: Option<f64>| -> Vec<f64> {
        base.iter()
            .filter(|_| judged)
            .flat_map(|b| pct.map(|w| b.0 * (1.0 - w / 100.0)))
            .collect()
    };
    let as_flow = |pct: Option<f64>| on(qb, timed_judged, pct);
    out.push(Spec {
        key: "effective_flow",
        label: if timed_judged {
            "Effective flow"
        } else {
            "Effective flow as timed"
        },
        dim: Dim::Flow,
        flag: Some(K::LostFlow),
        value: last(&flow),
        points: flow,
        text: None,
        baseline: qb,
        watch: as_flow(l.watch),
        act: as_flow(l.act),
    });

    let corrected = ck(|p| p.corrected_flow);
    if !corrected.is_empty() {
        let cb = bl(BaselineIndicator::CorrectedFlow);
        // Where the lost flow is judged on this flow, its limits are drawn here as flows: the
        // line a sound pump's corrected strokes stay above, whatever the season.
        let judged = !timed_judged;
        out.push(Spec {
            key: "corrected_flow",
            label: "Effective flow corrected to baseline oil",
            dim: Dim::Flow,
            flag: Some(K::Drift),
            value: last(&corrected),
            points: corrected,
            text: None,
            baseline: cb,
            watch: on(cb, judged, l.watch),
            act: on(cb, judged, l.act),
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

    out
}

/// The tiles of the fluid samples: KV40, cleanliness, water, acid number.
fn sample_specs(c: &Computed, limits: &Limits) -> Vec<Spec> {
    use crate::health::flags::FlagKind as K;
    let lim = |k: LimitKey| limits.get(k);
    let sk = |f: &dyn Fn(&SamplePoint) -> Option<f64>| pts(c.samples.iter().map(|p| (p.at, f(p))));
    let mut out = Vec::new();

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
    not_judged: &[crate::health::judged::NotJudged],
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
