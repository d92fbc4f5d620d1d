//! One simulated unit week by week: the confounders, the checks, samples and events a shop
//! would record, and the truth of its fault and slips. Pure; the records go out as CSV through
//! the application layer.
//!
//! [`simulate_unit`] runs the weeks; each stage of a week is a function of its own, called in
//! the order the random draws are made, so that a seed gives the same shop.

use super::*;

use chrono::{DateTime, Duration, NaiveDate, Utc};

use crate::model::{
    Check, Event, EventKind, FilterState, Id, Machine, OilLevel, PumpKind, Sample, Unit,
};
use crate::physics::cleanliness::{code_from_counts, ranges_above};
use crate::physics::viscosity::Walther;
use crate::sim::truth::{Fault, FaultKind, Slip, TwinCheck, UnitTruth};

/// Where a unit's week-by-week state is kept while it is simulated.
struct Run {
    hours: f64,
    lost_l: f64,
    hours_since_filter: f64,
    /// Years since the oil was changed.
    oil_age_years: f64,
    kv_batch: f64,
    water_base_factor: f64,
    weeks_since_filter: f64,
    job: usize,
    job_left: usize,
    sample_pending: bool,
    /// Samples taken since the fault reached its act limit.
    samples_since_detectable: usize,
    next_sample: usize,
    lab_seq: u32,
    after_fluid_change: bool,
}

impl Run {
    /// New oil goes in: a fresh batch, a little water from the drum, sampled at the next check.
    fn new_oil(&mut self, r: &mut Rng) {
        self.oil_age_years = 0.0;
        self.kv_batch = r.range(0.97, 1.03);
        self.water_base_factor = 0.6;
        self.after_fluid_change = true;
        self.sample_pending = true;
    }
}

/// A typing slip planted in a reading: week, file, the reading's time, and (field, intended,
/// typed, how) from `slip_one`.
type SlipMade = (
    usize,
    &'static str,
    DateTime<Utc>,
    (&'static str, f64, f64, &'static str),
);

/// A unit's identity in its records.
struct Ids {
    id: Id,
    tag: String,
    fluid_id: Id,
}

impl Ids {
    /// A maintenance event of this unit, done by the shop's fitter.
    fn event(&self, d: DateTime<Utc>, kind: EventKind, litres: Option<f64>, note: &str) -> Event {
        Event {
            id: 0,
            unit_id: self.id,
            done_at: d,
            kind,
            volume: litres.map(Volume::from_l),
            fluid_id: matches!(kind, EventKind::FluidChange | EventKind::TopUp)
                .then_some(self.fluid_id),
            by: FITTER.into(),
            note: note.into(),
        }
    }
}

/// The week's conditions and the state of the fault in it.
struct Week {
    p_job: f64,
    amb: f64,
    f: FaultNow,
    healthy_now: FaultNow,
    kv_factor: f64,
    /// The oil as it would be without the fault, and as it is.
    oil_now: Walther,
    oil: Walther,
    vf: f64,
    t_ss: f64,
    /// Where the oil of the same unit without its fault would settle.
    t_ss_sound: f64,
    level: [f64; 3],
    water_true: f64,
}

const MACHINE_KINDS: [&str; 4] = ["press", "press brake", "injection moulder", "shear"];

