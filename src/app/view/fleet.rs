//! The fleet's lines: each unit's key figures (decided once: which, in what unit and with how
//! many decimals), what explains its state, and its next work, as the board, `status` and the
//! report's fleet page show them. Nothing here reads the shop or evaluates.

use chrono::NaiveDate;

use super::words::{due_words, state_mark, state_word, StateMark};
use crate::app::figures;
use crate::app::status::UnitStatus;
use crate::health::indicators::Dim;
use crate::health::{State, WorkItem};
use crate::units::{UnitSystem, Viscosity};

/// One key figure of a unit: its number in the display unit (for sorting and for tests that
/// read it back), as a table cell, and as a phrase with what it is.
#[derive(Clone, Debug, PartialEq)]
pub struct KeyFigure {
    /// The indicator: `lost_flow`, `leak`, `heat_rise`, `kv40`, `iso4406`, `water`, `oil_life`.
    pub key: &'static str,
    /// The number in the display unit; `None` for a code (ISO 4406).
    pub value: Option<f64>,
    /// The figure alone, with its unit: `4.5 %`, `+1.2 K`, `18/16/13 / 17/15/12`.
    pub cell: String,
    /// The figure as a phrase: `lost flow 4.5 %`, `heat rise +1.2 K over baseline`.
    pub phrase: String,
}

/// A unit's key figures, each where there is data.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct KeyFigures {
    pub lost_flow: Option<KeyFigure>,
    pub leak: Option<KeyFigure>,
    /// The heat rise's drift against the unit's baseline (the figure the engine judges).
    pub heat_rise: Option<KeyFigure>,
    pub kv40: Option<KeyFigure>,
    pub iso4406: Option<KeyFigure>,
    pub water: Option<KeyFigure>,
    pub oil_life: Option<KeyFigure>,
}

impl KeyFigures {
    /// The figures of a line, in their fixed order (oil life is a column of its own).
    pub fn line_parts(&self) -> impl Iterator<Item = &KeyFigure> {
        [
            &self.lost_flow,
            &self.leak,
            &self.heat_rise,
            &self.kv40,
            &self.iso4406,
            &self.water,
        ]
        .into_iter()
        .flatten()
    }

    /// The key figures as one line: `lost flow 4.5 % · leak 1.12× · …`, or `no readings yet`.
    pub fn line(&self) -> String {
        let parts: Vec<&str> = self.line_parts().map(|f| f.phrase.as_str()).collect();
        if parts.is_empty() {
            "no readings yet".into()
        } else {
            parts.join(" · ")
        }
    }
}

fn figure(key: &'static str, value: f64, cell: String, phrase: String) -> KeyFigure {
    KeyFigure {
        key,
        value: Some(value),
        cell,
        phrase,
    }
}

/// A unit's key figures in the shop's units.
pub fn key_figures(u: &UnitStatus, sys: UnitSystem) -> KeyFigures {
    let i = &u.health.indicators;
    KeyFigures {
        lost_flow: i.lost_flow_pct.map(|v| {
            let cell = figures::text(Dim::Percent, v, sys);
            figure("lost_flow", v, cell.clone(), format!("lost flow {cell}"))
        }),
        leak: i.leak_conductance_ratio.map(|v| {
            let cell = figures::text(Dim::Ratio, v, sys);
            figure("leak", v, cell.clone(), format!("leak {cell}"))
        }),
        heat_rise: i.heat_rise_drift_k.map(|v| {
            let cell = figures::temp_diff(v, sys, true);
            figure(
                "heat_rise",
                figures::value(Dim::TempDiff, v, sys),
                cell.clone(),
                format!("heat rise {cell} over baseline"),
            )
        }),
        kv40: i.kv40_cst.map(|v| {
            let si = Viscosity::from_cst(v).0;
            let cell = figures::text(Dim::Viscosity, si, sys);
            figure(
                "kv40",
                figures::value(Dim::Viscosity, si, sys),
                cell.clone(),
                format!("KV40 {cell}"),
            )
        }),
        iso4406: i.iso4406.as_ref().map(|c| {
            let (cell, phrase) = match &i.iso4406_target {
                Some(t) => (format!("{c} / {t}"), format!("ISO 4406 {c} (target {t})")),
                None => (c.clone(), format!("ISO 4406 {c}")),
            };
            KeyFigure {
                key: "iso4406",
                value: None,
                cell,
                phrase,
            }
        }),
        water: i.water_ppm.map(|v| {
            let cell = figures::text(Dim::Ppm, v, sys);
            figure("water", v, cell.clone(), format!("water {cell}"))
        }),
        oil_life: i.oil_life_used_pct.map(|v| {
            let cell = format!("{v:.0} %");
            figure("oil_life", v, cell.clone(), format!("oil life used {cell}"))
        }),
    }
}

