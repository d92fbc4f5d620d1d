//! The one evaluation path: the state of the fleet, or of one unit, at a date.
//!
//! Reads the shop through the store in a bounded number of queries (one per table, whatever
//! the fleet's size), resolves the limits of each unit, runs the health engine
//! (`health::evaluate`) and hands back serialisable results that the command line, the app and
//! the reports all render. No health rule lives here, and nothing here prints.

use super::waiting_cost::{waiting_cost, WaitingCost};
use chrono::{DateTime, NaiveDate, Utc};
use serde::{Deserialize, Serialize};

use super::AppError;
use crate::health::{self, ConfirmedBy, Flag, Limits, State, SuspectReading, UnitHealth, WorkItem};
use crate::model::{Fluid, LimitSetting, Settings, UnitHistory};
use crate::store::{Store, StoreError};
use crate::units::UnitSystem;

/// A store failure as the application reports it (refusals of the input are bad input, exit 2).
pub(crate) fn store_error(e: StoreError) -> AppError {
    AppError::Store(e)
}

/// How much of each unit's findings to keep.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Detail {
    /// What the fleet board, `status` (text and `--json`), the due list and the walk-round
    /// read: state, indicators, flags, planned work, what cannot be judged yet, questioned
    /// readings, the last check and sample and the cost of waiting ([`UnitStatus::summary`]).
    /// A unit page or report asks for `Full`.
    Summary,
    /// Everything, with chart series and the per-check and per-sample rows: a unit page.
    Full,
}

/// Counts of units by state.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize, Deserialize)]
pub struct StateCounts {
    pub steady: usize,
    /// Units with nothing flagged but an indicator that cannot be judged yet.
    pub not_judged: usize,
    pub watch: usize,
    pub act: usize,
}

impl StateCounts {
    /// The counts of these states.
    pub fn of(states: impl IntoIterator<Item = State>) -> Self {
        let mut c = StateCounts::default();
        for s in states {
            match s {
                State::Steady => c.steady += 1,
                State::NotJudged => c.not_judged += 1,
                State::Watch => c.watch += 1,
                State::Act => c.act += 1,
            }
        }
        c
    }
}

/// One unit's identity and findings.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct UnitStatus {
    pub unit_id: i64,
    /// Unit tag.
    pub unit: String,
    /// Machine tag.
    pub machine: String,
    pub machine_name: String,
    pub machine_kind: String,
    pub route_order: i64,
    pub state: State,
    /// Name of the fluid in service in the era in force.
    pub fluid: Option<String>,
    /// The earliest planned work.
    pub next_due: Option<WorkItem>,
    /// Everything the engine found (series and rows emptied at `Detail::Summary`).
    pub health: UnitHealth,
    /// What the flow the unit has lost turns into heat, and costs a year.
    pub waiting_cost: Option<WaitingCost>,
}

/// The whole fleet at one date, worst first.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct FleetStatus {
    pub shop_name: String,
    pub unit_system: UnitSystem,
    /// The date evaluated.
    pub at: DateTime<Utc>,
    /// Whether `at` was asked for (a replay) rather than now.
    pub replay: bool,
    pub counts: StateCounts,
    /// Worst state first; within a state, the route order.
    pub units: Vec<UnitStatus>,
    /// How many units were evaluated for this status; the others' evaluations were kept from
    /// before and still held (`app::kept`).
    #[serde(default)]
    pub evaluated: usize,
}

/// What the evaluation reads of a shop, besides the histories.
pub(crate) struct ShopData {
    settings: Settings,
    fluids: Vec<Fluid>,
    limit_rows: Vec<LimitSetting>,
}

impl ShopData {
    /// The engine's calendar: the shop's time zone.
    pub(crate) fn calendar(&self) -> crate::health::Calendar {
        crate::app::local_time::Zone::of_setting(&self.settings.time_zone).calendar()
    }
}

pub(crate) fn shop_data(store: &Store) -> Result<ShopData, AppError> {
    Ok(ShopData {
        settings: store.settings().map_err(store_error)?,
        fluids: store.fluids().map_err(store_error)?,
        limit_rows: store.limits().map_err(store_error)?,
    })
}

