//! The demo shop's definitions as data: its machines, fluids, people and units with their
//! planted faults (invented). It must not generate readings.

use super::*;

use chrono::NaiveDate;

use crate::model::{PumpKind, SensitiveComponent, StrokeDirection};

/// The fault planted in one unit.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(super) enum Fault {
    None,
    /// Leak conductance grows linearly from `from` to `factor` × at the end.
    PumpWear {
        from: NaiveDate,
        factor: f64,
    },
    /// Heat rise scales up linearly from `from` to `factor` × at `until`; a cooler clean on
    /// `cleaned` restores it.
    CoolerFouling {
        from: NaiveDate,
        until: NaiveDate,
        factor: f64,
        cleaned: NaiveDate,
    },
    /// A repair opens the circuit on `repair`; particle counts jump by `codes` ISO ranges; the
    /// filter indicator shows alert from `alert`; a filter change on `filter` cleans it up.
    Contamination {
        repair: NaiveDate,
        codes: f64,
        alert: NaiveDate,
        filter: NaiveDate,
    },
    /// Water climbs linearly from `from` at `ppm_per_month`.
    WaterIngress {
        from: NaiveDate,
        ppm_per_month: f64,
    },
    /// The oil in service at the start has sheared down and oxidised; changed on `changed`.
    FluidChange {
        changed: NaiveDate,
    },
    /// No walk-round checks from `from` to `until` (inclusive).
    MissingWeeks {
        from: NaiveDate,
        until: NaiveDate,
    },
}

pub(super) struct MachineDef {
    pub(super) tag: &'static str,
    pub(super) name: &'static str,
    pub(super) kind: &'static str,
}

pub(super) struct FluidDef {
    pub(super) name: &'static str,
    pub(super) vg: u32,
    pub(super) kv40: f64,
    pub(super) kv100: f64,
    pub(super) acid: f64,
    pub(super) base: &'static str,
}

pub(super) struct UnitDef {
    pub(super) machine: usize,
    pub(super) tag: &'static str,
    pub(super) pump: PumpKind,
    pub(super) rated_lpm: f64,
    pub(super) relief_bar: f64,
    pub(super) reservoir_l: f64,
    pub(super) component: SensitiveComponent,
    pub(super) fluid: usize,
    pub(super) bore_mm: f64,
    pub(super) rod_mm: Option<f64>,
    pub(super) stroke_mm: f64,
    pub(super) direction: StrokeDirection,
    /// Pressure during the timed stroke.
    pub(super) work_bar: f64,
    /// Reservoir minus ambient in steady work, healthy.
    pub(super) heat_rise_k: f64,
    /// Internal leakage as a share of rated flow at work pressure and 45 °C, healthy.
    pub(super) leak_share: f64,
    pub(super) monthly_samples: bool,
    pub(super) case_drain: bool,
    pub(super) cycle_s: Option<f64>,
    pub(super) hours_at_start: f64,
    /// Litres lost per week (evaporation, weeps) until a top-up.
    pub(super) loss_l_per_week: f64,
    /// ISO 4406 codes of the oil in normal service.
    pub(super) clean_codes: [f64; 3],
    pub(super) water_ppm: f64,
    /// Bench counter that reports only a written code.
    pub(super) code_only_bench: bool,
    pub(super) fault: Fault,
}

pub(super) const MACHINES: [MachineDef; 8] = [
    MachineDef {
        tag: "PR-01",
        name: "Four-post press 400 t",
        kind: "press",
    },
    MachineDef {
        tag: "PR-02",
        name: "Straightening press 150 t",
        kind: "press",
    },
    MachineDef {
        tag: "PB-03",
        name: "Press brake 220 t",
        kind: "press brake",
    },
    MachineDef {
        tag: "SH-04",
        name: "Guillotine shear 13 mm",
        kind: "shear",
    },
    MachineDef {
        tag: "IM-05",
        name: "Injection moulder 350 t",
        kind: "injection moulder",
    },
    MachineDef {
        tag: "PB-06",
        name: "Press brake 110 t",
        kind: "press brake",
    },
    MachineDef {
        tag: "TP-07",
        name: "Trim press 80 t",
        kind: "press",
    },
    MachineDef {
        tag: "DP-08",
        name: "Deep-draw press 630 t",
        kind: "press",
    },
];

