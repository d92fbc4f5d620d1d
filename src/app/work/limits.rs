//! Reading and setting limits as people act on them: the limits in force for the shop or a
//! unit, a limit set or reset with who and why, and how a temperature limit reads in the other
//! unit system. The limits themselves (their keys, shapes and checks) are `health::limits`'.

use serde::{Deserialize, Serialize};

use crate::app::status::store_error;
use crate::app::AppError;
use crate::health::limits::{validate_setting, LimitKey, LimitOrigin, LimitShape, Limits};
use crate::model::{LimitSetting, Unit};
use crate::store::Store;
use crate::units::{TempDiff, UnitSystem};

use super::need_name;

/// One limit as listed.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct LimitRow {
    pub key: String,
    /// `threshold` (watch and act) or `value` (one setting, shown as act).
    pub shape: String,
    /// `≥` or `>` for a threshold.
    pub compare: Option<String>,
    pub watch: Option<f64>,
    pub act: Option<f64>,
    pub unit: String,
    /// The unit as a reader is shown it (`unit_words`).
    pub unit_words: String,
    pub watch_origin: LimitOrigin,
    pub act_origin: LimitOrigin,
    pub description: String,
    /// The values it may take, in words (`from 1 to 366 days`): the range every setting of
    /// it is checked against.
    pub range: String,
}

/// The limits in force for the shop or for one unit.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct LimitsView {
    /// The unit tag, or `None` for the shop defaults.
    pub unit: Option<String>,
    pub rows: Vec<LimitRow>,
}

fn scope(store: &Store, unit: Option<&str>) -> Result<Option<Unit>, AppError> {
    unit.map(|tag| {
        store
            .unit_by_tag(tag)
            .map_err(store_error)?
            .ok_or_else(|| AppError::BadInput(format!("no unit `{}` in this shop", tag.trim())))
    })
    .transpose()
}

/// A limit's unit as a reader is shown it: a ratio (stored as `x`) as the multiplication sign
/// and the word, so that a bare letter is not read as a unit of its own.
pub fn unit_words(unit: &str) -> String {
    match unit {
        "x" => "× (ratio)".to_string(),
        other => other.to_string(),
    }
}

fn rows_of(limits: &Limits) -> Vec<LimitRow> {
    limits
        .all()
        .iter()
        .map(|l| LimitRow {
            key: l.key.as_str().to_string(),
            shape: match l.key.shape() {
                LimitShape::Threshold(_) => "threshold".into(),
                LimitShape::Value => "value".into(),
            },
            compare: match l.key.shape() {
                LimitShape::Threshold(c) => Some(c.symbol().to_string()),
                LimitShape::Value => None,
            },
            watch: l.watch,
            act: l.act,
            unit: l.key.unit().to_string(),
            unit_words: unit_words(l.key.unit()),
            watch_origin: l.watch_origin,
            act_origin: l.act_origin,
            range: l.key.range().describe(l.key.unit()),
            description: l.key.describe().to_string(),
        })
        .collect()
}

/// The limits in force for unit `unit` (its overrides over the shop's), or the shop's.
pub(crate) fn limits_in(store: &Store, unit: Option<&str>) -> Result<LimitsView, AppError> {
    let u = scope(store, unit)?;
    let limits = Limits::resolve(
        &store.limits().map_err(store_error)?,
        u.as_ref().map(|u| u.id),
    );
    Ok(LimitsView {
        unit: u.map(|u| u.tag),
        rows: rows_of(&limits),
    })
}

fn parse_key(key: &str) -> Result<LimitKey, AppError> {
    key.parse::<LimitKey>()
        .map_err(|e| AppError::BadInput(e.to_string()))
}

/// Sets a shop default or, with `unit`, an override for that unit. A value not given keeps
/// what that scope had stored. Returns the limit now in force there.
pub fn set_limit_in(
    store: &Store,
    key: &str,
    watch: Option<f64>,
    act: Option<f64>,
    unit: Option<&str>,
    by: &str,
) -> Result<LimitRow, AppError> {
    let key = parse_key(key)?;
    let by = need_name("a limit change", by)?;
    let u = scope(store, unit)?;
    let unit_id = u.as_ref().map(|u| u.id);
    let rows = store.limits().map_err(store_error)?;
    let current = Limits::resolve(&rows, unit_id);
    let (watch, act) = validate_setting(key, watch, act, &current)
        .map_err(|e| AppError::BadInput(e.to_string()))?;
    let stored = rows
        .iter()
        .find(|r| r.unit_id == unit_id && r.key == key.as_str());
    let row = LimitSetting {
        unit_id,
        key: key.as_str().to_string(),
        watch: watch.or(stored.and_then(|r| r.watch)),
        act: act.or(stored.and_then(|r| r.act)),
    };
    let reason = match &u {
        Some(u) => format!("limit {} for unit {}", key, u.tag),
        None => format!("shop limit {key}"),
    };
    store.set_limit(&row, &by, &reason).map_err(store_error)?;
    let after = Limits::resolve(&store.limits().map_err(store_error)?, unit_id);
    rows_of(&after)
        .into_iter()
        .find(|r| r.key == key.as_str())
        .ok_or_else(|| AppError::Failed(format!("limit {key} not found after it was set")))
}

