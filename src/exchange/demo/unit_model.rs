//! The demo's model of one power unit: ambient, leakage, heat rise, stroke time, contamination,
//! water and the events of its planted fault. It must not write the shop.

use super::*;

use chrono::{Datelike, NaiveDate};

use crate::model::{Event, EventKind, Id, TimedStroke};
use crate::physics::hydraulics::displaced_volume;
use crate::physics::viscosity::Walther;
use crate::units::{Flow, Length, Pressure, Temperature, Viscosity, Volume};

/// Seasonal ambient in the shop hall, °C (warmest around 21 July).
pub(super) fn ambient_c(d: NaiveDate) -> f64 {
    let doy = f64::from(d.ordinal());
    17.0 + 7.0 * (2.0 * std::f64::consts::PI * (doy - 111.0) / 365.25).sin()
}

/// How far a linear ramp from `from` to `to` has come on `d`, 0..1.
fn ramp(d: NaiveDate, from: NaiveDate, to: NaiveDate) -> f64 {
    if d <= from {
        0.0
    } else if d >= to {
        1.0
    } else {
        days_between(from, d) / days_between(from, to)
    }
}

/// The state of one unit's model on one day.
pub(super) struct UnitModel<'a> {
    def: &'a UnitDef,
    pub(super) walther: Walther,
    pub(super) volume_m3: f64,
    g0: f64,
}

impl<'a> UnitModel<'a> {
    pub(super) fn new(def: &'a UnitDef, fluid: &FluidDef) -> Result<Self, DemoError> {
        let walther = Walther::from_kv40_kv100(
            Viscosity::from_cst(fluid.kv40),
            Viscosity::from_cst(fluid.kv100),
        )?;
        let stroke = timed_stroke(def);
        let volume_m3 = displaced_volume(&stroke)?.si();
        let q_rated = Flow::from_lpm(def.rated_lpm).si();
        let nu45 = walther.at(Temperature::from_c(45.0)).si();
        let p = Pressure::from_bar(def.work_bar).si();
        // G = Q_leak · ν / p at the healthy reference point.
        let g0 = def.leak_share * q_rated * nu45 / p;
        Ok(UnitModel {
            def,
            walther,
            volume_m3,
            g0,
        })
    }

    /// Leak conductance on day `d` (wear opens the gaps).
    fn conductance(&self, d: NaiveDate) -> f64 {
        match self.def.fault {
            Fault::PumpWear { from, factor } => {
                self.g0 * (1.0 + (factor - 1.0) * ramp(d, from, end_date()))
            }
            _ => self.g0,
        }
    }

    /// Multiplier on the healthy heat rise from a fouled cooler.
    fn fouling(&self, d: NaiveDate) -> f64 {
        match self.def.fault {
            Fault::CoolerFouling {
                from,
                until,
                factor,
                cleaned,
            } if d < cleaned => 1.0 + (factor - 1.0) * ramp(d, from, until),
            _ => 1.0,
        }
    }

    /// Viscosity of the oil in service relative to new oil (shear-down of an old charge).
    pub(super) fn visc_factor(&self, d: NaiveDate) -> f64 {
        match self.def.fault {
            Fault::FluidChange { changed } if d < changed => {
                // 9 % thinner than new at the start, 0.3 % more each month.
                let months = days_between(date(2024, 11, 29), d) / 30.44;
                0.91 - 0.003 * months
            }
            _ => 1.0,
        }
    }

    /// Oil temperature (°C), delivered flow (m³/s) and leakage (m³/s) at ambient `amb` and
    /// load factor `load`.
    pub(super) fn operating_point(&self, d: NaiveDate, amb: f64, load: f64) -> (f64, f64, f64) {
        let q_rated = Flow::from_lpm(self.def.rated_lpm).si();
        let p = Pressure::from_bar(self.def.work_bar).si();
        let g = self.conductance(d);
        // A quarter of the pump's power ends up as heat in a healthy unit; leakage that wear
        // adds (beyond what a healthy pump passes at the same temperature) adds its
        // throttling loss on top. The healthy heat rise is thus the same in winter and summer.
        // The extra leakage passes at working pressure about half the time.
        let k_heat = self.def.heat_rise_k / 0.25 * 0.5;
        let mut t_oil = amb + self.def.heat_rise_k;
        let mut q_leak = 0.0;
        for _ in 0..6 {
            let nu = self.walther.at(Temperature::from_c(t_oil)).si() * self.visc_factor(d);
            q_leak = g * p / nu;
            let worn_extra = (g - self.g0) * p / nu / q_rated;
            t_oil = amb + self.def.heat_rise_k * load * self.fouling(d) + k_heat * worn_extra;
        }
        (t_oil, q_rated - q_leak, q_leak)
    }
}

