//! The detection benchmark's file side (`sim-shop` and `sim-score`, hidden commands used by
//! `benches/detection.sh`).
//!
//! `make_sim_shop` writes a simulated shop (`sim::shop`) as the shop's own CSV files — the
//! records go into a shop in memory and out through the exporter, so the files are what an
//! export of a real shop looks like — with `truth.json` (the planted faults and slips) and
//! `weeks.txt` (the walk-round day of every week, the dates to judge the shop at).
//!
//! `score_sim` reads the truth, the same CSV files through the importer, and the status JSON
//! the real program wrote for every week (`status/DATE.json`), and scores sumpbook and the
//! fixed-limit rule alike (`sim::score`). From the status JSON it relies only on: `units[]`,
//! each with `unit` (the tag) and `flags[]` (or `health.flags[]`), each with `kind` and
//! `state`; a flag whose
//! state is `watch` or `act` counts, any other state (e.g. not judged yet) does not, and the
//! `overdue` kind (planned work that is late, not a judgement of the unit's condition) is left
//! out. No rules and no printing here.

use std::collections::HashMap;
use std::fs::File;
use std::io::{BufReader, BufWriter, Write};
use std::path::{Path, PathBuf};

use chrono::NaiveDate;
use serde::Serialize;

use super::AppError;
use crate::exchange::{csv_in, csv_out, FileKind};
use crate::model::{Id, UnitHistory};
use crate::outfile;
use crate::physics::cleanliness::{code_from_counts, target_for, Iso4406Code};
use crate::sim::score::{
    fixed_rule, score, shared_with_sound, sound_readings, verdicts, Scores, SoundShare, Timeline,
    UnitFacts, UnitReadings, Verdict, WeekFlags, ACT, WATCH,
};
use crate::sim::shop::{simulate, Params, SimShop};
use crate::sim::truth::Truth;
use crate::store::Store;
use crate::units::UnitSystem;

/// What `sim-shop` wrote.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SimShopOutcome {
    pub dir: PathBuf,
    pub set: String,
    pub units: usize,
    pub faulty: usize,
    pub weeks: usize,
    pub checks: u64,
    pub samples: u64,
    pub events: u64,
    pub slips: usize,
}

fn io(path: &Path) -> impl Fn(std::io::Error) -> AppError + '_ {
    move |e| AppError::Failed(format!("{}: {e}", path.display()))
}

/// Puts the simulated records into `store` (an empty shop).
fn load(store: &mut Store, shop: &SimShop) -> Result<(), AppError> {
    let mut bulk = store.bulk()?;
    let mut fluid_ids: HashMap<Id, Id> = HashMap::new();
    for f in &shop.fluids {
        fluid_ids.insert(f.id, bulk.insert_fluid(f)?);
    }
    let mut machine_ids: HashMap<Id, Id> = HashMap::new();
    for m in &shop.machines {
        machine_ids.insert(m.id, bulk.insert_machine(m)?);
    }
    let mut unit_ids: HashMap<Id, Id> = HashMap::new();
    for u in &shop.units {
        let mut u = u.clone();
        u.machine_id = machine_ids
            .get(&u.machine_id)
            .copied()
            .unwrap_or(u.machine_id);
        u.fluid_id = u.fluid_id.and_then(|f| fluid_ids.get(&f).copied());
        unit_ids.insert(u.id, bulk.insert_unit(&u)?);
    }
    let uid = |id: Id| unit_ids.get(&id).copied().unwrap_or(id);
    for e in &shop.events {
        let mut e = e.clone();
        e.unit_id = uid(e.unit_id);
        e.fluid_id = e.fluid_id.and_then(|f| fluid_ids.get(&f).copied());
        bulk.put_event(&e)?;
    }
    for c in &shop.checks {
        let mut c = c.clone();
        c.unit_id = uid(c.unit_id);
        bulk.put_check(&c)?;
    }
    for s in &shop.samples {
        let mut s = s.clone();
        s.unit_id = uid(s.unit_id);
        bulk.put_sample(&s)?;
    }
    bulk.commit()?;
    Ok(())
}

