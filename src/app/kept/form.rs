//! The kept form of a unit's summary: the text `app::kept` stores for it, and the summary read
//! back from that text. Nothing here judges, reads the shop or decides what holds.
//!
//! The form is lean because a status with nothing changed is mostly reading these texts: keys
//! of one letter, the indicators as one array in a fixed order, instants as nanoseconds and
//! days as day numbers, absent parts left out; and nothing stored that is the same for every
//! unit or follows from what is stored (the safety caution of the work that opens the circuit,
//! a flag's message split into its two parts), which was more than half of a unit's JSON. What
//! it leaves out is put back on reading; a text is kept only when it reads back exactly as the
//! summary it was made from (`app::kept`), so a part that does not follow as assumed here is
//! not lost, only not kept. Figures stay JSON numbers, read back bit for bit (`serde_json`'s
//! exact float parsing, on in Cargo.toml).

use chrono::serde::{ts_nanoseconds, ts_nanoseconds_option};
use chrono::{DateTime, Utc};
use serde::{Deserialize, Serialize};

use crate::app::status::UnitStatus;
use crate::app::waiting_cost::WaitingCost;
use crate::health::flags::{message_parts, AckInfo, Figure};
use crate::health::indicators::{Dim, Restart};
use crate::health::plan::CAUTION_SHORT;
use crate::health::{
    Flag, FlagKind, Indicators, NotJudged, State, SuspectReading, UnitHealth, WorkItem, WorkKind,
};
use crate::model::UnitHistory;

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

    /// The same for an optional day.
    pub mod opt {
        use super::*;

        pub fn serialize<S: Serializer>(d: &Option<NaiveDate>, s: S) -> Result<S::Ok, S::Error> {
            match d {
                Some(d) => super::serialize(d, s),
                None => s.serialize_none(),
            }
        }

        pub fn deserialize<'de, D: Deserializer<'de>>(d: D) -> Result<Option<NaiveDate>, D::Error> {
            Option::<i32>::deserialize(d)?
                .map(|n| {
                    NaiveDate::from_num_days_from_ce_opt(n)
                        .ok_or_else(|| D::Error::custom("day out of range"))
                })
                .transpose()
        }
    }
}

/// A unit's summary as kept: all of it but what the unit's own row gives afresh at every read
/// (tag, machine, route order), what follows from the rest (the next work, the instant judged)
/// and what a summary leaves out.
#[derive(Serialize, Deserialize)]
pub(super) struct Kept {
    #[serde(rename = "s")]
    state: State,
    #[serde(rename = "u", default, skip_serializing_if = "Option::is_none")]
    fluid: Option<String>,
    #[serde(rename = "i")]
    figures: KeptFigures,
    #[serde(rename = "c", default, skip_serializing_if = "Option::is_none")]
    iso4406: Option<String>,
    #[serde(rename = "t", default, skip_serializing_if = "Option::is_none")]
    iso4406_target: Option<String>,
    #[serde(rename = "f", default, skip_serializing_if = "Vec::is_empty")]
    flags: Vec<KeptFlag>,
    #[serde(rename = "w", default, skip_serializing_if = "Vec::is_empty")]
    work: Vec<KeptWork>,
    #[serde(
        rename = "l",
        with = "ts_nanoseconds_option",
        default,
        skip_serializing_if = "Option::is_none"
    )]
    last_check: Option<DateTime<Utc>>,
    #[serde(
        rename = "m",
        with = "ts_nanoseconds_option",
        default,
        skip_serializing_if = "Option::is_none"
    )]
    last_sample: Option<DateTime<Utc>>,
    #[serde(rename = "n", default, skip_serializing_if = "Vec::is_empty")]
    not_judged: Vec<KeptNotJudged>,
    #[serde(rename = "q", default, skip_serializing_if = "Vec::is_empty")]
    suspects: Vec<SuspectReading>,
    #[serde(rename = "x", default, skip_serializing_if = "Option::is_none")]
    waiting_cost: Option<KeptCost>,
}

/// The indicators' figures, in the order [`figures_of`] gives them.
type KeptFigures = [Option<f64>; 21];

/// The figures of `i` in a fixed order, and its two ISO 4406 codes. Every field is named, so a
/// new indicator cannot be left out of the kept form unnoticed.
fn figures_of(i: &Indicators) -> (KeptFigures, &Option<String>, &Option<String>) {
    let Indicators {
        lost_flow_pct,
        vol_eff_pct,
        heat_rise_k,
        heat_rise_drift_k,
        leak_conductance_ratio,
        kv40_cst,
        kv40_drift_pct,
        iso4406,
        iso4406_target,
        water_ppm,
        acid_rise,
        oil_life_used_pct,
        effective_flow_lpm,
        hydraulic_power_kw,
        reservoir_temp_c,
        case_drain_rise_pct,
        viscosity_index,
        top_up_l_per_100h,
        oil_equivalent_hours,
        era_run_hours,
        leak_conductance,
        leak_conductance_se,
        leak_conductance_ratio_se,
    } = i;
    let figures = [
        *lost_flow_pct,
        *vol_eff_pct,
        *heat_rise_k,
        *heat_rise_drift_k,
        *leak_conductance_ratio,
        *kv40_cst,
        *kv40_drift_pct,
        *water_ppm,
        *acid_rise,
        *oil_life_used_pct,
        *effective_flow_lpm,
        *hydraulic_power_kw,
        *reservoir_temp_c,
        *case_drain_rise_pct,
        *viscosity_index,
        *top_up_l_per_100h,
        *oil_equivalent_hours,
        *era_run_hours,
        *leak_conductance,
        *leak_conductance_se,
        *leak_conductance_ratio_se,
    ];
    (figures, iso4406, iso4406_target)
}

