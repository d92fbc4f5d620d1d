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

mod rules;
mod samples;
pub mod slips;

use rules::*;
pub use samples::sample;
use samples::*;
#[cfg(test)]
mod tests;

/// How many earlier accepted readings of a field form its recent history.
pub const WINDOW: usize = 8;
/// Fewer accepted earlier readings than this and the history rule is not applied (the frame
/// rules still are): a robust spread of fewer points says little.
pub const MIN_HISTORY: usize = 3;
/// The acid numbers' history rule needs fewer: their spread is the floor `FLOOR_ACID_LN` at so
/// few samples whatever they show, so two earlier samples give the median it is held against
/// (a sample a month or a quarter: waiting for a third lets the era's third sample through
/// unscreened).
pub const MIN_ACID_HISTORY: usize = 2;
/// The slip-shape rule (`SHAPE_SIGMAS`) needs only one earlier sample of the era: undoing the
/// slip must land on that one, with its spread at the rule's floor, and the era's second
/// sample is then screened too (an acid number of 5.0 for 0.50 after one of 0.47).
pub const MIN_SHAPE_HISTORY: usize = 1;
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
/// The robust σ of the acid numbers' history is never taken below this floor, on the
/// logarithm (a slipped decimal point is a factor of ten, ln 10 = 2.3): with `SIGMAS` = 5 an
/// acid number more than about 2.7 times (or under a 2.7th of) the era's recent samples is
/// questioned — further than a lab's scatter and a sample interval's oxidation take it, short
/// of a slip.
pub const FLOOR_ACID_LN: f64 = 0.2;
/// A reading shaped like a typing slip (`slips`: two figures swapped, the decimal point one
/// place off) is questioned nearer its history than `SIGMAS`: beyond this many robust σ of it
/// (Hampel's usual limit of 3, the papers above), where undoing the slip lands within
/// `RUN_SIGMAS` of the median. A real change of that size would have to fall, by chance, on
/// the swapped digits of an ordinary reading. Applied to the acid number, which moves slowly
/// between samples, and to water. A real ingress can read like that too (410 ppm over a usual
/// 140), so a questioned water content is not hidden: its flag shows at watch, and reaches act
/// only once a resample or a person confirms it (`flags`). Either field's reading right after
/// an accepted one already beyond `RUN_SIGMAS` on the same side is a run, not a slip, and is
/// not questioned for its shape.
pub const SHAPE_SIGMAS: f64 = 3.0;
/// The acid numbers' robust σ for the slip-shape rule is floored here, half of
/// `FLOOR_ACID_LN`: the floor there sets how far a lone reading may go before it is questioned
/// at all; here undoing the slip must also land close to the usual reading (common practice,
/// no published source).
pub const FLOOR_ACID_SHAPE_LN: f64 = 0.1;
/// The water contents' robust σ for the slip-shape rule, on the logarithm, is floored here: a
/// lab's repeated Karl Fischer results on one oil scatter by several per cent, and the water
/// of a sound unit moves a little more with the season and its breather (from memory). With
/// `RUN_SIGMAS` undoing the slip must land within 1.22 times the recent ones' median.
pub const FLOOR_WATER_SHAPE_LN: f64 = 0.1;
/// The particle counts' robust σ for the slip-shape rule, on the logarithm, is floored here:
/// undoing the slip must land within 1.5 times the recent median. A count is questioned for
/// its shape only at least `COUNT_SHAPE_FACTOR` times (or under that many-th of) its recent
/// median, two ISO 4406 range numbers, the act limit over target: a lab's or a bench
/// counter's counts of one oil scatter by up to a range number between samples (from memory),
/// and a smaller slip seldom moves the verdict. And only while the sample's other two sizes
/// stay within that of theirs: dirt that gets in brings every size with it, a mistyped figure
/// moves one (common practice, no published source).
pub const FLOOR_COUNT_SHAPE_LN: f64 = 0.2;
pub const COUNT_SHAPE_FACTOR: f64 = 4.0;
/// The usual shape of an oil's particle counts, as ISO 4406 range numbers between sizes: the
/// ≥6 µm(c) count 1 to 3 under the ≥4 µm(c) count, the ≥14 µm(c) count 2 to 4 under the ≥6 µm(c)
/// count (2 to 8, and 4 to 16, times fewer): the usual cleanliness codes read 17/15/12,
/// 18/16/13 and the like (common practice, no published source). An era's first sample, with
/// no earlier count to judge it by, whose counts fall off that shape is judged by its own
/// sizes: where undoing one typing slip in one count brings every gap into it (5.93 per mL at
/// 6 µm for 59.3, beside 157 and 4.5), that count is questioned. Coarse wear debris can bring
/// the 14 µm count near the 6 µm one for real; the next sample confirms it by reading the same
/// way, as for any frame break.
pub const COUNT_GAPS_USUAL: [(i32, i32); 2] = [(1, 3), (2, 4)];
/// A water content is questioned for its shape only at least this many times (or under this
/// many-th of) its recent median: a sound unit's water wanders by half as much again between
/// samples with the season and its breather, and a smaller slip leaves it on the same side of
/// the 200 and 500 ppm limits over the usual 50 to 200 ppm (common practice, no published
/// source). 170 typed as 710 is 4.2 times; 91 typed as 9.1 a tenth.
pub const WATER_SHAPE_FACTOR: f64 = 2.0;
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
/// A sample's KV40 and KV100 giving a viscosity index further than this from the new oil's
/// are not one oil's pair: a lab's scatter of about 1 % on each moves the index by a few
/// points, an oil's ageing and an ordinary top-up by little more, and shear of a
/// viscosity-index improver by up to about 20 (from memory); a KV40 with two figures swapped
/// beside its true KV100 by 25 to 40 or more (common practice, no published source, for the
/// 25: the shear's 20 and a lab's scatter).
pub const VI_FAR: f64 = 25.0;
/// …and undoing one slip in the KV40 must bring the index within this of the new oil's,
/// twice a lab's scatter (from memory): then the KV40 is the figure in doubt.
pub const VI_NEAR: f64 = 15.0;
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
    /// The particle counts per mL at ≥4, ≥6 and ≥14 µm(c).
    #[serde(rename = "count_4")]
    Count4,
    #[serde(rename = "count_6")]
    Count6,
    #[serde(rename = "count_14")]
    Count14,
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
            Field::Count4 => "count_4",
            Field::Count6 => "count_6",
            Field::Count14 => "count_14",
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
            Field::Count4 => "particle count ≥4 µm(c)",
            Field::Count6 => "particle count ≥6 µm(c)",
            Field::Count14 => "particle count ≥14 µm(c)",
        }
    }
}

