//! Forms: the shared vocabulary of every entry screen — fields, typed texts, verdicts, problems,
//! save outcomes — and reading a typed number or quantity in the shop's unit system. It judges
//! no particular reading and must not know slint or SQL.

use crate::app::status::store_error;
use crate::app::AppError;
use crate::model::{Id, Settings, Unit, UnitHistory};
use crate::quantity::{self, Kind, Quantity};
use crate::store::Store;
use crate::units::UnitSystem;

/// How a typed value is judged.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord)]
pub enum Verdict {
    /// Left blank though the unit's last check had it: saved blank only when the person says
    /// so (a reading forgotten is asked about; one not taken today is the person's call).
    Blank,
    /// Possible but unlikely: saved only when the person confirms.
    Unusual,
    /// Impossible or unreadable: never saved.
    Refused,
}

/// What is wrong with one field.
#[derive(Clone, Debug, PartialEq)]
pub struct Problem {
    /// The field's key (`reservoir_temp`, ...), or `""` for the form as a whole.
    pub field: String,
    pub verdict: Verdict,
    pub message: String,
}

impl Problem {
    pub(super) fn refused(field: &str, message: impl Into<String>) -> Self {
        Problem {
            field: field.to_string(),
            verdict: Verdict::Refused,
            message: message.into(),
        }
    }
    pub(crate) fn unusual(field: &str, message: impl Into<String>) -> Self {
        Problem {
            field: field.to_string(),
            verdict: Verdict::Unusual,
            message: message.into(),
        }
    }
    pub(super) fn blank(field: &str, message: impl Into<String>) -> Self {
        Problem {
            field: field.to_string(),
            verdict: Verdict::Blank,
            message: message.into(),
        }
    }
}

/// What the person answered to a form's questions before saving.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Answers {
    /// Keep the values judged unusual as typed (stored as confirmed by the person).
    pub keep_unusual: bool,
    /// Save with the fields left blank that the unit's last check had.
    pub leave_blank: bool,
}

impl Answers {
    /// Nothing answered yet: every question stops the save.
    pub const NONE: Answers = Answers {
        keep_unusual: false,
        leave_blank: false,
    };
    /// Yes to every question (the form's second Enter on the same values).
    pub const ALL: Answers = Answers {
        keep_unusual: true,
        leave_blank: true,
    };

    /// Whether these answers settle every question in `problems` (refusals aside).
    pub fn settle(&self, problems: &[Problem]) -> bool {
        problems.iter().all(|p| match p.verdict {
            Verdict::Blank => self.leave_blank,
            Verdict::Unusual => self.keep_unusual,
            Verdict::Refused => true,
        })
    }
}

/// One field of an entry form, as the app shows it.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Field {
    pub key: String,
    pub label: String,
    /// The unit a bare number is read in, or empty.
    pub unit: String,
    /// Empty: free text. Otherwise the allowed entries, `value` being one of them.
    pub choices: Vec<String>,
    /// The text the field starts with (an edit shows the stored value).
    pub value: String,
    pub placeholder: String,
    /// Beside the field: last time's value, or what to type.
    pub hint: String,
}

impl Field {
    pub(super) fn text(key: &str, label: &str) -> Self {
        Field {
            key: key.into(),
            label: label.into(),
            ..Field::default()
        }
    }
    /// A number read in a fixed unit whatever the shop's unit system (cSt, ppm, counts per mL).
    pub(super) fn in_unit(key: &str, label: &str, unit: &str) -> Self {
        Field {
            unit: unit.into(),
            ..Field::text(key, label)
        }
    }
    pub(super) fn quantity(key: &str, label: &str, kind: Kind, system: UnitSystem) -> Self {
        Field {
            key: key.into(),
            label: label.into(),
            unit: unit_symbol(kind, system),
            ..Field::default()
        }
    }
    pub(super) fn choice(key: &str, label: &str, choices: &[&str], value: &str) -> Self {
        Field {
            key: key.into(),
            label: label.into(),
            choices: choices.iter().map(|c| c.to_string()).collect(),
            value: value.into(),
            ..Field::default()
        }
    }
    pub(super) fn with_value(mut self, v: impl Into<String>) -> Self {
        self.value = v.into();
        self
    }
    pub(super) fn with_hint(mut self, h: impl Into<String>) -> Self {
        self.hint = h.into();
        self
    }
    pub(super) fn with_placeholder(mut self, p: impl Into<String>) -> Self {
        self.placeholder = p.into();
        self
    }
}

