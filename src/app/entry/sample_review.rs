//! Sample review: the oil sample form, its preview through the health engine (the code, KV40,
//! VI and flags the engine would show) and saving it. It must not know slint or SQL.

use super::*;

use chrono::{DateTime, SubsecRound, Utc};

use crate::app::local_time::Zone;
use crate::app::shop::Shop;
use crate::app::status::{store_error, unit_status_in, UnitStatus};
use crate::app::AppError;
use crate::health::{self, FlagKind, Limits, SamplePoint};
use crate::model::{Confirmation, Fluid, Id, Sample, UnitHistory, ViscReading};
use crate::physics::cleanliness::Iso4406Code;
use crate::quantity::Kind;
use crate::store::Store;
use crate::units::{Temperature, UnitSystem, Viscosity};

/// The sample form (the same fields for every unit).
pub fn sample_fields(system: UnitSystem) -> Vec<Field> {
    vec![
        Field::text("sampled_at", "Sampled at")
            .with_placeholder("YYYY-MM-DD HH:MM")
            .with_hint("blank = now"),
        Field::text("lab_ref", "Lab or bench reference"),
        Field::in_unit("kv40", "Viscosity at 40 °C (KV40)", "cSt"),
        Field::in_unit("kv100", "Viscosity at 100 °C", "cSt").with_hint("optional"),
        Field::in_unit("visc_value", "Field viscosity reading", "cSt").with_hint("instead of KV40"),
        Field::quantity(
            "visc_temp",
            "… read at temperature",
            Kind::Temperature,
            system,
        ),
        Field::in_unit("count_4", "Particles ≥4 µm(c)", "/mL"),
        Field::in_unit("count_6", "Particles ≥6 µm(c)", "/mL"),
        Field::in_unit("count_14", "Particles ≥14 µm(c)", "/mL"),
        Field::text("iso4406", "or ISO 4406 code")
            .with_placeholder("18/16/13")
            .with_hint("when no counts"),
        Field::in_unit("water_ppm", "Water", "ppm"),
        Field::in_unit("acid", "Acid number", "mg KOH/g"),
        Field::text("by", "Sampled by").with_placeholder("name or initials"),
        Field::text("note", "Note"),
    ]
}

/// What a sample means, before it is saved.
#[derive(Clone, Debug, PartialEq)]
pub struct SamplePreview {
    /// The sample's indicators as the health engine computes them.
    pub point: Option<SamplePoint>,
    /// The unit's cleanliness target.
    pub target: Option<String>,
    /// Fluid-condition flags the unit would carry with this sample.
    pub flags: Vec<health::Flag>,
    pub fluid: Option<Fluid>,
}

/// The judged sample: the record (when nothing is refused), every problem, and the preview.
#[derive(Clone, Debug, PartialEq)]
pub struct SampleReview {
    pub sample: Option<Sample>,
    pub problems: Vec<Problem>,
    pub preview: Option<SamplePreview>,
}

const SAMPLE_FLAGS: [FlagKind; 4] = [
    FlagKind::Viscosity,
    FlagKind::Cleanliness,
    FlagKind::Water,
    FlagKind::Acid,
];

