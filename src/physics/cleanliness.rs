//! Fluid cleanliness by ISO 4406: scale numbers from particle counts (Table 1 lookup), the
//! three-part code for ≥4/≥6/≥14 µm(c), written codes, targets by the most sensitive
//! component and pressure, and range numbers above target.
//!
//! Pure functions; counts are particles per mL. The targets are *common practice* and come
//! in a [`TargetTable`] so that a shop can set its own.

use std::fmt;
use std::str::FromStr;

use serde::{Deserialize, Deserializer, Serialize, Serializer};

use super::PhysicsError;
use crate::names::text_enum;
use crate::units::Pressure;

text_enum!(
    /// The most contamination-sensitive component of a circuit; sets the cleanliness target
    /// (a unit's record carries it).
    SensitiveComponent {
        ServoValve = "servo_valve",
        ProportionalValve = "proportional_valve",
        PistonPumpVariable = "piston_pump_variable",
        PistonPumpFixed = "piston_pump_fixed",
        VanePump = "vane_pump",
        GearPump = "gear_pump",
        Cylinder = "cylinder",
    }
);

/// ISO 4406 Table 1: upper limit (inclusive) of particles per mL for scale numbers 0 to 28.
/// Scale number n covers counts above `TABLE1_UPPER[n - 1]` up to and including
/// `TABLE1_UPPER[n]`. The limits are the table's rounded values, not powers of two.
pub const TABLE1_UPPER: [f64; 29] = [
    0.01,
    0.02,
    0.04,
    0.08,
    0.16,
    0.32,
    0.64,
    1.3,
    2.5,
    5.0,
    10.0,
    20.0,
    40.0,
    80.0,
    160.0,
    320.0,
    640.0,
    1_300.0,
    2_500.0,
    5_000.0,
    10_000.0,
    20_000.0,
    40_000.0,
    80_000.0,
    160_000.0,
    320_000.0,
    640_000.0,
    1_300_000.0,
    2_500_000.0,
];

/// Particles counted in a size below which the scale number is a lower bound, written "≥".
pub const MIN_COUNTED: u64 = 20;

/// An ISO 4406 scale number.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum Scale {
    /// 0 to 28.
    Number(u8),
    /// More than 2 500 000 per mL, written ">28".
    Above28,
}

impl Scale {
    /// 0–28, and 29 for ">28", for comparisons and differences.
    pub fn rank(self) -> i32 {
        match self {
            Scale::Number(n) => i32::from(n),
            Scale::Above28 => 29,
        }
    }

    /// Range of counts per mL: (more than, up to and including). `None` above for ">28".
    pub fn limits(self) -> (f64, Option<f64>) {
        match self {
            Scale::Number(0) => (0.0, Some(TABLE1_UPPER[0])),
            Scale::Number(n) => {
                let n = usize::from(n.min(28));
                (TABLE1_UPPER[n - 1], Some(TABLE1_UPPER[n]))
            }
            Scale::Above28 => (TABLE1_UPPER[28], None),
        }
    }
}

impl fmt::Display for Scale {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Scale::Number(n) => write!(f, "{n}"),
            Scale::Above28 => f.write_str(">28"),
        }
    }
}

/// Scale number of a count per mL by ISO 4406 Table 1 (limits inclusive above).
pub fn scale_number(count_per_ml: f64) -> Result<Scale, PhysicsError> {
    super::non_negative("a particle count", count_per_ml, |v| format!("{v} per mL"))?;
    Ok(TABLE1_UPPER
        .iter()
        .position(|&upper| count_per_ml <= upper)
        .map_or(Scale::Above28, |n| Scale::Number(n as u8)))
}

/// One size of a code: a scale number, or `-` (not measured); `at_least` marks "≥", a scale
/// from fewer than 20 particles actually counted.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub struct CodePart {
    pub scale: Option<Scale>,
    pub at_least: bool,
}

impl fmt::Display for CodePart {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self.scale {
            None => f.write_str("-"),
            Some(s) if self.at_least => write!(f, "≥{s}"),
            Some(s) => write!(f, "{s}"),
        }
    }
}

/// An ISO 4406 code for ≥4, ≥6 and ≥14 µm(c), e.g. `18/16/13`, `-/16/13`, `≥19/≥16/12`.
/// Serialised as its written form.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub struct Iso4406Code {
    pub parts: [CodePart; 3],
}

