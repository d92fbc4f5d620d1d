//! Energy lost while a worn unit waits for repair: the power its lost flow turns into heat, the
//! hours it runs a year, and what that energy costs. Pure arithmetic on SI values; it must not
//! read records or decide anything about a unit's health.

use super::hydraulics::heat_power;
use crate::units::{Flow, Power, Pressure};

/// Hours in an average Gregorian year (365.2425 days): the most a unit can run in one.
pub const HOURS_PER_YEAR: f64 = 8_765.82;

/// Shortest span between two hour-meter readings that a yearly rate is drawn from: shorter
/// spans say more about one week's shifts than about the year.
pub const MIN_SPAN_DAYS: f64 = 28.0;

/// The power a unit turns into heat through flow it has lost: the flow that no longer reaches
/// the work leaks back across the full working pressure, so P = Q_lost · p (all of the
/// pressure energy of the leak turns to heat).
pub fn lost_flow_heat(lost_flow: Flow, working_pressure: Pressure) -> Power {
    heat_power(lost_flow, working_pressure)
}

/// Run hours a year from two hour-meter readings `(day, hours)` (days counted from any fixed
/// day): the meter's advance over the span, scaled to a year. `None` when the span is shorter
/// than [`MIN_SPAN_DAYS`], the meter went back (replaced or reset), or the readings are not
/// finite; at most [`HOURS_PER_YEAR`].
pub fn run_hours_per_year(first: (f64, f64), last: (f64, f64)) -> Option<f64> {
    let (days, hours) = (last.0 - first.0, last.1 - first.1);
    if !(days.is_finite() && hours.is_finite()) || days < MIN_SPAN_DAYS || hours < 0.0 {
        return None;
    }
    Some((hours / days * HOURS_PER_YEAR / 24.0).min(HOURS_PER_YEAR))
}

/// Energy in kWh of `power` running `hours` (1 kWh = 1 kW for 1 h).
pub fn energy_kwh(power: Power, hours: f64) -> f64 {
    power.kw() * hours
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn heat_of_lost_flow_matches_the_handbook_power_formulas() {
        // The fluid power handbook forms of P = Δp·Q: kW = L/min × bar / 600, and
        // hp = GPM × psi / 1714 (1 hp = 745.7 W, NIST SP 811). 10 L/min at 100 bar: 1.667 kW.
        let p = lost_flow_heat(Flow::from_lpm(10.0), Pressure::from_bar(100.0));
        assert!((p.kw() - 10.0 * 100.0 / 600.0).abs() < 1e-9, "{}", p.kw());
        // 5 GPM at 1000 psi: 5 × 1000 / 1714 = 2.917 hp.
        let p = lost_flow_heat(Flow::from_gpm(5.0), Pressure::from_psi(1000.0));
        assert!((p.hp() - 5.0 * 1000.0 / 1714.0).abs() < 0.001, "{}", p.hp());
    }

    #[test]
    fn run_hours_a_year_come_from_the_meters_advance() {
        // Two shifts, five days a week: 80 h a week over 28 days is 320 h, 4174 h a year
        // (80 h × 365.2425 / 7, from memory of the Gregorian year's length).
        let h = run_hours_per_year((0.0, 1000.0), (28.0, 1320.0)).unwrap();
        assert!((h - 80.0 * 365.2425 / 7.0).abs() < 0.01, "{h}");
        assert_eq!(run_hours_per_year((0.0, 1000.0), (14.0, 1100.0)), None);
        assert_eq!(run_hours_per_year((0.0, 1000.0), (60.0, 900.0)), None);
        // A meter that ran faster than the clock is held to a year's hours.
        assert_eq!(
            run_hours_per_year((0.0, 0.0), (30.0, 2000.0)),
            Some(HOURS_PER_YEAR)
        );
    }

    #[test]
    fn energy_is_power_times_hours() {
        // 1.5 kW for 4000 h is 6000 kWh (definition of the kilowatt-hour).
        assert!((energy_kwh(Power(1500.0), 4000.0) - 6000.0).abs() < 1e-9);
    }
}
