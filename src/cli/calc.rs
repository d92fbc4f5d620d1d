//! `sumpbook calc …`: the bench calculators on the command line.
//!
//! Reads quantities with their units (`2500psi`, `60C`, `80mm`; bare numbers only for cSt and
//! seconds), calls `app::calc`, prints a line for a person or JSON with `--json`. No
//! engineering here: bad input becomes `Failure::bad_input` (exit 2) with the parser's or the
//! calculation's message.

use clap::{Args, Subcommand};

use super::Failure;
use crate::app::calc;
use crate::quantity::{
    format_in, parse_flow, parse_force, parse_length, parse_pressure, parse_speed,
    parse_temperature, parse_time, parse_viscosity, ParseError, Quantity, Unit,
};

#[derive(Args, Debug, Clone, PartialEq)]
pub struct CalcArgs {
    /// Print the result as JSON.
    #[arg(long, global = true)]
    pub json: bool,

    #[command(subcommand)]
    pub command: CalcCommand,
}

#[derive(Subcommand, Debug, Clone, PartialEq)]
pub enum CalcCommand {
    /// Viscosity index (ASTM D2270) from KV40 and KV100, in cSt: `calc vi 73.30 8.86`.
    #[command(allow_negative_numbers = true)]
    Vi {
        /// Kinematic viscosity at 40 °C (cSt; a bare number is cSt).
        #[arg(value_name = "KV40")]
        kv40: String,
        /// Kinematic viscosity at 100 °C (cSt), at least 2.
        #[arg(value_name = "KV100")]
        kv100: String,
    },
    /// Viscosity at a temperature (`--at 20C`), or the KV40 equivalent of a field reading
    /// (`--reading 30cSt --reading-at 55C`), along the fluid's ASTM D341 line.
    Visc {
        /// KV40 of the fluid (new oil), cSt.
        #[arg(long, value_name = "CST", allow_hyphen_values = true)]
        kv40: String,
        /// KV100 of the fluid (new oil), cSt.
        #[arg(long, value_name = "CST", allow_hyphen_values = true)]
        kv100: String,
        /// Temperature to give the viscosity at, e.g. 20C or 68F.
        #[arg(long, value_name = "TEMP", allow_hyphen_values = true, conflicts_with_all = ["reading", "reading_at"])]
        at: Option<String>,
        /// A viscosity reading taken at --reading-at, e.g. 30cSt.
        #[arg(
            long,
            value_name = "CST",
            allow_hyphen_values = true,
            requires = "reading_at"
        )]
        reading: Option<String>,
        /// Temperature of the reading, e.g. 55C.
        #[arg(
            long,
            value_name = "TEMP",
            allow_hyphen_values = true,
            requires = "reading"
        )]
        reading_at: Option<String>,
    },
    /// ISO 4406 code from counts per mL at ≥4, ≥6 and ≥14 µm(c): `calc iso4406 3200 450 8`.
    #[command(allow_negative_numbers = true)]
    Iso4406 {
        /// Particles per mL ≥4 µm(c).
        #[arg(value_name = "C4")]
        c4: String,
        /// Particles per mL ≥6 µm(c).
        #[arg(value_name = "C6")]
        c6: String,
        /// Particles per mL ≥14 µm(c).
        #[arg(value_name = "C14")]
        c14: String,
        /// Particles actually counted in each size; fewer than 20 marks the number "≥".
        #[arg(long, num_args = 3, value_names = ["N4", "N6", "N14"], allow_hyphen_values = true)]
        counted: Option<Vec<String>>,
    },
    /// Effective flow of a timed stroke: `calc flow --bore 100mm --stroke 400mm --time 2.5s`.
    Flow {
        /// Cylinder bore, e.g. 100mm or 4in.
        #[arg(long, value_name = "LENGTH", allow_hyphen_values = true)]
        bore: String,
        /// Stroke length, e.g. 400mm or 15.75in.
        #[arg(long, value_name = "LENGTH", allow_hyphen_values = true)]
        stroke: String,
        /// Stroke time, e.g. 2.5s (a bare number is seconds).
        #[arg(long, value_name = "TIME", allow_hyphen_values = true)]
        time: String,
        /// Rod diameter, for a retracting stroke, e.g. 56mm.
        #[arg(
            long,
            value_name = "LENGTH",
            allow_hyphen_values = true,
            requires = "retract"
        )]
        rod: Option<String>,
        /// The stroke retracts: the oil fills the annulus between bore and rod.
        #[arg(long, requires = "rod")]
        retract: bool,
    },
    /// Hydraulic power, and the heat if that flow crosses a relief valve:
    /// `calc power --flow 12gpm --pressure 2500psi`.
    Power {
        /// Flow, e.g. 12gpm or 45lpm.
        #[arg(long, value_name = "FLOW", allow_hyphen_values = true)]
        flow: String,
        /// Pressure, e.g. 2500psi or 172bar.
        #[arg(long, value_name = "PRESSURE", allow_hyphen_values = true)]
        pressure: String,
    },
    /// Cylinder force at a pressure, or the pressure a load needs:
    /// `calc force --bore 100mm --pressure 160bar`, `calc force --bore 4in --load 20000lbf`.
    Force {
        /// Cylinder bore, e.g. 100mm or 4in.
        #[arg(long, value_name = "LENGTH", allow_hyphen_values = true)]
        bore: String,
        /// Rod diameter: the retracting side (the annulus), e.g. 56mm.
        #[arg(long, value_name = "LENGTH", allow_hyphen_values = true)]
        rod: Option<String>,
        /// Pressure on the piston, e.g. 160bar or 2300psi.
        #[arg(
            long,
            value_name = "PRESSURE",
            allow_hyphen_values = true,
            required_unless_present = "load",
            conflicts_with = "load"
        )]
        pressure: Option<String>,
        /// Load to hold or move, e.g. 50kN or 11240lbf (friction not included).
        #[arg(long, value_name = "FORCE", allow_hyphen_values = true)]
        load: Option<String>,
    },
    /// Mean oil speed in a line, against the usual range for its kind:
    /// `calc velocity --flow 12gpm --id 0.5in --line pressure`.
    Velocity {
        /// Flow, e.g. 45lpm or 12gpm.
        #[arg(long, value_name = "FLOW", allow_hyphen_values = true)]
        flow: String,
        /// Inside diameter of the line, e.g. 12.7mm or 0.5in.
        #[arg(long, value_name = "LENGTH", allow_hyphen_values = true)]
        id: String,
        /// The kind of line, for its usual speed range (common practice).
        #[arg(long, value_enum)]
        line: Option<Line>,
        /// The shop's own range instead, low and high, e.g. `--range 2m/s 5m/s`.
        #[arg(long, num_args = 2, value_names = ["LOW", "HIGH"], allow_hyphen_values = true)]
        range: Option<Vec<String>>,
    },
}