pub(crate) fn unit_status(
    h: &UnitHistory,
    data: &ShopData,
    at: DateTime<Utc>,
    detail: Detail,
) -> UnitStatus {
    let limits = Limits::resolve(&data.limit_rows, Some(h.unit.id));
    let health = health::evaluate(
        h,
        &data.fluids,
        &limits,
        at,
        data.settings.unit_system,
        data.calendar(),
    );
    let waiting_cost = waiting_cost(h, &health, at, data.settings.electricity_price);
    let s = UnitStatus {
        unit_id: h.unit.id,
        unit: h.unit.tag.clone(),
        machine: h.machine.tag.clone(),
        machine_name: h.machine.name.clone(),
        machine_kind: h.machine.kind.clone(),
        route_order: h.unit.route_order,
        state: health.state,
        fluid: health.fluid.as_ref().map(|f| f.name.clone()),
        next_due: health.work.iter().min_by_key(|w| w.due).cloned(),
        health,
        waiting_cost,
    };
    match detail {
        Detail::Summary => s.summary(),
        Detail::Full => s,
    }
}

impl UnitStatus {
    /// The summary of a unit's status (`Detail::Summary`): the era, fluid, baseline, tiles,
    /// restarts, chart series and per-reading rows left out (the vectors dropped with their
    /// memory; `clear` would keep each one's capacity), all else as it is.
    pub fn summary(mut self) -> UnitStatus {
        let h = &mut self.health;
        h.eras = Vec::new();
        h.fluid = None;
        h.baseline = health::Baseline::default();
        h.tiles = Vec::new();
        h.series = Vec::new();
        h.checks = Vec::new();
        h.samples = Vec::new();
        h.restarts = Vec::new();
        self
    }
}

fn sort_worst_first(units: &mut [UnitStatus]) {
    units.sort_by(|a, b| {
        b.state
            .cmp(&a.state)
            .then(b.health.flags.len().cmp(&a.health.flags.len()))
            .then(a.route_order.cmp(&b.route_order))
            .then(a.unit.cmp(&b.unit))
    });
}

/// The fleet (every unit not archived) as it stood at `at` (now when `None`): only what was
/// recorded up to then is used, so a trend can be replayed date by date.
pub fn fleet_status_in(
    store: &Store,
    at: Option<DateTime<Utc>>,
    detail: Detail,
) -> Result<FleetStatus, AppError> {
    let when = at.unwrap_or_else(Utc::now);
    let (mut units, evaluated, data) = super::kept::fleet_units(store, when, detail)?;
    sort_worst_first(&mut units);
    let counts = StateCounts::of(units.iter().map(|u| u.state));
    Ok(FleetStatus {
        shop_name: data.settings.shop_name.clone(),
        unit_system: data.settings.unit_system,
        at: when,
        replay: at.is_some(),
        counts,
        units,
        evaluated,
    })
}

/// One unit (by tag, archived or not) at `at`, with everything a unit page shows.
pub fn unit_status_in(
    store: &Store,
    tag: &str,
    at: Option<DateTime<Utc>>,
) -> Result<UnitStatus, AppError> {
    let when = at.unwrap_or_else(Utc::now);
    let unit = store
        .unit_by_tag(tag)
        .map_err(store_error)?
        .ok_or_else(|| AppError::BadInput(format!("no unit `{}` in this shop", tag.trim())))?;
    let h = store
        .unit_history(unit.id, Some(when))
        .map_err(store_error)?
        .ok_or_else(|| AppError::BadInput(format!("no unit `{}` in this shop", tag.trim())))?;
    let data = shop_data(store)?;
    Ok(unit_status(&h, &data, when, Detail::Full))
}

/// A unit's page as read once: its whole stored history (every record, for the history
/// tables), its evaluation at `at` from that same history (the engine looks only at what was
/// known at `at`), and the shop's settings and fluids read for it.
pub struct UnitRead {
    pub history: UnitHistory,
    pub status: UnitStatus,
    pub settings: Settings,
    pub fluids: Vec<Fluid>,
}

/// One unit (by id) read once and evaluated at `at` (now when `None`): the unit page's one
/// read of the unit's records.
pub(crate) fn unit_read_in(
    store: &Store,
    unit_id: i64,
    at: Option<DateTime<Utc>>,
) -> Result<UnitRead, AppError> {
    let when = at.unwrap_or_else(Utc::now);
    let history = store
        .unit_history(unit_id, None)
        .map_err(store_error)?
        .ok_or_else(|| AppError::BadInput(format!("unit {unit_id} is not in this shop")))?;
    let data = shop_data(store)?;
    let status = unit_status(&history, &data, when, Detail::Full);
    Ok(UnitRead {
        history,
        status,
        settings: data.settings,
        fluids: data.fluids,
    })
}

/// The fleet status of the shop at `at` (now when `None`).
pub fn fleet_status(
    shop: &super::shop::Shop,
    at: Option<DateTime<Utc>>,
) -> Result<FleetStatus, AppError> {
    fleet_status_in(shop.store(), at, Detail::Summary)
}

