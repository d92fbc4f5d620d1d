//! Typing slips and bounds: a value as typed with two digits swapped or the decimal point moved,
//! and whether a reading stays within the importer's bounds. It must not know the plant.

use super::*;

/// A value as typed, with one slip: two neighbouring digits swapped, or the decimal point
/// moved one place. `None` when the slip would leave it unchanged.
pub fn slipped(value: f64, swap: bool, pick: u64) -> Option<f64> {
    let text = value.to_string();
    if text.contains('e') || text.starts_with('-') {
        return None;
    }
    let (int, frac) = match text.split_once('.') {
        Some((i, f)) => (i.to_string(), f.to_string()),
        None => (text.clone(), String::new()),
    };
    let typed = if swap {
        let mut digits: Vec<char> = format!("{int}{frac}").chars().collect();
        let pairs: Vec<usize> = (0..digits.len().saturating_sub(1))
            .filter(|&i| digits[i] != digits[i + 1])
            .collect();
        if pairs.is_empty() {
            return None;
        }
        let i = pairs[(pick % pairs.len() as u64) as usize];
        digits.swap(i, i + 1);
        let all: String = digits.into_iter().collect();
        let (a, b) = all.split_at(int.len());
        if b.is_empty() {
            a.to_string()
        } else {
            format!("{a}.{b}")
        }
    } else if pick.is_multiple_of(2) && !frac.is_empty() {
        // Point one place right: 34.6 → 346.
        let (first, rest) = frac.split_at(1);
        if rest.is_empty() {
            format!("{int}{first}")
        } else {
            format!("{int}{first}.{rest}")
        }
    } else {
        // Point one place left: 34.6 → 3.46, 118 → 11.8.
        if int.len() < 2 && int != "0" {
            format!("0.{int}{frac}")
        } else if int.len() < 2 {
            return None;
        } else {
            let (a, b) = int.split_at(int.len() - 1);
            format!("{a}.{b}{frac}")
        }
    };
    let v: f64 = typed.parse().ok()?;
    (v != value && v.is_finite()).then_some(v)
}

/// Whether a set of check values is one the importer accepts (the schema's bounds).
pub(super) fn check_bounds(vals: &[(&'static str, f64, f64)]) -> bool {
    vals.iter().all(|&(k, v, _)| match k {
        "reservoir_temp_c" | "ambient_temp_c" => (-40.0..=150.0).contains(&v),
        "pressure_bar" => (0.0..=1000.0).contains(&v),
        "stroke_time_s" => v > 0.0 && v <= 3600.0,
        "hours" => (0.0..=1e7).contains(&v),
        "case_drain_lpm" => (0.0..=10000.0).contains(&v),
        _ => true,
    })
}

/// Whether a set of sample values is one the importer accepts.
pub(super) fn sample_bounds(vals: &[(&'static str, f64, f64)]) -> bool {
    let get = |k: &str| vals.iter().find(|v| v.0 == k).map(|v| v.1);
    let ok_each = vals.iter().all(|&(k, v, _)| match k {
        "kv40_cst" => v > 0.0 && v <= 100000.0,
        "kv100_cst" => v > 0.0 && v <= 10000.0,
        "water_ppm" => (0.0..=1e6).contains(&v),
        "acid_mgkoh_g" => (0.0..=50.0).contains(&v),
        _ => (0.0..=1e9).contains(&v),
    });
    let kv = match (get("kv40_cst"), get("kv100_cst")) {
        (Some(a), Some(b)) => b < a,
        _ => true,
    };
    let counts = match (
        get("count_4um_per_ml"),
        get("count_6um_per_ml"),
        get("count_14um_per_ml"),
    ) {
        (Some(a), Some(b), Some(c)) => b <= a && c <= b,
        _ => true,
    };
    ok_each && kv && counts
}

/// Mistypes one of `vals` (the name, the value, its rounding step) in place, if a slip the
/// importer would accept can be found; returns (field, intended, typed, how).
pub(super) fn slip_one(
    r: &mut Rng,
    vals: &mut [(&'static str, f64, f64)],
    fits: fn(&[(&'static str, f64, f64)]) -> bool,
) -> Option<(&'static str, f64, f64, &'static str)> {
    let start = r.int(0, vals.len() - 1);
    let swap_first = r.chance(0.5);
    let pick = r.next_u64();
    for k in 0..vals.len() {
        let idx = (start + k) % vals.len();
        for swap in [swap_first, !swap_first] {
            let intended = vals[idx].1;
            let Some(typed) = slipped(intended, swap, pick) else {
                continue;
            };
            vals[idx].1 = typed;
            if fits(vals) {
                let how = if swap {
                    "swapped_digits"
                } else {
                    "slipped_decimal"
                };
                return Some((vals[idx].0, intended, typed, how));
            }
            vals[idx].1 = intended;
        }
    }
    None
}
