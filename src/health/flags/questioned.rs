//! The questioned readings a flag still shows, at watch at most, until a next reading or a
//! person confirms them: a water content that reads like a typing slip, a slower timed stroke
//! and a hotter oil the screen holds as far from the usual. Grading only; what is questioned is the
//! screen's to say.

use super::*;

/// The questioned, unconfirmed readings a flag still shows, at watch at most.
#[derive(Clone, Debug, Default)]
pub struct Questioned {
    pub water: Vec<QuestionedWater>,
    pub strokes: Vec<QuestionedStroke>,
    pub temps: Vec<QuestionedTemp>,
}

/// The water contents graded for the flag: the accepted ones (`water`, trends applied), with
/// each questioned one of the era's samples still unconfirmed put in its place, graded by its
/// limits but never above watch. A reading that may be a typing slip raises no act until a
/// resample or a person confirms it, yet a real ingress that happens to read like one is not
/// hidden meanwhile; the questioned readings take no part in the trend. One that a next
/// sample confirmed counts at that sample where it grades higher.
pub(super) fn water_points(
    water: Vec<Graded>,
    samples: &[SamplePoint],
    questioned: &[QuestionedWater],
    limits: &Limits,
) -> WaterPoints {
    let mut points = water;
    let mut held = Vec::new();
    let mut carried = Vec::new();
    for q in questioned {
        if !samples.iter().any(|s| s.sample_id == q.sample_id) {
            continue; // another era's
        }
        let (state, limit) = grade(limits, LimitKey::WaterPpm, q.ppm);
        match q.confirmed_at {
            None => {
                let Some(s) = samples.iter().find(|s| s.sample_id == q.sample_id) else {
                    continue;
                };
                let (state, limit) = if state == State::Act {
                    let l = limits.get(LimitKey::WaterPpm);
                    (State::Watch, l.watch.or(l.act))
                } else {
                    (state, limit)
                };
                held.push(s.at);
                points.push(Graded {
                    at: s.at,
                    state,
                    value: Some(q.ppm),
                    limit,
                });
            }
            Some(at) => {
                if let Some(p) = points.iter_mut().find(|p| p.at == at) {
                    if state > p.state {
                        carried.push((at, p.value.unwrap_or(0.0)));
                        *p = Graded {
                            at,
                            state,
                            value: Some(q.ppm),
                            limit,
                        };
                    }
                }
            }
        }
    }
    points.sort_by_key(|g| g.at);
    WaterPoints {
        points,
        held,
        carried,
    }
}

/// The water contents graded for the flag (`water_points`).
pub(super) struct WaterPoints {
    pub(super) points: Vec<Graded>,
    /// When the questioned, unconfirmed ones were taken.
    pub(super) held: Vec<DateTime<Utc>>,
    /// The samples graded by a questioned reading they confirmed, with their own water, ppm.
    pub(super) carried: Vec<(DateTime<Utc>, f64)>,
}

/// The lost-flow points with each questioned, slower timed stroke of the era's checks put in
/// its place: the flow it gives at the reference conditions (`Computed::flow_at_reference`)
/// against the baseline's, graded by the lost-flow limits but never above watch. A step such
/// as a relief valve starting to pass oil then shows at once, and acts only when the next
/// check confirms it. Also returns when the held strokes were timed.
pub(super) fn stroke_points<'a>(
    mut points: Vec<Graded>,
    c: &Computed,
    strokes: &'a [QuestionedStroke],
    limits: &Limits,
) -> (Vec<Graded>, Vec<(DateTime<Utc>, &'a QuestionedStroke)>) {
    let base = c
        .baseline
        .get(BaselineIndicator::CorrectedFlow)
        .or(c.baseline.get(BaselineIndicator::EffectiveFlow))
        .map(|b| b.value)
        .filter(|b| *b > 0.0);
    let mut held = Vec::new();
    for q in strokes {
        let Some(p) = c.checks.iter().find(|p| p.check_id == q.check_id) else {
            continue; // another era's
        };
        if points.iter().any(|g| g.at == p.at) {
            continue;
        }
        let Some(lost) = base
            .zip(c.flow_at_reference(p, q.stroke_s, (q.oil_temp, q.pressure)))
            .map(|(b, f)| (1.0 - f / b) * 100.0)
        else {
            continue;
        };
        let (state, limit) = grade(limits, LimitKey::LostFlowPct, lost);
        let (state, limit) = if state == State::Act {
            let l = limits.get(LimitKey::LostFlowPct);
            (State::Watch, l.watch.or(l.act))
        } else {
            (state, limit)
        };
        held.push((p.at, q));
        points.push(Graded {
            at: p.at,
            state,
            value: Some(lost),
            limit,
        });
    }
    points.sort_by_key(|g| g.at);
    (points, held)
}