pub(super) fn simulate_unit(
    p: &Params,
    i: usize,
    fault: Option<FaultKind>,
    nth: usize,
    weather: &[f64],
    r: &mut Rng,
    shop: &mut SimShop,
) -> Result<(), String> {
    let pl = design(p, r);
    let ids = register(p, i, &pl, r, shop);
    let (_, _, kv40_new, kv100_new) = FLUIDS[pl.fluid];

    let mut planted = fault.map(|kind| plant(p, &pl, kind, kv40_new, kv100_new, r));
    // A fault seen at the weekly check is put right 3 to 8 weeks after it reaches the act
    // limit; one seen only in the oil, 1 to 4 weeks after the second sample that shows it (the
    // lab result, then the resample that confirms it).
    let repair_after = r.int(3, 8);
    let repair_after_sample = r.int(1, 4);
    let repaired = nth.is_multiple_of(2);

    let fc_week = (fault.is_none() && r.chance(p.fluid_change_share))
        .then(|| r.int(p.weeks / 5, p.weeks * 4 / 5));
    let fc_week = fc_week.or_else(|| {
        // A faulty unit may have had its oil changed on plan before the fault began.
        let onset = planted.as_ref().map_or(0, |f| f.onset);
        (fault.is_some() && onset > 20 && r.chance(p.fluid_change_share))
            .then(|| r.int(8, onset - 6))
    });

    let mut run = Run {
        hours: round_to(r.range(2_000.0, 40_000.0), 1.0),
        lost_l: r.range(0.0, 0.02) * pl.reservoir_l,
        hours_since_filter: r.range(0.0, pl.filter_hours),
        oil_age_years: r.range(0.1, 2.0),
        kv_batch: pl.kv_batch,
        water_base_factor: 1.0,
        weeks_since_filter: 20.0,
        job: r.int(0, pl.jobs.len() - 1),
        job_left: r.int(p.job_weeks.0, p.job_weeks.1),
        sample_pending: false,
        samples_since_detectable: 0,
        next_sample: r.int(0, p.sample_every_weeks - 1),
        lab_seq: 0,
        after_fluid_change: false,
    };
    let route_seconds = 6 * 3600 + i as i64 * 150;
    let mut detectable = None;
    let mut slips: Vec<SlipMade> = Vec::new();
    let mut twin: Vec<TwinCheck> = Vec::new();

    for (w, &hall) in weather.iter().enumerate() {
        let day = p.week_day(w);
        let shut = shutdown(day);
        // Planned fluid change (before this week's check): new oil, a new era.
        if fc_week == Some(w) {
            shop.events.push(ids.event(
                at(day - Duration::days(3), 10 * 3600),
                EventKind::FluidChange,
                Some(round_to(pl.reservoir_l * 0.95, 1.0)),
                "oil changed on plan",
            ));
            run.new_oil(r);
        }
        // Repair of the planted fault (before this week's check).
        if let Some(f) = planted.as_ref().filter(|f| f.repair == Some(w)) {
            repair(&pl, f.kind, &ids, day, &mut run, r, shop);
        }

        let wk = conditions(
            p,
            &pl,
            &mut run,
            planted.as_ref(),
            w,
            hall,
            day,
            r,
            kv40_new,
            kv100_new,
        )?;
        if let (Some(pf), None) = (planted.as_ref(), detectable) {
            if w >= pf.onset
                && reaches_act(
                    &pl,
                    pf.kind,
                    &wk.f,
                    &wk.healthy_now,
                    wk.amb,
                    wk.p_job,
                    pl.duty,
                    &wk.oil_now,
                    wk.water_true,
                    wk.level,
                    wk.vf * wk.kv_factor,
                )
            {
                detectable = Some(w);
            }
        }
        if let (Some(pf), Some(d)) = (planted.as_mut(), detectable) {
            let due = if sample_borne(pf.kind) {
                (run.samples_since_detectable >= 2).then_some(w + repair_after_sample)
            } else {
                Some(d + repair_after)
            };
            if let Some(rw) = due {
                if repaired && pf.repair.is_none() && rw > w && rw + 4 < p.weeks {
                    pf.repair = Some(rw);
                }
            }
        }

        // The check, unless the round is missed.
        let hours_week =
            if shut { 0.05 } else { 1.0 } * pl.hours_per_week * (1.0 + 0.05 * r.normal());
        let missed = round_missed_by_shop(day) || r.chance(p.missed_rate);
        if w >= run.next_sample {
            run.sample_pending = true;
            run.next_sample += p.sample_every_weeks;
        }
        if !missed {
            let taken_at = at(day, route_seconds + r.int(0, 90) as i64);
            // A particle ingress shows on the filter's indicator two weeks after it reaches
            // its act limit, until the repair.
            let filter_alert = planted.as_ref().is_some_and(|pf| {
                pf.kind == FaultKind::ParticleIngress
                    && detectable.is_some_and(|d| w >= d + 2)
                    && pf.repair.is_none_or(|rw| w < rw)
            });
            let check = Checked {
                w,
                i,
                taken_at,
                shut,
                filter_alert,
            };
            // A fault seen at the check: what the same check would have read without it.
            let seen_at_check = planted.as_ref().is_some_and(|pf| {
                !sample_borne(pf.kind) && w >= pf.onset && pf.repair.is_none_or(|rw| w < rw)
            });
            let twin_now = seen_at_check.then_some(&mut twin);
            record_check(
                p, &pl, &ids, &check, &wk, &run, r, &mut slips, twin_now, shop,
            );
            if run.sample_pending {
                let beyond = record_sample(
                    p,
                    &pl,
                    &ids,
                    &check,
                    &wk,
                    &mut run,
                    (kv40_new, kv100_new),
                    r,
                    &mut slips,
                    shop,
                );
                if detectable.is_some_and(|d| w >= d) {
                    run.samples_since_detectable += 1;
                }
                // A lab result beyond a limit is checked with a second sample at the next
                // round, whatever the cause.
                if beyond {
                    run.sample_pending = true;
                }
            }
        }

        week_passes(&pl, &ids, day, hours_week, &mut run, r, shop);
    }

    record_truth(p, &ids, (planted, detectable, twin), slips, shop)
}

