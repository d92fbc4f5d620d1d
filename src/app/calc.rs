//! The bench calculators: viscosity index, viscosity at a temperature and the KV40 equivalent
//! of a field reading, ISO 4406 code from counts, flow from a timed stroke, hydraulic power
//! and heat, cylinder force and the pressure a load needs, and oil speed in a line.
//!
//! Each takes parsed quantities and returns a serde-serialisable result, for the command line
//! and the desktop app alike. Input that cannot be right is an `AppError::BadInput` whose
//! message says what is wrong and what is expected. No parsing of text and no printing here.

use serde::Serialize;

use super::AppError;
use crate::model::{StrokeDirection, TimedStroke};
use crate::physics::cleanliness::code_from_counts;
use crate::physics::hydraulics::{
    annulus_area, cylinder_force, displaced_volume, heat_power, hydraulic_power, line_velocity,
    piston_area, pressure_for_load, stroke_flow,
};
use crate::physics::viscosity::{viscosity_index, ViProcedure, Walther};
use crate::physics::PhysicsError;
use crate::units::{Flow, Force, Length, Pressure, Seconds, Speed, Temperature, Viscosity};

fn bad(e: PhysicsError) -> AppError {
    AppError::BadInput(e.to_string())
}

/// Temperatures a practitioner may ask about: the physical range (docs/engineering.md, "Physical
/// bounds of readings") for oil in service.
const MIN_C: f64 = crate::bounds::TEMP_C.0;
const MAX_C: f64 = crate::bounds::TEMP_C.1;

fn check_temperature(what: &str, t: Temperature) -> Result<(), AppError> {
    let c = t.c();
    if !(MIN_C..=MAX_C).contains(&c) {
        return Err(AppError::BadInput(format!(
            "{what} {c} °C is outside the range of oil in service; expected {MIN_C} to {MAX_C} °C"
        )));
    }
    Ok(())
}

fn check_positive(what: &str, v: f64, unit_text: &str) -> Result<(), AppError> {
    if v.is_finite() && v > 0.0 {
        Ok(())
    } else {
        Err(AppError::BadInput(format!(
            "{what} must be greater than zero, got {} {unit_text}",
            // A pressure typed in psi is checked in bar: its full binary expansion helps nobody.
            super::figures::significant(v, 4, 6)
        )))
    }
}

/// `calc vi`: JSON `{"vi": 92.43, "vi_rounded": 92}`.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct ViOutput {
    /// To two decimals, as D2270 worked examples print it.
    pub vi: f64,
    pub vi_rounded: i64,
    #[serde(skip)]
    pub procedure: ViProcedure,
}

/// Viscosity index by ASTM D2270 from KV40 and KV100.
pub fn vi(kv40: Viscosity, kv100: Viscosity) -> Result<ViOutput, AppError> {
    let r = viscosity_index(kv40, kv100).map_err(bad)?;
    Ok(ViOutput {
        vi: (r.vi * 100.0).round() / 100.0,
        vi_rounded: r.rounded,
        procedure: r.procedure,
    })
}

/// `calc visc --at`: JSON `{"cst": …}`.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct ViscAtOutput {
    pub cst: f64,
}

/// Viscosity at `at` on the ASTM D341 line of a fluid with KV40 and KV100.
pub fn visc_at(
    kv40: Viscosity,
    kv100: Viscosity,
    at: Temperature,
) -> Result<ViscAtOutput, AppError> {
    check_temperature("the temperature", at)?;
    let line = Walther::from_kv40_kv100(kv40, kv100).map_err(bad)?;
    Ok(ViscAtOutput {
        cst: line.at(at).cst(),
    })
}

/// `calc visc --reading`: JSON `{"kv40_cst": …}`.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct Kv40Output {
    pub kv40_cst: f64,
}

