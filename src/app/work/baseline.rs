//! A baseline entered by hand for the era in force of a unit, read as the engineer types it
//! (flows with their unit, heat rise in K or °F steps); the engine then uses it instead of the
//! computed one.

use chrono::{DateTime, SubsecRound, Utc};
use serde::Serialize;

use crate::app::status::{store_error, unit_status_in};
use crate::app::AppError;
use crate::health::baseline::BaselineIndicator;
use crate::model::ManualBaseline;
use crate::quantity::{Kind, Quantity};
use crate::store::Store;
use crate::units::TempDiff;

use super::need_name;

/// A hand-entered baseline value as stored, with the era it belongs to.
#[derive(Clone, Debug, Serialize)]
pub struct BaselineEntered {
    pub unit: String,
    pub indicator: String,
    pub era_start: DateTime<Utc>,
    /// Reference value in SI.
    pub value: f64,
    /// Spread (one standard deviation) in SI.
    pub spread: f64,
    pub by: String,
}

/// Reads a baseline figure as the engineer types it: flows carry their unit (`104.6lpm`,
/// `27.6gpm`), heat rise is a difference in K or °F steps (`20.5K`, `36.9F`), and leak
/// conductance is the engine's SI figure (m³/s · m²/s / Pa) as a plain number.
fn baseline_figure(ind: BaselineIndicator, text: &str) -> Result<f64, AppError> {
    let t = text.trim();
    let bad = |why: String| AppError::BadInput(format!("baseline {}: {why}", ind.key()));
    match ind {
        BaselineIndicator::EffectiveFlow
        | BaselineIndicator::CorrectedFlow
        | BaselineIndicator::CaseDrain => match crate::quantity::parse_as(t, Kind::Flow) {
            Ok(Quantity::Flow(f)) => Ok(f.si()),
            Ok(_) => Err(bad(format!("`{t}` is not a flow"))),
            Err(e) => Err(bad(format!(
                "{e}; expected a flow such as 104.6lpm or 27.6gpm"
            ))),
        },
        BaselineIndicator::HeatRise => {
            let (num, f_steps) = match t.strip_suffix(['F', 'f']) {
                Some(n) => (n, true),
                None => (t.strip_suffix(['K', 'k']).unwrap_or(t), false),
            };
            let v: f64 = num.trim().parse().map_err(|_| {
                bad(format!(
                    "`{t}` is not a temperature difference; expected e.g. 20.5K or 36.9F"
                ))
            })?;
            let k = if f_steps {
                TempDiff::from_f_steps(v).k()
            } else {
                v
            };
            Ok(k)
        }
        BaselineIndicator::LeakConductance => t
            .parse::<f64>()
            .map_err(|_| bad(format!("`{t}` is not a number"))),
    }
    .and_then(|v| {
        if v.is_finite() && v >= 0.0 {
            Ok(v)
        } else {
            Err(bad(format!("`{t}` must be a finite figure, not negative")))
        }
    })
}

/// Enters a baseline by hand now; see [`set_baseline_in`].
pub fn set_baseline(
    shop: &crate::app::shop::Shop,
    tag: &str,
    indicator: &str,
    value: &str,
    spread: &str,
    by: &str,
) -> Result<BaselineEntered, AppError> {
    set_baseline_in(shop.store(), tag, indicator, value, spread, by, Utc::now())
}

/// Enters a baseline value by hand for the era in force of a unit (after a rebuild whose first
/// checks are not representative, say). The engine then uses it instead of the computed one
/// and shows who entered it and when.
pub fn set_baseline_in(
    store: &Store,
    tag: &str,
    indicator: &str,
    value: &str,
    spread: &str,
    by: &str,
    now: DateTime<Utc>,
) -> Result<BaselineEntered, AppError> {
    let by = need_name("a baseline", by)?;
    let ind = BaselineIndicator::from_key(indicator).ok_or_else(|| {
        let keys: Vec<&str> = BaselineIndicator::ALL.iter().map(|i| i.key()).collect();
        AppError::BadInput(format!(
            "`{indicator}` is not a baseline indicator; expected one of {}",
            keys.join("|")
        ))
    })?;
    let value_si = baseline_figure(ind, value)?;
    let spread_si = baseline_figure(ind, spread)?;
    let now = now.trunc_subsecs(0);
    let status = unit_status_in(store, tag, Some(now))?;
    let era_start = status
        .health
        .eras
        .iter()
        .find(|e| e.end.is_none())
        .map(|e| e.start)
        .ok_or_else(|| {
            AppError::BadInput(format!(
                "unit {} has no checks or era-starting events yet, so there is no era to give a baseline",
                status.unit
            ))
        })?;
    let unit = store
        .unit_by_tag(&status.unit)
        .map_err(store_error)?
        .ok_or_else(|| AppError::BadInput(format!("unknown unit tag `{tag}`")))?;
    store
        .insert_manual_baseline(&ManualBaseline {
            id: 0,
            unit_id: unit.id,
            era_start,
            indicator: ind.key().to_string(),
            value: value_si,
            spread: spread_si,
            entered_by: by.clone(),
            entered_at: now,
        })
        .map_err(store_error)?;
    Ok(BaselineEntered {
        unit: status.unit,
        indicator: ind.key().to_string(),
        era_start,
        value: value_si,
        spread: spread_si,
        by,
    })
}