/// The indicators of kept figures (in [`figures_of`]'s order) and codes.
fn indicators_of(
    f: KeptFigures,
    iso4406: Option<String>,
    iso4406_target: Option<String>,
) -> Indicators {
    let [lost_flow_pct, vol_eff_pct, heat_rise_k, heat_rise_drift_k, leak_conductance_ratio, kv40_cst, kv40_drift_pct, water_ppm, acid_rise, oil_life_used_pct, effective_flow_lpm, hydraulic_power_kw, reservoir_temp_c, case_drain_rise_pct, viscosity_index, top_up_l_per_100h, oil_equivalent_hours, era_run_hours, leak_conductance, leak_conductance_se, leak_conductance_ratio_se] =
        f;
    Indicators {
        lost_flow_pct,
        vol_eff_pct,
        heat_rise_k,
        heat_rise_drift_k,
        leak_conductance_ratio,
        kv40_cst,
        kv40_drift_pct,
        iso4406,
        iso4406_target,
        water_ppm,
        acid_rise,
        oil_life_used_pct,
        effective_flow_lpm,
        hydraulic_power_kw,
        reservoir_temp_c,
        case_drain_rise_pct,
        viscosity_index,
        top_up_l_per_100h,
        oil_equivalent_hours,
        era_run_hours,
        leak_conductance,
        leak_conductance_se,
        leak_conductance_ratio_se,
    }
}

/// A flag as kept: its message once, with its two parts only where they are not the message's
/// own ([`message_parts`]).
#[derive(Serialize, Deserialize)]
struct KeptFlag {
    #[serde(rename = "k")]
    kind: FlagKind,
    #[serde(rename = "s")]
    state: State,
    #[serde(rename = "d", with = "day")]
    since: chrono::NaiveDate,
    #[serde(rename = "t", with = "ts_nanoseconds")]
    state_since: DateTime<Utc>,
    #[serde(rename = "m")]
    message: String,
    #[serde(rename = "p", default, skip_serializing_if = "Option::is_none")]
    parts: Option<(String, String)>,
    #[serde(rename = "a", default, skip_serializing_if = "is_false")]
    acknowledged: bool,
    #[serde(rename = "b", default, skip_serializing_if = "Option::is_none")]
    acknowledgement: Option<AckInfo>,
    /// Dimension, value, limit and baseline.
    #[serde(rename = "f", default, skip_serializing_if = "Option::is_none")]
    figure: Option<(Dim, f64, Option<f64>, Option<f64>)>,
    #[serde(rename = "r", default, skip_serializing_if = "Option::is_none")]
    restarted: Option<Restart>,
}

fn is_false(b: &bool) -> bool {
    !*b
}

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
                .map(|g| (g.dim, g.value, g.limit, g.baseline)),
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
            figure: self.figure.map(|(dim, value, limit, baseline)| Figure {
                dim,
                value,
                limit,
                baseline,
            }),
            restarted: self.restarted,
        }
    }
}

/// A work item's safety caution as kept: the one the plan gives work that opens the circuit
/// ([`CAUTION_SHORT`]) by a mark, any other in full.
#[derive(Serialize, Deserialize)]
enum KeptCaution {
    #[serde(rename = "s")]
    Short,
    #[serde(rename = "t")]
    Text(String),
}

/// A piece of planned work as kept.
#[derive(Serialize, Deserialize)]
struct KeptWork {
    #[serde(rename = "k")]
    kind: WorkKind,
    #[serde(rename = "d", with = "day")]
    due: chrono::NaiveDate,
    #[serde(rename = "b")]
    basis: String,
    #[serde(rename = "p", default, skip_serializing_if = "Option::is_none")]
    pulled_forward: Option<String>,
    #[serde(rename = "o")]
    days_overdue: i64,
    #[serde(rename = "s")]
    state: State,
    #[serde(rename = "c", default, skip_serializing_if = "Option::is_none")]
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

/// What cannot be judged yet, as kept.
#[derive(Serialize, Deserialize)]
struct KeptNotJudged {
    #[serde(rename = "k")]
    key: String,
    #[serde(rename = "l")]
    label: String,
    #[serde(rename = "m")]
    missing: String,
    #[serde(rename = "u")]
    until: String,
    #[serde(rename = "c", default, skip_serializing_if = "Option::is_none")]
    checks_needed: Option<usize>,
    #[serde(
        rename = "d",
        with = "day::opt",
        default,
        skip_serializing_if = "Option::is_none"
    )]
    due: Option<chrono::NaiveDate>,
    #[serde(rename = "e", default, skip_serializing_if = "is_false")]
    expected: bool,
}

