//! The units of the database columns and the conversions between them and the SI model.
//!
//! Columns carry their unit in their name (`reservoir_temp_c`, `pressure_bar`, `flow_lpm`,
//! `bore_mm`, `volume_l`, `kv40_cst`). Converting SI → column unit and back leaves float noise in
//! the last bits (21.3 °C → 294.45 K → 21.300000000000011 °C); a stored or exported value is
//! therefore tidied to 12 significant digits (temperatures to 1e-9 degree), far finer than any
//! gauge, so a value typed as `21.3` is stored and exported as `21.3` and survives any number of
//! round trips through either unit system. The CSV exchange uses these same functions.
//! No SQL here and nothing but arithmetic.

use crate::units::{Flow, Length, Pressure, Seconds, Temperature, Viscosity, Volume};

const POW10: [f64; 23] = [
    1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16,
    1e17, 1e18, 1e19, 1e20, 1e21, 1e22,
];

/// Significant digits a stored figure keeps.
pub const STORED_DIGITS: usize = 12;

/// `x` rounded to 12 significant digits: the nearest double to that decimal.
pub fn tidy(x: f64) -> f64 {
    round_sig(x, STORED_DIGITS as i32)
}

/// `x` rounded to `digits` significant digits (1..=17); the nearest double to that decimal.
pub fn round_sig(x: f64, digits: i32) -> f64 {
    if x == 0.0 || !x.is_finite() || digits >= 17 {
        return x;
    }
    let exp = x.abs().log10().floor() as i32;
    let k = digits - 1 - exp; // decimals to keep
    if (0..=22).contains(&k) {
        let m = POW10[k as usize];
        let r = (x * m).round() / m;
        if r.is_finite() {
            r
        } else {
            x
        }
    } else if (-22..0).contains(&k) {
        let m = POW10[(-k) as usize];
        (x / m).round() * m
    } else {
        x
    }
}

/// The value in a unit other than the column's with the fewest decimal places (or else
/// significant digits) that converts back to exactly the stored column value: `2000` psi stays `2000` (not
/// `1999.99999999`, which reads back to the same stored bar), and a value stored as `999.99`
/// bar comes back as `999.99` bar after a trip through psi.
fn faithful(
    si: f64,
    to_unit: impl Fn(f64) -> f64,
    from_unit: impl Fn(f64) -> f64,
    column: impl Fn(f64) -> f64,
) -> f64 {
    let stored = column(si);
    let raw = to_unit(si);
    // Fewest decimal places first (a temperature's stored precision is absolute, so `0` °F
    // must win over `-4e-10`), then significant digits for what decimals cannot reach.
    for places in 0..=17 {
        let candidate = round_places(raw, places);
        if column(from_unit(candidate)) == stored {
            return candidate;
        }
    }
    for digits in 12..17 {
        let candidate = round_sig(raw, digits);
        if column(from_unit(candidate)) == stored {
            return candidate;
        }
    }
    raw
}

/// `x` rounded to `places` decimal places: the nearest double to that decimal (`x` itself
/// where the scaled value is beyond exact integers).
fn round_places(x: f64, places: usize) -> f64 {
    let m = POW10[places.min(22)];
    let scaled = x * m;
    if !scaled.is_finite() || scaled.abs() >= 9.0e15 {
        return x;
    }
    scaled.round() / m
}

/// A temperature in °C or °F tidied to 1e-9 degree (the noise of 273.15 is absolute, not
/// relative, so significant digits are the wrong measure near zero).
pub fn tidy_temp(deg: f64) -> f64 {
    if !deg.is_finite() {
        return deg;
    }
    (deg * 1e9).round() / 1e9
}

