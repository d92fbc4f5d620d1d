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
mod weeks;

pub use random::*;
use shop_defs::*;
use unit_model::*;
use weeks::*;

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
        let r = unit_records(ui, def, start, &ambient_noise)?;
        checks.extend(r.checks);
        samples.extend(r.samples);
        events.extend(r.events);
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
