//! The one table of physical bounds of stored readings and register values, by database column
//! and in the column's unit: what the importer, the forms, `calc` and the schema's CHECK
//! constraints refuse as impossible (docs/engineering.md, "Physical bounds of readings"; a test
//! compares the table with the CHECKs of the latest migrations of both backends). Pure data:
//! no parsing, no SQL, no wording.

/// The accepted range of one column, in the column's unit (`°C`, `bar`, `s`, `L/min`, …).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Bound {
    /// The database column (`reservoir_temp_c`, `pressure_bar`, …).
    pub column: &'static str,
    pub lo: f64,
    /// Whether `lo` itself is accepted (`BETWEEN lo AND hi`) or only values above it
    /// (`> lo AND <= hi`).
    pub lo_incl: bool,
    pub hi: f64,
}

impl Bound {
    /// Whether `v` (in the column's unit) lies within the bound.
    pub fn holds(&self, v: f64) -> bool {
        (if self.lo_incl {
            v >= self.lo
        } else {
            v > self.lo
        }) && v <= self.hi
    }
}

const fn incl(column: &'static str, lo: f64, hi: f64) -> Bound {
    Bound {
        column,
        lo,
        lo_incl: true,
        hi,
    }
}

const fn above(column: &'static str, lo: f64, hi: f64) -> Bound {
    Bound {
        column,
        lo,
        lo_incl: false,
        hi,
    }
}

/// Oil or air temperature, °C: from an unheated yard in winter to well past any oil in service
/// (common practice, no published source).
pub const TEMP_C: (f64, f64) = (-40.0, 150.0);

pub const RESERVOIR_TEMP_C: Bound = incl("reservoir_temp_c", TEMP_C.0, TEMP_C.1);
pub const AMBIENT_TEMP_C: Bound = incl("ambient_temp_c", TEMP_C.0, TEMP_C.1);
pub const VISC_TEMP_C: Bound = incl("visc_temp_c", TEMP_C.0, TEMP_C.1);
/// Working pressure, bar: beyond any press circuit.
pub const PRESSURE_BAR: Bound = incl("pressure_bar", 0.0, 1000.0);
pub const RELIEF_BAR: Bound = above("relief_bar", 0.0, 1000.0);
/// A timed stroke, s: at most an hour.
pub const STROKE_TIME_S: Bound = above("stroke_time_s", 0.0, 3600.0);
pub const CYCLE_TIME_S: Bound = above("cycle_time_s", 0.0, 86400.0);
pub const HOURS: Bound = incl("hours", 0.0, 1.0e7);
pub const CASE_DRAIN_LPM: Bound = incl("case_drain_lpm", 0.0, 10000.0);
pub const RATED_FLOW_LPM: Bound = above("rated_flow_lpm", 0.0, 10000.0);
pub const RESERVOIR_L: Bound = above("reservoir_l", 0.0, 1.0e5);
pub const VOLUME_L: Bound = above("volume_l", 0.0, 1.0e5);
pub const STROKE_BORE_MM: Bound = above("stroke_bore_mm", 0.0, 5000.0);
pub const STROKE_ROD_MM: Bound = above("stroke_rod_mm", 0.0, 5000.0);
pub const STROKE_LENGTH_MM: Bound = above("stroke_length_mm", 0.0, 50000.0);
pub const KV40_CST: Bound = above("kv40_cst", 0.0, 1.0e5);
pub const KV100_CST: Bound = above("kv100_cst", 0.0, 1.0e4);
pub const VISC_CST: Bound = above("visc_cst", 0.0, 1.0e5);
pub const KV40_NEW_CST: Bound = above("kv40_new_cst", 0.0, 1.0e5);
pub const KV100_NEW_CST: Bound = above("kv100_new_cst", 0.0, 1.0e4);
pub const COUNT_4UM_PER_ML: Bound = incl("count_4um_per_ml", 0.0, 1.0e9);
pub const COUNT_6UM_PER_ML: Bound = incl("count_6um_per_ml", 0.0, 1.0e9);
pub const COUNT_14UM_PER_ML: Bound = incl("count_14um_per_ml", 0.0, 1.0e9);
pub const WATER_PPM: Bound = incl("water_ppm", 0.0, 1.0e6);
pub const ACID_MGKOH_G: Bound = incl("acid_mgkoh_g", 0.0, 50.0);
pub const ACID_NEW_MGKOH_G: Bound = incl("acid_new_mgkoh_g", 0.0, 50.0);
/// The shop's electricity price per kWh, in its own currency: far above any tariff in any
/// currency in use, low enough to catch a price typed per MWh.
pub const ELECTRICITY_PRICE: Bound = incl("electricity_price", 0.0, 100.0);

/// Every bound, for the comparison with the schema.
pub const ALL: &[Bound] = &[
    RESERVOIR_TEMP_C,
    AMBIENT_TEMP_C,
    VISC_TEMP_C,
    PRESSURE_BAR,
    RELIEF_BAR,
    STROKE_TIME_S,
    CYCLE_TIME_S,
    HOURS,
    CASE_DRAIN_LPM,
    RATED_FLOW_LPM,
    RESERVOIR_L,
    VOLUME_L,
    STROKE_BORE_MM,
    STROKE_ROD_MM,
    STROKE_LENGTH_MM,
    KV40_CST,
    KV100_CST,
    VISC_CST,
    KV40_NEW_CST,
    KV100_NEW_CST,
    COUNT_4UM_PER_ML,
    COUNT_6UM_PER_ML,
    COUNT_14UM_PER_ML,
    WATER_PPM,
    ACID_MGKOH_G,
    ACID_NEW_MGKOH_G,
    ELECTRICITY_PRICE,
];

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn an_open_bound_refuses_its_own_end() {
        assert!(PRESSURE_BAR.holds(0.0) && !RELIEF_BAR.holds(0.0));
        assert!(RELIEF_BAR.holds(1000.0) && !RELIEF_BAR.holds(1000.1));
        let mut cols: Vec<&str> = ALL.iter().map(|b| b.column).collect();
        cols.sort_unstable();
        cols.dedup();
        assert_eq!(cols.len(), ALL.len(), "one bound per column");
    }
}
