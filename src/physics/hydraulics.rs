//! Fluid-power arithmetic of a unit's timed stroke: displaced volume, effective flow, lost
//! flow, volumetric efficiency, hydraulic and heat power, and the temperature-compensated
//! leak conductance; and the bench figures of a cylinder's force and of oil speed in a line.
//!
//! Pure functions in SI. They validate what would make the arithmetic meaningless (zero or
//! negative sizes and times) and leave judging the result to the health engine.

use serde::{Deserialize, Serialize};

use super::{finite, positive, show_mm, PhysicsError};
use crate::names::text_enum;
use crate::units::{Area, Flow, Force, Length, Power, Pressure, Seconds, Speed, Viscosity, Volume};

text_enum!(
    /// Which way the timed stroke moves: extending fills the full bore, retracting the annulus.
    StrokeDirection { Extend = "extend", Retract = "retract" }
);

/// The fixed, repeatable stroke a technician times at each check: the cylinder's geometry and
/// which way it moves (a unit's record carries it).
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct TimedStroke {
    pub bore: Length,
    /// Rod diameter; needed only for a retracting stroke.
    pub rod: Option<Length>,
    pub length: Length,
    pub direction: StrokeDirection,
}

fn show_s(v: f64) -> String {
    format!("{} s", super::num(v))
}

fn show_lpm(v: f64) -> String {
    format!("{} L/min", super::num(Flow(v).lpm()))
}

fn show_bar(v: f64) -> String {
    format!("{} bar", super::num(Pressure(v).bar()))
}

/// Area of a circle of diameter `d`: π/4 · d².
pub fn circle_area(d: Length) -> Area {
    Area(std::f64::consts::FRAC_PI_4 * d.si() * d.si())
}

/// Full-bore piston area.
pub fn piston_area(bore: Length) -> Result<Area, PhysicsError> {
    positive("the bore", bore.si(), show_mm)?;
    Ok(circle_area(bore))
}

/// Annulus area between bore and rod: π/4 · (D² − d²).
pub fn annulus_area(bore: Length, rod: Length) -> Result<Area, PhysicsError> {
    positive("the bore", bore.si(), show_mm)?;
    positive("the rod", rod.si(), show_mm)?;
    if rod.si() >= bore.si() {
        return Err(PhysicsError::RodNotThinnerThanBore {
            bore: show_mm(bore.si()),
            rod: show_mm(rod.si()),
        });
    }
    Ok(Area(circle_area(bore).si() - circle_area(rod).si()))
}

/// Oil displaced by the timed stroke: full bore × length when extending, annulus × length when
/// retracting.
pub fn displaced_volume(stroke: &TimedStroke) -> Result<Volume, PhysicsError> {
    positive("the stroke length", stroke.length.si(), show_mm)?;
    let area = match stroke.direction {
        StrokeDirection::Extend => piston_area(stroke.bore)?,
        StrokeDirection::Retract => {
            annulus_area(stroke.bore, stroke.rod.ok_or(PhysicsError::RodMissing)?)?
        }
    };
    Ok(Volume(area.si() * stroke.length.si()))
}

/// Flow that moved `volume` in `time`: Q = V / t.
pub fn effective_flow(volume: Volume, time: Seconds) -> Result<Flow, PhysicsError> {
    positive("the displaced volume", volume.si(), |v| {
        format!("{} L", super::num(v * 1000.0))
    })?;
    positive("the stroke time", time.si(), show_s)?;
    Ok(Flow(volume.si() / time.si()))
}

/// Effective flow of a timed stroke.
pub fn stroke_flow(stroke: &TimedStroke, time: Seconds) -> Result<Flow, PhysicsError> {
    effective_flow(displaced_volume(stroke)?, time)
}

/// Piston speed produced by `flow` on `area` (m/s). In US units this is the trade's
/// speed (in/min) = 231 · GPM / area (in²).
pub fn piston_speed(flow: Flow, area: Area) -> Result<f64, PhysicsError> {
    finite("the flow", flow.si())?;
    positive("the piston area", area.si(), |v| {
        format!("{} mm²", super::num(v * 1.0e6))
    })?;
    Ok(flow.si() / area.si())
}

/// Force of a cylinder: F = p · A, on the full bore when extending, the annulus when
/// retracting.
pub fn cylinder_force(pressure: Pressure, area: Area) -> Result<Force, PhysicsError> {
    finite("the pressure", pressure.si())?;
    positive("the piston area", area.si(), |v| {
        format!("{} mm²", super::num(v * 1.0e6))
    })?;
    Ok(Force(pressure.si() * area.si()))
}

