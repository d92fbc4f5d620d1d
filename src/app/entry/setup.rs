//! Setup: the shop's settings, the machines, units and fluids as editable records, and the
//! limits of a unit or the shop, each judged before it is saved. It must not know slint or SQL.

use super::*;

use crate::app::shop::Shop;
use crate::app::status::store_error;
use crate::app::work::{self as work, LimitScale};
use crate::app::AppError;
use crate::model::{
    Fluid, Id, Machine, PumpKind, SensitiveComponent, Settings, StrokeDirection, TimedStroke, Unit,
};
use crate::quantity::Kind;
use crate::store::{Store, StoreError};
use crate::units::{Flow, Length, Pressure, UnitSystem, Viscosity, Volume};

/// The shop's settings.
pub fn shop_settings(shop: &Shop) -> Result<Settings, AppError> {
    settings(shop.store())
}

/// A time zone must be one the time-zone database knows (IANA names such as
/// `America/New_York`; `UTC` too), so that times can be read and shown in it.
pub fn check_time_zone(zone: &str) -> Result<(), AppError> {
    crate::app::local_time::Zone::named(zone)
        .map(|_| ())
        .map_err(|e| AppError::BadInput(e.to_string()))
}

/// The time-zone names a shop can choose that hold every word of `filter`, in any case, a
/// space standing for `_` or `/` (`new york` finds `America/New_York`); all of them when the
/// filter is blank.
pub fn zone_choices(filter: &str) -> Vec<&'static str> {
    let words: Vec<String> = filter.split_whitespace().map(str::to_lowercase).collect();
    crate::app::local_time::Zone::choices()
        .into_iter()
        .filter(|name| {
            let spaced = name.to_lowercase().replace(['_', '/'], " ");
            words
                .iter()
                .all(|w| spaced.contains(w.as_str()) || name.to_lowercase().contains(w.as_str()))
        })
        .collect()
}

/// Highest electricity price per kWh a shop may set (the store refuses more; `bounds`).
pub const MAX_PRICE_PER_KWH: f64 = crate::bounds::ELECTRICITY_PRICE.hi;

/// Reads an electricity price per kWh as typed: a plain number from 0 to
/// [`MAX_PRICE_PER_KWH`]; blank or `none` is no price.
pub fn read_price(text: &str) -> Result<Option<f64>, String> {
    let t = text.trim();
    if t.is_empty() || t.eq_ignore_ascii_case("none") {
        return Ok(None);
    }
    match t.parse::<f64>() {
        Ok(p) if p.is_finite() && crate::bounds::ELECTRICITY_PRICE.holds(p) => Ok(Some(p)),
        Ok(_) => Err(format!(
            "`{t}` is not a price per kWh from 0 to {MAX_PRICE_PER_KWH}"
        )),
        Err(_) => Err(format!(
            "`{t}` is not a number; give the price of one kWh, e.g. 0.18"
        )),
    }
}

/// Changes the shop's name, unit system and time zone. A blank reason is filled in with what
/// changed.
pub fn save_settings(shop: &Shop, new: &Settings, by: &str, reason: &str) -> Result<(), AppError> {
    let by = need("Changed by", by)?;
    if new.shop_name.trim().is_empty() {
        return Err(AppError::BadInput("the shop needs a name".into()));
    }
    check_time_zone(&new.time_zone)?;
    if let Some(p) = new.electricity_price {
        read_price(&p.to_string()).map_err(AppError::BadInput)?;
    }
    let store = shop.store();
    let old = settings(store)?;
    if &old == new {
        return Ok(());
    }
    let reason = if reason.trim().is_empty() {
        let mut what = Vec::new();
        if old.shop_name != new.shop_name {
            what.push("shop name");
        }
        if old.unit_system != new.unit_system {
            what.push("unit system");
        }
        if old.time_zone != new.time_zone {
            what.push("time zone");
        }
        if old.electricity_price != new.electricity_price {
            what.push("electricity price");
        }
        format!("changed {} in setup", what.join(", "))
    } else {
        reason.trim().to_string()
    };
    store.set_settings(new, &by, &reason).map_err(store_error)
}

/// Which kind of setup record.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Record {
    Machine,
    Unit,
    Fluid,
}

