//! The key indicators of a unit now (the fixed set `status --json` prints), summarised from the
//! era's computed checks and samples. It reads what `compute` found and computes nothing new.

use super::*;

pub(super) fn summarise(h: &UnitHistory, c: &Computed, limits: &Limits) -> Indicators {
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