pub(super) fn timed_stroke(def: &UnitDef) -> TimedStroke {
    TimedStroke {
        bore: Length::from_mm(def.bore_mm),
        rod: def.rod_mm.map(Length::from_mm),
        length: Length::from_mm(def.stroke_mm),
        direction: def.direction,
    }
}

/// A count per mL in the middle (geometric) of ISO 4406 range `code`, written as a counter
/// would print it.
pub(super) fn count_for_code(code: f64) -> f64 {
    let c = 0.01 * 2f64.powf(code - 0.5);
    if c >= 100.0 {
        round_to(c, 1.0)
    } else {
        round_to(c, 0.1)
    }
}

/// ISO ranges added to the normal particle codes by a contamination episode.
pub(super) fn contamination_codes(def: &UnitDef, d: NaiveDate) -> f64 {
    match def.fault {
        Fault::Contamination {
            repair,
            codes,
            filter,
            ..
        } => {
            if d < repair {
                0.0
            } else if d < filter {
                codes
            } else {
                // The new element cleans the oil up over a few weeks.
                codes * (-days_between(filter, d) / 12.0).exp()
            }
        }
        _ => 0.0,
    }
}

pub(super) fn water_ppm(def: &UnitDef, d: NaiveDate) -> f64 {
    match def.fault {
        Fault::WaterIngress {
            from,
            ppm_per_month,
        } if d > from => def.water_ppm + ppm_per_month * days_between(from, d) / 30.44,
        Fault::FluidChange { changed } if d >= changed => def.water_ppm * 0.5,
        _ => def.water_ppm,
    }
}

/// What a technician wrote beside a reading, where something was noticed.
pub(super) fn check_note(def: &UnitDef, d: NaiveDate) -> &'static str {
    match def.fault {
        Fault::PumpWear { .. } if d == date(2026, 9, 4) => {
            "ram feels slow on approach; pump louder than usual"
        }
        Fault::CoolerFouling { .. } if d == date(2026, 6, 26) => "cooler fins look dusty",
        Fault::WaterIngress { .. } if d == date(2026, 8, 14) => "oil looks hazy in the sight glass",
        Fault::Contamination { .. } if d == date(2026, 3, 27) => "filter indicator on alert",
        _ => "",
    }
}

pub(super) fn fault_events(def: &UnitDef, unit_id: Id, fluid_id: Id) -> Vec<Event> {
    let ev = |d: NaiveDate, kind, volume: Option<f64>, fluid: Option<Id>, note: &str| Event {
        id: 0,
        unit_id,
        done_at: at(d, 11, 0),
        kind,
        volume: volume.map(Volume::from_l),
        fluid_id: fluid,
        by: FITTER.into(),
        note: note.into(),
    };
    match def.fault {
        Fault::Contamination { repair, filter, .. } => vec![
            ev(
                repair,
                EventKind::Repair,
                None,
                None,
                "cylinder rod seal replaced; circuit opened at the cylinder",
            ),
            ev(
                filter,
                EventKind::FilterChange,
                None,
                None,
                "pressure and return elements changed after alert",
            ),
        ],
        Fault::CoolerFouling { cleaned, .. } => {
            vec![ev(
                cleaned,
                EventKind::CoolerClean,
                None,
                None,
                "air-oil cooler core blown out and washed",
            )]
        }
        Fault::FluidChange { changed } => vec![ev(
            changed,
            EventKind::FluidChange,
            Some(190.0),
            Some(fluid_id),
            "oil changed on condition: viscosity low, acid number high",
        )],
        _ => Vec::new(),
    }
}
