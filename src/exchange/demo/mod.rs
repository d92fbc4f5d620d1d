//! The demo shop: an invented press shop with two years of walk-round checks, fluid samples
//! and maintenance events, generated deterministically, with known faults planted at known
//! dates (listed in `sample-data/README.md`).
//!
//! The numbers come from a small model of each power unit, not from a table: the pump delivers
//! its rated flow less internal leakage, and the leakage is laminar gap flow,
//! Q_leak = G · p / ν(T), so it grows when the oil is hot and thin and when wear opens the gaps
//! (G grows). The timed stroke takes displaced volume / delivered flow. The reservoir runs at
//! ambient plus a heat rise that grows with the leakage and with a fouled cooler. Ambient
//! follows the seasons. Readings carry the scatter of a hand stopwatch (σ ≈ 2.5 %) and of
//! ordinary gauges.
//!
//! Randomness is SplitMix64 with a fixed seed, written out here rather than taken from a crate,
//! so the demo (and `sample-data/`, which a test compares with it) cannot change when a
//! dependency is updated. Normal deviates are sums of twelve uniforms (Irwin–Hall), pure
//! arithmetic, so they are the same on every platform. Readings are rounded to what a
//! technician would write down.
//!
//! Writes through the store only; no SQL here. The people, machines, fluids and the shop are
//! made up.

mod random;
mod shop_defs;
#[cfg(test)]
mod tests;
mod unit_model;

pub use random::*;
use shop_defs::*;
use unit_model::*;

use std::collections::HashMap;

use chrono::{DateTime, Datelike, Duration, NaiveDate, TimeZone, Utc};

use crate::model::{
    Check, Event, EventKind, FilterState, Fluid, Id, LimitSetting, Machine, OilLevel, Sample,
    Settings, Unit, ViscReading,
};
use crate::physics::cleanliness::code_from_counts;
use crate::physics::PhysicsError;
use crate::store::{Store, StoreError};
use crate::units::{Flow, Pressure, Seconds, Temperature, UnitSystem, Viscosity, Volume};

/// The seed of the demo. Changing it changes every number in `sample-data/`.
pub const SEED: u64 = 0x5EED_2026_1127;

/// The last walk-round of the demo (a Friday); the demo covers the two years before it.
pub fn end_date() -> NaiveDate {
    NaiveDate::from_ymd_opt(2026, 11, 27).unwrap_or(NaiveDate::MIN)
}

/// Number of weekly walk-rounds (two years).
pub const WEEKS: i64 = 105;