impl Iso4406Code {
    /// A plain code from three scale numbers, e.g. `[18, 16, 13]`.
    pub fn new(scales: [u8; 3]) -> Result<Iso4406Code, PhysicsError> {
        let written = format!("{}/{}/{}", scales[0], scales[1], scales[2]);
        let mut parts = [CodePart {
            scale: None,
            at_least: false,
        }; 3];
        for (part, &n) in parts.iter_mut().zip(&scales) {
            if n > 28 {
                return Err(PhysicsError::BadCode {
                    input: written,
                    reason: "scale numbers run from 0 to 28 (write >28 above)".into(),
                });
            }
            part.scale = Some(Scale::Number(n));
        }
        let code = Iso4406Code { parts };
        code.check_order(&written)?;
        Ok(code)
    }

    /// The scale numbers, `None` where not measured.
    pub fn scales(&self) -> [Option<Scale>; 3] {
        self.parts.map(|p| p.scale)
    }

    /// A smaller size's number must not be below a larger size's: counts are cumulative. A "≥"
    /// number on the smaller size is only a lower bound and cannot contradict.
    fn check_order(&self, written: &str) -> Result<(), PhysicsError> {
        for i in 0..3 {
            for j in i + 1..3 {
                let (a, b) = (self.parts[i], self.parts[j]);
                if let (Some(sa), Some(sb)) = (a.scale, b.scale) {
                    if !a.at_least && sa < sb {
                        return Err(PhysicsError::CountsRisingWithSize {
                            counts: written.to_string(),
                        });
                    }
                }
            }
        }
        Ok(())
    }
}

impl fmt::Display for Iso4406Code {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}/{}/{}", self.parts[0], self.parts[1], self.parts[2])
    }
}

impl FromStr for Iso4406Code {
    type Err = PhysicsError;

    /// Reads `18/16/13`, `-/16/13`, `≥19/16/13` (also `>=19`), `>28/...`, with or without
    /// spaces around the slashes.
    fn from_str(input: &str) -> Result<Self, PhysicsError> {
        let bad = |reason: &str| PhysicsError::BadCode {
            input: input.trim().to_string(),
            reason: reason.to_string(),
        };
        let pieces: Vec<&str> = input.trim().split('/').map(str::trim).collect();
        if pieces.len() != 3 {
            return Err(bad("it needs three parts, for ≥4, ≥6 and ≥14 µm(c)"));
        }
        let mut parts = [CodePart {
            scale: None,
            at_least: false,
        }; 3];
        for (part, piece) in parts.iter_mut().zip(&pieces) {
            if matches!(*piece, "-" | "–" | "—") {
                continue;
            }
            let (at_least, rest) = if let Some(r) = piece.strip_prefix('≥') {
                (true, r)
            } else if let Some(r) = piece.strip_prefix(">=") {
                (true, r)
            } else {
                (false, *piece)
            };
            let rest = rest.trim();
            if rest == ">28" {
                *part = CodePart {
                    scale: Some(Scale::Above28),
                    at_least,
                };
                continue;
            }
            if rest.is_empty() || !rest.bytes().all(|b| b.is_ascii_digit()) {
                return Err(bad(&format!("`{piece}` is not a scale number")));
            }
            match rest.parse::<u8>() {
                Ok(n) if n <= 28 => {
                    *part = CodePart {
                        scale: Some(Scale::Number(n)),
                        at_least,
                    }
                }
                _ => {
                    return Err(bad(&format!(
                        "`{piece}`: scale numbers run from 0 to 28 (write >28 above)"
                    )))
                }
            }
        }
        if parts.iter().all(|p| p.scale.is_none()) {
            return Err(bad("no size has a scale number"));
        }
        let code = Iso4406Code { parts };
        code.check_order(input.trim())?;
        Ok(code)
    }
}

impl Serialize for Iso4406Code {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.collect_str(self)
    }
}

impl<'de> Deserialize<'de> for Iso4406Code {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        let text = String::deserialize(d)?;
        text.parse().map_err(serde::de::Error::custom)
    }
}

