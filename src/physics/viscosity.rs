//! Viscosity of the oil in service: the ASTM D341 viscosity–temperature line (Walther form
//! with the D341-09 low-viscosity Z term), the KV40 equivalent of a field reading, ISO 3448
//! grade bands, the ASTM D2270 viscosity index and viscosity drift.
//!
//! Pure functions in SI (`Viscosity` in m²/s, `Temperature` in K); the equations themselves
//! work in mm²/s (cSt) and kelvin as the standards write them. D2270 Table 1 is data
//! (`d2270_table.csv`, written by `tests/reference/make_d2270_table.py`), not code.

use std::sync::OnceLock;

use serde::{Deserialize, Serialize};

use super::{finite, positive, show_c, show_cst, PhysicsError};
use crate::units::{Temperature, Viscosity};

/// 40 °C, where KV40 is measured.
pub const T40: Temperature = Temperature(313.15);
/// 100 °C, where KV100 is measured.
pub const T100: Temperature = Temperature(373.15);

/// Lowest viscosity the D341-09 Z term is meant for, mm²/s (*from memory* of the standard's
/// scope; far below any hydraulic oil).
pub const D341_MIN_CST: f64 = 0.21;

/// ASTM D341-09: Z = ν + 0.7 + exp(−1.47 − 1.84ν − 0.51ν²), ν in mm²/s.
pub fn d341_z(nu_cst: f64) -> f64 {
    nu_cst + 0.7 + (-1.47 - 1.84 * nu_cst - 0.51 * nu_cst * nu_cst).exp()
}

/// ASTM D341-09 inverse of [`d341_z`]:
/// ν = (Z − 0.7) − exp(−0.7487 − 3.295(Z − 0.7) + 0.6119(Z − 0.7)² − 0.3193(Z − 0.7)³).
pub fn d341_nu(z: f64) -> f64 {
    let w = z - 0.7;
    w - (-0.7487 - 3.295 * w + 0.6119 * w * w - 0.3193 * w * w * w).exp()
}

fn loglog_z(nu_cst: f64) -> f64 {
    d341_z(nu_cst).log10().log10()
}

fn check_visc(what: &'static str, v: Viscosity) -> Result<f64, PhysicsError> {
    let cst = positive(what, v.si(), show_cst)? * 1.0e6;
    if cst < D341_MIN_CST {
        return Err(PhysicsError::OutOfRange {
            what,
            value: show_cst(v.si()),
            expected: format!("at least {D341_MIN_CST} cSt for the ASTM D341 equations"),
        });
    }
    Ok(cst)
}

fn check_temp(what: &'static str, t: Temperature) -> Result<f64, PhysicsError> {
    positive(what, t.kelvin(), |k| format!("{k} K"))
}

/// A fluid's ASTM D341 viscosity–temperature line:
/// log10 log10 Z(ν) = A − B · log10 T, T in kelvin, ν in mm²/s.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct Walther {
    a: f64,
    b: f64,
}

impl Walther {
    /// The line through two (temperature, viscosity) points of one fluid.
    pub fn fit(
        p1: (Temperature, Viscosity),
        p2: (Temperature, Viscosity),
    ) -> Result<Walther, PhysicsError> {
        let (lo, hi) = if p1.0.kelvin() <= p2.0.kelvin() {
            (p1, p2)
        } else {
            (p2, p1)
        };
        let t_lo = check_temp("the temperature", lo.0)?;
        let t_hi = check_temp("the temperature", hi.0)?;
        let nu_lo = check_visc("the viscosity", lo.1)?;
        let nu_hi = check_visc("the viscosity", hi.1)?;
        if t_lo == t_hi {
            return Err(PhysicsError::SameTemperature { at: show_c(t_lo) });
        }
        if nu_hi >= nu_lo {
            return Err(PhysicsError::ViscosityNotFalling {
                t_low: show_c(t_lo),
                low_t: show_cst(lo.1.si()),
                t_high: show_c(t_hi),
                high_t: show_cst(hi.1.si()),
            });
        }
        let (y_lo, y_hi) = (loglog_z(nu_lo), loglog_z(nu_hi));
        let b = (y_lo - y_hi) / (t_hi.log10() - t_lo.log10());
        let a = y_lo + b * t_lo.log10();
        Ok(Walther { a, b })
    }

    /// The line of a fluid from its KV40 and KV100.
    pub fn from_kv40_kv100(kv40: Viscosity, kv100: Viscosity) -> Result<Walther, PhysicsError> {
        check_kv_pair(kv40, kv100)?;
        Walther::fit((T40, kv40), (T100, kv100))
    }

