//! The simulated shop's parameters: the named sets (size, weeks, fault and slip rates) the
//! benchmark runs. It must not simulate.

use chrono::{Duration, NaiveDate};

use crate::sim::truth::FaultKind;

/// The knobs of one simulated shop. Two sets are named: [`Params::main`] and
/// [`Params::held_out`] (other seed, climate, pump sizes, scatter, sampling and slip rate).
#[derive(Clone, Debug, PartialEq)]
pub struct Params {
    pub set: String,
    pub seed: u64,
    pub healthy: usize,
    pub faulty_per_kind: usize,
    pub weeks: usize,
    /// The first walk-round day.
    pub start: NaiveDate,
    /// The hall's seasonal low and high, °C (coldest around mid-January).
    pub ambient_low_c: f64,
    pub ambient_high_c: f64,
    /// Week-to-week weather, K (one σ, shop-wide, correlated from week to week).
    pub weather_sd_k: f64,
    /// Rated pump flow, L/min (log-uniform between the two).
    pub rated_flow_lpm: (f64, f64),
    /// Stopwatch scatter of a unit's timed stroke, as a fraction (uniform per unit).
    pub stopwatch_sd: (f64, f64),
    /// Heat rise (oil over hall) of a healthy unit at its usual load, K.
    pub heat_rise_k: (f64, f64),
    pub sample_every_weeks: usize,
    /// Share of readings (checks, samples) with one mistyped value.
    pub slip_rate: f64,
    /// Share of unit-weeks without a check besides the shop's shutdown week.
    pub missed_rate: f64,
    /// Share of units whose oil is changed on plan during the record (a new era).
    pub fluid_change_share: f64,
    /// How many weeks a job runs before the unit switches pressure.
    pub job_weeks: (usize, usize),
    /// Weights of the four fluids in service.
    pub fluid_weights: [f64; 4],
}

impl Params {
    /// The benchmark's main shop: 64 healthy and 48 faulty units (8 of each fault), two years
    /// of weekly checks and quarterly samples in a hall of about 8 to 28 °C.
    pub fn main() -> Params {
        Params {
            set: "main".into(),
            seed: 0x0051_A10F_D37E_C7ED,
            healthy: 64,
            faulty_per_kind: 8,
            weeks: 104,
            start: NaiveDate::from_ymd_opt(2024, 12, 2).unwrap_or(NaiveDate::MIN),
            ambient_low_c: 8.0,
            ambient_high_c: 28.0,
            weather_sd_k: 1.5,
            rated_flow_lpm: (20.0, 200.0),
            stopwatch_sd: (0.02, 0.04),
            heat_rise_k: (10.0, 22.0),
            sample_every_weeks: 13,
            slip_rate: 1.0 / 200.0,
            missed_rate: 0.04,
            fluid_change_share: 0.2,
            job_weeks: (3, 8),
            fluid_weights: [0.2, 0.5, 0.15, 0.15],
        }
    }

    /// The held-out shop: other seed and other ranges everywhere — a hot hall (about 16 to
    /// 36 °C, rougher weather), bigger pumps, wider stopwatch scatter, monthly samples, more
    /// slips and missed weeks, shorter jobs, more fluid changes, thinner oils.
    pub fn held_out() -> Params {
        Params {
            set: "held_out".into(),
            seed: 0x0DD_BA11_2027_0042,
            healthy: 48,
            faulty_per_kind: 6,
            weeks: 104,
            start: NaiveDate::from_ymd_opt(2024, 11, 13).unwrap_or(NaiveDate::MIN),
            ambient_low_c: 16.0,
            ambient_high_c: 36.0,
            weather_sd_k: 2.5,
            rated_flow_lpm: (60.0, 400.0),
            stopwatch_sd: (0.015, 0.05),
            heat_rise_k: (8.0, 18.0),
            sample_every_weeks: 4,
            slip_rate: 1.0 / 120.0,
            missed_rate: 0.07,
            fluid_change_share: 0.3,
            job_weeks: (2, 6),
            fluid_weights: [0.45, 0.2, 0.3, 0.05],
        }
    }

    /// A parameter set by name: `main` or `held_out` (`held-out` too).
    pub fn by_name(name: &str) -> Option<Params> {
        match name.trim() {
            "main" => Some(Params::main()),
            "held_out" | "held-out" => Some(Params::held_out()),
            _ => None,
        }
    }

    pub fn validate(&self) -> Result<(), String> {
        if self.weeks < 20 || self.weeks > 520 {
            return Err("weeks must be between 20 and 520".into());
        }
        if self.healthy + self.faulty_per_kind * FaultKind::ALL.len() == 0 {
            return Err("the shop needs at least one unit".into());
        }
        if self.healthy + self.faulty_per_kind * FaultKind::ALL.len() > 999 {
            return Err("at most 999 units".into());
        }
        if self.sample_every_weeks == 0 {
            return Err("sample_every_weeks must be at least 1".into());
        }
        Ok(())
    }

    /// The walk-round day of week `w`.
    pub fn week_day(&self, w: usize) -> NaiveDate {
        self.start + Duration::weeks(w as i64)
    }
}
