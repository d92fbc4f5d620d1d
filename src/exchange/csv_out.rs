//! CSV export of the unit register, checks, samples and events, in metric or US units.
//!
//! Writes the same columns the importer reads, so an export imports into a new shop with every
//! value intact: metric numbers are the stored column values, US numbers the shortest ones that
//! convert back to exactly those (see `store::columns`), written with Rust's shortest round-trip
//! float formatting. Text cells a spreadsheet would run as formulas get a leading `'`. Rows are
//! streamed from the store one at a time. No SQL here.

use std::collections::HashMap;
use std::io::Write;

use super::{escape_cell, ExchangeError, FileKind};
use crate::model::{Check, Confirmation, Event, EventDetails, Fluid, Id, Machine, Sample, Unit};
use crate::store::{columns, fmt_time_stamp, Store, StoreError};
use crate::units::UnitSystem;

/// The columns that say who confirmed a questioned reading and when. An export of checks or
/// samples carries them only when the shop holds a confirmed reading of that kind, so a shop
/// without any exports the same columns as before readings could be confirmed.
pub const CONFIRMATION_COLS: [&str; 2] = ["confirmed_by", "confirmed_at"];

/// The header of an export of `kind` in `system`, with the confirmation columns when
/// `confirmations` (checks and samples only).
pub fn header_with(kind: FileKind, system: UnitSystem, confirmations: bool) -> Vec<&'static str> {
    let mut h = header(kind, system);
    if confirmations && matches!(kind, FileKind::Checks | FileKind::Samples) {
        h.extend(CONFIRMATION_COLS);
    }
    h
}

/// The header of an export of `kind` in `system`, without the confirmation columns.
pub fn header(kind: FileKind, system: UnitSystem) -> Vec<&'static str> {
    let us = system == UnitSystem::Us;
    let pick = |metric: &'static str, us_name: &'static str| if us { us_name } else { metric };
    match kind {
        FileKind::Units => vec![
            "machine_tag",
            "machine_name",
            "machine_kind",
            "route_order",
            "unit_tag",
            "pump_kind",
            pick("rated_flow_lpm", "rated_flow_gpm"),
            pick("relief_bar", "relief_psi"),
            pick("reservoir_l", "reservoir_gal"),
            pick("bore_mm", "bore_in"),
            pick("rod_mm", "rod_in"),
            pick("stroke_mm", "stroke_in"),
            "timed_direction",
            "sensitive_component",
            "fluid_name",
            "fluid_vg",
            "fluid_kv40_cst",
            "fluid_kv100_cst",
        ],
        FileKind::Checks => vec![
            "unit_tag",
            "taken_at",
            pick("reservoir_temp_c", "reservoir_temp_f"),
            pick("ambient_temp_c", "ambient_temp_f"),
            pick("pressure_bar", "pressure_psi"),
            "stroke_time_s",
            "cycle_time_s",
            "oil_level",
            "filter",
            "hours",
            pick("case_drain_lpm", "case_drain_gpm"),
            "by",
            "note",
        ],
        FileKind::Samples => vec![
            "unit_tag",
            "sampled_at",
            "kv40_cst",
            "kv100_cst",
            "visc_cst",
            pick("visc_temp_c", "visc_temp_f"),
            "count_4um_per_ml",
            "count_6um_per_ml",
            "count_14um_per_ml",
            "iso4406",
            "water_ppm",
            "acid_mgkoh_g",
            "lab_ref",
            "note",
        ],
        FileKind::Events => {
            vec![
                "unit_tag",
                "done_at",
                "kind",
                pick("volume_l", "volume_gal"),
                "fluid_name",
                "fluid_vg",
                "fluid_kv40_cst",
                "fluid_kv100_cst",
                "by",
                "note",
                "hours",
                "filter_part",
                "work_order",
            ]
        }
    }
}

fn num(v: Option<f64>) -> String {
    v.map(|x| x.to_string()).unwrap_or_default()
}

fn text(s: &str) -> String {
    escape_cell(s).into_owned()
}