/// Kinds of line as typed.
#[derive(clap::ValueEnum, Debug, Clone, Copy, PartialEq, Eq)]
pub enum Line {
    Suction,
    Return,
    Pressure,
}

fn arg<T>(name: &str, parsed: Result<T, ParseError>) -> Result<T, Failure> {
    parsed.map_err(|e| Failure::bad_input(format!("{name}: {e}")))
}

fn count(name: &str, text: &str) -> Result<f64, Failure> {
    let expected = "a count per mL such as 3200 or 0.5";
    let v: f64 = text.trim().parse().map_err(|_| {
        Failure::bad_input(format!(
            "{name}: `{text}` is not a number; expected {expected}"
        ))
    })?;
    if !v.is_finite() || v < 0.0 {
        return Err(Failure::bad_input(format!(
            "{name}: `{text}` is not possible; expected {expected} (0 or more)"
        )));
    }
    Ok(v)
}

fn counted(name: &str, text: &str) -> Result<u64, Failure> {
    text.trim().parse().map_err(|_| {
        Failure::bad_input(format!(
            "{name}: `{text}` is not a whole number of particles; expected e.g. 125"
        ))
    })
}

fn show(q: Quantity, unit: Unit) -> String {
    format_in(q, unit).unwrap_or_default()
}

fn emit<T: serde::Serialize>(
    out: &mut dyn std::io::Write,
    json: bool,
    value: &T,
    human: String,
) -> Result<(), Failure> {
    if json {
        let text = serde_json::to_string(value)
            .map_err(|e| Failure::failed(format!("cannot write JSON: {e}")))?;
        writeln!(out, "{text}")?;
    } else {
        writeln!(out, "{human}")?;
    }
    Ok(())
}

