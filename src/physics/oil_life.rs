//! Oil life used, in equivalent hours: run-hours weighted by how fast hot oil ages.
//!
//! The rule is the trade's Arrhenius rule of thumb (*common practice, no published source*):
//! the ageing rate doubles for every 10 °C above 60 °C and is 1 below. Both numbers live in an
//! [`AgeingRule`] so that a shop can set its own. Pure; no knowledge of where readings come from.

use serde::{Deserialize, Serialize};

use super::{finite, positive, PhysicsError};
use crate::units::{TempDiff, Temperature};

/// How temperature speeds up oil ageing: a rate of 2^((T − threshold)/doubling_step) above
/// the threshold, 1 at or below it.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct AgeingRule {
    pub threshold: Temperature,
    pub doubling_step: TempDiff,
}

impl Default for AgeingRule {
    /// 60 °C and 10 K (docs/engineering.md, "Computations"; common practice).
    fn default() -> Self {
        AgeingRule {
            threshold: Temperature::from_c(60.0),
            doubling_step: TempDiff(10.0),
        }
    }
}

impl AgeingRule {
    /// Ageing rate at `t` relative to oil at or below the threshold.
    pub fn factor(&self, t: Temperature) -> f64 {
        let above = t.kelvin() - self.threshold.kelvin();
        if above > 0.0 {
            2f64.powf(above / self.doubling_step.k())
        } else {
            1.0
        }
    }
}

/// Equivalent hours by the default rule; see [`equivalent_hours_with`].
pub fn equivalent_hours(points: &[(f64, Temperature)]) -> Result<f64, PhysicsError> {
    equivalent_hours_with(&AgeingRule::default(), points)
}

/// Equivalent hours of oil life used over a series of (hour-meter reading, oil temperature)
/// points in time order: Σ Δh · rate. The temperature is known only at the readings, so each
/// interval ages at the mean of the rates at its two ends (trapezoidal rule). Fewer than two
/// points cover no interval and give 0. Refuses an hour meter that goes back.
pub fn equivalent_hours_with(
    rule: &AgeingRule,
    points: &[(f64, Temperature)],
) -> Result<f64, PhysicsError> {
    positive("the doubling step", rule.doubling_step.k(), |k| {
        format!("{k} K")
    })?;
    finite("the ageing threshold", rule.threshold.kelvin())?;
    for &(h, t) in points {
        finite("the hour-meter reading", h)?;
        finite("the oil temperature", t.kelvin())?;
    }
    let mut total = 0.0;
    for pair in points.windows(2) {
        let [(h0, t0), (h1, t1)] = [pair[0], pair[1]];
        if h1 < h0 {
            return Err(PhysicsError::HoursDecreasing { from: h0, to: h1 });
        }
        total += (h1 - h0) * 0.5 * (rule.factor(t0) + rule.factor(t1));
    }
    Ok(total)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn c(v: f64) -> Temperature {
        Temperature::from_c(v)
    }

    #[test]
    fn worked_by_hand() {
        // The rule is common practice, no published source; the arithmetic is by hand.
        // 100 h at 50 °C: rate 1 → 100 eq. h. 100 h at 70 °C: rate 2 → 200. 100 h at 80 °C: 4 → 400.
        assert_eq!(
            equivalent_hours(&[(0.0, c(50.0)), (100.0, c(50.0))]).unwrap(),
            100.0
        );
        assert!(
            (equivalent_hours(&[(0.0, c(70.0)), (100.0, c(70.0))]).unwrap() - 200.0).abs() < 1e-9
        );
        assert!(
            (equivalent_hours(&[(0.0, c(80.0)), (100.0, c(80.0))]).unwrap() - 400.0).abs() < 1e-9
        );
        // 60 → 70 °C over 100 h: rates 1 and 2, mean 1.5 → 150; then 50 h at 70 °C: 100 more.
        let series = [(1000.0, c(60.0)), (1100.0, c(70.0)), (1150.0, c(70.0))];
        assert!((equivalent_hours(&series).unwrap() - 250.0).abs() < 1e-9);
        // 65 °C: 2^0.5 = 1.41421356.
        assert!((AgeingRule::default().factor(c(65.0)) - std::f64::consts::SQRT_2).abs() < 1e-12);
    }

    #[test]
    fn edges() {
        assert_eq!(equivalent_hours(&[]).unwrap(), 0.0);
        assert_eq!(equivalent_hours(&[(10.0, c(90.0))]).unwrap(), 0.0);
        assert!(matches!(
            equivalent_hours(&[(10.0, c(50.0)), (5.0, c(50.0))]),
            Err(PhysicsError::HoursDecreasing { .. })
        ));
        assert!(equivalent_hours(&[(f64::NAN, c(50.0)), (5.0, c(50.0))]).is_err());
        let rule = AgeingRule {
            threshold: c(50.0),
            doubling_step: TempDiff(0.0),
        };
        assert!(equivalent_hours_with(&rule, &[]).is_err());
    }
}
