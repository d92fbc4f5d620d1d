//! A simulated press shop for the detection benchmark: hydraulic units run week by week under
//! the physics of a pump, a relief valve, a cooler and a charge of oil, with the confounders a
//! real shop has, a fault planted in some of them, and the readings a technician and a lab
//! would write down. Deterministic from a seed.
//!
//! The model of one unit (SI inside; L/min, bar and °C only in comments and at the records):
//! - The pump displaces `q_th`; oil leaks back through its clearances as laminar gap flow,
//!   `q_leak = G · p / μ(T)` (Hagen–Poiseuille: leakage proportional to pressure over dynamic
//!   viscosity), with `μ = ν · ρ`, `ν(T)` from the oil's KV40 and KV100 by the ASTM D341 line
//!   (`physics::viscosity::Walther`) and `ρ(T)` of a mineral oil. A relief valve that bypasses
//!   takes a further `q_bypass`. The timed stroke sees `q = q_th − q_leak − q_bypass`, so its
//!   time is `V / q`. A piston pump drains most of its leakage through the case.
//! - Heat: the power lost while loaded, `(q_leak + q_bypass + b · q_th) · p · duty` (`b`: the
//!   throttling and valve losses of the circuit), plus an idle loss, leaves through the cooler
//!   and the tank walls, `K · ΔT`. The oil settles at `ambient + loss / K`, solved together
//!   with the viscosity (thinner hot oil leaks more).
//! - Oil: KV40 and KV100 of the charge (the batch is within a few % of the data sheet), a slow
//!   rise with oxidation, acid number, water, particle counts log-normal around the unit's own
//!   cleanliness level below its ISO 4406 target.
//!
//! Confounders: the hall's temperature follows the seasons with weekly weather, each unit has
//! its own spot in the hall; each unit works at two or three job pressures, switching every few
//! weeks; the load varies week to week; the oil is not always at its settled temperature at
//! the check (and is cold after a shutdown week); every technician's stopwatch has its own
//! scatter and each person a small habit of starting or stopping early; checks are missed
//! (shutdowns and random weeks); run hours vary; routine top-ups, filter changes that clean the
//! oil a little, planned fluid changes (new oil, a new era); lab scatter on every sample; and
//! now and then a reading typed wrong (two digits swapped, a decimal point slipped).
//!
//! Faults (at most one per unit): pump wear, cooler fouling, relief valve bypass (a step),
//! water ingress, particle ingress, viscosity loss. For each, the truth names the week its
//! noise-free signal reaches the default act limit, and half of them are repaired some weeks
//! later by the matching work (rebuild, cooler clean, repair, fluid change, filter change).
//!
//! Pure: no files, no store. The application layer writes the records as CSV through the
//! exporter. Names of people, machines and fluids are invented.
mod params;
mod plant;
mod rng;
mod slips;
#[cfg(test)]
mod tests;
mod unit_run;

pub use params::*;
use plant::*;
pub use rng::*;
pub use slips::*;
use unit_run::*;

use super::truth::{FaultKind, Truth};
use crate::model::{Check, Event, Fluid, Id, Machine, Sample, Settings, Unit};
use crate::units::{Flow, Length, Pressure, Seconds, Temperature, UnitSystem, Viscosity, Volume};

/// A simulated shop: the records the shop's files hold, and the truth about them.
#[derive(Clone, Debug, PartialEq)]
pub struct SimShop {
    pub settings: Settings,
    pub fluids: Vec<Fluid>,
    pub machines: Vec<Machine>,
    pub units: Vec<Unit>,
    /// In time order.
    pub checks: Vec<Check>,
    pub samples: Vec<Sample>,
    pub events: Vec<Event>,
    pub truth: Truth,
}

/// Fluids of the invented shop's store: (name, ISO VG, KV40, KV100), data-sheet values.
const FLUIDS: [(&str, u32, f64, f64); 4] = [
    ("Works stock HM 32", 32, 32.0, 5.4),
    ("Works stock HM 46", 46, 46.0, 6.8),
    ("Works stock HV 46", 46, 46.0, 8.0),
    ("Works stock HM 68", 68, 68.0, 8.7),
];

const PEOPLE: [&str; 3] = ["E. Skarsgrove", "N. Adebanjo-Fell", "R. Lindqvist-Ware"];
/// Each person's habit with the stopwatch: a fraction added to every stroke they time.
const HABIT: [f64; 3] = [-0.008, 0.0, 0.01];
const FITTER: &str = "H. Moravec-Quill";

/// Makes the shop of `p`.
pub fn simulate(p: &Params) -> Result<SimShop, String> {
    p.validate()?;
    let mut r = Rng::new(p.seed);
    let n = p.healthy + p.faulty_per_kind * FaultKind::ALL.len();
    // Which unit carries which fault: shuffled along the route.
    let mut plan: Vec<Option<FaultKind>> = vec![None; p.healthy];
    for k in FaultKind::ALL {
        plan.extend(std::iter::repeat_n(Some(k), p.faulty_per_kind));
    }
    for i in (1..plan.len()).rev() {
        let j = r.int(0, i);
        plan.swap(i, j);
    }
    // The hall's weather: AR(1) week to week, shared by every unit.
    let mut weather = Vec::with_capacity(p.weeks);
    let mut x = 0.0;
    for w in 0..p.weeks {
        x = 0.5 * x + p.weather_sd_k * (1.0f64 - 0.25).sqrt() * r.normal();
        weather.push(seasonal(p, p.week_day(w)) + x);
    }
    let fluids: Vec<Fluid> = FLUIDS
        .iter()
        .enumerate()
        .map(|(i, &(name, vg, kv40, kv100))| Fluid {
            id: i as Id + 1,
            name: name.into(),
            iso_vg: Some(vg),
            kv40_new: Some(Viscosity::from_cst(kv40)),
            kv100_new: Some(Viscosity::from_cst(kv100)),
            acid_new_mgkoh_g: Some(0.4),
            base_type: "mineral".into(),
        })
        .collect();
    let mut shop = SimShop {
        settings: Settings {
            shop_name: format!("Detection benchmark shop ({})", p.set),
            unit_system: UnitSystem::Metric,
            time_zone: "UTC".into(),
            electricity_price: None,
        },
        fluids,
        machines: Vec::new(),
        units: Vec::new(),
        checks: Vec::new(),
        samples: Vec::new(),
        events: Vec::new(),
        truth: Truth {
            set: p.set.clone(),
            seed: p.seed,
            weeks: (0..p.weeks).map(|w| p.week_day(w)).collect(),
            units: Vec::new(),
            slips: Vec::new(),
        },
    };
    let mut kind_count = std::collections::HashMap::new();
    for (i, fault) in plan.iter().enumerate() {
        let mut ur = Rng::new(p.seed ^ (i as u64 + 1).wrapping_mul(0xD1B5_4A32_D192_ED03));
        let nth = {
            let c = kind_count.entry(*fault).or_insert(0usize);
            *c += 1;
            *c - 1
        };
        simulate_unit(p, i, *fault, nth, &weather, &mut ur, &mut shop)?;
    }
    shop.checks.sort_by_key(|c| (c.taken_at, c.unit_id));
    shop.samples.sort_by_key(|s| (s.sampled_at, s.unit_id));
    shop.events.sort_by_key(|e| (e.done_at, e.unit_id));
    debug_assert_eq!(shop.units.len(), n);
    Ok(shop)
}
