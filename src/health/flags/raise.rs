//! The condition flags of one unit, indicator by indicator, each with the sentence a technician
//! acts on. It grades with `grade` and judges nothing the indicators did not compute.

use super::*;

/// Raises the condition flags of one unit (all kinds but `overdue`, which comes from the plan).
/// `questioned` holds the readings the screen questioned that a flag still shows, at watch at
/// most (see `water_points` and `stroke_points`).
pub fn raise(
    h: &UnitHistory,
    c: &Computed,
    limits: &Limits,
    sys: UnitSystem,
    questioned: &Questioned,
) -> Vec<Flag> {
    let mut r = Raised { c, out: Vec::new() };
    check_levels(&mut r, limits, sys, &questioned.strokes);
    reservoir_temperature(&mut r, h, limits, sys, &questioned.temps);
    sample_flags(&mut r, limits, sys, &questioned.water);
    filter_and_oil_level(&mut r, h);
    drift(&mut r, limits, sys);
    let mut out = r.out;
    drift_figure(&mut out, c, limits);
    baselines_and_restarts(&mut out, c);
    out
}

/// The flags raised so far for one unit's evaluation `c`.
struct Raised<'a> {
    c: &'a Computed,
    out: Vec<Flag>,
}

impl Raised<'_> {
    /// Raises a flag of `kind` where the graded readings `g` end in an episode at watch or
    /// worse, with the sentence `message` gives for its last reading.
    fn push(&mut self, kind: FlagKind, g: Vec<Graded>, message: &dyn Fn(&Graded) -> String) {
        if let Some((last, since, state_since)) = episode(&g) {
            self.out.push(new_flag(
                kind,
                &last,
                self.c.calendar.day(since),
                state_since,
                message(&last),
            ));
        }
    }
}

/// The lost-flow points with a sudden loss at a check whose job cannot be told
/// (`CheckPoint::sudden_job_unknown`) held at watch, where the sudden loss is what lifts it to
/// act: its flow is compared with the checks before as read, and a harder job reads as a loss
/// too, so it shows and waits for the next check, as a questioned stroke does.
fn unknown_jobs_at_watch(
    mut points: Vec<Graded>,
    checks: &[CheckPoint],
    limits: &Limits,
) -> Vec<Graded> {
    let l = limits.get(LimitKey::LostFlowPct);
    for g in points.iter_mut().filter(|g| g.state == State::Act) {
        let Some(p) = checks.iter().rev().find(|p| p.at == g.at) else {
            continue;
        };
        let by_median = p
            .lost_flow_median_pct
            .map(|m| grade(limits, LimitKey::LostFlowPct, m).0);
        if p.sudden_job_unknown && by_median != Some(State::Act) {
            g.state = State::Watch;
            g.limit = l.watch.or(l.act);
        }
    }
    points
}