/// The records of one kind: id and the line shown in the list.
pub fn records(shop: &Shop, kind: Record) -> Result<Vec<(Id, String)>, AppError> {
    let store = shop.store();
    Ok(match kind {
        Record::Machine => store
            .machines()
            .map_err(store_error)?
            .into_iter()
            .map(|m| {
                (
                    m.id,
                    format!(
                        "{} {}{}",
                        m.tag,
                        m.name,
                        if m.archived { " (archived)" } else { "" }
                    ),
                )
            })
            .collect(),
        Record::Unit => {
            let machines = store.machines().map_err(store_error)?;
            store
                .units()
                .map_err(store_error)?
                .into_iter()
                .map(|u| {
                    let m = machines
                        .iter()
                        .find(|m| m.id == u.machine_id)
                        .map(|m| m.tag.as_str())
                        .unwrap_or("?");
                    (
                        u.id,
                        format!(
                            "{} on {}{}",
                            u.tag,
                            m,
                            if u.archived { " (archived)" } else { "" }
                        ),
                    )
                })
                .collect()
        }
        Record::Fluid => store
            .fluids()
            .map_err(store_error)?
            .into_iter()
            .map(|f| {
                (
                    f.id,
                    format!(
                        "{}{}",
                        f.name,
                        f.iso_vg.map(|v| format!(" (VG {v})")).unwrap_or_default()
                    ),
                )
            })
            .collect(),
    })
}

const NO_FLUID: &str = "(none)";
const YES_NO: [&str; 2] = ["no", "yes"];

/// The fields of a setup record (`id` `None`: a new one), filled with its values.
pub fn record_fields(shop: &Shop, kind: Record, id: Option<Id>) -> Result<Vec<Field>, AppError> {
    let store = shop.store();
    match kind {
        Record::Machine => machine_fields(store, id),
        Record::Unit => unit_fields(store, id, settings(store)?.unit_system),
        Record::Fluid => fluid_fields(store, id),
    }
}

/// A record read from the store, or what a form shows where the store no longer holds it.
fn stored<T>(found: Result<Option<T>, StoreError>) -> Result<T, AppError> {
    found
        .map_err(store_error)?
        .ok_or_else(|| AppError::BadInput("that record is no longer stored".to_string()))
}

/// A machine's fields; a new one is a press at the end of the route.
fn machine_fields(store: &Store, id: Option<Id>) -> Result<Vec<Field>, AppError> {
    let m = match id {
        Some(id) => stored(store.machine(id))?,
        None => Machine {
            id: 0,
            tag: String::new(),
            name: String::new(),
            kind: "press".into(),
            route_order: store
                .machines()
                .map_err(store_error)?
                .iter()
                .map(|m| m.route_order)
                .max()
                .unwrap_or(0)
                + 10,
            notes: String::new(),
            archived: false,
        },
    };
    let fields = vec![
        Field::text("tag", "Tag")
            .with_value(m.tag)
            .with_placeholder("e.g. PR-07"),
        Field::text("name", "Name").with_value(m.name),
        Field::text("kind", "Kind")
            .with_value(m.kind)
            .with_hint("press, press brake, …"),
        Field::text("route_order", "Route order").with_value(m.route_order.to_string()),
        Field::text("notes", "Notes").with_value(m.notes),
        Field::choice(
            "archived",
            "Archived",
            &YES_NO,
            YES_NO[usize::from(m.archived)],
        ),
    ];
    Ok(fields)
}

