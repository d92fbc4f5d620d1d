//! The health engine: from one unit's records, the limits in force and a date, its eras and
//! baselines, indicators, flags, state and planned work.
//!
//! Pure: `model::UnitHistory` + `Limits` + a date in, `UnitHealth` out. No SQL, no files, no
//! UI; the application layer (`app::status`) reads the records through the store and calls
//! `evaluate` — the one place the rules below are applied, for the command line, the app and
//! the reports alike.

pub mod baseline;
pub mod flags;
pub mod indicators;
pub mod judged;
pub mod limits;
pub mod plan;
pub mod screen;
#[cfg(test)]
pub(crate) mod testutil;
mod text;

use chrono::{DateTime, NaiveDate, Utc};
use serde::{Deserialize, Serialize};

pub use baseline::{Baseline, BaselineIndicator, BaselineSource, BaselineValue, Era, EraStart};
pub use flags::{Flag, FlagKind};
pub use indicators::{CheckPoint, Indicators, SamplePoint, Series, Tile, Trend};
pub use judged::NotJudged;
pub use limits::{LimitKey, Limits};
pub use plan::{WorkItem, WorkKind};
pub use screen::{ConfirmedBy, SuspectReading};

use crate::model::{Fluid, Id, UnitHistory};
use crate::units::UnitSystem;

/// Condition of an indicator, a flag or a unit. Ordered: `Steady < NotJudged < Watch < Act`,
/// so a list sorted worst first puts a unit that cannot be judged above the steady ones.
#[derive(
    Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize, Default,
)]
#[serde(rename_all = "snake_case")]
pub enum State {
    #[default]
    Steady,
    /// Readings or a baseline are missing: nothing can be said yet (never shown as steady).
    NotJudged,
    Watch,
    Act,
}

impl State {
    /// The text a person reads: `steady`, `not judged yet`, `watch`, `act`.
    pub fn as_str(self) -> &'static str {
        match self {
            State::Steady => "steady",
            State::NotJudged => "not judged yet",
            State::Watch => "watch",
            State::Act => "act",
        }
    }

    /// The key of the JSON output and of stored rows: `steady`, `not_judged`, `watch`, `act`.
    pub fn key(self) -> &'static str {
        match self {
            State::Steady => "steady",
            State::NotJudged => "not_judged",
            State::Watch => "watch",
            State::Act => "act",
        }
    }

    /// `Some(true)` = act, `Some(false)` = watch, `None` = steady (as `Limit::grade` returns).
    pub fn from_grade(g: Option<bool>) -> State {
        match g {
            Some(true) => State::Act,
            Some(false) => State::Watch,
            None => State::Steady,
        }
    }
}

impl std::fmt::Display for State {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.as_str())
    }
}

impl std::str::FromStr for State {
    type Err = String;
    fn from_str(s: &str) -> Result<Self, String> {
        match s.trim() {
            "steady" => Ok(State::Steady),
            "not_judged" | "not judged yet" => Ok(State::NotJudged),
            "watch" => Ok(State::Watch),
            "act" => Ok(State::Act),
            other => Err(format!(
                "`{other}` is not one of steady|not_judged|watch|act"
            )),
        }
    }
}

