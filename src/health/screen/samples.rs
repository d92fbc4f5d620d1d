//! The tests one sample is put to: the frame of its fluid, its own sizes and viscosities
//! against each other, and its acid number, water and particle counts against the era's
//! samples before it. It says why a figure looks like a slip; it keeps no record of what was
//! confirmed.

use super::rules::outside;
use super::*;
use crate::physics::viscosity::viscosity_index;
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

/// The ISO 4406 range number of a count per mL (above 28 counts as 29).
fn range_number(count_per_ml: f64) -> Option<i32> {
    crate::physics::cleanliness::scale_number(count_per_ml)
        .ok()
        .map(crate::physics::cleanliness::Scale::rank)
}

/// The count of a sample that falls off the usual shape of an oil's counts
/// (`COUNT_GAPS_USUAL`) where undoing one typing slip in it brings every gap into that shape,
/// with what is asked: the sample judged by its own sizes. `None` when fewer than two
/// neighbouring sizes are given, the shape is usual, or no one slip explains it.
fn count_off_its_sample(s: &Sample) -> Option<(Field, String)> {
    let counts = s.counts_per_ml;
    let usual = |c: [Option<f64>; 3]| -> Option<bool> {
        let r: Vec<Option<i32>> = c.iter().map(|x| x.and_then(range_number)).collect();
        let mut judged = false;
        for (k, (lo, hi)) in COUNT_GAPS_USUAL.iter().enumerate() {
            if let (Some(a), Some(b)) = (r[k], r[k + 1]) {
                judged = true;
                if !(*lo..=*hi).contains(&(a - b)) {
                    return Some(false);
                }
            }
        }
        judged.then_some(true)
    };
    if usual(counts)? {
        return None;
    }
    // The nearest figure, on the logarithm, that one slip undone in one count makes usual.
    let (i, meant, slip) = (0..3)
        .filter_map(|i| Some((i, counts[i]?)))
        .flat_map(|(i, x)| {
            slips::undone(x)
                .into_iter()
                .map(move |(c, slip)| (i, x, c, slip))
        })
        .filter(|&(i, _, c, _)| {
            let mut fixed = counts;
            fixed[i] = Some(c);
            usual(fixed) == Some(true)
        })
        .min_by(|a, b| (a.2 / a.1).ln().abs().total_cmp(&(b.2 / b.1).ln().abs()))
        .map(|(i, _, c, slip)| (i, c, slip))?;
    // Written as ISO 4406 writes its scale numbers (`>28` above the table).
    let code = |c: [Option<f64>; 3]| -> String {
        c.iter()
            .map(|x| {
                x.and_then(|v| crate::physics::cleanliness::scale_number(v).ok())
                    .map_or("-".to_string(), |r| r.to_string())
            })
            .collect::<Vec<_>>()
            .join("/")
    };
    let [(lo46, hi46), (lo614, hi614)] = COUNT_GAPS_USUAL;
    let mut fixed = counts;
    fixed[i] = Some(meant);
    let field = COUNTS[i];
    let shown = counts
        .iter()
        .map(|x| x.map_or("-".to_string(), |v| crate::health::text::num(v, 2)))
        .collect::<Vec<_>>()
        .join(" / ");
    Some((
        field,
        format!(
            "The particle counts {shown} per mL (scale numbers {}) fall off the usual shape of an \
             oil's counts, where the ≥6 µm(c) count stands {lo46} to {hi46} range numbers under the \
             ≥4 µm(c) one and the ≥14 µm(c) count {lo614} to {hi614} under the ≥6 µm(c) one; the {} \
             as {} ({}) would make them {}: is it right?",
            code(counts),
            field.label(),
            crate::health::text::num(meant, 2),
            match slip {
                slips::Slip::Swapped => "two figures swapped",
                slips::Slip::Decimal => "the decimal point one place off",
            },
            code(fixed),
        ),
    ))
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
        // An era's first counts have no history to be judged by: the sample's own sizes judge
        // them (`COUNT_GAPS_USUAL`).
        if let Some((field, reason)) = count_off_its_sample(s) {
            if self.recent_for_shape(field).is_none() {
                out.push(Suspicion { field, reason });
            }
        }
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
