//! Column mapping: which of sumpbook's columns each column of someone else's CSV file is (a
//! lab's "Visc @ 40C (cSt)" is `kv40_cst`), proposed from the words of the header and the units
//! they name, corrected by the user and kept as a named profile; and the order of a file's
//! dates (`11/20/2026`). Pure: it must not read files, the store or the screen.
//!
//! The proposal from a header's words is in `propose`, the order of a file's dates in `dates`.

use crate::exchange::csv_in::specs;
use crate::exchange::FileKind;

mod dates;
mod propose;

pub use dates::{guess_date_order, iso_date_text, DateOrder};
pub use propose::{propose, propose_any};

/// What one column of a file is taken as.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Target {
    /// One of sumpbook's column names for the kind (`kv40_cst`, `reservoir_temp_f`, ...).
    Column(&'static str),
    /// Left out of the import on purpose.
    Ignore,
}

/// The word for an ignored column, on the command line and in a stored profile.
pub const IGNORE: &str = "ignore";

/// A file's columns, each taken as one of sumpbook's, ignored, or not decided yet.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Mapping {
    pub kind: FileKind,
    /// Every column of the file's header, in file order, with what it is taken as.
    pub columns: Vec<(String, Option<Target>)>,
    pub dates: DateOrder,
}

impl Mapping {
    /// What the file column named `column` is taken as; `None` when it is not in the mapping
    /// or not decided.
    pub fn target(&self, column: &str) -> Option<&Target> {
        let c = column.trim();
        self.columns
            .iter()
            .find(|(name, _)| name.trim() == c)
            .and_then(|(_, t)| t.as_ref())
    }

    /// Sets what `column` is taken as from a word: one of the kind's column names or `ignore`.
    pub fn set(&mut self, column: &str, target: &str) -> Result<(), String> {
        let t = parse_target(self.kind, target)?;
        let c = column.trim();
        match self.columns.iter_mut().find(|(name, _)| name.trim() == c) {
            Some(slot) => {
                slot.1 = Some(t);
                Ok(())
            }
            None => Err(format!(
                "the file has no column `{c}`; its columns are: {}",
                self.columns
                    .iter()
                    .map(|(n, _)| n.as_str())
                    .collect::<Vec<_>>()
                    .join(", ")
            )),
        }
    }

    /// The columns neither mapped nor ignored.
    pub fn undecided(&self) -> Vec<&str> {
        self.columns
            .iter()
            .filter(|(_, t)| t.is_none())
            .map(|(n, _)| n.as_str())
            .collect()
    }

    /// Whether every column a file of its kind needs is mapped.
    pub fn has_required(&self) -> bool {
        let all = specs(self.kind);
        crate::exchange::csv_in::required_fields(self.kind)
            .iter()
            .all(|field| {
                self.columns.iter().any(|(_, t)| {
                    matches!(t, Some(Target::Column(c))
                        if all.iter().any(|s| s.name == *c && s.field == *field))
                })
            })
    }

    /// Everything that keeps the mapping from being used: undecided columns, one quantity
    /// given by two columns, a required column not mapped. Empty when it can be used.
    pub fn problems(&self) -> Vec<String> {
        let mut out = Vec::new();
        let undecided = self.undecided();
        if !undecided.is_empty() {
            out.push(format!(
                "not mapped yet (map each or ignore it): {}",
                undecided.join(", ")
            ));
        }
        let all = specs(self.kind);
        let mut seen: Vec<(&str, &str)> = Vec::new();
        for (name, t) in &self.columns {
            let Some(Target::Column(col)) = t else {
                continue;
            };
            let Some(spec) = all.iter().find(|s| s.name == *col) else {
                continue;
            };
            match seen.iter().find(|(f, _)| *f == spec.field) {
                Some((_, other)) => out.push(format!(
                    "`{other}` and `{name}` are both mapped to the same quantity ({}); ignore one",
                    spec.field
                )),
                None => seen.push((spec.field, name.as_str())),
            }
        }
        for field in crate::exchange::csv_in::required_fields(self.kind) {
            if !seen.iter().any(|(f, _)| f == field) {
                let names: Vec<&str> = all
                    .iter()
                    .filter(|s| s.field == *field)
                    .map(|s| s.name)
                    .collect();
                out.push(format!(
                    "no column is mapped to {}, which a {} file needs",
                    names.join(" or "),
                    self.kind
                ));
            }
        }
        out
    }

