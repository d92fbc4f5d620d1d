//! Screening of readings: which fields of a check or sample look like a slip (a mistyped digit,
//! a slipped decimal point, a reading from the wrong gauge) against the unit's physical frame
//! and its own recent history, and whether each suspicion has been confirmed since.
//!
//! One rule for every door a reading comes in by: the engine keeps an unconfirmed suspect
//! reading out of its baselines, detectors and flags; the entry forms ask about it; the
//! importer keeps the row and marks it. Pure: records in, suspicions out; no I/O.
//!
//! Every threshold below is *common practice, no published source* unless its comment names
//! one: a reading is questioned only where it is far beyond what scatter and real faults do
//! between two weekly checks, because a real change is confirmed by the next check anyway.

use chrono::{DateTime, Utc};
use serde::{Deserialize, Serialize};

use super::text::{flow, pressure, seconds, temp, visc};
use crate::model::{Check, Event, EventKind, Fluid, Id, Sample, Unit, UnitHistory};
use crate::physics::stats;
use crate::physics::viscosity::Walther;
use crate::units::UnitSystem;

/// How many earlier accepted readings of a field form its recent history.
pub const WINDOW: usize = 8;
/// Fewer accepted earlier readings than this and the history rule is not applied (the frame
/// rules still are): a robust spread of fewer points says little.
pub const MIN_HISTORY: usize = 3;
/// A reading further than this many robust σ from the median of its recent history is
/// questioned. The rule is Hampel's identifier (median ± t · 1.4826 · MAD; F. R. Hampel 1974,
/// L. Davies and U. Gather, "The identification of multiple outliers", JASA 1993), with t
/// widened from the usual 3 to 5 because only a slip is to be caught here: a smaller outlier
/// is absorbed by the robust baselines and the median-of-3 flags (common practice, no
/// published source, for the 5).
pub const SIGMAS: f64 = 5.0;
/// The robust σ of a history is never taken below these floors (a run of identical readings
/// has a MAD of zero). Temperatures in kelvin: oil and hall move a few kelvin from week to
/// week with the load and the weather. Pressure, stroke time and case drain are judged on
/// their logarithm (a slipped decimal point is a factor of ten whatever the size), so their
/// floors are relative: a stopwatch read by hand (about 5 % on a 4 s stroke) and the real
/// moves of a wearing pump; pressure changes with the job (two or three settings a unit);
/// case drain grows fast on a wearing pump. With `SIGMAS` = 5 the limits are about ±12 K,
/// ×/÷ 1.22 on a stroke time, ×/÷ 2.7 on pressure and case drain.
pub const FLOOR_TEMP_K: f64 = 2.5;
pub const FLOOR_STROKE_LN: f64 = 0.04;
pub const FLOOR_PRESSURE_LN: f64 = 0.2;
pub const FLOOR_CASE_DRAIN_LN: f64 = 0.2;
/// A reading beyond `SIGMAS` right after an accepted one beyond this many robust σ on the same
/// side is a run, not a slip: a slip is a lone reading, while a real change — a relief valve
/// starting to pass oil, slowing the stroke a little on a cold morning and a lot the week
/// after — moves two readings in a row. The rule is the Western Electric zone test "two of
/// three successive points beyond 2σ on the same side" (Western Electric, *Statistical Quality
/// Control Handbook*, 1956; D. C. Montgomery, *Introduction to Statistical Quality Control*,
/// the sensitizing rules for Shewhart charts). It does not reach a gross slip: a reading
/// beyond `RUN_GROSS` times Hampel's limit (a slipped decimal point — 23 K on an oil at 26 °C,
/// nine floored σ — and most swapped digits) is questioned anyway (common practice, no
/// published source, for the 1.5).
pub const RUN_SIGMAS: f64 = 2.0;
pub const RUN_GROSS: f64 = 1.5;
/// A working pressure more than this fraction above the relief setting cannot be held by the
/// circuit (gauge tolerance; the entry form's own margin).
pub const OVER_RELIEF: f64 = 0.10;
/// Workshop air more than this above the reservoir oil of a running unit is a misread or a
/// swapped pair of readings (thermometer tolerance).
pub const AMBIENT_OVER_OIL_K: f64 = 3.0;
/// A stroke time this many times the usual (or a this-many-th of it) is not wear.
pub const STROKE_FACTOR: f64 = 3.0;
/// A KV40 further than this fraction from the new oil's is a wrong unit, a wrong oil or a slip
/// (the entry form's own threshold).
pub const KV40_FAR: f64 = 0.5;
/// More than 1 % water is free water or a figure not in ppm.
pub const WATER_MAX_PPM: f64 = 10_000.0;
/// An acid number above this is rare in hydraulic oil, mg KOH/g.
pub const ACID_MAX: f64 = 5.0;

