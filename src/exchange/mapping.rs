//! Column mapping: which of sumpbook's columns each column of someone else's CSV file is (a
//! lab's "Visc @ 40C (cSt)" is `kv40_cst`), proposed from the words of the header and the units
//! they name, corrected by the user and kept as a named profile; and the order of a file's
//! dates (`11/20/2026`). Pure: it must not read files, the store or the screen.

use crate::exchange::csv_in::{specs, ColUnit};
use crate::exchange::FileKind;

/// How a file writes the day and the month of its dates.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash, serde::Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum DateOrder {
    /// `2026-11-20`; a slashed date is read only when it can be read one way (`11/20/2026`).
    #[default]
    Iso,
    /// `20/11/2026`
    DayFirst,
    /// `11/20/2026`
    MonthFirst,
}

impl DateOrder {
    pub const ALL: [DateOrder; 3] = [DateOrder::Iso, DateOrder::DayFirst, DateOrder::MonthFirst];

    pub fn as_str(self) -> &'static str {
        match self {
            DateOrder::Iso => "iso",
            DateOrder::DayFirst => "day-first",
            DateOrder::MonthFirst => "month-first",
        }
    }

    /// Words for a screen.
    pub fn words(self) -> &'static str {
        match self {
            DateOrder::Iso => "year first (2026-11-20)",
            DateOrder::DayFirst => "day first (20/11/2026)",
            DateOrder::MonthFirst => "month first (11/20/2026)",
        }
    }
}

impl std::str::FromStr for DateOrder {
    type Err = String;
    fn from_str(s: &str) -> Result<Self, String> {
        let t = s.trim();
        DateOrder::ALL
            .into_iter()
            .find(|d| d.as_str() == t || d.words() == t)
            .ok_or_else(|| format!("`{t}` is not a date order: iso, day-first or month-first"))
    }
}

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

/// The day, month and year of a slashed or dotted date at the start of `s` (`11/20/2026`,
/// `20.11.2026`), as the two leading numbers and the year, with the rest of the text.
fn split_date(s: &str) -> Option<(u32, u32, i32, &str)> {
    let s = s.trim();
    let end = s.find([' ', 'T']).unwrap_or(s.len());
    let (date, rest) = s.split_at(end);
    let sep = date.chars().find(|c| ['/', '.'].contains(c))?;
    let parts: Vec<&str> = date.split(sep).collect();
    if parts.len() != 3 || parts.iter().any(|p| !p.bytes().all(|b| b.is_ascii_digit())) {
        return None;
    }
    if parts[0].is_empty() || parts[0].len() > 2 || parts[1].is_empty() || parts[1].len() > 2 {
        return None;
    }
    if parts[2].len() != 4 {
        return None;
    }
    Some((
        parts[0].parse().ok()?,
        parts[1].parse().ok()?,
        parts[2].parse().ok()?,
        rest,
    ))
}

/// The date order a file's date cells show: the first date whose leading number is above 12
/// shows day first, whose second is above 12 month first; ISO when every date is ISO.
pub fn guess_date_order<'a>(cells: impl IntoIterator<Item = &'a str>) -> Option<DateOrder> {
    let mut slashed = false;
    for c in cells {
        if let Some((a, b, _, _)) = split_date(c) {
            slashed = true;
            if a > 12 && b <= 12 {
                return Some(DateOrder::DayFirst);
            }
            if b > 12 && a <= 12 {
                return Some(DateOrder::MonthFirst);
            }
        }
    }
    (!slashed).then_some(DateOrder::Iso)
}

/// A date (and time) as written in a file, rewritten as ISO 8601 in the order `order` reads
/// it: `11/20/2026 8:30 PM` → `2026-11-20 20:30`. An ISO text comes back as it is. A slashed
/// date whose order cannot be told (`03/04/2026` with no order chosen) or that the chosen order
/// cannot read (`11/20/2026` read day first) is refused, saying why.
pub fn iso_date_text(input: &str, order: DateOrder) -> Result<String, String> {
    let s = input.trim();
    let Some((a, b, year, rest)) = split_date(s) else {
        return Ok(s.to_string());
    };
    let (day, month) = match order {
        DateOrder::DayFirst => (a, b),
        DateOrder::MonthFirst => (b, a),
        DateOrder::Iso if a == b || b > 12 => (b, a),
        DateOrder::Iso if a > 12 => (a, b),
        DateOrder::Iso => {
            return Err(format!(
                "`{s}` could be read day first or month first; choose the file's date order in \
                 its column mapping (day-first or month-first)"
            ))
        }
    };
    if month == 0 || month > 12 {
        return Err(format!(
            "`{s}` has no month {month} when read {}; is the mapping's date order right?",
            order.words()
        ));
    }
    let date = chrono::NaiveDate::from_ymd_opt(year, month, day)
        .ok_or_else(|| format!("`{s}` is not a calendar date"))?;
    let rest = rest.trim_start_matches(['T', ' ']).trim();
    if rest.is_empty() {
        return Ok(date.format("%Y-%m-%d").to_string());
    }
    Ok(format!("{} {}", date.format("%Y-%m-%d"), clock_24h(rest)?))
}