/// The unit's machine and its register entry, and the oil in service when the record begins.
fn register(p: &Params, i: usize, pl: &Plant, r: &mut Rng, shop: &mut SimShop) -> Ids {
    let id = i as Id + 1;
    let tag = format!("FW-{:03}-A", i + 1);
    let kind = MACHINE_KINDS[r.int(0, MACHINE_KINDS.len() - 1)];
    shop.machines.push(Machine {
        id,
        tag: format!("FW-{:03}", i + 1),
        name: format!("{} {}", kind, i + 1),
        kind: kind.into(),
        route_order: (i as i64 + 1) * 10,
        notes: String::new(),
        archived: false,
    });
    let fluid_id = pl.fluid as Id + 1;
    shop.units.push(Unit {
        id,
        machine_id: id,
        tag: tag.clone(),
        pump_kind: pl.pump,
        rated_flow: Some(Flow::from_lpm(round_to(Flow(pl.q_th).lpm() / 1.02, 1.0))),
        relief: Some(Pressure(pl.relief)),
        reservoir: Some(Volume::from_l(pl.reservoir_l)),
        sensitive_component: pl.component,
        fluid_id: Some(fluid_id),
        stroke: Some(pl.stroke),
        route_order: i as i64 + 1,
        archived: false,
    });
    let ids = Ids { id, tag, fluid_id };
    shop.events.push(ids.event(
        at(p.week_day(0) - Duration::days(7), 10 * 3600),
        EventKind::FluidChange,
        Some(round_to(pl.reservoir_l * 0.95, 1.0)),
        "oil in service when the record begins",
    ));
    ids
}

/// The planted fault of `kind`: its onset, how many weeks it takes to reach its act limit at
/// the usual conditions, and its size there.
fn plant(
    p: &Params,
    pl: &Plant,
    kind: FaultKind,
    kv40_new: f64,
    kv100_new: f64,
    r: &mut Rng,
) -> Planted {
    let (lo, hi) = match kind {
        FaultKind::PumpWear => (10.0, 30.0),
        FaultKind::CoolerFouling => (8.0, 25.0),
        FaultKind::ReliefBypass => (0.0, 0.0),
        FaultKind::WaterIngress => (8.0, 30.0),
        FaultKind::ParticleIngress => (8.0, 25.0),
        FaultKind::ViscosityLoss => (10.0, 30.0),
    };
    let room = p.weeks as f64 * 0.5;
    let span = r.range(lo, hi).min(room / 1.6);
    let first = (p.weeks / 5).clamp(6, 20);
    let last = ((p.weeks as f64 - 10.0 - 1.6 * span).max(first as f64 + 1.0)) as usize;
    let onset = r.int(first, last);
    let oil0 = Walther::from_kv40_kv100(
        Viscosity::from_cst(kv40_new * pl.kv_batch),
        Viscosity::from_cst(kv100_new * pl.kv_batch),
    )
    .ok();
    let mu_nom = oil0.as_ref().map_or(0.03, |w| dyn_visc(w, 18.0 + pl.rise0));
    let q_nom = pl.q_th - pl.g0 * pl.p_nom / mu_nom;
    let size = match kind {
        FaultKind::PumpWear => 0.15 * q_nom * mu_nom / pl.p_nom,
        FaultKind::CoolerFouling => 10.0 / pl.rise0,
        FaultKind::ReliefBypass => pl.q_th * r.range(0.18, 0.28),
        FaultKind::ParticleIngress => {
            (0..3)
                .map(|s| pl.target_scales[s] + 1.0 - pl.clean_level[s])
                .fold(f64::INFINITY, f64::min)
                + 0.3
        }
        _ => 1.0,
    };
    Planted {
        kind,
        onset,
        span,
        size,
        repair: None,
    }
}

