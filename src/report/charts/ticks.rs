//! The ticks of a chart's axes: round values covering the value range (1, 2, 2.5, 5 × 10ⁿ) with
//! the decimals their labels need, and dates across the report period spaced so their labels
//! fit the width. Nothing is drawn here.

use chrono::{Datelike, Duration, NaiveDate};

use crate::report::layout::{size, Face, Fonts};

/// Evenly spaced "nice" ticks (1, 2, 2.5, 5 × 10ⁿ) covering `lo..hi`; returns the widened
/// range, the ticks and the decimals their labels need.
pub fn nice_ticks(lo: f64, hi: f64, target: usize) -> (f64, f64, Vec<f64>, usize) {
    // Bounded so that `hi - lo` stays finite and the tick count small, whatever was stored.
    const BOUND: f64 = 1e300;
    let (mut lo, mut hi) = if lo.is_finite() && hi.is_finite() {
        (
            lo.min(hi).clamp(-BOUND, BOUND),
            lo.max(hi).clamp(-BOUND, BOUND),
        )
    } else {
        (0.0, 1.0)
    };
    if (hi - lo).abs() < 1e-12 {
        let pad = if lo.abs() > 1e-12 {
            lo.abs() * 0.1
        } else {
            1.0
        };
        lo -= pad;
        hi += pad;
    }
    let raw = (hi - lo) / target.max(1) as f64;
    let mag = 10f64.powf(raw.log10().floor());
    let step = [1.0, 2.0, 2.5, 5.0, 10.0]
        .iter()
        .map(|m| m * mag)
        .find(|s| *s >= raw * 0.999)
        .unwrap_or(10.0 * mag);
    let lo_t = (lo / step).floor() * step;
    let hi_t = (hi / step).ceil() * step;
    // About `target` ticks; the cap only guards against a step lost to rounding.
    let n = (((hi_t - lo_t) / step).round() as usize).min(4 * target.max(1) + 4);
    let ticks: Vec<f64> = (0..=n).map(|k| lo_t + k as f64 * step).collect();
    let mut decimals = 0;
    while decimals < 6 {
        let scaled = step * 10f64.powi(decimals as i32);
        if (scaled - scaled.round()).abs() < 1e-6 {
            break;
        }
        decimals += 1;
    }
    (lo_t, hi_t, ticks, decimals)
}

pub(super) fn format_tick(v: f64, decimals: usize) -> String {
    let v = if v.abs() < 1e-9 { 0.0 } else { v };
    format!("{v:.decimals$}")
}

const MONTHS: [&str; 12] = [
    "Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec",
];

fn month_name(d: NaiveDate) -> &'static str {
    MONTHS[d.month0() as usize % 12]
}

/// Date ticks between `from` and `to` that fit `width` points: days, weeks or months.
pub fn date_ticks(
    fonts: &Fonts,
    from: NaiveDate,
    to: NaiveDate,
    width: f32,
) -> Vec<(NaiveDate, String)> {
    let span = (to - from).num_days().max(1);
    let fits = |ticks: &[(NaiveDate, String)]| {
        let widest = ticks
            .iter()
            .map(|(_, s)| fonts.width(Face::Regular, size::TINY, s))
            .fold(0.0f32, f32::max);
        ticks.len() as f32 * (widest + 6.0) <= width
    };
    for step in [1i64, 2, 7, 14] {
        if span / step > 16 {
            continue;
        }
        let ticks: Vec<(NaiveDate, String)> = (0..=span / step)
            .map(|k| from + Duration::days(k * step))
            .map(|d| (d, format!("{} {}", d.day(), month_name(d))))
            .collect();
        if fits(&ticks) {
            return ticks;
        }
    }
    let multi_year = from.year() != to.year();
    for months in [1u32, 2, 3, 6, 12] {
        let mut ticks = Vec::new();
        let mut y = from.year();
        let mut m = from.month();
        // The first month start on or after `from`.
        if from.day() != 1 {
            m += 1;
            if m > 12 {
                m = 1;
                y += 1;
            }
        }
        while let Some(d) = NaiveDate::from_ymd_opt(y, m, 1) {
            if d > to {
                break;
            }
            if (m - 1).is_multiple_of(months) {
                let label = if multi_year || m == 1 || ticks.is_empty() {
                    format!("{} {}", month_name(d), d.year())
                } else {
                    month_name(d).to_string()
                };
                ticks.push((d, label));
            }
            m += 1;
            if m > 12 {
                m = 1;
                y += 1;
            }
        }
        if fits(&ticks) {
            return ticks;
        }
    }
    vec![(from, from.to_string()), (to, to.to_string())]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn nice_ticks_cover_the_range_with_round_steps() {
        // Extremes: a bounded, finite handful of ticks, never an allocation of the range.
        for (a, b) in [
            (0.0, 1e308),
            (-1e308, 1e308),
            (f64::MAX, f64::MAX),
            (1e16, 1e16 + 2.0),
            (f64::MIN_POSITIVE, 0.0),
        ] {
            let (lo, hi, ticks, _) = nice_ticks(a, b, 4);
            assert!(lo.is_finite() && hi.is_finite() && lo < hi, "{a} {b}");
            assert!(
                (2..=20).contains(&ticks.len()),
                "{a} {b}: {} ticks",
                ticks.len()
            );
        }
        let (lo, hi, ticks, dec) = nice_ticks(-2.3, 15.4, 4);
        assert!(lo <= -2.3 && hi >= 15.4);
        assert_eq!(ticks.first().copied(), Some(lo));
        assert_eq!(ticks.last().copied(), Some(hi));
        assert_eq!(dec, 0);
        let step = ticks[1] - ticks[0];
        assert_eq!(step, 5.0);
        let (_, _, t2, dec2) = nice_ticks(44.1, 45.0, 4);
        assert!((t2[1] - t2[0] - 0.25).abs() < 1e-9);
        assert_eq!(dec2, 2);
        // A flat series still gets a range.
        let (lo3, hi3, _, _) = nice_ticks(46.0, 46.0, 4);
        assert!(lo3 < 46.0 && hi3 > 46.0);
    }

    #[test]
    fn date_ticks_fit_and_stay_in_the_period() {
        let fonts = Fonts::load().unwrap();
        let from = NaiveDate::from_ymd_opt(2024, 1, 15).unwrap();
        for (to, width) in [
            (NaiveDate::from_ymd_opt(2024, 2, 10).unwrap(), 200.0),
            (NaiveDate::from_ymd_opt(2025, 12, 31).unwrap(), 150.0),
        ] {
            let ticks = date_ticks(&fonts, from, to, width);
            assert!(ticks.len() >= 2, "{ticks:?}");
            for (d, _) in &ticks {
                assert!(*d >= from && *d <= to);
            }
            let widest = ticks
                .iter()
                .map(|(_, s)| fonts.width(Face::Regular, size::TINY, s))
                .fold(0.0, f32::max);
            assert!(ticks.len() as f32 * widest <= width);
        }
    }
}