/// Pressure a cylinder needs to hold or move `load`: p = F / A (friction and back pressure
/// not included).
pub fn pressure_for_load(load: Force, area: Area) -> Result<Pressure, PhysicsError> {
    positive("the load", load.si(), |v| {
        format!("{} kN", super::num(v / 1.0e3))
    })?;
    positive("the piston area", area.si(), |v| {
        format!("{} mm²", super::num(v * 1.0e6))
    })?;
    Ok(Pressure(load.si() / area.si()))
}

/// Mean speed of oil in a line of inside diameter `inside`: v = Q / (π/4 · d²).
pub fn line_velocity(flow: Flow, inside: Length) -> Result<Speed, PhysicsError> {
    positive("the flow", flow.si(), show_lpm)?;
    positive("the inside diameter", inside.si(), show_mm)?;
    Ok(Speed(flow.si() / circle_area(inside).si()))
}

/// Fraction of the baseline flow that is lost: 1 − Q / Q_baseline (0.08 = 8 %).
pub fn lost_flow(flow: Flow, baseline: Flow) -> Result<f64, PhysicsError> {
    finite("the flow", flow.si())?;
    positive("the baseline flow", baseline.si(), show_lpm)?;
    Ok(1.0 - flow.si() / baseline.si())
}

/// Volumetric efficiency against the pump's rated flow: Q / Q_rated (0.92 = 92 %).
pub fn vol_efficiency(flow: Flow, rated: Flow) -> Result<f64, PhysicsError> {
    finite("the flow", flow.si())?;
    positive("the rated pump flow", rated.si(), show_lpm)?;
    Ok(flow.si() / rated.si())
}

/// Hydraulic power P = Q · p. With NIST SP 811 factors this is exactly the trade's
/// hp = GPM · psi / 1714.29 (12000/7) and kW = L/min · bar / 600.
pub fn hydraulic_power(flow: Flow, pressure: Pressure) -> Power {
    Power(flow.si() * pressure.si())
}

/// Heat put into the oil by flow through a leakage or relief path: P = Q_leak · Δp. All of
/// the pressure energy lost across the path turns to heat. Read it as `.kw()` or
/// `.btu_per_h()`.
pub fn heat_power(leak_flow: Flow, pressure_drop: Pressure) -> Power {
    Power(leak_flow.si() * pressure_drop.si())
}

/// Leak conductance of a pump or circuit, corrected for viscosity.
///
/// Laminar gap leakage (Hagen–Poiseuille) is Q_leak ∝ Δp / μ, so G = Q_leak · ν / p, with
/// Q_leak = Q_rated − Q, stays put as the oil warms and thins, and grows as gaps wear.
/// Kinematic viscosity stands in for dynamic viscosity since density barely changes; the
/// health engine compares G with the baseline's G, so the unit (m³/s · m²/s / Pa) cancels.
#[derive(Clone, Copy, Debug, PartialEq, PartialOrd, Serialize, Deserialize)]
#[serde(transparent)]
pub struct LeakConductance(pub f64);

impl LeakConductance {
    pub fn si(self) -> f64 {
        self.0
    }

    /// `self / baseline`; `None` when the baseline is not positive.
    pub fn ratio_to(self, baseline: LeakConductance) -> Option<f64> {
        (baseline.0 > 0.0 && baseline.0.is_finite()).then(|| self.0 / baseline.0)
    }
}

/// G = (Q_rated − Q) · ν(T) / p (see [`LeakConductance`]). Negative when the measured flow
/// exceeds the rated flow, which means a timing error or an understated rating: the caller
/// decides what to make of it.
pub fn leak_conductance(
    rated: Flow,
    flow: Flow,
    visc: Viscosity,
    pressure: Pressure,
) -> Result<LeakConductance, PhysicsError> {
    positive("the rated pump flow", rated.si(), show_lpm)?;
    finite("the flow", flow.si())?;
    positive("the viscosity", visc.si(), super::show_cst)?;
    positive("the pressure", pressure.si(), show_bar)?;
    Ok(LeakConductance(
        (rated.si() - flow.si()) * visc.si() / pressure.si(),
    ))
}

/// A pump's delivery against the oil's fluidity and the working pressure over an era,
/// Q = D − G · p/ν: D, the displacement flow (what the pump would give with no leakage), and
/// G, the leak conductance of laminar gaps (Hagen–Poiseuille: Q_leak = G · p/ν). Fitted by
/// ordinary least squares of Q on p/ν, so a spread of job pressures and oil temperatures over
/// the era separates displacement from leakage without the rated flow.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct LeakageFit {
    /// D, m³/s.
    pub displacement: f64,
    pub displacement_se: f64,
    /// G, m³/s · m²/s / Pa (as [`LeakConductance`]).
    pub conductance: f64,
    pub conductance_se: f64,
    /// Scatter of the flows about the line, m³/s.
    pub residual_sd: f64,
    pub n: usize,
}

