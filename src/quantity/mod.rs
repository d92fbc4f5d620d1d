//! Quantities as people type and read them: `2500psi`, `172.4 bar`, `60C`, `3.15in`, `46cSt`.
//!
//! Owns the edge between text and the SI newtypes of `units`: the table of unit spellings, the
//! parser (with errors that say what was wrong and what is expected) and the display format
//! for a `UnitSystem`, chosen so that parsing what was displayed gives the value back. It must
//! not know files, SQL or the UI; the command line, the UI and CSV import call it.

mod display;
mod parse;
#[cfg(test)]
mod tests;
mod unit_spellings;

pub use display::*;
pub use parse::*;
pub use unit_spellings::*;

use std::fmt;
use std::str::FromStr;

use crate::units::{
    Flow, Force, Length, Power, Pressure, Seconds, Speed, Temperature, UnitSystem, Viscosity,
    Volume,
};

/// The physical dimension of a quantity.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Kind {
    Length,
    Volume,
    Flow,
    Pressure,
    Temperature,
    Time,
    Viscosity,
    Power,
    Force,
    Speed,
}

impl Kind {
    pub const ALL: [Kind; 10] = [
        Kind::Length,
        Kind::Volume,
        Kind::Flow,
        Kind::Pressure,
        Kind::Temperature,
        Kind::Time,
        Kind::Viscosity,
        Kind::Power,
        Kind::Force,
        Kind::Speed,
    ];

    /// "a length", "a pressure", ... for messages.
    pub fn noun(self) -> &'static str {
        match self {
            Kind::Length => "a length",
            Kind::Volume => "a volume",
            Kind::Flow => "a flow",
            Kind::Pressure => "a pressure",
            Kind::Temperature => "a temperature",
            Kind::Time => "a time",
            Kind::Viscosity => "a viscosity",
            Kind::Power => "a power",
            Kind::Force => "a force",
            Kind::Speed => "a speed",
        }
    }

    /// Examples of correct input, for messages.
    pub fn example(self) -> &'static str {
        match self {
            Kind::Length => "80mm or 3.15in",
            Kind::Volume => "200L or 52.8gal",
            Kind::Flow => "37.9lpm or 12gpm",
            Kind::Pressure => "172.4bar or 2500psi",
            Kind::Temperature => "60C or 140F",
            Kind::Time => "2.5s",
            Kind::Viscosity => "46cSt",
            Kind::Power => "13kW or 17.5hp",
            Kind::Force => "50kN or 11240lbf",
            Kind::Speed => "4.5m/s or 15ft/s",
        }
    }

    /// The unit a bare number is taken in, where there is one. Only where metric and US
    /// customary practice use the same unit (cSt, seconds) is a bare number unambiguous;
    /// everywhere else a unit is required.
    pub fn bare_unit(self) -> Option<Unit> {
        match self {
            Kind::Viscosity => Some(Unit::Centistoke),
            Kind::Time => Some(Unit::Second),
            _ => None,
        }
    }

    /// The unit a quantity of this kind is shown in.
    pub fn display_unit(self, system: UnitSystem) -> Unit {
        use UnitSystem::{Metric, Us};
        match (self, system) {
            (Kind::Length, Metric) => Unit::Millimetre,
            (Kind::Length, Us) => Unit::Inch,
            (Kind::Volume, Metric) => Unit::Litre,
            (Kind::Volume, Us) => Unit::UsGallon,
            (Kind::Flow, Metric) => Unit::LitrePerMinute,
            (Kind::Flow, Us) => Unit::GallonPerMinute,
            (Kind::Pressure, Metric) => Unit::Bar,
            (Kind::Pressure, Us) => Unit::Psi,
            (Kind::Temperature, Metric) => Unit::Celsius,
            (Kind::Temperature, Us) => Unit::Fahrenheit,
            (Kind::Time, _) => Unit::Second,
            (Kind::Viscosity, _) => Unit::Centistoke,
            (Kind::Power, Metric) => Unit::Kilowatt,
            (Kind::Power, Us) => Unit::Horsepower,
            (Kind::Force, Metric) => Unit::Kilonewton,
            (Kind::Force, Us) => Unit::PoundForce,
            (Kind::Speed, Metric) => Unit::MetrePerSecond,
            (Kind::Speed, Us) => Unit::FootPerSecond,
        }
    }
}