/// The code of counts per mL at ≥4, ≥6 and ≥14 µm(c). `counted`, the particles actually
/// counted in each size, marks with "≥" each size where fewer than 20 were counted.
/// Refuses negative counts and counts rising with size.
pub fn code_from_counts(
    counts_per_ml: [f64; 3],
    counted: Option<[u64; 3]>,
) -> Result<Iso4406Code, PhysicsError> {
    let mut parts = [CodePart {
        scale: None,
        at_least: false,
    }; 3];
    for (part, &c) in parts.iter_mut().zip(&counts_per_ml) {
        part.scale = Some(scale_number(c)?);
    }
    let rising = counts_per_ml[1] > counts_per_ml[0] || counts_per_ml[2] > counts_per_ml[1];
    let counted_rising = counted.is_some_and(|n| n[1] > n[0] || n[2] > n[1]);
    if rising || counted_rising {
        let shown = match counted {
            Some(n) if counted_rising => format!("{}, {}, {} particles counted", n[0], n[1], n[2]),
            _ => format!(
                "{}, {}, {} per mL",
                super::num(counts_per_ml[0]),
                super::num(counts_per_ml[1]),
                super::num(counts_per_ml[2])
            ),
        };
        return Err(PhysicsError::CountsRisingWithSize { counts: shown });
    }
    if let Some(n) = counted {
        for (part, &k) in parts.iter_mut().zip(&n) {
            part.at_least = k < MIN_COUNTED;
        }
    }
    Ok(Iso4406Code { parts })
}

/// log2 of a count per mL, the scale on which particle counts trend (each ISO 4406 range
/// number is about one doubling). `None` for counts that are not positive.
pub fn log2_count(count_per_ml: f64) -> Option<f64> {
    (count_per_ml > 0.0 && count_per_ml.is_finite()).then(|| count_per_ml.log2())
}

/// Range numbers of `code` above `target`, per size (negative: cleaner than the target);
/// `None` where either was not measured. With a "≥" mark the difference is a lower bound.
pub fn ranges_above(code: &Iso4406Code, target: &Iso4406Code) -> [Option<i32>; 3] {
    let mut out = [None; 3];
    for (o, (c, t)) in out.iter_mut().zip(code.parts.iter().zip(&target.parts)) {
        if let (Some(c), Some(t)) = (c.scale, t.scale) {
            *o = Some(c.rank() - t.rank());
        }
    }
    out
}

/// Cleanliness targets: a code per most sensitive component at working pressures up to
/// `high_pressure_above`, and `high_pressure_step` codes cleaner on every size above it.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct TargetTable {
    pub base: Vec<(SensitiveComponent, [u8; 3])>,
    pub high_pressure_above: Pressure,
    pub high_pressure_step: u8,
}

/// Base targets up to 140 bar (docs/engineering.md, "Cleanliness targets"), *common practice,
/// from memory of typical filter-maker guidance*. An exhaustive match, so a new component
/// cannot go without one.
fn default_base_target(component: SensitiveComponent) -> [u8; 3] {
    use SensitiveComponent::*;
    match component {
        ServoValve => [16, 14, 11],
        ProportionalValve | PistonPumpVariable => [17, 15, 12],
        PistonPumpFixed => [18, 16, 13],
        VanePump | GearPump | Cylinder => [19, 17, 14],
    }
}

/// A code of three plain scale numbers, each at most 28 (callers guarantee it).
fn plain_code(scales: [u8; 3]) -> Iso4406Code {
    Iso4406Code {
        parts: scales.map(|n| CodePart {
            scale: Some(Scale::Number(n.min(28))),
            at_least: false,
        }),
    }
}

impl Default for TargetTable {
    /// docs/engineering.md, "Cleanliness targets": servo valve 16/14/11; proportional valve
    /// and variable piston pump 17/15/12; fixed piston pump 18/16/13; vane or gear pump,
    /// cylinders and standard valves 19/17/14; above 140 bar one code cleaner on each size.
    fn default() -> Self {
        TargetTable {
            base: SensitiveComponent::ALL
                .iter()
                .map(|&c| (c, default_base_target(c)))
                .collect(),
            high_pressure_above: Pressure::from_bar(140.0),
            high_pressure_step: 1,
        }
    }
}

fn stepped(base: [u8; 3], step: u8, pressure: Option<Pressure>, above: Pressure) -> [u8; 3] {
    let step = match pressure {
        Some(p) if p.si() > above.si() => step,
        _ => 0,
    };
    base.map(|n| n.saturating_sub(step))
}