/// The fit is used only where its conductance is at least this many standard errors above
/// zero: the era's spread of p/ν must resolve the leakage (the usual |t| ≥ 2, as the trends).
pub const LEAKAGE_FIT_MIN_T: f64 = 2.0;

/// Fits [`LeakageFit`] to (flow, viscosity, pressure) readings; `None` when the readings do
/// not resolve a positive leak conductance (too few, too little spread of p/ν, or a line
/// rising with pressure).
pub fn fit_leakage(points: &[(Flow, Viscosity, Pressure)]) -> Option<LeakageFit> {
    let xy: Vec<(f64, f64)> = points
        .iter()
        .filter(|(q, nu, p)| q.si().is_finite() && nu.si() > 0.0 && p.si() > 0.0)
        .map(|(q, nu, p)| (p.si() / nu.si(), q.si()))
        .collect();
    let f = super::stats::line_fit(&xy).ok()?;
    let g = -f.slope;
    if !(g > 0.0 && f.slope_se.is_finite() && g >= LEAKAGE_FIT_MIN_T * f.slope_se) {
        return None;
    }
    Some(LeakageFit {
        displacement: f.intercept,
        displacement_se: f.intercept_se,
        conductance: g,
        conductance_se: f.slope_se,
        residual_sd: f.residual_sd,
        n: f.n,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cylinder_force_against_the_trade_formula_in_us_units() {
        // F (lbf) = p (psi) · A (in²), A = π/4 · D²: 2000 psi on a 4 in bore is
        // 2000 · 12.566 370 6 = 25 132.741 lbf (π/4 · 16 = 4π; the formula of any fluid-power
        // handbook, worked here with π from the standard library).
        let f = cylinder_force(
            Pressure::from_psi(2000.0),
            piston_area(Length::from_in(4.0)).unwrap(),
        )
        .unwrap();
        assert!(
            (f.lbf() - 2000.0 * 4.0 * std::f64::consts::PI).abs() < 1e-6,
            "{}",
            f.lbf()
        );
        // Metric: 100 bar on a 100 mm bore = 10 MPa · 7853.98 mm² = 78.54 kN.
        let f = cylinder_force(
            Pressure::from_bar(100.0),
            piston_area(Length::from_mm(100.0)).unwrap(),
        )
        .unwrap();
        assert!((f.kn() - 78.539_816).abs() < 1e-5, "{}", f.kn());
        // And back: the pressure that load needs on that bore is the 100 bar.
        let p = pressure_for_load(f, piston_area(Length::from_mm(100.0)).unwrap()).unwrap();
        assert!((p.bar() - 100.0).abs() < 1e-9);
        assert!(pressure_for_load(Force(0.0), Area(1.0)).is_err());
    }

    #[test]
    fn line_velocity_against_the_trade_formula_in_us_units() {
        // v (ft/s) = 0.3208 · Q (GPM) / A (in²) (0.3208 = 231 / 720, from 1 gal = 231 in³ and
        // 1 ft/s = 720 in/min): 10 GPM in a 0.5 in bore line (A = 0.196 35 in²) is
        // 16.34 ft/s.
        let v = line_velocity(Flow::from_gpm(10.0), Length::from_in(0.5)).unwrap();
        let area_in2 = std::f64::consts::FRAC_PI_4 * 0.25;
        assert!(
            (v.ft_s() - 231.0 / 720.0 * 10.0 / area_in2).abs() < 1e-9,
            "{}",
            v.ft_s()
        );
        // Metric: 60 L/min in a 20 mm bore = 0.001 m³/s / 314.159e-6 m² = 3.183 m/s.
        let v = line_velocity(Flow::from_lpm(60.0), Length::from_mm(20.0)).unwrap();
        assert!((v.si() - 1.0e-3 / (std::f64::consts::FRAC_PI_4 * 0.02 * 0.02)).abs() < 1e-12);
        assert!(line_velocity(Flow::from_lpm(60.0), Length(0.0)).is_err());
    }

    fn stroke(
        bore_mm: f64,
        rod_mm: Option<f64>,
        len_mm: f64,
        direction: StrokeDirection,
    ) -> TimedStroke {
        TimedStroke {
            bore: Length::from_mm(bore_mm),
            rod: rod_mm.map(Length::from_mm),
            length: Length::from_mm(len_mm),
            direction,
        }
    }

    #[test]
    fn volumes_by_geometry() {
        // Geometry: V = π/4 · D² · L; annulus π/4 · (D² − d²) · L.
        let ext = displaced_volume(&stroke(100.0, None, 400.0, StrokeDirection::Extend)).unwrap();
        assert!((ext.litres() - std::f64::consts::PI * 0.25 * 1.0 * 4.0).abs() < 1e-12);
        let ret =
            displaced_volume(&stroke(100.0, Some(56.0), 400.0, StrokeDirection::Retract)).unwrap();
        let expected = std::f64::consts::FRAC_PI_4 * (1.0 - 0.56 * 0.56) * 4.0;
        assert!((ret.litres() - expected).abs() < 1e-12);
    }

    #[test]
    fn bad_strokes_are_refused() {
        assert_eq!(
            displaced_volume(&stroke(100.0, None, 400.0, StrokeDirection::Retract)),
            Err(PhysicsError::RodMissing)
        );
        assert!(matches!(
            displaced_volume(&stroke(50.0, Some(56.0), 400.0, StrokeDirection::Retract)),
            Err(PhysicsError::RodNotThinnerThanBore { .. })
        ));
        assert!(matches!(
            displaced_volume(&stroke(-50.0, None, 400.0, StrokeDirection::Extend)),
            Err(PhysicsError::NotPositive {
                what: "the bore",
                ..
            })
        ));
        assert!(matches!(
            effective_flow(Volume::from_l(1.0), Seconds(0.0)),
            Err(PhysicsError::NotPositive {
                what: "the stroke time",
                ..
            })
        ));
        assert!(matches!(
            effective_flow(Volume::from_l(1.0), Seconds(f64::NAN)),
            Err(PhysicsError::NotFinite { .. })
        ));
    }

    #[test]
    fn a_leakage_line_separates_displacement_from_leakage() {
        // Built by hand from D = 40 L/min and G·p/ν = 6 L/min at 100 bar and 46 cSt: two job
        // pressures (100 and 160 bar) at two oil temperatures (46 and 23 cSt). Exact data give
        // D and G back exactly (least squares through points on a line).
        let g_lpm = 6.0 / (100.0 / 46.0);
        let pts: Vec<(Flow, Viscosity, Pressure)> =
            [(100.0, 46.0), (160.0, 46.0), (100.0, 23.0), (160.0, 23.0)]
                .iter()
                .map(|&(bar, cst)| {
                    let q = 40.0 - g_lpm * bar / cst;
                    (
                        Flow::from_lpm(q),
                        Viscosity::from_cst(cst),
                        Pressure::from_bar(bar),
                    )
                })
                .collect();
        let f = fit_leakage(&pts).unwrap();
        assert!((Flow(f.displacement).lpm() - 40.0).abs() < 1e-9);
        let g_si = Flow::from_lpm(g_lpm).si() * Viscosity::from_cst(1.0).si()
            / Pressure::from_bar(1.0).si();
        assert!((f.conductance / g_si - 1.0).abs() < 1e-9);
        // One condition only: nothing to separate.
        let same = vec![pts[0]; 5];
        assert!(fit_leakage(&same).is_none());
        // A line rising with pressure is not leakage.
        let rising: Vec<_> = pts
            .iter()
            .map(|&(q, nu, p)| (Flow(2.0 * Flow::from_lpm(40.0).si() - q.si()), nu, p))
            .collect();
        assert!(fit_leakage(&rising).is_none());
    }

    #[test]
    fn ratios() {
        // Definitions (docs/engineering.md, "Computations"): lost flow 1 − Q/Q_baseline;
        // volumetric efficiency Q/Q_rated.
        let lf = lost_flow(Flow::from_lpm(46.0), Flow::from_lpm(50.0)).unwrap();
        assert!((lf - 0.08).abs() < 1e-12);
        let ve = vol_efficiency(Flow::from_lpm(45.0), Flow::from_lpm(50.0)).unwrap();
        assert!((ve - 0.9).abs() < 1e-12);
        assert!(vol_efficiency(Flow::from_lpm(45.0), Flow(0.0)).is_err());
    }

    #[test]
    fn leak_conductance_is_temperature_compensated() {
        // Hagen–Poiseuille gap flow: at fixed wear, Q_leak ∝ p/ν, so G = Q_leak·ν/p stays the same
        // when the oil is half as viscous and leaks twice as much.
        let rated = Flow::from_lpm(50.0);
        let cold = leak_conductance(
            rated,
            Flow::from_lpm(48.0),
            Viscosity::from_cst(46.0),
            Pressure::from_bar(100.0),
        )
        .unwrap();
        let warm = leak_conductance(
            rated,
            Flow::from_lpm(46.0),
            Viscosity::from_cst(23.0),
            Pressure::from_bar(100.0),
        )
        .unwrap();
        assert!((cold.ratio_to(warm).unwrap() - 1.0).abs() < 1e-12);
        // By hand: 2 L/min = 3.3333e-5 m³/s; × 46e-6 m²/s / 1e7 Pa = 1.5333e-16.
        assert!((cold.si() - 2.0 / 60_000.0 * 46.0e-6 / 1.0e7).abs() < 1e-28);
        assert!(leak_conductance(rated, rated, Viscosity::from_cst(46.0), Pressure(0.0)).is_err());
        assert_eq!(cold.ratio_to(LeakConductance(0.0)), None);
    }
}
