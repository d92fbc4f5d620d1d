//! What really happened in a simulated shop: which units are healthy, which fault each faulty
//! unit carries (kind, onset, the week its noise-free signal reaches the act limit, the repair),
//! and every reading that was mistyped on purpose. Written beside the shop's CSV files as
//! `truth.json` and read back by the scorer.
//!
//! Plain data; no files here.

use chrono::NaiveDate;
use serde::{Deserialize, Serialize};

/// The faults a unit can carry (at most one per unit).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum FaultKind {
    /// Internal leakage of the pump grows week by week (its leak conductance rises).
    PumpWear,
    /// The cooler's conductance falls week by week; the oil runs hotter.
    CoolerFouling,
    /// The relief valve starts to pass oil at working pressure: a step at onset.
    ReliefBypass,
    /// Water gets into the oil (a leaking cooler, a breather, wash-down).
    WaterIngress,
    /// Dirt gets in (a worn rod wiper, an open reservoir); the oil grows dirtier.
    ParticleIngress,
    /// The oil thins (sheared, or topped up with a lighter oil).
    ViscosityLoss,
}

impl FaultKind {
    pub const ALL: [FaultKind; 6] = [
        FaultKind::PumpWear,
        FaultKind::CoolerFouling,
        FaultKind::ReliefBypass,
        FaultKind::WaterIngress,
        FaultKind::ParticleIngress,
        FaultKind::ViscosityLoss,
    ];

    pub fn as_str(self) -> &'static str {
        match self {
            FaultKind::PumpWear => "pump_wear",
            FaultKind::CoolerFouling => "cooler_fouling",
            FaultKind::ReliefBypass => "relief_bypass",
            FaultKind::WaterIngress => "water_ingress",
            FaultKind::ParticleIngress => "particle_ingress",
            FaultKind::ViscosityLoss => "viscosity_loss",
        }
    }

    /// Whether a flag of `flag_kind` (the engine's flag kinds in `status --json`, and the
    /// fixed rule's) is one this fault can raise: the signals it moves in the simulation. A
    /// fault of the pump, relief valve or cooler moves what the walk-round reads (flow, case
    /// drain, heat, the oil temperature and their drifts); a fluid fault moves its own sample
    /// figure (the filter's indicator too for dirt). After a repair only these flags have had
    /// their cause removed.
    pub fn raises(self, flag_kind: &str) -> bool {
        match self {
            FaultKind::PumpWear | FaultKind::ReliefBypass | FaultKind::CoolerFouling => matches!(
                flag_kind,
                "lost_flow"
                    | "leak_conductance"
                    | "case_drain"
                    | "heat_rise"
                    | "reservoir_temp"
                    | "drift"
                    | "stroke_time"
                    | "oil_temp"
            ),
            FaultKind::WaterIngress => flag_kind == "water",
            FaultKind::ParticleIngress => matches!(flag_kind, "cleanliness" | "filter"),
            FaultKind::ViscosityLoss => matches!(flag_kind, "viscosity" | "kv40"),
        }
    }

    /// Whether the fault appears at once (a step) rather than developing over weeks.
    pub fn is_step(self) -> bool {
        self == FaultKind::ReliefBypass
    }
}

impl std::fmt::Display for FaultKind {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.as_str())
    }
}

/// One planted fault. Weeks are indices into [`Truth::weeks`].
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Fault {
    pub kind: FaultKind,
    /// First week whose readings carry the fault.
    pub onset_week: usize,
    /// First week whose noise-free signal reaches the act limit of the default limits
    /// (lost flow 15 %, heat-rise drift +10 K, water above 500 ppm, KV40 10 % below new,
    /// 2 range numbers over the cleanliness target).
    pub detectable_week: usize,
    /// The week whose check first follows the repair (the event is dated before that check),
    /// or `None` when the fault is left in place to the end.
    pub repair_week: Option<usize>,
    /// The event kind that records the repair (`rebuild`, `repair`, `cooler_clean`,
    /// `filter_change`, `fluid_change`).
    pub repair_event: Option<String>,
    /// For a fault seen at the check (pump wear, cooler fouling, relief valve bypass): each
    /// check from the onset to the repair as the same unit without the fault would have read,
    /// so a rule's act on the faulty unit can be told from one it raises on the sound unit too.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub twin: Vec<TwinCheck>,
}

/// One check of a faulty unit as the same unit without its fault would have read it: the same
/// person, stopwatch and thermometer, at the oil and flow the sound unit has.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct TwinCheck {
    pub week: usize,
    pub stroke_time_s: f64,
    pub reservoir_temp_c: f64,
}

/// One unit of the simulated shop.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct UnitTruth {
    /// Unit tag, as in the CSV files.
    pub unit: String,
    pub healthy: bool,
    pub fault: Option<Fault>,
}

/// One reading typed wrong on purpose.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Slip {
    pub unit: String,
    /// `checks` or `samples`.
    pub file: String,
    /// Week index of the reading.
    pub week: usize,
    /// The reading's time as written in the CSV file.
    pub at: String,
    /// The CSV column mistyped.
    pub field: String,
    /// What should have been typed, and what was.
    pub intended: f64,
    pub typed: f64,
    /// `swapped_digits` or `slipped_decimal`.
    pub how: String,
}

/// Everything the scorer needs to know that the shop's files do not say.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Truth {
    /// Name of the parameter set (`main`, `held_out`, ...).
    pub set: String,
    pub seed: u64,
    /// The walk-round day of every week, oldest first; the shop is judged at the end of each.
    pub weeks: Vec<NaiveDate>,
    pub units: Vec<UnitTruth>,
    pub slips: Vec<Slip>,
}