/// Lost flow, leak conductance, case drain and heat rise: the checks against the era's baseline.
fn check_levels(r: &mut Raised, limits: &Limits, sys: UnitSystem, strokes: &[QuestionedStroke]) {
    let c = r.c;
    let pct = |v: Option<f64>| num(v.unwrap_or(0.0).abs(), 1);
    let base = |i: BaselineIndicator| c.baseline.get(i).map(|b| b.value);

    // Checks against the era baseline (median of the last 3).
    // Lost flow at the reference conditions, or a sudden loss of the timed flow over two
    // checks (a step such as a relief valve starting to pass oil, which heats the oil and so
    // hides part of itself in the correction), whichever is larger.
    let lost = graded_levels(
        &c.checks,
        limits,
        LimitKey::LostFlowPct,
        |p| p.lost_flow_pct.or(p.sudden_loss_pct),
        |p| match (p.lost_flow_median_pct, p.sudden_loss_pct) {
            (Some(a), Some(b)) => Some(a.max(b)),
            (a, b) => a.or(b),
        },
    );
    let lost = unknown_jobs_at_watch(lost, &c.checks, limits);
    let (lost, held) = stroke_points(lost, c, strokes, limits);
    r.push(
        FlagKind::LostFlow,
        lost,
        &|g| {
            if let Some(q) = held.iter().find(|q| q.0 == g.at).map(|q| q.1) {
                return format!(
                    "The timed stroke of {} (the usual {}) would lose {} % of the baseline flow, questioned and \
                     held at watch until the next check or a person confirms it: time the stroke again; if it \
                     stands, check the relief valve for bypass first (a hot spot, a hissing valve), then the pump.",
                    seconds(q.stroke_s),
                    seconds(q.usual_s),
                    pct(g.value)
                );
            }
            // Raised by a sudden loss of the timed flow: say so, with its own figure (the flows
            // of the baseline would contradict it).
            let at = c.checks.iter().rev().find(|p| p.at == g.at);
            if let Some(s) = at.and_then(|p| {
                p.sudden_loss_pct
                    .filter(|s| p.lost_flow_median_pct.is_none_or(|m| *s > m))
            }) {
                if at.is_some_and(|p| p.sudden_job_unknown) {
                    return format!(
                        "The timed flow fell {} % below the checks before it, but this check's working \
                         pressure is questioned or was not read, so a harder job cannot be told from a \
                         loss: held at watch until the next check. Time the stroke again at a known \
                         pressure; if it stands, check the relief valve for bypass first.",
                        num(s, 1)
                    );
                }
                return format!(
                    "The timed flow fell {} % below the checks before it, at two checks in a row: a step rather \
                     than slow wear; check the relief valve for bypass first (a hot spot, a hissing valve), then \
                     the pump.",
                    num(s, 1)
                );
            }
            // At the reference conditions (the baseline's oil viscosity and pressure) where the
            // flow can be corrected to them, as the lost flow itself is. The flow given is the
            // one the flag's level stands for (the confirmed level of the last checks), not the
            // last check's alone, so the two figures of the sentence agree.
            let corrected = base(BaselineIndicator::CorrectedFlow).is_some();
            let b = if corrected {
                base(BaselineIndicator::CorrectedFlow)
            } else {
                base(BaselineIndicator::EffectiveFlow)
            };
            let now = b.zip(g.value).map(|(b, lost)| b * (1.0 - lost / 100.0));
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
    r.push(
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
    r.push(
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
    r.push(
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
}

/// The reservoir temperature at every check, against absolute limits.
fn reservoir_temperature(
    r: &mut Raised,
    h: &UnitHistory,
    limits: &Limits,
    sys: UnitSystem,
    questioned: &[QuestionedTemp],
) {
    // Reservoir temperature: every check, against absolute limits. A single reading at act
    // shows watch until the next check confirms it; above the ceiling it is act at once. A
    // reading the screen holds (`h` has it taken out) is still shown, graded by the same
    // limits but never above watch, until the next check or a person confirms it: an oil that
    // may be far hotter than usual is worth a second look before anyone works on the circuit,
    // and a slip acts on nothing. It confirms no reading after it.
    let ceiling = limits.get(LimitKey::ReservoirTempCeilingC);
    let mut prev_act = false;
    let mut held = Vec::new();
    let temps: Vec<Graded> = h
        .checks
        .iter()
        .filter_map(|ch| {
            let Some(t) = ch.reservoir_temp.map(|t| t.c()) else {
                let q = questioned.iter().find(|q| q.check_id == ch.id)?;
                let t = crate::units::Temperature(q.temp_k).c();
                prev_act = false;
                let (state, limit) = grade(limits, LimitKey::ReservoirTempC, t);
                let ceiling_hit = ceiling.grade(t) == Some(true);
                let (state, limit) = if state == State::Act || ceiling_hit {
                    (
                        State::Watch,
                        limits.get(LimitKey::ReservoirTempC).watch.or(limit),
                    )
                } else {
                    (state, limit)
                };
                held.push(ch.taken_at);
                return Some(Graded {
                    at: ch.taken_at,
                    state,
                    value: Some(t),
                    limit,
                });
            };
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
    r.push(FlagKind::ReservoirTemp, temps, &|g| {
        let v = g.value.unwrap_or(0.0) + crate::units::KELVIN_AT_0C;
        let l = g.limit.unwrap_or(0.0) + crate::units::KELVIN_AT_0C;
        if held.contains(&g.at) {
            return format!(
                "Reservoir oil read at {} (limit {}), far from this unit's usual, questioned and held at watch \
                 until the next check or a person confirms it: read the oil temperature again; if it stands, \
                 check the cooler and its fan or water, the oil level and the relief setting, and let the oil \
                 cool before work on the circuit.",
                temp(v, sys),
                temp(l, sys)
            );
        }
        format!(
            "Reservoir oil at {} (limit {}): check the cooler and its fan or water, the oil level and the relief \
             setting, and let the oil cool before work on the circuit.",
            temp(v, sys),
            temp(l, sys)
        )
    });
}

/// Viscosity, cleanliness, water and acid number: the era's samples against the new oil and
/// the target.
fn sample_flags(
    r: &mut Raised,
    limits: &Limits,
    sys: UnitSystem,
    questioned_water: &[QuestionedWater],
) {
    // The time to the next sample due: how far a trend is carried before it must act.
    let horizon_days = limits.value(LimitKey::SampleIntervalWeeks) * 7.0;
    viscosity(r, limits, sys, horizon_days);
    cleanliness(r, limits);
    water(r, limits, horizon_days, questioned_water);
    acid(r, limits, horizon_days);
}

/// KV40 against the new oil's, its ISO VG band, and its trend to the act limit.
fn viscosity(r: &mut Raised, limits: &Limits, sys: UnitSystem, horizon_days: f64) {
    let c = r.c;
    let pct = |v: Option<f64>| num(v.unwrap_or(0.0).abs(), 1);
    let kv = limits.get(LimitKey::Kv40DriftPct);
    let mut visc_points: Vec<Graded> = c
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
    // A lab's KV40 of one oil repeats within about 1 % (from memory).
    let visc_by = act_on_trend(&mut visc_points, kv.act, horizon_days, &|_| 1.0);
    r.push(FlagKind::Viscosity, visc_points, &|g| {
        let s = c.samples.iter().rev().find(|s| s.kv40_drift_pct.is_some());
        let new = c.fluid.as_ref().and_then(|f| f.kv40_new).map(|v| v.si());
        let now = s.and_then(|s| s.kv40);
        let figures = match (now, new) {
            (Some(n), Some(b)) => format!("KV40 {} against {} new", visc(n, sys), visc(b, sys)),
            _ => "KV40".to_string(),
        };
        let figures = match (visc_by, s.and_then(|s| s.kv40_drift_pct)) {
            (Some(by), Some(d)) if g.state == State::Act => format!(
                "{figures}, {} % {} and moving on {TREND_SAMPLES} samples in a row; at that rate {} % by {}",
                pct(Some(d)),
                if d < 0.0 { "thinner" } else { "thicker" },
                pct(g.value),
                c.calendar.day(by)
            ),
            _ => figures,
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
        if visc_by.is_some() && g.state == State::Act {
            return format!("{figures}{band}: {cause}, and resample now.");
        }
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
}

/// The ISO 4406 code against the target, over the samples since the last filter change.
fn cleanliness(r: &mut Raised, limits: &Limits) {
    let c = r.c;
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
    r.push(
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
}

/// Water: the accepted contents with their trend, and the questioned ones at watch at most.
fn water(r: &mut Raised, limits: &Limits, horizon_days: f64, questioned_water: &[QuestionedWater]) {
    let c = r.c;
    let mut water = graded_samples(&c.samples, limits, LimitKey::WaterPpm, |s| s.water_ppm);
    let water_by = act_on_trend(
        &mut water,
        limits.get(LimitKey::WaterPpm).act,
        horizon_days,
        // Karl Fischer water results repeat within about a tenth at these levels (from memory).
        &|v| 0.1 * v,
    );
    let WaterPoints {
        points: water,
        held,
        carried,
    } = water_points(water, &c.samples, questioned_water, limits);
    r.push(FlagKind::Water, water, &|g| {
        if held.contains(&g.at) {
            return format!(
                "Water at {} ppm, questioned as a possible typing slip and held at watch until it is \
                 confirmed: check the lab's report, then confirm the figure or resample; if it stands, find \
                 the ingress — breather and desiccant, cooler, rod seals, wash-down.",
                num(g.value.unwrap_or(0.0), 0)
            );
        }
        if let Some(now) = carried.iter().find(|x| x.0 == g.at).map(|x| x.1) {
            return format!(
                "Water at {} ppm, confirmed by the next sample's {} ppm (limit {} ppm): find the ingress \
                 first — breather and desiccant, cooler, rod seals, wash-down — then dry or change the fluid.",
                num(g.value.unwrap_or(0.0), 0),
                num(now, 0),
                num(g.limit.unwrap_or(0.0), 0)
            );
        }
        let now = c.samples.iter().rev().find_map(|s| s.water_ppm);
        let what = match (water_by, now) {
            (Some(by), Some(now)) if g.state == State::Act => format!(
                "Water at {} ppm and rising on {TREND_SAMPLES} samples in a row; at that rate {} ppm by {} \
                 (limit {} ppm)",
                num(now, 0),
                num(g.value.unwrap_or(0.0), 0),
                c.calendar.day(by),
                num(g.limit.unwrap_or(0.0), 0)
            ),
            _ => format!(
                "Water at {} ppm (limit {} ppm)",
                num(g.value.unwrap_or(0.0), 0),
                num(g.limit.unwrap_or(0.0), 0)
            ),
        };
        format!(
            "{what}: find the ingress first — breather and desiccant, cooler, rod seals, \
             wash-down — then dry or change the fluid."
        )
    });
}

/// The acid number's rise on the new oil, and its trend to the act limit.
fn acid(r: &mut Raised, limits: &Limits, horizon_days: f64) {
    let c = r.c;
    let mut acid = graded_samples(&c.samples, limits, LimitKey::AcidRiseMgKohG, |s| {
        s.acid_rise
    });
    let acid_by = act_on_trend(
        &mut acid,
        limits.get(LimitKey::AcidRiseMgKohG).act,
        horizon_days,
        // An acid number repeats within about 0.05 mg KOH/g at these levels (from memory).
        &|_| 0.05,
    );
    r.push(FlagKind::Acid, acid, &|g| {
        let now = c.samples.iter().rev().find_map(|s| s.acid_rise);
        let what = match (acid_by, now) {
            (Some(by), Some(now)) if g.state == State::Act => format!(
                "Acid number up {} mg KOH/g on the new oil and rising on {TREND_SAMPLES} samples in a row; \
                 at that rate up {} by {}",
                num(now, 2),
                num(g.value.unwrap_or(0.0), 2),
                c.calendar.day(by)
            ),
            _ => format!(
                "Acid number up {} mg KOH/g on the new oil",
                num(g.value.unwrap_or(0.0), 2)
            ),
        };
        format!(
            "{what}: the oil is oxidising — check the oil temperature and aeration, and plan a fluid change."
        )
    });
}

/// The filter indicator and the oil level at the latest check.
fn filter_and_oil_level(r: &mut Raised, h: &UnitHistory) {
    let c = r.c;

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
    r.push(FlagKind::Filter, filters, &|g| {
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
    r.push(FlagKind::OilLevel, levels, &|_| {
        let fluid = c
            .fluid
            .as_ref()
            .map(|f| format!(" with {}", f.name))
            .unwrap_or_default();
        format!("Oil level low at the last check: top up{fluid} and look for an external leak (hoses, fittings, rod seals).")
    });
}

/// The statistical drift flag.
fn drift(r: &mut Raised, limits: &Limits, sys: UnitSystem) {
    let c = r.c;

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
    r.push(FlagKind::Drift, drift, &|g| {
        let p = c.checks.iter().rev().find(|p| !p.drift.is_empty());
        let d = p.and_then(|p| raising_drift(p, &dl, g.state));
        let what = match d {
            Some(d) => {
                let (name, fmt): (&str, Box<dyn Fn(f64) -> String>) = match d.indicator {
                    BaselineIndicator::EffectiveFlow => {
                        ("Effective flow", Box::new(|v| flow(v, sys)))
                    }
                    BaselineIndicator::CorrectedFlow => (
                        "Effective flow at baseline oil and pressure",
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
                        "Case-drain flow at baseline oil and pressure",
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
                let here = d
                    .shift_here_pct
                    .map(|h| {
                        format!(
                            "; at this check's oil and pressure that is {} % of the flow",
                            num(h, 1)
                        )
                    })
                    .unwrap_or_default();
                format!(
                    "{name} has run {side} its baseline {b} for {} checks (EWMA {}, limit {}){here}",
                    d.run,
                    fmt(d.ewma),
                    fmt(d.ewma_limit)
                )
            }
            None => "An indicator has drifted from its baseline".to_string(),
        };
        format!("{what}: a small steady shift, not noise — look at it now, before it reaches the limits.")
    });
}

/// The indicator's drift that raised a drift flag at `state` on the check `p`: at act, the
/// longest run of those long enough for act and material (`drift`); else the longest run.
/// The flag's sentence and figure both name it, so a heat rise that acts is not shown as the
/// flow drift beside it that ran longer without being material.
pub(super) fn raising_drift<'a>(
    p: &'a CheckPoint,
    dl: &Limit,
    state: State,
) -> Option<&'a DriftPoint> {
    let longest = p.drift.iter().max_by_key(|d| d.run);
    let acting = p
        .drift
        .iter()
        .filter(|d| dl.grade(d.run as f64) == Some(true) && d.material)
        .max_by_key(|d| d.run);
    match state {
        State::Act => acting.or(longest),
        _ => longest,
    }
}

/// The drift flag's figure.
fn drift_figure(out: &mut [Flag], c: &Computed, limits: &Limits) {
    // The drift flag's figure: the EWMA of the indicator that drifted, its limit and baseline.
    let dl = limits.get(LimitKey::DriftChecks);
    if let Some(f) = out.iter_mut().find(|f| f.kind == FlagKind::Drift) {
        let p = c.checks.iter().rev().find(|p| !p.drift.is_empty());
        if let Some(d) = p.and_then(|p| raising_drift(p, &dl, f.state)) {
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
                of: Some(d.indicator),
            });
        }
    }
}

/// The baselines of the figures measured against one, and the restart each flag follows.
fn baselines_and_restarts(out: &mut [Flag], c: &Computed) {
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
}
