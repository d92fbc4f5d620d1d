//! The records of a shop, as the rest of the program sees them: machines, hydraulic units,
//! fluids, checks, samples, events, baselines, acknowledgements, settings.
//!
//! Plain data in SI units (see `units`). The store reads and writes these; the health engine,
//! the exchange formats, the reports and the UI consume them. Nothing here knows SQL, files
//! or the UI, and nothing here computes health.

use chrono::{DateTime, Utc};
use serde::{Deserialize, Serialize};

use crate::names::text_enum;
pub use crate::physics::cleanliness::SensitiveComponent;
pub use crate::physics::hydraulics::{StrokeDirection, TimedStroke};
use crate::units::{Flow, Pressure, Seconds, Temperature, UnitSystem, Viscosity, Volume};

/// Database row id.
pub type Id = i64;

text_enum!(
    /// Kind of the unit's main pump.
    PumpKind { Gear = "gear", Vane = "vane", PistonFixed = "piston_fixed", PistonVariable = "piston_variable" }
);

text_enum!(
    /// Sight-glass reading at a check.
    OilLevel { Ok = "ok", Low = "low" }
);

text_enum!(
    /// Filter clogging indicator at a check.
    FilterState { Ok = "ok", Alert = "alert", Bypass = "bypass" }
);

text_enum!(
    /// What was done to a unit.
    EventKind {
        FluidChange = "fluid_change",
        TopUp = "top_up",
        FilterChange = "filter_change",
        Rebuild = "rebuild",
        Repair = "repair",
        CoolerClean = "cooler_clean",
        Note = "note",
    }
);

impl EventKind {
    /// A fluid change or a rebuild starts a new era, and with it a new baseline.
    pub fn starts_era(self) -> bool {
        matches!(self, EventKind::FluidChange | EventKind::Rebuild)
    }
}

#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Machine {
    pub id: Id,
    /// Unique shop tag, e.g. `PR-07`.
    pub tag: String,
    pub name: String,
    /// Press, press brake, injection moulder, shear, ...
    pub kind: String,
    /// Order of the walk-round.
    pub route_order: i64,
    pub notes: String,
    pub archived: bool,
}

#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Fluid {
    pub id: Id,
    pub name: String,
    /// ISO 3448 viscosity grade (e.g. 46).
    pub iso_vg: Option<u32>,
    /// Kinematic viscosity of new oil at 40 °C.
    pub kv40_new: Option<Viscosity>,
    /// Kinematic viscosity of new oil at 100 °C.
    pub kv100_new: Option<Viscosity>,
    /// Acid number of new oil, mg KOH/g.
    pub acid_new_mgkoh_g: Option<f64>,
    /// Mineral, synthetic ester, water glycol, ...
    pub base_type: String,
}

#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Unit {
    pub id: Id,
    pub machine_id: Id,
    /// Unique shop tag, e.g. `PR-07-A`.
    pub tag: String,
    pub pump_kind: PumpKind,
    /// Rated pump flow at operating speed.
    pub rated_flow: Option<Flow>,
    pub relief: Option<Pressure>,
    pub reservoir: Option<Volume>,
    pub sensitive_component: SensitiveComponent,
    pub fluid_id: Option<Id>,
    pub stroke: Option<TimedStroke>,
    pub route_order: i64,
    pub archived: bool,
}

/// One walk-round reading of one unit. Everything but unit and time is optional.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Check {
    pub id: Id,
    pub unit_id: Id,
    pub taken_at: DateTime<Utc>,
    pub reservoir_temp: Option<Temperature>,
    pub ambient_temp: Option<Temperature>,
    pub pressure: Option<Pressure>,
    /// Time of the unit's timed stroke.
    pub stroke_time: Option<Seconds>,
    /// Time of a whole machine cycle; trended only.
    pub cycle_time: Option<Seconds>,
    pub oil_level: Option<OilLevel>,
    pub filter: Option<FilterState>,
    /// Hour-meter reading.
    pub hours: Option<f64>,
    pub case_drain: Option<Flow>,
    pub by: String,
    pub note: String,
    /// Who confirmed this reading after it was questioned, and when; `None` for a reading
    /// nobody has confirmed (most readings: only a questioned one needs it).
    #[serde(default)]
    pub confirmed: Option<Confirmation>,
}

/// A person has looked at a questioned reading and says it is what was measured. A confirmed
/// reading counts like any other; an unconfirmed questioned one is kept but held out of
/// baselines and drift detectors.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct Confirmation {
    pub by: String,
    pub at: DateTime<Utc>,
}

/// A viscosity read at some temperature other than 40 °C (field viscometer).
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct ViscReading {
    pub visc: Viscosity,
    pub at: Temperature,
}

