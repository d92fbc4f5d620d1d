//! Proposing a mapping from a file's header: the words of each column's heading and the unit it
//! names, matched against the phrases that tell each of sumpbook's quantities, the better fit
//! winning when two columns claim one. Pure: it must not read files, the store or the screen.

use super::{DateOrder, Mapping, Target};
use crate::exchange::csv_in::{specs, ColUnit};
use crate::exchange::FileKind;

/// A header's words: lower case, split at everything but letters and digits and between
/// digits and letters (`40C` is `40` and `c`; `µm` stays a word).
fn words(header: &str) -> Vec<String> {
    let mut out: Vec<String> = Vec::new();
    let mut cur = String::new();
    let mut last_digit = None;
    for ch in header.chars().flat_map(char::to_lowercase) {
        if ch.is_alphanumeric() {
            let digit = ch.is_ascii_digit();
            if last_digit.is_some_and(|d| d != digit) && !cur.is_empty() {
                out.push(std::mem::take(&mut cur));
            }
            cur.push(ch);
            last_digit = Some(digit);
        } else {
            if !cur.is_empty() {
                out.push(std::mem::take(&mut cur));
            }
            last_digit = None;
        }
    }
    if !cur.is_empty() {
        out.push(cur);
    }
    out
}

/// The unit a header names, among those a quantity can be written in.
fn named_unit(w: &[String], raw: &str) -> Option<ColUnit> {
    let has = |x: &str| w.iter().any(|t| t == x);
    let pair = |a: &str, b: &str| w.windows(2).any(|p| p[0] == a && p[1] == b);
    if has("psi") || has("psig") {
        Some(ColUnit::Psi)
    } else if has("bar") {
        Some(ColUnit::Bar)
    } else if has("gpm") || pair("gal", "min") {
        Some(ColUnit::Gpm)
    } else if has("lpm") || pair("l", "min") {
        Some(ColUnit::Lpm)
    } else if has("gal") || has("gallons") || has("gallon") {
        Some(ColUnit::Gal)
    } else if has("l") || has("litres") || has("liters") || has("litre") || has("liter") {
        Some(ColUnit::L)
    } else if has("mm") {
        Some(ColUnit::Mm)
    } else if has("in") || has("inch") || has("inches") || raw.contains('"') {
        Some(ColUnit::In)
    } else if has("f") || has("degf") || has("fahrenheit") {
        Some(ColUnit::F)
    } else if has("c") || has("degc") || has("celsius") {
        Some(ColUnit::C)
    } else {
        None
    }
}