pub(super) const FLUIDS: [FluidDef; 4] = [
    FluidDef {
        name: "Stock HM 46",
        vg: 46,
        kv40: 46.0,
        kv100: 6.8,
        acid: 0.4,
        base: "mineral",
    },
    FluidDef {
        name: "Stock HM 32",
        vg: 32,
        kv40: 32.0,
        kv100: 5.4,
        acid: 0.4,
        base: "mineral",
    },
    FluidDef {
        name: "Stock HV 32",
        vg: 32,
        kv40: 32.5,
        kv100: 6.3,
        acid: 0.3,
        base: "mineral, shear-stable VI improver",
    },
    FluidDef {
        name: "Stock HM 68",
        vg: 68,
        kv40: 68.0,
        kv100: 8.7,
        acid: 0.5,
        base: "mineral",
    },
];

/// Technicians of the invented shop.
pub(super) const PEOPLE: [&str; 3] = ["R. Quennell", "M. Okafor-Lund", "J. Halvorsen-Pike"];
/// Who signs for maintenance work.
pub(super) const FITTER: &str = "S. Brannagh";

pub(super) fn units_def() -> Vec<UnitDef> {
    use PumpKind as P;
    use SensitiveComponent as S;
    use StrokeDirection::{Extend, Retract};
    let base = |machine, tag, pump, component, fluid| UnitDef {
        machine,
        tag,
        pump,
        rated_lpm: 0.0,
        relief_bar: 0.0,
        reservoir_l: 0.0,
        component,
        fluid,
        bore_mm: 0.0,
        rod_mm: None,
        stroke_mm: 0.0,
        direction: Extend,
        work_bar: 0.0,
        heat_rise_k: 20.0,
        leak_share: 0.09,
        monthly_samples: false,
        case_drain: false,
        cycle_s: None,
        hours_at_start: 20_000.0,
        loss_l_per_week: 1.0,
        clean_codes: [18.0, 16.0, 13.0],
        water_ppm: 100.0,
        code_only_bench: false,
        fault: Fault::None,
    };
    vec![
        UnitDef {
            rated_lpm: 180.0,
            relief_bar: 280.0,
            reservoir_l: 800.0,
            bore_mm: 320.0,
            rod_mm: Some(220.0),
            stroke_mm: 250.0,
            work_bar: 120.0,
            heat_rise_k: 21.0,
            leak_share: 0.08,
            case_drain: true,
            cycle_s: Some(14.0),
            hours_at_start: 31_250.0,
            loss_l_per_week: 3.0,
            clean_codes: [16.0, 14.0, 11.0],
            water_ppm: 80.0,
            ..base(0, "PR-01-M", P::PistonVariable, S::ProportionalValve, 0)
        },
        UnitDef {
            rated_lpm: 40.0,
            relief_bar: 160.0,
            reservoir_l: 150.0,
            bore_mm: 125.0,
            rod_mm: Some(90.0),
            stroke_mm: 400.0,
            direction: Retract,
            work_bar: 70.0,
            heat_rise_k: 14.0,
            leak_share: 0.10,
            hours_at_start: 31_240.0,
            loss_l_per_week: 0.6,
            water_ppm: 110.0,
            ..base(0, "PR-01-C", P::Gear, S::Cylinder, 0)
        },
        UnitDef {
            rated_lpm: 60.0,
            relief_bar: 210.0,
            reservoir_l: 250.0,
            bore_mm: 160.0,
            rod_mm: Some(110.0),
            stroke_mm: 300.0,
            work_bar: 90.0,
            heat_rise_k: 18.0,
            leak_share: 0.07,
            monthly_samples: true,
            hours_at_start: 18_400.0,
            loss_l_per_week: 0.8,
            clean_codes: [15.0, 13.0, 10.0],
            water_ppm: 70.0,
            fault: Fault::Contamination {
                repair: date(2026, 2, 10),
                codes: 2.5,
                alert: date(2026, 3, 27),
                filter: date(2026, 4, 14),
            },
            ..base(1, "PR-02-A", P::PistonFixed, S::ServoValve, 0)
        },
        UnitDef {
            rated_lpm: 110.0,
            relief_bar: 300.0,
            reservoir_l: 400.0,
            bore_mm: 200.0,
            stroke_mm: 200.0,
            work_bar: 140.0,
            heat_rise_k: 20.0,
            leak_share: 0.09,
            case_drain: true,
            cycle_s: Some(9.5),
            hours_at_start: 24_800.0,
            loss_l_per_week: 1.5,
            clean_codes: [16.0, 14.0, 11.0],
            water_ppm: 95.0,
            fault: Fault::PumpWear {
                from: date(2025, 12, 1),
                factor: 3.2,
            },
            ..base(2, "PB-03-A", P::PistonVariable, S::PistonPumpVariable, 0)
        },
        UnitDef {
            rated_lpm: 90.0,
            relief_bar: 200.0,
            reservoir_l: 300.0,
            bore_mm: 180.0,
            rod_mm: Some(125.0),
            stroke_mm: 250.0,
            work_bar: 110.0,
            heat_rise_k: 17.0,
            leak_share: 0.09,
            monthly_samples: true,
            hours_at_start: 41_900.0,
            loss_l_per_week: 1.2,
            water_ppm: 90.0,
            fault: Fault::WaterIngress {
                from: date(2026, 3, 1),
                ppm_per_month: 95.0,
            },
            ..base(3, "SH-04-A", P::Vane, S::VanePump, 1)
        },
        UnitDef {
            rated_lpm: 150.0,
            relief_bar: 175.0,
            reservoir_l: 600.0,
            bore_mm: 250.0,
            rod_mm: Some(160.0),
            stroke_mm: 350.0,
            direction: Retract,
            work_bar: 100.0,
            heat_rise_k: 20.0,
            leak_share: 0.08,
            monthly_samples: true,
            cycle_s: Some(32.0),
            hours_at_start: 12_300.0,
            loss_l_per_week: 2.0,
            clean_codes: [16.0, 14.0, 11.0],
            water_ppm: 85.0,
            code_only_bench: true,
            fault: Fault::CoolerFouling {
                from: date(2026, 2, 6),
                until: date(2026, 7, 17),
                factor: 1.7,
                cleaned: date(2026, 7, 20),
            },
            ..base(4, "IM-05-A", P::PistonVariable, S::ProportionalValve, 0)
        },
        UnitDef {
            rated_lpm: 25.0,
            relief_bar: 140.0,
            reservoir_l: 60.0,
            bore_mm: 80.0,
            rod_mm: Some(45.0),
            stroke_mm: 300.0,
            work_bar: 60.0,
            heat_rise_k: 12.0,
            leak_share: 0.11,
            hours_at_start: 12_290.0,
            loss_l_per_week: 0.3,
            water_ppm: 120.0,
            ..base(4, "IM-05-B", P::Gear, S::GearPump, 0)
        },
        UnitDef {
            rated_lpm: 60.0,
            relief_bar: 250.0,
            reservoir_l: 200.0,
            bore_mm: 140.0,
            stroke_mm: 200.0,
            work_bar: 120.0,
            heat_rise_k: 19.0,
            leak_share: 0.09,
            hours_at_start: 36_700.0,
            loss_l_per_week: 0.9,
            water_ppm: 130.0,
            fault: Fault::FluidChange {
                changed: date(2025, 11, 5),
            },
            ..base(5, "PB-06-A", P::Vane, S::VanePump, 2)
        },
        UnitDef {
            rated_lpm: 45.0,
            relief_bar: 180.0,
            reservoir_l: 120.0,
            bore_mm: 125.0,
            stroke_mm: 250.0,
            work_bar: 80.0,
            heat_rise_k: 15.0,
            leak_share: 0.10,
            hours_at_start: 8_800.0,
            loss_l_per_week: 0.5,
            water_ppm: 140.0,
            fault: Fault::MissingWeeks {
                from: date(2026, 6, 1),
                until: date(2026, 7, 26),
            },
            ..base(6, "TP-07-A", P::Gear, S::Cylinder, 0)
        },
        UnitDef {
            rated_lpm: 250.0,
            relief_bar: 315.0,
            reservoir_l: 1200.0,
            bore_mm: 400.0,
            rod_mm: Some(280.0),
            stroke_mm: 300.0,
            work_bar: 150.0,
            heat_rise_k: 23.0,
            leak_share: 0.08,
            case_drain: true,
            cycle_s: Some(21.0),
            hours_at_start: 27_600.0,
            loss_l_per_week: 4.0,
            clean_codes: [16.0, 14.0, 11.0],
            water_ppm: 75.0,
            ..base(7, "DP-08-M", P::PistonVariable, S::ProportionalValve, 3)
        },
        UnitDef {
            rated_lpm: 80.0,
            relief_bar: 200.0,
            reservoir_l: 300.0,
            bore_mm: 220.0,
            rod_mm: Some(160.0),
            stroke_mm: 250.0,
            direction: Retract,
            work_bar: 90.0,
            heat_rise_k: 16.0,
            leak_share: 0.08,
            hours_at_start: 27_590.0,
            loss_l_per_week: 1.0,
            clean_codes: [17.0, 15.0, 12.0],
            water_ppm: 100.0,
            ..base(7, "DP-08-C", P::PistonFixed, S::PistonPumpFixed, 3)
        },
    ]
}
