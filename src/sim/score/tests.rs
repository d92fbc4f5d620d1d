//! Tests of the scoring on hand-made histories and truths.

use super::*;
use crate::sim::truth::{Fault, Slip};
use chrono::NaiveDate;

pub(super) fn wf(level: u8) -> WeekFlags {
    WeekFlags {
        level,
        act_kinds: if level == ACT {
            vec!["lost_flow".into()]
        } else {
            vec![]
        },
        watch_kinds: if level == WATCH {
            vec!["lost_flow".into()]
        } else {
            vec![]
        },
    }
}

#[test]
fn episodes_are_runs_at_or_above_a_level() {
    // Worked by hand: 0 1 2 2 0 1 0 2 (ending at act).
    let l = [0, 1, 2, 2, 0, 1, 0, 2];
    assert_eq!(episodes(&l, ACT), vec![(2, 2), (7, 1)]);
    assert_eq!(episodes(&l, WATCH), vec![(1, 3), (5, 1), (7, 1)]);
    assert_eq!(episodes(&[0, 0], WATCH), vec![]);
}

#[test]
fn median_of_odd_and_even_counts() {
    assert_eq!(median(&[3.0, 1.0, 2.0]), Some(2.0));
    assert_eq!(median(&[4.0, 1.0, 2.0, 3.0]), Some(2.5));
    assert_eq!(
        median(&[1.0, f64::INFINITY, f64::INFINITY]),
        Some(f64::INFINITY)
    );
    assert_eq!(median(&[]), None);
}

#[test]
fn the_fixed_rule_on_a_hand_made_history() {
    // First four strokes 4.0, 4.2, 3.8, 4.0: mean 4.0 s, act above 4.6 s.
    let r = UnitReadings {
        checks: vec![
            (0, Some(4.0), Some(40.0)),
            (1, Some(4.2), Some(45.0)),
            (2, Some(3.8), Some(61.0)),
            (3, Some(4.0), Some(50.0)),
            (4, Some(4.5), Some(50.0)),
            (5, Some(4.8), Some(71.0)),
            // Week 6 missed: week 6 still sees week 5's reading.
            (7, Some(4.1), Some(50.0)),
        ],
        samples: vec![
            (1, Some(120.0), Some(46.0), "17/15/12".parse().ok()),
            (5, Some(510.0), Some(41.3), "19/16/13".parse().ok()),
            (8, Some(100.0), Some(41.5), "18/16/12".parse().ok()),
        ],
        kv40_new: Some(46.0),
        target: "17/15/12".parse().ok(),
    };
    let t = fixed_rule(&r, 9);
    let levels: Vec<u8> = t.iter().map(|w| w.level).collect();
    // 61 °C in week 2 is watch; 4.5 s is 12.5 % over 4.0 s, not act; week 5: 4.8 s,
    // 71 °C, 510 ppm, KV40 41.3 (−10.2 %), 19/16/13 (2 over on ≥4 µm) are all act.
    assert_eq!(levels, vec![0, 0, 1, 0, 0, 2, 2, 2, 0]);
    let mut k = t[5].act_kinds.clone();
    k.sort();
    assert_eq!(
        k,
        vec!["cleanliness", "kv40", "oil_temp", "stroke_time", "water"]
    );
    // Week 7: the check is fine again but the sample of week 5 is still the latest.
    let mut k7 = t[7].act_kinds.clone();
    k7.sort();
    assert_eq!(k7, vec!["cleanliness", "kv40", "water"]);
    // Week 8: KV40 41.5 is −9.8 %, 18/16/12 is 1 over: steady.
    assert_eq!(t[8].act_kinds, Vec::<String>::new());
}

#[test]
fn a_fixed_rule_stroke_reference_needs_four_strokes() {
    let r = UnitReadings {
        checks: vec![(0, Some(4.0), None), (1, Some(9.0), None)],
        ..UnitReadings::default()
    };
    assert!(fixed_rule(&r, 2).iter().all(|w| w.level == NONE));
}

