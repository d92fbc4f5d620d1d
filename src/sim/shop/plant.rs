//! The plant of one simulated unit: oil density and viscosity, the unit's design drawn from the
//! seed, its planted fault and when the fault's noise-free signal reaches the act limit. It
//! must not write records.

use super::*;

use chrono::{DateTime, Datelike, Duration, NaiveDate, TimeZone, Utc};

use crate::model::{PumpKind, SensitiveComponent, StrokeDirection, TimedStroke};
use crate::physics::cleanliness::{code_from_counts, ranges_above, target_for, Iso4406Code};
use crate::physics::hydraulics::displaced_volume;
use crate::physics::viscosity::Walther;
use crate::sim::truth::FaultKind;

/// Density of a mineral hydraulic oil at `t_c`, kg/m³ (about 870 at 15 °C, 0.065 %/K expansion;
/// typical data-sheet values, common practice).
fn density(t_c: f64) -> f64 {
    870.0 * (1.0 - 0.00065 * (t_c - 15.0))
}

/// Dynamic viscosity, Pa·s, of the oil of line `w` at `t_c`.
pub(super) fn dyn_visc(w: &Walther, t_c: f64) -> f64 {
    w.at(Temperature::from_c(t_c.clamp(-20.0, 150.0))).si() * density(t_c)
}

/// The fixed design of one simulated unit (SI).
#[derive(Clone, Debug)]
pub(super) struct Plant {
    pub(super) pump: PumpKind,
    /// Displacement flow, m³/s.
    pub(super) q_th: f64,
    pub(super) relief: f64,
    /// Job pressures, Pa.
    pub(super) jobs: Vec<f64>,
    pub(super) p_nom: f64,
    pub(super) stroke: TimedStroke,
    /// Stroke volume, m³.
    pub(super) volume: f64,
    pub(super) reservoir_l: f64,
    pub(super) fluid: usize,
    pub(super) component: SensitiveComponent,
    /// Leak conductance of the healthy pump, m³ (q_leak = g · p / μ).
    pub(super) g0: f64,
    /// Cooler and tank conductance of the healthy unit, W/K.
    k0: f64,
    base_frac: f64,
    pub(super) duty: f64,
    idle_w: f64,
    pub(super) rise0: f64,
    pub(super) hall_offset: f64,
    pub(super) stopwatch_sd: f64,
    pub(super) hours_per_week: f64,
    /// Share of the leakage that leaves through the case drain (piston pumps).
    pub(super) case_share: f64,
    pub(super) case_lube: f64,
    /// Continuous ISO 4406 level (log2 of count/0.01 per mL) per size, and the target.
    pub(super) clean_level: [f64; 3],
    pub(super) target: Iso4406Code,
    pub(super) target_scales: [f64; 3],
    pub(super) water_base: f64,
    pub(super) acid_new: f64,
    pub(super) acid_rate_per_year: f64,
    pub(super) kv_batch: f64,
    pub(super) oxidation_per_year: f64,
    pub(super) loss_l_per_week: f64,
    pub(super) filter_hours: f64,
}

impl Plant {
    fn loss_w(&self, p: f64, duty: f64, g: f64, q_bp: f64, mu: f64) -> f64 {
        duty * (g * p / mu + q_bp + self.base_frac * self.q_th) * p + self.idle_w
    }

    /// The oil's settled temperature, °C, and the leakage there.
    pub(super) fn settle(&self, amb: f64, p: f64, duty: f64, f: &FaultNow, oil: &Walther) -> f64 {
        let mut t = amb + self.rise0;
        for _ in 0..60 {
            let mu = dyn_visc(oil, t);
            let next = amb + self.loss_w(p, duty, f.g, f.q_bp, mu) / f.k;
            let next = next.min(140.0);
            if (next - t).abs() < 1e-7 {
                return next;
            }
            t = 0.5 * (t + next);
        }
        t
    }

    /// Effective flow into the timed stroke, m³/s.
    pub(super) fn flow(&self, p: f64, t_c: f64, f: &FaultNow, oil: &Walther) -> f64 {
        let q = self.q_th - f.g * p / dyn_visc(oil, t_c) - f.q_bp;
        q.max(0.2 * self.q_th)
    }

    pub(super) fn leak(&self, p: f64, t_c: f64, g: f64, oil: &Walther) -> f64 {
        g * p / dyn_visc(oil, t_c)
    }
}

