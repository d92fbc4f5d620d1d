//! The kept form of a unit's summary: the text `app::kept` stores for it, and the summary read
//! back from that text. Nothing here judges, reads the shop or decides what holds.
//!
//! The form is lean because a status with nothing changed is mostly reading these texts. It is
//! binary (`postcard`: fields in order, no names; lengths and integers as variable-length
//! integers, figures as their eight bytes, so read back bit for bit), written as base64 text
//! because the column is text on both backends (a STRICT TEXT column on SQLite, and PostgreSQL
//! text holds no NUL). Instants are kept as nanoseconds and days as day numbers; nothing is
//! stored that is the same for every unit or follows from what is stored (the safety caution
//! of the work that opens the circuit, a flag's message split into its two parts), which was
//! more than half of a unit's JSON. What it leaves out is put back on reading; a text is kept
//! only when it reads back exactly as the summary it was made from (`app::kept`), so a part
//! that does not follow as assumed here is not lost, only not kept. The fields' order is the
//! form: a build that changes it has another engine (`app::kept::engine`) and never reads
//! what an older one kept.

use chrono::serde::{ts_nanoseconds, ts_nanoseconds_option};
use chrono::{DateTime, Utc};
use serde::{Deserialize, Serialize};

use crate::app::status::UnitStatus;
use crate::app::waiting_cost::WaitingCost;
use crate::health::baseline::BaselineIndicator;
use crate::health::flags::{message_parts, AckInfo, Figure};
use crate::health::indicators::{Dim, Restart};
use crate::health::plan::CAUTION_SHORT;
use crate::health::screen::{Field, Record};
use crate::health::{
    ConfirmedBy, Flag, FlagKind, Indicators, NotJudged, State, SuspectReading, UnitHealth,
    WorkItem, WorkKind,
};
use crate::model::{Id, UnitHistory};

/// Calendar days as day numbers (days from the first of January of year 1).
mod day {
    use chrono::{Datelike, NaiveDate};
    use serde::{de::Error, Deserialize, Deserializer, Serializer};

    pub fn serialize<S: Serializer>(d: &NaiveDate, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_i32(d.num_days_from_ce())
    }

    pub fn deserialize<'de, D: Deserializer<'de>>(d: D) -> Result<NaiveDate, D::Error> {
        let n = i32::deserialize(d)?;
        NaiveDate::from_num_days_from_ce_opt(n).ok_or_else(|| D::Error::custom("day out of range"))
    }
}

/// A unit's summary as kept: all of it but what the unit's own row gives afresh at every read
/// (tag, machine, route order), what follows from the rest (the next work, the instant judged)
/// and what a summary leaves out. The indicators, what cannot be judged yet and the cost of
/// waiting are kept in their own serde form; flags, work and questioned readings in forms of
/// their own below.
#[derive(Serialize, Deserialize)]
pub(super) struct Kept {
    state: State,
    fluid: Option<String>,
    indicators: Indicators,
    flags: Vec<KeptFlag>,
    work: Vec<KeptWork>,
    #[serde(with = "ts_nanoseconds_option")]
    last_check: Option<DateTime<Utc>>,
    #[serde(with = "ts_nanoseconds_option")]
    last_sample: Option<DateTime<Utc>>,
    not_judged: Vec<NotJudged>,
    suspects: Vec<KeptSuspect>,
    waiting_cost: Option<WaitingCost>,
}

/// The text of a kept form: its bytes in base64.
const TEXT: base64::engine::GeneralPurpose = base64::engine::general_purpose::STANDARD_NO_PAD;

/// A flag as kept: its message once, with its two parts only where they are not the message's
/// own ([`message_parts`]).
#[derive(Serialize, Deserialize)]
struct KeptFlag {
    kind: FlagKind,
    state: State,
    #[serde(with = "day")]
    since: chrono::NaiveDate,
    #[serde(with = "ts_nanoseconds")]
    state_since: DateTime<Utc>,
    message: String,
    parts: Option<(String, String)>,
    acknowledged: bool,
    acknowledgement: Option<AckInfo>,
    /// Dimension, value, limit, baseline and the indicator drifted on.
    figure: Option<KeptFigure>,
    restarted: Option<Restart>,
}

