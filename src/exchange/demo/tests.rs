//! Tests of the demo shop's generator.

use super::*;

#[test]
fn splitmix64_matches_the_published_reference_stream() {
    // The first five outputs for seed 1234567 published by the Rosetta Code task
    // "Pseudo-random numbers/Splitmix64" (rosettacode.org).
    let mut r = SplitMix64::new(1_234_567);
    assert_eq!(r.next_u64(), 6_457_827_717_110_365_317);
    assert_eq!(r.next_u64(), 3_203_168_211_198_807_973);
    assert_eq!(r.next_u64(), 9_817_491_932_198_370_423);
    assert_eq!(r.next_u64(), 4_593_380_528_125_082_431);
    assert_eq!(r.next_u64(), 16_408_922_859_458_223_821);
}

#[test]
fn generation_is_deterministic_and_the_size_of_the_brief() {
    let a = generate().unwrap();
    let b = generate().unwrap();
    assert_eq!(a, b);
    assert!((6..=10).contains(&a.machines.len()));
    assert!((8..=14).contains(&a.units.len()));
    let first = a.checks.first().unwrap().taken_at.date_naive();
    let last = a.checks.last().unwrap().taken_at.date_naive();
    assert_eq!(last, end_date());
    assert!((last - first).num_days() >= 2 * 364);
}

#[test]
fn the_demo_moved_to_this_week_keeps_every_reading_weekday_and_spacing() {
    let shop = generate().unwrap();
    let latest = |d: &DemoShop| {
        d.checks
            .iter()
            .map(|c| c.taken_at)
            .chain(d.samples.iter().map(|s| s.sampled_at))
            .chain(d.events.iter().map(|e| e.done_at))
            .max()
            .unwrap()
    };
    let last_check = |d: &DemoShop| d.checks.iter().map(|c| c.taken_at).max().unwrap();
    // Wednesday 2027-03-10, 14 weeks and 5 days after the demo's last walk-round on Friday
    // 2026-11-27 (by hand): everything moves 14 weeks, the last round to Friday 2027-03-05.
    let now = at(date(2027, 3, 10), 12, 0);
    let moved = shop.clone().moved_to(now);
    assert_eq!(last_check(&moved).date_naive(), date(2027, 3, 5));
    assert!(latest(&moved) <= now && now - latest(&moved) < Duration::weeks(1));
    assert_eq!(moved.checks.len(), shop.checks.len());
    for (a, b) in shop.checks.iter().zip(&moved.checks) {
        assert_eq!(b.taken_at - a.taken_at, Duration::weeks(14));
        assert_eq!(
            (a.stroke_time, a.reservoir_temp, a.hours),
            (b.stroke_time, b.reservoir_temp, b.hours)
        );
    }
    for (a, b) in shop.samples.iter().zip(&moved.samples) {
        assert_eq!(b.sampled_at - a.sampled_at, Duration::weeks(14));
        assert_eq!(a.water_ppm, b.water_ppm);
    }
    for (a, b) in shop.events.iter().zip(&moved.events) {
        assert_eq!(b.done_at - a.done_at, Duration::weeks(14));
    }
    // Never into the future: on a Friday before that day's round, the round before it.
    let friday_early = at(date(2027, 3, 5), 5, 0);
    assert_eq!(
        last_check(&shop.clone().moved_to(friday_early)).date_naive(),
        date(2027, 2, 26)
    );
    // Within a week of the demo's own last record, or before it, nothing moves.
    assert_eq!(shop.clone().moved_to(latest(&shop)), shop);
    assert_eq!(shop.clone().moved_to(at(date(2025, 1, 1), 0, 0)), shop);
}
