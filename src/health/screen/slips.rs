//! The figures a typed reading may have been meant as, had one common typing slip been made:
//! two neighbouring characters swapped, or the decimal point one place off. Pure arithmetic on
//! the figure as written; it decides nothing about whether a slip was made.
//!
//! Both slips are the ones data-entry checks have long looked for: a transposition of two
//! neighbouring digits and a misplaced decimal point (common practice, no published source).
//! A swap is its own undoing; a decimal point one place off is undone by moving it back.

/// The kind of typing slip that, undone, gives a candidate figure.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Slip {
    /// Two neighbouring digits swapped, the decimal point where it was (0.74 for 0.47, 710 for
    /// 170, 3.1 for 1.3).
    Swapped,
    /// The decimal point one place off (22 for 2.2, 0.53 for 5.3).
    Decimal,
}

/// The digits a figure is written with: up to six decimals, trailing zeros dropped (a lab's
/// 0.740 and 0.74 are the same reading).
fn written(x: f64) -> String {
    let s = format!("{x:.6}");
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

/// Every positive figure, other than `x` itself, that `x` would be had one slip been made in
/// typing it, with the slip. A swap that moves the decimal point is a decimal slip.
pub fn undone(x: f64) -> Vec<(f64, Slip)> {
    let mut out: Vec<(f64, Slip)> = Vec::new();
    if !x.is_finite() || x <= 0.0 {
        return out;
    }
    let mut add = |v: f64, slip: Slip| {
        if v.is_finite() && v > 0.0 && v != x && !out.iter().any(|(w, _)| *w == v) {
            out.push((v, slip));
        }
    };
    add(x * 10.0, Slip::Decimal);
    add(x / 10.0, Slip::Decimal);
    let s: Vec<char> = written(x).chars().collect();
    // Neighbouring characters swapped: a swap with the point moves it one place.
    for i in 0..s.len().saturating_sub(1) {
        if s[i] == '.' || s[i + 1] == '.' {
            let mut t = s.clone();
            t.swap(i, i + 1);
            if let Ok(v) = t.iter().collect::<String>().parse::<f64>() {
                add(v, Slip::Decimal);
            }
        }
    }
    // Neighbouring digits swapped, the point left where it is (1.3 for 3.1 as well).
    let digits: Vec<usize> = (0..s.len()).filter(|&i| s[i].is_ascii_digit()).collect();
    for w in digits.windows(2) {
        let (i, j) = (w[0], w[1]);
        if s[i] == s[j] {
            continue;
        }
        let mut t = s.clone();
        t.swap(i, j);
        if let Ok(v) = t.iter().collect::<String>().parse::<f64>() {
            add(v, Slip::Swapped);
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn figures(x: f64, slip: Slip) -> Vec<f64> {
        let mut v: Vec<f64> = undone(x)
            .into_iter()
            .filter(|(_, s)| *s == slip)
            .map(|(v, _)| v)
            .collect();
        v.sort_by(f64::total_cmp);
        v
    }

    // Every expected figure below is worked by hand from the written digits.
    #[test]
    fn swapped_neighbours_are_undone_on_the_written_digits() {
        assert_eq!(figures(0.74, Slip::Swapped), vec![0.47, 7.04]);
        assert_eq!(figures(710.0, Slip::Swapped), vec![170.0, 701.0]);
        assert_eq!(figures(51.7, Slip::Swapped), vec![15.7, 57.1]);
        // 0.740 as a lab writes it is 0.74; equal neighbours give nothing.
        assert_eq!(figures(0.740, Slip::Swapped), vec![0.47, 7.04]);
        assert_eq!(figures(22.0, Slip::Swapped), Vec::<f64>::new());
        // Across the point: 3.1 for 1.3.
        assert_eq!(figures(3.1, Slip::Swapped), vec![1.3]);
    }

    #[test]
    fn a_decimal_point_one_place_off_is_undone_both_ways() {
        let d = figures(22.0, Slip::Decimal);
        assert_eq!(d.len(), 2);
        assert!(
            (d[0] - 2.2).abs() < 1e-12 && (d[1] - 220.0).abs() < 1e-9,
            "{d:?}"
        );
        // 0.53: "5.03" is no one-place move; ".053" and "05.3" are.
        let d = figures(0.53, Slip::Decimal);
        assert!(d.iter().any(|v| (v - 5.3).abs() < 1e-12), "{d:?}");
        assert!(d.iter().any(|v| (v - 0.053).abs() < 1e-12), "{d:?}");
        assert!(!d.iter().any(|v| (v - 5.03).abs() < 1e-12), "{d:?}");
    }

    #[test]
    fn nothing_for_figures_that_are_not_readings() {
        assert!(undone(0.0).is_empty());
        assert!(undone(-3.5).is_empty());
        assert!(undone(f64::NAN).is_empty());
    }
}