/// A clock time as `HH:MM` or `HH:MM:SS` with a zone suffix kept: `8:30 PM` → `20:30`.
fn clock_24h(t: &str) -> Result<String, String> {
    let lower = t.to_ascii_lowercase();
    let (body, half) = if let Some(b) = lower.strip_suffix("pm") {
        (b.trim(), Some(12))
    } else if let Some(b) = lower.strip_suffix("am") {
        (b.trim(), Some(0))
    } else {
        (t, None)
    };
    let zone_at = body
        .char_indices()
        .skip(1)
        .find(|(_, c)| matches!(c, 'Z' | 'z' | '+' | '-'))
        .map_or(body.len(), |(i, _)| i);
    let (clock, zone) = body.split_at(zone_at);
    let mut parts: Vec<u32> = Vec::new();
    for p in clock.split(':') {
        parts.push(
            p.trim()
                .parse()
                .map_err(|_| format!("`{t}` is not a time of day"))?,
        );
    }
    if !(2..=3).contains(&parts.len()) {
        return Err(format!("`{t}` is not a time of day (HH:MM or HH:MM:SS)"));
    }
    if let Some(add) = half {
        if parts[0] == 0 || parts[0] > 12 {
            return Err(format!("`{t}`: an AM/PM hour is 1 to 12"));
        }
        parts[0] = parts[0] % 12 + add;
    }
    let hms: Vec<String> = parts.iter().map(|p| format!("{p:02}")).collect();
    Ok(format!("{}{}", hms.join(":"), zone.trim()))
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

    #[test]
    fn dates_read_in_the_chosen_order_and_one_way_dates_without_one() {
        let iso = |s: &str, o| iso_date_text(s, o);
        assert_eq!(iso("11/20/2026", DateOrder::Iso).unwrap(), "2026-11-20");
        assert_eq!(iso("20/11/2026", DateOrder::Iso).unwrap(), "2026-11-20");
        assert_eq!(iso("04/04/2026", DateOrder::Iso).unwrap(), "2026-04-04");
        assert!(iso("03/04/2026", DateOrder::Iso)
            .unwrap_err()
            .contains("date order"));
        assert_eq!(
            iso("03/04/2026", DateOrder::DayFirst).unwrap(),
            "2026-04-03"
        );
        assert_eq!(
            iso("03/04/2026", DateOrder::MonthFirst).unwrap(),
            "2026-03-04"
        );
        assert_eq!(iso("3.4.2026", DateOrder::DayFirst).unwrap(), "2026-04-03");
        assert!(iso("11/20/2026", DateOrder::DayFirst)
            .unwrap_err()
            .contains("month 20"));
        assert!(iso("02/30/2026", DateOrder::MonthFirst).is_err());
        assert!(iso("1/2/26", DateOrder::MonthFirst).is_ok_and(|s| s == "1/2/26"));
        assert_eq!(
            iso("11/20/2026 8:30 PM", DateOrder::MonthFirst).unwrap(),
            "2026-11-20 20:30"
        );
        assert_eq!(
            iso("11/20/2026 12:05 am", DateOrder::MonthFirst).unwrap(),
            "2026-11-20 00:05"
        );
        assert_eq!(
            iso("20/11/2026 07:30:15Z", DateOrder::DayFirst).unwrap(),
            "2026-11-20 07:30:15Z"
        );
        assert!(iso("11/20/2026 13:00 PM", DateOrder::MonthFirst).is_err());
        assert_eq!(
            iso("2026-11-20", DateOrder::DayFirst).unwrap(),
            "2026-11-20"
        );
        assert_eq!(
            guess_date_order(["11/04/2026", "11/20/2026"]),
            Some(DateOrder::MonthFirst)
        );
        assert_eq!(guess_date_order(["20/11/2026"]), Some(DateOrder::DayFirst));
        assert_eq!(guess_date_order(["03/04/2026"]), None);
        assert_eq!(guess_date_order(["2026-03-04"]), Some(DateOrder::Iso));
        assert_eq!(
            "month-first".parse::<DateOrder>(),
            Ok(DateOrder::MonthFirst)
        );
    }
}