/// One reason to question one field.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Suspicion {
    pub field: Field,
    pub reason: String,
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
    /// Questioned for its slip shape (`SHAPE_SIGMAS`) rather than as beyond `SIGMAS`.
    shape: bool,
    /// A next reading that agreed with it but itself looked like a slipped decimal point has
    /// been counted: one more agreeing reading confirms the run.
    deferred: bool,
}

impl Pending {
    /// Whether the next reading `x` of the field (`again`: questioned itself) confirms this
    /// one against the history `hist` it is now judged on: a frame break repeated, or a
    /// reading out of the same history on the same side and within `SIGMAS` of this one (σ
    /// at least `floor`) or further out still — a real change, not a slip.
    fn confirmed_by(&self, x: f64, again: bool, hist: Option<(f64, f64)>, floor: f64) -> bool {
        let side = outside(x, hist).unwrap_or(0.0);
        let close = (x - self.value).abs() <= SIGMAS * self.sigma.max(floor);
        // Or further out still on the same side: a cooler that fails, or a relief valve that
        // passes more each week, takes the oil from 88 °C to 139 °C, a leap no slip repeats.
        let further = (x - self.value) * self.side >= 0.0;
        again && side == self.side && (self.side == 0.0 || close || further)
    }

    /// Whether the next check's reading `x`, not questioned itself, still leans the same way:
    /// beyond `RUN_SIGMAS` of the history on this one's side and within `SIGMAS` of it. Two
    /// readings in a row beyond two σ on one side are a run (the Western Electric zone rule
    /// the screen already takes a run's second reading by): a relief valve that starts to pass
    /// oil slows the stroke a lot one week and a little less the next, on a colder oil.
    fn leaned_on_by(&self, x: f64, hist: Option<(f64, f64)>, floor: f64) -> bool {
        let Some((m, s)) = hist else { return false };
        let close = (x - self.value).abs() <= SIGMAS * self.sigma.max(floor);
        !self.shape && self.side != 0.0 && (x - m) * self.side > RUN_SIGMAS * s && close
    }
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
    screen_samples(&mut out, fluid, &h.samples, &h.events, sys);
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
        let mut confirmed_now: Vec<usize> = Vec::new();
        let mut deferred: Vec<Field> = Vec::new();
        waiting.retain_mut(|w| {
            let Some(x) = hist_value(c, w.field) else {
                return true; // not read this time: still waiting
            };
            let again = found.iter().any(|s| s.field == w.field);
            let hist = recent(w.field, &st.accepted[idx(w.field)]);
            let leaned = !again && w.leaned_on_by(x, hist, floor(w.field));
            if !leaned && !w.confirmed_by(x, again, hist, floor(w.field)) {
                return false;
            }
            // A reading that itself looks like a slipped decimal point confirms nothing on
            // its own: two such slips in a row agree with each other as a real step does.
            // A third agreeing reading confirms the run.
            if again && !w.deferred && decimal_shaped(w.field, x, hist) {
                w.deferred = true;
                deferred.push(w.field);
                return true;
            }
            out[w.at].confirmed = Some(ConfirmedBy::NextReading { at: c.taken_at });
            confirmed_now.push(w.at);
            if !agrees.contains(&w.field) {
                agrees.push(w.field);
            }
            false
        });
        // A waiting reading now confirmed joins the history before this one is taken in.
        confirmed_now.sort_unstable();
        for at in confirmed_now {
            let (f, id) = (out[at].field, out[at].id);
            if let Some(v) = checks
                .iter()
                .find(|k| k.id == id)
                .and_then(|k| hist_value(k, f))
            {
                let i = idx(f);
                let hist = recent(f, &st.accepted[i]);
                st.stepped[i] = outside(v, hist);
                st.accepted[i].push(v);
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
                    shape: false,
                    deferred: deferred.contains(&s.field),
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

/// The suspicions of a new sample `s` against the frame of the unit's fluid and the unit's
/// stored samples before it (since its last fluid change): exactly what the engine will
/// question. What the sample form asks.
pub fn sample_in(h: &UnitHistory, s: &Sample, sys: UnitSystem) -> Vec<Suspicion> {
    let mut before: Vec<Sample> = h
        .samples
        .iter()
        .filter(|x| x.sampled_at < s.sampled_at)
        .cloned()
        .collect();
    before.sort_by_key(|x| (x.sampled_at, x.id));
    let mut out = Vec::new();
    let mut st = screen_samples(&mut out, h.fluid.as_ref(), &before, &h.events, sys);
    if fluid_changed_between(&h.events, before.last().map(|x| x.sampled_at), s.sampled_at) {
        st = SampleScreen::default();
    }
    st.screen(h.fluid.as_ref(), s, sys)
}

/// Whether the fluid was changed after `from` and up to `to`: the samples after it are of
/// another oil and are judged against a fresh history.
fn fluid_changed_between(events: &[Event], from: Option<DateTime<Utc>>, to: DateTime<Utc>) -> bool {
    events.iter().any(|e| {
        e.kind == EventKind::FluidChange && from.is_some_and(|f| e.done_at > f) && e.done_at <= to
    })
}

/// Screens samples in time order against the frame of the fluid and, for the acid number,
/// the era's accepted samples before them. A frame suspicion repeated by the next
/// sample is confirmed by it; a history suspicion is confirmed by a next sample that is out
/// of the same history on the same side and close to it (a real change), as for checks.
fn screen_samples(
    out: &mut Vec<SuspectReading>,
    fluid: Option<&Fluid>,
    samples: &[Sample],
    events: &[Event],
    sys: UnitSystem,
) -> SampleScreen {
    let mut st = SampleScreen::default();
    let mut waiting: Vec<Pending> = Vec::new();
    let mut prev: Option<DateTime<Utc>> = None;
    for s in samples {
        if fluid_changed_between(events, prev, s.sampled_at) {
            st = SampleScreen::default();
            waiting.clear();
        }
        prev = Some(s.sampled_at);
        let found = st.screen(fluid, s, sys);
        let person = confirmed_sample(s);
        let mut agrees: Vec<(Field, f64)> = Vec::new();
        waiting.retain(|w| {
            let again = found.iter().any(|f| f.field == w.field);
            if w.side == 0.0 {
                // A frame break: confirmed when the next sample breaks it too.
                if again {
                    out[w.at].confirmed = Some(ConfirmedBy::NextReading { at: s.sampled_at });
                }
                return false;
            }
            let Some(x) = sample_hist_value(s, w.field) else {
                return true; // not measured this time: still waiting
            };
            if w.shape {
                // Questioned for its shape: a next sample beyond `SHAPE_SIGMAS` on the same
                // side and close to it shows the level has moved.
                let moved = st.recent_for_shape(w.field).is_some_and(|(m, sd)| {
                    (x - m) * w.side > 0.0 && shape_far(w.field, (x - m).abs(), sd)
                });
                // Water is confirmed by any such sample: an ingress may go on rising well
                // past the questioned figure by the next sample.
                let close = shape_only(w.field) || (x - w.value).abs() <= SIGMAS * w.sigma;
                if moved && close {
                    out[w.at].confirmed = Some(ConfirmedBy::NextReading { at: s.sampled_at });
                    agrees.push((w.field, w.value));
                }
                return false;
            }
            if w.confirmed_by(x, again, st.recent(w.field), 0.0) {
                out[w.at].confirmed = Some(ConfirmedBy::NextReading { at: s.sampled_at });
                agrees.push((w.field, w.value));
            }
            false
        });
        // A waiting reading now confirmed joins the history, and this one with it.
        for &(f, v) in &agrees {
            st.push(f, v);
        }
        let mut held: Vec<Field> = Vec::new();
        for f in found {
            let confirmed = if agrees.iter().any(|a| a.0 == f.field) {
                Some(ConfirmedBy::NextReading { at: s.sampled_at })
            } else {
                person.clone()
            };
            if confirmed.is_none() {
                held.push(f.field);
                let x = sample_hist_value(s, f.field);
                let mut hist = st.recent(f.field);
                let mut side = if shape_only(f.field) {
                    0.0
                } else {
                    x.and_then(|x| outside(x, hist)).unwrap_or(0.0)
                };
                let shape = side == 0.0 && x.is_some_and(|x| st.slip_shaped(f.field, x).is_some());
                if shape {
                    hist = st.recent_for_shape(f.field);
                    side = match (x, hist) {
                        (Some(x), Some((m, _))) => (x - m).signum(),
                        _ => 0.0,
                    };
                }
                waiting.push(Pending {
                    at: out.len(),
                    field: f.field,
                    value: x.unwrap_or(f64::NAN),
                    side,
                    sigma: hist.map(|h| h.1).unwrap_or(0.0),
                    shape,
                    deferred: false,
                });
            }
            out.push(SuspectReading {
                record: Record::Sample,
                id: s.id,
                at: s.sampled_at,
                field: f.field,
                reason: f.reason,
                confirmed,
            });
        }
        st.accept(s, &held);
    }
    st
}

/// A water content questioned for its shape (or its frame) and what became of it: while
/// unconfirmed the water flag shows it at watch at most; once a next sample has confirmed it,
/// its own level counts at that sample (the resample that confirms 680 ppm may itself read
/// 490, under the act limit, while the water has plainly risen).
#[derive(Clone, Debug, PartialEq)]
pub struct QuestionedWater {
    pub sample_id: Id,
    pub ppm: f64,
    /// When the next sample confirmed it; `None` while it is not confirmed.
    pub confirmed_at: Option<DateTime<Utc>>,
}

/// The water contents of `h` questioned and not confirmed by a person (who makes a reading
/// count as it stands, at its own date).
pub fn questioned_water(h: &UnitHistory, suspects: &[SuspectReading]) -> Vec<QuestionedWater> {
    suspects
        .iter()
        .filter(|s| s.record == Record::Sample && s.field == Field::Water)
        .filter_map(|s| {
            let confirmed_at = match &s.confirmed {
                None => None,
                Some(ConfirmedBy::NextReading { at }) => Some(*at),
                Some(ConfirmedBy::Person { .. }) => return None,
            };
            let x = h.samples.iter().find(|x| x.id == s.id)?;
            Some(QuestionedWater {
                sample_id: s.id,
                ppm: x.water_ppm?,
                confirmed_at,
            })
        })
        .collect()
}

/// A timed stroke questioned and not yet confirmed, slower than the unit's usual: the lost-flow
/// flag shows it at watch at most, at the flow it gives at the reference conditions (a relief
/// valve starting to pass oil slows the stroke in one step, and the check it shows in should
/// not read as steady while the next is awaited; a hot week's slower stroke, which the
/// correction explains, shows nothing).
#[derive(Clone, Debug, PartialEq)]
pub struct QuestionedStroke {
    pub check_id: Id,
    /// The stroke time as read, s.
    pub stroke_s: f64,
    /// The median of the up to `WINDOW` accepted stroke times before it, s.
    pub usual_s: f64,
    /// The check's oil temperature (K) and pressure (Pa) as read, held or not: a relief valve
    /// that starts to pass oil heats the oil as it slows the stroke, and the screen may hold
    /// both readings of that check; the stroke is still judged at the oil it was timed in.
    pub oil_temp: Option<f64>,
    pub pressure: Option<f64>,
}

/// The timed strokes of `h` questioned, not confirmed, and slower than the median of the
/// accepted ones before them.
pub fn questioned_strokes(h: &UnitHistory, suspects: &[SuspectReading]) -> Vec<QuestionedStroke> {
    let held = |id: Id| {
        suspects.iter().any(|s| {
            s.confirmed.is_none()
                && s.record == Record::Check
                && s.field == Field::StrokeTime
                && s.id == id
        })
    };
    let mut out = Vec::new();
    for (i, c) in h.checks.iter().enumerate() {
        let Some(t) = c.stroke_time.map(|t| t.si()).filter(|_| held(c.id)) else {
            continue;
        };
        let before: Vec<f64> = h.checks[..i]
            .iter()
            .rev()
            .filter(|b| !held(b.id))
            .filter_map(|b| b.stroke_time.map(|t| t.si()))
            .take(WINDOW)
            .collect();
        if let Some(usual) = stats::median(&before).filter(|u| t > *u) {
            out.push(QuestionedStroke {
                check_id: c.id,
                stroke_s: t,
                usual_s: usual,
                oil_temp: c.reservoir_temp.map(|v| v.si()),
                pressure: c.pressure.map(|v| v.si()).filter(|v| *v > 0.0),
            });
        }
    }
    out
}

/// One questioned oil temperature not yet confirmed, as read (`questioned_temps`).
#[derive(Clone, Debug, PartialEq)]
pub struct QuestionedTemp {
    pub check_id: Id,
    /// The reservoir temperature as read, K.
    pub temp_k: f64,
}

/// The reservoir temperatures of `h` questioned and not confirmed: hot oil burns and cooks,
/// and one that may be a slip is still shown (at watch at most) until the next check or a
/// person says.
pub fn questioned_temps(h: &UnitHistory, suspects: &[SuspectReading]) -> Vec<QuestionedTemp> {
    suspects
        .iter()
        .filter(|s| {
            s.confirmed.is_none() && s.record == Record::Check && s.field == Field::ReservoirTemp
        })
        .filter_map(|s| {
            let c = h.checks.iter().find(|c| c.id == s.id)?;
            Some(QuestionedTemp {
                check_id: c.id,
                temp_k: c.reservoir_temp?.si(),
            })
        })
        .collect()
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
                        Field::Count4 => x.counts_per_ml[0] = None,
                        Field::Count6 => x.counts_per_ml[1] = None,
                        Field::Count14 => x.counts_per_ml[2] = None,
                        _ => {}
                    }
                }
            }
        }
    }
    out
}