/// Everything the engine found for one unit at one date.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct UnitHealth {
    /// The date evaluated: only records up to it were used.
    pub at: DateTime<Utc>,
    /// Worst flag; with no flag at watch or act, `NotJudged` when an indicator the unit is
    /// expected to have cannot be judged (see `not_judged`), else `Steady`.
    pub state: State,
    /// All eras up to `at`, oldest first; the last is in force.
    pub eras: Vec<Era>,
    /// The fluid in service in the era in force, if known.
    pub fluid: Option<Fluid>,
    /// The baseline of the era in force.
    pub baseline: Baseline,
    /// The key indicators now (the fixed set of `status --json`).
    pub indicators: Indicators,
    /// Flags raised, worst first.
    pub flags: Vec<Flag>,
    /// Planned work, soonest first.
    pub work: Vec<WorkItem>,
    /// Tiles for a unit page or report: value, baseline, limits, state, trend.
    pub tiles: Vec<Tile>,
    /// Chart series over the era in force.
    pub series: Vec<Series>,
    /// Per-check indicator rows of the era in force, oldest first.
    pub checks: Vec<CheckPoint>,
    /// Per-sample indicator rows of the era in force, oldest first.
    pub samples: Vec<SamplePoint>,
    pub last_check: Option<DateTime<Utc>>,
    pub last_sample: Option<DateTime<Utc>>,
    /// What cannot be judged yet, why and when it will be.
    pub not_judged: Vec<NotJudged>,
    /// Maintenance of the era in force that restarted detectors and flags (cooler clean,
    /// repair, filter change), oldest first.
    pub restarts: Vec<indicators::Restart>,
    /// Readings questioned by the screen (`screen`), oldest first, with whether each has been
    /// confirmed; an unconfirmed one fed nothing above.
    pub suspects: Vec<SuspectReading>,
}

/// The calendar date of an instant (UTC; the stored time base).
pub fn day(t: DateTime<Utc>) -> NaiveDate {
    t.date_naive()
}

/// The shop's calendar: the day an instant falls on where the shop is, for the dates the
/// engine writes (a flag's start, work due, the text of its reasons). A check logged at 20:00
/// in a shop five hours behind UTC is that evening's, not the next day's. UTC by default.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Calendar(Option<chrono_tz::Tz>);

impl Calendar {
    /// The calendar of a time zone from the tz database.
    pub fn of(zone: chrono_tz::Tz) -> Calendar {
        Calendar(Some(zone))
    }

    /// The day `t` falls on in the shop.
    pub fn day(&self, t: DateTime<Utc>) -> NaiveDate {
        match self.0 {
            Some(z) => t.with_timezone(&z).date_naive(),
            None => t.date_naive(),
        }
    }

    /// The instant the shop's day `d` begins: its first valid minute where the clocks skip
    /// midnight (some zones move it); `None` only outside chrono's range.
    pub fn start(&self, d: NaiveDate) -> Option<DateTime<Utc>> {
        use chrono::TimeZone;
        let midnight = d.and_hms_opt(0, 0, 0)?;
        match self.0 {
            None => Some(midnight.and_utc()),
            Some(z) => (0..=180)
                .map(|m| midnight + chrono::Duration::minutes(m))
                .find_map(|t| z.from_local_datetime(&t).earliest())
                .map(|t| t.with_timezone(&Utc)),
        }
    }
}

/// Keeps only what was known at `at`: readings, events, hand baselines and acknowledgements
/// dated up to and including it.
pub fn as_known_at(history: &UnitHistory, at: DateTime<Utc>) -> UnitHistory {
    let mut h = history.clone();
    h.checks.retain(|c| c.taken_at <= at);
    h.samples.retain(|s| s.sampled_at <= at);
    h.events.retain(|e| e.done_at <= at);
    h.manual_baselines.retain(|m| m.entered_at <= at);
    h.acknowledgements.retain(|a| a.at <= at);
    h.checks.sort_by_key(|c| (c.taken_at, c.id));
    h.samples.sort_by_key(|s| (s.sampled_at, s.id));
    h.events.sort_by_key(|e| (e.done_at, e.id));
    h
}