/// Runs `sumpbook calc …`, writing the result to `out`.
pub fn run(args: &CalcArgs, out: &mut dyn std::io::Write) -> Result<(), Failure> {
    match &args.command {
        CalcCommand::Vi { kv40, kv100 } => {
            let kv40 = arg("KV40", parse_viscosity(kv40))?;
            let kv100 = arg("KV100", parse_viscosity(kv100))?;
            let r = calc::vi(kv40, kv100)?;
            let human = format!(
                "VI {} ({:.2}, procedure {})",
                r.vi_rounded, r.vi, r.procedure
            );
            emit(out, args.json, &r, human)
        }
        CalcCommand::Visc {
            kv40,
            kv100,
            at,
            reading,
            reading_at,
        } => visc(kv40, kv100, at, reading, reading_at, args.json, out),
        CalcCommand::Iso4406 {
            c4,
            c6,
            c14,
            counted: raw,
        } => iso4406(c4, c6, c14, raw, args.json, out),
        CalcCommand::Flow {
            bore,
            stroke,
            time,
            rod,
            retract,
        } => flow(bore, stroke, time, rod, retract, args.json, out),
        CalcCommand::Power { flow, pressure } => {
            let q = arg("--flow", parse_flow(flow))?;
            let p = arg("--pressure", parse_pressure(pressure))?;
            let r = calc::power(q, p)?;
            let human = format!(
                "{:.2} hp ({:.2} kW); as heat {:.0} BTU/h",
                r.hp, r.kw, r.btu_per_h
            );
            emit(out, args.json, &r, human)
        }
        CalcCommand::Force {
            bore,
            rod,
            pressure,
            load,
        } => force(bore, rod, pressure, load, args.json, out),
        CalcCommand::Velocity {
            flow,
            id,
            line,
            range,
        } => velocity(flow, id, line, range, args.json, out),
    }
}

/// The viscosity at a temperature, or the KV40 equivalent of a reading.
fn visc(
    kv40: &str,
    kv100: &str,
    at: &Option<String>,
    reading: &Option<String>,
    reading_at: &Option<String>,
    json: bool,
    out: &mut dyn std::io::Write,
) -> Result<(), Failure> {
    let kv40 = arg("--kv40", parse_viscosity(kv40))?;
    let kv100 = arg("--kv100", parse_viscosity(kv100))?;
    match (at, reading, reading_at) {
        (Some(at), None, None) => {
            let t = arg("--at", parse_temperature(at))?;
            let r = calc::visc_at(kv40, kv100, t)?;
            let human = format!(
                "{:.2} cSt at {} / {} (ASTM D341 line through KV40 {} and KV100 {})",
                r.cst,
                show(Quantity::Temperature(t), Unit::Celsius),
                show(Quantity::Temperature(t), Unit::Fahrenheit),
                show(Quantity::Viscosity(kv40), Unit::Centistoke),
                show(Quantity::Viscosity(kv100), Unit::Centistoke),
            );
            emit(out, json, &r, human)
        }
        (None, Some(reading), Some(reading_at)) => {
            let v = arg("--reading", parse_viscosity(reading))?;
            let t = arg("--reading-at", parse_temperature(reading_at))?;
            let r = calc::kv40_from_reading(kv40, kv100, v, t)?;
            let human = format!(
                "KV40 equivalent {:.2} cSt ({} at {}, along the D341 slope of KV40 {} / KV100 {})",
                r.kv40_cst,
                show(Quantity::Viscosity(v), Unit::Centistoke),
                show(Quantity::Temperature(t), Unit::Celsius),
                show(Quantity::Viscosity(kv40), Unit::Centistoke),
                show(Quantity::Viscosity(kv100), Unit::Centistoke),
            );
            emit(out, json, &r, human)
        }
        _ => Err(Failure::bad_input(
            "give --at TEMP for the viscosity at a temperature, or --reading CST --reading-at TEMP \
             for the KV40 equivalent of a reading",
        )),
    }
}

/// The ISO 4406 code of three counts per mL, with the particles counted where given.
fn iso4406(
    c4: &str,
    c6: &str,
    c14: &str,
    raw: &Option<Vec<String>>,
    json: bool,
    out: &mut dyn std::io::Write,
) -> Result<(), Failure> {
    let counts = [
        count("C4 (≥4 µm)", c4)?,
        count("C6 (≥6 µm)", c6)?,
        count("C14 (≥14 µm)", c14)?,
    ];
    let n = match raw.as_deref() {
        None => None,
        Some([a, b, c]) => Some([counted("N4", a)?, counted("N6", b)?, counted("N14", c)?]),
        Some(_) => {
            return Err(Failure::bad_input(
                "--counted takes three numbers: N4 N6 N14",
            ))
        }
    };
    let r = calc::iso4406(counts, n)?;
    let human = format!("ISO 4406 {}", r.code);
    emit(out, json, &r, human)
}

