//! How the health engine's figures read in the shop's units, for every face alike: the command
//! line, the desktop app and the PDF report all write a tile value, a change or a trend arrow
//! through these functions, so the same figure never reads two ways.
//!
//! Display only: conversion from SI to the display unit and a fixed number of decimals per
//! dimension. Nothing here decides a state or a limit.

use crate::health::baseline::BaselineIndicator;
use crate::health::indicators::{Dim, Direction};
use crate::health::{Flag, FlagKind};
use crate::quantity::{format, Kind, Quantity};
use crate::units::{Flow, TempDiff, Temperature, UnitSystem, Viscosity};

/// The unit a dimension is shown in (`""` for a bare ISO 4406 range number).
pub fn unit(dim: Dim, sys: UnitSystem) -> &'static str {
    match (dim, sys) {
        (Dim::Flow, UnitSystem::Metric) => "L/min",
        (Dim::Flow, UnitSystem::Us) => "GPM",
        (Dim::Temperature, UnitSystem::Metric) => "°C",
        (Dim::Temperature, UnitSystem::Us) => "°F",
        (Dim::TempDiff, UnitSystem::Metric) => "K",
        (Dim::TempDiff, UnitSystem::Us) => "°F",
        (Dim::Viscosity, _) => "cSt",
        (Dim::Percent, _) => "%",
        (Dim::Ratio, _) => "×",
        (Dim::Ppm, _) => "ppm",
        (Dim::AcidNumber, _) => "mg KOH/g",
        (Dim::RangeNumber, _) => "",
        (Dim::Days, _) => "days",
    }
}

/// A value of the health engine (SI for physical dimensions) as a number in the display unit.
pub fn value(dim: Dim, si: f64, sys: UnitSystem) -> f64 {
    match (dim, sys) {
        (Dim::Flow, UnitSystem::Metric) => Flow(si).lpm(),
        (Dim::Flow, UnitSystem::Us) => Flow(si).gpm(),
        (Dim::Temperature, UnitSystem::Metric) => Temperature(si).c(),
        (Dim::Temperature, UnitSystem::Us) => Temperature(si).f(),
        (Dim::TempDiff, UnitSystem::Metric) => TempDiff(si).k(),
        (Dim::TempDiff, UnitSystem::Us) => TempDiff(si).f_steps(),
        (Dim::Viscosity, _) => Viscosity(si).cst(),
        _ => si,
    }
}

/// A temperature difference in K or °F steps, optionally signed: `4.9 K`, `+8.8 °F`.
pub fn temp_diff(k: f64, sys: UnitSystem, signed: bool) -> String {
    // Rounded to the shown tenth first, and `+ 0.0` turns a negative zero positive: a rise
    // of −0.04 K reads "+0.0 K", not "-0.0 K".
    let v = (value(Dim::TempDiff, k, sys) * 10.0).round() / 10.0 + 0.0;
    let u = unit(Dim::TempDiff, sys);
    if signed {
        format!("{v:+.1} {u}")
    } else {
        format!("{v:.1} {u}")
    }
}

/// A tile or series value with its unit: `90.0 L/min`, `46.1 cSt`, `742 ppm`, `1.32×`.
pub fn text(dim: Dim, si: f64, sys: UnitSystem) -> String {
    match dim {
        Dim::Flow => format(Quantity::Flow(Flow(si)), sys),
        Dim::Temperature => format(Quantity::Temperature(Temperature(si)), sys),
        Dim::TempDiff => temp_diff(si, sys, false),
        Dim::Viscosity => format(Quantity::Viscosity(Viscosity(si)), sys),
        Dim::Percent => format!("{si:.1} %"),
        Dim::Ratio => format!("{si:.2}×"),
        Dim::Ppm => format!("{si:.0} ppm"),
        Dim::AcidNumber => format!("{si:.2} mg KOH/g"),
        Dim::RangeNumber => format!("{si:+.0}"),
        Dim::Days => format!("{si:.0} days"),
    }
}