/// A field of a check or sample that can be questioned. The keys are the entry forms' field
/// keys.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Field {
    ReservoirTemp,
    AmbientTemp,
    Pressure,
    StrokeTime,
    CaseDrain,
    Kv40,
    ViscReading,
    #[serde(rename = "water_ppm")]
    Water,
    Acid,
}

impl Field {
    pub fn key(self) -> &'static str {
        match self {
            Field::ReservoirTemp => "reservoir_temp",
            Field::AmbientTemp => "ambient_temp",
            Field::Pressure => "pressure",
            Field::StrokeTime => "stroke_time",
            Field::CaseDrain => "case_drain",
            Field::Kv40 => "kv40",
            Field::ViscReading => "visc_reading",
            Field::Water => "water_ppm",
            Field::Acid => "acid",
        }
    }

    pub fn label(self) -> &'static str {
        match self {
            Field::ReservoirTemp => "reservoir temperature",
            Field::AmbientTemp => "ambient temperature",
            Field::Pressure => "working pressure",
            Field::StrokeTime => "timed stroke",
            Field::CaseDrain => "case-drain flow",
            Field::Kv40 => "KV40",
            Field::ViscReading => "field viscosity reading",
            Field::Water => "water",
            Field::Acid => "acid number",
        }
    }
}

/// One reason to question one field.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Suspicion {
    pub field: Field,
    pub reason: String,
}

/// The fields of a check judged against their own history.
const HISTORY_FIELDS: [Field; 5] = [
    Field::ReservoirTemp,
    Field::AmbientTemp,
    Field::Pressure,
    Field::StrokeTime,
    Field::CaseDrain,
];

fn check_value(c: &Check, f: Field) -> Option<f64> {
    match f {
        Field::ReservoirTemp => c.reservoir_temp.map(|v| v.si()),
        Field::AmbientTemp => c.ambient_temp.map(|v| v.si()),
        Field::Pressure => c.pressure.map(|v| v.si()),
        Field::StrokeTime => c.stroke_time.map(|v| v.si()),
        Field::CaseDrain => c.case_drain.map(|v| v.si()),
        _ => None,
    }
    .filter(|v| v.is_finite())
}

/// Whether a field's history is judged on its logarithm.
fn on_log(f: Field) -> bool {
    matches!(f, Field::Pressure | Field::StrokeTime | Field::CaseDrain)
}

/// A field's value as its history judges it: kelvin, or the logarithm of a positive value.
fn hist_value(c: &Check, f: Field) -> Option<f64> {
    let x = check_value(c, f)?;
    if on_log(f) {
        (x > 0.0).then(|| x.ln())
    } else {
        Some(x)
    }
}

fn from_hist(f: Field, h: f64) -> f64 {
    if on_log(f) {
        h.exp()
    } else {
        h
    }
}

fn show(f: Field, si: f64, sys: UnitSystem) -> String {
    match f {
        Field::ReservoirTemp | Field::AmbientTemp => temp(si, sys),
        Field::Pressure => pressure(si, sys),
        Field::StrokeTime => seconds(si),
        Field::CaseDrain => flow(si, sys),
        _ => format!("{si}"),
    }
}

fn floor(f: Field) -> f64 {
    match f {
        Field::ReservoirTemp | Field::AmbientTemp => FLOOR_TEMP_K,
        Field::StrokeTime => FLOOR_STROKE_LN,
        Field::Pressure => FLOOR_PRESSURE_LN,
        Field::CaseDrain => FLOOR_CASE_DRAIN_LN,
        _ => 0.0,
    }
}

/// The recent history of one field: median and robust σ (floored) of the last `WINDOW`
/// accepted readings, when there are at least `MIN_HISTORY`.
fn recent(f: Field, accepted: &[f64]) -> Option<(f64, f64)> {
    if accepted.len() < MIN_HISTORY {
        return None;
    }
    let last = &accepted[accepted.len().saturating_sub(WINDOW)..];
    let (m, s) = stats::median_and_mad_sigma(last)?;
    Some((m, s.max(floor(f))))
}

/// Where a reading stands against its recent history: `Some(±1.0)` when it is beyond
/// `SIGMAS` robust σ above or below the median.
fn outside(x: f64, hist: Option<(f64, f64)>) -> Option<f64> {
    let (m, s) = hist?;
    ((x - m).abs() > SIGMAS * s).then(|| (x - m).signum())
}