    /// One line per column, `File column → name` (or `ignored`, `not mapped`).
    pub fn lines(&self) -> Vec<String> {
        self.columns
            .iter()
            .map(|(name, t)| {
                let to = match t {
                    Some(Target::Column(c)) => (*c).to_string(),
                    Some(Target::Ignore) => "ignored".to_string(),
                    None => "NOT MAPPED".to_string(),
                };
                format!("{name} → {to}")
            })
            .collect()
    }
}

/// A target from a word: one of the kind's column names, or `ignore`.
pub fn parse_target(kind: FileKind, word: &str) -> Result<Target, String> {
    let w = word.trim();
    if w.eq_ignore_ascii_case(IGNORE) {
        return Ok(Target::Ignore);
    }
    specs(kind)
        .iter()
        .find(|s| s.name == w)
        .map(|s| Target::Column(s.name))
        .ok_or_else(|| {
            format!(
                "`{w}` is not a column of a {kind} file; the columns are: {}, or {IGNORE}",
                column_names(kind).join(", ")
            )
        })
}

/// sumpbook's column names for `kind`, in the order files list them.
pub fn column_names(kind: FileKind) -> Vec<&'static str> {
    specs(kind).iter().map(|s| s.name).collect()
}

/// Whether every column of `header` is one of sumpbook's own names for `kind` (such a file
/// needs no mapping).
pub fn is_native(kind: FileKind, header: &[String]) -> bool {
    let all = specs(kind);
    header.iter().all(|h| {
        let h = h.trim();
        h == crate::exchange::csv_in::REJECT_REASON || all.iter().any(|s| s.name == h)
    })
}

/// Stored form of a mapping's columns: `(file column, sumpbook column or "ignore")`, undecided
/// columns left out.
pub fn stored_columns(m: &Mapping) -> Vec<(String, String)> {
    m.columns
        .iter()
        .filter_map(|(n, t)| {
            let to = match t.as_ref()? {
                Target::Column(c) => (*c).to_string(),
                Target::Ignore => IGNORE.to_string(),
            };
            Some((n.clone(), to))
        })
        .collect()
}

