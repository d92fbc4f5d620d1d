//! The cost of waiting: what a unit's lost flow turns into heat while the repair waits, in kW
//! and hp, and over a year at the unit's run hours and the shop's electricity price
//! (`physics::energy`). It gathers the figures from a unit's history and evaluation; it must not
//! read the shop, print or judge.

use chrono::{DateTime, Duration, Utc};
use serde::{Deserialize, Serialize};

use crate::health::{BaselineIndicator, UnitHealth};
use crate::model::UnitHistory;
use crate::physics::energy::{energy_kwh, lost_flow_heat, run_hours_per_year};
use crate::units::{Flow, Pressure};

/// What a unit's lost flow costs. SI inside (m³/s, Pa, W); kW, hp and kWh named as such.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct WaitingCost {
    /// Flow lost against the baseline, m³/s.
    pub lost_flow: f64,
    /// Working pressure of the latest check that has one, Pa.
    pub working_pressure: f64,
    /// Power turned into heat: lost flow × working pressure.
    pub heat_kw: f64,
    pub heat_hp: f64,
    /// Run hours a year from the hour meter over the last year (at least 28 days apart).
    pub run_hours_per_year: Option<f64>,
    pub energy_kwh_per_year: Option<f64>,
    /// The shop's price of a kWh, when set.
    pub price_per_kwh: Option<f64>,
    /// Energy a year × price, in the shop's currency.
    pub cost_per_year: Option<f64>,
}

/// The cost of waiting of a unit evaluated as `health` from history `h` at `at`, with the
/// shop's `price` per kWh; `None` when the unit has lost no flow against a baseline or no
/// check gives its working pressure.
pub fn waiting_cost(
    h: &UnitHistory,
    health: &UnitHealth,
    at: DateTime<Utc>,
    price: Option<f64>,
) -> Option<WaitingCost> {
    let pct = health.indicators.lost_flow_pct.filter(|p| *p > 0.0)?;
    let baseline = health.baseline.get(BaselineIndicator::EffectiveFlow)?.value;
    let lost = baseline * pct / 100.0;
    let upto: Vec<_> = h.checks.iter().filter(|c| c.taken_at <= at).collect();
    let pressure = upto.iter().rev().find_map(|c| c.pressure)?.si();
    let heat = lost_flow_heat(Flow(lost), Pressure(pressure));
    let year_ago = at - Duration::days(365);
    let readings: Vec<_> = upto
        .iter()
        .filter(|c| c.taken_at >= year_ago)
        .filter_map(|c| c.hours.map(|hrs| (c.taken_at, hrs)))
        .collect();
    // Days from the first reading of the year, so that the figure is the same whatever the
    // instant judged within the span it holds for (`app::kept`).
    let meter: Vec<(f64, f64)> = readings
        .iter()
        .map(|(t, hrs)| ((*t - readings[0].0).num_seconds() as f64 / 86_400.0, *hrs))
        .collect();
    let run_hours = match (meter.first(), meter.last()) {
        (Some(a), Some(b)) => run_hours_per_year(*a, *b),
        _ => None,
    };
    let energy = run_hours.map(|hrs| energy_kwh(heat, hrs));
    Some(WaitingCost {
        lost_flow: lost,
        working_pressure: pressure,
        heat_kw: heat.kw(),
        heat_hp: heat.hp(),
        run_hours_per_year: run_hours,
        energy_kwh_per_year: energy,
        price_per_kwh: price,
        cost_per_year: energy.zip(price).map(|(e, p)| e * p),
    })
}

/// Until when the run hours of [`waiting_cost`] at `at` stay as they are while no record is
/// added: the first hour-meter reading of the year leaves it 365 days after it was taken.
pub fn run_hours_hold_until(h: &UnitHistory, at: DateTime<Utc>) -> Option<DateTime<Utc>> {
    let year_ago = at - Duration::days(365);
    h.checks
        .iter()
        .find(|c| c.taken_at >= year_ago && c.taken_at <= at && c.hours.is_some())
        .map(|c| c.taken_at + Duration::days(365) + Duration::seconds(1))
}

impl WaitingCost {
    /// The cost in a few words, for a narrow cell: `2.0 kW (2.7 hp) heat; 725 a year`.
    pub fn short_text(&self) -> String {
        let heat = format!("{:.1} kW ({:.1} hp) heat", self.heat_kw, self.heat_hp);
        match self.cost_per_year {
            Some(c) => format!("{heat}; {c:.0} a year"),
            None => heat,
        }
    }

    /// The cost in words, figures in `sys`: `1.67 kW (2.24 hp) as heat; 6,700 kWh a year at
    /// 4,000 run hours, 1,206 a year at 0.18 per kWh`.
    pub fn text(&self, sys: crate::units::UnitSystem) -> String {
        let flow = crate::app::figures::text(crate::app::vocab::Dim::Flow, self.lost_flow, sys);
        let mut s = format!(
            "{:.2} kW ({:.2} hp) turned into heat by {flow} of lost flow",
            self.heat_kw, self.heat_hp
        );
        match (self.run_hours_per_year, self.energy_kwh_per_year) {
            (Some(hrs), Some(kwh)) => {
                s.push_str(&format!("; {kwh:.0} kWh a year at {hrs:.0} run hours"));
                match (self.cost_per_year, self.price_per_kwh) {
                    (Some(c), Some(p)) => s.push_str(&format!(", {c:.0} a year at {p} per kWh")),
                    _ => s.push_str(" (set the electricity price in Setup for the cost)"),
                }
            }
            _ => s.push_str(
                "; run hours a year not known yet (needs hour-meter readings a month apart)",
            ),
        }
        s
    }
}