/// The state of the screen of one unit's checks, reading by reading in time order.
#[derive(Default)]
struct CheckScreen {
    /// Accepted values per history field, oldest first.
    accepted: [Vec<f64>; 5],
    /// The last accepted reading per field was itself outside its history (a confirmed step),
    /// with its side: a next reading that agrees with it needs no confirmation.
    stepped: [Option<f64>; 5],
    /// The last reading per field was accepted and lay beyond `RUN_SIGMAS` of its history,
    /// with its side: the start of a run rather than a slip (see `RUN_SIGMAS`).
    leaning: [Option<f64>; 5],
}

fn idx(f: Field) -> usize {
    HISTORY_FIELDS.iter().position(|&g| g == f).unwrap_or(0)
}

impl CheckScreen {
    /// The suspicions of one check against the frame and the history so far (does not change
    /// the state).
    fn screen(&self, unit: &Unit, c: &Check, sys: UnitSystem) -> Vec<Suspicion> {
        let mut out = Vec::new();
        let mut history_hit = [false; 5];
        for &f in &HISTORY_FIELDS {
            let (Some(x), Some(shown)) = (hist_value(c, f), check_value(c, f)) else {
                continue;
            };
            let i = idx(f);
            let hist = recent(f, &self.accepted[i]);
            let Some(side) = outside(x, hist) else {
                continue;
            };
            let (m, s) = hist.unwrap_or((x, 0.0));
            // The same side as a step confirmed at the last reading, and close to that reading:
            // the level has moved, this is not a slip.
            if let (Some(step), Some(prev)) = (self.stepped[i], self.accepted[i].last()) {
                if step == side && (x - prev).abs() <= SIGMAS * s {
                    continue;
                }
            }
            // The second of a run on one side (`RUN_SIGMAS`), short of a gross slip.
            if self.leaning[i] == Some(side) && (x - m).abs() <= RUN_GROSS * SIGMAS * s {
                continue;
            }
            history_hit[i] = true;
            out.push(Suspicion {
                field: f,
                reason: format!(
                    "{} {} is far from this unit's recent {} (median of the last {} readings {}, usual spread {}): \
                     a slipped decimal point or swapped digits?",
                    capital(f.label()),
                    show(f, shown, sys),
                    f.label(),
                    self.accepted[i].len().min(WINDOW),
                    show(f, from_hist(f, m), sys),
                    spread_text(f, s, sys),
                ),
            });
        }
        // Physical frame.
        if let (Some(p), Some(r)) = (
            check_value(c, Field::Pressure),
            unit.relief.map(|r| r.si()).filter(|r| *r > 0.0),
        ) {
            if p > r * (1.0 + OVER_RELIEF) && !history_hit[idx(Field::Pressure)] {
                out.push(Suspicion {
                    field: Field::Pressure,
                    reason: format!(
                        "Working pressure {} is above the relief setting {}: the circuit cannot hold it",
                        pressure(p, sys),
                        pressure(r, sys)
                    ),
                });
            }
        }
        if let (Some(oil), Some(air)) = (
            check_value(c, Field::ReservoirTemp),
            check_value(c, Field::AmbientTemp),
        ) {
            if air > oil + AMBIENT_OVER_OIL_K {
                let reason = format!(
                    "Ambient {} is above the oil at {}: a running unit's oil is warmer than the air around it",
                    temp(air, sys),
                    temp(oil, sys)
                );
                // Blame the one that is also out of its history; where neither or both are,
                // both are in doubt.
                let oil_hit = history_hit[idx(Field::ReservoirTemp)];
                let air_hit = history_hit[idx(Field::AmbientTemp)];
                if !oil_hit && !air_hit {
                    for f in [Field::ReservoirTemp, Field::AmbientTemp] {
                        out.push(Suspicion {
                            field: f,
                            reason: reason.clone(),
                        });
                    }
                }
            }
        }
        if let Some(t) = check_value(c, Field::StrokeTime) {
            let acc = &self.accepted[idx(Field::StrokeTime)];
            if !history_hit[idx(Field::StrokeTime)] && !acc.is_empty() {
                let last = &acc[acc.len().saturating_sub(WINDOW)..];
                // The history holds logarithms of the stroke times.
                if let Some(m) = stats::median(last).map(f64::exp) {
                    if t > STROKE_FACTOR * m || t * STROKE_FACTOR < m {
                        out.push(Suspicion {
                            field: Field::StrokeTime,
                            reason: format!(
                                "Timed stroke {} is {} the usual {}: a different stroke, or a slip?",
                                seconds(t),
                                if t > m {
                                    "several times"
                                } else {
                                    "a fraction of"
                                },
                                seconds(m)
                            ),
                        });
                    }
                }
            }
        }
        if let (Some(q), Some(r)) = (
            check_value(c, Field::CaseDrain),
            unit.rated_flow.map(|r| r.si()).filter(|r| *r > 0.0),
        ) {
            if q > r && !history_hit[idx(Field::CaseDrain)] {
                out.push(Suspicion {
                    field: Field::CaseDrain,
                    reason: format!(
                        "Case-drain flow {} is more than the pump's rated flow {}",
                        flow(q, sys),
                        flow(r, sys)
                    ),
                });
            }
        }
        out
    }