    /// Constant A of the D341 line.
    pub fn a(&self) -> f64 {
        self.a
    }

    /// Slope B of the D341 line (positive: viscosity falls as temperature rises).
    pub fn b(&self) -> f64 {
        self.b
    }

    /// Viscosity at `t` on this line. `t` must be a positive absolute temperature (it is for
    /// any `Temperature` the parser or the store hands out); extrapolating far outside the
    /// fitted points is the caller's risk, as with the D341 chart.
    pub fn at(&self, t: Temperature) -> Viscosity {
        let z = 10f64.powf(10f64.powf(self.a - self.b * t.kelvin().log10()));
        Viscosity::from_cst(d341_nu(z))
    }

    /// Temperature at which the fluid has viscosity `v`.
    pub fn temperature_for(&self, v: Viscosity) -> Result<Temperature, PhysicsError> {
        let nu = check_visc("the viscosity", v)?;
        Ok(Temperature(10f64.powf((self.a - loglog_z(nu)) / self.b)))
    }

    /// The line of the same slope B through a reading `reading` taken at `at`: the same
    /// fluid, thickened or thinned by use, as far as one reading can tell.
    pub fn through(&self, reading: Viscosity, at: Temperature) -> Result<Walther, PhysicsError> {
        let nu = check_visc("the viscosity reading", reading)?;
        let t = check_temp("the reading temperature", at)?;
        finite("the D341 slope", self.b)?;
        Ok(Walther {
            a: loglog_z(nu) + self.b * t.log10(),
            b: self.b,
        })
    }

    /// KV40 equivalent of a field reading at another temperature: the reading shifted to
    /// 40 °C along this fluid's D341 slope B.
    pub fn kv40_from_reading(
        &self,
        reading: Viscosity,
        at: Temperature,
    ) -> Result<Viscosity, PhysicsError> {
        Ok(self.through(reading, at)?.at(T40))
    }
}

/// Both viscosities positive and finite, KV100 below KV40.
fn check_kv_pair(kv40: Viscosity, kv100: Viscosity) -> Result<(f64, f64), PhysicsError> {
    let u = positive("KV40", kv40.si(), show_cst)? * 1.0e6;
    let y = positive("KV100", kv100.si(), show_cst)? * 1.0e6;
    if y >= u {
        return Err(PhysicsError::Kv100NotBelowKv40 {
            kv40: show_cst(kv40.si()),
            kv100: show_cst(kv100.si()),
        });
    }
    Ok((u, y))
}

/// Viscosity drift of a sample against new oil: KV40_sample / KV40_new − 1 (0.05 = +5 %).
pub fn viscosity_drift(sample_kv40: Viscosity, new_kv40: Viscosity) -> Result<f64, PhysicsError> {
    let s = positive("the sample's KV40", sample_kv40.si(), show_cst)?;
    let n = positive("the new oil's KV40", new_kv40.si(), show_cst)?;
    Ok(s / n - 1.0)
}

/// ISO 3448 viscosity grades and their midpoint kinematic viscosity at 40 °C, mm²/s.
pub const ISO_VG_GRADES: [(u32, f64); 20] = [
    (2, 2.2),
    (3, 3.2),
    (5, 4.6),
    (7, 6.8),
    (10, 10.0),
    (15, 15.0),
    (22, 22.0),
    (32, 32.0),
    (46, 46.0),
    (68, 68.0),
    (100, 100.0),
    (150, 150.0),
    (220, 220.0),
    (320, 320.0),
    (460, 460.0),
    (680, 680.0),
    (1000, 1000.0),
    (1500, 1500.0),
    (2200, 2200.0),
    (3200, 3200.0),
];

/// An ISO 3448 grade's band of KV40: midpoint ± 10 %.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct IsoVgBand {
    pub grade: u32,
    pub mid: Viscosity,
    pub min: Viscosity,
    pub max: Viscosity,
}

impl IsoVgBand {
    /// Whether `kv40` lies in the band, limits included.
    pub fn contains(&self, kv40: Viscosity) -> bool {
        kv40.si() >= self.min.si() && kv40.si() <= self.max.si()
    }
}

