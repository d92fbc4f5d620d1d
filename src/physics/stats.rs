//! Trend statistics for indicators: least-squares slope with its standard error and a
//! forecast of when a limit is reached (only for a significant slope), the EWMA chart with
//! time-varying limits, the tabular CUSUM, and a median of the last few values.
//!
//! Pure arithmetic on numbers the health engine hands in (x usually in weeks). Formulas as in
//! D. C. Montgomery, *Introduction to Statistical Quality Control*; checked in the tests
//! against numpy, scipy and pandas results and a CUSUM table worked by hand.

use chrono::{DateTime, TimeDelta, Utc};
use serde::{Deserialize, Serialize};

use super::{finite, positive, PhysicsError};

/// |t| from which a slope counts as significant and a forecast is made; also the number of
/// standard errors on either side of the slope that give the forecast's range.
pub const SIGNIFICANT_T: f64 = 2.0;

/// Which side of the baseline a drift detector signalled.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Side {
    High,
    Low,
}

/// A least-squares line y = intercept + slope · x.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct LinearTrend {
    pub n: usize,
    pub slope: f64,
    pub intercept: f64,
    /// Standard error of the slope, √(s² / Sxx) with s² = SSE / (n − 2).
    pub slope_se: f64,
    pub x_mean: f64,
    pub y_mean: f64,
    /// The largest x of the data.
    pub last_x: f64,
}

/// When a fitted line reaches a limit, with the range from slope ± 2 standard errors (lines
/// through the data's centroid). `latest` is `None` when the shallow end of the range never
/// reaches the limit. `earliest` may lie before the last point: the limit may already be near.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct Forecast {
    pub at: f64,
    pub earliest: f64,
    pub latest: Option<f64>,
}

impl LinearTrend {
    /// slope / standard error; infinite for a perfect non-flat fit.
    pub fn t_stat(&self) -> f64 {
        if self.slope_se > 0.0 {
            self.slope / self.slope_se
        } else if self.slope == 0.0 {
            0.0
        } else {
            f64::INFINITY.copysign(self.slope)
        }
    }

    /// |t| ≥ 2.
    pub fn is_significant(&self) -> bool {
        self.t_stat().abs() >= SIGNIFICANT_T
    }

    pub fn value_at(&self, x: f64) -> f64 {
        self.intercept + self.slope * x
    }

    /// Where the line reaches `limit`, only when the slope is significant and heads from the
    /// fitted value at the last point towards the limit.
    pub fn forecast(&self, limit: f64) -> Option<Forecast> {
        if !self.is_significant() || !limit.is_finite() {
            return None;
        }
        let ahead = limit - self.value_at(self.last_x);
        if ahead * self.slope < 0.0 {
            return None;
        }
        let rise = limit - self.y_mean;
        let spread = SIGNIFICANT_T * self.slope_se;
        let steep = self.slope + spread.copysign(self.slope);
        let shallow = self.slope - spread.copysign(self.slope);
        let latest = (shallow * self.slope > 0.0).then(|| self.x_mean + rise / shallow);
        Some(Forecast {
            at: self.x_mean + rise / self.slope,
            earliest: self.x_mean + rise / steep,
            latest,
        })
    }
}

/// Least-squares line through `points` (x, y). Needs three points (for a standard error) and
/// at least two different x.
pub fn linear_trend(points: &[(f64, f64)]) -> Result<LinearTrend, PhysicsError> {
    if points.len() < 3 {
        return Err(PhysicsError::TooFewPoints {
            need: 3,
            got: points.len(),
        });
    }
    for &(x, y) in points {
        finite("a trend point's time", x)?;
        finite("a trend point's value", y)?;
    }
    let n = points.len() as f64;
    let x_mean = points.iter().map(|p| p.0).sum::<f64>() / n;
    let y_mean = points.iter().map(|p| p.1).sum::<f64>() / n;
    let sxx: f64 = points.iter().map(|p| (p.0 - x_mean).powi(2)).sum();
    let sxy: f64 = points.iter().map(|p| (p.0 - x_mean) * (p.1 - y_mean)).sum();
    let x_scale = points
        .iter()
        .map(|p| p.0.abs())
        .fold(0.0, f64::max)
        .max(1.0);
    if sxx <= (x_scale * 1e-12).powi(2) * n {
        return Err(PhysicsError::NoSpreadInX);
    }
    let slope = sxy / sxx;
    let intercept = y_mean - slope * x_mean;
    let sse: f64 = points
        .iter()
        .map(|p| (p.1 - intercept - slope * p.0).powi(2))
        .sum();
    let slope_se = (sse / (n - 2.0) / sxx).sqrt();
    let last_x = points.iter().map(|p| p.0).fold(f64::NEG_INFINITY, f64::max);
    Ok(LinearTrend {
        n: points.len(),
        slope,
        intercept,
        slope_se,
        x_mean,
        y_mean,
        last_x,
    })
}

