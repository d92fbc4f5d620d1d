//! Units as written: each unit's symbol, the spellings accepted for it, its kind and its exact
//! conversion to SI. It must not parse whole quantities or choose display precision.

use super::*;
use std::fmt;

use crate::units::{
    Flow, Force, Length, Power, Pressure, Seconds, Speed, Temperature, Viscosity, Volume,
};

/// A unit sumpbook reads and writes.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Unit {
    Millimetre,
    Centimetre,
    Metre,
    Inch,
    Foot,
    Millilitre,
    Litre,
    CubicMetre,
    UsGallon,
    LitrePerMinute,
    GallonPerMinute,
    Bar,
    Psi,
    Pascal,
    Kilopascal,
    Megapascal,
    Celsius,
    Fahrenheit,
    Kelvin,
    Second,
    Minute,
    Hour,
    Centistoke,
    Watt,
    Kilowatt,
    Horsepower,
    BtuPerHour,
    Newton,
    Kilonewton,
    PoundForce,
    MetrePerSecond,
    FootPerSecond,
}

impl Unit {
    pub const ALL: [Unit; 32] = [
        Unit::Millimetre,
        Unit::Centimetre,
        Unit::Metre,
        Unit::Inch,
        Unit::Foot,
        Unit::Millilitre,
        Unit::Litre,
        Unit::CubicMetre,
        Unit::UsGallon,
        Unit::LitrePerMinute,
        Unit::GallonPerMinute,
        Unit::Bar,
        Unit::Psi,
        Unit::Pascal,
        Unit::Kilopascal,
        Unit::Megapascal,
        Unit::Celsius,
        Unit::Fahrenheit,
        Unit::Kelvin,
        Unit::Second,
        Unit::Minute,
        Unit::Hour,
        Unit::Centistoke,
        Unit::Watt,
        Unit::Kilowatt,
        Unit::Horsepower,
        Unit::BtuPerHour,
        Unit::Newton,
        Unit::Kilonewton,
        Unit::PoundForce,
        Unit::MetrePerSecond,
        Unit::FootPerSecond,
    ];

    pub fn kind(self) -> Kind {
        use Unit::*;
        match self {
            Millimetre | Centimetre | Metre | Inch | Foot => Kind::Length,
            Millilitre | Litre | CubicMetre | UsGallon => Kind::Volume,
            LitrePerMinute | GallonPerMinute => Kind::Flow,
            Bar | Psi | Pascal | Kilopascal | Megapascal => Kind::Pressure,
            Celsius | Fahrenheit | Kelvin => Kind::Temperature,
            Second | Minute | Hour => Kind::Time,
            Centistoke => Kind::Viscosity,
            Watt | Kilowatt | Horsepower | BtuPerHour => Kind::Power,
            Newton | Kilonewton | PoundForce => Kind::Force,
            MetrePerSecond | FootPerSecond => Kind::Speed,
        }
    }

