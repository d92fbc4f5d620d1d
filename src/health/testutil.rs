//! Builders of small unit histories for the engine's unit tests (compiled for tests only).

use chrono::{DateTime, Utc};

use crate::model::{
    Check, Event, EventKind, Fluid, Id, Machine, PumpKind, SensitiveComponent, Unit, UnitHistory,
};

/// Midnight UTC of a `YYYY-MM-DD` date, or a full RFC 3339 time.
pub fn t(s: &str) -> DateTime<Utc> {
    if s.len() == 10 {
        format!("{s}T00:00:00Z")
            .parse()
            .unwrap_or_else(|e| panic!("test date {s}: {e}"))
    } else {
        s.parse().unwrap_or_else(|e| panic!("test time {s}: {e}"))
    }
}

pub fn history() -> UnitHistory {
    UnitHistory {
        machine: Machine {
            id: 1,
            tag: "PR-01".into(),
            name: "Test press".into(),
            kind: "press".into(),
            route_order: 1,
            notes: String::new(),
            archived: false,
        },
        unit: Unit {
            id: 1,
            machine_id: 1,
            tag: "PR-01-A".into(),
            pump_kind: PumpKind::Gear,
            rated_flow: None,
            relief: None,
            reservoir: None,
            sensitive_component: SensitiveComponent::ProportionalValve,
            fluid_id: None,
            stroke: None,
            route_order: 1,
            archived: false,
        },
        fluid: None,
        checks: Vec::new(),
        samples: Vec::new(),
        events: Vec::new(),
        manual_baselines: Vec::new(),
        acknowledgements: Vec::new(),
    }
}

pub fn check(id: Id, at: DateTime<Utc>) -> Check {
    Check {
        id,
        unit_id: 1,
        taken_at: at,
        reservoir_temp: None,
        ambient_temp: None,
        pressure: None,
        stroke_time: None,
        cycle_time: None,
        oil_level: None,
        filter: None,
        hours: None,
        case_drain: None,
        by: "T. Tech".into(),
        note: String::new(),
        confirmed: None,
    }
}

pub fn event(id: Id, at: DateTime<Utc>, kind: EventKind, fluid_id: Option<Id>) -> Event {
    Event {
        id,
        unit_id: 1,
        done_at: at,
        kind,
        volume: None,
        fluid_id,
        by: "T. Tech".into(),
        note: String::new(),
    }
}

#[allow(dead_code)]
pub fn fluid(id: Id) -> Fluid {
    Fluid {
        id,
        name: "Shop HM 46".into(),
        iso_vg: Some(46),
        kv40_new: Some(crate::units::Viscosity::from_cst(46.0)),
        kv100_new: Some(crate::units::Viscosity::from_cst(6.8)),
        acid_new_mgkoh_g: Some(0.5),
        base_type: "mineral".into(),
    }
}

/// A unit with a timed stroke (80 mm bore, 500 mm, extending), 40 L/min rated, 100 bar relief
/// and a VG 46 fluid (id 1), proportional valves (target 17/15/12).
pub fn press() -> UnitHistory {
    let mut h = history();
    h.unit.rated_flow = Some(crate::units::Flow::from_lpm(40.0));
    h.unit.relief = Some(crate::units::Pressure::from_bar(100.0));
    h.unit.fluid_id = Some(1);
    h.unit.stroke = Some(crate::model::TimedStroke {
        bore: crate::units::Length::from_mm(80.0),
        rod: None,
        length: crate::units::Length::from_mm(500.0),
        direction: crate::model::StrokeDirection::Extend,
    });
    h.fluid = Some(fluid(1));
    h
}

/// The stroke's displaced volume, worked by hand: π/4 · (0.08 m)² · 0.5 m = 0.0008π m³.
pub fn press_volume_m3() -> f64 {
    0.0008 * std::f64::consts::PI
}

/// A check `week` weeks after 2024-01-01 with the given stroke time, oil and ambient °C, 100 bar.
pub fn timed(id: Id, week: i64, stroke_s: f64, oil_c: f64, ambient_c: f64) -> Check {
    let mut c = check(id, t("2024-01-01") + chrono::Duration::weeks(week));
    c.stroke_time = Some(crate::units::Seconds(stroke_s));
    c.reservoir_temp = Some(crate::units::Temperature::from_c(oil_c));
    c.ambient_temp = Some(crate::units::Temperature::from_c(ambient_c));
    c.pressure = Some(crate::units::Pressure::from_bar(100.0));
    c
}

pub fn sample(id: Id, at: DateTime<Utc>) -> crate::model::Sample {
    crate::model::Sample {
        id,
        unit_id: 1,
        sampled_at: at,
        kv40: None,
        kv100: None,
        visc_reading: None,
        counts_per_ml: [None; 3],
        iso4406: None,
        water_ppm: None,
        acid_mgkoh_g: None,
        lab_ref: String::new(),
        note: String::new(),
        confirmed: None,
    }
}