/// The fleet status with every unit's chart series and rows (for a report).
pub fn fleet_status_full(
    shop: &super::shop::Shop,
    at: Option<DateTime<Utc>>,
) -> Result<FleetStatus, AppError> {
    fleet_status_in(shop.store(), at, Detail::Full)
}

/// One unit's status at `at` (now when `None`).
pub fn unit_status_of(
    shop: &super::shop::Shop,
    tag: &str,
    at: Option<DateTime<Utc>>,
) -> Result<UnitStatus, AppError> {
    unit_status_in(shop.store(), tag, at)
}

// The fixed JSON of `status --json`.

/// `status --json`: `{"units": [...]}` with fixed keys.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct StatusJson {
    pub units: Vec<UnitJson>,
}

#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct UnitJson {
    pub unit: String,
    pub machine: String,
    /// `steady`, `not_judged`, `watch` or `act`.
    pub state: State,
    pub indicators: IndicatorsJson,
    pub flags: Vec<FlagJson>,
    /// What cannot be judged yet, why, and when it will be (also when the unit is flagged).
    pub not_judged: Vec<NotJudgedJson>,
    /// Readings the screening questioned, oldest first, confirmed or not.
    pub questioned: Vec<QuestionedJson>,
    /// What the lost flow turns into heat and costs a year; null when no flow is lost.
    pub cost_of_waiting: Option<CostJson>,
}

/// The cost of waiting in `status --json`: kW and hp of heat, run hours, kWh and the cost a
/// year (in the shop's currency, at its price per kWh; null until the price is set).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct CostJson {
    pub heat_kw: f64,
    pub heat_hp: f64,
    pub run_hours_per_year: Option<f64>,
    pub energy_kwh_per_year: Option<f64>,
    pub price_per_kwh: Option<f64>,
    pub cost_per_year: Option<f64>,
}

/// One indicator that cannot be judged yet.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct NotJudgedJson {
    pub indicator: String,
    pub label: String,
    pub missing: String,
    pub until: String,
    pub checks_needed: Option<usize>,
    pub due: Option<NaiveDate>,
    /// Whether it keeps the unit "not judged yet" (a unit is expected to have it).
    pub expected: bool,
}

/// One questioned reading.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct QuestionedJson {
    /// `check` or `sample`.
    pub record: String,
    pub taken_at: DateTime<Utc>,
    /// The field's key (`reservoir_temp`, `pressure`, `water_ppm`, ...).
    pub field: String,
    pub reason: String,
    /// `false` while nobody and no later reading has confirmed it: then it feeds no baseline,
    /// detector or flag.
    pub confirmed: bool,
    /// Who or what confirmed it: a person's name, or `next reading`.
    pub confirmed_by: Option<String>,
    pub confirmed_at: Option<DateTime<Utc>>,
}

/// The key indicators; `null` where there is no data.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct IndicatorsJson {
    pub lost_flow_pct: Option<f64>,
    pub vol_eff_pct: Option<f64>,
    pub heat_rise_k: Option<f64>,
    pub heat_rise_drift_k: Option<f64>,
    pub leak_conductance_ratio: Option<f64>,
    pub kv40_cst: Option<f64>,
    pub kv40_drift_pct: Option<f64>,
    pub iso4406: Option<String>,
    pub iso4406_target: Option<String>,
    pub water_ppm: Option<f64>,
    pub acid_rise: Option<f64>,
    pub oil_life_used_pct: Option<f64>,
}

#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct FlagJson {
    pub kind: String,
    pub state: State,
    /// The figure that raised the flag against the limit it reached, in the shop's units,
    /// exactly as the fleet board, the unit page and the report show it.
    pub figure: String,
    /// The number of `figure`: the value judged, in `unit` (the shop's units, as `figure`
    /// shows it); `null` for a flag that is read, not measured (filter indicator, oil level).
    pub value: Option<f64>,
    /// The limit reached, in `unit`.
    pub limit: Option<f64>,
    /// The unit of `value` and `limit`: `%`, `K`, `°F`, `L/min`, `ppm`, `×`, `days`; empty
    /// for a range number or without a value.
    pub unit: String,
    pub since: NaiveDate,
    pub message: String,
    pub acknowledged: bool,
}

/// `v` rounded to `d` decimals (figures in JSON carry no false precision).
fn round(v: Option<f64>, d: i32) -> Option<f64> {
    let f = 10f64.powi(d);
    v.filter(|x| x.is_finite()).map(|x| (x * f).round() / f)
}