/// A flag's figure: dimension, value, limit, baseline and the indicator drifted on.
type KeptFigure = (
    Dim,
    f64,
    Option<f64>,
    Option<f64>,
    Option<BaselineIndicator>,
);

impl KeptFlag {
    fn of(f: &Flag) -> KeptFlag {
        let (what, next_step) = message_parts(&f.message);
        KeptFlag {
            kind: f.kind,
            state: f.state,
            since: f.since,
            state_since: f.state_since,
            message: f.message.clone(),
            parts: (what != f.what || next_step != f.next_step)
                .then(|| (f.what.clone(), f.next_step.clone())),
            acknowledged: f.acknowledged,
            acknowledgement: f.acknowledgement.clone(),
            figure: f
                .figure
                .as_ref()
                .map(|g| (g.dim, g.value, g.limit, g.baseline, g.of)),
            restarted: f.restarted.clone(),
        }
    }

    fn flag(self) -> Flag {
        let (what, next_step) = match self.parts {
            Some(p) => p,
            None => message_parts(&self.message),
        };
        Flag {
            kind: self.kind,
            state: self.state,
            since: self.since,
            state_since: self.state_since,
            message: self.message,
            what,
            next_step,
            acknowledged: self.acknowledged,
            acknowledgement: self.acknowledgement,
            figure: self.figure.map(|(dim, value, limit, baseline, of)| Figure {
                dim,
                value,
                limit,
                baseline,
                of,
            }),
            restarted: self.restarted,
        }
    }
}

/// A work item's safety caution as kept: the one the plan gives work that opens the circuit
/// ([`CAUTION_SHORT`]) by a mark, any other in full.
#[derive(Serialize, Deserialize)]
enum KeptCaution {
    Short,
    Text(String),
}

/// A piece of planned work as kept.
#[derive(Serialize, Deserialize)]
struct KeptWork {
    kind: WorkKind,
    #[serde(with = "day")]
    due: chrono::NaiveDate,
    basis: String,
    pulled_forward: Option<String>,
    days_overdue: i64,
    state: State,
    caution: Option<KeptCaution>,
}

impl KeptWork {
    fn of(w: &WorkItem) -> KeptWork {
        KeptWork {
            kind: w.kind,
            due: w.due,
            basis: w.basis.clone(),
            pulled_forward: w.pulled_forward.clone(),
            days_overdue: w.days_overdue,
            state: w.state,
            caution: w.caution.as_ref().map(|c| {
                if c == CAUTION_SHORT {
                    KeptCaution::Short
                } else {
                    KeptCaution::Text(c.clone())
                }
            }),
        }
    }

    fn work(self) -> WorkItem {
        WorkItem {
            kind: self.kind,
            due: self.due,
            basis: self.basis,
            pulled_forward: self.pulled_forward,
            days_overdue: self.days_overdue,
            state: self.state,
            caution: self.caution.map(|c| match c {
                KeptCaution::Short => CAUTION_SHORT.to_string(),
                KeptCaution::Text(t) => t,
            }),
        }
    }
}

/// A questioned reading as kept (the form has no field names, so a confirmation is an enum
/// of its own rather than the tagged one of `SuspectReading`).
#[derive(Serialize, Deserialize)]
struct KeptSuspect {
    record: Record,
    id: Id,
    #[serde(with = "ts_nanoseconds")]
    at: DateTime<Utc>,
    field: Field,
    reason: String,
    confirmed: Option<KeptConfirmed>,
}

#[derive(Serialize, Deserialize)]
enum KeptConfirmed {
    Person {
        by: String,
        #[serde(with = "ts_nanoseconds")]
        at: DateTime<Utc>,
    },
    NextReading {
        #[serde(with = "ts_nanoseconds")]
        at: DateTime<Utc>,
    },
}