/// An ordinary least-squares line with the standard errors of both coefficients.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct LineFit {
    pub n: usize,
    pub intercept: f64,
    pub slope: f64,
    pub intercept_se: f64,
    pub slope_se: f64,
    /// √(SSE / (n − 2)).
    pub residual_sd: f64,
    pub x_mean: f64,
    /// Σ (x − x̄)².
    pub sxx: f64,
}

impl LineFit {
    pub fn value_at(&self, x: f64) -> f64 {
        self.intercept + self.slope * x
    }

    /// Standard error of the fitted line's value at `x`: s · √(1/n + (x − x̄)²/Sxx).
    pub fn se_mean_at(&self, x: f64) -> f64 {
        self.residual_sd * (1.0 / self.n as f64 + (x - self.x_mean).powi(2) / self.sxx).sqrt()
    }
}

/// Ordinary least squares y = a + b·x with the textbook standard errors
/// se(b) = s/√Sxx, se(a) = s·√(1/n + x̄²/Sxx), s² = SSE/(n − 2) (as statsmodels' OLS reports
/// them). Needs three points and some spread in x.
pub fn line_fit(points: &[(f64, f64)]) -> Result<LineFit, PhysicsError> {
    let t = linear_trend(points)?;
    let n = points.len() as f64;
    let sxx: f64 = points.iter().map(|p| (p.0 - t.x_mean).powi(2)).sum();
    let sse: f64 = points.iter().map(|p| (p.1 - t.value_at(p.0)).powi(2)).sum();
    let s = (sse / (n - 2.0)).sqrt();
    Ok(LineFit {
        n: points.len(),
        intercept: t.intercept,
        slope: t.slope,
        intercept_se: s * (1.0 / n + t.x_mean * t.x_mean / sxx).sqrt(),
        slope_se: t.slope_se,
        residual_sd: s,
        x_mean: t.x_mean,
        sxx,
    })
}

/// The standard error of a value carried `step` ahead from the latest of readings taken at
/// `xs` along their least-squares slope, y_n + step · b, every reading with the scatter
/// `sigma`: σ · √(1 + step²/Sxx + 2 · step · (x_n − x̄)/Sxx). The last term is the latest
/// reading's covariance with the slope, σ² (x_n − x̄)/Sxx (it pulls the slope its own way):
/// left out, three evenly spaced readings carried one spacing ahead would seem to carry
/// 1.22 σ rather than 1.58 σ. The variance of a linear combination of the readings (ordinary
/// least squares, any regression text). Without spread in x, the latest reading's σ alone.
pub fn step_ahead_se(xs: &[f64], step: f64, sigma: f64) -> f64 {
    let (Some(&last), n) = (xs.last(), xs.len() as f64) else {
        return sigma;
    };
    let mean = xs.iter().sum::<f64>() / n;
    let sxx: f64 = xs.iter().map(|x| (x - mean).powi(2)).sum();
    if sxx > 0.0 {
        sigma * (1.0 + (step * step + 2.0 * step * (last - mean)) / sxx).sqrt()
    } else {
        sigma
    }
}

const SECONDS_PER_WEEK: f64 = 7.0 * 86_400.0;

/// A trend over dated values, x in weeks since the first point.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct TimeTrend {
    pub origin: DateTime<Utc>,
    pub trend: LinearTrend,
}

/// [`Forecast`] as dates.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct DatedForecast {
    pub at: DateTime<Utc>,
    pub earliest: DateTime<Utc>,
    pub latest: Option<DateTime<Utc>>,
}

