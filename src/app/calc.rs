//! The bench calculators: viscosity index, viscosity at a temperature and the KV40 equivalent
//! of a field reading, ISO 4406 code from counts, flow from a timed stroke, hydraulic power
//! and heat.
//!
//! Each takes parsed quantities and returns a serde-serialisable result, for the command line
//! and the desktop app alike. Input that cannot be right is an `AppError::BadInput` whose
//! message says what is wrong and what is expected. No parsing of text and no printing here.

use serde::Serialize;

use super::AppError;
use crate::model::{StrokeDirection, TimedStroke};
use crate::physics::cleanliness::code_from_counts;
use crate::physics::hydraulics::{displaced_volume, heat_power, hydraulic_power, stroke_flow};
use crate::physics::viscosity::{viscosity_index, ViProcedure, Walther};
use crate::physics::PhysicsError;
use crate::units::{Flow, Length, Pressure, Seconds, Temperature, Viscosity};

fn bad(e: PhysicsError) -> AppError {
    AppError::BadInput(e.to_string())
}

/// Temperatures a practitioner may ask about: the physical range (docs/engineering.md, "Physical
/// bounds of readings") for oil in service.
const MIN_C: f64 = -40.0;
const MAX_C: f64 = 150.0;

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

#[cfg(test)]
mod tests {
    use super::*;

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