/// KV40 equivalent of a reading at `reading_at`, shifted along the D341 slope of the fluid
/// with KV40 and KV100 (new oil).
pub fn kv40_from_reading(
    kv40: Viscosity,
    kv100: Viscosity,
    reading: Viscosity,
    reading_at: Temperature,
) -> Result<Kv40Output, AppError> {
    check_temperature("the reading temperature", reading_at)?;
    let line = Walther::from_kv40_kv100(kv40, kv100).map_err(bad)?;
    let kv = line.kv40_from_reading(reading, reading_at).map_err(bad)?;
    Ok(Kv40Output { kv40_cst: kv.cst() })
}

/// `calc iso4406`: JSON `{"code": "19/16/10"}`.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Iso4406Output {
    pub code: String,
}

/// ISO 4406 code from counts per mL at ≥4/≥6/≥14 µm(c); `counted` (particles actually
/// counted) adds the "≥" marks.
pub fn iso4406(
    counts_per_ml: [f64; 3],
    counted: Option<[u64; 3]>,
) -> Result<Iso4406Output, AppError> {
    let code = code_from_counts(counts_per_ml, counted).map_err(bad)?;
    Ok(Iso4406Output {
        code: code.to_string(),
    })
}

/// The timed stroke of `calc flow`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct FlowInput {
    pub bore: Length,
    pub stroke: Length,
    pub time: Seconds,
    /// Needed for a retracting stroke.
    pub rod: Option<Length>,
    pub retract: bool,
}

/// `calc flow`: JSON `{"lpm": …, "gpm": …, "litres": …}` (litres per stroke).
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct FlowOutput {
    pub lpm: f64,
    pub gpm: f64,
    pub litres: f64,
}

/// Effective flow of a timed stroke: displaced volume over time.
pub fn flow(input: &FlowInput) -> Result<FlowOutput, AppError> {
    let stroke = TimedStroke {
        bore: input.bore,
        rod: input.rod,
        length: input.stroke,
        direction: if input.retract {
            StrokeDirection::Retract
        } else {
            StrokeDirection::Extend
        },
    };
    let volume = displaced_volume(&stroke).map_err(bad)?;
    let q: Flow = stroke_flow(&stroke, input.time).map_err(bad)?;
    Ok(FlowOutput {
        lpm: q.lpm(),
        gpm: q.gpm(),
        litres: volume.litres(),
    })
}

/// `calc power`: JSON `{"hp": …, "kw": …, "btu_per_h": …}`; as heat, the same power is what
/// a flow dumped across a relief valve at that pressure puts into the oil.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct PowerOutput {
    pub hp: f64,
    pub kw: f64,
    pub btu_per_h: f64,
}

/// Hydraulic power of `flow` at `pressure`.
pub fn power(flow: Flow, pressure: Pressure) -> Result<PowerOutput, AppError> {
    check_positive("the flow", flow.lpm(), "L/min")?;
    check_positive("the pressure", pressure.bar(), "bar")?;
    let p = hydraulic_power(flow, pressure);
    let heat = heat_power(flow, pressure);
    Ok(PowerOutput {
        hp: p.hp(),
        kw: p.kw(),
        btu_per_h: heat.btu_per_h(),
    })
}

/// `calc force`: the cylinder's area and either its force at a pressure or the pressure a
/// load needs. JSON `{"area_mm2": …, "area_in2": …, "kn": …, "lbf": …, "bar": …, "psi": …}`.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct ForceOutput {
    pub area_mm2: f64,
    pub area_in2: f64,
    /// The force (given the pressure) or the load (given the load).
    pub kn: f64,
    pub lbf: f64,
    /// The pressure given, or the pressure the load needs.
    pub bar: f64,
    pub psi: f64,
}

/// What `calc force` is asked.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum ForceQuestion {
    /// The force at this pressure.
    AtPressure(Pressure),
    /// The pressure this load needs.
    ForLoad(Force),
}