impl TimeTrend {
    /// Change per week.
    pub fn slope_per_week(&self) -> f64 {
        self.trend.slope
    }

    pub fn is_significant(&self) -> bool {
        self.trend.is_significant()
    }

    fn date(&self, weeks: f64) -> Option<DateTime<Utc>> {
        let ms = weeks * SECONDS_PER_WEEK * 1000.0;
        // Beyond ±100 000 years a date means nothing and chrono cannot hold it.
        if !ms.is_finite() || ms.abs() > 3.0e18 {
            return None;
        }
        self.origin
            .checked_add_signed(TimeDelta::try_milliseconds(ms.round() as i64)?)
    }

    /// The date a limit is reached, with its range; see [`LinearTrend::forecast`]. `None` also
    /// when the date is beyond what a calendar can hold.
    pub fn forecast(&self, limit: f64) -> Option<DatedForecast> {
        let f = self.trend.forecast(limit)?;
        Some(DatedForecast {
            at: self.date(f.at)?,
            earliest: self.date(f.earliest)?,
            latest: f.latest.and_then(|w| self.date(w)),
        })
    }
}

/// Least-squares trend of dated values; x is weeks since the earliest point.
pub fn linear_trend_over_time(points: &[(DateTime<Utc>, f64)]) -> Result<TimeTrend, PhysicsError> {
    let origin = points
        .iter()
        .map(|p| p.0)
        .min()
        .ok_or(PhysicsError::TooFewPoints { need: 3, got: 0 })?;
    let xy: Vec<(f64, f64)> = points
        .iter()
        .map(|&(t, y)| {
            (
                (t - origin).num_milliseconds() as f64 / 1000.0 / SECONDS_PER_WEEK,
                y,
            )
        })
        .collect();
    Ok(TimeTrend {
        origin,
        trend: linear_trend(&xy)?,
    })
}

/// One step of the EWMA chart.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct EwmaPoint {
    pub z: f64,
    pub lower: f64,
    pub upper: f64,
    pub signal: Option<Side>,
}

/// The EWMA chart: z_i = λ·x_i + (1 − λ)·z_{i−1}, z_0 = baseline mean μ0, limits
/// μ0 ± L·σ·√(λ/(2 − λ) · (1 − (1 − λ)^{2i})).
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct Ewma {
    mean: f64,
    sigma: f64,
    lambda: f64,
    l: f64,
    z: f64,
    i: u32,
}

impl Ewma {
    /// Defaults (docs/engineering.md, "Computations", drift detectors): λ = 0.25, L = 3, as
    /// the shop's limits start with (`health::limits`).
    pub const LAMBDA: f64 = 0.25;
    pub const L: f64 = 3.0;

    /// A chart on a baseline of mean `mean` and standard deviation `sigma`, default λ and L.
    pub fn new(mean: f64, sigma: f64) -> Result<Ewma, PhysicsError> {
        Ewma::with_params(mean, sigma, Ewma::LAMBDA, Ewma::L)
    }

    pub fn with_params(mean: f64, sigma: f64, lambda: f64, l: f64) -> Result<Ewma, PhysicsError> {
        finite("the baseline mean", mean)?;
        positive("the baseline σ", sigma, |v| v.to_string())?;
        positive("the EWMA weight λ", lambda, |v| v.to_string())?;
        if lambda > 1.0 {
            return Err(PhysicsError::OutOfRange {
                what: "the EWMA weight λ",
                value: lambda.to_string(),
                expected: "a value above 0 and at most 1".into(),
            });
        }
        positive("the EWMA limit width L", l, |v| v.to_string())?;
        Ok(Ewma {
            mean,
            sigma,
            lambda,
            l,
            z: mean,
            i: 0,
        })
    }

    /// The current EWMA value (the baseline mean before any update).
    pub fn value(&self) -> f64 {
        self.z
    }