/// Judges a sample as typed and shows what it would mean, without writing anything.
pub fn review_sample(
    shop: &Shop,
    unit_id: Id,
    entered: &Entered,
    now: DateTime<Utc>,
) -> Result<SampleReview, AppError> {
    let store = shop.store();
    let shop_settings = settings(store)?;
    let system = shop_settings.unit_system;
    let zone = Zone::of_setting(&shop_settings.time_zone);
    let h = history_of(store, unit_id)?;
    let mut p = Vec::new();
    let at = read_when(entered.get("sampled_at"), now, zone).unwrap_or_else(|e| {
        p.push(Problem::refused("sampled_at", e));
        now.trunc_subsecs(0)
    });
    let (kv40, kv100, visc_reading) = viscosities(entered, system, &mut p);
    let (counts, iso4406) = particle_counts(entered, &mut p);
    let water = non_negative("water_ppm", entered.get("water_ppm"), &mut p);
    let acid = non_negative("acid", entered.get("acid"), &mut p);
    let by = entered.get("by").to_string();
    let any = kv40.is_some()
        || kv100.is_some()
        || visc_reading.is_some()
        || counts.iter().any(Option::is_some)
        || iso4406.is_some()
        || water.is_some()
        || acid.is_some();
    if !any && !p.iter().any(|x| x.verdict == Verdict::Refused) {
        p.push(Problem::refused(
            "",
            "no result entered yet: give a viscosity, counts or a code, water or acid",
        ));
    }
    if h.samples.iter().any(|s| s.sampled_at == at) {
        p.push(Problem::refused(
            "sampled_at",
            format!(
                "{} already has a sample at {}; correct that one on the unit page",
                h.unit.tag,
                show_time(at, zone)
            ),
        ));
    }
    p.sort_by_key(|x| std::cmp::Reverse(x.verdict));
    if p.iter().any(|x| x.verdict == Verdict::Refused) {
        return Ok(SampleReview {
            sample: None,
            problems: p,
            preview: None,
        });
    }
    let sample = Sample {
        id: 0,
        unit_id,
        sampled_at: at,
        kv40: kv40.map(Viscosity),
        kv100: kv100.map(Viscosity),
        visc_reading,
        counts_per_ml: counts,
        iso4406,
        water_ppm: water,
        acid_mgkoh_g: acid,
        lab_ref: entered.get("lab_ref").to_string(),
        note: format_note(entered.get("note"), &by),
        confirmed: None,
    };
    // Far from the new oil, free water, a very high acid number, water or acid far from the
    // unit's recent samples: the screening's questions, the same at import and in the engine.
    for sus in health::screen::sample_in(&h, &sample, system) {
        let key = match sus.field {
            health::screen::Field::ViscReading => "visc_value",
            f => f.key(),
        };
        if !p.iter().any(|x| x.field == key) {
            p.push(Problem::unusual(key, sus.reason));
        }
    }
    let preview = preview_sample(store, &h, &sample, now, system, zone)?;
    Ok(SampleReview {
        sample: Some(sample),
        problems: p,
        preview: Some(preview),
    })
}

/// The viscosities of a sample: KV40 and KV100 (KV100 below KV40), and a field reading with
/// the temperature it was read at, both or neither.
fn viscosities(
    entered: &Entered,
    system: UnitSystem,
    p: &mut Vec<Problem>,
) -> (Option<f64>, Option<f64>, Option<ViscReading>) {
    let visc = |key: &str, p: &mut Vec<Problem>| -> Option<f64> {
        match read_quantity(entered.get(key), Kind::Viscosity, system) {
            Ok(Some(v)) if v <= 0.0 => {
                p.push(Problem::refused(key, "a viscosity must be more than zero"));
                None
            }
            Ok(v) => v,
            Err(e) => {
                p.push(Problem::refused(key, e));
                None
            }
        }
    };
    let kv40 = visc("kv40", p);
    let kv100 = visc("kv100", p);
    let visc_value = visc("visc_value", p);
    let visc_temp = match read_quantity(entered.get("visc_temp"), Kind::Temperature, system) {
        Ok(v) => v.filter(|&t| bound_temp("visc_temp", "Viscosity temperature", t, system, p)),
        Err(e) => {
            p.push(Problem::refused("visc_temp", e));
            None
        }
    };
    if let (Some(a), Some(b)) = (kv40, kv100) {
        if b >= a {
            p.push(Problem::refused(
                "kv100",
                format!(
                    "viscosity at 100 °C ({:.1} cSt) must be below that at 40 °C ({:.1} cSt): oil thins as it warms",
                    Viscosity(b).cst(),
                    Viscosity(a).cst()
                ),
            ));
        }
    }
    let visc_reading = match (visc_value, visc_temp) {
        (Some(v), Some(t)) => Some(ViscReading {
            visc: Viscosity(v),
            at: Temperature(t),
        }),
        (Some(_), None) if entered.get("visc_temp").is_empty() => {
            p.push(Problem::refused(
                "visc_temp",
                "give the temperature the field viscosity was read at",
            ));
            None
        }
        (None, Some(_)) if entered.get("visc_value").is_empty() => {
            p.push(Problem::refused(
                "visc_value",
                "give the viscosity read at that temperature",
            ));
            None
        }
        _ => None,
    };
    (kv40, kv100, visc_reading)
}