impl TargetTable {
    /// The target for a circuit whose most sensitive component is `component`, working at
    /// `pressure` (`None`: not known, the base table applies). Fails for a component the
    /// table leaves out or a code above 28.
    pub fn target(
        &self,
        component: SensitiveComponent,
        pressure: Option<Pressure>,
    ) -> Result<Iso4406Code, PhysicsError> {
        let base = self
            .base
            .iter()
            .find(|(c, _)| *c == component)
            .map(|&(_, code)| code)
            .ok_or_else(|| {
                PhysicsError::Data(format!(
                    "no cleanliness target for `{component}` in the target table"
                ))
            })?;
        Iso4406Code::new(stepped(
            base,
            self.high_pressure_step,
            pressure,
            self.high_pressure_above,
        ))
    }
}

/// The default target (see [`TargetTable::default`]) for `component` at `pressure`.
pub fn target_for(component: SensitiveComponent, pressure: Option<Pressure>) -> Iso4406Code {
    let defaults = TargetTable::default();
    plain_code(stepped(
        default_base_target(component),
        defaults.high_pressure_step,
        pressure,
        defaults.high_pressure_above,
    ))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn codes_read_and_write() {
        for text in [
            "18/16/13",
            "-/16/13",
            "≥19/16/13",
            "≥19/≥16/≥12",
            ">28/>28/25",
            "0/0/0",
        ] {
            assert_eq!(text.parse::<Iso4406Code>().unwrap().to_string(), text);
        }
        assert_eq!(
            ">=19/16/13".parse::<Iso4406Code>().unwrap().to_string(),
            "≥19/16/13"
        );
        assert_eq!(
            " 18 / 16 / 13 ".parse::<Iso4406Code>().unwrap().to_string(),
            "18/16/13"
        );
        for bad in [
            "18/16",
            "18/16/13/11",
            "18/x/13",
            "18/29/13",
            "-/-/-",
            "",
            "18/-16/13",
            "13/16/18",
        ] {
            assert!(bad.parse::<Iso4406Code>().is_err(), "{bad}");
        }
        // A "≥" number on a smaller size is a lower bound and may sit below a larger size's.
        assert!("≥12/14/10".parse::<Iso4406Code>().is_ok());
        let e = "13/16/18".parse::<Iso4406Code>().unwrap_err();
        assert!(matches!(e, PhysicsError::CountsRisingWithSize { .. }));
    }

    #[test]
    fn serde_uses_the_written_form() {
        let code: Iso4406Code = "≥19/16/-".parse().unwrap();
        let json = serde_json::to_string(&code).unwrap();
        assert_eq!(json, "\"≥19/16/-\"");
        assert_eq!(serde_json::from_str::<Iso4406Code>(&json).unwrap(), code);
        assert!(serde_json::from_str::<Iso4406Code>("\"19/x/1\"").is_err());
    }

    #[test]
    fn counts_rising_with_size_are_refused() {
        let e = code_from_counts([100.0, 200.0, 10.0], None).unwrap_err();
        assert!(matches!(e, PhysicsError::CountsRisingWithSize { .. }));
        assert!(e.to_string().contains("must not rise"), "{e}");
        assert!(code_from_counts([100.0, 50.0, 60.0], None).is_err());
        assert!(code_from_counts([100.0, 50.0, 10.0], Some([30, 40, 5])).is_err());
        assert!(code_from_counts([-1.0, 0.0, 0.0], None).is_err());
        assert!(code_from_counts([f64::NAN, 0.0, 0.0], None).is_err());
        // Equal counts are possible: no particles between 4 and 6 µm.
        assert!(code_from_counts([100.0, 100.0, 10.0], None).is_ok());
    }

    #[test]
    fn ranges_and_targets() {
        let code: Iso4406Code = "20/17/13".parse().unwrap();
        let target = target_for(
            SensitiveComponent::PistonPumpFixed,
            Some(Pressure::from_bar(100.0)),
        );
        assert_eq!(target.to_string(), "18/16/13");
        assert_eq!(ranges_above(&code, &target), [Some(2), Some(1), Some(0)]);
        let partial: Iso4406Code = "-/15/14".parse().unwrap();
        assert_eq!(ranges_above(&partial, &target), [None, Some(-1), Some(1)]);
        assert_eq!(log2_count(1024.0), Some(10.0));
        assert_eq!(log2_count(0.0), None);
    }
}