    /// Adds one observation.
    pub fn update(&mut self, x: f64) -> Result<EwmaPoint, PhysicsError> {
        finite("an EWMA observation", x)?;
        self.i = self.i.saturating_add(1);
        self.z = self.lambda * x + (1.0 - self.lambda) * self.z;
        let decay = (1.0 - self.lambda).powf(2.0 * f64::from(self.i));
        let half = self.l * self.sigma * (self.lambda / (2.0 - self.lambda) * (1.0 - decay)).sqrt();
        let (lower, upper) = (self.mean - half, self.mean + half);
        let signal = if self.z > upper {
            Some(Side::High)
        } else if self.z < lower {
            Some(Side::Low)
        } else {
            None
        };
        Ok(EwmaPoint {
            z: self.z,
            lower,
            upper,
            signal,
        })
    }

    /// Adds observations in order.
    pub fn run(&mut self, xs: &[f64]) -> Result<Vec<EwmaPoint>, PhysicsError> {
        xs.iter().map(|&x| self.update(x)).collect()
    }
}

/// One step of the tabular CUSUM. `n_hi` and `n_lo` count the periods since the sum last
/// was zero, which dates the start of a shift.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct CusumPoint {
    pub hi: f64,
    pub lo: f64,
    pub n_hi: u32,
    pub n_lo: u32,
    pub signal: Option<Side>,
}

/// The tabular CUSUM: C⁺_i = max(0, x_i − (μ0 + K) + C⁺_{i−1}),
/// C⁻_i = max(0, (μ0 − K) − x_i + C⁻_{i−1}), K = k·σ, a signal when a sum exceeds H = h·σ.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct Cusum {
    target: f64,
    k: f64,
    h: f64,
    hi: f64,
    lo: f64,
    n_hi: u32,
    n_lo: u32,
}

impl Cusum {
    /// Defaults (docs/engineering.md, "Computations", drift detectors): k = 0.5, h = 5 (in σ).
    pub const K_SIGMAS: f64 = 0.5;
    pub const H_SIGMAS: f64 = 5.0;

    pub fn new(mean: f64, sigma: f64) -> Result<Cusum, PhysicsError> {
        Cusum::with_params(mean, sigma, Cusum::K_SIGMAS, Cusum::H_SIGMAS)
    }

    /// `k_sigmas` and `h_sigmas` are in units of the baseline σ.
    pub fn with_params(
        mean: f64,
        sigma: f64,
        k_sigmas: f64,
        h_sigmas: f64,
    ) -> Result<Cusum, PhysicsError> {
        finite("the baseline mean", mean)?;
        positive("the baseline σ", sigma, |v| v.to_string())?;
        super::non_negative("the CUSUM allowance k", k_sigmas, |v| v.to_string())?;
        positive("the CUSUM decision interval h", h_sigmas, |v| v.to_string())?;
        Ok(Cusum {
            target: mean,
            k: k_sigmas * sigma,
            h: h_sigmas * sigma,
            hi: 0.0,
            lo: 0.0,
            n_hi: 0,
            n_lo: 0,
        })
    }

    pub fn update(&mut self, x: f64) -> Result<CusumPoint, PhysicsError> {
        finite("a CUSUM observation", x)?;
        self.hi = (x - (self.target + self.k) + self.hi).max(0.0);
        self.lo = ((self.target - self.k) - x + self.lo).max(0.0);
        self.n_hi = if self.hi > 0.0 {
            self.n_hi.saturating_add(1)
        } else {
            0
        };
        self.n_lo = if self.lo > 0.0 {
            self.n_lo.saturating_add(1)
        } else {
            0
        };
        let signal = if self.hi > self.h {
            Some(Side::High)
        } else if self.lo > self.h {
            Some(Side::Low)
        } else {
            None
        };
        Ok(CusumPoint {
            hi: self.hi,
            lo: self.lo,
            n_hi: self.n_hi,
            n_lo: self.n_lo,
            signal,
        })
    }

    pub fn run(&mut self, xs: &[f64]) -> Result<Vec<CusumPoint>, PhysicsError> {
        xs.iter().map(|&x| self.update(x)).collect()
    }

    /// Starts both sums again from zero (after a signal has been acted on).
    pub fn reset(&mut self) {
        self.hi = 0.0;
        self.lo = 0.0;
        self.n_hi = 0;
        self.n_lo = 0;
    }
}

