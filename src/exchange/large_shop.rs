//! A large generated shop for the benchmarks (`benches/run.sh`): any number of units, each with
//! weekly walk-round checks and periodic fluid samples, written into a shop or as CSV files for
//! the import benchmark. Deterministic: the same sizes give the same rows on every run.
//!
//! Built from the demo shop (`exchange::demo`): its fluids, and its units as templates (unit
//! `i` copies the pump, stroke, fluid and sensitive component of demo unit `i mod n`), with
//! readings scattered around the values of that template's first healthy checks and samples
//! (same noise generator, SplitMix64). One unit in ten wears its pump over the last quarter of
//! its record (the timed stroke slows) and one in ten takes in water, so the fleet has every
//! state and the health engine has flags to raise.
//!
//! Writes through the store (one transaction) or to CSV; no SQL and no health here. The shop,
//! machines and technicians are made up.

use std::collections::HashMap;
use std::io::Write;

use chrono::{DateTime, Datelike, Duration, NaiveDate, TimeZone, Utc};

use super::demo::{self, DemoError, SplitMix64};
use super::{csv_out, escape_cell, FileKind};
use crate::model::{
    Check, Event, EventKind, FilterState, Id, Machine, OilLevel, Sample, Settings, Unit,
};
use crate::store::{columns, fmt_time_stamp, Store, StoreError};
use crate::units::{Flow, Pressure, Seconds, Temperature, UnitSystem, Viscosity, Volume};

/// Seed of the large shop; independent of the demo's.
pub const SEED: u64 = 0xB16_5409_2026;

/// The most units, checks per unit and samples per unit the generator accepts.
pub const MAX_UNITS: usize = 100_000;
pub const MAX_CHECKS: usize = 5_000;

/// How big a shop to make.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Spec {
    pub units: usize,
    /// Weekly checks per unit, ending on the demo's last walk-round.
    pub checks: usize,
    /// Samples per unit, spread evenly over the checks (at most one per check).
    pub samples: usize,
}

impl Spec {
    /// Refuses sizes that make no sense (or would run for hours).
    pub fn validate(&self) -> Result<(), String> {
        if self.units == 0 || self.units > MAX_UNITS {
            return Err(format!("--units must be between 1 and {MAX_UNITS}"));
        }
        if self.checks > MAX_CHECKS {
            return Err(format!(
                "--checks must be at most {MAX_CHECKS} (weekly, about {} years)",
                MAX_CHECKS / 52
            ));
        }
        if self.samples > self.checks {
            return Err("--samples must not exceed --checks (a sample is drawn at a check)".into());
        }
        Ok(())
    }

    /// Date of the first weekly walk-round.
    pub fn start(&self) -> NaiveDate {
        demo::end_date() - Duration::weeks(self.checks.max(1) as i64 - 1)
    }

    /// Every `sample_every`-th week has a sample (`None`: no samples).
    fn sample_every(&self) -> Option<usize> {
        (self.samples > 0).then(|| (self.checks / self.samples).max(1))
    }

    fn has_sample(&self, week: usize) -> bool {
        match self.sample_every() {
            // The last weeks carry the samples, so the newest check has a recent sample.
            Some(every) => {
                let from_end = self.checks - 1 - week;
                from_end.is_multiple_of(every) && from_end / every < self.samples
            }
            None => false,
        }
    }
}

/// What [`load`] wrote or [`write_csv`] wrote.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, serde::Serialize)]
pub struct Counts {
    pub machines: u64,
    pub units: u64,
    pub fluids: u64,
    pub checks: u64,
    pub samples: u64,
    pub events: u64,
}