/// A signed change of a value (a slope or a difference over a period): temperatures change by
/// a difference, not to a temperature, and small changes keep their decimals.
pub fn change(dim: Dim, d: f64, sys: UnitSystem) -> String {
    match dim {
        Dim::Temperature | Dim::TempDiff => temp_diff(d, sys, true),
        Dim::Flow => {
            let u = Kind::Flow.display_unit(sys);
            format!("{:+.2} {}", u.from_si(d), u.symbol())
        }
        Dim::Viscosity => format!("{:+.3} cSt", Viscosity(d).cst()),
        Dim::Percent => format!("{d:+.2} %"),
        Dim::Ratio => format!("{d:+.3}×"),
        Dim::Ppm => format!("{d:+.1} ppm"),
        Dim::AcidNumber => format!("{d:+.3} mg KOH/g"),
        Dim::RangeNumber => format!("{d:+.2}"),
        Dim::Days => format!("{d:+.0} days"),
    }
}

/// The arrow of a trend direction.
pub fn arrow(d: Direction) -> &'static str {
    match d {
        Direction::Rising => "↑",
        Direction::Falling => "↓",
        Direction::Flat => "→",
    }
}

/// `v` to `digits` significant figures (at most `max_decimals` decimals), trailing zeros
/// dropped: labels and messages (`96.2`, `3.51`, `16`, `-206.8`).
pub fn significant(v: f64, digits: i32, max_decimals: usize) -> String {
    let d = if v == 0.0 || !v.is_finite() {
        0
    } else {
        ((digits - 1) - v.abs().log10().floor() as i32).clamp(0, max_decimals as i32) as usize
    };
    let s = format!("{v:.d$}");
    let s = if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.')
    } else {
        s.as_str()
    };
    if s == "-0" {
        "0".into()
    } else {
        s.to_string()
    }
}

/// What a flag of `kind` measures, as its figure is introduced on every face.
pub fn flag_measure(kind: FlagKind) -> &'static str {
    match kind {
        FlagKind::LostFlow => "lost flow",
        FlagKind::LeakConductance => "leak conductance",
        FlagKind::CaseDrain => "case-drain flow over baseline",
        FlagKind::HeatRise => "heat rise over baseline",
        FlagKind::ReservoirTemp => "oil temperature",
        FlagKind::Viscosity => "KV40 off new oil",
        FlagKind::Cleanliness => "cleanliness over target",
        FlagKind::Water => "water",
        FlagKind::Acid => "acid number rise",
        FlagKind::Filter => "filter indicator",
        FlagKind::OilLevel => "oil level",
        FlagKind::Drift => "drift (EWMA)",
        FlagKind::Overdue => "work overdue",
    }
}

/// What a drift flag's figure measures, by the indicator that drifted.
pub fn drifted_measure(i: BaselineIndicator) -> &'static str {
    match i {
        BaselineIndicator::EffectiveFlow => "effective flow",
        BaselineIndicator::CorrectedFlow => "effective flow at baseline oil and pressure",
        BaselineIndicator::HeatRise => "heat rise",
        BaselineIndicator::LeakConductance => "leak conductance",
        BaselineIndicator::CaseDrain => "case-drain flow",
    }
}

/// The figure that raised a flag, against the limit it reached, in the shop's units:
/// `heat rise over baseline +11.2 K (act at +10.0 K)`. The fleet board, the unit page, the
/// report, `status` and its JSON all show a flag through this one function, so a flag never
/// reads with two figures. A flag without a number (filter, oil level) reads as its kind.
pub fn flag_figure(f: &Flag, sys: UnitSystem) -> String {
    // A drift flag watches several indicators: its figure says which one drifted.
    let drifted = f
        .figure
        .as_ref()
        .and_then(|g| g.of)
        .filter(|_| f.kind == FlagKind::Drift);
    let measure = match drifted {
        Some(i) => format!("{} of {}", flag_measure(f.kind), drifted_measure(i)),
        None => flag_measure(f.kind).to_string(),
    };
    // The engine's own figure of the flag, where it gives one: the value judged, in the
    // dimension a tile shows it in.
    if let Some(fig) = f.figure.as_ref().filter(|g| g.value.is_finite()) {
        let show = |v: f64| match fig.dim {
            Dim::TempDiff if f.kind == FlagKind::HeatRise => temp_diff(v, sys, true),
            Dim::Days => format!("{v:.0} day{}", if v.round() == 1.0 { "" } else { "s" }),
            Dim::RangeNumber => format!("{v:+.0} range numbers"),
            d => text(d, v, sys),
        };
        let mut out = format!("{measure} {}", show(fig.value));
        let mut paren = Vec::new();
        if let Some(l) = fig.limit.filter(|l| l.is_finite()) {
            paren.push(format!("{} at {}", f.state.as_str(), show(l)));
        }
        if f.kind == FlagKind::Drift {
            if let Some(b) = fig.baseline.filter(|b| b.is_finite()) {
                paren.push(format!("baseline {}", text(fig.dim, b, sys)));
            }
        }
        if !paren.is_empty() {
            out.push_str(&format!(" ({})", paren.join(", ")));
        }
        return out;
    }
    format!("{measure} {}", f.state.as_str())
}