/// Median of the last `n` values (fewer if there are fewer); `None` for none. A single
/// stopwatch reading is noisy, so flags look at a median of the last few.
pub fn median_of_last(values: &[f64], n: usize) -> Option<f64> {
    if n == 0 || values.is_empty() {
        return None;
    }
    Some(median_in(
        values[values.len().saturating_sub(n)..].iter().copied(),
    ))
}

/// Up to this many values are ordered in registers by [`sort_eight`]: the screen and the
/// indicators take medians of windows of 3 to 8 values several times at every reading of every
/// unit, and a fresh sorted vector each time was a quarter of a fleet evaluation's CPU.
const NETWORK: usize = 8;

/// The median of `values` (at least one), ordered as `f64::total_cmp` orders them.
fn median_in(values: impl ExactSizeIterator<Item = f64>) -> f64 {
    let m = values.len();
    if m <= NETWORK {
        // Padded with the greatest key, which the network sorts to the end.
        let mut keys = [i64::MAX; NETWORK];
        for (k, v) in keys.iter_mut().zip(values) {
            *k = order_key(v);
        }
        sort_eight(&mut keys);
        return middle(&keys[..m]);
    }
    let mut keys: Vec<i64> = values.map(order_key).collect();
    // Equal keys are equal bit patterns, so an unstable sort gives the same order.
    keys.sort_unstable();
    middle(&keys)
}

/// The median of sorted keys: the middle value, or the mean of the middle two.
fn middle(sorted: &[i64]) -> f64 {
    let m = sorted.len();
    let at = |i: usize| from_order_key(sorted[i]);
    if m % 2 == 1 {
        at(m / 2)
    } else {
        0.5 * (at(m / 2 - 1) + at(m / 2))
    }
}

/// Sorts eight keys by a fixed network of 19 compare-exchanges in 6 layers (D. E. Knuth, *The
/// Art of Computer Programming*, vol. 3, 5.3.4, the best known network for eight elements),
/// each a branch-free min and max written out, so that the keys stay in registers: windows of
/// a few readings arrive in no order a branch predictor can learn, and an insertion sort's
/// mispredicted branches were most of its time.
fn sort_eight(k: &mut [i64; NETWORK]) {
    let mut a = *k;
    macro_rules! layer {
        ($(($i:literal, $j:literal)),*) => {
            $(
                let (lo, hi) = (a[$i].min(a[$j]), a[$i].max(a[$j]));
                a[$i] = lo;
                a[$j] = hi;
            )*
        };
    }
    layer!((0, 2), (1, 3), (4, 6), (5, 7));
    layer!((0, 4), (1, 5), (2, 6), (3, 7));
    layer!((0, 1), (2, 3), (4, 5), (6, 7));
    layer!((2, 4), (3, 5));
    layer!((1, 4), (3, 6));
    layer!((1, 2), (3, 4), (5, 6));
    *k = a;
}

/// An integer whose order is `f64::total_cmp`'s order of `x` (the same mapping the standard
/// library uses inside `total_cmp`: a negative value's bits other than the sign are flipped),
/// so that ordering compares integers.
fn order_key(x: f64) -> i64 {
    let b = x.to_bits() as i64;
    b ^ (((b >> 63) as u64) >> 1) as i64
}

/// The value of an [`order_key`] (the mapping is its own inverse).
fn from_order_key(k: i64) -> f64 {
    f64::from_bits((k ^ (((k >> 63) as u64) >> 1) as i64) as u64)
}

/// Median of `values` (any order); `None` for none or any value that is not finite.
pub fn median(values: &[f64]) -> Option<f64> {
    if values.is_empty() || values.iter().any(|v| !v.is_finite()) {
        return None;
    }
    median_of_last(values, values.len())
}

/// 1/Φ⁻¹(3/4): the median absolute deviation times this estimates σ of a normal sample
/// (F. R. Hampel, "The influence curve and its role in robust estimation", JASA 1974;
/// `scipy.stats.median_abs_deviation(scale="normal")` uses the same constant).
pub const MAD_TO_SIGMA: f64 = 1.482_602_218_505_602;

