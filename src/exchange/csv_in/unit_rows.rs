//! Unit register rows: a machine, its unit and the unit's fluid from one row of the register,
//! written or refused when they differ from the stored ones. No SQL here; the store does that.

use super::*;
use crate::bounds;

use crate::exchange::{ExchangeError, ImportSummary};
use crate::model::{
    Fluid, Id, Machine, PumpKind, SensitiveComponent, StrokeDirection, TimedStroke, Unit,
};
use crate::physics::viscosity::ISO_VG_GRADES;
use crate::store::columns::{self};
use crate::store::Bulk;
use crate::units::{Flow, Length, Pressure, Viscosity, Volume};

impl Importer {
    pub(super) fn unit_row(
        &self,
        bulk: &mut Bulk<'_>,
        row: &mut RowReader<'_>,
        summary: &mut ImportSummary,
    ) -> Result<Option<Outcome>, ExchangeError> {
        let machine_tag = row
            .need(self.slot("machine_tag"), "machine_tag")
            .map(str::to_string);
        let cells = UnitCells {
            machine_name: row.free(self.slot("machine_name")),
            machine_kind: row.free(self.slot("machine_kind")),
            route_order: row.integer(self.slot("route_order")),
            unit_tag: row
                .need(self.slot("unit_tag"), "unit_tag")
                .map(str::to_string),
            pump_kind: row.parsed(self.slot("pump_kind")),
            rated_flow: row.flow(self.slot("rated_flow"), bound(bounds::RATED_FLOW_LPM)),
            relief: row.pressure(self.slot("relief"), bound(bounds::RELIEF_BAR)),
            reservoir: row.volume(self.slot("reservoir"), bound(bounds::RESERVOIR_L)),
            bore: row.length(self.slot("bore"), bound(bounds::STROKE_BORE_MM)),
            rod: row.length(self.slot("rod"), bound(bounds::STROKE_ROD_MM)),
            stroke_len: row.length(self.slot("stroke"), bound(bounds::STROKE_LENGTH_MM)),
            direction: row.parsed(self.slot("timed_direction")),
            component: row.parsed(self.slot("sensitive_component")),
            fluid: self.fluid_cells(row),
        };
        let stroke = self.timed_stroke(row, &cells);
        let (Some(machine_tag), Some(unit_tag)) = (machine_tag, cells.unit_tag.clone()) else {
            return Ok(None);
        };
        if !row.errors.is_empty() {
            return Ok(None);
        }

        // A unit already in the register: the row must agree with it.
        if let Some(existing) = bulk.unit_by_tag(&unit_tag).cloned() {
            let diff = self.unit_diff(bulk, &existing, &machine_tag, &cells);
            return self.existing(row, "unit_tag", "this unit", diff);
        }

        // A new unit: it needs its kind of pump and its most sensitive component.
        let Some(pump_kind) = cells.pump_kind else {
            row.err(
                "pump_kind",
                format!("must be given for a new unit ({})", PumpKind::expected()),
            );
            return Ok(None);
        };
        let Some(component) = cells.component else {
            row.err(
                "sensitive_component",
                format!(
                    "must be given for a new unit ({})",
                    SensitiveComponent::expected()
                ),
            );
            return Ok(None);
        };
        let fluid_id = match self.fluid_of_row(bulk, row, &cells.fluid, summary)? {
            Some(id) => id,
            None => return Ok(None),
        };
        let Some(machine_id) = self.machine_for(bulk, row, machine_tag, &cells, summary)? else {
            return Ok(None);
        };
        let unit = Unit {
            id: 0,
            machine_id,
            tag: unit_tag,
            pump_kind,
            rated_flow: cells.rated_flow,
            relief: cells.relief,
            reservoir: cells.reservoir,
            sensitive_component: component,
            fluid_id,
            stroke,
            route_order: cells.route_order.unwrap_or(0),
            archived: false,
        };
        match bulk.insert_unit(&unit) {
            Ok(_) => Ok(Some(Outcome::Inserted(None))),
            Err(e) => {
                row_store_error(row, e, |f| f.to_string())?;
                Ok(None)
            }
        }
    }