    /// Takes a check's accepted fields into the history. `suspect` are the fields left out.
    fn accept(&mut self, c: &Check, suspect: &[Field]) {
        for &f in &HISTORY_FIELDS {
            let i = idx(f);
            if suspect.contains(&f) {
                self.leaning[i] = None;
                continue;
            }
            let Some(x) = hist_value(c, f) else { continue };
            let hist = recent(f, &self.accepted[i]);
            self.stepped[i] = outside(x, hist);
            self.leaning[i] = hist
                .filter(|(m, s)| (x - m).abs() > RUN_SIGMAS * s)
                .map(|(m, _)| (x - m).signum());
            self.accepted[i].push(x);
        }
    }
}

fn capital(s: &str) -> String {
    let mut c = s.chars();
    match c.next() {
        Some(f) => f.to_uppercase().collect::<String>() + c.as_str(),
        None => String::new(),
    }
}

fn spread_text(f: Field, s: f64, sys: UnitSystem) -> String {
    if on_log(f) {
        format!("±{:.0} %", (s.exp() - 1.0) * 100.0)
    } else {
        super::text::tdiff(s, sys)
    }
}

/// The suspicions of a sample against the physical frame of its fluid.
pub fn sample(fluid: Option<&Fluid>, s: &Sample, sys: UnitSystem) -> Vec<Suspicion> {
    let mut out = Vec::new();
    let new = fluid
        .and_then(|f| f.kv40_new)
        .map(|v| v.si())
        .filter(|v| *v > 0.0);
    let far = |k: f64| new.is_some_and(|n| (k / n - 1.0).abs() > KV40_FAR);
    if let Some(k) = s.kv40.map(|v| v.si()).filter(|k| far(*k)) {
        out.push(Suspicion {
            field: Field::Kv40,
            reason: format!(
                "KV40 {} is far from the new oil's {}: the right unit, the right oil?",
                visc(k, sys),
                visc(new.unwrap_or(0.0), sys)
            ),
        });
    }
    if s.kv40.is_none() {
        let w = fluid.and_then(|f| Walther::from_kv40_kv100(f.kv40_new?, f.kv100_new?).ok());
        if let (Some(r), Some(w)) = (s.visc_reading, w) {
            if let Some(k) = w.kv40_from_reading(r.visc, r.at).ok().map(|v| v.si()) {
                if far(k) {
                    out.push(Suspicion {
                        field: Field::ViscReading,
                        reason: format!(
                            "The field reading {} at {} gives a KV40 of {}, far from the new oil's {}: the right \
                             temperature, the right oil?",
                            visc(r.visc.si(), sys),
                            temp(r.at.si(), sys),
                            visc(k, sys),
                            visc(new.unwrap_or(0.0), sys)
                        ),
                    });
                }
            }
        }
    }
    if let Some(w) = s.water_ppm.filter(|w| *w > WATER_MAX_PPM) {
        out.push(Suspicion {
            field: Field::Water,
            reason: format!(
                "{} ppm is more than 1 % water: free water, or a figure not in ppm?",
                w
            ),
        });
    }
    if let Some(a) = s.acid_mgkoh_g.filter(|a| *a > ACID_MAX) {
        out.push(Suspicion {
            field: Field::Acid,
            reason: format!(
                "An acid number of {a} mg KOH/g is rare in hydraulic oil (above {ACID_MAX}): is it right?"
            ),
        });
    }
    out
}

/// Which kind of record a suspect reading is in.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Record {
    Check,
    Sample,
}

/// How a suspicion was lifted.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum ConfirmedBy {
    /// A person confirmed the reading (at entry, or later on the unit page).
    Person { by: String, at: DateTime<Utc> },
    /// The next reading of the same field agreed with it (or broke the same frame).
    NextReading { at: DateTime<Utc> },
}

/// One questioned reading of a unit, with whether it has been confirmed since.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct SuspectReading {
    pub record: Record,
    pub id: Id,
    pub at: DateTime<Utc>,
    pub field: Field,
    pub reason: String,
    /// `None` while it is not confirmed: then it feeds no baseline, detector or flag.
    pub confirmed: Option<ConfirmedBy>,
}

