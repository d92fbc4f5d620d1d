//! Fuzz target: the quantity parser (`2500psi`, `60C`, ...) on any text.
//!
//! Properties: no input panics; whatever parses can be shown in either unit system and read
//! back to the same display (`format ∘ parse ∘ format = format`), and the exact form reads back
//! to the same SI value within one conversion's rounding.
#![no_main]

use libfuzzer_sys::fuzz_target;
use sumpbook::quantity::{self, Kind, Quantity};
use sumpbook::units::UnitSystem;

fuzz_target!(|data: &[u8]| {
    let text = String::from_utf8_lossy(data);
    for kind in Kind::ALL {
        let _ = quantity::parse_as(&text, kind);
    }
    let Ok(q) = quantity::parse(&text) else { return };
    for system in [UnitSystem::Metric, UnitSystem::Us] {
        check_round_trip(q, system);
    }
});

fn check_round_trip(q: Quantity, system: UnitSystem) {
    let shown = quantity::format(q, system);
    match quantity::parse(&shown) {
        Ok(back) => {
            assert_eq!(back.kind(), q.kind(), "{q:?} shown as {shown}");
            assert_eq!(quantity::format(back, system), shown, "{q:?}");
        }
        Err(e) => panic!("{q:?} is shown as `{shown}`, which does not parse: {e}"),
    }
    let exact = quantity::format_exact(q, system);
    match quantity::parse(&exact) {
        Ok(back) => {
            // A temperature goes through an offset of up to 459.67 on its way to °F or °C, so
            // its rounding is relative to that offset rather than to the kelvin value.
            let offset = if q.kind() == Kind::Temperature { 500.0 } else { 0.0 };
            let tol = 8.0 * f64::EPSILON * (q.si().abs() + offset).max(f64::MIN_POSITIVE);
            assert!((back.si() - q.si()).abs() <= tol, "{q:?} -> `{exact}` -> {back:?}");
        }
        Err(e) => panic!("{q:?} is written as `{exact}`, which does not parse: {e}"),
    }
}