/// [`as_known_at`] without the copy when there is nothing to drop or reorder, which is the
/// common case (the store hands histories over in time order, and the fleet is judged now):
/// the fleet status evaluates every unit, and copying each history cost about a tenth of it.
fn known_at(history: &UnitHistory, at: DateTime<Utc>) -> std::borrow::Cow<'_, UnitHistory> {
    fn ready<T, K: PartialOrd>(rows: &[T], key: impl Fn(&T) -> K, at: K) -> bool {
        rows.windows(2).all(|w| key(&w[0]) <= key(&w[1]))
            && rows.last().is_none_or(|r| key(r) <= at)
    }
    let h = history;
    let unchanged = ready(&h.checks, |c| (c.taken_at, c.id), (at, Id::MAX))
        && ready(&h.samples, |s| (s.sampled_at, s.id), (at, Id::MAX))
        && ready(&h.events, |e| (e.done_at, e.id), (at, Id::MAX))
        && h.manual_baselines.iter().all(|m| m.entered_at <= at)
        && h.acknowledgements.iter().all(|a| a.at <= at);
    if unchanged {
        std::borrow::Cow::Borrowed(history)
    } else {
        std::borrow::Cow::Owned(as_known_at(history, at))
    }
}

/// Evaluates one unit as it stood at `at`, writing figures in messages in `units`.
///
/// `fluids` is the shop's fluid list, used to find the fluid of an era that a fluid change put
/// in; the unit's own `history.fluid` is used when the list does not hold it. `limits` are the
/// limits in force for this unit (`Limits::resolve`).
pub fn evaluate(
    history: &UnitHistory,
    fluids: &[Fluid],
    limits: &Limits,
    at: DateTime<Utc>,
    units: UnitSystem,
    calendar: Calendar,
) -> UnitHealth {
    let h = known_at(history, at);
    let h: &UnitHistory = &h;
    let eras = baseline::eras(h);
    let era = eras.last().cloned();
    let fluid = match era.as_ref().and_then(|e| e.fluid_id) {
        Some(id) => fluids
            .iter()
            .find(|f| f.id == id)
            .or(h.fluid.as_ref().filter(|f| f.id == id))
            .cloned(),
        None => h.fluid.clone(),
    };

    // Readings that look like slips are kept out of everything below until confirmed.
    let suspects = screen::screen_history(h, fluid.as_ref(), units);
    let questioned = flags::Questioned {
        water: screen::questioned_water(h, &suspects),
        strokes: screen::questioned_strokes(h, &suspects),
        temps: screen::questioned_temps(h, &suspects),
    };
    let masked;
    let h: &UnitHistory = if suspects.iter().any(|s| s.confirmed.is_none()) {
        masked = screen::without_unconfirmed(h, &suspects);
        &masked
    } else {
        h
    };

    let mut computed = indicators::compute(h, era.as_ref(), fluid.as_ref(), limits);
    computed.calendar = calendar;
    let mut flags = flags::raise(h, &computed, limits, units, &questioned);
    let work = plan::plan(h, &computed, &flags, limits, at);
    flags.extend(flags::overdue(&work, limits, at, calendar));
    flags::mark_acknowledged(&mut flags, &h.acknowledgements);
    flags.sort_by(|a, b| {
        b.state
            .cmp(&a.state)
            .then(a.since.cmp(&b.since))
            .then(a.kind.cmp(&b.kind))
    });
    let not_judged = judged::not_judged(h, &computed, &work);
    let flagged = flags.iter().map(|f| f.state).max().unwrap_or(State::Steady);
    let state = if flagged >= State::Watch {
        flagged
    } else if not_judged.iter().any(|n| n.expected) {
        State::NotJudged
    } else {
        State::Steady
    };
    let tiles = indicators::tiles(&computed, limits, &flags, &not_judged);
    let series = indicators::series(&computed, limits);

    UnitHealth {
        at,
        state,
        eras,
        fluid,
        baseline: computed.baseline.clone(),
        indicators: computed.summary.clone(),
        flags,
        work,
        tiles,
        series,
        last_check: h.checks.last().map(|c| c.taken_at),
        last_sample: h.samples.last().map(|s| s.sampled_at),
        checks: computed.checks,
        samples: computed.samples,
        not_judged,
        restarts: computed.restarts.clone(),
        suspects,
    }
}

#[cfg(test)]
mod tests;