struct Pending {
    /// Index into the output list.
    at: usize,
    field: Field,
    value: f64,
    /// Side of the history it fell on (0 for a frame suspicion).
    side: f64,
    /// The robust σ of the history it was judged against.
    sigma: f64,
}

/// A person's confirmation of a check, where the record carries one.
fn confirmed_check(c: &Check) -> Option<ConfirmedBy> {
    c.confirmed.as_ref().map(|k| ConfirmedBy::Person {
        by: k.by.clone(),
        at: k.at,
    })
}

fn confirmed_sample(s: &Sample) -> Option<ConfirmedBy> {
    s.confirmed.as_ref().map(|k| ConfirmedBy::Person {
        by: k.by.clone(),
        at: k.at,
    })
}

/// Every suspicion raised on a unit's checks and samples (time order), with its confirmation
/// as far as the records go.
pub fn screen_history(
    h: &UnitHistory,
    fluid: Option<&Fluid>,
    sys: UnitSystem,
) -> Vec<SuspectReading> {
    let (mut out, _) = screen_checks(&h.unit, &h.checks, &h.events, sys);
    screen_samples(&mut out, fluid, &h.samples, sys);
    out
}

/// The suspicions of a new check `c` of `unit`, against the unit's stored checks `earlier`
/// and maintenance `events` (those at or after `c` are ignored): what the engine will question,
/// for a form that has the records at hand rather than a whole [`UnitHistory`].
pub fn check(
    unit: &Unit,
    earlier: &[Check],
    events: &[Event],
    c: &Check,
    sys: UnitSystem,
) -> Vec<Suspicion> {
    screen_new(unit, earlier, events, c, sys)
}

/// The suspicions of a new check `c` against the unit's stored history (its checks and
/// maintenance events; those at or after `c` are ignored): exactly what the engine will
/// question. What the entry forms and the importer ask.
pub fn check_in(h: &UnitHistory, c: &Check, sys: UnitSystem) -> Vec<Suspicion> {
    screen_new(&h.unit, &h.checks, &h.events, c, sys)
}

fn screen_new(
    unit: &Unit,
    earlier: &[Check],
    events: &[Event],
    c: &Check,
    sys: UnitSystem,
) -> Vec<Suspicion> {
    let mut before: Vec<Check> = earlier
        .iter()
        .filter(|e| e.taken_at < c.taken_at)
        .cloned()
        .collect();
    before.sort_by_key(|e| (e.taken_at, e.id));
    let (_, mut st) = screen_checks(unit, &before, events, sys);
    let last = before.last().map(|b| b.taken_at);
    if maintained_between(events, last, c.taken_at) {
        st = CheckScreen::default();
    }
    st.screen(unit, c, sys)
}

/// Whether work that changes how a unit runs (a fluid change, rebuild, repair or cooler
/// clean) was done after `from` (or at all, with no `from`) and up to `to`: the readings after
/// it are judged against a fresh history, since they may rightly differ from those before.
fn maintained_between(events: &[Event], from: Option<DateTime<Utc>>, to: DateTime<Utc>) -> bool {
    events.iter().any(|e| {
        matches!(
            e.kind,
            EventKind::FluidChange
                | EventKind::Rebuild
                | EventKind::Repair
                | EventKind::CoolerClean
        ) && from.is_some_and(|f| e.done_at > f)
            && e.done_at <= to
    })
}