/// Cylinder force on the full bore (or the annulus when `rod` is given, for the retracting
/// side), or the pressure a load needs there.
pub fn force(
    bore: Length,
    rod: Option<Length>,
    question: ForceQuestion,
) -> Result<ForceOutput, AppError> {
    let area = match rod {
        None => piston_area(bore),
        Some(rod) => annulus_area(bore, rod),
    }
    .map_err(bad)?;
    let (f, p) = match question {
        ForceQuestion::AtPressure(p) => {
            check_positive("the pressure", p.bar(), "bar")?;
            (cylinder_force(p, area).map_err(bad)?, p)
        }
        ForceQuestion::ForLoad(f) => {
            check_positive("the load", f.kn(), "kN")?;
            (f, pressure_for_load(f, area).map_err(bad)?)
        }
    };
    Ok(ForceOutput {
        area_mm2: area.mm2(),
        area_in2: area.in2(),
        kn: f.kn(),
        lbf: f.lbf(),
        bar: p.bar(),
        psi: p.psi(),
    })
}

/// The kind of line oil flows in, for its usual speed range.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum LineKind {
    Suction,
    Return,
    Pressure,
}

impl LineKind {
    /// The usual mean oil speed for the line, m/s (common practice, no published source;
    /// from memory: suction 0.6–1.2 m/s (2–4 ft/s), return 1.5–3 m/s (5–10 ft/s), pressure
    /// 2–6 m/s (7–20 ft/s)). Too fast costs pressure drop and heat, in a suction line
    /// cavitation; too slow a bigger line than needed.
    pub fn usual(self) -> (Speed, Speed) {
        match self {
            LineKind::Suction => (Speed(0.6), Speed(1.2)),
            LineKind::Return => (Speed(1.5), Speed(3.0)),
            LineKind::Pressure => (Speed(2.0), Speed(6.0)),
        }
    }
}

/// `calc velocity`: JSON `{"m_s": …, "ft_s": …, "line": …, "low_m_s": …, "high_m_s": …,
/// "verdict": "within" | "below" | "above"}` (line and range only when a line was named).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct VelocityOutput {
    pub m_s: f64,
    pub ft_s: f64,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub line: Option<LineKind>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub low_m_s: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub high_m_s: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub verdict: Option<&'static str>,
}