/// The repair of the planted fault, recorded before the week's check, and what it does to
/// the oil and the filter.
fn repair(
    pl: &Plant,
    fault: FaultKind,
    ids: &Ids,
    day: NaiveDate,
    run: &mut Run,
    r: &mut Rng,
    shop: &mut SimShop,
) {
    let (kind, note) = match fault {
        FaultKind::PumpWear => (
            EventKind::Rebuild,
            "pump rebuilt: worn port plate and pistons",
        ),
        FaultKind::CoolerFouling => (
            EventKind::CoolerClean,
            "cooler cleaned on the oil and water side",
        ),
        FaultKind::ReliefBypass => (EventKind::Repair, "relief valve reseated and reset"),
        FaultKind::WaterIngress => (
            EventKind::FluidChange,
            "water found at the cooler; cooler sealed, oil changed",
        ),
        FaultKind::ParticleIngress => (
            EventKind::FilterChange,
            "rod wiper and breather replaced, filters changed",
        ),
        FaultKind::ViscosityLoss => (EventKind::FluidChange, "wrong oil topped up; oil changed"),
    };
    let litres = (kind == EventKind::FluidChange).then(|| round_to(pl.reservoir_l * 0.95, 1.0));
    shop.events
        .push(ids.event(at(day - Duration::days(2), 11 * 3600), kind, litres, note));
    match kind {
        EventKind::FluidChange => run.new_oil(r),
        EventKind::FilterChange => {
            run.hours_since_filter = 0.0;
            run.weeks_since_filter = 0.0;
        }
        _ => {}
    }
}

/// The week's job, load, hall and oil, and the state of the fault in them.
#[allow(clippy::too_many_arguments)]
fn conditions(
    p: &Params,
    pl: &Plant,
    run: &mut Run,
    planted: Option<&Planted>,
    w: usize,
    hall: f64,
    day: NaiveDate,
    r: &mut Rng,
    kv40_new: f64,
    kv100_new: f64,
) -> Result<Week, String> {
    if run.job_left == 0 {
        let next = if pl.jobs.len() > 1 {
            (run.job + 1 + r.int(0, pl.jobs.len() - 2)) % pl.jobs.len()
        } else {
            0
        };
        run.job = next;
        run.job_left = r.int(p.job_weeks.0, p.job_weeks.1);
    }
    run.job_left -= 1;
    let p_job = pl.jobs[run.job];
    let duty = (pl.duty * (1.0 + 0.08 * r.normal())).clamp(0.1, 0.95);
    let amb = hall + pl.hall_offset;
    let season_water = 1.0
        + 0.25
            * ((seasonal(p, day) - p.ambient_low_c)
                / (p.ambient_high_c - p.ambient_low_c).max(1.0));
    let water_base = pl.water_base * season_water * run.water_base_factor;
    run.water_base_factor += (1.0 - run.water_base_factor) * 0.1;

    let healthy_now = Planted {
        kind: FaultKind::PumpWear,
        onset: usize::MAX,
        span: 1.0,
        size: 0.0,
        repair: None,
    }
    .now(pl, w, water_base);
    let f = planted.map_or(healthy_now, |pf| pf.now(pl, w, water_base));
    let kv_factor = run.kv_batch * (1.0 + pl.oxidation_per_year * run.oil_age_years);
    let oil_now = Walther::from_kv40_kv100(
        Viscosity::from_cst(kv40_new * kv_factor),
        Viscosity::from_cst(kv100_new * kv_factor),
    )
    .map_err(|e| e.to_string())?;
    let vf = f.visc_factor;
    let oil = Walther::from_kv40_kv100(
        Viscosity::from_cst(kv40_new * kv_factor * vf),
        Viscosity::from_cst(kv100_new * kv_factor * (1.0 - 0.6 * (1.0 - vf))),
    )
    .map_err(|e| e.to_string())?;
    let t_ss = pl.settle(amb, p_job, duty, &f, &oil);
    let t_ss_sound = pl.settle(amb, p_job, duty, &healthy_now, &oil_now);
    // Particles: the unit's level, cleaner for a few weeks after a filter change, dirtier
    // for a few days after new oil goes in, plus an ingress.
    let filter_effect = -0.6 * (-run.weeks_since_filter / 4.0).exp();
    let level = pl.clean_level.map(|l| l + filter_effect + f.dirt_add);
    let water_true = water_base + f.water_add;
    Ok(Week {
        p_job,
        amb,
        f,
        healthy_now,
        kv_factor,
        oil_now,
        oil,
        vf,
        t_ss,
        t_ss_sound,
        level,
        water_true,
    })
}