impl KeptNotJudged {
    fn of(n: &NotJudged) -> KeptNotJudged {
        let NotJudged {
            key,
            label,
            missing,
            until,
            checks_needed,
            due,
            expected,
        } = n.clone();
        KeptNotJudged {
            key,
            label,
            missing,
            until,
            checks_needed,
            due,
            expected,
        }
    }

    fn not_judged(self) -> NotJudged {
        NotJudged {
            key: self.key,
            label: self.label,
            missing: self.missing,
            until: self.until,
            checks_needed: self.checks_needed,
            due: self.due,
            expected: self.expected,
        }
    }
}

/// The cost of waiting as kept: lost flow, working pressure, heat in kW and hp, run hours,
/// energy, price and cost a year.
type KeptCost = (
    f64,
    f64,
    f64,
    f64,
    Option<f64>,
    Option<f64>,
    Option<f64>,
    Option<f64>,
);

fn kept_cost(c: &WaitingCost) -> KeptCost {
    let WaitingCost {
        lost_flow,
        working_pressure,
        heat_kw,
        heat_hp,
        run_hours_per_year,
        energy_kwh_per_year,
        price_per_kwh,
        cost_per_year,
    } = *c;
    (
        lost_flow,
        working_pressure,
        heat_kw,
        heat_hp,
        run_hours_per_year,
        energy_kwh_per_year,
        price_per_kwh,
        cost_per_year,
    )
}

fn waiting_cost_of(c: KeptCost) -> WaitingCost {
    let (
        lost_flow,
        working_pressure,
        heat_kw,
        heat_hp,
        run_hours_per_year,
        energy_kwh_per_year,
        price_per_kwh,
        cost_per_year,
    ) = c;
    WaitingCost {
        lost_flow,
        working_pressure,
        heat_kw,
        heat_hp,
        run_hours_per_year,
        energy_kwh_per_year,
        price_per_kwh,
        cost_per_year,
    }
}

impl Kept {
    /// The kept form of a unit's summary `s`.
    pub(super) fn of(s: &UnitStatus) -> Kept {
        let h = &s.health;
        let (figures, iso4406, iso4406_target) = figures_of(&h.indicators);
        Kept {
            state: s.state,
            fluid: s.fluid.clone(),
            figures,
            iso4406: iso4406.clone(),
            iso4406_target: iso4406_target.clone(),
            flags: h.flags.iter().map(KeptFlag::of).collect(),
            work: h.work.iter().map(KeptWork::of).collect(),
            last_check: h.last_check,
            last_sample: h.last_sample,
            not_judged: h.not_judged.iter().map(KeptNotJudged::of).collect(),
            suspects: h.suspects.clone(),
            waiting_cost: s.waiting_cost.as_ref().map(kept_cost),
        }
    }

    /// The summary of `shell`'s unit judged at `at` that this kept form holds.
    pub(super) fn status(self, shell: &UnitHistory, at: DateTime<Utc>) -> UnitStatus {
        let health = UnitHealth {
            at,
            state: self.state,
            eras: Vec::new(),
            fluid: None,
            baseline: Default::default(),
            indicators: indicators_of(self.figures, self.iso4406, self.iso4406_target),
            flags: self.flags.into_iter().map(KeptFlag::flag).collect(),
            work: self.work.into_iter().map(KeptWork::work).collect(),
            tiles: Vec::new(),
            series: Vec::new(),
            checks: Vec::new(),
            samples: Vec::new(),
            last_check: self.last_check,
            last_sample: self.last_sample,
            not_judged: self
                .not_judged
                .into_iter()
                .map(KeptNotJudged::not_judged)
                .collect(),
            restarts: Vec::new(),
            suspects: self.suspects,
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
            waiting_cost: self.waiting_cost.map(waiting_cost_of),
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

    fn text(s: &UnitStatus) -> String {
        serde_json::to_string(&Kept::of(s)).unwrap()
    }

    fn read_back(shell: &UnitHistory, s: &UnitStatus) -> UnitStatus {
        serde_json::from_str::<Kept>(&text(s))
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
            let t = text(s);
            // The caution and a flag's message parts are put back, not stored.
            assert!(!t.contains(CAUTION_SHORT), "{t}");
            for f in &s.health.flags {
                assert!(!t.contains(&format!("\"{}\"", f.what)), "{t}");
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
        assert_eq!(read_back(shell, &s), s);
        assert!(text(&s).contains("another first part"));
    }

    #[test]
    fn a_figure_json_cannot_carry_does_not_read_back() {
        // JSON has no infinity: it is written as null, so the text is not the summary and
        // `app::kept` does not keep it.
        let (_dir, units) = demo();
        let (shell, s) = &units[0];
        let mut s = s.clone();
        s.health.indicators.lost_flow_pct = Some(f64::INFINITY);
        assert_ne!(read_back(shell, &s), s);
    }
}