/// What a person typed: field key → text.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Entered(pub Vec<(String, String)>);

impl Entered {
    pub fn new() -> Self {
        Entered(Vec::new())
    }
    /// Sets (or replaces) the text of `key`.
    pub fn set(&mut self, key: &str, text: &str) {
        match self.0.iter_mut().find(|(k, _)| k == key) {
            Some(slot) => slot.1 = text.to_string(),
            None => self.0.push((key.to_string(), text.to_string())),
        }
    }
    /// The trimmed text of `key` ("" when not given).
    pub fn get(&self, key: &str) -> &str {
        self.0
            .iter()
            .find(|(k, _)| k == key)
            .map(|(_, v)| v.trim())
            .unwrap_or("")
    }
    /// Starts from the values a form shows.
    pub fn from_fields(fields: &[Field]) -> Self {
        Entered(
            fields
                .iter()
                .map(|f| (f.key.clone(), f.value.clone()))
                .collect(),
        )
    }
}

/// The end of a save: refused, waiting for confirmation, or done.
#[derive(Clone, Debug, PartialEq)]
pub enum SaveOutcome<T> {
    /// Nothing was written; every refused value is listed (with the unusual ones).
    Refused(Vec<Problem>),
    /// Nothing was written yet: these values are unusual; save again confirmed to keep them.
    NeedsConfirmation(Vec<Problem>),
    Saved(T),
}

fn unit_symbol(kind: Kind, system: UnitSystem) -> String {
    kind.display_unit(system).symbol().to_string()
}

/// A quantity in the shop's units for display: `55.0 °C`.
pub fn show(kind: Kind, si: f64, system: UnitSystem) -> String {
    quantity::format(Quantity::from_si(kind, si), system)
}

/// Reads a quantity: blank → `None`; a bare number in the shop's unit; or a number with a unit.
pub(super) fn read_quantity(
    text: &str,
    kind: Kind,
    system: UnitSystem,
) -> Result<Option<f64>, String> {
    let t = text.trim();
    if t.is_empty() {
        return Ok(None);
    }
    if let Ok(v) = t.parse::<f64>() {
        if !v.is_finite() {
            return Err(format!("`{t}` is not a number"));
        }
        return Ok(Some(kind.display_unit(system).to_si(v)));
    }
    quantity::parse_as(t, kind)
        .map(|q| Some(q.si()))
        .map_err(|e| e.to_string())
}

/// Reads a plain number (counts, ppm, mg KOH/g, hours).
pub(super) fn read_number(text: &str) -> Result<Option<f64>, String> {
    let t = text.trim();
    if t.is_empty() {
        return Ok(None);
    }
    match t.parse::<f64>() {
        Ok(v) if v.is_finite() => Ok(Some(v)),
        _ => Err(format!("`{t}` is not a number (use a decimal point: 12.5)")),
    }
}

/// A required name (who did it): the text trimmed, refused when blank.
/// A plain number typed in field `key` that cannot be negative (water, acid number); a
/// refusal on `p` and `None` where it cannot be read or is below zero.
pub(super) fn non_negative(key: &str, text: &str, p: &mut Vec<Problem>) -> Option<f64> {
    match read_number(text) {
        Ok(Some(v)) if v < 0.0 => {
            p.push(Problem::refused(key, "cannot be negative"));
            None
        }
        Ok(v) => v,
        Err(m) => {
            p.push(Problem::refused(key, m));
            None
        }
    }
}

pub(super) fn need(what: &str, text: &str) -> Result<String, AppError> {
    let t = text.trim();
    if t.is_empty() {
        return Err(AppError::BadInput(format!(
            "{what}: give a name or initials"
        )));
    }
    Ok(t.to_string())
}

pub(super) fn settings(store: &Store) -> Result<Settings, AppError> {
    store.settings().map_err(store_error)
}

pub(super) fn unit_of(store: &Store, unit_id: Id) -> Result<Unit, AppError> {
    store
        .unit(unit_id)
        .map_err(store_error)?
        .ok_or_else(|| AppError::BadInput(format!("unit {unit_id} is not in this shop")))
}

pub(super) fn history_of(store: &Store, unit_id: Id) -> Result<UnitHistory, AppError> {
    store
        .unit_history(unit_id, None)
        .map_err(store_error)?
        .ok_or_else(|| AppError::BadInput(format!("unit {unit_id} is not in this shop")))
}
