//! Physical quantities: SI `f64` newtypes and the exact conversions to the trade's units.
//!
//! Everything inside sumpbook carries SI values in these types; metric-trade units (bar,
//! L/min, °C, mm, L, cSt) and US customary units (psi, GPM, °F, in, US gal) exist only at the
//! edges — parsing, display, CSV columns and database columns. This module must not know
//! about files, SQL or the UI. Constants are the exact values of NIST SP 811.

use serde::{Deserialize, Serialize};

/// 1 inch in metres (exact, NIST SP 811).
pub const M_PER_IN: f64 = 0.0254;
/// 1 US gallon in cubic metres: 231 in³ = 3.785411784 L (exact, NIST SP 811).
pub const M3_PER_US_GAL: f64 = 3.785_411_784e-3;
/// 1 psi in pascals (NIST SP 811).
pub const PA_PER_PSI: f64 = 6_894.757_293_168;
/// 1 bar in pascals (exact).
pub const PA_PER_BAR: f64 = 1.0e5;
/// 1 horsepower (550 ft·lbf/s) in watts (NIST SP 811).
pub const W_PER_HP: f64 = 745.699_871_58;
/// 1 BTU(IT)/h in watts (NIST SP 811).
pub const W_PER_BTU_IT_PER_H: f64 = 0.293_071_070_17;
/// 0 °C in kelvin (exact).
pub const KELVIN_AT_0C: f64 = 273.15;
/// 1 pound-force in newtons (exact, NIST SP 811).
pub const N_PER_LBF: f64 = 4.448_221_615_260_5;
/// 1 foot in metres (exact, NIST SP 811).
pub const M_PER_FT: f64 = 0.3048;

