//! How the engine writes figures into the sentences of its flags and work items: in the shop's
//! unit system, through `quantity::format`, so a flag reads like every other screen.
//! Pure; no rules here.

use crate::quantity::{format, Quantity};
use crate::units::{Flow, Pressure, Seconds, TempDiff, Temperature, UnitSystem, Viscosity};

pub fn flow(si: f64, sys: UnitSystem) -> String {
    format(Quantity::Flow(Flow(si)), sys)
}

pub fn temp(kelvin: f64, sys: UnitSystem) -> String {
    format(Quantity::Temperature(Temperature(kelvin)), sys)
}

/// A temperature difference: K in metric, °F steps in US customary.
pub fn tdiff(k: f64, sys: UnitSystem) -> String {
    match sys {
        UnitSystem::Metric => format!("{k:.1} K"),
        UnitSystem::Us => format!("{:.1} °F", TempDiff(k).f_steps()),
    }
}

pub fn pressure(si: f64, sys: UnitSystem) -> String {
    format(Quantity::Pressure(Pressure(si)), sys)
}

pub fn seconds(si: f64) -> String {
    format(Quantity::Time(Seconds(si)), UnitSystem::Metric)
}

pub fn visc(si: f64, sys: UnitSystem) -> String {
    format(Quantity::Viscosity(Viscosity(si)), sys)
}

/// A number with up to `d` decimals and no trailing zeros (`1.30` → `1.3`).
pub fn num(v: f64, d: usize) -> String {
    let s = format!("{v:.d$}");
    let s = if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    };
    if s == "-0" {
        "0".into()
    } else {
        s
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_and_differences() {
        assert_eq!(num(1.30, 2), "1.3");
        assert_eq!(num(15.0, 1), "15");
        assert_eq!(num(-0.01, 1), "0");
        // 5 K = 9 °F steps (a kelvin is 9/5 of a degree Fahrenheit; from memory, exact by definition).
        assert_eq!(tdiff(5.0, UnitSystem::Us), "9.0 °F");
        assert_eq!(tdiff(5.0, UnitSystem::Metric), "5.0 K");
    }
}