/// The band of ISO VG `grade`.
pub fn iso_vg_band(grade: u32) -> Result<IsoVgBand, PhysicsError> {
    let mid = ISO_VG_GRADES
        .iter()
        .find(|(g, _)| *g == grade)
        .map(|&(_, m)| m)
        .ok_or_else(|| PhysicsError::OutOfRange {
            what: "the ISO VG grade",
            value: grade.to_string(),
            expected: format!(
                "one of the ISO 3448 grades {}",
                ISO_VG_GRADES
                    .iter()
                    .map(|(g, _)| g.to_string())
                    .collect::<Vec<_>>()
                    .join(", ")
            ),
        })?;
    Ok(IsoVgBand {
        grade,
        mid: Viscosity::from_cst(mid),
        min: Viscosity::from_cst(mid * 0.9),
        max: Viscosity::from_cst(mid * 1.1),
    })
}

/// The ISO VG grade whose band holds `kv40`, if any.
pub fn iso_vg_of(kv40: Viscosity) -> Option<u32> {
    ISO_VG_GRADES
        .iter()
        .filter_map(|&(g, _)| iso_vg_band(g).ok())
        .find(|band| band.contains(kv40))
        .map(|band| band.grade)
}

/// Which ASTM D2270 procedure gave a viscosity index.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub enum ViProcedure {
    /// VI up to and including 100.
    A,
    /// VI above 100.
    B,
}

impl std::fmt::Display for ViProcedure {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(match self {
            ViProcedure::A => "A",
            ViProcedure::B => "B",
        })
    }
}

/// A viscosity index by ASTM D2270.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct ViResult {
    /// Unrounded.
    pub vi: f64,
    /// Rounded to a whole number, halves to even, as D2270 reports it.
    pub rounded: i64,
    pub procedure: ViProcedure,
}

#[derive(Clone, Copy, Debug, PartialEq)]
struct TableRow {
    kv100: f64,
    l: f64,
    h: f64,
}

const D2270_TABLE_CSV: &str = include_str!("d2270_table.csv");

fn parse_d2270_table(text: &str) -> Result<Vec<TableRow>, String> {
    let mut rows: Vec<TableRow> = Vec::new();
    let mut seen_header = false;
    for (i, line) in text.lines().enumerate() {
        let line = line.trim();
        if line.is_empty() || line.starts_with('#') {
            continue;
        }
        if !seen_header {
            seen_header = true;
            continue;
        }
        let fields: Vec<f64> = line
            .split(',')
            .map(|f| f.trim().parse::<f64>())
            .collect::<Result<_, _>>()
            .map_err(|e| format!("D2270 table line {}: {e}", i + 1))?;
        let [kv100, l, h] = fields[..] else {
            return Err(format!("D2270 table line {}: expected 3 fields", i + 1));
        };
        if rows.last().is_some_and(|r| r.kv100 >= kv100) {
            return Err(format!("D2270 table line {}: KV100 must increase", i + 1));
        }
        rows.push(TableRow { kv100, l, h });
    }
    let (Some(first), Some(last)) = (rows.first(), rows.last()) else {
        return Err("D2270 table is empty".into());
    };
    if first.kv100 != 2.0 || last.kv100 != 70.0 {
        return Err("D2270 table must run from KV100 2 to 70 mm²/s".into());
    }
    Ok(rows)
}

fn d2270_table() -> Result<&'static [TableRow], PhysicsError> {
    static TABLE: OnceLock<Result<Vec<TableRow>, String>> = OnceLock::new();
    TABLE
        .get_or_init(|| parse_d2270_table(D2270_TABLE_CSV))
        .as_deref()
        .map_err(|e| PhysicsError::Data(e.clone()))
}

/// D2270's L and H (mm²/s) for a KV100 of `kv100_cst` mm²/s: Table 1 with linear
/// interpolation from 2 to 70, the standard's quadratics above 70.
pub fn d2270_l_h(kv100_cst: f64) -> Result<(f64, f64), PhysicsError> {
    finite("KV100", kv100_cst)?;
    if kv100_cst < 2.0 {
        return Err(PhysicsError::Kv100BelowTwo {
            kv100: format!("{} cSt", super::num(kv100_cst)),
        });
    }
    if kv100_cst > 70.0 {
        let y = kv100_cst;
        return Ok((
            0.8353 * y * y + 14.67 * y - 216.0,
            0.1684 * y * y + 11.85 * y - 97.0,
        ));
    }
    let table = d2270_table()?;
    // Index of the first row at or above kv100; the table starts at 2.0, so i ≥ 0 below.
    let i = table.partition_point(|r| r.kv100 < kv100_cst);
    let hi = table
        .get(i)
        .ok_or_else(|| PhysicsError::Data("D2270 table ends below 70".into()))?;
    if hi.kv100 == kv100_cst || i == 0 {
        return Ok((hi.l, hi.h));
    }
    let lo = table[i - 1];
    let f = (kv100_cst - lo.kv100) / (hi.kv100 - lo.kv100);
    Ok((lo.l + f * (hi.l - lo.l), lo.h + f * (hi.h - lo.h)))
}