macro_rules! quantity {
    ($(#[$doc:meta])* $name:ident) => {
        $(#[$doc])*
        #[derive(Clone, Copy, Debug, PartialEq, PartialOrd, Default, Serialize, Deserialize)]
        #[serde(transparent)]
        pub struct $name(pub f64);

        impl $name {
            /// The value in the SI unit named in the type's documentation.
            pub fn si(self) -> f64 {
                self.0
            }
            pub fn is_finite(self) -> bool {
                self.0.is_finite()
            }
        }
    };
}

quantity!(
    /// Length in metres.
    Length
);
quantity!(
    /// Area in square metres.
    Area
);
quantity!(
    /// Volume in cubic metres.
    Volume
);
quantity!(
    /// Volumetric flow in cubic metres per second.
    Flow
);
quantity!(
    /// Pressure (gauge) in pascals.
    Pressure
);
quantity!(
    /// Absolute temperature in kelvin.
    Temperature
);
quantity!(
    /// Temperature difference in kelvin (equal to a difference in °C).
    TempDiff
);
quantity!(
    /// Time span in seconds.
    Seconds
);
quantity!(
    /// Kinematic viscosity in square metres per second (1 cSt = 1 mm²/s = 1e-6 m²/s).
    Viscosity
);
quantity!(
    /// Power in watts.
    Power
);

quantity!(
    /// Force in newtons.
    Force
);
quantity!(
    /// Speed in metres per second (oil in a line).
    Speed
);

impl Force {
    pub fn from_kn(kn: f64) -> Self {
        Force(kn * 1.0e3)
    }
    pub fn from_lbf(lbf: f64) -> Self {
        Force(lbf * N_PER_LBF)
    }
    pub fn kn(self) -> f64 {
        self.0 / 1.0e3
    }
    pub fn lbf(self) -> f64 {
        self.0 / N_PER_LBF
    }
}

impl Speed {
    pub fn from_ft_s(ft_s: f64) -> Self {
        Speed(ft_s * M_PER_FT)
    }
    pub fn ft_s(self) -> f64 {
        self.0 / M_PER_FT
    }
}

impl Length {
    pub fn from_mm(mm: f64) -> Self {
        Self(mm / 1000.0)
    }
    pub fn from_in(inches: f64) -> Self {
        Self(inches * M_PER_IN)
    }
    pub fn mm(self) -> f64 {
        self.0 * 1000.0
    }
    pub fn inches(self) -> f64 {
        self.0 / M_PER_IN
    }
}

impl Area {
    pub fn from_mm2(mm2: f64) -> Self {
        Self(mm2 / 1.0e6)
    }
    pub fn from_in2(in2: f64) -> Self {
        Self(in2 * M_PER_IN * M_PER_IN)
    }
    pub fn in2(self) -> f64 {
        self.0 / (M_PER_IN * M_PER_IN)
    }
    pub fn mm2(self) -> f64 {
        self.0 * 1.0e6
    }
}

impl Volume {
    pub fn from_l(litres: f64) -> Self {
        Self(litres / 1000.0)
    }
    pub fn from_gal(gal: f64) -> Self {
        Self(gal * M3_PER_US_GAL)
    }
    pub fn litres(self) -> f64 {
        self.0 * 1000.0
    }
    pub fn gal(self) -> f64 {
        self.0 / M3_PER_US_GAL
    }
    pub fn from_in3(in3: f64) -> Self {
        Self(in3 * M_PER_IN * M_PER_IN * M_PER_IN)
    }
    pub fn in3(self) -> f64 {
        self.0 / (M_PER_IN * M_PER_IN * M_PER_IN)
    }
}

impl Flow {
    pub fn from_lpm(lpm: f64) -> Self {
        Self(lpm / 60_000.0)
    }
    pub fn from_gpm(gpm: f64) -> Self {
        Self(gpm * M3_PER_US_GAL / 60.0)
    }
    pub fn lpm(self) -> f64 {
        self.0 * 60_000.0
    }
    pub fn gpm(self) -> f64 {
        self.0 * 60.0 / M3_PER_US_GAL
    }
}

impl Pressure {
    pub fn from_bar(bar: f64) -> Self {
        Self(bar * PA_PER_BAR)
    }
    pub fn from_psi(psi: f64) -> Self {
        Self(psi * PA_PER_PSI)
    }
    pub fn bar(self) -> f64 {
        self.0 / PA_PER_BAR
    }
    pub fn psi(self) -> f64 {
        self.0 / PA_PER_PSI
    }
}

impl Temperature {
    pub fn from_c(c: f64) -> Self {
        Self(c + KELVIN_AT_0C)
    }
    pub fn from_f(f: f64) -> Self {
        Self::from_c((f - 32.0) * 5.0 / 9.0)
    }
    pub fn kelvin(self) -> f64 {
        self.0
    }
    pub fn c(self) -> f64 {
        self.0 - KELVIN_AT_0C
    }
    pub fn f(self) -> f64 {
        self.c() * 9.0 / 5.0 + 32.0
    }
    /// `self − other` as a temperature difference.
    pub fn minus(self, other: Temperature) -> TempDiff {
        TempDiff(self.0 - other.0)
    }
}

impl TempDiff {
    pub fn k(self) -> f64 {
        self.0
    }
    /// The same difference in °F steps (Rankine).
    pub fn f_steps(self) -> f64 {
        self.0 * 9.0 / 5.0
    }
    pub fn from_k(k: f64) -> Self {
        Self(k)
    }
    /// A difference given in °F steps.
    pub fn from_f_steps(f: f64) -> Self {
        Self(f * 5.0 / 9.0)
    }
}

impl Seconds {
    pub fn from_min(min: f64) -> Self {
        Self(min * 60.0)
    }
    pub fn from_h(h: f64) -> Self {
        Self(h * 3600.0)
    }
    pub fn minutes(self) -> f64 {
        self.0 / 60.0
    }
    pub fn hours(self) -> f64 {
        self.0 / 3600.0
    }
}

impl Viscosity {
    pub fn from_cst(cst: f64) -> Self {
        Self(cst * 1.0e-6)
    }
    pub fn cst(self) -> f64 {
        self.0 * 1.0e6
    }
}

impl Power {
    pub fn from_kw(kw: f64) -> Self {
        Self(kw * 1000.0)
    }
    pub fn from_hp(hp: f64) -> Self {
        Self(hp * W_PER_HP)
    }
    pub fn kw(self) -> f64 {
        self.0 / 1000.0
    }
    pub fn hp(self) -> f64 {
        self.0 / W_PER_HP
    }
    pub fn btu_per_h(self) -> f64 {
        self.0 / W_PER_BTU_IT_PER_H
    }
    pub fn from_btu_per_h(btu_h: f64) -> Self {
        Self(btu_h * W_PER_BTU_IT_PER_H)
    }
}

/// The shop's display and entry system; conversion happens only at the edges.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "lowercase")]
pub enum UnitSystem {
    #[default]
    Metric,
    Us,
}

#[cfg(test)]
mod tests {
    use super::*;

    fn close(a: f64, b: f64, rel: f64) -> bool {
        (a - b).abs() <= rel * a.abs().max(b.abs())
    }

    // NIST SP 811 (2008), Appendix B: exact definitions of the customary units.
    const M_PER_FT: f64 = 0.3048; // NIST SP 811: 1 ft = 0.3048 m exactly
    const N_PER_LBF: f64 = 4.448_221_615_260_5; // NIST SP 811: 1 lbf = 4.448 221 615 260 5 N exactly
    const J_PER_BTU_IT: f64 = 1_055.055_852_62; // NIST SP 811: 1 Btu(IT) = 1055.055 852 62 J exactly

    #[test]
    fn inch_and_gallon_are_the_nist_definitions() {
        // NIST SP 811: 1 in = 2.54 cm exactly; 1 US gal = 231 in³ = 3.785 411 784 L exactly.
        assert_eq!(Length::from_in(1.0).mm(), 25.4);
        assert!(close(M3_PER_US_GAL, 231.0 * M_PER_IN.powi(3), 1e-15));
        assert!(close(Volume::from_gal(1.0).litres(), 3.785_411_784, 1e-15));
        assert!(close(Volume::from_in3(231.0).gal(), 1.0, 1e-15));
    }

    #[test]
    fn psi_hp_and_btu_follow_from_the_nist_definitions() {
        // NIST SP 811: psi = lbf/in²; hp = 550 ft·lbf/s; Btu(IT)/h = 1055.05585262 J / 3600 s.
        assert!(close(PA_PER_PSI, N_PER_LBF / (M_PER_IN * M_PER_IN), 1e-12));
        // SP 811 prints the hp and Btu/h factors to eleven significant figures.
        assert!(close(W_PER_HP, 550.0 * M_PER_FT * N_PER_LBF, 1e-11));
        assert!(close(W_PER_BTU_IT_PER_H, J_PER_BTU_IT / 3600.0, 1e-11));
        assert_eq!(Pressure::from_bar(1.0).si(), 100_000.0);
        // 1 hp = 2544.43 Btu(IT)/h, the ratio of the two NIST SP 811 factors to six figures.
        assert!((Power::from_hp(1.0).btu_per_h() - 2_544.43).abs() < 0.005);
    }

    #[test]
    fn fahrenheit_fixed_points() {
        // NIST SP 811, temperature conversion: t/°C = (t/°F − 32)/1.8, so 32 °F = 0 °C,
        // 212 °F = 100 °C and −40 °F = −40 °C; T/K = t/°C + 273.15.
        assert!(close(Temperature::from_f(32.0).c() + 1.0, 1.0, 1e-15));
        assert!(close(Temperature::from_f(212.0).c(), 100.0, 1e-14));
        assert!(close(Temperature::from_f(-40.0).c(), -40.0, 1e-14));
        assert!(close(Temperature::from_c(60.0).f(), 140.0, 1e-14));
        assert!(close(Temperature::from_c(0.0).kelvin(), 273.15, 1e-15));
        assert!(close(TempDiff(10.0).f_steps(), 18.0, 1e-15));
        assert!(close(TempDiff::from_f_steps(18.0).k(), 10.0, 1e-15));
    }

    #[test]
    fn flow_units() {
        // 1 GPM = 3.785411784 L/min (NIST SP 811 gallon); L/min is metric by definition.
        assert!(close(Flow::from_gpm(1.0).lpm(), 3.785_411_784, 1e-15));
        assert!(close(Flow::from_lpm(60.0).si(), 0.001, 1e-15));
        assert!(close(Area::from_in2(1.0).mm2(), 645.16, 1e-14));
        assert!(close(Seconds::from_h(1.0).minutes(), 60.0, 1e-15));
        assert!(close(Viscosity::from_cst(46.0).si(), 46.0e-6, 1e-15));
    }

    mod props {
        use super::super::*;
        use proptest::prelude::*;

        fn round_trips(a: f64, b: f64) -> bool {
            (a - b).abs() <= 1e-12 * a.abs().max(1e-300)
        }

        proptest! {
            #[test]
            fn conversions_round_trip(v in -1.0e7f64..1.0e7) {
                prop_assert!(round_trips(v, Length::from_mm(v).mm()));
                prop_assert!(round_trips(v, Length::from_in(v).inches()));
                prop_assert!(round_trips(v, Volume::from_l(v).litres()));
                prop_assert!(round_trips(v, Volume::from_gal(v).gal()));
                prop_assert!(round_trips(v, Volume::from_in3(v).in3()));
                prop_assert!(round_trips(v, Flow::from_lpm(v).lpm()));
                prop_assert!(round_trips(v, Flow::from_gpm(v).gpm()));
                prop_assert!(round_trips(v, Pressure::from_bar(v).bar()));
                prop_assert!(round_trips(v, Pressure::from_psi(v).psi()));
                prop_assert!(round_trips(v, Viscosity::from_cst(v).cst()));
                prop_assert!(round_trips(v, Power::from_kw(v).kw()));
                prop_assert!(round_trips(v, Power::from_hp(v).hp()));
                prop_assert!(round_trips(v, Power::from_btu_per_h(v).btu_per_h()));
                prop_assert!(round_trips(v, Area::from_in2(v).in2()));
                prop_assert!(round_trips(v, Area::from_mm2(v).mm2()));
                prop_assert!(round_trips(v, Seconds::from_min(v).minutes()));
            }

            #[test]
            fn temperatures_round_trip(c in -100.0f64..400.0) {
                prop_assert!((Temperature::from_c(c).c() - c).abs() < 1e-9);
                prop_assert!((Temperature::from_f(c).f() - c).abs() < 1e-9);
                let t = Temperature::from_c(c);
                prop_assert!((Temperature::from_f(t.f()).kelvin() - t.kelvin()).abs() < 1e-9);
            }
        }
    }
}