/// A unit with a planted fault of `kind` from `onset`, detectable in `detectable`, repaired
/// in `repair` (left in place with `None`).
pub(super) fn with_fault(
    unit: &str,
    kind: FaultKind,
    (onset, detectable): (usize, usize),
    repair: Option<(usize, &str)>,
) -> UnitTruth {
    UnitTruth {
        unit: unit.into(),
        healthy: false,
        fault: Some(Fault {
            kind,
            onset_week: onset,
            detectable_week: detectable,
            repair_week: repair.map(|r| r.0),
            repair_event: repair.map(|r| r.1.to_string()),
            twin: vec![],
        }),
    }
}

pub(super) fn truth_of(units: Vec<UnitTruth>, slips: Vec<Slip>, weeks: usize) -> Truth {
    Truth {
        set: "t".into(),
        seed: 0,
        weeks: (0..weeks)
            .map(|w| {
                NaiveDate::from_ymd_opt(2025, 1, 6).unwrap() + chrono::Duration::weeks(w as i64)
            })
            .collect(),
        units,
        slips,
    }
}

#[test]
fn scores_of_a_hand_made_fleet() {
    let healthy = UnitTruth {
        unit: "H".into(),
        healthy: true,
        fault: None,
    };
    let faulty = UnitTruth {
        unit: "F".into(),
        healthy: false,
        fault: Some(Fault {
            kind: FaultKind::PumpWear,
            onset_week: 3,
            detectable_week: 5,
            repair_week: Some(8),
            repair_event: Some("rebuild".into()),
            twin: vec![],
        }),
    };
    let slip = Slip {
        unit: "H".into(),
        file: "checks".into(),
        week: 6,
        at: String::new(),
        field: "stroke_time_s".into(),
        intended: 4.1,
        typed: 41.0,
        how: "slipped_decimal".into(),
    };
    let truth = truth_of(vec![healthy.clone(), faulty.clone()], vec![slip], 10);
    // Healthy: act weeks 1–2 (an episode of 2), watch week 4, act week 7 (the week after
    // the slip). Faulty: watch from week 4, act weeks 6–7, repaired in week 8 (the
    // check of week 8 is missed), clear from week 9.
    let h: Timeline = [0, 2, 2, 0, 1, 0, 0, 2, 0, 0].map(wf).to_vec();
    let f: Timeline = [0, 0, 0, 0, 1, 1, 2, 2, 2, 0].map(wf).to_vec();
    let facts = vec![
        UnitFacts {
            truth: &truth.units[0],
            checked: vec![true; 10],
        },
        UnitFacts {
            truth: &truth.units[1],
            checked: vec![true, true, true, true, true, true, true, true, false, true],
        },
    ];
    let s = score("test", &truth, &facts, &[h, f]);
    assert_eq!(s.healthy_unit_weeks, 10);
    assert_eq!(s.act_episodes, 2);
    assert_eq!(s.flag_episodes, 3);
    // 10 unit-weeks = 10 / 52.18 unit-years: 2 episodes → 1043.6 per 100 unit-years.
    assert!((s.act_per_100_unit_years - 2.0 / (10.0 / (365.25 / 7.0)) * 100.0).abs() < 1e-9);
    assert!((s.act_week_share - 0.3).abs() < 1e-12);
    assert!((s.watch_week_share - 0.1).abs() < 1e-12);
    assert_eq!(s.act_length_worst, Some(2));
    assert_eq!(s.act_length_median, Some(1.5));
    assert_eq!(s.false_act_kinds.get("lost_flow"), Some(&2));
    assert_eq!(s.false_act_weeks_by_kind.get("lost_flow"), Some(&3));
    // The act starting in week 7 follows the slip of week 6.
    assert_eq!(s.slip_acts, 1);
    // Pump wear: act in week 6, detectable 5 → delay 1; watch at week 4 → −1; two checks
    // (weeks 5 and 6) up to act.
    let d = &s.detections[0];
    assert_eq!(
        (d.act_delay, d.watch_delay, d.checks_to_act),
        (Some(1), Some(-1), Some(2))
    );
    // Repaired in week 8 while at act; clear in week 9: checks in weeks 8 (missed) and 9.
    assert_eq!(s.repairs_flagged, 1);
    assert_eq!(s.checks_to_clear, vec![Some(1)]);
    let pw = &s.faults[0];
    assert_eq!((pw.planted, pw.found, pw.median_delay), (1, 1, Some(1.0)));
}