/// The header words that tell each quantity, most telling first: a header matches a phrase
/// when it holds every word of it, and the longest phrase matched wins.
fn phrases(field: &str) -> &'static [&'static [&'static str]] {
    match field {
        "unit_tag" => &[
            &["unit", "tag"],
            &["unit", "id"],
            &["equipment", "id"],
            &["asset", "id"],
            &["unit"],
            &["equipment"],
            &["asset"],
            &["hpu"],
            &["sample", "point"],
        ],
        "machine_tag" => &[&["machine", "tag"], &["machine", "id"], &["machine"]],
        "machine_name" => &[&["machine", "name"], &["description"]],
        "machine_kind" => &[&["machine", "kind"], &["machine", "type"]],
        "route_order" => &[&["route"], &["sequence"]],
        "pump_kind" => &[&["pump"]],
        "rated_flow" => &[&["rated", "flow"], &["flow"]],
        "relief" => &[&["relief"]],
        "reservoir" => &[&["reservoir", "size"], &["tank", "size"], &["capacity"]],
        "bore" => &[&["bore"]],
        "rod" => &[&["rod"]],
        "stroke" => &[&["stroke", "length"]],
        "timed_direction" => &[&["timed"], &["direction"]],
        "sensitive_component" => &[&["sensitive"]],
        "fluid_name" => &[
            &["fluid", "name"],
            &["fluid"],
            &["product"],
            &["oil", "name"],
        ],
        "fluid_vg" => &[&["vg"], &["iso", "grade"], &["viscosity", "grade"]],
        "fluid_kv40" | "kv40" => &[
            &["kv40"],
            &["visc", "40"],
            &["viscosity", "40"],
            &["kv", "40"],
            &["cst", "40"],
        ],
        "fluid_kv100" | "kv100" => &[
            &["kv100"],
            &["visc", "100"],
            &["viscosity", "100"],
            &["kv", "100"],
            &["cst", "100"],
        ],
        "taken_at" => &[
            &["taken"],
            &["check", "date"],
            &["reading", "date"],
            &["date"],
            &["time"],
        ],
        "sampled_at" => &[
            &["sampled"],
            &["sample", "date"],
            &["date", "sampled"],
            &["sampling", "date"],
            &["date"],
        ],
        "done_at" => &[&["done"], &["completed"], &["date"]],
        "reservoir_temp" => &[
            &["reservoir", "temp"],
            &["tank", "temp"],
            &["oil", "temp"],
            &["fluid", "temp"],
            &["reservoir", "temperature"],
            &["tank", "temperature"],
            &["oil", "temperature"],
            &["temp"],
            &["temperature"],
        ],
        "ambient_temp" => &[&["ambient"], &["room", "temp"], &["air", "temp"]],
        "pressure" => &[&["system", "pressure"], &["pressure"], &["gauge"]],
        "stroke_time" => &[&["stroke", "time"], &["stroke"]],
        "cycle_time" => &[&["cycle", "time"], &["cycle"]],
        "oil_level" => &[&["oil", "level"], &["level"]],
        "filter" => &[&["filter"]],
        "hours" => &[&["hour", "meter"], &["hours"], &["hrs"], &["hourmeter"]],
        "case_drain" => &[&["case", "drain"]],
        "by" => &[
            &["checked", "by"],
            &["by"],
            &["technician"],
            &["tech"],
            &["inspector"],
            &["initials"],
        ],
        "note" => &[
            &["note"],
            &["notes"],
            &["comment"],
            &["comments"],
            &["remarks"],
        ],
        "visc" => &[&["viscosity"], &["visc"]],
        "visc_temp" => &[&["visc", "temp"], &["viscosity", "temp"]],
        "count4" => &[
            &["4", "µm"],
            &["4", "um"],
            &["4", "micron"],
            &["4", "microns"],
        ],
        "count6" => &[
            &["6", "µm"],
            &["6", "um"],
            &["6", "micron"],
            &["6", "microns"],
        ],
        "count14" => &[
            &["14", "µm"],
            &["14", "um"],
            &["14", "micron"],
            &["14", "microns"],
        ],
        "iso4406" => &[
            &["iso", "4406"],
            &["iso4406"],
            &["iso", "code"],
            &["cleanliness"],
            &["iso"],
        ],
        "water" => &[&["water"], &["h2o"], &["moisture"], &["karl", "fischer"]],
        "acid" => &[&["acid", "number"], &["tan"], &["acid"], &["koh"], &["an"]],
        "lab_ref" => &[
            &["lab", "ref"],
            &["lab", "no"],
            &["lab", "number"],
            &["sample", "no"],
            &["sample", "number"],
            &["sample", "id"],
            &["report", "no"],
            &["reference"],
            &["ref"],
        ],
        "kind" => &[&["event"], &["type"], &["kind"], &["action"], &["work"]],
        "volume" => &[
            &["volume"],
            &["quantity"],
            &["qty"],
            &["added"],
            &["litres"],
            &["liters"],
            &["gallons"],
        ],
        _ => &[],
    }
}

/// Whether the header names a unit the field's numbers cannot be read in: water as a per cent
/// rather than ppm, particles per 100 mL rather than per mL, viscosity in SUS rather than cSt.
fn wrong_unit(field: &str, w: &[String], raw: &str) -> bool {
    let has = |x: &str| w.iter().any(|t| t == x);
    match field {
        "water" => raw.contains('%') || has("percent") || has("pct"),
        "count4" | "count6" | "count14" => has("100"),
        "kv40" | "kv100" | "visc" | "fluid_kv40" | "fluid_kv100" => {
            has("sus") || has("ssu") || has("mm2")
        }
        "acid" => has("mg") && !has("koh"),
        _ => false,
    }
}

