//! The tests one reading is put to: the unit's physical frame and the field's own recent
//! history (Hampel's median ± robust σ), for checks and samples. It says why a reading looks
//! like a slip; it keeps no record of what was confirmed.

use super::*;
use crate::physics::viscosity::viscosity_index;

/// The fields of a check judged against their own history.
pub(super) const HISTORY_FIELDS: [Field; 5] = [
    Field::ReservoirTemp,
    Field::AmbientTemp,
    Field::Pressure,
    Field::StrokeTime,
    Field::CaseDrain,
];

pub(super) fn check_value(c: &Check, f: Field) -> Option<f64> {
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
pub(super) fn on_log(f: Field) -> bool {
    matches!(f, Field::Pressure | Field::StrokeTime | Field::CaseDrain)
}

/// A field's value as its history judges it: kelvin, or the logarithm of a positive value.
pub(super) fn hist_value(c: &Check, f: Field) -> Option<f64> {
    let x = check_value(c, f)?;
    if on_log(f) {
        (x > 0.0).then(|| x.ln())
    } else {
        Some(x)
    }
}

pub(super) fn from_hist(f: Field, h: f64) -> f64 {
    if on_log(f) {
        h.exp()
    } else {
        h
    }
}

pub(super) fn show(f: Field, si: f64, sys: UnitSystem) -> String {
    match f {
        Field::ReservoirTemp | Field::AmbientTemp => temp(si, sys),
        Field::Pressure => pressure(si, sys),
        Field::StrokeTime => seconds(si),
        Field::CaseDrain => flow(si, sys),
        _ => format!("{si}"),
    }
}

pub(super) fn floor(f: Field) -> f64 {
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
pub(super) fn recent(f: Field, accepted: &[f64]) -> Option<(f64, f64)> {
    if accepted.len() < MIN_HISTORY {
        return None;
    }
    let last = &accepted[accepted.len().saturating_sub(WINDOW)..];
    let (m, s) = stats::median_and_mad_sigma(last)?;
    Some((m, s.max(floor(f))))
}

/// Where a reading stands against its recent history: `Some(±1.0)` when it is beyond
/// `SIGMAS` robust σ above or below the median.
pub(super) fn outside(x: f64, hist: Option<(f64, f64)>) -> Option<f64> {
    let (m, s) = hist?;
    ((x - m).abs() > SIGMAS * s).then(|| (x - m).signum())
}

/// Whether a reading of a field judged on its logarithm (`hist_value`) looks like a slipped
/// decimal point against its history: a tenth or ten times it lies within `RUN_SIGMAS` of the
/// median. A factor of ten is the same slip in any unit, so no figure is written out here.
pub(super) fn decimal_shaped(f: Field, x: f64, hist: Option<(f64, f64)>) -> bool {
    let Some((m, s)) = hist else { return false };
    on_log(f)
        && [x - std::f64::consts::LN_10, x + std::f64::consts::LN_10]
            .iter()
            .any(|c| (c - m).abs() <= RUN_SIGMAS * s)
}

/// A reading as the person typed it: in the shop's units (°C or °F, bar or psi, L/min or
/// GPM, seconds), where a typing slip is made.
fn typed(f: Field, si: f64, sys: UnitSystem) -> Option<f64> {
    use crate::units::{Flow, Pressure, Temperature};
    let us = sys == UnitSystem::Us;
    Some(match f {
        Field::ReservoirTemp | Field::AmbientTemp if us => Temperature(si).f(),
        Field::ReservoirTemp | Field::AmbientTemp => Temperature(si).c(),
        Field::Pressure if us => Pressure(si).psi(),
        Field::Pressure => Pressure(si).bar(),
        Field::StrokeTime => si,
        Field::CaseDrain if us => Flow(si).gpm(),
        Field::CaseDrain => Flow(si).lpm(),
        _ => return None,
    })
}

/// The SI value of a figure typed in the shop's units (`typed` undone).
fn from_typed(f: Field, x: f64, sys: UnitSystem) -> f64 {
    use crate::units::{Flow, Pressure, Temperature};
    let us = sys == UnitSystem::Us;
    match f {
        Field::ReservoirTemp | Field::AmbientTemp if us => Temperature::from_f(x).si(),
        Field::ReservoirTemp | Field::AmbientTemp => Temperature::from_c(x).si(),
        Field::Pressure if us => Pressure::from_psi(x).si(),
        Field::Pressure => Pressure::from_bar(x).si(),
        Field::CaseDrain if us => Flow::from_gpm(x).si(),
        Field::CaseDrain => Flow::from_lpm(x).si(),
        _ => x,
    }
}

/// What is asked of a reading at one of a unit's first checks, before its history holds
/// `MIN_HISTORY` readings to judge it by: one further than `SIGMAS` floored σ from the median
/// of those before it and shaped like a typing slip of them (`slips`: undone, it lands within
/// `RUN_SIGMAS` floored σ of that median) — an oil at 92.9 °C typed for 29.9 at the second
/// check. A reading merely far from so few is not asked about: a new unit's first weeks may
/// rightly differ. `accepted` holds the earlier readings as the history judges them.
fn early_slip(f: Field, si: f64, accepted: &[f64], sys: UnitSystem) -> Option<String> {
    let m = stats::median(accepted)?;
    let s = floor(f);
    let as_hist = |v: f64| {
        if on_log(f) {
            (v > 0.0).then(|| v.ln())
        } else {
            Some(v)
        }
    };
    if (as_hist(si)? - m).abs() <= SIGMAS * s {
        return None;
    }
    let (meant, slip, _) = slips::undone(typed(f, si, sys)?)
        .into_iter()
        .filter_map(|(v, slip)| {
            let d = (as_hist(from_typed(f, v, sys))? - m).abs();
            (d <= RUN_SIGMAS * s).then_some((v, slip, d))
        })
        .min_by(|a, b| a.2.total_cmp(&b.2))?;
    Some(format!(
        "{} {} reads like {} {} (this unit's first readings: median {}): is it right?",
        capital(f.label()),
        show(f, si, sys),
        show(f, from_typed(f, meant, sys), sys),
        match slip {
            slips::Slip::Swapped => "with two figures swapped",
            slips::Slip::Decimal => "with the decimal point one place off",
        },
        show(f, from_hist(f, m), sys),
    ))
}

/// The state of the screen of one unit's checks, reading by reading in time order.
#[derive(Default)]
pub(super) struct CheckScreen {
    /// Accepted values per history field, oldest first.
    pub(super) accepted: [Vec<f64>; 5],
    /// The last accepted reading per field was itself outside its history (a confirmed step),
    /// with its side: a next reading that agrees with it needs no confirmation.
    pub(super) stepped: [Option<f64>; 5],
    /// The last reading per field was accepted and lay beyond `RUN_SIGMAS` of its history,
    /// with its side: the start of a run rather than a slip (see `RUN_SIGMAS`).
    pub(super) leaning: [Option<f64>; 5],
}

pub(super) fn idx(f: Field) -> usize {
    HISTORY_FIELDS.iter().position(|&g| g == f).unwrap_or(0)
}

impl CheckScreen {
    /// The suspicions of one check against the frame and the history so far (does not change
    /// the state).
    pub(super) fn screen(&self, unit: &Unit, c: &Check, sys: UnitSystem) -> Vec<Suspicion> {
        let mut out = Vec::new();
        let mut history_hit = [false; 5];
        for &f in &HISTORY_FIELDS {
            let (Some(x), Some(shown)) = (hist_value(c, f), check_value(c, f)) else {
                continue;
            };
            let i = idx(f);
            let hist = recent(f, &self.accepted[i]);
            if hist.is_none() {
                if let Some(reason) = early_slip(f, shown, &self.accepted[i], sys) {
                    history_hit[i] = true;
                    out.push(Suspicion { field: f, reason });
                }
                continue;
            }
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
            // The second of a run on one side (`RUN_SIGMAS`), short of a gross slip, and no
            // leap from the run's first reading (`run_step`).
            if self.leaning[i] == Some(side)
                && (x - m).abs() <= RUN_GROSS * SIGMAS * s
                && run_step(f, x, &self.accepted[i])
            {
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
    pub(super) fn accept(&mut self, c: &Check, suspect: &[Field]) {
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

/// Whether `x` follows on from the last accepted reading as the recent readings follow on from
/// each other: its step from the last lies within `SIGMAS` robust σ of their usual step (the
/// median and 1.4826 · MAD of the last `WINDOW` steps, over √2 for one reading's scatter,
/// floored). A season moves a field steadily — an oil warming with the spring rises a few
/// kelvin a week, so the readings' own spread about their median is wide and a slip that
/// lands inside it still leaps away from the week before (84.8 °C for 48.8 after 47.0). The
/// differences take the steady movement out (a robust noise estimate from first differences,
/// common practice, no published source).
pub(super) fn run_step(f: Field, x: f64, accepted: &[f64]) -> bool {
    let last = &accepted[accepted.len().saturating_sub(WINDOW + 1)..];
    let steps: Vec<f64> = last.windows(2).map(|w| w[1] - w[0]).collect();
    let (Some(&prev), Some((m, s))) = (last.last(), stats::median_and_mad_sigma(&steps)) else {
        return true;
    };
    let sigma = (s / std::f64::consts::SQRT_2).max(floor(f));
    (x - prev - m).abs() <= SIGMAS * sigma
}

pub(super) fn capital(s: &str) -> String {
    let mut c = s.chars();
    match c.next() {
        Some(f) => f.to_uppercase().collect::<String>() + c.as_str(),
        None => String::new(),
    }
}

pub(super) fn spread_text(f: Field, s: f64, sys: UnitSystem) -> String {
    if on_log(f) {
        format!("±{:.0} %", (s.exp() - 1.0) * 100.0)
    } else {
        crate::health::text::tdiff(s, sys)
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
    if let Some(reason) = kv40_off_its_pair(fluid, s, sys) {
        if !out.iter().any(|x| x.field == Field::Kv40) {
            out.push(Suspicion {
                field: Field::Kv40,
                reason,
            });
        }
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

/// What is asked of a sample whose KV40 and KV100 give a viscosity index (ASTM D2270) more
/// than `VI_FAR` from the new oil's, where undoing one typing slip in the KV40 (`slips`)
/// brings it within `VI_NEAR` of it: the two viscosities of one oil move together (ageing, a
/// top-up, shear), a figure mistyped in one of them does not (31.8 cSt typed as 38.1 beside a
/// KV100 of 5.29 reads as a VI of 52, the oil's being 102). `None` when either is missing,
/// the pair is consistent, or no slip of the KV40 explains it (a slip in the KV100, say).
fn kv40_off_its_pair(fluid: Option<&Fluid>, s: &Sample, sys: UnitSystem) -> Option<String> {
    let f = fluid?;
    let (k40, k100, n40, n100) = (s.kv40?, s.kv100?, f.kv40_new?, f.kv100_new?);
    let vi = viscosity_index(k40, k100).ok()?.vi;
    let vi_new = viscosity_index(n40, n100).ok()?.vi;
    if (vi - vi_new).abs() <= VI_FAR {
        return None;
    }
    // The figure meant must also lie nearer the new oil's KV40 than the one typed: a slip in
    // the KV100 can make a sound KV40's swapped figure fit the index by chance (5.46 typed as
    // 4.56 beside 32.4, which as 23.4 would fit).
    let from_new = |c: f64| (c / n40.cst() - 1.0).abs();
    let (meant, slip, vi_meant) = slips::undone(k40.cst())
        .into_iter()
        .filter(|(c, _)| from_new(*c) < from_new(k40.cst()))
        .filter_map(|(c, slip)| {
            let v = viscosity_index(crate::units::Viscosity::from_cst(c), k100)
                .ok()?
                .vi;
            Some((c, slip, v))
        })
        .filter(|(_, _, v)| (v - vi_new).abs() <= VI_NEAR)
        .min_by(|a, b| (a.2 - vi_new).abs().total_cmp(&(b.2 - vi_new).abs()))?;
    Some(format!(
        "KV40 {} beside a KV100 of {} gives a viscosity index of {}, the new oil's being {}; as {} \
         ({}) it would give {}: is the KV40 right?",
        visc(k40.si(), sys),
        visc(k100.si(), sys),
        crate::health::text::num(vi, 0),
        crate::health::text::num(vi_new, 0),
        visc(crate::units::Viscosity::from_cst(meant).si(), sys),
        match slip {
            slips::Slip::Swapped => "two figures swapped",
            slips::Slip::Decimal => "the decimal point one place off",
        },
        crate::health::text::num(vi_meant, 0),
    ))
}

/// The fields of a sample judged against their own history, on their logarithm: the acid
/// number, which rises over months, and water and the particle counts by their slip shape only
/// (`shape_only`).
pub(super) const SAMPLE_HISTORY_FIELDS: [Field; 5] = [
    Field::Acid,
    Field::Water,
    Field::Count4,
    Field::Count6,
    Field::Count14,
];

/// The particle count fields, smallest size first.
const COUNTS: [Field; 3] = [Field::Count4, Field::Count6, Field::Count14];

/// Whether a sample field is questioned only for its slip shape, never merely for being far
/// from its history: a real water ingress moves the water as far between two quarterly samples
/// as a slip does (from under 100 ppm to 590), dirt getting in moves the counts by range
/// numbers, and only the shape tells them from a slip.
pub(super) fn shape_only(f: Field) -> bool {
    f == Field::Water || COUNTS.contains(&f)
}

/// A sample field's value as its history judges it: the logarithm of a positive figure.
pub(super) fn sample_hist_value(s: &Sample, f: Field) -> Option<f64> {
    match f {
        Field::Acid => s.acid_mgkoh_g,
        Field::Water => s.water_ppm,
        Field::Count4 => s.counts_per_ml[0],
        Field::Count6 => s.counts_per_ml[1],
        Field::Count14 => s.counts_per_ml[2],
        _ => None,
    }
    .filter(|v| v.is_finite() && *v > 0.0)
    .map(f64::ln)
}

fn sample_idx(f: Field) -> Option<usize> {
    SAMPLE_HISTORY_FIELDS.iter().position(|&g| g == f)
}

/// Whether a reading `d` (on the logarithm) from its history's median, robust σ `s`, is far
/// enough for the slip-shape rule: beyond `SHAPE_SIGMAS`, and at least `WATER_SHAPE_FACTOR`
/// times for water, `COUNT_SHAPE_FACTOR` for a particle count. A next sample as far on the same
/// side confirms a questioned one.
pub(super) fn shape_far(f: Field, d: f64, s: f64) -> bool {
    let factor = match f {
        Field::Water => WATER_SHAPE_FACTOR,
        Field::Count4 | Field::Count6 | Field::Count14 => COUNT_SHAPE_FACTOR,
        _ => 1.0,
    };
    d > SHAPE_SIGMAS * s && d >= factor.ln()
}

/// The σ floor of a sample field's slip-shape rule.
fn shape_floor(f: Field) -> f64 {
    match f {
        Field::Water => FLOOR_WATER_SHAPE_LN,
        Field::Count4 | Field::Count6 | Field::Count14 => FLOOR_COUNT_SHAPE_LN,
        _ => FLOOR_ACID_SHAPE_LN,
    }
}

/// Median and robust σ (at least `floor`) of the last `WINDOW` of `acc`, when there are at
/// least `min`.
fn floored_stats(acc: &[f64], floor: f64, min: usize) -> Option<(f64, f64)> {
    if acc.len() < min.max(1) {
        return None;
    }
    let last = &acc[acc.len().saturating_sub(WINDOW)..];
    let (m, s) = stats::median_and_mad_sigma(last)?;
    Some((m, s.max(floor)))
}

/// What is asked of a sample figure `x` shaped like a typing slip of `meant`, the usual level
/// being `usual`.
fn shape_reason(f: Field, x: f64, meant: (f64, slips::Slip), usual: f64) -> String {
    let how = match meant.1 {
        slips::Slip::Swapped => "with two figures swapped",
        slips::Slip::Decimal => "with the decimal point one place off",
    };
    if COUNTS.contains(&f) {
        return format!(
            "A {} of {} per mL reads like {} {how}, while the sample's other sizes kept to theirs (the \
             unit's recent samples: median {}): is it right?",
            f.label(),
            crate::health::text::num(x, 1),
            crate::health::text::num(meant.0, 1),
            crate::health::text::num(usual, 1),
        );
    }
    if f == Field::Water {
        format!(
            "A water content of {} ppm reads like {} ppm {how} (the unit's recent samples: median {} \
             ppm): is it right? Until it is confirmed its flag stays at watch.",
            crate::health::text::num(x, 0),
            crate::health::text::num(meant.0, 1),
            crate::health::text::num(usual, 0),
        )
    } else {
        format!(
            "An acid number of {} mg KOH/g reads like {} {how} (the unit's recent samples: median {} \
             mg KOH/g): is it right?",
            crate::health::text::num(x, 3),
            crate::health::text::num(meant.0, 3),
            crate::health::text::num(usual, 2),
        )
    }
}

/// The state of the screen of one unit's samples in one era, sample by sample in time order.
#[derive(Default)]
pub(super) struct SampleScreen {
    /// Accepted logarithms per history field, oldest first.
    accepted: [Vec<f64>; 5],
}

impl SampleScreen {
    /// Median and robust σ (floored) of the last `WINDOW` accepted values of a field, when
    /// there are at least `MIN_ACID_HISTORY`.
    pub(super) fn recent(&self, f: Field) -> Option<(f64, f64)> {
        self.recent_floored(f, FLOOR_ACID_LN, MIN_ACID_HISTORY)
    }

    /// Median and robust σ of the same values for the slip-shape rule, the σ floored at the
    /// field's `shape_floor`, from `MIN_SHAPE_HISTORY` on.
    pub(super) fn recent_for_shape(&self, f: Field) -> Option<(f64, f64)> {
        self.recent_floored(f, shape_floor(f), MIN_SHAPE_HISTORY)
    }

    /// Median and robust σ of the last `WINDOW` accepted values, σ at least `floor`, when
    /// there are at least `min`.
    fn recent_floored(&self, f: Field, floor: f64, min: usize) -> Option<(f64, f64)> {
        let acc = &self.accepted[sample_idx(f)?];
        floored_stats(acc, floor, min)
    }

    /// Whether the sample's particle counts other than `f` are all given and each within the
    /// slip-shape rule's reach of its own recent median (`shape_far` not reached): a count
    /// that moved alone.
    fn other_counts_kept(&self, s: &Sample, f: Field) -> bool {
        COUNTS.iter().filter(|&&g| g != f).all(|&g| {
            match (sample_hist_value(s, g), self.recent_for_shape(g)) {
                (Some(x), Some((m, sd))) => !shape_far(g, (x - m).abs(), sd),
                _ => false,
            }
        })
    }

    /// Whether the last accepted value of a field stood beyond `RUN_SIGMAS` (shape σ) of the
    /// ones before it on the side `side`: a reading after it on that side is a run, not a
    /// lone slip.
    fn after_a_step(&self, f: Field, side: f64) -> bool {
        let Some(acc) = sample_idx(f).map(|i| &self.accepted[i]) else {
            return false;
        };
        let Some((last, before)) = acc.split_last() else {
            return false;
        };
        floored_stats(before, shape_floor(f), MIN_SHAPE_HISTORY)
            .is_some_and(|(m, s)| (last - m) * side > RUN_SIGMAS * s)
    }

    pub(super) fn push(&mut self, f: Field, v: f64) {
        if let Some(i) = sample_idx(f) {
            self.accepted[i].push(v);
        }
    }

    /// The suspicions of one sample: the frame of its fluid, then the acid number against the
    /// era's recent samples (does not change the state).
    pub(super) fn screen(
        &self,
        fluid: Option<&Fluid>,
        s: &Sample,
        sys: UnitSystem,
    ) -> Vec<Suspicion> {
        let mut out = sample(fluid, s, sys);
        for f in SAMPLE_HISTORY_FIELDS {
            if out.iter().any(|x| x.field == f) {
                continue;
            }
            let Some(x) = sample_hist_value(s, f) else {
                continue;
            };
            let beyond = match self.recent(f) {
                Some(h) if !shape_only(f) => outside(x, Some(h)).map(|side| (side, h.0)),
                _ => None,
            };
            let Some((side, m)) = beyond else {
                if COUNTS.contains(&f) && !self.other_counts_kept(s, f) {
                    continue;
                }
                if let (Some(meant), Some((m, _))) =
                    (self.slip_shaped(f, x), self.recent_for_shape(f))
                {
                    out.push(Suspicion {
                        field: f,
                        reason: shape_reason(f, x.exp(), meant, m.exp()),
                    });
                }
                continue;
            };
            let (now, usual) = (x.exp(), m.exp());
            let times = if side > 0.0 { now / usual } else { usual / now };
            out.push(Suspicion {
                field: f,
                reason: format!(
                    "An acid number of {} mg KOH/g is {} times {} the unit's recent samples (median {} \
                     mg KOH/g): a slipped decimal point or a swapped figure?",
                    crate::health::text::num(now, 2),
                    crate::health::text::num(times, 1),
                    if side > 0.0 { "above" } else { "below" },
                    crate::health::text::num(usual, 2),
                ),
            });
        }
        out
    }

    /// The figure a reading of `f` (its logarithm `x`) may have been meant as, and the slip,
    /// where it is beyond `SHAPE_SIGMAS` of the field's recent samples and undoing one typing
    /// slip lands within `RUN_SIGMAS` of their median (the nearest such figure).
    pub(super) fn slip_shaped(&self, f: Field, x: f64) -> Option<(f64, slips::Slip)> {
        let (m, s) = self.recent_for_shape(f)?;
        if !shape_far(f, (x - m).abs(), s) || self.after_a_step(f, (x - m).signum()) {
            return None;
        }
        slips::undone(x.exp())
            .into_iter()
            .map(|(v, slip)| ((v.ln() - m).abs(), v, slip))
            .filter(|(d, _, _)| *d <= RUN_SIGMAS * s)
            .min_by(|a, b| a.0.total_cmp(&b.0))
            .map(|(_, v, slip)| (v, slip))
    }

    /// Takes a sample's acid number into the history, unless it is held as suspect.
    pub(super) fn accept(&mut self, s: &Sample, held: &[Field]) {
        for f in SAMPLE_HISTORY_FIELDS {
            if held.contains(&f) {
                continue;
            }
            if let Some(v) = sample_hist_value(s, f) {
                self.push(f, v);
            }
        }
    }
}