/// Writes the simulated shop of `params` into `dir` (created if missing): `units.csv`,
/// `events.csv`, `checks.csv`, `samples.csv`, `truth.json`, `weeks.txt`, each written whole
/// (`outfile`); files already there are replaced only with `replace`.
pub fn make_sim_shop(
    dir: &Path,
    params: &Params,
    replace: bool,
) -> Result<SimShopOutcome, AppError> {
    let shop = simulate(params).map_err(AppError::BadInput)?;
    let mut store = Store::open_in_memory()?;
    store.set_settings(
        &shop.settings,
        "sumpbook sim-shop",
        "simulated benchmark shop",
    )?;
    load(&mut store, &shop)?;
    std::fs::create_dir_all(dir).map_err(io(dir))?;
    let opts = outfile::Options {
        replace,
        devices_in_place: false,
        can_force: true,
    };
    if !replace {
        // Refuse before writing anything, rather than leave half a shop behind.
        let names = FileKind::ALL
            .iter()
            .map(|k| k.file_name())
            .chain(["truth.json", "weeks.txt"]);
        for name in names {
            let path = dir.join(name);
            if outfile::is_taken(&path) {
                return Err(outfile::OutFileError::Exists {
                    path,
                    can_force: true,
                }
                .into());
            }
        }
    }
    for kind in FileKind::ALL {
        let path = dir.join(kind.file_name());
        let mut out = outfile::OutFile::create(&path, opts)?;
        {
            let mut w = BufWriter::new(&mut out);
            csv_out::export(&store, kind, &mut w, UnitSystem::Metric)?;
            w.flush().map_err(io(&path))?;
        }
        out.commit()?;
    }
    let text = serde_json::to_string_pretty(&shop.truth)
        .map_err(|e| AppError::Failed(format!("truth: {e}")))?;
    outfile::write_whole(&dir.join("truth.json"), text.as_bytes(), opts)?;
    let weeks: String = shop.truth.weeks.iter().map(|d| format!("{d}\n")).collect();
    outfile::write_whole(&dir.join("weeks.txt"), weeks.as_bytes(), opts)?;
    Ok(SimShopOutcome {
        dir: dir.to_path_buf(),
        set: params.set.clone(),
        units: shop.units.len(),
        faulty: shop.truth.units.iter().filter(|u| !u.healthy).count(),
        weeks: params.weeks,
        checks: shop.checks.len() as u64,
        samples: shop.samples.len() as u64,
        events: shop.events.len() as u64,
        slips: shop.truth.slips.len(),
    })
}

/// The benchmark's figures for one shop.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SimReport {
    pub set: String,
    pub weeks: usize,
    pub units: usize,
    pub slips: usize,
    pub sumpbook: Scores,
    pub fixed: Scores,
    /// The targets, judged on sumpbook against the fixed rule.
    pub verdicts: Vec<Verdict>,
    /// The fixed rule's first acts on faults seen at the check that it raises on the same
    /// unit without its fault too (for reading its delays; no target rests on it).
    pub fixed_shared_with_sound: Vec<SoundShare>,
    /// Healthy unit-weeks with an `overdue` flag at act (late planned work), left out of the
    /// scores.
    pub overdue_act_weeks: usize,
}

/// The week a reading dated `d` is first known in: the first walk-round day on or after it.
fn week_of(weeks: &[NaiveDate], d: NaiveDate) -> Option<usize> {
    let w = weeks.partition_point(|&wd| wd < d);
    (w < weeks.len()).then_some(w)
}

fn readings(h: &UnitHistory, weeks: &[NaiveDate]) -> UnitReadings {
    let checks = h
        .checks
        .iter()
        .filter_map(|c| {
            Some((
                week_of(weeks, c.taken_at.date_naive())?,
                c.stroke_time.map(|s| s.0),
                c.reservoir_temp.map(|t| t.c()),
            ))
        })
        .collect();
    let samples = h
        .samples
        .iter()
        .filter_map(|s| {
            let code: Option<Iso4406Code> = match s.counts_per_ml {
                [Some(a), Some(b), Some(c)] => code_from_counts([a, b, c], None).ok(),
                _ => s.iso4406.as_deref().and_then(|t| t.parse().ok()),
            };
            Some((
                week_of(weeks, s.sampled_at.date_naive())?,
                s.water_ppm,
                s.kv40.map(|v| v.cst()),
                code,
            ))
        })
        .collect();
    UnitReadings {
        checks,
        samples,
        kv40_new: h.fluid.as_ref().and_then(|f| f.kv40_new).map(|v| v.cst()),
        target: Some(target_for(h.unit.sensitive_component, h.unit.relief)),
    }
}

/// A unit's flags in `status --json`: `flags` beside the unit's tag (or under `health`).
fn flags_array(u: &serde_json::Value) -> Option<&Vec<serde_json::Value>> {
    u.get("flags")
        .or_else(|| u.get("health").and_then(|h| h.get("flags")))
        .and_then(|f| f.as_array())
}

