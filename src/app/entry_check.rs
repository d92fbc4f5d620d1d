//! Logging one walk-round check by unit tag: the command line's way in to the check form.
//!
//! The values are judged by the same rules as the desktop app's form (`entry::save_check`):
//! impossible values are refused, unusual ones are kept only when confirmed. The reading is
//! written through the store in a single statement, so a second process logging at the same
//! moment waits for its turn (the store's busy timeout) instead of failing. No SQL, no printing.

use chrono::{DateTime, Duration, SubsecRound, Utc};
use serde::Serialize;

use super::entry::{self, Answers, Entered, Problem, SaveOutcome, Verdict};
use super::shop::Shop;
use super::status::UnitStatus;
use super::AppError;
use crate::app::local_time;

/// The fields a check can carry, as typed: keys of the check form.
pub const FIELDS: [&str; 10] = [
    "reservoir_temp",
    "ambient_temp",
    "pressure",
    "stroke_time",
    "cycle_time",
    "oil_level",
    "filter",
    "hours",
    "case_drain",
    "note",
];

/// A check as typed on the command line.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct CheckInput {
    /// When it was taken, as typed (ISO 8601, as in the CSV files: `2025-03-04T07:30:00Z`, with
    /// an offset, or a date; no zone is UTC); `None` is now.
    pub at: Option<String>,
    /// Field key (one of [`FIELDS`]) → text as typed (`45C`, `2500psi`, `ok`).
    pub values: Vec<(String, String)>,
    /// Who took it (required: the reading is evidence).
    pub by: String,
    /// Keep values that are possible but unusual.
    pub confirmed: bool,
    /// Save with fields left blank that the unit's last check had.
    pub leave_blank: bool,
}

/// A saved check.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct LoggedCheck {
    pub check_id: i64,
    pub unit: String,
    pub taken_at: DateTime<Utc>,
    /// The unusual values that were confirmed, as `field: message`.
    pub confirmed: Vec<String>,
    /// The fields left blank that the unit's last check had, as `field: message`.
    pub left_blank: Vec<String>,
    /// The unit as it stands with this check.
    pub status: UnitStatus,
}

/// How far ahead of the clock a reading may be dated (clocks of two computers disagree).
const CLOCK_SLACK: Duration = Duration::minutes(60);

fn listed(problems: &[Problem]) -> String {
    problems
        .iter()
        .map(|p| format!("{}: {}", p.field, p.message))
        .collect::<Vec<_>>()
        .join("\n")
}

/// Saves one check of the unit tagged `unit_tag`. Refused or unconfirmed unusual values are
/// [`AppError::BadInput`] listing every field with its reason; nothing is written then.
pub fn log_check(
    shop: &Shop,
    unit_tag: &str,
    input: &CheckInput,
    now: DateTime<Utc>,
) -> Result<LoggedCheck, AppError> {
    let store = shop.store();
    let tag = unit_tag.trim();
    let unit = store
        .unit_by_tag(tag)
        .map_err(AppError::Store)?
        .ok_or_else(|| AppError::BadInput(format!("no unit `{tag}` in this shop")))?;
    let mut entered = Entered::new();
    for (key, text) in &input.values {
        if !FIELDS.contains(&key.as_str()) {
            return Err(AppError::BadInput(format!(
                "`{key}` is not a field of a check; the fields are {}",
                FIELDS.join(", ")
            )));
        }
        entered.set(key, text);
    }
    let now = now.trunc_subsecs(0);
    let zone = shop.zone();
    let at = match input.at.as_deref() {
        None => now,
        Some(text) => local_time::read(text, zone)
            .map_err(|e| AppError::BadInput(format!("time of the check: {e}")))?,
    };
    if at > now + CLOCK_SLACK {
        return Err(AppError::BadInput(format!(
            "time of the check: {} is in the future; record readings when they are taken",
            zone.show_marked(at)
        )));
    }
    // The form's rules judge a reading as of the moment it was taken: an empty time there is
    // "now", so the moment is passed as now.
    let answers = Answers {
        keep_unusual: input.confirmed,
        leave_blank: input.leave_blank,
    };
    let said = |ps: &[Problem]| -> Vec<String> {
        ps.iter()
            .map(|p| format!("{}: {}", p.field, p.message))
            .collect()
    };
    match entry::save_check(shop, unit.id, &entered, "", &input.by, answers, at)? {
        SaveOutcome::Saved(saved) => Ok(LoggedCheck {
            check_id: saved.check_id,
            unit: unit.tag,
            taken_at: at,
            confirmed: said(&saved.confirmed),
            left_blank: said(&saved.left_blank),
            status: saved.status,
        }),
        SaveOutcome::Refused(problems) => {
            let refused: Vec<Problem> = problems
                .iter()
                .filter(|p| p.verdict == Verdict::Refused)
                .cloned()
                .collect();
            Err(AppError::BadInput(format!(
                "the check was not saved:\n{}",
                listed(&refused)
            )))
        }
        SaveOutcome::NeedsConfirmation(problems) => {
            Err(AppError::BadInput(questions(&problems, answers)))
        }
    }
}

/// Why a check waits for an answer, with the option that gives it: the unusual values (kept
/// with `--confirm`) and the fields left blank that last time had (`--leave-blank`, or give
/// them). Questions already answered are not repeated.
fn questions(problems: &[Problem], answers: Answers) -> String {
    let of = |v: Verdict| -> Vec<Problem> {
        problems
            .iter()
            .filter(|p| p.verdict == v)
            .cloned()
            .collect()
    };
    let mut parts = vec!["the check was not saved".to_string()];
    let unusual = of(Verdict::Unusual);
    if !unusual.is_empty() && !answers.keep_unusual {
        parts.push(format!(
            "these values are unusual (repeat with --confirm to keep them):\n{}",
            listed(&unusual)
        ));
    }
    let blank = of(Verdict::Blank);
    if !blank.is_empty() && !answers.leave_blank {
        let options: Vec<String> = blank
            .iter()
            .map(|p| format!("--{}", p.field.replace('_', "-")))
            .collect();
        parts.push(format!(
            "these readings are blank but the unit's last check had them (give them with {}, \
             or repeat with --leave-blank to save without them):\n{}",
            options.join(" "),
            listed(&blank)
        ));
    }
    parts.join("; ")
}