#[test]
fn after_a_repair_only_the_flags_the_fault_can_raise_are_waited_for() {
    let faulty = UnitTruth {
        unit: "F".into(),
        healthy: false,
        fault: Some(Fault {
            kind: FaultKind::ReliefBypass,
            onset_week: 2,
            detectable_week: 2,
            repair_week: Some(4),
            repair_event: Some("repair".into()),
            twin: vec![],
        }),
    };
    let truth = truth_of(vec![faulty], vec![], 8);
    let facts = vec![UnitFacts {
        truth: &truth.units[0],
        checked: vec![true; 8],
    }];
    // Lost flow at act in weeks 2–3, gone at the repair's own check (week 4: one check); a
    // KV40 watch from a sample taken in week 3 stays to the end: its cause is in the oil,
    // not the valve.
    let mut tl: Timeline = [0, 0, 2, 2, 1, 1, 1, 1].map(wf).to_vec();
    for w in tl.iter_mut().skip(3) {
        w.watch_kinds = vec!["viscosity".into()];
    }
    let s = score("e", &truth, &facts, &[tl]);
    assert_eq!(s.repairs_flagged, 1);
    assert_eq!(s.checks_to_clear, vec![Some(1)]);
    assert_eq!(s.checks_to_clear_act, vec![Some(1)]);
    assert_eq!(s.checks_to_clear_any, vec![None]);
    // A fault is found only by a flag it can raise: a dirt ingress under a summer's
    // stroke-time act is not found by it.
    let dirt = with_fault("D", FaultKind::ParticleIngress, (1, 3), None);
    let truth = truth_of(vec![dirt], vec![], 6);
    let facts = vec![UnitFacts {
        truth: &truth.units[0],
        checked: vec![true; 6],
    }];
    let mut tl: Timeline = [0, 2, 2, 0, 0, 2].map(wf).to_vec();
    tl[1].act_kinds = vec!["stroke_time".into()];
    tl[2].act_kinds = vec!["stroke_time".into()];
    tl[5].act_kinds = vec!["cleanliness".into()];
    let s = score("f", &truth, &facts, &[tl]);
    assert_eq!(s.detections[0].act_delay, Some(2));
    assert!(FaultKind::ReliefBypass.raises("drift"));
    assert!(!FaultKind::ReliefBypass.raises("viscosity"));
    assert!(FaultKind::ViscosityLoss.raises("kv40"));
}

#[test]
fn a_fault_never_at_act_is_missed_and_fails_its_target() {
    let faulty = UnitTruth {
        unit: "F".into(),
        healthy: false,
        fault: Some(Fault {
            kind: FaultKind::CoolerFouling,
            onset_week: 1,
            detectable_week: 2,
            repair_week: None,
            repair_event: None,
            twin: vec![],
        }),
    };
    let truth = truth_of(vec![faulty], vec![], 5);
    let facts = vec![UnitFacts {
        truth: &truth.units[0],
        checked: vec![true; 5],
    }];
    let never: Timeline = [0, 0, 1, 1, 1].map(wf).to_vec();
    let early: Timeline = [0, 0, 2, 2, 2].map(wf).to_vec();
    let e = score("e", &truth, &facts, &[never]);
    let f = score("f", &truth, &facts, &[early]);
    assert_eq!(e.faults[0].found, 0);
    assert_eq!(e.faults[0].median_delay, None);
    let v = verdicts(&e, &f);
    let found = v
        .iter()
        .find(|v| v.target.starts_with("every planted"))
        .unwrap();
    assert!(!found.pass);
    let cooler = v
        .iter()
        .find(|v| v.target.starts_with("cooler_fouling"))
        .unwrap();
    assert!(!cooler.pass);
    // And the other way round both pass.
    let v = verdicts(&f, &e);
    assert!(
        v.iter()
            .find(|v| v.target.starts_with("cooler_fouling"))
            .unwrap()
            .pass
    );
}