/// The flags of every unit in one `status --json` output: tag → the unit's week.
fn flags_of(json: &serde_json::Value) -> HashMap<String, WeekFlags> {
    let mut out = HashMap::new();
    let Some(units) = json.get("units").and_then(|u| u.as_array()) else {
        return out;
    };
    for u in units {
        let Some(tag) = u.get("unit").and_then(|t| t.as_str()) else {
            continue;
        };
        let mut wf = WeekFlags::default();
        let flags = flags_array(u);
        for f in flags.into_iter().flatten() {
            let kind = f.get("kind").and_then(|k| k.as_str()).unwrap_or("");
            if kind == "overdue" {
                continue;
            }
            match f.get("state").and_then(|s| s.as_str()) {
                Some("act") => {
                    wf.level = ACT;
                    wf.act_kinds.push(kind.to_string());
                }
                Some("watch") => {
                    wf.level = wf.level.max(WATCH);
                    wf.watch_kinds.push(kind.to_string());
                }
                _ => {}
            }
        }
        out.insert(tag.to_string(), wf);
    }
    out
}

fn overdue_acts(json: &serde_json::Value, healthy: &[&str]) -> usize {
    json.get("units")
        .and_then(|u| u.as_array())
        .into_iter()
        .flatten()
        .filter(|u| {
            u.get("unit")
                .and_then(|t| t.as_str())
                .is_some_and(|t| healthy.contains(&t))
        })
        .filter(|u| {
            flags_array(u).into_iter().flatten().any(|f| {
                f.get("kind").and_then(|k| k.as_str()) == Some("overdue")
                    && f.get("state").and_then(|s| s.as_str()) == Some("act")
            })
        })
        .count()
}

/// Scores the shop in `dir` (as `make_sim_shop` wrote it, with `status/DATE.json` for every
/// date of `weeks.txt`).
pub fn score_sim(dir: &Path) -> Result<SimReport, AppError> {
    let path = dir.join("truth.json");
    let file = File::open(&path).map_err(io(&path))?;
    let truth: Truth = serde_json::from_reader(BufReader::new(file))
        .map_err(|e| AppError::BadInput(format!("{}: {e}", path.display())))?;
    let mut store = Store::open_in_memory()?;
    for kind in FileKind::ALL {
        csv_in::import_file(&mut store, kind, &dir.join(kind.file_name()), false)?;
    }
    let histories = store.unit_histories(None)?;
    let by_tag: HashMap<&str, &UnitHistory> =
        histories.iter().map(|h| (h.unit.tag.as_str(), h)).collect();
    let weeks = &truth.weeks;
    let n = weeks.len();
    let mut engine: Vec<Timeline> = vec![vec![WeekFlags::default(); n]; truth.units.len()];
    let index: HashMap<&str, usize> = truth
        .units
        .iter()
        .enumerate()
        .map(|(i, u)| (u.unit.as_str(), i))
        .collect();
    let healthy: Vec<&str> = truth
        .units
        .iter()
        .filter(|u| u.healthy)
        .map(|u| u.unit.as_str())
        .collect();
    let mut overdue_act_weeks = 0;
    for (w, d) in weeks.iter().enumerate() {
        let path = dir.join("status").join(format!("{d}.json"));
        let file = File::open(&path).map_err(io(&path))?;
        let json: serde_json::Value = serde_json::from_reader(BufReader::new(file))
            .map_err(|e| AppError::BadInput(format!("{}: {e}", path.display())))?;
        overdue_act_weeks += overdue_acts(&json, &healthy);
        for (tag, wf) in flags_of(&json) {
            if let Some(&i) = index.get(tag.as_str()) {
                engine[i][w] = wf;
            }
        }
    }
    let mut facts = Vec::new();
    let mut fixed = Vec::new();
    let mut fixed_sound = Vec::new();
    for u in &truth.units {
        let h = by_tag.get(u.unit.as_str()).ok_or_else(|| {
            AppError::BadInput(format!(
                "{}: unit {} is not in the CSV files",
                dir.display(),
                u.unit
            ))
        })?;
        let r = readings(h, weeks);
        let mut checked = vec![false; n];
        for c in &r.checks {
            checked[c.0] = true;
        }
        fixed.push(fixed_rule(&r, n));
        fixed_sound.push(
            u.fault
                .as_ref()
                .filter(|f| !f.twin.is_empty())
                .map(|f| fixed_rule(&sound_readings(&r, &f.twin), n)),
        );
        facts.push(UnitFacts { truth: u, checked });
    }
    let sumpbook = score("sumpbook", &truth, &facts, &engine);
    let fixed_scores = score("fixed limits", &truth, &facts, &fixed);
    let units: Vec<_> = truth.units.iter().collect();
    let fixed_shared_with_sound =
        shared_with_sound(&units, &fixed_scores.detections, &fixed, &fixed_sound);
    let fixed = fixed_scores;
    let verdicts = verdicts(&sumpbook, &fixed);
    Ok(SimReport {
        set: truth.set.clone(),
        weeks: n,
        units: truth.units.len(),
        slips: truth.slips.len(),
        sumpbook,
        fixed,
        verdicts,
        fixed_shared_with_sound,
        overdue_act_weeks,
    })
}