    /// Whether the row has anything in the cell of `field`.
    fn given(&self, row: &RowReader<'_>, field: &str) -> bool {
        self.slot(field).is_some_and(|s| {
            row.rec
                .get(s.pos)
                .is_some_and(|c| !c.trim_ascii().is_empty())
        })
    }

    /// The timed stroke of a register row: bore, length and direction together, the rod for a
    /// retracting one and smaller than the bore; said on the row where that does not hold.
    fn timed_stroke(&self, row: &mut RowReader<'_>, cells: &UnitCells) -> Option<TimedStroke> {
        let any_stroke = self.given(row, "bore")
            || self.given(row, "stroke")
            || self.given(row, "timed_direction");
        if !any_stroke {
            return None;
        }
        let (bore, rod, stroke_len, direction) =
            (cells.bore, cells.rod, cells.stroke_len, cells.direction);
        match (bore, stroke_len, direction) {
            (Some(bore), Some(length), Some(direction)) => {
                if direction == StrokeDirection::Retract && rod.is_none() {
                    row.err("rod_mm", "a retracting timed stroke needs the rod diameter");
                }
                if let Some(r) = rod {
                    if r.0 >= bore.0 {
                        row.err(&self.name("rod"), "must be smaller than the bore");
                    }
                }
                Some(TimedStroke {
                    bore,
                    rod,
                    length,
                    direction,
                })
            }
            _ => {
                let before = row.errors.len();
                for (field, val) in [
                    ("bore", bore.is_some()),
                    ("stroke", stroke_len.is_some()),
                    ("timed_direction", direction.is_some()),
                ] {
                    let stated = row.errors[..before]
                        .iter()
                        .any(|e| e.column == self.name(field));
                    if !val && !stated {
                        let name = match field {
                            "bore" => self.slot("bore").map_or("bore_mm", |s| s.name),
                            "stroke" => self.slot("stroke").map_or("stroke_mm", |s| s.name),
                            _ => "timed_direction",
                        };
                        row.err(name, "the timed stroke needs bore, stroke length and timed_direction together");
                    }
                }
                None
            }
        }
    }

    /// The columns in which a register row differs from the unit already stored (and its
    /// machine and fluid).
    fn unit_diff(
        &self,
        bulk: &Bulk<'_>,
        existing: &Unit,
        machine_tag: &str,
        cells: &UnitCells,
    ) -> Vec<String> {
        let mut diff = Vec::new();
        let machine = bulk.machine_by_id(existing.machine_id).cloned();
        if machine.as_ref().map(|m| m.tag.as_str()) != Some(machine_tag) {
            diff.push(self.name("machine_tag"));
        }
        if let Some(m) = &machine {
            if differs_text(&cells.machine_name, &m.name) {
                diff.push(self.name("machine_name"));
            }
            if differs_text(&cells.machine_kind, &m.kind) {
                diff.push(self.name("machine_kind"));
            }
        }
        if cells.route_order.is_some_and(|r| r != existing.route_order) {
            diff.push(self.name("route_order"));
        }
        if cells.pump_kind.is_some_and(|p| p != existing.pump_kind) {
            diff.push(self.name("pump_kind"));
        }
        if differs(
            cells.rated_flow.map(columns::lpm),
            existing.rated_flow.map(columns::lpm),
        ) {
            diff.push(self.name("rated_flow"));
        }
        if differs(
            cells.relief.map(columns::bar),
            existing.relief.map(columns::bar),
        ) {
            diff.push(self.name("relief"));
        }
        if differs(
            cells.reservoir.map(columns::litres),
            existing.reservoir.map(columns::litres),
        ) {
            diff.push(self.name("reservoir"));
        }
        let es = existing.stroke;
        if differs(cells.bore.map(columns::mm), es.map(|s| columns::mm(s.bore))) {
            diff.push(self.name("bore"));
        }
        if differs(
            cells.rod.map(columns::mm),
            es.and_then(|s| s.rod).map(columns::mm),
        ) {
            diff.push(self.name("rod"));
        }
        if differs(
            cells.stroke_len.map(columns::mm),
            es.map(|s| columns::mm(s.length)),
        ) {
            diff.push(self.name("stroke"));
        }
        if cells.direction.is_some() && cells.direction != es.map(|s| s.direction) {
            diff.push(self.name("timed_direction"));
        }
        if cells
            .component
            .is_some_and(|c| c != existing.sensitive_component)
        {
            diff.push(self.name("sensitive_component"));
        }
        let stored_fluid = existing
            .fluid_id
            .and_then(|id| bulk.fluid_by_id(id))
            .cloned();
        if let Some(name) = &cells.fluid.name {
            match &stored_fluid {
                Some(f) if &f.name == name => {
                    diff.extend(self.fluid_diff(f, &cells.fluid));
                }
                _ => diff.push(self.name("fluid_name")),
            }
        }
        diff
    }

