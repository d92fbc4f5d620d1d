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