impl KeptSuspect {
    fn of(s: &SuspectReading) -> KeptSuspect {
        let SuspectReading {
            record,
            id,
            at,
            field,
            reason,
            confirmed,
        } = s.clone();
        KeptSuspect {
            record,
            id,
            at,
            field,
            reason,
            confirmed: confirmed.map(|c| match c {
                ConfirmedBy::Person { by, at } => KeptConfirmed::Person { by, at },
                ConfirmedBy::NextReading { at } => KeptConfirmed::NextReading { at },
            }),
        }
    }

    fn suspect(self) -> SuspectReading {
        SuspectReading {
            record: self.record,
            id: self.id,
            at: self.at,
            field: self.field,
            reason: self.reason,
            confirmed: self.confirmed.map(|c| match c {
                KeptConfirmed::Person { by, at } => ConfirmedBy::Person { by, at },
                KeptConfirmed::NextReading { at } => ConfirmedBy::NextReading { at },
            }),
        }
    }
}

impl Kept {
    /// The kept form of a unit's summary `s`.
    pub(super) fn of(s: &UnitStatus) -> Kept {
        let h = &s.health;
        Kept {
            state: s.state,
            fluid: s.fluid.clone(),
            indicators: h.indicators.clone(),
            flags: h.flags.iter().map(KeptFlag::of).collect(),
            work: h.work.iter().map(KeptWork::of).collect(),
            last_check: h.last_check,
            last_sample: h.last_sample,
            not_judged: h.not_judged.clone(),
            suspects: h.suspects.iter().map(KeptSuspect::of).collect(),
            waiting_cost: s.waiting_cost.clone(),
        }
    }

    /// The text of this kept form; `None` when a part cannot be written.
    pub(super) fn text(&self) -> Option<String> {
        use base64::Engine;
        Some(TEXT.encode(postcard::to_allocvec(self).ok()?))
    }

    /// The kept form a text holds; `None` for one that does not read (another program's).
    pub(super) fn read(text: &str) -> Option<Kept> {
        use base64::Engine;
        postcard::from_bytes(&TEXT.decode(text).ok()?).ok()
    }