    /// The new unit's machine: the stored one of that tag, which must agree with the row, or
    /// a new one; `None` with the reason said on the row.
    fn machine_for(
        &self,
        bulk: &mut Bulk<'_>,
        row: &mut RowReader<'_>,
        machine_tag: String,
        cells: &UnitCells,
        summary: &mut ImportSummary,
    ) -> Result<Option<Id>, ExchangeError> {
        if let Some(m) = bulk.machine_by_tag(&machine_tag).cloned() {
            let mut diff = Vec::new();
            if differs_text(&cells.machine_name, &m.name) {
                diff.push(self.name("machine_name"));
            }
            if differs_text(&cells.machine_kind, &m.kind) {
                diff.push(self.name("machine_kind"));
            }
            if !diff.is_empty() {
                row.err(
                    &diff[0],
                    format!(
                        "machine `{machine_tag}` is already stored with other values in {}",
                        diff.join(", ")
                    ),
                );
                return Ok(None);
            }
            return Ok(Some(m.id));
        }
        let m = Machine {
            id: 0,
            tag: machine_tag,
            name: cells.machine_name.clone(),
            kind: cells.machine_kind.clone(),
            route_order: cells.route_order.unwrap_or(0),
            notes: String::new(),
            archived: false,
        };
        match bulk.insert_machine(&m) {
            Ok(id) => {
                summary.machines_added += 1;
                Ok(Some(id))
            }
            Err(e) => {
                row_store_error(row, e, |f| f.to_string())?;
                Ok(None)
            }
        }
    }

    /// The fluid cells of a row (the unit register's, or an event's fluid put in): its name,
    /// ISO VG grade and new-oil viscosities, each checked; data without a name is refused.
    pub(super) fn fluid_cells(&self, row: &mut RowReader<'_>) -> FluidCells {
        let name = row.text(self.slot("fluid_name")).map(str::to_string);
        let vg = row.integer(self.slot("fluid_vg"));
        let kv40 = row.plain(self.slot("fluid_kv40"), bound(bounds::KV40_NEW_CST));
        let kv100 = row.plain(self.slot("fluid_kv100"), bound(bounds::KV100_NEW_CST));
        let iso_vg = match vg {
            Some(v) if ISO_VG_GRADES.iter().any(|&(g, _)| i64::from(g) == v) => {
                u32::try_from(v).ok()
            }
            Some(v) => {
                let grades = ISO_VG_GRADES
                    .iter()
                    .map(|(g, _)| g.to_string())
                    .collect::<Vec<_>>()
                    .join(", ");
                row.err(
                    &self.name("fluid_vg"),
                    format!("{v} is not an ISO VG grade (ISO 3448: {grades})"),
                );
                None
            }
            None => None,
        };
        if let (Some(a), Some(b)) = (kv40, kv100) {
            if b >= a {
                row.err(
                    &self.name("fluid_kv100"),
                    "must be below fluid_kv40_cst (oil thins as it warms)",
                );
            }
        }
        if name.is_none() && (vg.is_some() || kv40.is_some() || kv100.is_some()) {
            row.err(
                "fluid_name",
                "fluid properties are given without the fluid's name",
            );
        }
        FluidCells {
            name,
            iso_vg,
            kv40,
            kv100,
            has_data: vg.is_some() || kv40.is_some() || kv100.is_some(),
        }
    }

