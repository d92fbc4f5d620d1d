//! The indicators of the era's fluid samples: KV40 and its drift, ISO VG band, VI, ISO 4406
//! code against the target, water and acid rise. Formulas live in `physics`; no flags here.

use super::*;

pub(super) fn sample_points(
    h: &UnitHistory,
    era: Option<&Era>,
    fluid: Option<&Fluid>,
    walther: Option<Walther>,
    target: Option<Iso4406Code>,
) -> Vec<SamplePoint> {
    let Some(era) = era else { return Vec::new() };
    let era_samples: Vec<&Sample> = h
        .samples
        .iter()
        .filter(|s| era.contains(s.sampled_at))
        .collect();
    let kv40_new = fluid.and_then(|f| f.kv40_new).filter(|v| v.si() > 0.0);
    // Acid rise is over the new oil; where the fluid record has no new-oil figure, over the
    // era's first acid reading.
    let acid_ref = fluid
        .and_then(|f| f.acid_new_mgkoh_g)
        .or_else(|| era_samples.iter().find_map(|s| s.acid_mgkoh_g));
    let band = fluid
        .and_then(|f| f.iso_vg)
        .and_then(|vg| visc::iso_vg_band(vg).ok());
    era_samples
        .iter()
        .map(|s| {
            let (kv40, src) = match (s.kv40, s.visc_reading, walther) {
                (Some(v), _, _) => (Some(v), Some(Kv40Source::Measured)),
                (None, Some(r), Some(w)) => (
                    w.kv40_from_reading(r.visc, r.at).ok(),
                    Some(Kv40Source::FieldReading { at_k: r.at.si() }),
                ),
                _ => (None, None),
            };
            let code = sample_code(s);
            let over = match (code, target) {
                (Some(c), Some(t)) => clean::ranges_above(&c, &t),
                _ => [None; 3],
            };
            SamplePoint {
                sample_id: s.id,
                at: s.sampled_at,
                kv40: kv40.map(|v| v.si()),
                kv40_source: kv40.and(src),
                kv40_drift_pct: match (kv40, kv40_new) {
                    (Some(v), Some(n)) => visc::viscosity_drift(v, n).ok().map(|d| d * 100.0),
                    _ => None,
                },
                vg_band: band.map(|b| (b.min.si(), b.max.si())),
                in_vg_band: match (kv40, band) {
                    (Some(v), Some(b)) => Some(b.contains(v)),
                    _ => None,
                },
                viscosity_index: match (kv40, s.kv100) {
                    (Some(a), Some(b)) => visc::viscosity_index(a, b).ok().map(|r| r.vi),
                    _ => None,
                },
                code,
                log2_counts: s.counts_per_ml.map(|c| c.and_then(clean::log2_count)),
                over_target: over,
                over_target_max: over.iter().flatten().copied().max(),
                water_ppm: s.water_ppm,
                acid_mgkoh_g: s.acid_mgkoh_g,
                acid_rise: match (s.acid_mgkoh_g, acid_ref) {
                    (Some(a), Some(r)) => Some(a - r),
                    _ => None,
                },
            }
        })
        .collect()
}

/// The ISO 4406 code of a sample: from its counts where all three were given, else per size
/// from the counts there are, else as written.
pub(super) fn sample_code(s: &Sample) -> Option<Iso4406Code> {
    match s.counts_per_ml {
        [Some(a), Some(b), Some(c)] => clean::code_from_counts([a, b, c], None).ok(),
        counts if counts.iter().any(Option::is_some) => {
            let mut parts = [clean::CodePart {
                scale: None,
                at_least: false,
            }; 3];
            for (part, c) in parts.iter_mut().zip(counts) {
                part.scale = c.and_then(|c| clean::scale_number(c).ok());
            }
            Some(Iso4406Code { parts })
        }
        _ => s.iso4406.as_deref().and_then(|t| t.parse().ok()),
    }
}