/// Mean oil speed at `flow` in a line of inside diameter `inside`, against the usual range of
/// `line` or the range given (`range` wins).
pub fn velocity(
    flow: Flow,
    inside: Length,
    line: Option<LineKind>,
    range: Option<(Speed, Speed)>,
) -> Result<VelocityOutput, AppError> {
    let v = line_velocity(flow, inside).map_err(bad)?;
    let range = match (range, line) {
        (Some((lo, hi)), _) => {
            if !(lo.si() >= 0.0 && hi.si() > lo.si() && hi.is_finite()) {
                return Err(AppError::BadInput(format!(
                    "the speed range must run from a low to a higher speed, got {:.2} to {:.2} m/s",
                    lo.si(),
                    hi.si()
                )));
            }
            Some((lo, hi))
        }
        (None, Some(l)) => Some(l.usual()),
        (None, None) => None,
    };
    let verdict = range.map(|(lo, hi)| {
        if v.si() < lo.si() {
            "below"
        } else if v.si() > hi.si() {
            "above"
        } else {
            "within"
        }
    });
    Ok(VelocityOutput {
        m_s: v.si(),
        ft_s: v.ft_s(),
        line,
        low_m_s: range.map(|r| r.0.si()),
        high_m_s: range.map(|r| r.1.si()),
        verdict,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn force_both_ways_on_the_bore_and_the_annulus() {
        // 2000 psi on a 4 in bore: 4π in² × 2000 psi = 25 132.7 lbf (F = p·A).
        let out = force(
            Length::from_in(4.0),
            None,
            ForceQuestion::AtPressure(Pressure::from_psi(2000.0)),
        )
        .unwrap();
        assert!((out.lbf - 8000.0 * std::f64::consts::PI).abs() < 1e-6);
        assert!((out.area_in2 - 4.0 * std::f64::consts::PI).abs() < 1e-12);
        // Retracting on a 100 mm bore with a 56 mm rod: A = π/4 (100² − 56²) = 5390.3 mm²;
        // a 50 kN load needs 50 000 N / 5390.3 mm² = 9.276 MPa = 92.76 bar.
        let out = force(
            Length::from_mm(100.0),
            Some(Length::from_mm(56.0)),
            ForceQuestion::ForLoad(Force::from_kn(50.0)),
        )
        .unwrap();
        let area = std::f64::consts::FRAC_PI_4 * (100.0f64.powi(2) - 56.0f64.powi(2));
        assert!((out.area_mm2 - area).abs() < 1e-9);
        assert!(
            (out.bar - 50_000.0 / area * 10.0).abs() < 1e-9,
            "{}",
            out.bar
        );
        assert!(force(
            Length::from_mm(50.0),
            Some(Length::from_mm(60.0)),
            ForceQuestion::ForLoad(Force::from_kn(1.0))
        )
        .is_err());
    }

    #[test]
    fn velocity_against_the_usual_ranges() {
        // 10 GPM in a 0.5 in line: 16.3 ft/s (231/720 · Q / A), too fast for a suction line,
        // within the usual pressure-line range.
        let q = Flow::from_gpm(10.0);
        let d = Length::from_in(0.5);
        let suction = velocity(q, d, Some(LineKind::Suction), None).unwrap();
        assert_eq!(suction.verdict, Some("above"));
        assert!(
            (suction.ft_s - 231.0 / 720.0 * 10.0 / (std::f64::consts::FRAC_PI_4 * 0.25)).abs()
                < 1e-9
        );
        assert_eq!(
            velocity(q, d, Some(LineKind::Pressure), None)
                .unwrap()
                .verdict,
            Some("within")
        );
        // A range of the shop's own wins over the usual one.
        let own = velocity(
            q,
            d,
            Some(LineKind::Pressure),
            Some((Speed(1.0), Speed(3.0))),
        )
        .unwrap();
        assert_eq!(own.verdict, Some("above"));
        assert!(velocity(q, d, None, Some((Speed(3.0), Speed(1.0)))).is_err());
        assert_eq!(velocity(q, d, None, None).unwrap().verdict, None);
    }

    #[test]
    fn vi_of_the_d2270_worked_example() {
        // ASTM D2270 worked example (procedure A): KV40 73.30, KV100 8.86 → VI 92.43, reported 92.
        let out = vi(Viscosity::from_cst(73.30), Viscosity::from_cst(8.86)).unwrap();
        assert_eq!(
            (out.vi, out.vi_rounded, out.procedure),
            (92.43, 92, ViProcedure::A)
        );
        assert_eq!(
            serde_json::to_string(&out).unwrap(),
            r#"{"vi":92.43,"vi_rounded":92}"#
        );
    }

    #[test]
    fn bad_inputs_are_bad_input() {
        let e = vi(Viscosity::from_cst(8.0), Viscosity::from_cst(1.5)).unwrap_err();
        assert_eq!(e.exit_code(), 2);
        let e = visc_at(
            Viscosity::from_cst(46.0),
            Viscosity::from_cst(6.8),
            Temperature::from_c(400.0),
        )
        .unwrap_err();
        assert!(e.to_string().contains("-40 to 150"), "{e}");
        let e = power(Flow::from_gpm(0.0), Pressure::from_psi(2500.0)).unwrap_err();
        assert!(e.to_string().contains("greater than zero"), "{e}");
        // -3000 psi = -206.84 bar (1 psi = 6894.757 Pa, NIST SP 811), shown to four digits.
        let e = power(Flow::from_gpm(12.0), Pressure::from_psi(-3000.0)).unwrap_err();
        assert!(e.to_string().ends_with("got -206.8 bar"), "{e}");
        let e = power(Flow::from_lpm(-5.0), Pressure::from_bar(100.0)).unwrap_err();
        assert!(e.to_string().ends_with("got -5 L/min"), "{e}");
        let input = FlowInput {
            bore: Length::from_mm(100.0),
            stroke: Length::from_mm(400.0),
            time: Seconds(2.5),
            rod: None,
            retract: true,
        };
        assert!(flow(&input).unwrap_err().to_string().contains("rod"));
    }
}