/// A mapping from its stored form, laid over a file's `header`: each column of the header
/// takes what the stored mapping says of a column of that name; others stay undecided.
pub fn from_stored(
    kind: FileKind,
    stored: &[(String, String)],
    dates: DateOrder,
    header: &[String],
) -> Result<Mapping, String> {
    let mut columns = Vec::new();
    for h in header {
        let name = h.trim().to_string();
        let t = match stored.iter().find(|(n, _)| n.trim() == name) {
            Some((_, to)) => Some(parse_target(kind, to)?),
            None if name == crate::exchange::csv_in::REJECT_REASON => Some(Target::Ignore),
            None => None,
        };
        columns.push((name, t));
    }
    Ok(Mapping {
        kind,
        columns,
        dates,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn h(s: &str) -> Vec<String> {
        s.split(',').map(str::to_string).collect()
    }

    fn to(m: &Mapping, col: &str) -> Option<&'static str> {
        match m.target(col) {
            Some(Target::Column(c)) => Some(c),
            _ => None,
        }
    }

    #[test]
    fn a_labs_own_header_is_proposed_column_by_column() {
        let header = h("Sample Date,Equipment ID,Visc @ 40C (cSt),ISO Code,Water (ppm),TAN (mg KOH/g),Lab No,Tech");
        let m = propose(FileKind::Samples, &header, false);
        assert_eq!(to(&m, "Sample Date"), Some("sampled_at"));
        assert_eq!(to(&m, "Equipment ID"), Some("unit_tag"));
        assert_eq!(to(&m, "Visc @ 40C (cSt)"), Some("kv40_cst"));
        assert_eq!(to(&m, "ISO Code"), Some("iso4406"));
        assert_eq!(to(&m, "Water (ppm)"), Some("water_ppm"));
        assert_eq!(to(&m, "TAN (mg KOH/g)"), Some("acid_mgkoh_g"));
        assert_eq!(to(&m, "Lab No"), Some("lab_ref"));
        // A technician's initials on a lab report are not a sumpbook column of samples.
        assert_eq!(m.undecided(), vec!["Tech"]);
        assert_eq!(m.problems().len(), 1, "{:?}", m.problems());
    }

    #[test]
    fn the_unit_a_header_names_picks_the_column_and_the_shop_decides_otherwise() {
        let m = propose(
            FileKind::Checks,
            &h("Unit,Date,Tank Temp (°F),System Pressure psi,Case Drain (l/min),Hour Meter"),
            false,
        );
        assert_eq!(to(&m, "Tank Temp (°F)"), Some("reservoir_temp_f"));
        assert_eq!(to(&m, "System Pressure psi"), Some("pressure_psi"));
        assert_eq!(to(&m, "Case Drain (l/min)"), Some("case_drain_lpm"));
        assert_eq!(to(&m, "Hour Meter"), Some("hours"));
        assert_eq!(to(&m, "Date"), Some("taken_at"));
        let us = propose(FileKind::Checks, &h("Unit,Date,Oil Temp,Pressure"), true);
        assert_eq!(to(&us, "Oil Temp"), Some("reservoir_temp_f"));
        assert_eq!(to(&us, "Pressure"), Some("pressure_psi"));
        let metric = propose(FileKind::Checks, &h("Unit,Date,Oil Temp,Pressure"), false);
        assert_eq!(to(&metric, "Oil Temp"), Some("reservoir_temp_c"));
        assert_eq!(to(&metric, "Pressure"), Some("pressure_bar"));
    }

    #[test]
    fn particle_sizes_and_a_unit_that_cannot_be_read_are_told_apart() {
        let m = propose(
            FileKind::Samples,
            &h("Unit,Sampled,>4 µm,>6um,>14 micron,Water %,Visc 100C cSt"),
            false,
        );
        assert_eq!(to(&m, ">4 µm"), Some("count_4um_per_ml"));
        assert_eq!(to(&m, ">6um"), Some("count_6um_per_ml"));
        assert_eq!(to(&m, ">14 micron"), Some("count_14um_per_ml"));
        assert_eq!(to(&m, "Visc 100C cSt"), Some("kv100_cst"));
        // Water as a per cent is not ppm: left for the user to decide.
        assert!(m.target("Water %").is_none());
    }

    #[test]
    fn two_columns_for_one_quantity_go_to_the_better_fit() {
        let m = propose(
            FileKind::Samples,
            &h("Unit,Date Received,Sample Date"),
            false,
        );
        assert_eq!(to(&m, "Sample Date"), Some("sampled_at"));
        assert_eq!(m.undecided(), vec!["Date Received"]);
    }

    #[test]
    fn sumpbooks_own_header_maps_to_itself_and_the_kind_is_found() {
        let header = h("unit_tag,taken_at,reservoir_temp_f,pressure_psi");
        assert!(is_native(FileKind::Checks, &header));
        assert!(!is_native(FileKind::Samples, &header));
        let m = propose_any(&header, false);
        assert_eq!(m.kind, FileKind::Checks);
        assert!(m.problems().is_empty());
        let lab = propose_any(&h("Equipment ID,Sample Date,ISO Code,Water (ppm)"), true);
        assert_eq!(lab.kind, FileKind::Samples);
    }

    #[test]
    fn corrections_and_problems() {
        let mut m = propose(
            FileKind::Samples,
            &h("Equipment ID,Sample Date,Tech,Water (ppm)"),
            false,
        );
        assert!(m.set("Tech", "nonsense").is_err());
        assert!(m.set("Nope", IGNORE).is_err());
        m.set("Tech", IGNORE).unwrap();
        assert!(m.problems().is_empty(), "{:?}", m.problems());
        m.set("Tech", "water_ppm").unwrap();
        assert!(m.problems()[0].contains("same quantity"));
        m.set("Sample Date", IGNORE).unwrap();
        m.set("Tech", IGNORE).unwrap();
        assert!(m.problems()[0].contains("sampled_at"));
        // Stored and laid over the same header again, it is the same mapping.
        let back = from_stored(
            m.kind,
            &stored_columns(&m),
            DateOrder::MonthFirst,
            &h("Equipment ID,Sample Date,Tech,Water (ppm)"),
        )
        .unwrap();
        assert_eq!(back.columns, m.columns);
        // A column the stored mapping never saw stays undecided.
        let wider = from_stored(
            m.kind,
            &stored_columns(&m),
            DateOrder::Iso,
            &h("Equipment ID,Extra"),
        )
        .unwrap();
        assert_eq!(wider.undecided(), vec!["Extra"]);
    }
}