/// How well `header` fits `field`: the number of words of the longest phrase it holds (0: not
/// at all). A header spelled as one of sumpbook's names fits best.
fn score(kind: FileKind, field: &str, raw: &str) -> usize {
    let all = specs(kind);
    if all.iter().any(|s| s.field == field && s.name == raw.trim()) {
        return 100;
    }
    let w = words(raw);
    if wrong_unit(field, &w, raw) {
        return 0;
    }
    phrases(field)
        .iter()
        .filter(|p| p.iter().all(|word| w.iter().any(|t| t == word)))
        .map(|p| p.len())
        .max()
        .unwrap_or(0)
}

/// The column name for `field` in the unit the header names, or the shop's unit system when it
/// names none.
fn column_for(kind: FileKind, field: &str, raw: &str, prefer_us: bool) -> Option<&'static str> {
    let all: Vec<_> = specs(kind).iter().filter(|s| s.field == field).collect();
    if let Some(s) = all.iter().find(|s| s.name == raw.trim()) {
        return Some(s.name);
    }
    if all.len() == 1 {
        return Some(all[0].name);
    }
    let named = named_unit(&words(raw), raw);
    if let Some(s) = named.and_then(|u| all.iter().find(|s| s.unit == u)) {
        return Some(s.name);
    }
    let us = |u: ColUnit| {
        matches!(
            u,
            ColUnit::F | ColUnit::Psi | ColUnit::Gpm | ColUnit::Gal | ColUnit::In
        )
    };
    all.iter()
        .find(|s| us(s.unit) == prefer_us)
        .or(all.first())
        .map(|s| s.name)
}

/// A mapping proposed for a file of `kind` from its header: each column to the quantity its
/// words name best, in the unit they name (the shop's when they name none), no quantity taken
/// twice (the better-fitting column keeps it); columns it cannot place are left undecided.
pub fn propose(kind: FileKind, header: &[String], prefer_us: bool) -> Mapping {
    let mut fields: Vec<&'static str> = Vec::new();
    for s in specs(kind) {
        if !fields.contains(&s.field) {
            fields.push(s.field);
        }
    }
    // Every (column, field) pair that fits, best first; taken greedily.
    let mut pairs: Vec<(usize, usize, usize)> = Vec::new();
    for (ci, h) in header.iter().enumerate() {
        for (fi, f) in fields.iter().enumerate() {
            let sc = score(kind, f, h);
            if sc > 0 {
                pairs.push((sc, ci, fi));
            }
        }
    }
    pairs.sort_by(|a, b| b.0.cmp(&a.0).then(a.1.cmp(&b.1)).then(a.2.cmp(&b.2)));
    let mut columns: Vec<(String, Option<Target>)> = header
        .iter()
        .map(|h| (h.trim().to_string(), None))
        .collect();
    let mut taken = vec![false; fields.len()];
    for (_, ci, fi) in pairs {
        if taken[fi] || columns[ci].1.is_some() {
            continue;
        }
        if let Some(name) = column_for(kind, fields[fi], &header[ci], prefer_us) {
            columns[ci].1 = Some(Target::Column(name));
            taken[fi] = true;
        }
    }
    for c in &mut columns {
        if c.0 == crate::exchange::csv_in::REJECT_REASON {
            c.1 = Some(Target::Ignore);
        }
    }
    Mapping {
        kind,
        columns,
        dates: DateOrder::Iso,
    }
}

/// The kind a header most likely is, with its proposed mapping: the kind whose required
/// columns are all placed, then the one placing the most columns.
pub fn propose_any(header: &[String], prefer_us: bool) -> Mapping {
    let mut best: Option<(bool, usize, Mapping)> = None;
    for kind in FileKind::ALL {
        let m = propose(kind, header, prefer_us);
        let placed = m.columns.iter().filter(|(_, t)| t.is_some()).count();
        let whole = m.has_required();
        if best
            .as_ref()
            .is_none_or(|(w, n, _)| (whole, placed) > (*w, *n))
        {
            best = Some((whole, placed, m));
        }
    }
    best.map(|(_, _, m)| m).unwrap_or(Mapping {
        kind: FileKind::Samples,
        columns: Vec::new(),
        dates: DateOrder::Iso,
    })
}