#[cfg(test)]
mod tests {

    #[test]
    fn a_temperature_difference_that_rounds_to_zero_has_no_minus_sign() {
        assert_eq!(temp_diff(-0.04, UnitSystem::Metric, true), "+0.0 K");
        assert_eq!(temp_diff(-0.04, UnitSystem::Metric, false), "0.0 K");
        assert_eq!(temp_diff(-0.06, UnitSystem::Metric, true), "-0.1 K");
    }

    use super::*;

    #[test]
    fn differences_convert_without_the_offset() {
        // 5 K = 9 °F of difference (the Fahrenheit degree is 5/9 K by definition, NIST SP 811).
        assert_eq!(temp_diff(5.0, UnitSystem::Us, true), "+9.0 °F");
        assert_eq!(change(Dim::Temperature, -5.0, UnitSystem::Metric), "-5.0 K");
        // 313.15 K = 40 °C = 104 °F (NIST SP 811 definitions).
        assert!((value(Dim::Temperature, 313.15, UnitSystem::Us) - 104.0).abs() < 1e-9);
    }

    #[test]
    fn chart_labels_keep_three_figures() {
        // Rounding to significant figures, by hand (common practice, no published source).
        assert_eq!(significant(130.6, 3, 2), "131");
        assert_eq!(significant(10.0, 3, 2), "10");
        assert_eq!(significant(96.24, 3, 2), "96.2");
        assert_eq!(significant(3.51, 3, 2), "3.51");
        assert_eq!(significant(0.0, 3, 2), "0");
    }

    #[test]
    fn a_drift_flag_names_the_indicator_that_drifted() {
        use crate::health::flags::Figure;
        use crate::health::State;
        // 122.2 and 115.7 L/min as SI (÷ 60 000, the litre is 10⁻³ m³, NIST SP 811).
        let lpm = |v: f64| v / 60_000.0;
        let flag = Flag {
            kind: FlagKind::Drift,
            state: State::Watch,
            since: chrono::NaiveDate::from_ymd_opt(2025, 10, 27).expect("a date"),
            state_since: chrono::DateTime::UNIX_EPOCH,
            message: String::new(),
            what: String::new(),
            next_step: String::new(),
            acknowledged: false,
            acknowledgement: None,
            figure: Some(Figure {
                dim: Dim::Flow,
                value: lpm(115.7),
                limit: Some(lpm(117.7)),
                baseline: Some(lpm(122.2)),
                of: Some(BaselineIndicator::CorrectedFlow),
            }),
            restarted: None,
        };
        assert_eq!(
            flag_figure(&flag, UnitSystem::Metric),
            "drift (EWMA) of effective flow at baseline oil and pressure 115.7 L/min \
             (watch at 117.7 L/min, baseline 122.2 L/min)"
        );
        // A heat-rise drift says so; a figure that does not say reads as before.
        let heat = Flag {
            figure: Some(Figure {
                dim: Dim::TempDiff,
                value: 25.6,
                limit: Some(21.8),
                baseline: Some(18.1),
                of: Some(BaselineIndicator::HeatRise),
            }),
            ..flag.clone()
        };
        assert!(
            flag_figure(&heat, UnitSystem::Metric).starts_with("drift (EWMA) of heat rise 25.6 K")
        );
        let unnamed = Flag {
            figure: flag.figure.clone().map(|g| Figure { of: None, ..g }),
            ..flag
        };
        assert!(flag_figure(&unnamed, UnitSystem::Metric).starts_with("drift (EWMA) 115.7 L/min"));
    }

    #[test]
    fn flows_read_in_the_shop_units() {
        // 1 US gal = 3.785411784 L exactly (NIST SP 811): 37.85411784 L/min = 10 GPM.
        let si = 37.854_117_84 / 60_000.0;
        assert!((value(Dim::Flow, si, UnitSystem::Us) - 10.0).abs() < 1e-9);
        assert_eq!(unit(Dim::Flow, UnitSystem::Us), "GPM");
    }
}
