//! Tests of the simulated shop: determinism, planted faults and slips.

use super::*;

use crate::model::{Check, Id};
use crate::sim::truth::FaultKind;

fn tiny() -> Params {
    Params {
        set: "tiny".into(),
        healthy: 3,
        faulty_per_kind: 1,
        weeks: 60,
        ..Params::main()
    }
}

#[test]
fn slips_swap_digits_or_move_the_point() {
    // Worked by hand.
    assert_eq!(slipped(34.6, false, 1), Some(3.46));
    assert_eq!(slipped(34.6, false, 0), Some(346.0));
    assert_eq!(slipped(118.0, false, 1), Some(11.8));
    assert_eq!(slipped(34.6, true, 0), Some(43.6));
    assert_eq!(slipped(34.6, true, 1), Some(36.4));
    assert_eq!(slipped(3.92, true, 1), Some(3.29));
    assert_eq!(slipped(5.0, true, 0), None, "one digit cannot be swapped");
    assert_eq!(
        slipped(33.3, true, 0),
        None,
        "equal digits give the same number"
    );
}

#[test]
fn the_same_seed_gives_the_same_shop_and_another_seed_another() {
    let a = simulate(&tiny()).unwrap();
    let b = simulate(&tiny()).unwrap();
    assert_eq!(a, b);
    let c = simulate(&Params { seed: 7, ..tiny() }).unwrap();
    assert_ne!(a.checks, c.checks);
}

#[test]
fn every_fault_is_planted_once_and_reaches_its_limit_after_onset() {
    let shop = simulate(&tiny()).unwrap();
    assert_eq!(shop.units.len(), 3 + 6);
    let mut kinds: Vec<FaultKind> = shop
        .truth
        .units
        .iter()
        .filter_map(|u| u.fault.as_ref().map(|f| f.kind))
        .collect();
    kinds.sort();
    assert_eq!(kinds, FaultKind::ALL.to_vec());
    for u in &shop.truth.units {
        assert_eq!(u.healthy, u.fault.is_none());
        if let Some(f) = &u.fault {
            assert!(f.detectable_week >= f.onset_week, "{u:?}");
            if f.kind.is_step() {
                assert_eq!(f.detectable_week, f.onset_week, "a step is seen at once");
            }
            if let Some(r) = f.repair_week {
                assert!(r > f.detectable_week);
                assert!(f.repair_event.is_some());
            }
        }
    }
}

#[test]
fn a_healthy_unit_reads_like_a_press_unit() {
    let shop = simulate(&tiny()).unwrap();
    let healthy: Vec<Id> = shop
        .units
        .iter()
        .zip(&shop.truth.units)
        .filter(|(_, t)| t.healthy)
        .map(|(u, _)| u.id)
        .collect();
    for id in healthy {
        let checks: Vec<&Check> = shop.checks.iter().filter(|c| c.unit_id == id).collect();
        // About 5 % of weeks missed, and the New Year week.
        assert!(checks.len() >= 50 && checks.len() < 60, "{}", checks.len());
        let rises: Vec<f64> = checks
            .iter()
            .filter_map(|c| Some(c.reservoir_temp?.c() - c.ambient_temp?.c()))
            .collect();
        let mean = rises.iter().sum::<f64>() / rises.len() as f64;
        assert!((4.0..35.0).contains(&mean), "heat rise {mean}");
    }
}

#[test]
fn a_relief_bypass_slows_the_stroke_at_once() {
    let shop = simulate(&Params {
        healthy: 0,
        ..tiny()
    })
    .unwrap();
    let (u, t) = shop
        .units
        .iter()
        .zip(&shop.truth.units)
        .find(|(_, t)| {
            t.fault
                .as_ref()
                .is_some_and(|f| f.kind == FaultKind::ReliefBypass)
        })
        .unwrap();
    let f = t.fault.as_ref().unwrap();
    let onset = shop.truth.weeks[f.onset_week];
    let times = |before: bool| -> f64 {
        let v: Vec<f64> = shop
            .checks
            .iter()
            .filter(|c| c.unit_id == u.id && (c.taken_at.date_naive() < onset) == before)
            .filter(|c| {
                f.repair_week
                    .is_none_or(|r| c.taken_at.date_naive() < shop.truth.weeks[r])
            })
            .filter_map(|c| c.stroke_time.map(|s| s.0))
            .collect();
        let mut v = v;
        v.sort_by(f64::total_cmp);
        v[v.len() / 2]
    };
    // 18 to 28 % of the flow over the relief valve: the stroke takes over 15 % longer.
    assert!(times(false) > 1.15 * times(true));
}