/// A unit's fields, quantities in the shop's unit system; a new one is on the first machine,
/// at the end of the route.
fn unit_fields(store: &Store, id: Option<Id>, system: UnitSystem) -> Result<Vec<Field>, AppError> {
    let machines = store.machines().map_err(store_error)?;
    let fluids = store.fluids().map_err(store_error)?;
    let u = match id {
        Some(id) => stored(store.unit(id))?,
        None => Unit {
            id: 0,
            machine_id: machines.first().map(|m| m.id).unwrap_or(0),
            tag: String::new(),
            pump_kind: PumpKind::Gear,
            rated_flow: None,
            relief: None,
            reservoir: None,
            sensitive_component: SensitiveComponent::Cylinder,
            fluid_id: None,
            stroke: None,
            route_order: store
                .units()
                .map_err(store_error)?
                .iter()
                .map(|u| u.route_order)
                .max()
                .unwrap_or(0)
                + 10,
            archived: false,
        },
    };
    let machine_tags: Vec<&str> = machines.iter().map(|m| m.tag.as_str()).collect();
    let mtag = machines
        .iter()
        .find(|m| m.id == u.machine_id)
        .map(|m| m.tag.clone())
        .unwrap_or_default();
    let mut fluid_names: Vec<&str> = vec![NO_FLUID];
    fluid_names.extend(fluids.iter().map(|f| f.name.as_str()));
    let fname = u
        .fluid_id
        .and_then(|id| fluids.iter().find(|f| f.id == id))
        .map(|f| f.name.clone())
        .unwrap_or(NO_FLUID.into());
    let pumps: Vec<&str> = PumpKind::ALL.iter().map(|k| pump_words(*k)).collect();
    let comps: Vec<&str> = SensitiveComponent::ALL
        .iter()
        .map(|k| component_words(*k))
        .collect();
    let dirs: Vec<&str> = StrokeDirection::ALL
        .iter()
        .map(|k| direction_words(*k))
        .collect();
    let s = u.stroke;
    let fields =
        vec![
            Field::choice("machine", "Machine", &machine_tags, &mtag),
            Field::text("tag", "Unit tag")
                .with_value(u.tag)
                .with_placeholder("e.g. PR-07-A"),
            Field::choice("pump_kind", "Pump", &pumps, pump_words(u.pump_kind)),
            Field::quantity("rated_flow", "Rated pump flow", Kind::Flow, system)
                .with_value(q_text(Kind::Flow, u.rated_flow.map(|q| q.si()), system)),
            Field::quantity("relief", "Relief setting", Kind::Pressure, system).with_value(q_text(
                Kind::Pressure,
                u.relief.map(|p| p.si()),
                system,
            )),
            Field::quantity("reservoir", "Reservoir volume", Kind::Volume, system)
                .with_value(q_text(Kind::Volume, u.reservoir.map(|v| v.si()), system)),
            Field::choice(
                "sensitive",
                "Most sensitive component",
                &comps,
                component_words(u.sensitive_component),
            ),
            Field::choice("fluid", "Fluid in service", &fluid_names, &fname),
            Field::quantity("bore", "Timed stroke: bore", Kind::Length, system).with_value(q_text(
                Kind::Length,
                s.map(|s| s.bore.si()),
                system,
            )),
            Field::quantity("rod", "Timed stroke: rod", Kind::Length, system)
                .with_value(q_text(
                    Kind::Length,
                    s.and_then(|s| s.rod).map(|r| r.si()),
                    system,
                ))
                .with_hint("needed to retract"),
            Field::quantity("length", "Timed stroke: length", Kind::Length, system)
                .with_value(q_text(Kind::Length, s.map(|s| s.length.si()), system)),
            Field::choice(
                "direction",
                "Timed stroke: direction",
                &dirs,
                direction_words(s.map(|s| s.direction).unwrap_or(StrokeDirection::Extend)),
            ),
            Field::text("route_order", "Route order").with_value(u.route_order.to_string()),
            Field::choice(
                "archived",
                "Archived",
                &YES_NO,
                YES_NO[usize::from(u.archived)],
            ),
        ];
    Ok(fields)
}

/// A fluid's fields; a new one is a mineral oil.
fn fluid_fields(store: &Store, id: Option<Id>) -> Result<Vec<Field>, AppError> {
    let f = match id {
        Some(id) => stored(store.fluid(id))?,
        None => Fluid {
            id: 0,
            name: String::new(),
            iso_vg: None,
            kv40_new: None,
            kv100_new: None,
            acid_new_mgkoh_g: None,
            base_type: "mineral".into(),
        },
    };
    let cst = |v: Option<Viscosity>| {
        v.map(|v| format!("{}", crate::store::columns::tidy(v.cst())))
            .unwrap_or_default()
    };
    let fields = vec![
        Field::text("name", "Name").with_value(f.name),
        Field::text("iso_vg", "ISO VG")
            .with_value(f.iso_vg.map(|v| v.to_string()).unwrap_or_default())
            .with_hint("e.g. 46"),
        Field::in_unit("kv40", "KV40 of new oil", "cSt").with_value(cst(f.kv40_new)),
        Field::in_unit("kv100", "KV100 of new oil", "cSt").with_value(cst(f.kv100_new)),
        Field::in_unit("acid", "Acid number of new oil", "mg KOH/g")
            .with_value(n_text(f.acid_new_mgkoh_g)),
        Field::text("base_type", "Base type")
            .with_value(f.base_type)
            .with_hint("mineral, ester, …"),
    ];
    Ok(fields)
}