/// A unit's next planned work.
#[derive(Clone, Debug, PartialEq)]
pub struct DueView {
    /// What: `walk-round check`, `fluid sample`, …
    pub task: &'static str,
    pub due: NaiveDate,
    pub days_overdue: i64,
    pub overdue: bool,
    /// `walk-round check 3 days late`, `fluid sample in 12 days`.
    pub text: String,
}

/// A unit's next planned work `w` as the fleet's lines show it.
pub fn due_view(w: &WorkItem) -> DueView {
    DueView {
        task: w.kind.label(),
        due: w.due,
        days_overdue: w.days_overdue,
        overdue: w.days_overdue > 0,
        text: format!("{} {}", w.kind.label(), due_words(w.days_overdue)),
    }
}

/// One unit's line on the fleet board, in `status` and on the report's fleet page.
#[derive(Clone, Debug, PartialEq)]
pub struct FleetLine {
    pub unit_id: i64,
    pub tag: String,
    pub machine: String,
    pub machine_name: String,
    pub state: State,
    pub state_word: &'static str,
    pub mark: StateMark,
    /// What explains a flagged or not-judged unit's state: its worst flag's figure (the text
    /// of `status --json`'s `figure`), or what it waits for.
    pub explanation: Option<String>,
    pub key: KeyFigures,
    /// What the board shows for the unit: the explanation, else the key figures.
    pub board: String,
    /// What the report's fleet page shows: the explanation, then the key figures.
    pub figures: String,
    pub next_due: Option<DueView>,
    /// Whether every flag of the unit has been acknowledged (and it has flags).
    pub all_seen: bool,
}

/// What explains a unit's state, when it is flagged or not judged yet.
fn explanation(u: &UnitStatus, sys: UnitSystem) -> Option<String> {
    if let Some(f) = u.health.flags.first() {
        let mut t = figures::flag_figure(f, sys);
        let more = u.health.flags.len() - 1;
        if more > 0 {
            t.push_str(&format!(
                " (+{more} more flag{})",
                if more == 1 { "" } else { "s" }
            ));
        }
        return Some(t);
    }
    if u.state == State::NotJudged {
        let waiting: Vec<_> = u.health.not_judged.iter().filter(|n| n.expected).collect();
        if let Some(n) = waiting.first() {
            let mut t = format!("{}: {} — judged {}", n.label, n.missing, n.until);
            if waiting.len() > 1 {
                t.push_str(&format!(" (+{} more)", waiting.len() - 1));
            }
            return Some(t);
        }
    }
    None
}

/// A unit's line in the shop's units.
pub fn fleet_line(u: &UnitStatus, sys: UnitSystem) -> FleetLine {
    let key = key_figures(u, sys);
    let explanation = explanation(u, sys);
    let line = key.line();
    let (board, figures) = match &explanation {
        Some(e) => (e.clone(), format!("{e}; {line}")),
        None => (line.clone(), line),
    };
    FleetLine {
        unit_id: u.unit_id,
        tag: u.unit.clone(),
        machine: u.machine.clone(),
        machine_name: u.machine_name.clone(),
        state: u.state,
        state_word: state_word(u.state),
        mark: state_mark(u.state),
        explanation,
        key,
        board,
        figures,
        next_due: u.next_due.as_ref().map(due_view),
        all_seen: !u.health.flags.is_empty() && u.health.flags.iter().all(|f| f.acknowledged),
    }
}

/// The fleet's counts by state in one sentence: `12 units: 2 act, 3 watch, 1 not judged yet,
/// 6 steady`.
pub fn counts_line(n: usize, c: &crate::app::status::StateCounts) -> String {
    format!(
        "{n} unit{}: {} act, {} watch, {} not judged yet, {} steady",
        if n == 1 { "" } else { "s" },
        c.act,
        c.watch,
        c.not_judged,
        c.steady
    )
}