/// The round that reached the unit this week.
struct Checked {
    w: usize,
    /// The unit's place in the shop.
    i: usize,
    taken_at: DateTime<Utc>,
    /// A shutdown week: the oil has only just been started.
    shut: bool,
    filter_alert: bool,
}

/// The week's walk-round check as the technician writes it down (a slip now and then).
#[allow(clippy::too_many_arguments)]
fn record_check(
    p: &Params,
    pl: &Plant,
    ids: &Ids,
    ck: &Checked,
    wk: &Week,
    run: &Run,
    r: &mut Rng,
    slips: &mut Vec<SlipMade>,
    twin: Option<&mut Vec<TwinCheck>>,
    shop: &mut SimShop,
) {
    let person = (ck.w / 4 + ck.i / 40) % PEOPLE.len();
    // The oil at the moment of the check: seldom exactly settled; after a shutdown it has only
    // just been started.
    let unsettled = r.normal();
    let oil_at = |settled: f64| {
        if ck.shut {
            wk.amb + 0.35 * (settled - wk.amb) + 1.0 * unsettled
        } else {
            settled + 1.5 * unsettled
        }
    };
    let t_oil = oil_at(wk.t_ss);
    let p_now = wk.p_job * (1.0 + 0.015 * r.normal());
    let q = pl.flow(p_now, t_oil, &wk.f, &wk.oil);
    let timing = 1.0 + HABIT[person] + pl.stopwatch_sd * r.normal();
    let stroke_t = pl.volume / q * timing;
    let case_drain =
        matches!(pl.pump, PumpKind::PistonFixed | PumpKind::PistonVariable).then(|| {
            let leak = pl.leak(p_now, t_oil, wk.f.g, &wk.oil);
            Flow((pl.case_share * leak + pl.case_lube) * (1.0 + 0.05 * r.normal())).lpm()
        });
    let thermometer = 0.3 * r.normal();
    // The same check on the same unit without its fault: the same person, stopwatch and
    // thermometer, at the oil and flow the sound unit has (what the fixed rule would have read
    // there).
    if let Some(twin) = twin {
        let t_sound = oil_at(wk.t_ss_sound);
        let q_sound = pl.flow(p_now, t_sound, &wk.healthy_now, &wk.oil_now);
        twin.push(TwinCheck {
            week: ck.w,
            stroke_time_s: round_to(pl.volume / q_sound * timing, 0.01),
            reservoir_temp_c: round_to(t_sound + thermometer, 0.1),
        });
    }
    let mut vals: Vec<(&'static str, f64, f64)> = vec![
        ("reservoir_temp_c", round_to(t_oil + thermometer, 0.1), 0.1),
        (
            "ambient_temp_c",
            round_to(wk.amb + 0.4 * r.normal(), 0.1),
            0.1,
        ),
        ("pressure_bar", round_to(Pressure(p_now).bar(), 1.0), 1.0),
        ("stroke_time_s", round_to(stroke_t, 0.01), 0.01),
        ("hours", round_to(run.hours, 1.0), 1.0),
    ];
    if let Some(cd) = case_drain {
        vals.push(("case_drain_lpm", round_to(cd.max(0.1), 0.1), 0.1));
    }
    if r.chance(p.slip_rate) {
        if let Some(s) = slip_one(r, &mut vals, check_bounds) {
            slips.push((ck.w, "checks", ck.taken_at, s));
        }
    }
    let get = |k: &str| vals.iter().find(|v| v.0 == k).map(|v| v.1);
    shop.checks.push(Check {
        id: 0,
        unit_id: ids.id,
        taken_at: ck.taken_at,
        reservoir_temp: get("reservoir_temp_c").map(Temperature::from_c),
        ambient_temp: get("ambient_temp_c").map(Temperature::from_c),
        pressure: get("pressure_bar").map(Pressure::from_bar),
        stroke_time: get("stroke_time_s").map(Seconds),
        cycle_time: None,
        oil_level: Some(OilLevel::Ok),
        filter: Some(if ck.filter_alert {
            FilterState::Alert
        } else {
            FilterState::Ok
        }),
        hours: get("hours"),
        case_drain: get("case_drain_lpm").map(Flow::from_lpm),
        by: PEOPLE[person].into(),
        note: String::new(),
        confirmed: None,
    });
}