/// Screens a unit's checks in time order, each against the history accepted before it.
fn screen_checks(
    unit: &Unit,
    checks: &[Check],
    events: &[Event],
    sys: UnitSystem,
) -> (Vec<SuspectReading>, CheckScreen) {
    let mut out: Vec<SuspectReading> = Vec::new();
    let mut st = CheckScreen::default();
    // The last unconfirmed suspicion per field, waiting for the next reading of that field.
    let mut waiting: Vec<Pending> = Vec::new();
    let mut prev: Option<DateTime<Utc>> = None;
    for c in checks {
        if maintained_between(events, prev, c.taken_at) {
            st = CheckScreen::default();
        }
        prev = Some(c.taken_at);
        let found = st.screen(unit, c, sys);
        let person = confirmed_check(c);
        // The next reading of a waiting field: does it confirm it?
        let mut agrees: Vec<Field> = Vec::new();
        waiting.retain(|w| {
            let Some(x) = hist_value(c, w.field) else {
                return true; // not read this time: still waiting
            };
            let again = found.iter().any(|s| s.field == w.field);
            let i = idx(w.field);
            let hist = recent(w.field, &st.accepted[i]);
            let side = outside(x, hist).unwrap_or(0.0);
            let close = (x - w.value).abs() <= SIGMAS * w.sigma.max(floor(w.field));
            let confirms = again && side == w.side && (w.side == 0.0 || close);
            if confirms {
                out[w.at].confirmed = Some(ConfirmedBy::NextReading { at: c.taken_at });
                agrees.push(w.field);
            }
            false
        });
        // A waiting reading now confirmed joins the history before this one is taken in.
        for f in &agrees {
            if let Some(r) = out
                .iter()
                .rev()
                .find(|r| r.record == Record::Check && r.field == *f && r.confirmed.is_some())
            {
                if let Some(prev) = checks.iter().find(|k| k.id == r.id) {
                    if let Some(v) = hist_value(prev, *f) {
                        let i = idx(*f);
                        let hist = recent(*f, &st.accepted[i]);
                        st.stepped[i] = outside(v, hist);
                        st.accepted[i].push(v);
                    }
                }
            }
        }
        let mut held: Vec<Field> = Vec::new();
        for s in found {
            let x = hist_value(c, s.field).unwrap_or(f64::NAN);
            let i = idx(s.field);
            let hist = recent(s.field, &st.accepted[i]);
            // This reading agrees with the one before it, just confirmed: confirmed as well.
            let confirmed = if agrees.contains(&s.field) {
                Some(ConfirmedBy::NextReading { at: c.taken_at })
            } else {
                person.clone()
            };
            if confirmed.is_none() && !held.contains(&s.field) {
                held.push(s.field);
                waiting.push(Pending {
                    at: out.len(),
                    field: s.field,
                    value: x,
                    side: outside(x, hist).unwrap_or(0.0),
                    sigma: hist.map(|h| h.1).unwrap_or(0.0),
                });
            }
            out.push(SuspectReading {
                record: Record::Check,
                id: c.id,
                at: c.taken_at,
                field: s.field,
                reason: s.reason,
                confirmed,
            });
        }
        st.accept(c, &held);
    }
    (out, st)
}

/// Screens samples against the frame of the fluid; a suspicion repeated by the next sample is
/// confirmed by it.
fn screen_samples(
    out: &mut Vec<SuspectReading>,
    fluid: Option<&Fluid>,
    samples: &[Sample],
    sys: UnitSystem,
) {
    let mut last: Vec<(Field, usize)> = Vec::new();
    for s in samples {
        let found = sample(fluid, s, sys);
        let person = confirmed_sample(s);
        let repeated: Vec<Field> = found.iter().map(|f| f.field).collect();
        for (f, i) in last.drain(..) {
            if repeated.contains(&f) && out[i].confirmed.is_none() {
                out[i].confirmed = Some(ConfirmedBy::NextReading { at: s.sampled_at });
            }
        }
        for f in found {
            if person.is_none() {
                last.push((f.field, out.len()));
            }
            out.push(SuspectReading {
                record: Record::Sample,
                id: s.id,
                at: s.sampled_at,
                field: f.field,
                reason: f.reason,
                confirmed: person.clone(),
            });
        }
    }
}