    /// The id of the fluid a row names (`Some(None)` when it names none): the stored one of
    /// that name, refused when the row gives it other values; or, when the shop lacks it, a new
    /// one made from the row's data. `None`: refused, the reason on the row.
    pub(super) fn fluid_of_row(
        &self,
        bulk: &mut Bulk<'_>,
        row: &mut RowReader<'_>,
        cells: &FluidCells,
        summary: &mut ImportSummary,
    ) -> Result<Option<Option<Id>>, ExchangeError> {
        let Some(name) = &cells.name else {
            return Ok(Some(None));
        };
        if let Some(f) = bulk.fluid_by_name(name).cloned() {
            let diff = self.fluid_diff(&f, cells);
            if !diff.is_empty() {
                row.err(
                    &diff[0],
                    format!(
                        "fluid `{name}` is already stored with other values in {}",
                        diff.join(", ")
                    ),
                );
                return Ok(None);
            }
            return Ok(Some(Some(f.id)));
        }
        let fluid = Fluid {
            id: 0,
            name: name.clone(),
            iso_vg: cells.iso_vg,
            kv40_new: cells.kv40.map(Viscosity::from_cst),
            kv100_new: cells.kv100.map(Viscosity::from_cst),
            acid_new_mgkoh_g: None,
            base_type: String::new(),
        };
        match bulk.insert_fluid(&fluid) {
            Ok(id) => {
                summary.fluids_added += 1;
                Ok(Some(Some(id)))
            }
            Err(e) => {
                row_store_error(row, e, |f| f.to_string())?;
                Ok(None)
            }
        }
    }

    fn fluid_diff(&self, f: &Fluid, cells: &FluidCells) -> Vec<String> {
        let mut diff = Vec::new();
        if cells.iso_vg.is_some() && cells.iso_vg != f.iso_vg {
            diff.push(self.name("fluid_vg"));
        }
        if differs(cells.kv40.map(columns::tidy), f.kv40_new.map(columns::cst)) {
            diff.push(self.name("fluid_kv40"));
        }
        if differs(
            cells.kv100.map(columns::tidy),
            f.kv100_new.map(columns::cst),
        ) {
            diff.push(self.name("fluid_kv100"));
        }
        diff
    }
}

/// What one row says of a fluid; see [`Importer::fluid_cells`].
pub(super) struct FluidCells {
    pub name: Option<String>,
    pub iso_vg: Option<u32>,
    pub kv40: Option<f64>,
    pub kv100: Option<f64>,
    /// Whether the row gives any of the fluid's data (a grade or a viscosity).
    pub has_data: bool,
}

/// The cells of one unit register row, read and checked (the machine's tag is read apart: the
/// row is nothing without it).
struct UnitCells {
    machine_name: String,
    machine_kind: String,
    route_order: Option<i64>,
    unit_tag: Option<String>,
    pump_kind: Option<PumpKind>,
    rated_flow: Option<Flow>,
    relief: Option<Pressure>,
    reservoir: Option<Volume>,
    bore: Option<Length>,
    rod: Option<Length>,
    stroke_len: Option<Length>,
    direction: Option<StrokeDirection>,
    component: Option<SensitiveComponent>,
    fluid: FluidCells,
}