    /// The summary of `shell`'s unit judged at `at` that this kept form holds.
    pub(super) fn status(self, shell: &UnitHistory, at: DateTime<Utc>) -> UnitStatus {
        let health = UnitHealth {
            at,
            state: self.state,
            eras: Vec::new(),
            fluid: None,
            baseline: Default::default(),
            indicators: self.indicators,
            flags: self.flags.into_iter().map(KeptFlag::flag).collect(),
            work: self.work.into_iter().map(KeptWork::work).collect(),
            tiles: Vec::new(),
            series: Vec::new(),
            checks: Vec::new(),
            samples: Vec::new(),
            last_check: self.last_check,
            last_sample: self.last_sample,
            not_judged: self.not_judged,
            restarts: Vec::new(),
            suspects: self
                .suspects
                .into_iter()
                .map(KeptSuspect::suspect)
                .collect(),
        };
        UnitStatus {
            unit_id: shell.unit.id,
            unit: shell.unit.tag.clone(),
            machine: shell.machine.tag.clone(),
            machine_name: shell.machine.name.clone(),
            machine_kind: shell.machine.kind.clone(),
            route_order: shell.unit.route_order,
            state: self.state,
            fluid: self.fluid,
            next_due: health.work.iter().min_by_key(|w| w.due).cloned(),
            health,
            waiting_cost: self.waiting_cost,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::app::shop::Shop;
    use crate::app::status::{fleet_status_in, Detail};
    use crate::health::flags::AckInfo;

    /// Each unit of the demo shop as a summary evaluated at one instant, with its shell.
    fn demo() -> (tempfile::TempDir, Vec<(UnitHistory, UnitStatus)>) {
        let dir = tempfile::tempdir().unwrap();
        let shop = Shop::create_demo(&dir.path().join("demo.sqlite")).unwrap();
        let at = "2026-11-28T12:00:00Z".parse().unwrap();
        let store = shop.store();
        let f = fleet_status_in(store, Some(at), Detail::Full).unwrap();
        let shells = store.active_unit_shells().unwrap();
        let units = f
            .units
            .into_iter()
            .map(|u| {
                let shell = shells.iter().find(|s| s.unit.id == u.unit_id).unwrap();
                (shell.clone(), u.summary())
            })
            .collect();
        (dir, units)
    }

    /// The bytes a kept text holds, as text where they are (to look for a string in them).
    fn bytes(s: &UnitStatus) -> String {
        use base64::Engine;
        let b = TEXT.decode(Kept::of(s).text().unwrap()).unwrap();
        String::from_utf8_lossy(&b).into_owned()
    }

    fn read_back(shell: &UnitHistory, s: &UnitStatus) -> UnitStatus {
        Kept::read(&Kept::of(s).text().unwrap())
            .unwrap()
            .status(shell, s.health.at)
    }

    #[test]
    fn every_demo_summary_reads_back_exactly_without_what_follows() {
        let (_dir, units) = demo();
        assert!(units.iter().any(|(_, s)| !s.health.flags.is_empty()));
        assert!(units
            .iter()
            .any(|(_, s)| s.health.work.iter().any(|w| w.caution.is_some())));
        for (shell, s) in &units {
            assert_eq!(read_back(shell, s), *s, "{}", s.unit);
            let b = bytes(s);
            // The caution and a flag's message parts are put back, not stored: each message
            // is there once.
            assert!(!b.contains(CAUTION_SHORT), "{b}");
            for f in &s.health.flags {
                assert_eq!(b.matches(f.what.as_str()).count(), 1, "{b}");
            }
        }
    }

    #[test]
    fn parts_that_do_not_follow_are_kept_in_full() {
        let (_dir, units) = demo();
        let (shell, s) = units
            .iter()
            .find(|(_, s)| !s.health.flags.is_empty() && !s.health.work.is_empty())
            .unwrap();
        let mut s = s.clone();
        let seen = "2026-11-20T07:30:00.123456789Z".parse().unwrap();
        let f = &mut s.health.flags[0];
        f.what = "another first part".into();
        f.acknowledged = true;
        f.acknowledgement = Some(AckInfo {
            by: "A. Fitter".into(),
            at: seen,
            note: "seen: \"ok\"".into(),
        });
        s.health.work[0].caution = Some("Another caution.".into());
        s.next_due = s.health.work.iter().min_by_key(|w| w.due).cloned();
        s.health.last_check = Some(seen);
        let suspect = |confirmed| SuspectReading {
            record: Record::Check,
            id: 7,
            at: seen,
            field: Field::Pressure,
            reason: "far above the unit's last readings".into(),
            confirmed,
        };
        s.health.suspects = vec![
            suspect(None),
            suspect(Some(ConfirmedBy::Person {
                by: "A. Fitter".into(),
                at: seen,
            })),
            suspect(Some(ConfirmedBy::NextReading { at: seen })),
        ];
        s.health.not_judged.push(NotJudged {
            key: "water".into(),
            label: "Water".into(),
            missing: "no sample yet".into(),
            until: "at the next sample".into(),
            checks_needed: Some(3),
            due: Some(chrono::NaiveDate::from_ymd_opt(2027, 1, 10).unwrap()),
            expected: true,
        });
        assert_eq!(read_back(shell, &s), s);
        assert!(bytes(&s).contains("another first part"));
    }

    #[test]
    fn a_text_that_is_not_a_kept_form_does_not_read() {
        // A text that is not a kept form, or is cut short, does not read.
        let (_dir, units) = demo();
        let (_, s) = &units[0];
        let text = Kept::of(s).text().unwrap();
        assert!(Kept::read(&text[..text.len() / 2]).is_none());
        assert!(Kept::read("{\"state\":\"act\"}").is_none());
    }
}