/// The particle counts per mL at ≥4, ≥6 and ≥14 µm (never rising with size) and an ISO 4406
/// code as typed.
fn particle_counts(entered: &Entered, p: &mut Vec<Problem>) -> ([Option<f64>; 3], Option<String>) {
    let mut counts = [None; 3];
    for (i, key) in ["count_4", "count_6", "count_14"].iter().enumerate() {
        match read_number(entered.get(key)) {
            Ok(Some(v)) if v < 0.0 => {
                p.push(Problem::refused(key, "a particle count cannot be negative"))
            }
            Ok(v) => counts[i] = v,
            Err(e) => p.push(Problem::refused(key, e)),
        }
    }
    let sizes = ["4", "6", "14"];
    for i in 0..3 {
        for j in i + 1..3 {
            if let (Some(a), Some(b)) = (counts[i], counts[j]) {
                if b > a {
                    p.push(Problem::refused(
                        ["count_4", "count_6", "count_14"][j],
                        format!(
                            "counts cannot rise with particle size: ≥{} µm {b} per mL is more than ≥{} µm {a} per mL \
                             (every particle ≥{} µm is also ≥{} µm)",
                            sizes[j], sizes[i], sizes[j], sizes[i]
                        ),
                    ));
                }
            }
        }
    }
    let code_text = entered.get("iso4406");
    let iso4406 = if code_text.is_empty() {
        None
    } else {
        match code_text.parse::<Iso4406Code>() {
            Ok(c) => Some(c.to_string()),
            Err(e) => {
                p.push(Problem::refused("iso4406", e.to_string()));
                None
            }
        }
    };
    (counts, iso4406)
}

/// The model's sample has no author field: the name goes at the front of the note.
fn format_note(note: &str, by: &str) -> String {
    match (by.trim(), note.trim()) {
        ("", n) => n.to_string(),
        (b, "") => format!("by {b}"),
        (b, n) => format!("by {b}: {n}"),
    }
}

/// Runs the health engine over the unit's history with the sample added.
fn preview_sample(
    store: &Store,
    h: &UnitHistory,
    sample: &Sample,
    now: DateTime<Utc>,
    system: UnitSystem,
    zone: Zone,
) -> Result<SamplePreview, AppError> {
    const PROBE: Id = -1;
    let mut with = h.clone();
    with.samples.push(Sample {
        id: PROBE,
        ..sample.clone()
    });
    let fluids = store.fluids().map_err(store_error)?;
    let limits = Limits::resolve(&store.limits().map_err(store_error)?, Some(h.unit.id));
    let at = now.max(sample.sampled_at);
    let health = health::evaluate(&with, &fluids, &limits, at, system, zone.calendar());
    let point = health
        .samples
        .iter()
        .find(|s| s.sample_id == PROBE)
        .cloned();
    let flags = health
        .flags
        .into_iter()
        .filter(|f| SAMPLE_FLAGS.contains(&f.kind))
        .collect();
    Ok(SamplePreview {
        point,
        target: health.indicators.iso4406_target.clone(),
        flags,
        fluid: health.fluid,
    })
}

/// A stored sample and what the unit looks like now.
#[derive(Clone, Debug, PartialEq)]
pub struct SavedSample {
    pub sample_id: Id,
    pub status: UnitStatus,
}

/// Saves a sample: refused values stop it; unusual ones stop it unless `confirmed`.
pub fn save_sample(
    shop: &Shop,
    unit_id: Id,
    entered: &Entered,
    confirmed: bool,
    now: DateTime<Utc>,
) -> Result<SaveOutcome<SavedSample>, AppError> {
    let review = review_sample(shop, unit_id, entered, now)?;
    let Some(mut sample) = review.sample else {
        return Ok(SaveOutcome::Refused(review.problems));
    };
    if !review.problems.is_empty() && !confirmed {
        return Ok(SaveOutcome::NeedsConfirmation(review.problems));
    }
    if !review.problems.is_empty() {
        // Asked and confirmed: stored as confirmed by whoever entered it, now.
        let by = entered.get("by").trim();
        sample.confirmed = Some(Confirmation {
            by: if by.is_empty() {
                "sample entry, no name given".to_string()
            } else {
                by.to_string()
            },
            at: now.trunc_subsecs(0),
        });
    }
    let store = shop.store();
    let id = store.insert_sample(&sample).map_err(store_error)?;
    let unit = unit_of(store, unit_id)?;
    let status = unit_status_in(store, &unit.tag, Some(now.max(sample.sampled_at)))?;
    Ok(SaveOutcome::Saved(SavedSample {
        sample_id: id,
        status,
    }))
}