#[derive(Debug, thiserror::Error)]
pub enum DemoError {
    #[error("demo generator: {0}")]
    Physics(#[from] PhysicsError),
    #[error(transparent)]
    Store(#[from] StoreError),
}

fn date(y: i32, m: u32, d: u32) -> NaiveDate {
    NaiveDate::from_ymd_opt(y, m, d).unwrap_or(NaiveDate::MIN)
}

fn at(d: NaiveDate, h: u32, min: u32) -> DateTime<Utc> {
    let naive = d.and_hms_opt(h, min, 0).unwrap_or_default();
    Utc.from_utc_datetime(&naive)
}

fn days_between(a: NaiveDate, b: NaiveDate) -> f64 {
    (b - a).num_days() as f64
}

/// The generated shop, with ids as they are in a new database (1, 2, ... in order).
#[derive(Clone, Debug, PartialEq)]
pub struct DemoShop {
    pub settings: Settings,
    pub fluids: Vec<Fluid>,
    pub machines: Vec<Machine>,
    pub units: Vec<Unit>,
    pub checks: Vec<Check>,
    pub samples: Vec<Sample>,
    pub events: Vec<Event>,
    /// The shop's own limits and intervals (stored as shop defaults).
    pub limits: Vec<LimitSetting>,
}

impl DemoShop {
    /// The same shop with every date moved forward by whole weeks, as far as its latest
    /// record stays at or before `now`: its last walk-round then falls in the week before `now`
    /// (a shop opened today shows no work late just because the demo was made earlier).
    /// Readings, weekdays, times of day and the spacing of every record stay as they are; the
    /// seasons move with the dates. A demo already that recent is left as it is.
    pub fn moved_to(mut self, now: DateTime<Utc>) -> DemoShop {
        let latest = self
            .checks
            .iter()
            .map(|c| c.taken_at)
            .chain(self.samples.iter().map(|s| s.sampled_at))
            .chain(self.events.iter().map(|e| e.done_at))
            .max();
        let Some(latest) = latest else { return self };
        let weeks = (now - latest).num_seconds().div_euclid(7 * 86_400);
        if weeks <= 0 {
            return self;
        }
        let by = Duration::weeks(weeks);
        for c in &mut self.checks {
            c.taken_at += by;
            if let Some(k) = c.confirmed.as_mut() {
                k.at += by;
            }
        }
        for s in &mut self.samples {
            s.sampled_at += by;
            if let Some(k) = s.confirmed.as_mut() {
                k.at += by;
            }
        }
        for e in &mut self.events {
            e.done_at += by;
        }
        self
    }
}

/// What [`load`] wrote.
#[derive(Clone, Copy, Debug, PartialEq, Eq, serde::Serialize)]
pub struct DemoCounts {
    pub machines: usize,
    pub units: usize,
    pub fluids: usize,
    pub checks: usize,
    pub samples: usize,
    pub events: usize,
}

/// Generates the demo shop. Same output on every run and every platform.
pub fn generate() -> Result<DemoShop, DemoError> {
    let defs = units_def();
    let fluids: Vec<Fluid> = FLUIDS
        .iter()
        .enumerate()
        .map(|(i, f)| Fluid {
            id: i as Id + 1,
            name: f.name.into(),
            iso_vg: Some(f.vg),
            kv40_new: Some(Viscosity::from_cst(f.kv40)),
            kv100_new: Some(Viscosity::from_cst(f.kv100)),
            acid_new_mgkoh_g: Some(f.acid),
            base_type: f.base.into(),
        })
        .collect();
    let machines: Vec<Machine> = MACHINES
        .iter()
        .enumerate()
        .map(|(i, m)| Machine {
            id: i as Id + 1,
            tag: m.tag.into(),
            name: m.name.into(),
            kind: m.kind.into(),
            route_order: (i as i64 + 1) * 10,
            notes: String::new(),
            archived: false,
        })
        .collect();
    let units: Vec<Unit> = defs
        .iter()
        .enumerate()
        .map(|(i, d)| Unit {
            id: i as Id + 1,
            machine_id: d.machine as Id + 1,
            tag: d.tag.into(),
            pump_kind: d.pump,
            rated_flow: Some(Flow::from_lpm(d.rated_lpm)),
            relief: Some(Pressure::from_bar(d.relief_bar)),
            reservoir: Some(Volume::from_l(d.reservoir_l)),
            sensitive_component: d.component,
            fluid_id: Some(d.fluid as Id + 1),
            stroke: Some(timed_stroke(d)),
            route_order: (i as i64 + 1) * 10,
            archived: false,
        })
        .collect();

    let mut checks = Vec::new();
    let mut samples = Vec::new();
    let mut events = Vec::new();
    let start = end_date() - Duration::weeks(WEEKS - 1);
    // The shop hall's weather is shared by every unit: one stream for it.
    let mut weather = SplitMix64::new(SEED);
    let ambient_noise: Vec<f64> = (0..WEEKS).map(|_| weather.normal() * 1.2).collect();

    for (ui, def) in defs.iter().enumerate() {
        let unit_id = ui as Id + 1;
        let fluid_def = &FLUIDS[def.fluid];
        let fluid_id = def.fluid as Id + 1;
        let model = UnitModel::new(def, fluid_def)?;
        // Each unit has its own stream, so adding a unit does not change the others.
        let mut rng = SplitMix64::new(SEED ^ (ui as u64 + 1).wrapping_mul(0xA24B_AED4_963E_E407));
        let mut hours = def.hours_at_start;
        let mut level_l = def.reservoir_l;
        let mut prev_filter_change = start - Duration::days(7 * (ui as i64 % 13));
        // The maintenance history from before the records begin: the oil in service and the
        // filter element in place.
        let filled = match def.fault {
            Fault::FluidChange { .. } => date(2022, 3, 14),
            _ => date(2024, 1, 15) + Duration::days(23 * ui as i64),
        };
        events.push(Event {
            id: 0,
            unit_id,
            done_at: at(filled, 10, 0),
            kind: EventKind::FluidChange,
            volume: Some(Volume::from_l(round_to(def.reservoir_l * 0.95, 1.0))),
            fluid_id: Some(fluid_id),
            by: FITTER.into(),
            note: "fluid in service when records began".into(),
        });
        events.push(Event {
            id: 0,
            unit_id,
            done_at: at(prev_filter_change, 14, 0),
            kind: EventKind::FilterChange,
            volume: None,
            fluid_id: None,
            by: FITTER.into(),
            note: "routine return-filter element change".into(),
        });
        for week in 0..WEEKS {
            let day = start + Duration::weeks(week);
            hours += 38.0 + rng.normal() * 3.0;
            level_l -= def.loss_l_per_week * (1.0 + 0.3 * rng.normal());
            let missing = matches!(def.fault, Fault::MissingWeeks { from, until } if day >= from && day <= until);
            let amb_true = ambient_c(day) + ambient_noise[week as usize];
            let load = 1.0 + 0.05 * rng.normal();
            let (t_oil, q_true, q_leak) = model.operating_point(day, amb_true, load);
            let walk_minute = 6 * 60 + (ui as u32) * 7 + (rng.uniform() * 4.0) as u32;
            let taken_at = at(day, walk_minute / 60, walk_minute % 60);
            let technician = PEOPLE[((week as usize) + ui / 4) % PEOPLE.len()];
            let oil_low = level_l < def.reservoir_l * 0.96;

            let filter = match def.fault {
                Fault::Contamination { alert, filter, .. } if day >= alert && day < filter => {
                    FilterState::Alert
                }
                _ => FilterState::Ok,
            };
            if !missing {
                let stroke_s = model.volume_m3 / q_true * (1.0 + 0.02 * rng.normal());
                let pressure = def.work_bar * (1.0 + 0.012 * rng.normal());
                let case_drain = def.case_drain.then(|| {
                    let lpm = Flow(q_leak).lpm() * 0.6 * (1.0 + 0.04 * rng.normal());
                    Flow::from_lpm(round_to(lpm, 0.1))
                });
                let cycle = def.cycle_s.map(|c| {
                    let t = c
                        * (1.0 + 0.3 * (stroke_s * q_true / model.volume_m3 - 1.0))
                        * (1.0 + 0.01 * rng.normal());
                    Seconds(round_to(t, 0.1))
                });
                let note = check_note(def, day);
                checks.push(Check {
                    id: 0,
                    unit_id,
                    taken_at,
                    reservoir_temp: Some(Temperature::from_c(round_to(
                        t_oil + 0.3 * rng.normal(),
                        0.1,
                    ))),
                    ambient_temp: Some(Temperature::from_c(round_to(
                        amb_true + 0.3 * rng.normal(),
                        0.1,
                    ))),
                    pressure: Some(Pressure::from_bar(round_to(pressure, 1.0))),
                    stroke_time: Some(Seconds(round_to(stroke_s, 0.01))),
                    cycle_time: cycle,
                    oil_level: Some(if oil_low { OilLevel::Low } else { OilLevel::Ok }),
                    filter: Some(filter),
                    hours: Some(round_to(hours, 1.0)),
                    case_drain,
                    by: technician.into(),
                    note: note.into(),
                    confirmed: None,
                });
                if oil_low {
                    let litres = round_to(def.reservoir_l - level_l, 1.0).max(1.0);
                    level_l = def.reservoir_l;
                    events.push(Event {
                        id: 0,
                        unit_id,
                        done_at: at(day, 13, 30),
                        kind: EventKind::TopUp,
                        volume: Some(Volume::from_l(litres)),
                        fluid_id: Some(fluid_id),
                        by: technician.into(),
                        note: String::new(),
                    });
                }
            }

            // A routine filter change about once a year (2000 run-hours).
            if days_between(prev_filter_change, day) >= 364.0 {
                prev_filter_change = day;
                events.push(Event {
                    id: 0,
                    unit_id,
                    done_at: at(day, 14, 0),
                    kind: EventKind::FilterChange,
                    volume: None,
                    fluid_id: None,
                    by: FITTER.into(),
                    note: "routine return-filter element change".into(),
                });
            }

            // Samples: a lab sample each quarter; a bench sample in the other months on
            // units sampled monthly.
            let quarter = week % 13 == (ui as i64 % 4) + 1;
            let month = def.monthly_samples
                && week % 13 != (ui as i64 % 4) + 1
                && week % 4 == (ui as i64 % 4);
            if (quarter || month) && !missing {
                let sampled_at = taken_at + Duration::minutes(10);
                let vf = model.visc_factor(day);
                let contamination = contamination_codes(def, day);
                let mut counts = [0.0; 3];
                for (i, c) in counts.iter_mut().enumerate() {
                    let extra = if i == 2 {
                        contamination * 1.2
                    } else {
                        contamination
                    };
                    *c = count_for_code(def.clean_codes[i] + extra + 0.35 * rng.normal());
                }
                counts[1] = counts[1].min(counts[0]);
                counts[2] = counts[2].min(counts[1]);
                let water = water_ppm(def, day) * (1.0 + 0.12 * rng.normal());
                let water = round_to(water.max(10.0), 1.0);
                let acid_rise = 0.0015 * days_between(start, day) / 30.44;
                let acid = match def.fault {
                    Fault::FluidChange { changed } if day < changed => {
                        0.62 + 0.01 * days_between(start, day) / 30.44
                    }
                    Fault::FluidChange { changed } => {
                        fluid_def.acid + 0.0015 * days_between(changed, day) / 30.44
                    }
                    _ => fluid_def.acid + acid_rise,
                } + 0.015 * rng.normal();
                let sample = if quarter {
                    Sample {
                        id: 0,
                        unit_id,
                        sampled_at,
                        kv40: Some(Viscosity::from_cst(round_to(
                            fluid_def.kv40 * vf * (1.0 + 0.008 * rng.normal()),
                            0.1,
                        ))),
                        kv100: Some(Viscosity::from_cst(round_to(
                            fluid_def.kv100 * vf.powf(0.8) * (1.0 + 0.008 * rng.normal()),
                            0.01,
                        ))),
                        visc_reading: None,
                        counts_per_ml: counts.map(Some),
                        iso4406: None,
                        water_ppm: Some(water),
                        acid_mgkoh_g: Some(round_to(acid.max(0.01), 0.01)),
                        // Numbered below, in the order the lab receives them.
                        lab_ref: "lab".into(),
                        note: String::new(),
                        confirmed: None,
                    }
                } else {
                    let nu = model.walther.at(Temperature::from_c(t_oil)).cst()
                        * vf
                        * (1.0 + 0.015 * rng.normal());
                    let (counts_out, code) = if def.code_only_bench {
                        ([None; 3], Some(code_from_counts(counts, None)?.to_string()))
                    } else {
                        (counts.map(Some), None)
                    };
                    Sample {
                        id: 0,
                        unit_id,
                        sampled_at,
                        kv40: None,
                        kv100: None,
                        visc_reading: Some(ViscReading {
                            visc: Viscosity::from_cst(round_to(nu, 0.1)),
                            at: Temperature::from_c(round_to(t_oil, 0.5)),
                        }),
                        counts_per_ml: counts_out,
                        iso4406: code,
                        water_ppm: Some(water),
                        acid_mgkoh_g: None,
                        lab_ref: String::new(),
                        note: "bench".into(),
                        confirmed: None,
                    }
                };
                samples.push(sample);
            }
        }
        events.extend(fault_events(def, unit_id, fluid_id));
    }
    checks.sort_by_key(|c| (c.taken_at, c.unit_id));
    samples.sort_by_key(|s| (s.sampled_at, s.unit_id));
    let mut lab_numbers: HashMap<i32, u32> = HashMap::new();
    for s in samples.iter_mut().filter(|s| !s.lab_ref.is_empty()) {
        let year = s.sampled_at.year();
        let n = lab_numbers.entry(year).or_insert(100);
        *n += 1;
        s.lab_ref = format!("L{year}-{n:04}");
    }
    events.sort_by_key(|e| (e.done_at, e.unit_id, e.kind));
    let settings = Settings {
        shop_name: "Quarry Lane Forming Works (demo)".into(),
        unit_system: UnitSystem::Metric,
        time_zone: "Europe/Berlin".into(),
        // An invented price per kWh, so that the demo shows what waiting costs.
        electricity_price: Some(0.18),
    };
    // This shop changes oil on condition (it samples every quarter), at the latest every three
    // years or 8000 run-hours.
    let limits = vec![
        LimitSetting {
            unit_id: None,
            key: "fluid_change_months".into(),
            watch: None,
            act: Some(36.0),
        },
        LimitSetting {
            unit_id: None,
            key: "fluid_change_hours".into(),
            watch: None,
            act: Some(8000.0),
        },
    ];
    Ok(DemoShop {
        settings,
        fluids,
        machines,
        units,
        checks,
        samples,
        events,
        limits,
    })
}

/// Writes the demo shop into `store` in one transaction (all or nothing) and sets the shop's
/// settings. The caller decides whether the shop may receive it.
pub fn load(store: &mut Store, demo: &DemoShop) -> Result<DemoCounts, DemoError> {
    let mut fluid_ids: HashMap<Id, Id> = HashMap::new();
    let mut machine_ids: HashMap<Id, Id> = HashMap::new();
    let mut unit_ids: HashMap<Id, Id> = HashMap::new();
    let missing = |what: &str, id: Id| {
        DemoError::Store(StoreError::Corrupt(format!(
            "demo {what} {id} is not defined"
        )))
    };
    {
        let mut bulk = store.bulk()?;
        for f in &demo.fluids {
            fluid_ids.insert(f.id, bulk.insert_fluid(f)?);
        }
        for m in &demo.machines {
            machine_ids.insert(m.id, bulk.insert_machine(m)?);
        }
        for u in &demo.units {
            let mut u = u.clone();
            u.machine_id = *machine_ids
                .get(&u.machine_id)
                .ok_or_else(|| missing("machine", u.machine_id))?;
            u.fluid_id = match u.fluid_id {
                Some(f) => Some(*fluid_ids.get(&f).ok_or_else(|| missing("fluid", f))?),
                None => None,
            };
            let old = u.id;
            unit_ids.insert(old, bulk.insert_unit(&u)?);
        }
        let unit = |id: Id| {
            unit_ids
                .get(&id)
                .copied()
                .ok_or_else(|| missing("unit", id))
        };
        for c in &demo.checks {
            let mut c = c.clone();
            c.unit_id = unit(c.unit_id)?;
            bulk.put_check(&c)?;
        }
        for s in &demo.samples {
            let mut s = s.clone();
            s.unit_id = unit(s.unit_id)?;
            bulk.put_sample(&s)?;
        }
        for e in &demo.events {
            let mut e = e.clone();
            e.unit_id = unit(e.unit_id)?;
            e.fluid_id = match e.fluid_id {
                Some(f) => Some(*fluid_ids.get(&f).ok_or_else(|| missing("fluid", f))?),
                None => None,
            };
            bulk.put_event(&e)?;
        }
        bulk.commit()?;
    }
    store.set_settings(&demo.settings, "sumpbook demo", "demo shop loaded")?;
    for l in &demo.limits {
        store.set_limit(
            l,
            FITTER,
            "shop policy: oil changed on condition, at the latest every 3 years",
        )?;
    }
    Ok(DemoCounts {
        machines: demo.machines.len(),
        units: demo.units.len(),
        fluids: demo.fluids.len(),
        checks: demo.checks.len(),
        samples: demo.samples.len(),
        events: demo.events.len(),
    })
}

/// Writes the demo shop as CSV (metric) into `dir`: units.csv, checks.csv, samples.csv,
/// events.csv, exactly as `sumpbook export` would from a freshly loaded demo.
pub fn csv_files() -> Result<Vec<(super::FileKind, Vec<u8>)>, super::ExchangeError> {
    let demo = generate().map_err(|e| match e {
        DemoError::Store(s) => super::ExchangeError::Store(s),
        DemoError::Physics(p) => super::ExchangeError::Store(StoreError::Refused(p.to_string())),
    })?;
    let mut store = Store::open_in_memory()?;
    load(&mut store, &demo).map_err(|e| match e {
        DemoError::Store(s) => super::ExchangeError::Store(s),
        DemoError::Physics(p) => super::ExchangeError::Store(StoreError::Refused(p.to_string())),
    })?;
    let mut out = Vec::new();
    for kind in super::FileKind::ALL {
        let mut bytes = Vec::new();
        super::csv_out::export(&store, kind, &mut bytes, UnitSystem::Metric)?;
        out.push((kind, bytes));
    }
    Ok(out)
}