/// The effective flow of a timed stroke.
fn flow(
    bore: &str,
    stroke: &str,
    time: &str,
    rod: &Option<String>,
    retract: &bool,
    json: bool,
    out: &mut dyn std::io::Write,
) -> Result<(), Failure> {
    let input = calc::FlowInput {
        bore: arg("--bore", parse_length(bore))?,
        stroke: arg("--stroke", parse_length(stroke))?,
        time: arg("--time", parse_time(time))?,
        rod: rod
            .as_deref()
            .map(|r| arg("--rod", parse_length(r)))
            .transpose()?,
        retract: *retract,
    };
    let r = calc::flow(&input)?;
    let human = format!(
        "{:.2} L/min ({:.2} GPM); {:.3} L ({:.3} gal) per stroke",
        r.lpm,
        r.gpm,
        r.litres,
        r.litres / crate::units::M3_PER_US_GAL / 1000.0
    );
    emit(out, json, &r, human)
}

/// Cylinder force at a pressure, or the pressure a load needs.
fn force(
    bore: &str,
    rod: &Option<String>,
    pressure: &Option<String>,
    load: &Option<String>,
    json: bool,
    out: &mut dyn std::io::Write,
) -> Result<(), Failure> {
    let bore = arg("--bore", parse_length(bore))?;
    let rod = rod
        .as_deref()
        .map(|r| arg("--rod", parse_length(r)))
        .transpose()?;
    let question = match (pressure, load) {
        (Some(p), None) => calc::ForceQuestion::AtPressure(arg("--pressure", parse_pressure(p))?),
        (None, Some(l)) => calc::ForceQuestion::ForLoad(arg("--load", parse_force(l))?),
        _ => return Err(Failure::bad_input("give --pressure or --load")),
    };
    let r = calc::force(bore, rod, question)?;
    let side = if rod.is_some() {
        "annulus"
    } else {
        "full bore"
    };
    let human = match question {
        calc::ForceQuestion::AtPressure(_) => format!(
            "{:.2} kN ({:.0} lbf) at {:.1} bar ({:.0} psi) on {:.1} mm² ({:.3} in², {side})",
            r.kn, r.lbf, r.bar, r.psi, r.area_mm2, r.area_in2
        ),
        calc::ForceQuestion::ForLoad(_) => format!(
            "{:.1} bar ({:.0} psi) for {:.2} kN ({:.0} lbf) on {:.1} mm² ({:.3} in², {side}); friction and back pressure not included",
            r.bar, r.psi, r.kn, r.lbf, r.area_mm2, r.area_in2
        ),
    };
    emit(out, json, &r, human)
}

/// Mean oil speed in a line against its usual range or the one given.
fn velocity(
    flow: &str,
    id: &str,
    line: &Option<Line>,
    range: &Option<Vec<String>>,
    json: bool,
    out: &mut dyn std::io::Write,
) -> Result<(), Failure> {
    let q = arg("--flow", parse_flow(flow))?;
    let d = arg("--id", parse_length(id))?;
    let line = line.map(|l| match l {
        Line::Suction => calc::LineKind::Suction,
        Line::Return => calc::LineKind::Return,
        Line::Pressure => calc::LineKind::Pressure,
    });
    let range = match range.as_deref() {
        None => None,
        Some([lo, hi]) => Some((
            arg("--range LOW", parse_speed(lo))?,
            arg("--range HIGH", parse_speed(hi))?,
        )),
        Some(_) => return Err(Failure::bad_input("--range takes two speeds: LOW HIGH")),
    };
    let r = calc::velocity(q, d, line, range)?;
    let mut human = format!("{:.2} m/s ({:.1} ft/s)", r.m_s, r.ft_s);
    if let (Some(lo), Some(hi), Some(v)) = (r.low_m_s, r.high_m_s, r.verdict) {
        let whose = if range.is_some() {
            "the range given".to_string()
        } else {
            format!(
                "the usual range for a {} line (common practice)",
                format!("{:?}", r.line.unwrap_or(calc::LineKind::Pressure)).to_lowercase()
            )
        };
        human.push_str(&format!(
            "; {v} {whose}, {lo:.1}–{hi:.1} m/s ({:.0}–{:.0} ft/s)",
            lo / crate::units::M_PER_FT,
            hi / crate::units::M_PER_FT
        ));
    }
    emit(out, json, &r, human)
}