/// Viscosity index by ASTM D2270 from KV40 and KV100: procedure A where VI ≤ 100,
/// VI = (L − U)/(L − H) · 100; procedure B above, N = (log H − log U)/log Y,
/// VI = (10^N − 1)/0.00715 + 100. Undefined for KV100 below 2 mm²/s.
pub fn viscosity_index(kv40: Viscosity, kv100: Viscosity) -> Result<ViResult, PhysicsError> {
    let (u, y) = check_kv_pair(kv40, kv100)?;
    let (l, h) = d2270_l_h(y)?;
    let (vi, procedure) = if u >= h {
        ((l - u) / (l - h) * 100.0, ViProcedure::A)
    } else {
        let n = (h.log10() - u.log10()) / y.log10();
        ((10f64.powf(n) - 1.0) / 0.00715 + 100.0, ViProcedure::B)
    };
    finite("the viscosity index", vi)?;
    Ok(ViResult {
        vi,
        rounded: vi.round_ties_even() as i64,
        procedure,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn built_in_table_parses() {
        let table = d2270_table().unwrap();
        assert_eq!(table.len(), 311);
        assert!(parse_d2270_table("kv100,l,h\n2.0,1,x\n").is_err());
        assert!(parse_d2270_table("kv100,l,h\n2.0,1,2\n").is_err());
        assert!(parse_d2270_table("kv100,l,h\n").is_err());
    }

    #[test]
    fn d341_inverse_matches_z_where_the_correction_vanishes() {
        // ASTM D341-09: above ~2 cSt the exponential terms are below 1e-3 and ν = Z − 0.7.
        for nu in [2.0, 5.0, 46.0, 1000.0] {
            assert!(
                (d341_nu(d341_z(nu)) - nu).abs() < 2.0e-4 * nu.max(1.0),
                "{nu}"
            );
        }
        // The published inverse is an approximation; at 0.5 cSt it stays within 1 %.
        assert!((d341_nu(d341_z(0.5)) - 0.5).abs() < 5.0e-3);
    }

    #[test]
    fn walther_refuses_nonsense() {
        let t1 = Temperature::from_c(40.0);
        let v = Viscosity::from_cst(46.0);
        assert!(matches!(
            Walther::fit((t1, v), (t1, Viscosity::from_cst(6.8))),
            Err(PhysicsError::SameTemperature { .. })
        ));
        assert!(matches!(
            Walther::fit(
                (t1, v),
                (Temperature::from_c(100.0), Viscosity::from_cst(50.0))
            ),
            Err(PhysicsError::ViscosityNotFalling { .. })
        ));
        assert!(matches!(
            Walther::from_kv40_kv100(Viscosity::from_cst(6.8), Viscosity::from_cst(46.0)),
            Err(PhysicsError::Kv100NotBelowKv40 { .. })
        ));
        assert!(Walther::fit((Temperature(0.0), v), (t1, Viscosity::from_cst(6.8))).is_err());
        assert!(Walther::fit((Temperature(f64::NAN), v), (t1, Viscosity::from_cst(6.8))).is_err());
        assert!(Walther::fit(
            (t1, Viscosity::from_cst(0.1)),
            (Temperature::from_c(20.0), v)
        )
        .is_err());
    }

    #[test]
    fn vi_refuses_what_d2270_does_not_define() {
        let e = viscosity_index(Viscosity::from_cst(8.0), Viscosity::from_cst(1.9)).unwrap_err();
        assert!(matches!(e, PhysicsError::Kv100BelowTwo { .. }));
        assert!(e.to_string().contains("below 2"), "{e}");
        assert!(matches!(
            viscosity_index(Viscosity::from_cst(5.0), Viscosity::from_cst(5.0)),
            Err(PhysicsError::Kv100NotBelowKv40 { .. })
        ));
        assert!(matches!(
            viscosity_index(Viscosity::from_cst(-5.0), Viscosity::from_cst(2.0)),
            Err(PhysicsError::NotPositive { .. })
        ));
    }

    #[test]
    fn drift_is_a_ratio() {
        let d = viscosity_drift(Viscosity::from_cst(48.3), Viscosity::from_cst(46.0)).unwrap();
        assert!((d - 0.05).abs() < 1e-12);
    }
}