/// One fluid sample result from a lab or a bench counter; any subset of fields.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Sample {
    pub id: Id,
    pub unit_id: Id,
    pub sampled_at: DateTime<Utc>,
    pub kv40: Option<Viscosity>,
    pub kv100: Option<Viscosity>,
    pub visc_reading: Option<ViscReading>,
    /// Particles per mL at ≥4, ≥6 and ≥14 µm(c).
    pub counts_per_ml: [Option<f64>; 3],
    /// A written ISO 4406 code as reported (e.g. `18/16/13`), when counts are not given.
    pub iso4406: Option<String>,
    pub water_ppm: Option<f64>,
    pub acid_mgkoh_g: Option<f64>,
    pub lab_ref: String,
    pub note: String,
    /// Who confirmed this result after it was questioned, and when (see [`Confirmation`]).
    #[serde(default)]
    pub confirmed: Option<Confirmation>,
}

#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Event {
    pub id: Id,
    pub unit_id: Id,
    pub done_at: DateTime<Utc>,
    pub kind: EventKind,
    pub volume: Option<Volume>,
    /// The fluid put in (fluid change, top-up).
    pub fluid_id: Option<Id>,
    pub by: String,
    pub note: String,
}

/// What marking work done records beside its [`Event`]: the hour meter, the filter element
/// fitted and the work order. Kept apart from the event, which the health engine reads,
/// because none of it changes a unit's evaluation; stored in the event's own row.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct EventDetails {
    /// The unit's hour meter when the work was done, in hours.
    pub hours: Option<f64>,
    /// The part number of the filter element fitted ('' when not given).
    pub filter_part: String,
    /// The shop's work-order reference ('' when not given).
    pub work_order: String,
}

impl EventDetails {
    /// Whether nothing beyond the event itself was recorded.
    pub fn is_empty(&self) -> bool {
        self.hours.is_none() && self.filter_part.is_empty() && self.work_order.is_empty()
    }
}

/// Someone has seen a flag; it stays marked until the flag's state changes.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Acknowledgement {
    pub id: Id,
    pub unit_id: Id,
    /// Flag kind (`lost_flow`, `water`, ...).
    pub kind: String,
    /// The flag state that was seen (`watch` or `act`).
    pub state: String,
    pub by: String,
    pub note: String,
    pub at: DateTime<Utc>,
}

/// A hand-entered baseline value for one indicator of one era.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct ManualBaseline {
    pub id: Id,
    pub unit_id: Id,
    /// Start of the era it belongs to.
    pub era_start: DateTime<Utc>,
    /// Indicator key, e.g. `effective_flow`.
    pub indicator: String,
    /// Reference value in SI.
    pub value: f64,
    /// Spread (one standard deviation) in SI.
    pub spread: f64,
    pub entered_by: String,
    pub entered_at: DateTime<Utc>,
}

/// A stored limit: a shop default when `unit_id` is `None`, else an override for one unit.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct LimitSetting {
    pub unit_id: Option<Id>,
    /// Limit key, e.g. `lost_flow_pct`, `water_ppm`, `sample_interval_weeks`.
    pub key: String,
    pub watch: Option<f64>,
    pub act: Option<f64>,
}

/// A saved column mapping for importing files whose columns are named their own way (what it
/// means is `exchange::mapping`'s).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ImportProfile {
    pub name: String,
    /// The file kind: `units`, `checks`, `samples` or `events`.
    pub kind: String,
    /// The header of the file it was made for, column by column.
    pub header: Vec<String>,
    /// (file column, sumpbook column or `ignore`).
    pub columns: Vec<(String, String)>,
    /// `iso`, `day-first` or `month-first`.
    pub date_order: String,
    pub saved_at: DateTime<Utc>,
}

/// Shop-wide settings.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Settings {
    pub shop_name: String,
    pub unit_system: UnitSystem,
    /// IANA time zone name for display, e.g. `Europe/Berlin`; timestamps are stored in UTC.
    pub time_zone: String,
    /// What a kilowatt-hour costs the shop, in its own currency; `None` until set.
    pub electricity_price: Option<f64>,
}

impl Default for Settings {
    fn default() -> Self {
        Settings {
            shop_name: "New shop".into(),
            unit_system: UnitSystem::Metric,
            time_zone: "UTC".into(),
            electricity_price: None,
        }
    }
}

/// One kept value from the edit history: what a stored reading was before it changed.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct EditRecord {
    pub id: Id,
    pub table: String,
    pub row_id: Id,
    /// `update` or `delete`.
    pub action: String,
    /// The old row as JSON.
    pub old_value: String,
    /// The new row as JSON (null on delete).
    pub new_value: Option<String>,
    pub by: String,
    pub reason: String,
    pub at: DateTime<Utc>,
}

/// Everything the health engine needs of one unit, read in one go.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct UnitHistory {
    pub machine: Machine,
    pub unit: Unit,
    /// The fluid in service.
    pub fluid: Option<Fluid>,
    /// Oldest first.
    pub checks: Vec<Check>,
    /// Oldest first.
    pub samples: Vec<Sample>,
    /// Oldest first.
    pub events: Vec<Event>,
    pub manual_baselines: Vec<ManualBaseline>,
    pub acknowledgements: Vec<Acknowledgement>,
}