pub fn temp_c(t: Temperature) -> f64 {
    tidy_temp(t.c())
}
/// °F, faithful to the stored °C value.
pub fn temp_f(t: Temperature) -> f64 {
    faithful(
        t.0,
        |k| Temperature(k).f(),
        |f| Temperature::from_f(f).0,
        |k| temp_c(Temperature(k)),
    )
}
pub fn bar(p: Pressure) -> f64 {
    tidy(p.bar())
}
/// psi, faithful to the stored bar value.
pub fn psi(p: Pressure) -> f64 {
    faithful(
        p.0,
        |x| Pressure(x).psi(),
        |v| Pressure::from_psi(v).0,
        |x| bar(Pressure(x)),
    )
}
pub fn lpm(q: Flow) -> f64 {
    tidy(q.lpm())
}
/// US gal/min, faithful to the stored L/min value.
pub fn gpm(q: Flow) -> f64 {
    faithful(
        q.0,
        |x| Flow(x).gpm(),
        |v| Flow::from_gpm(v).0,
        |x| lpm(Flow(x)),
    )
}
pub fn mm(l: Length) -> f64 {
    tidy(l.mm())
}
/// Inches, faithful to the stored mm value.
pub fn inches(l: Length) -> f64 {
    faithful(
        l.0,
        |x| Length(x).inches(),
        |v| Length::from_in(v).0,
        |x| mm(Length(x)),
    )
}
pub fn litres(v: Volume) -> f64 {
    tidy(v.litres())
}
/// US gallons, faithful to the stored litre value.
pub fn gal(v: Volume) -> f64 {
    faithful(
        v.0,
        |x| Volume(x).gal(),
        |g| Volume::from_gal(g).0,
        |x| litres(Volume(x)),
    )
}
pub fn cst(v: Viscosity) -> f64 {
    tidy(v.cst())
}
pub fn secs(s: Seconds) -> f64 {
    tidy(s.0)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn tidy_removes_conversion_noise_only() {
        let t = Temperature::from_c(21.3);
        assert_ne!(
            t.c(),
            21.3,
            "the test needs a value that is noisy after conversion"
        );
        assert_eq!(temp_c(t), 21.3);
        assert_eq!(tidy(0.1 + 0.2), 0.3);
        assert_eq!(tidy(123.456789012345), 123.456789012);
        assert_eq!(tidy(-4.5e-3), -4.5e-3);
        assert_eq!(tidy(2.5e15), 2.5e15);
        assert_eq!(tidy(1000.0), 1000.0);
        assert_eq!(tidy(999.9999999999999), 1000.0);
    }

    #[test]
    fn us_values_round_trip_through_si() {
        for bar_v in [172.4, 0.5, 210.0, 999.99] {
            let p = Pressure::from_bar(bar_v);
            let back = Pressure::from_psi(psi(p));
            assert_eq!(bar(back), bar_v);
        }
        for c in [-39.9, 0.0, 0.1, 21.3, 47.25, 149.9] {
            let back = Temperature::from_f(temp_f(Temperature::from_c(c)));
            assert_eq!(temp_c(back), c);
        }
        for l in [37.9, 160.0, 0.75] {
            assert_eq!(lpm(Flow::from_gpm(gpm(Flow::from_lpm(l)))), l);
        }
        for v in [600.0, 18.5, 1234.567] {
            assert_eq!(litres(Volume::from_gal(gal(Volume::from_l(v)))), v);
        }
        for d in [250.0, 63.5, 12.7] {
            assert_eq!(mm(Length::from_in(inches(Length::from_mm(d)))), d);
        }
    }

    #[test]
    fn us_entries_export_as_typed() {
        // A value entered in psi is stored in bar; shown in psi again it reads as entered.
        let stored_bar = bar(Pressure::from_psi(2500.0));
        assert_eq!(psi(Pressure::from_bar(stored_bar)), 2500.0);
        let stored_c = temp_c(Temperature::from_f(140.0));
        assert_eq!(temp_f(Temperature::from_c(stored_c)), 140.0);
        let stored_lpm = lpm(Flow::from_gpm(12.0));
        assert_eq!(gpm(Flow::from_lpm(stored_lpm)), 12.0);
    }

    #[test]
    fn every_typed_us_value_exports_as_its_shortest_decimal() {
        // A sweep of what a US shop types: whole and one-decimal psi, °F, gpm, inches and
        // gallons. Each is stored in the metric column and must come back out as typed (the
        // shortest decimal that reads back to the stored value), e.g. 2000 psi, not
        // 1999.99999999.
        for tenths in 1..=60_000 {
            let v = f64::from(tenths) / 10.0;
            let p = bar(Pressure::from_psi(v));
            assert_eq!(psi(Pressure::from_bar(p)), v, "{v} psi");
            // One division each, so that the value is the double nearest the decimal typed.
            let g = f64::from(tenths) / 100.0;
            let q = lpm(Flow::from_gpm(g));
            assert_eq!(gpm(Flow::from_lpm(q)), g, "{g} gpm");
            let i = f64::from(tenths) / 1000.0;
            let l = mm(Length::from_in(i));
            assert_eq!(inches(Length::from_mm(l)), i, "{i} in");
            let vol = litres(Volume::from_gal(g));
            assert_eq!(gal(Volume::from_l(vol)), g, "{g} gal");
        }
        for tenths in -400..=3_000 {
            let f = f64::from(tenths) / 10.0;
            let c = temp_c(Temperature::from_f(f));
            assert_eq!(temp_f(Temperature::from_c(c)), f, "{f} °F");
        }
    }
}