impl FlagJson {
    fn of(f: &Flag, sys: UnitSystem) -> Self {
        let fig = f.figure.as_ref();
        FlagJson {
            kind: f.kind.as_str().to_string(),
            state: f.state,
            figure: super::figures::flag_figure(f, sys),
            value: round(fig.map(|g| super::figures::value(g.dim, g.value, sys)), 3),
            limit: round(
                fig.and_then(|g| g.limit.map(|l| super::figures::value(g.dim, l, sys))),
                3,
            ),
            unit: fig
                .map(|g| super::figures::unit(g.dim, sys).to_string())
                .unwrap_or_default(),
            since: f.since,
            message: f.message.clone(),
            acknowledged: f.acknowledged,
        }
    }
}

impl UnitJson {
    fn of(u: &UnitStatus, sys: UnitSystem) -> Self {
        let i = &u.health.indicators;
        UnitJson {
            unit: u.unit.clone(),
            machine: u.machine.clone(),
            state: u.state,
            indicators: IndicatorsJson {
                lost_flow_pct: round(i.lost_flow_pct, 2),
                vol_eff_pct: round(i.vol_eff_pct, 2),
                heat_rise_k: round(i.heat_rise_k, 2),
                heat_rise_drift_k: round(i.heat_rise_drift_k, 2),
                leak_conductance_ratio: round(i.leak_conductance_ratio, 3),
                kv40_cst: round(i.kv40_cst, 2),
                kv40_drift_pct: round(i.kv40_drift_pct, 2),
                iso4406: i.iso4406.clone(),
                iso4406_target: i.iso4406_target.clone(),
                water_ppm: round(i.water_ppm, 1),
                acid_rise: round(i.acid_rise, 3),
                oil_life_used_pct: round(i.oil_life_used_pct, 1),
            },
            flags: u
                .health
                .flags
                .iter()
                .map(|f| FlagJson::of(f, sys))
                .collect(),
            not_judged: u
                .health
                .not_judged
                .iter()
                .map(|n| NotJudgedJson {
                    indicator: n.key.clone(),
                    label: n.label.clone(),
                    missing: n.missing.clone(),
                    until: n.until.clone(),
                    checks_needed: n.checks_needed,
                    due: n.due,
                    expected: n.expected,
                })
                .collect(),
            questioned: u.health.suspects.iter().map(questioned_json).collect(),
            cost_of_waiting: u.waiting_cost.as_ref().map(|c| CostJson {
                heat_kw: round(Some(c.heat_kw), 3).unwrap_or(c.heat_kw),
                heat_hp: round(Some(c.heat_hp), 3).unwrap_or(c.heat_hp),
                run_hours_per_year: round(c.run_hours_per_year, 0),
                energy_kwh_per_year: round(c.energy_kwh_per_year, 0),
                price_per_kwh: c.price_per_kwh,
                cost_per_year: round(c.cost_per_year, 2),
            }),
        }
    }
}

/// Who or what confirmed a questioned reading, and when: a person's name, or `next reading`.
pub fn confirmed_by_text(c: &ConfirmedBy) -> (String, DateTime<Utc>) {
    match c {
        ConfirmedBy::Person { by, at } => (by.clone(), *at),
        ConfirmedBy::NextReading { at } => ("next reading".to_string(), *at),
    }
}

fn questioned_json(s: &SuspectReading) -> QuestionedJson {
    let by = s.confirmed.as_ref().map(confirmed_by_text);
    QuestionedJson {
        record: match s.record {
            health::screen::Record::Check => "check".into(),
            health::screen::Record::Sample => "sample".into(),
        },
        taken_at: s.at,
        field: s.field.key().to_string(),
        reason: s.reason.clone(),
        confirmed: s.confirmed.is_some(),
        confirmed_by: by.as_ref().map(|b| b.0.clone()),
        confirmed_at: by.map(|b| b.1),
    }
}

impl FleetStatus {
    /// The fixed-key JSON view.
    pub fn to_json_view(&self) -> StatusJson {
        StatusJson {
            units: self
                .units
                .iter()
                .map(|u| UnitJson::of(u, self.unit_system))
                .collect(),
        }
    }
}

impl UnitStatus {
    /// The fixed-key JSON view of one unit, as `{"units": [..]}`, figures in `sys`.
    pub fn to_json_view(&self, sys: UnitSystem) -> StatusJson {
        StatusJson {
            units: vec![UnitJson::of(self, sys)],
        }
    }
}