/// A relief valve bypass from `onset` repaired in `repair`, on a unit checked in the weeks
/// of `checked` (of 10).
fn bypass(unit: &str, onset: usize, repair: usize) -> UnitTruth {
    with_fault(
        unit,
        FaultKind::ReliefBypass,
        (onset, onset),
        Some((repair, "repair")),
    )
}

#[test]
fn a_step_repaired_after_one_check_is_found_at_watch_and_one_never_checked_is_left_out() {
    // A: onset week 3, weeks 3 and 4 missed, one check (week 5) before the repair in week 6:
    // at watch on it. B: onset week 3, repaired in week 5 with weeks 3 and 4 missed: no check
    // at all. C: onset week 2, checked every week, at act on its second check (week 3).
    let truth = truth_of(
        vec![bypass("A", 3, 6), bypass("B", 3, 5), bypass("C", 2, 8)],
        vec![],
        10,
    );
    let gaps = vec![true, true, true, false, false, true, true, true, true, true];
    let facts = vec![
        UnitFacts {
            truth: &truth.units[0],
            checked: gaps.clone(),
        },
        UnitFacts {
            truth: &truth.units[1],
            checked: gaps,
        },
        UnitFacts {
            truth: &truth.units[2],
            checked: vec![true; 10],
        },
    ];
    let a: Timeline = [0, 0, 0, 0, 0, 1, 0, 0, 0, 0].map(wf).to_vec();
    let b: Timeline = [0; 10].map(wf).to_vec();
    let c: Timeline = [0, 0, 1, 2, 2, 2, 2, 2, 0, 0].map(wf).to_vec();
    let s = score("s", &truth, &facts, &[a.clone(), b.clone(), c.clone()]);
    let chances: Vec<Chance> = s.detections.iter().map(|d| d.chance).collect();
    assert_eq!(
        chances,
        vec![Chance::OneCheck, Chance::NoCheck, Chance::Judged]
    );
    let f = &s.faults[0];
    assert_eq!(
        (
            f.planted,
            f.judged,
            f.found,
            f.one_check,
            f.one_check_at_watch,
            f.no_check
        ),
        (3, 1, 1, 1, 1, 1)
    );
    // Only the judged fault counts in the delays: act in week 3, onset 2 → +1, second check.
    assert_eq!(
        (f.median_delay, f.worst_checks_to_act),
        (Some(1.0), Some(2))
    );
    let v = verdicts(&s, &s);
    let found = v
        .iter()
        .find(|v| v.target.starts_with("every planted"))
        .unwrap();
    assert!(found.pass, "{found:?}");
    assert!(found.figure.contains("1 / 1 at watch"), "{found:?}");
    // The one check not at watch: the target is missed.
    let quiet = score("q", &truth, &facts, &[b.clone(), b, c]);
    let v = verdicts(&quiet, &quiet);
    assert!(
        !v.iter()
            .find(|v| v.target.starts_with("every planted"))
            .unwrap()
            .pass
    );
    // A developing fault with a single check is judged as any other.
    assert_eq!(Chance::of(FaultKind::PumpWear, 1), Chance::Judged);
    assert_eq!(Chance::of(FaultKind::PumpWear, 0), Chance::NoCheck);
}
