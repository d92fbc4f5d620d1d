//! The tests one check reading is put to: the unit's physical frame and the field's own
//! recent history (Hampel's median ± robust σ). It says why a reading looks like a slip; it
//! keeps no record of what was confirmed. Samples are `samples`'s.

use super::*;

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