#[derive(Debug, thiserror::Error)]
pub enum LargeShopError {
    #[error("{0}")]
    Spec(String),
    #[error(transparent)]
    Demo(#[from] DemoError),
    #[error(transparent)]
    Store(#[from] StoreError),
    #[error("cannot write CSV: {0}")]
    Write(#[from] std::io::Error),
}

impl From<csv::Error> for LargeShopError {
    fn from(e: csv::Error) -> Self {
        LargeShopError::Write(e.into())
    }
}

/// Typical readings of one demo unit while it was healthy.
#[derive(Clone, Debug)]
struct Template {
    stroke_s: f64,
    heat_rise_k: f64,
    pressure_bar: f64,
    cycle_s: Option<f64>,
    case_drain_lpm: Option<f64>,
    counts: [f64; 3],
    water_ppm: f64,
    kv40: f64,
    kv100: f64,
    acid: f64,
}

fn mean(xs: impl Iterator<Item = f64>) -> Option<f64> {
    let (n, s) = xs.fold((0usize, 0.0), |(n, s), x| (n + 1, s + x));
    (n > 0).then(|| s / n as f64)
}

fn templates(shop: &demo::DemoShop) -> Vec<Template> {
    shop.units
        .iter()
        .map(|u| {
            let first: Vec<&Check> = shop
                .checks
                .iter()
                .filter(|c| c.unit_id == u.id)
                .take(4)
                .collect();
            let f = u
                .fluid_id
                .and_then(|id| shop.fluids.iter().find(|f| f.id == id));
            let lab = shop
                .samples
                .iter()
                .find(|s| s.unit_id == u.id && s.counts_per_ml[0].is_some());
            let any_sample = shop.samples.iter().find(|s| s.unit_id == u.id);
            Template {
                stroke_s: mean(first.iter().filter_map(|c| c.stroke_time.map(|s| s.0)))
                    .unwrap_or(4.0),
                heat_rise_k: mean(
                    first
                        .iter()
                        .filter_map(|c| Some(c.reservoir_temp?.c() - c.ambient_temp?.c())),
                )
                .unwrap_or(18.0),
                pressure_bar: mean(first.iter().filter_map(|c| c.pressure.map(|p| p.bar())))
                    .unwrap_or(100.0),
                cycle_s: mean(first.iter().filter_map(|c| c.cycle_time.map(|s| s.0))),
                case_drain_lpm: mean(first.iter().filter_map(|c| c.case_drain.map(|q| q.lpm()))),
                counts: match lab {
                    Some(s) => s.counts_per_ml.map(|c| c.unwrap_or(0.0)),
                    None => [1300.0, 320.0, 40.0],
                },
                water_ppm: any_sample.and_then(|s| s.water_ppm).unwrap_or(100.0),
                // New-oil values: some demo units start on a worn charge, which must not be
                // copied a hundred times.
                kv40: f.and_then(|f| f.kv40_new).map_or(46.0, |v| v.cst()),
                kv100: f.and_then(|f| f.kv100_new).map_or(6.8, |v| v.cst()),
                acid: f.and_then(|f| f.acid_new_mgkoh_g).unwrap_or(0.4),
            }
        })
        .collect()
}

fn round_to(x: f64, step: f64) -> f64 {
    columns::tidy((x / step).round() * step)
}

fn at(d: NaiveDate, seconds: u32) -> DateTime<Utc> {
    let naive = d.and_hms_opt(0, 0, 0).unwrap_or_default() + Duration::seconds(i64::from(seconds));
    Utc.from_utc_datetime(&naive)
}

/// Seasonal hall temperature, °C (warmest in late July).
fn ambient_c(d: NaiveDate) -> f64 {
    let doy = f64::from(d.ordinal());
    17.0 + 7.0 * (2.0 * std::f64::consts::PI * (doy - 111.0) / 365.25).sin()
}

/// Technicians of the invented benchmark shop.
const PEOPLE: [&str; 4] = [
    "T. Varga-Lind",
    "O. Achterberg",
    "P. Nwosu-Hale",
    "K. Ferreiro",
];
const FITTER: &str = "D. Marrow-Uhl";

/// What the generator knows of one unit.
struct UnitGen {
    index: usize,
    unit_id: Id,
    fluid_id: Option<Id>,
    reservoir_l: f64,
    tpl: Template,
    rng: SplitMix64,
    hours: f64,
    lab_seq: u32,
}

/// The week index from which a unit's planted fault starts, and which.
#[derive(Clone, Copy, Debug, PartialEq)]
enum Fault {
    None,
    PumpWear,
    Water,
}

fn fault_of(index: usize) -> Fault {
    match index % 10 {
        3 => Fault::PumpWear,
        7 => Fault::Water,
        _ => Fault::None,
    }
}

/// Weeks between fluid changes (each starts a new era and baseline).
const ERA_WEEKS: usize = 208;

impl UnitGen {
    fn new(index: usize, unit: &Unit, tpl: Template) -> Self {
        let rng = SplitMix64::new(SEED ^ (index as u64 + 1).wrapping_mul(0x9E37_79B9_7F4A_7C15));
        UnitGen {
            index,
            unit_id: unit.id,
            fluid_id: unit.fluid_id,
            reservoir_l: unit.reservoir.map_or(200.0, |v| v.litres()),
            tpl,
            rng,
            hours: 5_000.0 + (index % 37) as f64 * 700.0,
            lab_seq: 0,
        }
    }

    /// How far the unit's fault has come in week `week` of `weeks`, 0..1.
    fn fault_progress(&self, week: usize, weeks: usize) -> f64 {
        let from = weeks * 3 / 4;
        if week < from || weeks == 0 {
            0.0
        } else {
            (week - from) as f64 / (weeks - from).max(1) as f64
        }
    }

    fn taken_at(&mut self, day: NaiveDate) -> DateTime<Utc> {
        // The walk-round starts at 06:00 and visits a unit every 50 s; a few seconds of jitter.
        let s = 6 * 3600 + (self.index as u32 % 1500) * 50 + (self.rng.uniform() * 40.0) as u32;
        at(day, s)
    }

    fn check(&mut self, spec: &Spec, week: usize, day: NaiveDate, amb: f64) -> Check {
        let fault = fault_of(self.index);
        let progress = self.fault_progress(week, spec.checks);
        let wear = if fault == Fault::PumpWear {
            1.0 + 0.30 * progress
        } else {
            1.0
        };
        let taken_at = self.taken_at(day);
        let r = &mut self.rng;
        self.hours += 38.0 + 3.0 * r.normal();
        let ambient = amb + 0.3 * r.normal();
        let heat = self.tpl.heat_rise_k * (1.0 + 0.04 * r.normal()) * (1.0 + 0.2 * (wear - 1.0));
        let note = if week % 97 == self.index % 97 {
            "checked hoses at the pump; no weeps"
        } else {
            ""
        };
        Check {
            id: 0,
            unit_id: self.unit_id,
            taken_at,
            reservoir_temp: Some(Temperature::from_c(round_to(ambient + heat, 0.1))),
            ambient_temp: Some(Temperature::from_c(round_to(ambient, 0.1))),
            pressure: Some(Pressure::from_bar(round_to(
                self.tpl.pressure_bar * (1.0 + 0.012 * r.normal()),
                1.0,
            ))),
            stroke_time: Some(Seconds(round_to(
                self.tpl.stroke_s * wear * (1.0 + 0.02 * r.normal()),
                0.01,
            ))),
            cycle_time: self
                .tpl
                .cycle_s
                .map(|c| Seconds(round_to(c * (1.0 + 0.01 * r.normal()), 0.1))),
            oil_level: Some(if r.uniform() < 0.02 {
                OilLevel::Low
            } else {
                OilLevel::Ok
            }),
            filter: Some(FilterState::Ok),
            hours: Some(round_to(self.hours, 1.0)),
            case_drain: self.tpl.case_drain_lpm.map(|q| {
                Flow::from_lpm(round_to(q * wear * wear * (1.0 + 0.04 * r.normal()), 0.1))
            }),
            by: PEOPLE[(week + self.index / 250) % PEOPLE.len()].to_string(),
            note: note.to_string(),
            confirmed: None,
        }
    }

    fn sample(&mut self, spec: &Spec, week: usize, taken_at: DateTime<Utc>) -> Sample {
        let progress = self.fault_progress(week, spec.checks);
        let era_weeks = (week % ERA_WEEKS) as f64;
        let r = &mut self.rng;
        let water = match fault_of(self.index) {
            Fault::Water => self.tpl.water_ppm + 700.0 * progress,
            _ => self.tpl.water_ppm,
        } * (1.0 + 0.12 * r.normal());
        // Half a range number cleaner than the demo's template, so most samples meet the target.
        let mut counts = self
            .tpl
            .counts
            .map(|c| c * 2f64.powf(-0.5 + 0.3 * r.normal()));
        counts[1] = counts[1].min(counts[0]);
        counts[2] = counts[2].min(counts[1]);
        self.lab_seq += 1;
        Sample {
            id: 0,
            unit_id: self.unit_id,
            sampled_at: taken_at + Duration::minutes(10),
            kv40: Some(Viscosity::from_cst(round_to(
                self.tpl.kv40 * (1.0 + 0.008 * r.normal()),
                0.1,
            ))),
            kv100: Some(Viscosity::from_cst(round_to(
                self.tpl.kv100 * (1.0 + 0.008 * r.normal()),
                0.01,
            ))),
            visc_reading: None,
            counts_per_ml: counts.map(|c| {
                Some(if c >= 100.0 {
                    round_to(c, 1.0)
                } else {
                    round_to(c, 0.1)
                })
            }),
            iso4406: None,
            water_ppm: Some(round_to(water.max(10.0), 1.0)),
            acid_mgkoh_g: Some(round_to(
                (self.tpl.acid + 0.0004 * era_weeks + 0.015 * r.normal()).max(0.01),
                0.01,
            )),
            lab_ref: format!("BL{}-{:05}", self.index, self.lab_seq),
            note: String::new(),
            confirmed: None,
        }
    }

    /// Fluid changes (one before the first check, then every `ERA_WEEKS`) and yearly filter
    /// changes.
    fn events(&self, spec: &Spec) -> Vec<Event> {
        let start = spec.start();
        let ev = |d: NaiveDate, kind, volume: Option<f64>, fluid: Option<Id>, note: &str| Event {
            id: 0,
            unit_id: self.unit_id,
            done_at: at(d, 14 * 3600),
            kind,
            volume: volume.map(Volume::from_l),
            fluid_id: fluid,
            by: FITTER.into(),
            note: note.into(),
        };
        let mut out = Vec::new();
        let mut week = 0;
        while week < spec.checks.max(1) {
            let d = start + Duration::weeks(week as i64) - Duration::days(1);
            let litres = round_to(self.reservoir_l * 0.95, 1.0).max(1.0);
            out.push(ev(
                d,
                EventKind::FluidChange,
                Some(litres),
                self.fluid_id,
                "fluid changed on schedule",
            ));
            week += ERA_WEEKS;
        }
        let mut week = 26 + self.index % 26;
        while week < spec.checks {
            let d = start + Duration::weeks(week as i64) + Duration::days(1);
            out.push(ev(
                d,
                EventKind::FilterChange,
                None,
                None,
                "return-filter element changed",
            ));
            week += 52;
        }
        out
    }
}

/// The register: the demo's fluids; one machine per two units.
fn register(spec: &Spec, shop: &demo::DemoShop) -> (Vec<Machine>, Vec<Unit>) {
    let mut machines = Vec::new();
    let mut units = Vec::new();
    let n_tpl = shop.units.len().max(1);
    for i in 0..spec.units {
        let tpl = &shop.units[i % n_tpl];
        let tpl_machine = shop.machines.iter().find(|m| m.id == tpl.machine_id);
        let m = i / 2;
        if i % 2 == 0 {
            machines.push(Machine {
                id: m as Id + 1,
                tag: format!("BM-{:05}", m + 1),
                name: format!(
                    "{} #{}",
                    tpl_machine.map_or("Press", |m| m.name.as_str()),
                    m + 1
                ),
                kind: tpl_machine.map_or_else(|| "press".to_string(), |m| m.kind.clone()),
                route_order: (m as i64 + 1) * 10,
                notes: String::new(),
                archived: false,
            });
        }
        units.push(Unit {
            id: i as Id + 1,
            machine_id: m as Id + 1,
            tag: format!("BM-{:05}-{}", m + 1, if i % 2 == 0 { 'A' } else { 'B' }),
            route_order: i as i64 + 1,
            archived: false,
            ..tpl.clone()
        });
    }
    (machines, units)
}

/// One generator per unit of the register (with the ids the units have in the target).
fn generators(spec: &Spec, shop: &demo::DemoShop, units: &[Unit]) -> Vec<UnitGen> {
    let tpls = templates(shop);
    units
        .iter()
        .enumerate()
        .map(|(i, u)| UnitGen::new(i, u, tpls[i % tpls.len().max(1)].clone()))
        .take(spec.units)
        .collect()
}

/// Walks the record week by week, all units in route order each week (the order a walk-round
/// writes them and an export reads them), handing each check and sample to `f`.
fn each_reading(
    spec: &Spec,
    gens: &mut [UnitGen],
    mut f: impl FnMut(Reading<'_>) -> Result<(), LargeShopError>,
) -> Result<(), LargeShopError> {
    let start = spec.start();
    // The hall's weather is shared by all units.
    let mut weather = SplitMix64::new(SEED);
    for week in 0..spec.checks {
        let day = start + Duration::weeks(week as i64);
        let amb = ambient_c(day) + 1.2 * weather.normal();
        let sample_week = spec.has_sample(week);
        for g in gens.iter_mut() {
            let c = g.check(spec, week, day, amb);
            f(Reading::Check(&c))?;
            if sample_week {
                let s = g.sample(spec, week, c.taken_at);
                f(Reading::Sample(&s))?;
            }
        }
    }
    Ok(())
}

enum Reading<'a> {
    Check(&'a Check),
    Sample(&'a Sample),
}

/// The benchmark shop's settings.
pub fn settings() -> Settings {
    Settings {
        shop_name: "Benchmark forming works (generated)".into(),
        unit_system: UnitSystem::Metric,
        time_zone: "UTC".into(),
        electricity_price: None,
    }
}

/// Writes the register, and unless `register_only` the checks, samples and events, into
/// `store` in one transaction. The store should be empty (tags must be free).
pub fn load(store: &mut Store, spec: &Spec, register_only: bool) -> Result<Counts, LargeShopError> {
    spec.validate().map_err(LargeShopError::Spec)?;
    let shop = demo::generate()?;
    let (machines, mut units) = register(spec, &shop);
    let mut counts = Counts::default();
    {
        let mut bulk = store.bulk()?;
        let mut fluid_ids: HashMap<Id, Id> = HashMap::new();
        for f in &shop.fluids {
            fluid_ids.insert(f.id, bulk.insert_fluid(f)?);
            counts.fluids += 1;
        }
        let mut machine_ids: HashMap<Id, Id> = HashMap::new();
        for m in &machines {
            machine_ids.insert(m.id, bulk.insert_machine(m)?);
            counts.machines += 1;
        }
        for u in units.iter_mut() {
            u.machine_id = machine_ids
                .get(&u.machine_id)
                .copied()
                .unwrap_or(u.machine_id);
            u.fluid_id = u.fluid_id.and_then(|f| fluid_ids.get(&f).copied());
            u.id = bulk.insert_unit(u)?;
            counts.units += 1;
        }
        if !register_only {
            let mut gens = generators(spec, &shop, &units);
            for g in &gens {
                for e in g.events(spec) {
                    bulk.put_event(&e)?;
                    counts.events += 1;
                }
            }
            each_reading(spec, &mut gens, |r| {
                match r {
                    Reading::Check(c) => {
                        bulk.put_check(c)?;
                        counts.checks += 1;
                    }
                    Reading::Sample(s) => {
                        bulk.put_sample(s)?;
                        counts.samples += 1;
                    }
                }
                Ok(())
            })?;
        }
        bulk.commit()?;
    }
    store.set_settings(
        &settings(),
        "sumpbook bench-shop",
        "generated benchmark shop",
    )?;
    Ok(counts)
}

fn num(v: Option<f64>) -> String {
    v.map(|x| x.to_string()).unwrap_or_default()
}

/// Writes the checks (and, when the spec has samples, the samples) that [`load`] would store,
/// as metric CSV files in the importer's format, without touching a shop: `checks` gets the
/// checks, `samples` the samples. Memory stays flat whatever the size.
pub fn write_csv(
    spec: &Spec,
    checks: &mut dyn Write,
    samples: &mut dyn Write,
) -> Result<Counts, LargeShopError> {
    spec.validate().map_err(LargeShopError::Spec)?;
    let shop = demo::generate()?;
    let (machines, units) = register(spec, &shop);
    let tags: Vec<String> = units
        .iter()
        .map(|u| escape_cell(&u.tag).into_owned())
        .collect();
    let mut counts = Counts {
        machines: machines.len() as u64,
        units: units.len() as u64,
        ..Counts::default()
    };
    let mut cw = csv::WriterBuilder::new()
        .terminator(csv::Terminator::CRLF)
        .from_writer(checks);
    let mut sw = csv::WriterBuilder::new()
        .terminator(csv::Terminator::CRLF)
        .from_writer(samples);
    cw.write_record(csv_out::header(FileKind::Checks, UnitSystem::Metric))?;
    if spec.samples > 0 {
        sw.write_record(csv_out::header(FileKind::Samples, UnitSystem::Metric))?;
    }
    let mut gens = generators(spec, &shop, &units);
    // Generator ids are the unit ids of a fresh shop: 1.. in order.
    let tag = |id: Id| {
        tags.get((id - 1) as usize)
            .map(String::as_str)
            .unwrap_or("")
    };
    each_reading(spec, &mut gens, |r| {
        match r {
            Reading::Check(c) => {
                cw.write_record([
                    tag(c.unit_id),
                    &fmt_time_stamp(&c.taken_at),
                    &num(c.reservoir_temp.map(columns::temp_c)),
                    &num(c.ambient_temp.map(columns::temp_c)),
                    &num(c.pressure.map(columns::bar)),
                    &num(c.stroke_time.map(columns::secs)),
                    &num(c.cycle_time.map(columns::secs)),
                    c.oil_level.map_or("", |v| v.as_str()),
                    c.filter.map_or("", |v| v.as_str()),
                    &num(c.hours.map(columns::tidy)),
                    &num(c.case_drain.map(columns::lpm)),
                    &escape_cell(&c.by),
                    &escape_cell(&c.note),
                ])?;
                counts.checks += 1;
            }
            Reading::Sample(s) => {
                sw.write_record([
                    tag(s.unit_id),
                    &fmt_time_stamp(&s.sampled_at),
                    &num(s.kv40.map(columns::cst)),
                    &num(s.kv100.map(columns::cst)),
                    "",
                    "",
                    &num(s.counts_per_ml[0].map(columns::tidy)),
                    &num(s.counts_per_ml[1].map(columns::tidy)),
                    &num(s.counts_per_ml[2].map(columns::tidy)),
                    s.iso4406.as_deref().unwrap_or(""),
                    &num(s.water_ppm.map(columns::tidy)),
                    &num(s.acid_mgkoh_g.map(columns::tidy)),
                    &escape_cell(&s.lab_ref),
                    &escape_cell(&s.note),
                ])?;
                counts.samples += 1;
            }
        }
        Ok(())
    })?;
    cw.flush()?;
    sw.flush()?;
    Ok(counts)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_same_spec_gives_the_same_csv_and_the_sizes_asked_for() {
        let spec = Spec {
            units: 12,
            checks: 30,
            samples: 3,
        };
        let (mut c1, mut s1, mut c2, mut s2) = (Vec::new(), Vec::new(), Vec::new(), Vec::new());
        let n = write_csv(&spec, &mut c1, &mut s1).unwrap();
        write_csv(&spec, &mut c2, &mut s2).unwrap();
        assert_eq!(c1, c2);
        assert_eq!(s1, s2);
        assert_eq!(n.checks, 12 * 30);
        assert_eq!(n.samples, 12 * 3);
        // Header plus one line per row.
        assert_eq!(
            c1.split(|&b| b == b'\n').filter(|l| !l.is_empty()).count(),
            12 * 30 + 1
        );
    }

    #[test]
    fn the_csv_imports_into_the_register_as_the_same_rows_load_writes() {
        let spec = Spec {
            units: 6,
            checks: 25,
            samples: 3,
        };
        let mut full = Store::open_in_memory().unwrap();
        let n = load(&mut full, &spec, false).unwrap();
        assert_eq!((n.units, n.checks, n.samples), (6, 150, 18));
        assert!(n.events >= 6, "every unit starts with a fluid change");

        let mut reg = Store::open_in_memory().unwrap();
        let r = load(&mut reg, &spec, true).unwrap();
        assert_eq!((r.units, r.checks, r.samples, r.events), (6, 0, 0, 0));
        let (mut checks, mut samples) = (Vec::new(), Vec::new());
        write_csv(&spec, &mut checks, &mut samples).unwrap();
        let ci = super::super::csv_in::import_reader(
            &mut reg,
            FileKind::Checks,
            "checks.csv",
            &checks[..],
            None,
        )
        .unwrap();
        let si = super::super::csv_in::import_reader(
            &mut reg,
            FileKind::Samples,
            "samples.csv",
            &samples[..],
            None,
        )
        .unwrap();
        assert_eq!((ci.inserted, si.inserted), (150, 18));

        for kind in [FileKind::Checks, FileKind::Samples] {
            let (mut a, mut b) = (Vec::new(), Vec::new());
            csv_out::export(&full, kind, &mut a, UnitSystem::Metric).unwrap();
            csv_out::export(&reg, kind, &mut b, UnitSystem::Metric).unwrap();
            assert_eq!(
                String::from_utf8(a).unwrap(),
                String::from_utf8(b).unwrap(),
                "{kind}"
            );
        }
    }

    #[test]
    fn samples_fall_in_the_last_weeks_evenly() {
        let spec = Spec {
            units: 1,
            checks: 520,
            samples: 52,
        };
        let weeks: Vec<usize> = (0..spec.checks).filter(|&w| spec.has_sample(w)).collect();
        assert_eq!(weeks.len(), 52);
        assert_eq!(*weeks.last().unwrap(), 519);
        assert!(weeks.windows(2).all(|w| w[1] - w[0] == 10));
        assert_eq!(
            Spec {
                units: 1,
                checks: 10,
                samples: 0
            }
            .sample_every(),
            None
        );
    }

    #[test]
    fn bad_sizes_are_refused() {
        assert!(Spec {
            units: 0,
            checks: 1,
            samples: 0
        }
        .validate()
        .is_err());
        assert!(Spec {
            units: 1,
            checks: 10,
            samples: 11
        }
        .validate()
        .is_err());
        assert!(Spec {
            units: 1,
            checks: MAX_CHECKS + 1,
            samples: 0
        }
        .validate()
        .is_err());
        assert!(Spec {
            units: 1000,
            checks: 520,
            samples: 52
        }
        .validate()
        .is_ok());
    }
}