/// The state of a unit's fault in one week.
#[derive(Clone, Copy, Debug)]
pub(super) struct FaultNow {
    pub(super) g: f64,
    k: f64,
    q_bp: f64,
    pub(super) water_add: f64,
    pub(super) dirt_add: f64,
    pub(super) visc_factor: f64,
}

/// How a planted fault develops: `span` weeks from onset to the act limit at the usual
/// conditions (0 for a step).
#[derive(Clone, Debug)]
pub(super) struct Planted {
    pub(super) kind: FaultKind,
    pub(super) onset: usize,
    pub(super) span: f64,
    /// Size of the fault at `span` (its meaning depends on the kind).
    pub(super) size: f64,
    pub(super) repair: Option<usize>,
}

impl Planted {
    pub(super) fn now(&self, pl: &Plant, w: usize, water_base: f64) -> FaultNow {
        let mut f = FaultNow {
            g: pl.g0,
            k: pl.k0,
            q_bp: 0.0,
            water_add: 0.0,
            dirt_add: 0.0,
            visc_factor: 1.0,
        };
        if w < self.onset || self.repair.is_some_and(|r| w >= r) {
            return f;
        }
        let s = (w - self.onset) as f64 + 1.0;
        let x = if self.span > 0.0 { s / self.span } else { 1.0 };
        match self.kind {
            FaultKind::PumpWear => f.g = pl.g0 + self.size * x.min(2.0).powf(1.5),
            FaultKind::CoolerFouling => f.k = pl.k0 / (1.0 + self.size * x.min(1.8)),
            FaultKind::ReliefBypass => f.q_bp = self.size,
            FaultKind::WaterIngress => f.water_add = ((520.0 - water_base) * x).min(1500.0),
            FaultKind::ParticleIngress => f.dirt_add = self.size * x.min(1.6),
            FaultKind::ViscosityLoss => f.visc_factor = 1.0 - 0.105 * x.min(1.9),
        }
        f
    }
}

/// `x` rounded to a multiple of `step` (a power of ten), as the decimal a person writes.
pub(super) fn round_to(x: f64, step: f64) -> f64 {
    let decimals = (-step.log10()).round().max(0.0) as usize;
    let text = format!("{:.*}", decimals, (x / step).round() * step);
    text.parse().unwrap_or(x)
}

pub(super) fn at(d: NaiveDate, seconds: i64) -> DateTime<Utc> {
    let naive = d.and_hms_opt(0, 0, 0).unwrap_or_default() + Duration::seconds(seconds);
    Utc.from_utc_datetime(&naive)
}

/// The hall's temperature on day `d` without weather, °C (coldest about 15 January).
pub(super) fn seasonal(p: &Params, d: NaiveDate) -> f64 {
    let doy = f64::from(d.ordinal());
    let mid = 0.5 * (p.ambient_low_c + p.ambient_high_c);
    let half = 0.5 * (p.ambient_high_c - p.ambient_low_c);
    mid - half * (2.0 * std::f64::consts::PI * (doy - 15.0) / 365.25).cos()
}

/// The week around New Year when the shop stands and nobody walks the round.
pub(super) fn round_missed_by_shop(d: NaiveDate) -> bool {
    (d.month() == 12 && d.day() >= 24) || (d.month() == 1 && d.day() <= 1)
}

/// Shutdown weeks: few run hours, and the check meets oil that has just been started.
pub(super) fn shutdown(d: NaiveDate) -> bool {
    round_missed_by_shop(d)
        || (d.month() == 1 && d.day() <= 7)
        || (d.month() == 8 && (5..=18).contains(&d.day()))
}

fn code_of(level: [f64; 3]) -> Option<Iso4406Code> {
    code_from_counts(level.map(|l| 0.01 * 2f64.powf(l)), None).ok()
}

fn over_target(level: [f64; 3], target: &Iso4406Code) -> i32 {
    code_of(level)
        .map(|c| {
            ranges_above(&c, target)
                .iter()
                .filter_map(|x| *x)
                .max()
                .unwrap_or(0)
        })
        .unwrap_or(0)
}

fn pick_weighted(r: &mut Rng, w: &[f64]) -> usize {
    let total: f64 = w.iter().sum();
    let mut x = r.uniform() * total;
    for (i, wi) in w.iter().enumerate() {
        if x < *wi {
            return i;
        }
        x -= wi;
    }
    w.len() - 1
}