/// What a pump kind is called on a form (its stored name is a code).
fn pump_words(k: PumpKind) -> &'static str {
    match k {
        PumpKind::Gear => "gear pump",
        PumpKind::Vane => "vane pump",
        PumpKind::PistonFixed => "fixed piston pump",
        PumpKind::PistonVariable => "variable piston pump",
    }
}

/// What a component is called on a form.
fn component_words(c: SensitiveComponent) -> &'static str {
    match c {
        SensitiveComponent::ServoValve => "servo valve",
        SensitiveComponent::ProportionalValve => "proportional valve",
        SensitiveComponent::PistonPumpVariable => "variable piston pump",
        SensitiveComponent::PistonPumpFixed => "fixed piston pump",
        SensitiveComponent::VanePump => "vane pump",
        SensitiveComponent::GearPump => "gear pump",
        SensitiveComponent::Cylinder => "cylinder",
    }
}

/// What a stroke direction is called on a form.
fn direction_words(d: StrokeDirection) -> &'static str {
    match d {
        StrokeDirection::Extend => "extend (rod going out)",
        StrokeDirection::Retract => "retract (rod coming in)",
    }
}

/// The choice a form field shows as words (`pump_words`, …), read back: the value whose words
/// were chosen, or the stored name typed as it is.
fn choice_of<T: Copy + std::str::FromStr<Err = String>>(
    key: &str,
    e: &Entered,
    all: &[T],
    words: fn(T) -> &'static str,
    p: &mut Vec<Problem>,
) -> Option<T> {
    let text = e.get(key);
    if let Some(v) = all.iter().copied().find(|v| words(*v) == text) {
        return Some(v);
    }
    match text.parse::<T>() {
        Ok(v) => Some(v),
        Err(_) => {
            let names: Vec<&str> = all.iter().map(|v| words(*v)).collect();
            p.push(Problem::refused(
                key,
                format!("`{text}` is not one of: {}", names.join("; ")),
            ));
            None
        }
    }
}

/// Adds (`id` `None`) or changes a setup record. Changing one needs who and why.
pub fn save_record(
    shop: &Shop,
    kind: Record,
    id: Option<Id>,
    e: &Entered,
    by: &str,
    reason: &str,
) -> Result<SaveOutcome<Id>, AppError> {
    let store = shop.store();
    let mut f = Form {
        e,
        system: settings(store)?.unit_system,
        p: Vec::new(),
    };
    if id.is_some() {
        if by.trim().is_empty() {
            f.p.push(Problem::refused(
                "by",
                "Changed by: give a name or initials",
            ));
        }
        if reason.trim().is_empty() {
            f.p.push(Problem::refused(
                "reason",
                "Reason: say why the record is changed",
            ));
        }
    }
    let (by_t, reason_t) = (by.trim(), reason.trim());
    let id0 = id.unwrap_or(0);
    let result: Result<Id, crate::store::StoreError> = match kind {
        Record::Machine => {
            let m = machine_of(&mut f, id0);
            if !f.p.is_empty() {
                return Ok(SaveOutcome::Refused(f.p));
            }
            match id {
                Some(id) => store.update_machine(&m, by_t, reason_t).map(|_| id),
                None => store.insert_machine(&m),
            }
        }
        Record::Unit => {
            let u = unit_of(&mut f, store, id0)?;
            if !f.p.is_empty() {
                return Ok(SaveOutcome::Refused(f.p));
            }
            match id {
                Some(id) => store.update_unit(&u, by_t, reason_t).map(|_| id),
                None => store.insert_unit(&u),
            }
        }
        Record::Fluid => {
            let fl = fluid_of(&mut f, id0);
            if !f.p.is_empty() {
                return Ok(SaveOutcome::Refused(f.p));
            }
            match id {
                Some(id) => store.update_fluid(&fl, by_t, reason_t).map(|_| id),
                None => store.insert_fluid(&fl),
            }
        }
    };
    match result {
        Ok(id) => Ok(SaveOutcome::Saved(id)),
        Err(e) => match store_error(e) {
            AppError::BadInput(m) => Ok(SaveOutcome::Refused(vec![Problem::refused("", m)])),
            other => Err(other),
        },
    }
}

/// A setup form being read: what was typed, the shop's units, and the problems found so far.
struct Form<'a> {
    e: &'a Entered,
    system: UnitSystem,
    p: Vec<Problem>,
}