#[cfg(test)]
mod tests {
    use clap::Parser;

    use super::*;

    #[derive(Parser, Debug)]
    struct Wrapper {
        #[command(flatten)]
        calc: CalcArgs,
    }

    fn run_line(line: &str) -> Result<String, Failure> {
        let argv = std::iter::once("calc").chain(line.split_whitespace());
        let w = Wrapper::try_parse_from(argv).map_err(|e| Failure::bad_input(e.to_string()))?;
        let mut out = Vec::new();
        run(&w.calc, &mut out)?;
        Ok(String::from_utf8(out).unwrap())
    }

    fn json(line: &str) -> serde_json::Value {
        serde_json::from_str(&run_line(line).unwrap()).unwrap()
    }

    #[test]
    fn vi_human_and_json() {
        // ASTM D2270 worked example: KV40 73.30 / KV100 8.86 → VI 92 (92.43, procedure A).
        assert_eq!(
            run_line("vi 73.30 8.86").unwrap(),
            "VI 92 (92.43, procedure A)\n"
        );
        assert_eq!(
            run_line("vi 73.30 8.86 --json").unwrap(),
            "{\"vi\":92.43,\"vi_rounded\":92}\n"
        );
        assert_eq!(
            run_line("--json vi 73.30cSt 8.86cSt").unwrap(),
            "{\"vi\":92.43,\"vi_rounded\":92}\n"
        );
    }

    #[test]
    fn force_and_velocity_answer_in_either_unit_system_and_refuse_nonsense() {
        // F = p · A: 2000 psi on a 4 in bore = 2000 · 4π lbf (A = π/4 · 4² in²).
        let v = json("force --bore 4in --pressure 2000psi --json");
        assert!((v["lbf"].as_f64().unwrap() - 8000.0 * std::f64::consts::PI).abs() < 1e-6);
        // p = F / A: 100 kN on a 100 mm bore = 100 000 N / 7853.98 mm² = 127.32 bar.
        let v = json("force --bore 100mm --load 100kN --json");
        let area = std::f64::consts::FRAC_PI_4 * 100.0 * 100.0;
        assert!((v["bar"].as_f64().unwrap() - 1.0e6 / area).abs() < 1e-9);
        // v = Q / A: 60 L/min in a 20 mm line = 3.183 m/s, within the usual pressure-line
        // range and above the suction-line one (common practice).
        let v = json("velocity --flow 60lpm --id 20mm --line pressure --json");
        let expect = 1.0e-3 / (std::f64::consts::FRAC_PI_4 * 0.02 * 0.02);
        assert!((v["m_s"].as_f64().unwrap() - expect).abs() < 1e-12);
        assert_eq!(v["verdict"], "within");
        assert_eq!(
            json("velocity --flow 60lpm --id 20mm --line suction --json")["verdict"],
            "above"
        );
        for bad in [
            "force --bore 4in --load -5kN",
            "force --bore 50mm --rod 60mm --pressure 100bar",
            "force --bore 4in --pressure 100",
            "velocity --flow 60lpm --id 0mm",
            "velocity --flow 60lpm --id 20mm --range 5m/s 1m/s",
        ] {
            assert_eq!(run_line(bad).unwrap_err().code, 2, "{bad}");
        }
    }