pub(super) fn design(p: &Params, r: &mut Rng) -> Plant {
    let pump = [
        PumpKind::Gear,
        PumpKind::Vane,
        PumpKind::PistonFixed,
        PumpKind::PistonVariable,
    ][r.int(0, 3)];
    let (lo, hi) = p.rated_flow_lpm;
    let rated_lpm = round_to((lo.ln() + (hi.ln() - lo.ln()) * r.uniform()).exp(), 1.0);
    let q_th = Flow::from_lpm(rated_lpm * r.range(1.0, 1.04)).si();
    let relief_bar = match pump {
        PumpKind::Gear | PumpKind::Vane => round_to(r.range(140.0, 210.0), 5.0),
        _ => round_to(r.range(200.0, 315.0), 5.0),
    };
    // The unit's usual working pressure, and two or three jobs within a fifth of it (parts of
    // one family on one press).
    let usual_bar = relief_bar * r.range(0.5, 0.75);
    let n_jobs = r.int(2, 3);
    let jobs: Vec<f64> = (0..n_jobs)
        .map(|_| Pressure::from_bar(round_to(usual_bar * r.range(0.8, 1.2), 5.0)).si())
        .collect();
    let p_nom = jobs.iter().sum::<f64>() / jobs.len() as f64;
    // The timed stroke: a stopwatch time of 2.5 to 8 s at the rated flow.
    let t_nom = r.range(2.5, 8.0);
    let v_target = q_th * t_nom;
    let bores = [63.0, 80.0, 100.0, 125.0, 160.0, 200.0, 250.0, 320.0];
    let extend = r.chance(0.7);
    let mut best = None;
    for &b in &bores {
        let rod = round_to(b * r.range(0.5, 0.7), 5.0);
        let area_mm2 = if extend {
            std::f64::consts::PI / 4.0 * b * b
        } else {
            std::f64::consts::PI / 4.0 * (b * b - rod * rod)
        };
        let len_mm = v_target / (area_mm2 * 1e-6) * 1e3;
        if (150.0..=1500.0).contains(&len_mm) {
            best = Some((b, rod, round_to(len_mm, 5.0)));
            break;
        }
    }
    let (bore, rod, len) = best.unwrap_or((320.0, 200.0, 1500.0));
    let stroke = TimedStroke {
        bore: Length::from_mm(bore),
        rod: Some(Length::from_mm(rod)),
        length: Length::from_mm(len),
        direction: if extend {
            StrokeDirection::Extend
        } else {
            StrokeDirection::Retract
        },
    };
    let volume = displaced_volume(&stroke).map_or(v_target, |v| v.si());
    let component = match pump {
        PumpKind::PistonVariable => [
            SensitiveComponent::PistonPumpVariable,
            SensitiveComponent::ProportionalValve,
            SensitiveComponent::ServoValve,
        ][r.int(0, 2)],
        PumpKind::PistonFixed => [
            SensitiveComponent::PistonPumpFixed,
            SensitiveComponent::ProportionalValve,
        ][r.int(0, 1)],
        PumpKind::Vane => [SensitiveComponent::VanePump, SensitiveComponent::Cylinder][r.int(0, 1)],
        PumpKind::Gear => [SensitiveComponent::GearPump, SensitiveComponent::Cylinder][r.int(0, 1)],
    };
    let fluid = pick_weighted(r, &p.fluid_weights);
    // Volumetric efficiency of a sound pump at its usual pressure (about two thirds of the
    // relief setting) and oil temperature: catalogue values at rated pressure (gear and vane
    // about 0.90 to 0.95, piston 0.94 to 0.97) with the leakage scaled down to the lower
    // pressure (common practice, no published source).
    let eta = match pump {
        PumpKind::PistonFixed | PumpKind::PistonVariable => r.range(0.96, 0.985),
        PumpKind::Vane | PumpKind::Gear => r.range(0.93, 0.97),
    };
    let rise0 = r.range(p.heat_rise_k.0, p.heat_rise_k.1);
    let kv_batch = r.range(0.97, 1.03);
    let (_, _, kv40, kv100) = FLUIDS[fluid];
    let oil = Walther::from_kv40_kv100(
        Viscosity::from_cst(kv40 * kv_batch),
        Viscosity::from_cst(kv100 * kv_batch),
    )
    .ok();
    let t_nom_c = 18.0 + rise0;
    let mu_nom = oil.as_ref().map_or(0.03, |w| dyn_visc(w, t_nom_c));
    let g0 = (1.0 - eta) * q_th * mu_nom / p_nom;
    // Most of a press circuit's heat comes from throttling, valve and line losses and the
    // pump's and motor's mechanical losses, not from the pump's internal leakage.
    let base_frac = r.range(0.15, 0.35);
    let duty = r.range(0.3, 0.7);
    let relief = Pressure::from_bar(relief_bar).si();
    let idle_w = 0.02 * q_th * relief;
    let mut pl = Plant {
        pump,
        q_th,
        relief,
        jobs,
        p_nom,
        stroke,
        volume,
        reservoir_l: round_to(rated_lpm * r.range(2.5, 5.0), 10.0).max(20.0),
        fluid,
        component,
        g0,
        k0: 1.0,
        base_frac,
        duty,
        idle_w,
        rise0,
        hall_offset: r.range(-1.5, 1.5),
        stopwatch_sd: r.range(p.stopwatch_sd.0, p.stopwatch_sd.1),
        hours_per_week: [40.0, 80.0, 112.0][r.int(0, 2)] * r.range(0.85, 1.0),
        case_share: r.range(0.7, 0.9),
        case_lube: q_th * r.range(0.003, 0.008),
        clean_level: [0.0; 3],
        target: target_for(component, Some(Pressure::from_bar(relief_bar))),
        target_scales: [0.0; 3],
        water_base: r.range(40.0, 150.0),
        acid_new: r.range(0.3, 0.5),
        acid_rate_per_year: r.range(0.02, 0.07),
        kv_batch,
        oxidation_per_year: r.range(0.002, 0.01),
        loss_l_per_week: 0.0,
        filter_hours: r.range(2000.0, 3500.0),
    };
    pl.loss_l_per_week = pl.reservoir_l * r.range(0.002, 0.006);
    // The cooler conductance that gives the chosen heat rise at the usual load in an 18 °C hall.
    pl.k0 = pl.loss_w(pl.p_nom, pl.duty, pl.g0, 0.0, mu_nom) / rise0;
    let target: Vec<f64> = pl
        .target
        .scales()
        .iter()
        .map(|s| match s {
            Some(crate::physics::cleanliness::Scale::Number(n)) => f64::from(*n),
            _ => 18.0,
        })
        .collect();
    let below = r.range(0.5, 2.2);
    for (i, &t) in target.iter().enumerate().take(3) {
        pl.target_scales[i] = t;
        // A level `l` has counts 0.01·2^l per mL: code `t` holds levels in (t−1, t].
        pl.clean_level[i] = t - below + r.range(-0.3, 0.3);
    }
    pl
}