/// The history with every unconfirmed suspect field taken out (set to nothing), as the
/// baselines, detectors and flags are to see it.
pub fn without_unconfirmed(h: &UnitHistory, suspects: &[SuspectReading]) -> UnitHistory {
    let mut out = h.clone();
    for s in suspects.iter().filter(|s| s.confirmed.is_none()) {
        match s.record {
            Record::Check => {
                if let Some(c) = out.checks.iter_mut().find(|c| c.id == s.id) {
                    match s.field {
                        Field::ReservoirTemp => c.reservoir_temp = None,
                        Field::AmbientTemp => c.ambient_temp = None,
                        Field::Pressure => c.pressure = None,
                        Field::StrokeTime => c.stroke_time = None,
                        Field::CaseDrain => c.case_drain = None,
                        _ => {}
                    }
                }
            }
            Record::Sample => {
                if let Some(x) = out.samples.iter_mut().find(|x| x.id == s.id) {
                    match s.field {
                        Field::Kv40 => x.kv40 = None,
                        Field::ViscReading => x.visc_reading = None,
                        Field::Water => x.water_ppm = None,
                        Field::Acid => x.acid_mgkoh_g = None,
                        _ => {}
                    }
                }
            }
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::health::testutil::{fluid, press, timed};
    use crate::units::{Pressure, Seconds, Temperature, Viscosity};

    /// Eight ordinary weeks: 4.0 s ± 0.05, oil 45 °C, ambient 20 °C, 90 bar (relief 100 bar).
    fn steady_weeks() -> UnitHistory {
        let mut h = press();
        for w in 0..8 {
            let mut c = timed(w + 1, w, 4.0 + 0.05 * ((w % 3) as f64 - 1.0), 45.0, 20.0);
            c.pressure = Some(Pressure::from_bar(90.0));
            h.checks.push(c);
        }
        h
    }

    fn fields(s: &[SuspectReading], id: Id) -> Vec<(Field, bool)> {
        s.iter()
            .filter(|r| r.id == id)
            .map(|r| (r.field, r.confirmed.is_some()))
            .collect()
    }

    #[test]
    fn a_slipped_decimal_is_questioned_and_stays_so_when_the_next_check_is_normal() {
        let mut h = steady_weeks();
        // 45.0 °C typed as 4.50 °C: 40.5 K below a median of 45 °C whose spread is floored at
        // 1 K (5 K is the limit of the rule).
        h.checks.push(timed(9, 8, 4.0, 4.5, 20.0));
        h.checks.push(timed(10, 9, 4.0, 45.0, 20.0));
        let s = screen_history(&h, None, UnitSystem::Metric);
        // Only the oil is blamed (it is also out of its history), and nothing confirms it.
        assert_eq!(fields(&s, 9), vec![(Field::ReservoirTemp, false)]);
        assert!(fields(&s, 10).is_empty());
        assert!(s[0].reason.contains("far from"), "{}", s[0].reason);
        // The masked history has no oil temperature on that check, the rest untouched.
        let m = without_unconfirmed(&h, &s);
        assert_eq!(m.checks[8].reservoir_temp, None);
        assert_eq!(m.checks[8].stroke_time, Some(Seconds(4.0)));
        assert_eq!(m.checks[9].reservoir_temp, h.checks[9].reservoir_temp);
    }

    #[test]
    fn a_step_is_confirmed_by_the_next_check_and_the_new_level_is_then_accepted() {
        // A relief valve starts to bypass: 4.0 s → 5.0 s and stays there. The first slow check
        // is questioned (1 s off a 4 s median, the spread floored at 3 % = 0.12 s: limit
        // 0.6 s), the second agrees with it and confirms both, the third needs nothing.
        let mut h = steady_weeks();
        for (i, t) in [5.0, 5.05, 4.98].iter().enumerate() {
            let mut c = timed(9 + i as Id, 8 + i as i64, *t, 45.0, 20.0);
            c.pressure = Some(Pressure::from_bar(90.0));
            h.checks.push(c);
        }
        let at_onset = {
            let mut k = h.clone();
            k.checks.truncate(9);
            screen_history(&k, None, UnitSystem::Metric)
        };
        assert_eq!(fields(&at_onset, 9), vec![(Field::StrokeTime, false)]);
        let s = screen_history(&h, None, UnitSystem::Metric);
        assert_eq!(fields(&s, 9), vec![(Field::StrokeTime, true)]);
        assert_eq!(fields(&s, 10), vec![(Field::StrokeTime, true)]);
        assert!(fields(&s, 11).is_empty(), "{s:?}");
        assert!(matches!(
            s[0].confirmed,
            Some(ConfirmedBy::NextReading { at }) if at == h.checks[9].taken_at
        ));
        assert!(without_unconfirmed(&h, &s) == h);
    }

    #[test]
    fn the_second_of_a_run_on_one_side_is_not_a_slip() {
        // The stroke history: 4.0 s with its spread floored at 0.04 in ln (Hampel's limit
        // 5 · 0.04 = 0.2, run limit 2 · 0.04 = 0.08). 4.4 s is ln 1.1 = 0.095 above: accepted,
        // beyond 2σ. 5.0 s next is ln 1.25 = 0.223 above, beyond 5σ — but the second of two
        // on the slow side (the Western Electric zone rule), so not questioned (by hand).
        let mut h = steady_weeks();
        for (i, t) in [4.4, 5.0].iter().enumerate() {
            let mut c = timed(9 + i as Id, 8 + i as i64, *t, 45.0, 20.0);
            c.pressure = Some(Pressure::from_bar(90.0));
            h.checks.push(c);
        }
        let s = screen_history(&h, None, UnitSystem::Metric);
        assert!(s.is_empty(), "{s:?}");
        // A gross slip after the same lead-in is still questioned: 6.0 s is ln 1.5 = 0.405
        // above, beyond 1.5 times Hampel's limit (0.3).
        h.checks[9].stroke_time = Some(Seconds(6.0));
        let s = screen_history(&h, None, UnitSystem::Metric);
        assert_eq!(fields(&s, 10), vec![(Field::StrokeTime, false)]);
        // Without the lead-in (4.0 s before it), 5.0 s is questioned.
        h.checks[8].stroke_time = Some(Seconds(4.0));
        h.checks[9].stroke_time = Some(Seconds(5.0));
        let s = screen_history(&h, None, UnitSystem::Metric);
        assert_eq!(fields(&s, 10), vec![(Field::StrokeTime, false)]);
    }

    #[test]
    fn the_physical_frame_is_checked_from_the_first_reading() {
        let mut h = press();
        // 1000 bar on a unit relieved at 100 bar; ambient 94 °C beside oil at 26 °C.
        let mut c = timed(1, 0, 4.0, 26.0, 94.0);
        c.pressure = Some(Pressure::from_bar(1000.0));
        h.checks.push(c);
        let s = screen_history(&h, None, UnitSystem::Metric);
        let f = fields(&s, 1);
        assert!(f.contains(&(Field::Pressure, false)), "{f:?}");
        assert!(f.contains(&(Field::AmbientTemp, false)), "{f:?}");
        assert!(f.contains(&(Field::ReservoirTemp, false)), "{f:?}");
        // 110 bar is within the gauge margin of a 100 bar relief (10 %); 110.1 bar is not.
        for (bar, suspect) in [(110.0, false), (110.1, true)] {
            let mut c = timed(2, 1, 4.0, 45.0, 20.0);
            c.pressure = Some(Pressure::from_bar(bar));
            let got = check(&h.unit, &[], &[], &c, UnitSystem::Metric);
            assert_eq!(
                got.iter().any(|s| s.field == Field::Pressure),
                suspect,
                "{bar}"
            );
        }
        // A stroke three times the usual, with only two checks before it.
        let earlier = vec![timed(1, 0, 4.0, 45.0, 20.0), timed(2, 1, 4.1, 45.0, 20.0)];
        let slow = timed(3, 2, 12.2, 45.0, 20.0);
        let got = check(&h.unit, &earlier, &[], &slow, UnitSystem::Metric);
        assert_eq!(got.len(), 1);
        assert_eq!(got[0].field, Field::StrokeTime);
        let ok = timed(3, 2, 11.9, 45.0, 20.0);
        let got = check(&h.unit, &earlier, &[], &ok, UnitSystem::Metric);
        assert!(got.is_empty(), "{got:?}");
    }

    #[test]
    fn a_person_confirms_a_questioned_reading_and_it_counts() {
        let mut h = steady_weeks();
        let mut c = timed(9, 8, 4.0, 4.5, 20.0);
        c.confirmed = Some(crate::model::Confirmation {
            by: "T. Tech".into(),
            at: crate::health::testutil::t("2024-03-01"),
        });
        h.checks.push(c);
        let s = screen_history(&h, None, UnitSystem::Metric);
        assert!(matches!(
            &s[0].confirmed,
            Some(ConfirmedBy::Person { by, .. }) if by == "T. Tech"
        ));
        assert_eq!(without_unconfirmed(&h, &s), h);
    }

    #[test]
    fn a_frame_break_repeated_at_the_next_check_is_confirmed() {
        // A unit standing idle in a warm hall: the oil at or below the air two weeks running.
        let mut h = steady_weeks();
        h.checks.push(timed(9, 8, 4.0, 44.0, 48.0));
        h.checks.push(timed(10, 9, 4.0, 44.5, 48.5));
        let s = screen_history(&h, None, UnitSystem::Metric);
        assert!(fields(&s, 9).iter().all(|f| f.1), "{s:?}");
        assert!(fields(&s, 10).iter().all(|f| f.1), "{s:?}");
    }

    #[test]
    fn samples_far_from_the_fluid_are_questioned() {
        let f = fluid(1);
        let mut s = crate::health::testutil::sample(1, crate::health::testutil::t("2024-03-01"));
        // 46 cSt new; 50 % off either way is the rule.
        for (kv, suspect) in [(23.5, false), (22.9, true), (68.9, false), (69.1, true)] {
            s.kv40 = Some(Viscosity::from_cst(kv));
            let got = sample_rule(&f, &s);
            assert_eq!(got.contains(&Field::Kv40), suspect, "{kv}");
        }
        s.kv40 = None;
        s.water_ppm = Some(12_000.0);
        s.acid_mgkoh_g = Some(6.0);
        assert_eq!(sample_rule(&f, &s), vec![Field::Water, Field::Acid]);
        // A field reading of 4.6 cSt at 40 °C is a KV40 of 4.6 cSt: far.
        s.water_ppm = None;
        s.acid_mgkoh_g = None;
        s.visc_reading = Some(crate::model::ViscReading {
            visc: Viscosity::from_cst(4.6),
            at: Temperature::from_c(40.0),
        });
        assert_eq!(sample_rule(&f, &s), vec![Field::ViscReading]);
    }

    fn sample_rule(f: &Fluid, s: &Sample) -> Vec<Field> {
        super::sample(Some(f), s, UnitSystem::Metric)
            .into_iter()
            .map(|x| x.field)
            .collect()
    }
}