    /// The symbol used for display (and accepted by the parser).
    pub fn symbol(self) -> &'static str {
        use Unit::*;
        match self {
            Millimetre => "mm",
            Centimetre => "cm",
            Metre => "m",
            Inch => "in",
            Foot => "ft",
            Millilitre => "mL",
            Litre => "L",
            CubicMetre => "m³",
            UsGallon => "gal",
            LitrePerMinute => "L/min",
            GallonPerMinute => "GPM",
            Bar => "bar",
            Psi => "psi",
            Pascal => "Pa",
            Kilopascal => "kPa",
            Megapascal => "MPa",
            Celsius => "°C",
            Fahrenheit => "°F",
            Kelvin => "K",
            Second => "s",
            Minute => "min",
            Hour => "h",
            Centistoke => "cSt",
            Watt => "W",
            Kilowatt => "kW",
            Horsepower => "hp",
            BtuPerHour => "BTU/h",
            Newton => "N",
            Kilonewton => "kN",
            PoundForce => "lbf",
            MetrePerSecond => "m/s",
            FootPerSecond => "ft/s",
        }
    }

    /// Spellings accepted, compared after lower-casing and removing spaces and degree signs.
    pub(super) fn spellings(self) -> &'static [&'static str] {
        use Unit::*;
        match self {
            Millimetre => &["mm"],
            Centimetre => &["cm"],
            Metre => &["m"],
            Inch => &["in", "\"", "inch", "inches"],
            Foot => &["ft", "'", "foot", "feet"],
            Millilitre => &["ml"],
            Litre => &["l", "litre", "litres", "liter", "liters"],
            CubicMetre => &["m3", "m³", "m^3"],
            UsGallon => &["gal", "usgal", "gallon", "gallons"],
            LitrePerMinute => &["lpm", "l/min"],
            GallonPerMinute => &["gpm", "usgpm", "gal/min"],
            Bar => &["bar"],
            Psi => &["psi"],
            Pascal => &["pa"],
            Kilopascal => &["kpa"],
            Megapascal => &["mpa"],
            Celsius => &["c", "degc"],
            Fahrenheit => &["f", "degf"],
            Kelvin => &["k"],
            Second => &["s", "sec", "secs"],
            Minute => &["min", "mins"],
            Hour => &["h", "hr", "hrs"],
            Centistoke => &["cst", "mm2/s", "mm²/s", "mm^2/s"],
            Watt => &["w"],
            Kilowatt => &["kw"],
            Horsepower => &["hp"],
            BtuPerHour => &["btu/h", "btu/hr", "btuh"],
            Newton => &["n"],
            Kilonewton => &["kn"],
            PoundForce => &["lbf", "lb"],
            MetrePerSecond => &["m/s", "mps"],
            FootPerSecond => &["ft/s", "fps"],
        }
    }

    /// The unit written as `text` (`psi`, `°C`, `L/min`, `GPM`, ...), case-insensitive.
    pub fn from_text(text: &str) -> Option<Unit> {
        let key: String = text
            .chars()
            .filter(|c| !c.is_whitespace() && *c != '°' && *c != 'º')
            .flat_map(char::to_lowercase)
            .collect();
        Unit::ALL
            .into_iter()
            .find(|u| u.spellings().contains(&key.as_str()))
    }

    /// A value in this unit as the SI value of its kind.
    pub fn to_si(self, v: f64) -> f64 {
        use Unit::*;
        match self {
            Millimetre => Length::from_mm(v).si(),
            Centimetre => v / 100.0,
            Metre => v,
            Inch => Length::from_in(v).si(),
            Foot => Length::from_in(v * 12.0).si(),
            Millilitre => Volume::from_l(v / 1000.0).si(),
            Litre => Volume::from_l(v).si(),
            CubicMetre => v,
            UsGallon => Volume::from_gal(v).si(),
            LitrePerMinute => Flow::from_lpm(v).si(),
            GallonPerMinute => Flow::from_gpm(v).si(),
            Bar => Pressure::from_bar(v).si(),
            Psi => Pressure::from_psi(v).si(),
            Pascal => v,
            Kilopascal => v * 1.0e3,
            Megapascal => v * 1.0e6,
            Celsius => Temperature::from_c(v).si(),
            Fahrenheit => Temperature::from_f(v).si(),
            Kelvin => v,
            Second => v,
            Minute => Seconds::from_min(v).si(),
            Hour => Seconds::from_h(v).si(),
            Centistoke => Viscosity::from_cst(v).si(),
            Watt => v,
            Kilowatt => Power::from_kw(v).si(),
            Horsepower => Power::from_hp(v).si(),
            BtuPerHour => Power::from_btu_per_h(v).si(),
            Newton => v,
            Kilonewton => Force::from_kn(v).si(),
            PoundForce => Force::from_lbf(v).si(),
            MetrePerSecond => v,
            FootPerSecond => Speed::from_ft_s(v).si(),
        }
    }

    /// An SI value of this unit's kind, expressed in this unit.
    pub fn from_si(self, si: f64) -> f64 {
        use Unit::*;
        match self {
            Millimetre => Length(si).mm(),
            Centimetre => si * 100.0,
            Metre => si,
            Inch => Length(si).inches(),
            Foot => Length(si).inches() / 12.0,
            Millilitre => Volume(si).litres() * 1000.0,
            Litre => Volume(si).litres(),
            CubicMetre => si,
            UsGallon => Volume(si).gal(),
            LitrePerMinute => Flow(si).lpm(),
            GallonPerMinute => Flow(si).gpm(),
            Bar => Pressure(si).bar(),
            Psi => Pressure(si).psi(),
            Pascal => si,
            Kilopascal => si / 1.0e3,
            Megapascal => si / 1.0e6,
            Celsius => Temperature(si).c(),
            Fahrenheit => Temperature(si).f(),
            Kelvin => si,
            Second => si,
            Minute => Seconds(si).minutes(),
            Hour => Seconds(si).hours(),
            Centistoke => Viscosity(si).cst(),
            Watt => si,
            Kilowatt => Power(si).kw(),
            Horsepower => Power(si).hp(),
            BtuPerHour => Power(si).btu_per_h(),
            Newton => si,
            Kilonewton => Force(si).kn(),
            PoundForce => Force(si).lbf(),
            MetrePerSecond => si,
            FootPerSecond => Speed(si).ft_s(),
        }
    }

    /// Decimals shown for this unit, as gauges and lab reports of the trade show them.
    pub(super) fn decimals(self) -> usize {
        use Unit::*;
        match self {
            Psi | Pascal | Watt | BtuPerHour | Millilitre | Newton | PoundForce => 0,
            Millimetre | LitrePerMinute | Bar | Celsius | Fahrenheit | Kelvin | Kilopascal
            | Foot | FootPerSecond => 1,
            Centimetre | Litre | UsGallon | GallonPerMinute | Second | Minute | Hour
            | Centistoke | Kilowatt | Horsepower | Megapascal | Kilonewton | MetrePerSecond => 2,
            Metre | Inch | CubicMetre => 3,
        }
    }
}

impl fmt::Display for Unit {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.symbol())
    }
}