impl fmt::Display for Kind {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.noun())
    }
}

/// A value with its dimension, in SI.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Quantity {
    Length(Length),
    Volume(Volume),
    Flow(Flow),
    Pressure(Pressure),
    Temperature(Temperature),
    Time(Seconds),
    Viscosity(Viscosity),
    Power(Power),
    Force(Force),
    Speed(Speed),
}

impl Quantity {
    /// Builds a quantity from an SI value of the given kind.
    pub fn from_si(kind: Kind, si: f64) -> Quantity {
        match kind {
            Kind::Length => Quantity::Length(Length(si)),
            Kind::Volume => Quantity::Volume(Volume(si)),
            Kind::Flow => Quantity::Flow(Flow(si)),
            Kind::Pressure => Quantity::Pressure(Pressure(si)),
            Kind::Temperature => Quantity::Temperature(Temperature(si)),
            Kind::Time => Quantity::Time(Seconds(si)),
            Kind::Viscosity => Quantity::Viscosity(Viscosity(si)),
            Kind::Power => Quantity::Power(Power(si)),
            Kind::Force => Quantity::Force(Force(si)),
            Kind::Speed => Quantity::Speed(Speed(si)),
        }
    }

    pub fn kind(self) -> Kind {
        match self {
            Quantity::Length(_) => Kind::Length,
            Quantity::Volume(_) => Kind::Volume,
            Quantity::Flow(_) => Kind::Flow,
            Quantity::Pressure(_) => Kind::Pressure,
            Quantity::Temperature(_) => Kind::Temperature,
            Quantity::Time(_) => Kind::Time,
            Quantity::Viscosity(_) => Kind::Viscosity,
            Quantity::Power(_) => Kind::Power,
            Quantity::Force(_) => Kind::Force,
            Quantity::Speed(_) => Kind::Speed,
        }
    }

    /// The SI value.
    pub fn si(self) -> f64 {
        match self {
            Quantity::Length(q) => q.si(),
            Quantity::Volume(q) => q.si(),
            Quantity::Flow(q) => q.si(),
            Quantity::Pressure(q) => q.si(),
            Quantity::Temperature(q) => q.si(),
            Quantity::Time(q) => q.si(),
            Quantity::Viscosity(q) => q.si(),
            Quantity::Power(q) => q.si(),
            Quantity::Force(q) => q.si(),
            Quantity::Speed(q) => q.si(),
        }
    }

    /// The value in `unit`, or `None` when the unit is of another kind.
    pub fn value_in(self, unit: Unit) -> Option<f64> {
        (unit.kind() == self.kind()).then(|| unit.from_si(self.si()))
    }
}

impl FromStr for Quantity {
    type Err = ParseError;
    /// Same as [`parse`]: the unit is required.
    fn from_str(s: &str) -> Result<Self, ParseError> {
        parse(s)
    }
}

/// Why some text is not a quantity. Each message says what was wrong and what is expected.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ParseError {
    #[error("no value given; expected {expected}")]
    Empty { expected: String },
    #[error("`{input}` is not a number; expected {expected}")]
    NotANumber { input: String, expected: String },
    #[error("`{input}`: use a point for decimals and no thousands separator; expected {expected}")]
    Separator { input: String, expected: String },
    #[error("`{input}` is not a finite number; expected {expected}")]
    NotFinite { input: String, expected: String },
    #[error("`{input}` has no unit; {kind} needs one, e.g. {}", kind.example())]
    MissingUnit { input: String, kind: Kind },
    #[error("`{input}` has no unit; expected {expected}")]
    NoUnit { input: String, expected: String },
    #[error("unknown unit `{unit}` in `{input}`; expected {expected}")]
    UnknownUnit {
        input: String,
        unit: String,
        expected: String,
    },
    #[error("`{input}` is {found}, but {expected} is expected here, e.g. {}", expected.example())]
    WrongKind {
        input: String,
        found: Kind,
        expected: Kind,
    },
    #[error("`{input}` is below absolute zero")]
    BelowAbsoluteZero { input: String },
}