/// Writes every row of `kind` as CSV to `out`; returns the number of data rows.
pub fn export(
    store: &Store,
    kind: FileKind,
    out: &mut dyn Write,
    system: UnitSystem,
) -> Result<u64, ExchangeError> {
    let mut w = csv::WriterBuilder::new()
        .terminator(csv::Terminator::CRLF)
        .from_writer(out);
    let werr = |e: csv::Error| ExchangeError::Write(io_error(e));
    let confirmations = match kind {
        FileKind::Checks => store.any_confirmed_check()?,
        FileKind::Samples => store.any_confirmed_sample()?,
        FileKind::Units | FileKind::Events => false,
    };
    w.write_record(header_with(kind, system, confirmations))
        .map_err(werr)?;
    let confirmation = |k: &Option<Confirmation>| -> [String; 2] {
        match k {
            Some(k) => [text(&k.by), fmt_time_stamp(&k.at)],
            None => [String::new(), String::new()],
        }
    };
    let us = system == UnitSystem::Us;
    let units: HashMap<Id, Unit> = store.units()?.into_iter().map(|u| (u.id, u)).collect();
    let fluids: HashMap<Id, Fluid> = store.fluids()?.into_iter().map(|f| (f.id, f)).collect();
    let tag = |id: Id| -> Result<String, ExchangeError> {
        units.get(&id).map(|u| text(&u.tag)).ok_or_else(|| {
            ExchangeError::Store(StoreError::Corrupt(format!(
                "row refers to unit {id}, which is missing"
            )))
        })
    };
    let fluid_name = |id: Option<Id>| {
        id.and_then(|f| fluids.get(&f))
            .map(|f| text(&f.name))
            .unwrap_or_default()
    };
    let fluid_vg = |id: Option<Id>| {
        id.and_then(|f| fluids.get(&f)?.iso_vg)
            .map(|v| v.to_string())
            .unwrap_or_default()
    };
    let temp = |t: Option<crate::units::Temperature>| {
        num(t.map(if us { columns::temp_f } else { columns::temp_c }))
    };
    let pressure = |p: Option<crate::units::Pressure>| {
        num(p.map(if us { columns::psi } else { columns::bar }))
    };
    let flow =
        |q: Option<crate::units::Flow>| num(q.map(if us { columns::gpm } else { columns::lpm }));
    let volume = |v: Option<crate::units::Volume>| {
        num(v.map(if us { columns::gal } else { columns::litres }))
    };
    let length = |l: Option<crate::units::Length>| {
        num(l.map(if us { columns::inches } else { columns::mm }))
    };
    let cst = |v: Option<crate::units::Viscosity>| num(v.map(columns::cst));
    let mut rows = 0u64;
    match kind {
        FileKind::Units => {
            let machines: HashMap<Id, Machine> =
                store.machines()?.into_iter().map(|m| (m.id, m)).collect();
            for u in store.units()? {
                let m = machines.get(&u.machine_id).ok_or_else(|| {
                    ExchangeError::Store(StoreError::Corrupt(format!(
                        "unit {} has no machine",
                        u.tag
                    )))
                })?;
                let f = u.fluid_id.and_then(|id| fluids.get(&id));
                let s = u.stroke;
                w.write_record([
                    text(&m.tag),
                    text(&m.name),
                    text(&m.kind),
                    u.route_order.to_string(),
                    text(&u.tag),
                    u.pump_kind.to_string(),
                    flow(u.rated_flow),
                    pressure(u.relief),
                    volume(u.reservoir),
                    length(s.map(|s| s.bore)),
                    length(s.and_then(|s| s.rod)),
                    length(s.map(|s| s.length)),
                    s.map(|s| s.direction.to_string()).unwrap_or_default(),
                    u.sensitive_component.to_string(),
                    f.map(|f| text(&f.name)).unwrap_or_default(),
                    fluid_vg(u.fluid_id),
                    cst(f.and_then(|f| f.kv40_new)),
                    cst(f.and_then(|f| f.kv100_new)),
                ])
                .map_err(werr)?;
                rows += 1;
            }
        }
        FileKind::Checks => {
            store.each_check(|c: Check| -> Result<(), ExchangeError> {
                let mut cells = vec![
                    tag(c.unit_id)?,
                    fmt_time_stamp(&c.taken_at),
                    temp(c.reservoir_temp),
                    temp(c.ambient_temp),
                    pressure(c.pressure),
                    num(c.stroke_time.map(columns::secs)),
                    num(c.cycle_time.map(columns::secs)),
                    c.oil_level.map(|v| v.to_string()).unwrap_or_default(),
                    c.filter.map(|v| v.to_string()).unwrap_or_default(),
                    num(c.hours.map(columns::tidy)),
                    flow(c.case_drain),
                    text(&c.by),
                    text(&c.note),
                ];
                if confirmations {
                    cells.extend(confirmation(&c.confirmed));
                }
                w.write_record(&cells).map_err(werr)?;
                rows += 1;
                Ok(())
            })?;
        }
        FileKind::Samples => {
            store.each_sample(|s: Sample| -> Result<(), ExchangeError> {
                let mut cells = vec![
                    tag(s.unit_id)?,
                    fmt_time_stamp(&s.sampled_at),
                    cst(s.kv40),
                    cst(s.kv100),
                    cst(s.visc_reading.map(|v| v.visc)),
                    temp(s.visc_reading.map(|v| v.at)),
                    num(s.counts_per_ml[0].map(columns::tidy)),
                    num(s.counts_per_ml[1].map(columns::tidy)),
                    num(s.counts_per_ml[2].map(columns::tidy)),
                    s.iso4406.as_deref().map(text).unwrap_or_default(),
                    num(s.water_ppm.map(columns::tidy)),
                    num(s.acid_mgkoh_g.map(columns::tidy)),
                    text(&s.lab_ref),
                    text(&s.note),
                ];
                if confirmations {
                    cells.extend(confirmation(&s.confirmed));
                }
                w.write_record(&cells).map_err(werr)?;
                rows += 1;
                Ok(())
            })?;
        }
        FileKind::Events => {
            store.each_event(|e: Event, d: EventDetails| -> Result<(), ExchangeError> {
                w.write_record([
                    tag(e.unit_id)?,
                    fmt_time_stamp(&e.done_at),
                    e.kind.to_string(),
                    volume(e.volume),
                    fluid_name(e.fluid_id),
                    // The fluid's own data beside its name, so that the file adds a fluid no
                    // unit has in service any more to a shop that lacks it.
                    fluid_vg(e.fluid_id),
                    cst(e.fluid_id.and_then(|id| fluids.get(&id)?.kv40_new)),
                    cst(e.fluid_id.and_then(|id| fluids.get(&id)?.kv100_new)),
                    text(&e.by),
                    text(&e.note),
                    num(d.hours.map(columns::tidy)),
                    text(&d.filter_part),
                    text(&d.work_order),
                ])
                .map_err(werr)?;
                rows += 1;
                Ok(())
            })?;
        }
    }
    w.flush().map_err(ExchangeError::Write)?;
    Ok(rows)
}

/// The I/O error under a CSV writer's error, so that its kind (a closed pipe, a full disk)
/// reaches the caller; any other CSV error as an I/O error of its own.
fn io_error(e: csv::Error) -> std::io::Error {
    if !e.is_io_error() {
        return e.into();
    }
    match e.into_kind() {
        csv::ErrorKind::Io(io) => io,
        other => std::io::Error::other(format!("{other:?}")),
    }
}
