//! Which of a rule's first acts on a faulty unit it would have raised on the same unit without
//! its fault: a false alarm that happened to fall on the faulty unit, not a finding of the
//! fault. Pure, as the rest of the scoring; the truth carries the sound unit's checks
//! (`Fault::twin`) and the application layer runs the rule on them.

use serde::Serialize;

use super::{median, Chance, Detection, Timeline, UnitReadings, ACT};
use crate::sim::truth::{FaultKind, TwinCheck, UnitTruth};

/// A unit's readings with the checks of `twin` read as the sound unit would have: its stroke
/// time and oil temperature in the weeks it has a check there.
pub fn sound_readings(r: &UnitReadings, twin: &[TwinCheck]) -> UnitReadings {
    let mut out = r.clone();
    for c in &mut out.checks {
        if let Some(t) = twin.iter().find(|t| t.week == c.0) {
            c.1 = Some(t.stroke_time_s);
            c.2 = Some(t.reservoir_temp_c);
        }
    }
    out
}

/// Per fault kind: how many judged faults with the sound unit's checks known had their first
/// act in a week the rule also acts on the sound unit (by a flag the fault can raise), and
/// the median act delay counting instead the first act the sound unit does not share (a
/// fault never so found counting as never).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SoundShare {
    pub kind: FaultKind,
    pub compared: usize,
    pub shared: usize,
    pub median_delay_own: Option<f64>,
}

/// [`SoundShare`] of every fault kind with the sound unit's checks known, from the rule's
/// `detections`, its timelines on the units (`timelines`, one per unit of `units`) and on the
/// same units without their faults (`sound`, `None` where not known).
pub fn shared_with_sound(
    units: &[&UnitTruth],
    detections: &[Detection],
    timelines: &[Timeline],
    sound: &[Option<Timeline>],
) -> Vec<SoundShare> {
    let mut per: Vec<(FaultKind, bool, Option<i64>)> = Vec::new();
    for ((u, tl), snd) in units.iter().zip(timelines).zip(sound) {
        let (Some(ft), Some(snd)) = (&u.fault, snd) else {
            continue;
        };
        let Some(d) = detections
            .iter()
            .find(|d| d.unit == u.unit && d.chance == Chance::Judged)
        else {
            continue;
        };
        let end = ft.repair_week.unwrap_or(tl.len()).min(tl.len());
        let acts = |w: usize| tl[w].level_for(ft.kind) >= ACT;
        let sound_acts = |w: usize| snd.get(w).is_some_and(|f| f.level_for(ft.kind) >= ACT);
        let first = (ft.onset_week..end).find(|&w| acts(w));
        let own = (ft.onset_week..end).find(|&w| acts(w) && !sound_acts(w));
        let shared = first.is_some_and(sound_acts);
        per.push((
            d.kind,
            shared,
            own.map(|w| w as i64 - ft.detectable_week as i64),
        ));
    }
    FaultKind::ALL
        .iter()
        .filter_map(|&kind| {
            let of: Vec<_> = per.iter().filter(|p| p.0 == kind).collect();
            (!of.is_empty()).then(|| SoundShare {
                kind,
                compared: of.len(),
                shared: of.iter().filter(|p| p.1).count(),
                median_delay_own: median(
                    &of.iter()
                        .map(|p| p.2.map_or(f64::INFINITY, |v| v as f64))
                        .collect::<Vec<_>>(),
                )
                .filter(|m| m.is_finite()),
            })
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::sim::score::tests::{truth_of, wf, with_fault};
    use crate::sim::score::{score, UnitFacts};

    #[test]
    fn a_first_act_the_sound_unit_shares_is_told_apart() {
        // A pump wear from week 2, detectable in week 4, left in place. The rule acts in
        // weeks 3 and 4 and from week 6; on the sound unit it acts in weeks 3 and 4 too (a
        // hot spell that slows any stroke): its first act is shared, and the first it does
        // not share is week 6, 2 weeks after the detectable week.
        let u = with_fault("F", FaultKind::PumpWear, (2, 4), None);
        let truth = truth_of(vec![u], vec![], 8);
        let facts = vec![UnitFacts {
            truth: &truth.units[0],
            checked: vec![true; 8],
        }];
        let tl: Timeline = [0, 0, 0, 2, 2, 0, 2, 2].map(wf).to_vec();
        let snd: Timeline = [0, 0, 0, 2, 2, 0, 0, 0].map(wf).to_vec();
        let s = score("f", &truth, &facts, std::slice::from_ref(&tl));
        let units: Vec<&UnitTruth> = truth.units.iter().collect();
        let shares = shared_with_sound(
            &units,
            &s.detections,
            std::slice::from_ref(&tl),
            &[Some(snd)],
        );
        assert_eq!(
            shares,
            vec![SoundShare {
                kind: FaultKind::PumpWear,
                compared: 1,
                shared: 1,
                median_delay_own: Some(2.0),
            }]
        );
        // Without the sound unit's timeline nothing is compared.
        assert!(shared_with_sound(&units, &s.detections, &[tl], &[None]).is_empty());
    }

    #[test]
    fn the_sound_units_checks_replace_the_readings_of_their_weeks() {
        let r = UnitReadings {
            checks: vec![(0, Some(4.0), Some(40.0)), (1, Some(5.0), Some(55.0))],
            ..UnitReadings::default()
        };
        let twin = [TwinCheck {
            week: 1,
            stroke_time_s: 4.1,
            reservoir_temp_c: 41.0,
        }];
        let s = sound_readings(&r, &twin);
        assert_eq!(
            s.checks,
            vec![(0, Some(4.0), Some(40.0)), (1, Some(4.1), Some(41.0))]
        );
    }
}