impl Form<'_> {
    /// A field that must not be empty.
    fn text(&mut self, key: &str, label: &str) -> String {
        let t = self.e.get(key).to_string();
        if t.is_empty() {
            self.p
                .push(Problem::refused(key, format!("{label} is needed")));
        }
        t
    }

    /// A whole number.
    fn int(&mut self, key: &str) -> i64 {
        match self.e.get(key).parse::<i64>() {
            Ok(v) => v,
            Err(_) => {
                self.p
                    .push(Problem::refused(key, "a whole number, e.g. 10"));
                0
            }
        }
    }

    /// A quantity in the shop's units, SI; more than zero where given.
    fn q(&mut self, key: &str, kind: Kind) -> Option<f64> {
        match read_quantity(self.e.get(key), kind, self.system) {
            Ok(Some(v)) if v <= 0.0 => {
                self.p.push(Problem::refused(key, "must be more than zero"));
                None
            }
            Ok(v) => v,
            Err(m) => {
                self.p.push(Problem::refused(key, m));
                None
            }
        }
    }

    fn archived(&self) -> bool {
        self.e.get("archived") == "yes"
    }
}

/// A machine from its form.
fn machine_of(f: &mut Form, id: Id) -> Machine {
    Machine {
        id,
        tag: f.text("tag", "a tag"),
        name: f.e.get("name").to_string(),
        kind: f.e.get("kind").to_string(),
        route_order: f.int("route_order"),
        notes: f.e.get("notes").to_string(),
        archived: f.archived(),
    }
}

/// A unit from its form: its machine and fluid by name, its timed stroke checked whole.
fn unit_of(f: &mut Form, store: &Store, id: Id) -> Result<Unit, AppError> {
    let machine = store
        .machine_by_tag(f.e.get("machine"))
        .map_err(store_error)?;
    if machine.is_none() {
        f.p.push(Problem::refused(
            "machine",
            "choose the machine the unit belongs to (add machines first)",
        ));
    }
    let fluid_name = f.e.get("fluid");
    let fluid = if fluid_name.is_empty() || fluid_name == NO_FLUID {
        None
    } else {
        match store.fluid_by_name(fluid_name).map_err(store_error)? {
            Some(f) => Some(f.id),
            None => {
                f.p.push(Problem::refused(
                    "fluid",
                    format!("no fluid `{fluid_name}`"),
                ));
                None
            }
        }
    };
    let bore = f.q("bore", Kind::Length);
    let rod = f.q("rod", Kind::Length);
    let length = f.q("length", Kind::Length);
    let direction = choice_of(
        "direction",
        f.e,
        StrokeDirection::ALL,
        direction_words,
        &mut f.p,
    );
    if let (Some(b), Some(r)) = (bore, rod) {
        if r >= b {
            f.p.push(Problem::refused(
                "rod",
                "the rod must be thinner than the bore",
            ));
        }
    }
    if direction == Some(StrokeDirection::Retract) && bore.is_some() && rod.is_none() {
        f.p.push(Problem::refused(
            "rod",
            "a retracting stroke needs the rod diameter (it fills the annulus)",
        ));
    }
    let stroke = match (bore, length) {
        (Some(b), Some(l)) => Some(TimedStroke {
            bore: Length(b),
            rod: rod.map(Length),
            length: Length(l),
            direction: direction.unwrap_or(StrokeDirection::Extend),
        }),
        (None, None) => None,
        _ => {
            f.p.push(Problem::refused(
                "length",
                "give both the bore and the stroke length, or neither",
            ));
            None
        }
    };
    Ok(Unit {
        id,
        machine_id: machine.map(|m| m.id).unwrap_or(0),
        tag: f.text("tag", "a unit tag"),
        pump_kind: choice_of("pump_kind", f.e, PumpKind::ALL, pump_words, &mut f.p)
            .unwrap_or(PumpKind::Gear),
        rated_flow: f.q("rated_flow", Kind::Flow).map(Flow),
        relief: f.q("relief", Kind::Pressure).map(Pressure),
        reservoir: f.q("reservoir", Kind::Volume).map(Volume),
        sensitive_component: choice_of(
            "sensitive",
            f.e,
            SensitiveComponent::ALL,
            component_words,
            &mut f.p,
        )
        .unwrap_or(SensitiveComponent::Cylinder),
        fluid_id: fluid,
        stroke,
        route_order: f.int("route_order"),
        archived: f.archived(),
    })
}