/// Removes a stored shop default or unit override, so that the shop's value (or the built-in
/// one) applies again. Returns whether there was one.
pub(crate) fn reset_limit_in(
    store: &Store,
    key: &str,
    unit: Option<&str>,
    by: &str,
) -> Result<bool, AppError> {
    let key = parse_key(key)?;
    let by = need_name("a limit change", by)?;
    let u = scope(store, unit)?;
    let reason = format!("reset limit {key}");
    store
        .remove_limit(u.as_ref().map(|u| u.id), key.as_str(), &by, &reason)
        .map_err(store_error)
}

/// The limits in force; see [`limits_in`].
pub fn limits(shop: &crate::app::shop::Shop, unit: Option<&str>) -> Result<LimitsView, AppError> {
    let sys = shop.unit_system();
    let mut view = limits_in(shop.store(), unit)?;
    for row in &mut view.rows {
        show_in(row, sys);
    }
    Ok(view)
}

/// How a stored limit reads in a unit system other than the one it is stored in: only the
/// temperature limits differ (°C and °F for the reservoir, K and °F steps for heat rise); every
/// other limit is a ratio, a count or a time. The command line's `limits` and Setup's limits
/// tab both read and write through it.
pub(crate) struct LimitScale {
    pub unit: &'static str,
    pub shown: fn(f64) -> f64,
    pub stored: fn(f64) -> f64,
}

impl LimitScale {
    pub fn of(stored_unit: &str, system: UnitSystem) -> Option<LimitScale> {
        use crate::units::Temperature;
        match (stored_unit, system) {
            ("°C", UnitSystem::Us) => Some(LimitScale {
                unit: "°F",
                shown: |c| Temperature::from_c(c).f(),
                stored: |f| Temperature::from_f(f).c(),
            }),
            ("K", UnitSystem::Us) => Some(LimitScale {
                unit: "°F",
                shown: |k| TempDiff::from_k(k).f_steps(),
                stored: |f| TempDiff::from_f_steps(f).k(),
            }),
            _ => None,
        }
    }
}

/// `row` (in stored units) as the shop reads it.
fn show_in(row: &mut LimitRow, sys: UnitSystem) {
    let Ok(key) = row.key.parse::<LimitKey>() else {
        return;
    };
    if let Some(LimitScale {
        unit, shown: to, ..
    }) = LimitScale::of(key.unit(), sys)
    {
        let tidy = |v: f64| (v * 1.0e6).round() / 1.0e6;
        row.watch = row.watch.map(|v| tidy(to(v)));
        row.act = row.act.map(|v| tidy(to(v)));
        row.unit = unit.to_string();
        let r = key.range();
        row.range = crate::health::limits::ValueRange {
            lo: tidy(to(r.lo)),
            hi: tidy(to(r.hi)),
            ..r
        }
        .describe(unit);
    }
}

/// A limit as typed: a bare number is in the unit the shop reads it in (°F for a temperature in
/// a US shop); a temperature may also carry its unit (`160F`, `71C`), and a temperature
/// difference `9F` or `5K`.
pub fn read_limit(
    shop: &crate::app::shop::Shop,
    key: &str,
    text: &str,
    what: &str,
) -> Result<f64, AppError> {
    let k = parse_key(key)?;
    let sys = shop.unit_system();
    let t = text.trim();
    if let Ok(v) = t.parse::<f64>() {
        if v.is_finite() {
            return Ok(match LimitScale::of(k.unit(), sys) {
                Some(scale) => (scale.stored)(v),
                None => v,
            });
        }
    }
    match k.unit() {
        "°C" => {
            if let Ok(q) = crate::quantity::parse_temperature(t) {
                return Ok(q.c());
            }
        }
        "K" => {
            let lower = t.to_ascii_lowercase();
            let number = |suffix: &str| {
                lower
                    .strip_suffix(suffix)
                    .and_then(|n| n.trim().parse::<f64>().ok())
                    .filter(|v| v.is_finite())
            };
            if let Some(v) = number("k") {
                return Ok(v);
            }
            if let Some(v) = number("f").or_else(|| number("°f")) {
                return Ok(crate::units::TempDiff::from_f_steps(v).k());
            }
        }
        _ => {}
    }
    Err(AppError::BadInput(format!(
        "{what} `{t}` is not a number{}",
        match LimitScale::of(k.unit(), sys) {
            Some(scale) => format!(" (in {}, or with its unit such as 160F)", scale.unit),
            None => String::new(),
        }
    )))
}

/// Sets a limit from what was typed (see [`read_limit`]); the row comes back as the shop reads
/// it. See [`set_limit_in`] for the checks.
pub fn set_limit(
    shop: &crate::app::shop::Shop,
    key: &str,
    watch: Option<&str>,
    act: Option<&str>,
    unit: Option<&str>,
    by: &str,
) -> Result<LimitRow, AppError> {
    let watch = watch
        .map(|w| read_limit(shop, key, w, "--watch"))
        .transpose()?;
    let act = act.map(|a| read_limit(shop, key, a, "--act")).transpose()?;
    let mut row = set_limit_in(shop.store(), key, watch, act, unit, by)?;
    show_in(&mut row, shop.unit_system());
    Ok(row)
}

/// Removes a stored limit; see [`reset_limit_in`].
pub fn reset_limit(
    shop: &crate::app::shop::Shop,
    key: &str,
    unit: Option<&str>,
    by: &str,
) -> Result<bool, AppError> {
    reset_limit_in(shop.store(), key, unit, by)
}