/// The fluid sample taken at the check and the lab's result (a slip now and then); whether
/// the result, as typed, is beyond a limit (water, KV40, cleanliness), which asks for a
/// second sample.
#[allow(clippy::too_many_arguments)]
fn record_sample(
    p: &Params,
    pl: &Plant,
    ids: &Ids,
    ck: &Checked,
    wk: &Week,
    run: &mut Run,
    (kv40_new, kv100_new): (f64, f64),
    r: &mut Rng,
    slips: &mut Vec<SlipMade>,
    shop: &mut SimShop,
) -> bool {
    run.sample_pending = false;
    run.lab_seq += 1;
    let sampled_at = ck.taken_at + Duration::minutes(15);
    let shared = 0.25 * r.normal();
    let mut counts = wk
        .level
        .map(|l| 0.01 * 2f64.powf(l + shared + 0.12 * r.normal()));
    if run.after_fluid_change {
        // New oil straight from the drum is dirtier until the filters catch up.
        counts = counts.map(|c| c * 1.3);
        run.after_fluid_change = false;
    }
    counts[1] = counts[1].min(counts[0]);
    counts[2] = counts[2].min(counts[1]);
    let c = counts.map(|c| {
        if c >= 100.0 {
            round_to(c, 1.0)
        } else {
            round_to(c, 0.1)
        }
    });
    let (kv_factor, vf) = (wk.kv_factor, wk.vf);
    let kv40 = round_to(kv40_new * kv_factor * vf * (1.0 + 0.012 * r.normal()), 0.1);
    let kv100 = round_to(
        kv100_new * kv_factor * (1.0 - 0.6 * (1.0 - vf)) * (1.0 + 0.012 * r.normal()),
        0.01,
    );
    let acid = round_to(
        (pl.acid_new + pl.acid_rate_per_year * run.oil_age_years + 0.02 * r.normal()).max(0.01),
        0.01,
    );
    let water = round_to((wk.water_true * (1.0 + 0.1 * r.normal())).max(5.0), 1.0);
    let mut vals: Vec<(&'static str, f64, f64)> = vec![
        ("kv40_cst", kv40, 0.1),
        ("kv100_cst", kv100, 0.01),
        ("count_4um_per_ml", c[0], 1.0),
        ("count_6um_per_ml", c[1], 1.0),
        ("count_14um_per_ml", c[2], 1.0),
        ("water_ppm", water, 1.0),
        ("acid_mgkoh_g", acid, 0.01),
    ];
    if r.chance(p.slip_rate) {
        if let Some(s) = slip_one(r, &mut vals, sample_bounds) {
            slips.push((ck.w, "samples", sampled_at, s));
        }
    }
    let get = |k: &str| vals.iter().find(|v| v.0 == k).map(|v| v.1);
    shop.samples.push(Sample {
        id: 0,
        unit_id: ids.id,
        sampled_at,
        kv40: get("kv40_cst").map(Viscosity::from_cst),
        kv100: get("kv100_cst").map(Viscosity::from_cst),
        visc_reading: None,
        counts_per_ml: [
            get("count_4um_per_ml"),
            get("count_6um_per_ml"),
            get("count_14um_per_ml"),
        ],
        iso4406: None,
        water_ppm: get("water_ppm"),
        acid_mgkoh_g: get("acid_mgkoh_g"),
        lab_ref: format!("WL-{:03}-{:02}", ck.i + 1, run.lab_seq),
        note: String::new(),
        confirmed: None,
    });
    let code = match (
        get("count_4um_per_ml"),
        get("count_6um_per_ml"),
        get("count_14um_per_ml"),
    ) {
        (Some(a), Some(b), Some(c)) => code_from_counts([a, b, c], None).ok(),
        _ => None,
    };
    let dirty = code.is_some_and(|c| {
        ranges_above(&c, &pl.target)
            .iter()
            .flatten()
            .any(|&n| n >= 2)
    });
    let wet = get("water_ppm").is_some_and(|x| x > 500.0);
    let thin = get("kv40_cst").is_some_and(|v| (v / kv40_new - 1.0).abs() > 0.10);
    dirty || wet || thin
}