    #[test]
    fn the_other_calculators_answer() {
        // ASTM D341-09 by the numpy script of tests/reference/d341_cases.csv: a 46/6.8 cSt oil has
        // 133.838 cSt at 20 °C, and 30 cSt read at 55 °C is a KV40 of 57.770 cSt.
        let v = json("visc --kv40 46 --kv100 6.8 --at 20C --json");
        assert!((v["cst"].as_f64().unwrap() - 133.838_180_521).abs() < 1e-6);
        let v = json("visc --kv40 46 --kv100 6.8 --at 68F --json");
        assert!((v["cst"].as_f64().unwrap() - 133.838_180_521).abs() < 1e-6);
        let v = json("visc --kv40 46 --kv100 6.8 --reading 30cSt --reading-at 55C --json");
        assert!((v["kv40_cst"].as_f64().unwrap() - 57.769_506_779).abs() < 1e-6);
        // Counts per mL 3200 / 450 / 8 fall in ISO 4406 Table 1 ranges 19 (2500–5000),
        // 16 (320–640) and 10 (5–10).
        assert_eq!(json("iso4406 3200 450 8 --json")["code"], "19/16/10");
        assert_eq!(
            json("iso4406 3200 450 8 --counted 3200 450 8 --json")["code"],
            "19/16/≥10"
        );
        assert_eq!(
            run_line("iso4406 3200 450 8").unwrap(),
            "ISO 4406 19/16/10\n"
        );
        let v = json("flow --bore 100mm --stroke 400mm --time 2.5s --json");
        // Geometry: π/4 · (0.1 m)² · 0.4 m = 3.1416 L in 2.5 s = 75.40 L/min.
        assert!((v["litres"].as_f64().unwrap() - std::f64::consts::PI).abs() < 1e-9);
        assert!((v["lpm"].as_f64().unwrap() - std::f64::consts::PI * 24.0).abs() < 1e-9);
        // Annulus: π/4 · (0.1² − 0.056²) m² · 0.4 m = 2.1564 L.
        let v = json("flow --bore 100mm --stroke 400mm --time 2.5s --rod 56mm --retract --json");
        let annulus = std::f64::consts::FRAC_PI_4 * (1.0 - 0.56 * 0.56) * 4.0;
        assert!((v["litres"].as_f64().unwrap() - annulus).abs() < 1e-9);
        // US input: 3.937 in bore, 15.748 in stroke is within 0.01 % of the metric stroke.
        let v = json("flow --bore 3.937in --stroke 15.748in --time 2.5s --json");
        assert!((v["litres"].as_f64().unwrap() / std::f64::consts::PI - 1.0).abs() < 1e-4);
        // The trade's rule: 12 GPM × 2500 psi ÷ 1714 = 17.5 hp (common practice, no published source).
        let v = json("power --flow 12gpm --pressure 2500psi --json");
        assert!((v["hp"].as_f64().unwrap() - 17.5).abs() < 0.001);
        // Same power in kW (NIST SP 811: 1 hp = 745.69987158 W) and BTU(IT)/h (0.29307107017 W).
        let hp = v["hp"].as_f64().unwrap();
        assert!((v["kw"].as_f64().unwrap() - hp * 0.745_699_871_58).abs() < 1e-9);
        assert!(
            (v["btu_per_h"].as_f64().unwrap() - hp * 745.699_871_58 / 0.293_071_070_17).abs()
                < 1e-6
        );
    }

    #[test]
    fn bad_input_exits_2_with_a_reason() {
        let cases = [
            ("vi 8 1.5", "below 2"),
            ("vi 6.8 46", "must be below KV40"),
            ("vi abc 8.86", "not a number"),
            ("vi -73.3 8.86", "greater than zero"),
            ("visc --kv40 46 --kv100 6.8 --at 20", "has no unit"),
            ("visc --kv40 46 --kv100 6.8 --at 20xyz", "unknown unit"),
            ("visc --kv40 46 --kv100 6.8", "--at TEMP"),
            ("iso4406 100 200 10", "must not rise"),
            ("iso4406 100 50 -1", "not possible"),
            ("iso4406 100 50 1 --counted 30 x 2", "whole number"),
            ("flow --bore 100 --stroke 400mm --time 2.5s", "has no unit"),
            (
                "flow --bore -100mm --stroke 400mm --time 2.5s",
                "greater than zero",
            ),
            (
                "flow --bore 100mm --stroke 400mm --time 0s",
                "greater than zero",
            ),
            (
                "flow --bore 50mm --stroke 400mm --time 2s --rod 56mm --retract",
                "thinner than the bore",
            ),
            ("power --flow 12gpm --pressure 60C", "a temperature"),
            (
                "power --flow NaNgpm --pressure 2500psi",
                "not a finite number",
            ),
            (
                "power --flow -12gpm --pressure 2500psi",
                "greater than zero",
            ),
        ];
        for (line, needle) in cases {
            let f = run_line(line).unwrap_err();
            assert_eq!(f.code, 2, "{line}");
            assert!(f.message.contains(needle), "{line}: {}", f.message);
        }
    }
}