/// Median and scaled median absolute deviation (an estimate of σ that one gross reading in a
/// small sample cannot move far): `(median, 1.4826 · median |x − median|)`.
pub fn median_and_mad_sigma(values: &[f64]) -> Option<(f64, f64)> {
    let m = median(values)?;
    let dev = values.iter().map(|v| (v - m).abs());
    // The deviations of finite values from a finite median can still overflow to infinity.
    let d = median_in(dev.clone());
    dev.clone()
        .all(f64::is_finite)
        .then_some((m, MAD_TO_SIGMA * d))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn too_few_or_degenerate() {
        assert!(matches!(
            linear_trend(&[(0.0, 1.0), (1.0, 2.0)]),
            Err(PhysicsError::TooFewPoints { .. })
        ));
        assert!(matches!(
            linear_trend(&[(1.0, 1.0), (1.0, 2.0), (1.0, 3.0)]),
            Err(PhysicsError::NoSpreadInX)
        ));
        assert!(linear_trend(&[(0.0, 1.0), (1.0, f64::NAN), (2.0, 3.0)]).is_err());
    }

    #[test]
    fn perfect_line_is_significant() {
        let t = linear_trend(&[(0.0, 1.0), (1.0, 3.0), (2.0, 5.0)]).unwrap();
        assert_eq!(t.slope, 2.0);
        assert!(t.t_stat().is_infinite() && t.is_significant());
        let f = t.forecast(11.0).unwrap();
        assert!((f.at - 5.0).abs() < 1e-12 && (f.earliest - 5.0).abs() < 1e-12);
        // A limit behind the line is never "reached".
        assert_eq!(t.forecast(-3.0), None);
    }

    #[test]
    fn dated_trend_counts_weeks() {
        let t0: DateTime<Utc> = "2025-01-06T08:00:00Z".parse().unwrap();
        let week = TimeDelta::try_days(7).unwrap();
        let points: Vec<_> = (0..4)
            .map(|i| (t0 + week * i, 10.0 + 0.5 * f64::from(i)))
            .collect();
        let t = linear_trend_over_time(&points).unwrap();
        assert!((t.slope_per_week() - 0.5).abs() < 1e-12);
        let f = t.forecast(13.0).unwrap();
        assert_eq!(f.at, t0 + week * 6);
        assert_eq!(t.forecast(1.0e30), None);
        assert!(linear_trend_over_time(&[]).is_err());
    }

    #[test]
    fn ewma_and_cusum_refuse_bad_parameters() {
        assert!(Ewma::new(1.0, 0.0).is_err());
        assert!(Ewma::with_params(1.0, 1.0, 1.5, 3.0).is_err());
        assert!(Cusum::new(1.0, -1.0).is_err());
        let mut e = Ewma::new(0.0, 1.0).unwrap();
        assert!(e.update(f64::INFINITY).is_err());
    }

    /// tests/reference/robust_cases.json: numpy and scipy results written by
    /// tests/reference/make_robust_cases.py.
    fn robust_cases() -> serde_json::Value {
        serde_json::from_str(include_str!("../../tests/reference/robust_cases.json")).unwrap()
    }

    #[test]
    fn median_and_scaled_mad_match_numpy_and_scipy() {
        let doc = robust_cases();
        let cases = doc["robust"].as_array().unwrap();
        assert!(cases.len() >= 5);
        for c in cases {
            let x: Vec<f64> = c["x"]
                .as_array()
                .unwrap()
                .iter()
                .map(|v| v.as_f64().unwrap())
                .collect();
            let (m, s) = median_and_mad_sigma(&x).unwrap();
            let name = c["name"].as_str().unwrap();
            // numpy.median; scipy.stats.median_abs_deviation(scale="normal").
            assert!((m - c["median"].as_f64().unwrap()).abs() < 1e-12, "{name}");
            assert!(
                (s - c["mad_sigma"].as_f64().unwrap()).abs() < 1e-12,
                "{name}"
            );
        }
        assert_eq!(median_and_mad_sigma(&[]), None);
        assert_eq!(median(&[1.0, f64::NAN]), None);
    }

    #[test]
    fn line_fits_match_statsmodels_ols() {
        let doc = robust_cases();
        let cases = doc["fit"].as_array().unwrap();
        assert!(cases.len() >= 3);
        let v = |c: &serde_json::Value, k: &str| c[k].as_f64().unwrap();
        for c in cases {
            let xs = c["x"]
                .as_array()
                .unwrap()
                .iter()
                .map(|v| v.as_f64().unwrap());
            let ys = c["y"]
                .as_array()
                .unwrap()
                .iter()
                .map(|v| v.as_f64().unwrap());
            let pts: Vec<(f64, f64)> = xs.zip(ys).collect();
            let f = line_fit(&pts).unwrap();
            let name = c["name"].as_str().unwrap();
            // statsmodels OLS: params, bse, sqrt(scale), get_prediction().se_mean.
            for (got, key) in [
                (f.intercept, "intercept"),
                (f.slope, "slope"),
                (f.intercept_se, "intercept_se"),
                (f.slope_se, "slope_se"),
                (f.residual_sd, "residual_sd"),
                (f.se_mean_at(v(c, "x0")), "se_mean_at_x0"),
            ] {
                let want = v(c, key);
                assert!(
                    (got - want).abs() <= 1e-9 * want.abs().max(1.0),
                    "{name} {key}: {got} vs {want}"
                );
            }
        }
    }

    /// The median as first written: a sorted copy (`sort_by(f64::total_cmp)`), the middle
    /// value or the mean of the middle two.
    fn median_by_sorting(values: &[f64]) -> f64 {
        let mut v = values.to_vec();
        v.sort_by(f64::total_cmp);
        let m = v.len();
        if m % 2 == 1 {
            v[m / 2]
        } else {
            0.5 * (v[m / 2 - 1] + v[m / 2])
        }
    }

    #[test]
    fn medians_are_bit_for_bit_those_of_a_sorted_copy() {
        // Kept evaluations compare results exactly, so the ordering through integer keys must
        // give the very bits a sorted copy gives, signed zeros, infinities and NaNs included.
        let mut r = crate::random::SplitMix64::new(7);
        let special = [
            0.0,
            -0.0,
            f64::INFINITY,
            f64::NEG_INFINITY,
            f64::NAN,
            -f64::NAN,
            1e-310,
        ];
        for case in 0..4000 {
            let len = 1 + case % 40;
            let v: Vec<f64> = (0..len)
                .map(|_| match r.next_u64() % 10 {
                    0 => special[(r.next_u64() % special.len() as u64) as usize],
                    1 => (r.next_u64() % 5) as f64,
                    _ => r.gaussian() * 1e3,
                })
                .collect();
            for n in [1, 3, 8, len] {
                let want = median_by_sorting(&v[v.len().saturating_sub(n)..]);
                let got = median_of_last(&v, n).unwrap();
                assert_eq!(got.to_bits(), want.to_bits(), "{v:?}, last {n}");
            }
            let finite: Vec<f64> = v.iter().copied().filter(|x| x.is_finite()).collect();
            if !finite.is_empty() {
                let m = median_by_sorting(&finite);
                let dev: Vec<f64> = finite.iter().map(|x| (x - m).abs()).collect();
                let (gm, gs) = median_and_mad_sigma(&finite).unwrap();
                assert_eq!(gm.to_bits(), m.to_bits());
                let s = MAD_TO_SIGMA * median_by_sorting(&dev);
                assert_eq!(gs.to_bits(), s.to_bits(), "{finite:?}");
            }
        }
        assert_eq!(
            median_and_mad_sigma(&[-f64::MAX, -f64::MAX, f64::MAX]),
            None
        );
    }

    #[test]
    fn the_network_sorts_every_input_of_zeros_and_ones() {
        // A comparator network sorts every input if it sorts every 0-1 input (Knuth, vol. 3,
        // 5.3.4, the zero-one principle): all 256 of them.
        for bits in 0_u32..256 {
            let mut k = [0_i64; NETWORK];
            for (i, v) in k.iter_mut().enumerate() {
                *v = i64::from((bits >> i) & 1);
            }
            let mut want = k;
            want.sort_unstable();
            sort_eight(&mut k);
            assert_eq!(k, want, "{bits:08b}");
        }
    }

    #[test]
    fn median_edges() {
        assert_eq!(median_of_last(&[], 3), None);
        assert_eq!(median_of_last(&[1.0], 0), None);
        assert_eq!(median_of_last(&[4.0], 3), Some(4.0));
    }
}