/// The week passes: run hours, oil used, routine work after the round.
fn week_passes(
    pl: &Plant,
    ids: &Ids,
    day: NaiveDate,
    hours_week: f64,
    run: &mut Run,
    r: &mut Rng,
    shop: &mut SimShop,
) {
    run.hours += hours_week.max(0.0);
    run.hours_since_filter += hours_week.max(0.0);
    run.weeks_since_filter += 1.0;
    run.oil_age_years += 7.0 / 365.25;
    run.lost_l += pl.loss_l_per_week * (1.0 + 0.3 * r.normal()).max(0.0);
    if run.lost_l >= 0.03 * pl.reservoir_l {
        shop.events.push(ids.event(
            at(day + Duration::days(1), 13 * 3600),
            EventKind::TopUp,
            Some(round_to(run.lost_l, 1.0).max(1.0)),
            "",
        ));
        run.lost_l = 0.0;
    }
    if run.hours_since_filter >= pl.filter_hours {
        shop.events.push(ids.event(
            at(day + Duration::days(2), 9 * 3600),
            EventKind::FilterChange,
            None,
            "return filter element changed on hours",
        ));
        run.hours_since_filter = 0.0;
        run.weeks_since_filter = 0.0;
    }
}

/// The unit's truth: its fault with the week it became detectable and its repair, and the
/// slips planted in its readings.
fn record_truth(
    p: &Params,
    ids: &Ids,
    (planted, detectable, twin): (Option<Planted>, Option<usize>, Vec<TwinCheck>),
    slips: Vec<SlipMade>,
    shop: &mut SimShop,
) -> Result<(), String> {
    let tag = &ids.tag;
    let fault_truth = match (planted, detectable) {
        (Some(pf), Some(d)) => Some(Fault {
            kind: pf.kind,
            onset_week: pf.onset,
            detectable_week: d,
            repair_week: pf.repair,
            repair_event: pf.repair.map(|_| {
                match pf.kind {
                    FaultKind::PumpWear => "rebuild",
                    FaultKind::CoolerFouling => "cooler_clean",
                    FaultKind::ReliefBypass => "repair",
                    FaultKind::WaterIngress | FaultKind::ViscosityLoss => "fluid_change",
                    FaultKind::ParticleIngress => "filter_change",
                }
                .to_string()
            }),
            twin,
        }),
        (Some(pf), None) => {
            return Err(format!(
                "unit {tag}: the planted {} never reaches its act limit in {} weeks",
                pf.kind, p.weeks
            ))
        }
        _ => None,
    };
    shop.truth.units.push(UnitTruth {
        unit: tag.clone(),
        healthy: fault_truth.is_none(),
        fault: fault_truth,
    });
    for (w, file, t, (field, intended, typed, how)) in slips {
        shop.truth.slips.push(Slip {
            unit: tag.clone(),
            file: file.into(),
            week: w,
            at: t.format("%Y-%m-%dT%H:%M:%SZ").to_string(),
            field: field.into(),
            intended,
            typed,
            how: how.into(),
        });
    }
    Ok(())
}