/// The noise-free signal of `kind` in week conditions, compared with its act limit.
#[allow(clippy::too_many_arguments)]
pub(super) fn reaches_act(
    pl: &Plant,
    kind: FaultKind,
    f: &FaultNow,
    healthy: &FaultNow,
    amb: f64,
    p: f64,
    duty: f64,
    oil_now: &Walther,
    water_true: f64,
    level: [f64; 3],
    kv40_ratio: f64,
) -> bool {
    match kind {
        FaultKind::PumpWear | FaultKind::ReliefBypass => {
            let t_h = pl.settle(amb, p, duty, healthy, oil_now);
            let t_f = pl.settle(amb, p, duty, f, oil_now);
            let lost = 1.0 - pl.flow(p, t_f, f, oil_now) / pl.flow(p, t_h, healthy, oil_now);
            lost >= 0.15
        }
        FaultKind::CoolerFouling => {
            pl.settle(amb, p, duty, f, oil_now) - pl.settle(amb, p, duty, healthy, oil_now) >= 10.0
        }
        FaultKind::WaterIngress => water_true > 500.0,
        FaultKind::ParticleIngress => over_target(level, &pl.target) >= 2,
        FaultKind::ViscosityLoss => kv40_ratio - 1.0 <= -0.10,
    }
}

/// Faults seen only in a fluid sample.
pub(super) fn sample_borne(kind: FaultKind) -> bool {
    matches!(
        kind,
        FaultKind::WaterIngress | FaultKind::ParticleIngress | FaultKind::ViscosityLoss
    )
}