/// A fluid from its form; KV100 below KV40.
fn fluid_of(f: &mut Form, id: Id) -> Fluid {
    let vg = match f.e.get("iso_vg") {
        "" => None,
        t => match t.parse::<u32>() {
            Ok(v) => Some(v),
            Err(_) => {
                f.p.push(Problem::refused(
                    "iso_vg",
                    "a grade is a whole number, e.g. 46",
                ));
                None
            }
        },
    };
    let kv40 = f.q("kv40", Kind::Viscosity);
    let kv100 = f.q("kv100", Kind::Viscosity);
    if let (Some(a), Some(b)) = (kv40, kv100) {
        if b >= a {
            f.p.push(Problem::refused(
                "kv100",
                "KV100 must be below KV40: oil thins as it warms",
            ));
        }
    }
    let acid = match read_number(f.e.get("acid")) {
        Ok(Some(v)) if v < 0.0 => {
            f.p.push(Problem::refused("acid", "cannot be negative"));
            None
        }
        Ok(v) => v,
        Err(m) => {
            f.p.push(Problem::refused("acid", m));
            None
        }
    };
    Fluid {
        id,
        name: f.text("name", "a name"),
        iso_vg: vg,
        kv40_new: kv40.map(Viscosity),
        kv100_new: kv100.map(Viscosity),
        acid_new_mgkoh_g: acid,
        base_type: f.e.get("base_type").to_string(),
    }
}

/// The limits in force for the shop (`unit` `None`) or one unit, with where each comes from.
/// The limits in force, their values and units in the shop's unit system (a US shop sees the
/// temperature limits in °F); [`save_limits`] reads edits the same way.
pub fn limits(shop: &Shop, unit: Option<&str>) -> Result<work::LimitsView, AppError> {
    let system = shop_settings(shop)?.unit_system;
    let mut view = work::limits_in(shop.store(), unit)?;
    for r in &mut view.rows {
        if let Some(scale) = LimitScale::of(&r.unit, system) {
            // Two decimals: 82 °C shows as 179.6 °F, not as its binary expansion.
            let show = |v: f64| ((scale.shown)(v) * 100.0).round() / 100.0;
            r.watch = r.watch.map(show);
            r.act = r.act.map(show);
            r.unit = scale.unit.to_string();
        }
    }
    Ok(view)
}

/// One limit as the setup screen edits it: blank watch and act = inherit.
#[derive(Clone, Debug, PartialEq)]
pub struct LimitEdit {
    pub key: String,
    pub watch: String,
    pub act: String,
}

/// Applies the limits a person changed for the shop (`unit` `None`) or one unit. A row with
/// both values blank removes the stored setting, so the inherited one applies again.
pub fn save_limits(
    shop: &Shop,
    unit: Option<&str>,
    edits: &[LimitEdit],
    by: &str,
) -> Result<SaveOutcome<usize>, AppError> {
    let by = need("Changed by", by)?;
    let store = shop.store();
    let system = shop_settings(shop)?.unit_system;
    let units: std::collections::HashMap<String, String> = work::limits_in(store, unit)?
        .rows
        .into_iter()
        .map(|r| (r.key, r.unit))
        .collect();
    let mut problems = Vec::new();
    let mut parsed = Vec::new();
    for e in edits {
        // Typed in the units the screen showed (`limits`), stored in the limit's own.
        let scale = units.get(&e.key).and_then(|u| LimitScale::of(u, system));
        let to_stored = |v: Option<f64>| match &scale {
            Some(s) => v.map(s.stored),
            None => v,
        };
        let w = read_number(&e.watch).map(to_stored);
        let a = read_number(&e.act).map(to_stored);
        match (w, a) {
            (Ok(w), Ok(a)) => parsed.push((e.key.as_str(), w, a)),
            (Err(m), _) | (_, Err(m)) => problems.push(Problem::refused(&e.key, m)),
        }
    }
    if !problems.is_empty() {
        return Ok(SaveOutcome::Refused(problems));
    }
    // All in one transaction would need the store's; each change is its own kept edit.
    let mut n = 0;
    for (key, w, a) in parsed {
        let r = if w.is_none() && a.is_none() {
            work::reset_limit_in(store, key, unit, &by).map(|_| ())
        } else {
            work::set_limit_in(store, key, w, a, unit, &by).map(|_| ())
        };
        match r {
            Ok(()) => n += 1,
            Err(AppError::BadInput(m)) => problems.push(Problem::refused(key, m)),
            Err(other) => return Err(other),
        }
    }
    if problems.is_empty() {
        Ok(SaveOutcome::Saved(n))
    } else {
        Ok(SaveOutcome::Refused(problems))
    }
}
