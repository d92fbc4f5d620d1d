//! CSV import of the unit register, checks, samples and events into a shop.
//!
//! Reads a file as one stream (memory does not grow with its size) and writes through one
//! [`Bulk`] transaction. Every cell is checked against its column's rules before any SQL, so
//! messages say `FILE:LINE: COLUMN: reason` in the file's own terms. By default the import is
//! all-or-nothing: one bad row and nothing is written, with every bad row reported. With
//! keep-going, good rows go in and each refused row is written to `FILE.rejects.csv` in the
//! same format with a `reject_reason` column (written whole beside it and put in place when the
//! import succeeds; an earlier rejects file stays when nothing is refused). A row whose key (unit + time, + kind for events,
//! the unit tag for the register) is already stored adds nothing when the values it gives agree
//! with the stored ones, and is refused when they differ: stored data is never overwritten.
//! A `reject_reason` column (a corrected rejects file) is ignored; a line longer than 1 MiB
//! stops the import (nothing is written). No SQL here; the store does that.

use std::collections::HashMap;
use std::io::{BufRead, BufReader, Read};
use std::path::{Path, PathBuf};
use std::str::FromStr;

use chrono::{DateTime, FixedOffset, NaiveDate, NaiveTime, TimeZone, Timelike, Utc};
use csv::ByteRecord;

use super::{unescape_cell, ExchangeError, FileKind, ImportSummary, RowError};
use crate::health::limits::TEMP_RANGE_C;
use crate::model::{
    Check, Confirmation, Event, EventKind, FilterState, Fluid, Id, Machine, OilLevel, PumpKind,
    Sample, SensitiveComponent, StrokeDirection, TimedStroke, Unit, ViscReading,
};
use crate::outfile::{Options, OutFile};
use crate::physics::cleanliness::Iso4406Code;
use crate::physics::viscosity::ISO_VG_GRADES;
use crate::store::columns::{self, round_sig};
use crate::store::{Bulk, Put, Store, StoreError};
use crate::units::{Flow, Length, Pressure, Seconds, Temperature, Viscosity, Volume};

/// The unit a column's numbers are in, read from its name.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum ColUnit {
    Plain,
    C,
    F,
    Bar,
    Psi,
    Lpm,
    Gpm,
    L,
    Gal,
    Mm,
    In,
}

/// One accepted header name: the field it fills and the unit of its numbers.
pub(crate) struct ColSpec {
    pub field: &'static str,
    pub name: &'static str,
    pub unit: ColUnit,
}

const fn col(field: &'static str, name: &'static str, unit: ColUnit) -> ColSpec {
    ColSpec { field, name, unit }
}

use ColUnit::{Bar, Gal, Gpm, In, Lpm, Mm, Plain, Psi, C, F, L};

pub(crate) const UNIT_COLS: &[ColSpec] = &[
    col("machine_tag", "machine_tag", Plain),
    col("machine_name", "machine_name", Plain),
    col("machine_kind", "machine_kind", Plain),
    col("route_order", "route_order", Plain),
    col("unit_tag", "unit_tag", Plain),
    col("pump_kind", "pump_kind", Plain),
    col("rated_flow", "rated_flow_lpm", Lpm),
    col("rated_flow", "rated_flow_gpm", Gpm),
    col("relief", "relief_bar", Bar),
    col("relief", "relief_psi", Psi),
    col("reservoir", "reservoir_l", L),
    col("reservoir", "reservoir_gal", Gal),
    col("bore", "bore_mm", Mm),
    col("bore", "bore_in", In),
    col("rod", "rod_mm", Mm),
    col("rod", "rod_in", In),
    col("stroke", "stroke_mm", Mm),
    col("stroke", "stroke_in", In),
    col("timed_direction", "timed_direction", Plain),
    col("sensitive_component", "sensitive_component", Plain),
    col("fluid_name", "fluid_name", Plain),
    col("fluid_vg", "fluid_vg", Plain),
    col("fluid_kv40", "fluid_kv40_cst", Plain),
    col("fluid_kv100", "fluid_kv100_cst", Plain),
];

pub(crate) const CHECK_COLS: &[ColSpec] = &[
    col("unit_tag", "unit_tag", Plain),
    col("taken_at", "taken_at", Plain),
    col("reservoir_temp", "reservoir_temp_c", C),
    col("reservoir_temp", "reservoir_temp_f", F),
    col("ambient_temp", "ambient_temp_c", C),
    col("ambient_temp", "ambient_temp_f", F),
    col("pressure", "pressure_bar", Bar),
    col("pressure", "pressure_psi", Psi),
    col("stroke_time", "stroke_time_s", Plain),
    col("cycle_time", "cycle_time_s", Plain),
    col("oil_level", "oil_level", Plain),
    col("filter", "filter", Plain),
    col("hours", "hours", Plain),
    col("case_drain", "case_drain_lpm", Lpm),
    col("case_drain", "case_drain_gpm", Gpm),
    col("by", "by", Plain),
    col("note", "note", Plain),
    col("confirmed_by", "confirmed_by", Plain),
    col("confirmed_at", "confirmed_at", Plain),
];

pub(crate) const SAMPLE_COLS: &[ColSpec] = &[
    col("unit_tag", "unit_tag", Plain),
    col("sampled_at", "sampled_at", Plain),
    col("kv40", "kv40_cst", Plain),
    col("kv100", "kv100_cst", Plain),
    col("visc", "visc_cst", Plain),
    col("visc_temp", "visc_temp_c", C),
    col("visc_temp", "visc_temp_f", F),
    col("count4", "count_4um_per_ml", Plain),
    col("count6", "count_6um_per_ml", Plain),
    col("count14", "count_14um_per_ml", Plain),
    col("iso4406", "iso4406", Plain),
    col("water", "water_ppm", Plain),
    col("acid", "acid_mgkoh_g", Plain),
    col("lab_ref", "lab_ref", Plain),
    col("note", "note", Plain),
    col("confirmed_by", "confirmed_by", Plain),
    col("confirmed_at", "confirmed_at", Plain),
];

pub(crate) const EVENT_COLS: &[ColSpec] = &[
    col("unit_tag", "unit_tag", Plain),
    col("done_at", "done_at", Plain),
    col("kind", "kind", Plain),
    col("volume", "volume_l", L),
    col("volume", "volume_gal", Gal),
    col("fluid_name", "fluid_name", Plain),
    col("by", "by", Plain),
    col("note", "note", Plain),
];

pub(crate) fn specs(kind: FileKind) -> &'static [ColSpec] {
    match kind {
        FileKind::Units => UNIT_COLS,
        FileKind::Checks => CHECK_COLS,
        FileKind::Samples => SAMPLE_COLS,
        FileKind::Events => EVENT_COLS,
    }
}

fn required(kind: FileKind) -> &'static [&'static str] {
    match kind {
        FileKind::Units => &["machine_tag", "unit_tag"],
        FileKind::Checks => &["unit_tag", "taken_at"],
        FileKind::Samples => &["unit_tag", "sampled_at"],
        FileKind::Events => &["unit_tag", "done_at", "kind"],
    }
}

/// The column a keep-going import adds to its rejects file; ignored when read back.
pub const REJECT_REASON: &str = "reject_reason";

/// The longest line read; a longer one is not a CSV file of sumpbook's (and would otherwise
/// make memory grow with the file).
pub const MAX_LINE_BYTES: usize = 1 << 20;

/// Raised by [`LineGuard`] when a line is longer than [`MAX_LINE_BYTES`].
#[derive(Debug)]
struct LineTooLong {
    line: u64,
}

impl std::fmt::Display for LineTooLong {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "line {} is longer than {MAX_LINE_BYTES} bytes (1 MiB); is this a CSV file of checks, samples, events or units?",
            self.line
        )
    }
}

impl std::error::Error for LineTooLong {}

/// Passes bytes through and fails on a line longer than [`MAX_LINE_BYTES`].
struct LineGuard<R> {
    inner: R,
    /// Line breaks seen so far.
    breaks: u64,
    /// Bytes since the last line break.
    run: usize,
}

impl<R: Read> Read for LineGuard<R> {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        let n = self.inner.read(buf)?;
        let chunk = &buf[..n];
        match chunk.iter().rposition(|&b| b == b'\n') {
            Some(last) => {
                self.breaks += chunk.iter().filter(|&&b| b == b'\n').count() as u64;
                self.run = n - last - 1;
            }
            None => self.run += n,
        }
        if self.run > MAX_LINE_BYTES {
            return Err(std::io::Error::new(
                std::io::ErrorKind::InvalidData,
                LineTooLong {
                    line: self.breaks + 1,
                },
            ));
        }
        Ok(n)
    }
}

/// The line of a [`LineTooLong`] inside an I/O error, if that is what it is.
fn too_long(e: &std::io::Error) -> Option<&LineTooLong> {
    e.get_ref()
        .and_then(|inner| inner.downcast_ref::<LineTooLong>())
}

/// The longest record read, in bytes, however many lines its quoted cells span; beyond it a
/// quote is taken to be left open (memory would otherwise grow with the rest of the file).
pub const MAX_RECORD_BYTES: usize = 1 << 20;

/// Where a quoted cell that never closes was opened.
#[derive(Debug)]
struct QuoteLeftOpen {
    line: u64,
    field: usize,
    /// Whether the file ended inside it (otherwise it ran on beyond [`MAX_RECORD_BYTES`]).
    at_end: bool,
}

impl std::fmt::Display for QuoteLeftOpen {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        if self.at_end {
            f.write_str("a quote (\") opened in this cell is never closed: the file ends inside it; close the quote")
        } else {
            write!(
                f,
                "a quote (\") opened in this cell runs on for more than {MAX_RECORD_BYTES} bytes (1 MiB) without \
                 closing; close the quote"
            )
        }
    }
}

impl std::error::Error for QuoteLeftOpen {}

/// RFC 4180 quoting, as the `csv` reader applies it: a cell is quoted when it starts with `"`;
/// inside, `""` is a quote and `"` then anything ends the quoted part.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Quoting {
    /// At the start of a cell.
    CellStart,
    Unquoted,
    Quoted,
    /// A `"` inside a quoted cell: either the first of `""` or its end.
    QuoteInQuoted,
}

/// Follows the quoting of the stream after the header line and fails when a quoted cell never
/// closes (the `csv` reader would silently take the rest of the file into it) or runs on past
/// [`MAX_RECORD_BYTES`].
struct QuoteGuard<R> {
    inner: R,
    delimiter: u8,
    state: Quoting,
    line: u64,
    field: usize,
    record_bytes: usize,
    open: (u64, usize),
    /// A quoted cell ran on past [`MAX_RECORD_BYTES`].
    overrun: bool,
}

impl<R> QuoteGuard<R> {
    /// Starts after `first_line` (the header line, which may itself open a quote), which is
    /// line 1.
    fn new(inner: R, delimiter: u8, first_line: &[u8]) -> Self {
        let mut g = QuoteGuard {
            inner,
            delimiter,
            state: Quoting::CellStart,
            line: 1,
            field: 0,
            record_bytes: 0,
            open: (1, 0),
            overrun: false,
        };
        g.advance(first_line);
        g
    }

    /// Follows `bytes`: quoted runs and plain runs are skipped to their next `"` at once, and
    /// only quotes are looked at one by one (a per-byte walk costs as much as the CSV parse).
    fn advance(&mut self, mut bytes: &[u8]) {
        while !bytes.is_empty() {
            let next_quote = bytes.iter().position(|&b| b == b'"');
            if self.state == Quoting::Quoted {
                // Everything up to the next quote belongs to the cell, line breaks too.
                let run = next_quote.map_or(bytes.len(), |i| i + 1);
                self.line += count(&bytes[..run], b'\n');
                self.record_bytes += run;
                if self.record_bytes > MAX_RECORD_BYTES {
                    self.overrun = true;
                    return;
                }
                if next_quote.is_some() {
                    self.state = Quoting::QuoteInQuoted;
                }
                bytes = &bytes[run..];
                continue;
            }
            let run = next_quote.unwrap_or(bytes.len());
            if run > 0 {
                self.plain(&bytes[..run]);
                bytes = &bytes[run..];
            }
            if !bytes.is_empty() {
                // A quote outside a quoted run.
                self.record_bytes += 1;
                self.state = match self.state {
                    Quoting::CellStart => {
                        self.open = (self.line, self.field);
                        Quoting::Quoted
                    }
                    // `""` inside a quoted cell: a quote, and the cell goes on.
                    Quoting::QuoteInQuoted => Quoting::Quoted,
                    // Inside an unquoted cell a quote is just a character.
                    other => other,
                };
                bytes = &bytes[1..];
            }
        }
    }

    /// A run without quotes, outside a quoted run (or just after one ended).
    fn plain(&mut self, run: &[u8]) {
        self.line += count(run, b'\n');
        match run.iter().rposition(|&b| b == b'\n' || b == b'\r') {
            Some(end) => {
                self.field = count(&run[end + 1..], self.delimiter) as usize;
                self.record_bytes = run.len() - end - 1;
            }
            None => {
                self.field += count(run, self.delimiter) as usize;
                self.record_bytes += run.len();
            }
        }
        let last = run[run.len() - 1];
        self.state = if last == self.delimiter || last == b'\n' || last == b'\r' {
            Quoting::CellStart
        } else {
            Quoting::Unquoted
        };
    }

    fn left_open(&self, at_end: bool) -> std::io::Error {
        std::io::Error::new(
            std::io::ErrorKind::InvalidData,
            QuoteLeftOpen {
                line: self.open.0,
                field: self.open.1,
                at_end,
            },
        )
    }
}

impl<R: Read> Read for QuoteGuard<R> {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        let n = self.inner.read(buf)?;
        if n == 0 {
            if self.state == Quoting::Quoted {
                return Err(self.left_open(true));
            }
            return Ok(0);
        }
        self.advance(&buf[..n]);
        if self.overrun {
            return Err(self.left_open(false));
        }
        Ok(n)
    }
}

/// At most `max` characters of `s`, marked when cut (a header cell can be a whole file).
fn clip(s: &str, max: usize) -> String {
    match s.char_indices().nth(max) {
        Some((i, _)) => format!("{}…", &s[..i]),
        None => s.to_string(),
    }
}

/// How many times `b` occurs in `bytes`.
fn count(bytes: &[u8], b: u8) -> u64 {
    bytes.iter().filter(|&&x| x == b).count() as u64
}

/// The place of a [`QuoteLeftOpen`] inside an I/O error, if that is what it is.
fn quote_left_open(e: &std::io::Error) -> Option<&QuoteLeftOpen> {
    e.get_ref()
        .and_then(|inner| inner.downcast_ref::<QuoteLeftOpen>())
}

/// Where a field is in the file and in which unit.
#[derive(Clone, Copy, Debug)]
struct Slot {
    pos: usize,
    unit: ColUnit,
    name: &'static str,
}

struct Header {
    slots: HashMap<&'static str, Slot>,
    width: usize,
}

impl Header {
    fn slot(&self, field: &str) -> Option<Slot> {
        self.slots.get(field).copied()
    }

    /// The header name of the column at `pos`.
    fn name_at(&self, pos: usize) -> String {
        self.slots
            .values()
            .find(|s| s.pos == pos)
            .map_or_else(|| format!("column {}", pos + 1), |s| s.name.to_string())
    }
}

/// The cell where a quote was opened and never closed: the reader then takes every following
/// line into that cell. Recognised by a line break in a cell followed by a line that holds a
/// whole row's worth of delimiters.
fn unclosed_quote(rec: &ByteRecord, delimiter: u8, width: usize) -> Option<usize> {
    if width < 2 {
        return None;
    }
    rec.iter().position(|cell| {
        cell.split(|&b| b == b'\n')
            .skip(1)
            .any(|line| line.iter().filter(|&&b| b == delimiter).count() >= width - 1)
    })
}

fn parse_header(kind: FileKind, file: &str, rec: &ByteRecord) -> Result<Header, Vec<RowError>> {
    let specs = specs(kind);
    let mut errors = Vec::new();
    let mut slots: HashMap<&'static str, Slot> = HashMap::new();
    let err = |column: &str, reason: String| RowError {
        file: file.into(),
        line: 1,
        column: column.into(),
        reason,
    };
    for (pos, raw) in rec.iter().enumerate() {
        let Ok(text) = std::str::from_utf8(raw) else {
            errors.push(err(
                &format!("column {}", pos + 1),
                "the header is not UTF-8 text".into(),
            ));
            continue;
        };
        let name = text.trim();
        if name == REJECT_REASON {
            // A corrected rejects file imports as it stands; its reasons are not data.
            continue;
        }
        let Some(spec) = specs.iter().find(|s| s.name == name) else {
            let shown = if name.is_empty() {
                format!("column {}", pos + 1)
            } else {
                clip(name, 60)
            };
            let expected = specs.iter().map(|s| s.name).collect::<Vec<_>>().join(", ");
            // Say what the line probably is, when it is plainly not a header as sumpbook reads it.
            let hint = if parse_number(name).is_ok() || parse_when(name).is_ok() {
                " (the first line must be the header naming the columns; is it missing?)"
                    .to_string()
            } else if let Some(sep) = name.chars().find(|c| ['|', '^', '~'].contains(c)) {
                format!(" (is the file separated by `{sep}`? sumpbook reads `,`, `;` or tab)")
            } else {
                String::new()
            };
            errors.push(err(
                &shown,
                format!("unknown column for a {kind} file{hint}; the columns are: {expected}"),
            ));
            continue;
        };
        if let Some(prev) = slots.get(spec.field) {
            let reason = if prev.name == spec.name {
                "the column appears twice".to_string()
            } else {
                format!(
                    "`{}` and `{}` are the same quantity in two units; give only one",
                    prev.name, spec.name
                )
            };
            errors.push(err(spec.name, reason));
            continue;
        }
        slots.insert(
            spec.field,
            Slot {
                pos,
                unit: spec.unit,
                name: spec.name,
            },
        );
    }
    for field in required(kind) {
        if !slots.contains_key(field) && errors.iter().all(|e| e.column != *field) {
            errors.push(err(field, "required column is missing".into()));
        }
    }
    if errors.is_empty() {
        Ok(Header {
            slots,
            width: rec.len(),
        })
    } else {
        Err(errors)
    }
}

/// Picks the delimiter that occurs most often outside quotes in the header line.
fn detect_delimiter(header_line: &[u8]) -> u8 {
    let mut counts = [0usize; 3];
    let mut in_quotes = false;
    for &b in header_line {
        match b {
            b'"' => in_quotes = !in_quotes,
            b',' if !in_quotes => counts[0] += 1,
            b';' if !in_quotes => counts[1] += 1,
            b'\t' if !in_quotes => counts[2] += 1,
            _ => {}
        }
    }
    let delims = [b',', b';', b'\t'];
    let mut best = 0;
    for i in 1..3 {
        if counts[i] > counts[best] {
            best = i;
        }
    }
    delims[best]
}

/// Parses an ISO 8601 date or date-time; see the module documentation of `exchange`.
pub fn parse_when(input: &str) -> Result<DateTime<Utc>, String> {
    let t = parse_when_inner(input)?;
    // chrono reads second 60 as a leap second (a nanosecond part of one second or more);
    // the shop keeps civil time without leap seconds.
    if t.nanosecond() >= 1_000_000_000 {
        return Err(format!(
            "`{}`: second 60 is a leap second, which is not a valid time here; write :59 or \
             the first second of the next minute",
            input.trim()
        ));
    }
    Ok(t)
}

fn parse_when_inner(input: &str) -> Result<DateTime<Utc>, String> {
    let s = input.trim();
    if s.len() == 20 {
        if let Ok(t) = crate::store::parse_time(s) {
            return Ok(t);
        }
    }
    let refuse = || {
        format!(
            "`{s}` is not an ISO 8601 date or time; write YYYY-MM-DD or YYYY-MM-DDTHH:MM:SSZ \
             (dates like 03/04/2025 are refused: day and month could be either way round)"
        )
    };
    let bytes = s.as_bytes();
    if bytes.len() < 10 || !s.is_char_boundary(10) {
        return Err(refuse());
    }
    let (date_part, rest) = s.split_at(10);
    let db = date_part.as_bytes();
    let digits = |r: std::ops::Range<usize>| db[r].iter().all(u8::is_ascii_digit);
    if !(digits(0..4) && db[4] == b'-' && digits(5..7) && db[7] == b'-' && digits(8..10)) {
        return Err(refuse());
    }
    let date = NaiveDate::parse_from_str(date_part, "%Y-%m-%d")
        .map_err(|_| format!("`{date_part}` is not a calendar date"))?;
    if rest.is_empty() {
        return Ok(date.and_time(NaiveTime::MIN).and_utc());
    }
    let rest = rest.strip_prefix(['T', 't', ' ']).ok_or_else(refuse)?;
    // Split the clock time from the zone suffix.
    let zone_at = rest.find(['Z', 'z', '+', '-']).unwrap_or(rest.len());
    let (clock, zone) = rest.split_at(zone_at);
    if clock.contains('.') || clock.contains(',') {
        return Err(format!(
            "`{s}`: times are kept to the second; leave out the fraction of a second"
        ));
    }
    let time = match clock.len() {
        5 => NaiveTime::parse_from_str(clock, "%H:%M"),
        8 => NaiveTime::parse_from_str(clock, "%H:%M:%S"),
        _ => return Err(refuse()),
    }
    .map_err(|_| format!("`{clock}` is not a time of day (HH:MM or HH:MM:SS)"))?;
    let naive = date.and_time(time);
    let offset_secs = match zone {
        "" | "Z" | "z" => 0,
        z => {
            let sign = if z.starts_with('-') { -1 } else { 1 };
            let body = &z[1..];
            let (h, m) = match body.len() {
                2 => (body, "00"),
                4 if body.bytes().all(|b| b.is_ascii_digit()) => body.split_at(2),
                5 if body.as_bytes()[2] == b':' => (&body[..2], &body[3..]),
                _ => {
                    return Err(format!(
                        "`{z}` is not a time-zone offset (Z, +01:00, -05:00)"
                    ))
                }
            };
            let (Ok(h), Ok(m)) = (h.parse::<i32>(), m.parse::<i32>()) else {
                return Err(format!(
                    "`{z}` is not a time-zone offset (Z, +01:00, -05:00)"
                ));
            };
            if h > 23 || m > 59 {
                return Err(format!(
                    "`{z}` is not a time-zone offset (Z, +01:00, -05:00)"
                ));
            }
            sign * (h * 3600 + m * 60)
        }
    };
    let offset = FixedOffset::east_opt(offset_secs).ok_or_else(refuse)?;
    let local = offset
        .from_local_datetime(&naive)
        .single()
        .ok_or_else(refuse)?;
    Ok(local.with_timezone(&Utc))
}

/// How many significant digits a number is written with (`0.0012500` → 3, `1.5e3` → 2).
pub fn significant_digits(text: &str) -> usize {
    let t = text.trim().trim_start_matches(['+', '-']);
    let mantissa = t.split(['e', 'E']).next().unwrap_or("");
    let digits: String = mantissa.chars().filter(char::is_ascii_digit).collect();
    digits.trim_start_matches('0').trim_end_matches('0').len()
}

/// Parses a number written with a decimal point.
pub fn parse_number(s: &str) -> Result<f64, String> {
    if s.contains(',') {
        return Err(format!(
            "`{s}` is not a number (use a decimal point, not a comma)"
        ));
    }
    match s.parse::<f64>() {
        Ok(v) if v.is_finite() => Ok(v),
        _ => Err(format!("`{s}` is not a number")),
    }
}

/// A limit, in the column's metric unit, and whether it is itself allowed.
#[derive(Clone, Copy)]
struct Range {
    lo: f64,
    lo_incl: bool,
    hi: f64,
}

const fn incl(lo: f64, hi: f64) -> Range {
    Range {
        lo,
        lo_incl: true,
        hi,
    }
}
const fn above(lo: f64, hi: f64) -> Range {
    Range {
        lo,
        lo_incl: false,
        hi,
    }
}

const TEMP: Range = incl(TEMP_RANGE_C.0, TEMP_RANGE_C.1);

/// The metric unit symbol of a column unit and a converter of a metric limit to the file's unit.
fn unit_words(u: ColUnit) -> (&'static str, fn(f64) -> f64) {
    fn same(x: f64) -> f64 {
        x
    }
    match u {
        ColUnit::Plain => ("", same),
        ColUnit::C => ("°C", same),
        ColUnit::F => ("°F", |c| Temperature::from_c(c).f()),
        ColUnit::Bar => ("bar", same),
        ColUnit::Psi => ("psi", |b| Pressure::from_bar(b).psi()),
        ColUnit::Lpm => ("L/min", same),
        ColUnit::Gpm => ("US gal/min", |l| Flow::from_lpm(l).gpm()),
        ColUnit::L => ("L", same),
        ColUnit::Gal => ("US gal", |l| Volume::from_l(l).gal()),
        ColUnit::Mm => ("mm", same),
        ColUnit::In => ("in", |m| Length::from_mm(m).inches()),
    }
}

/// One data row being read: its cells, its line and the errors found so far.
struct RowReader<'r> {
    rec: &'r ByteRecord,
    file: &'r str,
    line: u64,
    errors: Vec<RowError>,
    /// Readings later than this are in the future (a day of slack for clocks and zones).
    latest: DateTime<Utc>,
    /// Numbers of this row written with more significant digits than are stored.
    rounded: u64,
}

impl<'r> RowReader<'r> {
    fn err(&mut self, column: &str, reason: impl Into<String>) {
        self.errors.push(RowError {
            file: self.file.into(),
            line: self.line,
            column: column.into(),
            reason: reason.into(),
        });
    }

    /// The cell as text with a formula-guard quote removed; `None` when absent or empty.
    fn raw(&mut self, slot: Option<Slot>) -> Option<&'r str> {
        let slot = slot?;
        let bytes = self.rec.get(slot.pos)?;
        match std::str::from_utf8(bytes) {
            Ok(t) => {
                let t = unescape_cell(t);
                if t.trim().is_empty() {
                    None
                } else {
                    Some(t)
                }
            }
            Err(_) => {
                self.err(
                    slot.name,
                    "not UTF-8 text; save the file as UTF-8 (in a spreadsheet: CSV UTF-8)",
                );
                None
            }
        }
    }

    /// A trimmed cell.
    fn text(&mut self, slot: Option<Slot>) -> Option<&'r str> {
        self.raw(slot).map(str::trim)
    }

    /// Free text (notes, names): kept as written, empty when absent.
    fn free(&mut self, slot: Option<Slot>) -> String {
        self.raw(slot).map(str::to_string).unwrap_or_default()
    }

    fn need(&mut self, slot: Option<Slot>, field: &str) -> Option<&'r str> {
        let v = self.text(slot);
        if v.is_none() {
            let name = slot.map_or(field, |s| s.name);
            self.err(name, "must be given");
        }
        v
    }

    fn parsed<T: FromStr<Err = String>>(&mut self, slot: Option<Slot>) -> Option<T> {
        let s = slot?;
        let text = self.text(Some(s))?;
        match text.parse::<T>() {
            Ok(v) => Some(v),
            Err(e) => {
                self.err(s.name, e);
                None
            }
        }
    }

    fn when(&mut self, slot: Option<Slot>, field: &str) -> Option<DateTime<Utc>> {
        let text = self.need(slot, field)?;
        let name = slot.map_or(field, |s| s.name);
        match parse_when(text) {
            Ok(t) if t > self.latest => {
                self.err(name, format!("`{text}` is in the future"));
                None
            }
            Ok(t) => Some(t),
            Err(e) => {
                self.err(name, e);
                None
            }
        }
    }

    fn integer(&mut self, slot: Option<Slot>) -> Option<i64> {
        let s = slot?;
        let text = self.text(Some(s))?;
        match text.parse::<i64>() {
            Ok(v) => Some(v),
            Err(e) => {
                use std::num::IntErrorKind::{NegOverflow, PosOverflow};
                let reason = match e.kind() {
                    PosOverflow | NegOverflow => format!(
                        "`{text}` is too large a number (at most {} digits)",
                        i64::MAX.to_string().len() - 1
                    ),
                    _ => format!("`{text}` is not a whole number"),
                };
                self.err(s.name, reason);
                None
            }
        }
    }

    /// A number in the column's own unit.
    fn number(&mut self, slot: Option<Slot>) -> Option<(f64, Slot)> {
        let s = slot?;
        let text = self.text(Some(s))?;
        match parse_number(text) {
            Ok(v) => {
                // In the column's own unit the stored figure is the typed one to 12 significant
                // digits; more digits than that are rounded away, and the summary says so. (A
                // converted unit is rounded by its conversion anyway.)
                let own_unit = matches!(
                    s.unit,
                    ColUnit::Plain
                        | ColUnit::C
                        | ColUnit::Bar
                        | ColUnit::Lpm
                        | ColUnit::L
                        | ColUnit::Mm
                );
                if own_unit && significant_digits(text) > columns::STORED_DIGITS {
                    self.rounded += 1;
                }
                Some((v, s))
            }
            Err(e) => {
                let (sym, _) = unit_words(s.unit);
                let expected = if sym.is_empty() {
                    "expected a plain number such as 12.5".to_string()
                } else {
                    format!("expected a number in {sym} such as 12.5 (the unit is in the column's name)")
                };
                self.err(s.name, format!("{e}; {expected}"));
                None
            }
        }
    }

    /// Checks a value (in the column's metric unit) against its range; the message gives the
    /// limits in the file's unit.
    fn in_range(&mut self, slot: Slot, metric: f64, r: Range) -> bool {
        let ok = (if r.lo_incl {
            metric >= r.lo
        } else {
            metric > r.lo
        }) && metric <= r.hi;
        if !ok {
            let (sym, conv) = unit_words(slot.unit);
            let show = |x: f64| round_sig(conv(x), 5).to_string();
            let sym = if sym.is_empty() {
                String::new()
            } else {
                format!(" {sym}")
            };
            let msg = if r.lo_incl {
                format!("must be between {} and {}{sym}", show(r.lo), show(r.hi))
            } else if metric <= r.lo && r.lo == 0.0 {
                if metric < 0.0 {
                    "must not be negative".to_string()
                } else {
                    "must be above 0".to_string()
                }
            } else {
                format!(
                    "must be above {} and at most {}{sym}",
                    show(r.lo),
                    show(r.hi)
                )
            };
            self.err(slot.name, msg);
        }
        ok
    }

    fn temperature(&mut self, slot: Option<Slot>) -> Option<Temperature> {
        let (v, s) = self.number(slot)?;
        let t = if s.unit == ColUnit::F {
            Temperature::from_f(v)
        } else {
            Temperature::from_c(v)
        };
        self.in_range(s, columns::temp_c(t), TEMP).then_some(t)
    }

    fn pressure(&mut self, slot: Option<Slot>, r: Range) -> Option<Pressure> {
        let (v, s) = self.number(slot)?;
        let p = if s.unit == ColUnit::Psi {
            Pressure::from_psi(v)
        } else {
            Pressure::from_bar(v)
        };
        self.in_range(s, columns::bar(p), r).then_some(p)
    }

    fn flow(&mut self, slot: Option<Slot>, r: Range) -> Option<Flow> {
        let (v, s) = self.number(slot)?;
        let q = if s.unit == ColUnit::Gpm {
            Flow::from_gpm(v)
        } else {
            Flow::from_lpm(v)
        };
        self.in_range(s, columns::lpm(q), r).then_some(q)
    }

    fn volume(&mut self, slot: Option<Slot>, r: Range) -> Option<Volume> {
        let (v, s) = self.number(slot)?;
        let q = if s.unit == ColUnit::Gal {
            Volume::from_gal(v)
        } else {
            Volume::from_l(v)
        };
        self.in_range(s, columns::litres(q), r).then_some(q)
    }

    fn length(&mut self, slot: Option<Slot>, r: Range) -> Option<Length> {
        let (v, s) = self.number(slot)?;
        let l = if s.unit == ColUnit::In {
            Length::from_in(v)
        } else {
            Length::from_mm(v)
        };
        self.in_range(s, columns::mm(l), r).then_some(l)
    }

    /// A plain number (seconds, cSt, ppm, per mL, hours, mg KOH/g) with its range.
    fn plain(&mut self, slot: Option<Slot>, r: Range) -> Option<f64> {
        let (v, s) = self.number(slot)?;
        self.in_range(s, v, r).then_some(v)
    }
}

/// Where the refused rows of a keep-going import go: a side file made on the first refused
/// row and put in place over `path` only when the import succeeds (so an earlier rejects
/// file stays until a new one replaces it, and a failed import leaves none).
struct Rejects {
    path: PathBuf,
    delimiter: u8,
    header: ByteRecord,
    writer: Option<csv::Writer<OutFile>>,
}

impl Rejects {
    fn write(&mut self, rec: &ByteRecord, width: usize, reason: &str) -> Result<(), ExchangeError> {
        let io = |e: csv::Error, path: &Path| ExchangeError::Io {
            path: path.to_path_buf(),
            source: e.into(),
        };
        if self.writer.is_none() {
            let out = OutFile::create(
                &self.path,
                Options {
                    replace: true,
                    devices_in_place: true,
                    can_force: false,
                },
            )?;
            let mut w = csv::WriterBuilder::new()
                .delimiter(self.delimiter)
                .flexible(true)
                .from_writer(out);
            let mut head = self.header.clone();
            head.push_field(b"reject_reason");
            w.write_byte_record(&head).map_err(|e| io(e, &self.path))?;
            self.writer = Some(w);
        }
        if let Some(w) = self.writer.as_mut() {
            let mut row = ByteRecord::new();
            for i in 0..width {
                row.push_field(rec.get(i).unwrap_or(b""));
            }
            row.push_field(reason.as_bytes());
            w.write_byte_record(&row).map_err(|e| io(e, &self.path))?;
        }
        Ok(())
    }

    /// Puts the rejects file in place (when a row was refused).
    fn finish(self) -> Result<Option<PathBuf>, ExchangeError> {
        match self.writer {
            Some(w) => {
                let out = w.into_inner().map_err(|e| ExchangeError::Io {
                    path: self.path.clone(),
                    source: e.into_error(),
                })?;
                Ok(Some(out.commit()?))
            }
            None => Ok(None),
        }
    }
}

/// `dir/name.csv` → `dir/name.rejects.csv`.
pub fn rejects_path(path: &Path) -> PathBuf {
    let stem = path
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_else(|| "import".into());
    path.with_file_name(format!("{stem}.rejects.csv"))
}

/// Imports one CSV file of `kind` into the shop. See the module documentation.
pub fn import_file(
    store: &mut Store,
    kind: FileKind,
    path: &Path,
    keep_going: bool,
) -> Result<ImportSummary, ExchangeError> {
    let file = std::fs::File::open(path).map_err(|e| ExchangeError::Io {
        path: path.to_path_buf(),
        source: e,
    })?;
    let label = path.display().to_string();
    let rejects = keep_going.then(|| rejects_path(path));
    import_reader(store, kind, &label, file, rejects)
}

/// Imports CSV text from any reader; `label` names it in messages. With `rejects` set, the
/// import keeps going and writes refused rows to that file.
pub fn import_reader<R: Read>(
    store: &mut Store,
    kind: FileKind,
    label: &str,
    input: R,
    rejects: Option<PathBuf>,
) -> Result<ImportSummary, ExchangeError> {
    let io_err = |e: std::io::Error| ExchangeError::Io {
        path: PathBuf::from(label),
        source: e,
    };
    let guarded = LineGuard {
        inner: input,
        breaks: 0,
        run: 0,
    };
    let mut input = BufReader::with_capacity(1 << 16, guarded);
    let mut first = Vec::new();
    if let Err(e) = input.read_until(b'\n', &mut first) {
        return Err(match too_long(&e) {
            Some(t) => ExchangeError::Rows(vec![RowError {
                file: label.into(),
                line: 1,
                column: "header".into(),
                reason: t.to_string(),
            }]),
            None => io_err(e),
        });
    }
    // UTF-16 with a byte-order mark, or without one: ASCII header text then has a zero byte
    // beside every letter (`u\0n\0i\0t\0`), which no UTF-8 header has. Said once, instead of
    // an unknown column per garbled name.
    let zeros = |parity: usize| {
        first
            .iter()
            .skip(parity)
            .step_by(2)
            .filter(|&&b| b == 0)
            .count()
    };
    let half = first.len() / 2;
    let utf16_no_bom = half >= 2 && (zeros(0) * 4 >= half * 3 || zeros(1) * 4 >= half * 3);
    if first.starts_with(b"\xFF\xFE") || first.starts_with(b"\xFE\xFF") || utf16_no_bom {
        return Err(ExchangeError::Rows(vec![RowError {
            file: label.into(),
            line: 1,
            column: "column 1".into(),
            reason: "the file is UTF-16 text; save it as UTF-8 (in a spreadsheet: CSV UTF-8)"
                .into(),
        }]));
    }
    let first_line = first
        .strip_prefix(b"\xEF\xBB\xBF")
        .unwrap_or(&first)
        .to_vec();
    if first_line.iter().all(u8::is_ascii_whitespace) {
        let expected = specs(kind)
            .iter()
            .map(|s| s.name)
            .collect::<Vec<_>>()
            .join(", ");
        return Err(ExchangeError::Rows(vec![RowError {
            file: label.into(),
            line: 1,
            column: "header".into(),
            reason: format!("the file is empty; a {kind} file starts with a header line naming its columns: {expected}"),
        }]));
    }
    let delimiter = detect_delimiter(&first_line);
    let mut reader = csv::ReaderBuilder::new()
        .delimiter(delimiter)
        .has_headers(false)
        .flexible(true)
        .from_reader(
            std::io::Cursor::new(first_line.clone()).chain(QuoteGuard::new(
                input,
                delimiter,
                &first_line,
            )),
        );

    let mut rec = ByteRecord::new();
    let csv_err = |e: csv::Error| ExchangeError::Io {
        path: PathBuf::from(label),
        source: e.into(),
    };
    let header_read = match reader.read_byte_record(&mut rec) {
        Err(e) => {
            if let csv::ErrorKind::Io(ioe) = e.kind() {
                if let Some(t) = too_long(ioe) {
                    return Err(ExchangeError::Rows(vec![RowError {
                        file: label.into(),
                        line: 1,
                        column: "header".into(),
                        reason: t.to_string(),
                    }]));
                }
                if let Some(q) = quote_left_open(ioe) {
                    return Err(ExchangeError::Rows(vec![RowError {
                        file: label.into(),
                        line: q.line,
                        column: "header".into(),
                        reason: q.to_string(),
                    }]));
                }
            }
            return Err(csv_err(e));
        }
        Ok(read) => read,
    };
    if !header_read {
        return Err(ExchangeError::Rows(vec![RowError {
            file: label.into(),
            line: 1,
            column: "header".into(),
            reason: "the file has no header line".into(),
        }]));
    }
    let header = parse_header(kind, label, &rec).map_err(ExchangeError::Rows)?;
    let mut rejects = rejects.map(|path| Rejects {
        path,
        delimiter,
        header: rec.clone(),
        writer: None,
    });

    let mut summary = ImportSummary {
        kind: kind.as_str().into(),
        rows: 0,
        inserted: 0,
        unchanged: 0,
        rejected: 0,
        rejects_file: None,
        machines_added: 0,
        fluids_added: 0,
        rounded: 0,
        inserted_ids: None,
        questioned: Vec::new(),
    };
    let mut errors: Vec<RowError> = Vec::new();
    let mut bulk = store.bulk()?;
    let mut importer = Importer::new(kind, &header);
    let latest = Utc::now() + chrono::Duration::days(1);
    loop {
        match reader.read_byte_record(&mut rec) {
            Ok(true) => {}
            Ok(false) => break,
            Err(e) => {
                if let csv::ErrorKind::Io(ioe) = e.kind() {
                    if let Some(t) = too_long(ioe) {
                        // The rest of the file cannot be read safely: nothing is imported.
                        errors.push(RowError {
                            file: label.into(),
                            line: t.line,
                            column: "row".into(),
                            reason: t.to_string(),
                        });
                        bulk.rollback();
                        return Err(ExchangeError::Rows(errors));
                    }
                    if let Some(q) = quote_left_open(ioe) {
                        // Everything after the quote was read into one cell: nothing is imported.
                        errors.push(RowError {
                            file: label.into(),
                            line: q.line,
                            column: header.name_at(q.field),
                            reason: q.to_string(),
                        });
                        bulk.rollback();
                        return Err(ExchangeError::Rows(errors));
                    }
                    return Err(csv_err(e));
                }
                let line = e.position().map_or(0, |p| p.line());
                let row_err = RowError {
                    file: label.into(),
                    line,
                    column: "row".into(),
                    reason: format!("cannot read: {e}"),
                };
                // Not even keep-going passes this row over: its cells are not to hand, so it
                // could not be written to the rejects file and would be lost.
                errors.push(row_err);
                continue;
            }
        }
        if rec.iter().all(|c| c.iter().all(u8::is_ascii_whitespace)) {
            continue;
        }
        summary.rows += 1;
        let line = rec.position().map_or(0, |p| p.line());
        let mut row = RowReader {
            rec: &rec,
            file: label,
            line,
            errors: Vec::new(),
            latest,
            rounded: 0,
        };
        let outcome = if let Some(column) = unclosed_quote(&rec, delimiter, header.width) {
            let name = header.name_at(column);
            row.err(
                &name,
                "a quote (\") opened in this cell is never closed, so the rows after it were read into \
                 the cell; close the quote",
            );
            None
        } else if rec.len() != header.width {
            // Quote what does not fit, so that nothing of the row is lost in the message.
            let surplus: Vec<String> = rec
                .iter()
                .skip(header.width)
                .map(|c| format!("`{}`", String::from_utf8_lossy(c)))
                .collect();
            let extra = if surplus.is_empty() {
                String::new()
            } else {
                format!(" (the extra: {})", surplus.join(", "))
            };
            row.err(
                "row",
                format!(
                    "has {} cells but the header names {} columns{extra}",
                    rec.len(),
                    header.width
                ),
            );
            None
        } else {
            importer.row(&mut bulk, &mut row, &mut summary)?
        };
        match outcome {
            Some(Outcome::Inserted(id)) if row.errors.is_empty() => {
                summary.inserted += 1;
                summary.rounded += row.rounded;
                if let Some(id) = id {
                    summary.inserted_ids = Some(match summary.inserted_ids {
                        None => (id, id),
                        Some((lo, hi)) => (lo.min(id), hi.max(id)),
                    });
                }
            }
            Some(Outcome::Unchanged) if row.errors.is_empty() => summary.unchanged += 1,
            _ => {
                if row.errors.is_empty() {
                    row.err("row", "refused");
                }
                match rejects.as_mut() {
                    Some(rj) => {
                        summary.rejected += 1;
                        let reason = row
                            .errors
                            .iter()
                            .map(|e| format!("{}: {}", e.column, e.reason))
                            .collect::<Vec<_>>()
                            .join("; ");
                        rj.write(&rec, header.width, &reason)?;
                    }
                    None => errors.append(&mut row.errors),
                }
            }
        }
    }
    if summary.rows == 0 && errors.is_empty() {
        errors.push(RowError {
            file: label.into(),
            line: 1,
            column: "header".into(),
            reason: "the file has a header but no rows; nothing to import".into(),
        });
    }
    if !errors.is_empty() {
        bulk.rollback();
        return Err(ExchangeError::Rows(errors));
    }
    // The rejects are put in place before the rows are committed: a rejects file that cannot
    // be written stops the import, so a refused row is never lost from view.
    if let Some(rj) = rejects {
        match rj.finish() {
            Ok(p) => summary.rejects_file = p,
            Err(e) => {
                bulk.rollback();
                return Err(e);
            }
        }
    }
    bulk.commit()?;
    Ok(summary)
}

enum Outcome {
    /// Written; the row id for checks and samples.
    Inserted(Option<Id>),
    Unchanged,
}

/// A store refusal of one row, as a row error; other store failures stop the import.
fn row_store_error(
    row: &mut RowReader<'_>,
    e: StoreError,
    column_of: impl Fn(&str) -> String,
) -> Result<(), ExchangeError> {
    match e {
        StoreError::Invalid { field, reason } => row.err(&column_of(&field), reason),
        StoreError::Duplicate { what } => row.err("row", format!("{what} already exists")),
        StoreError::BadReference => row.err("row", "refers to a unit or fluid that does not exist"),
        StoreError::Refused(msg) => row.err("row", msg),
        other => return Err(ExchangeError::Store(other)),
    }
    Ok(())
}

/// Equal within conversion noise, compared in the column's metric unit.
fn near(a: f64, b: f64) -> bool {
    a == b || (a - b).abs() <= 1e-9 * a.abs().max(b.abs())
}

/// Whether a given value disagrees with the stored one (an absent value never does).
fn differs(given: Option<f64>, stored: Option<f64>) -> bool {
    match (given, stored) {
        (None, _) => false,
        (Some(_), None) => true,
        (Some(a), Some(b)) => !near(a, b),
    }
}

fn differs_text(given: &str, stored: &str) -> bool {
    !given.is_empty() && given != stored
}

/// The resolved columns of one file kind and the per-row logic.
struct Importer {
    kind: FileKind,
    /// Each field of the kind with where it is in this file; a short list, scanned in order.
    s: Vec<(&'static str, Option<Slot>)>,
}

impl Importer {
    fn new(kind: FileKind, header: &Header) -> Self {
        let mut s: Vec<(&'static str, Option<Slot>)> = Vec::new();
        for c in specs(kind) {
            if !s.iter().any(|(f, _)| *f == c.field) {
                s.push((c.field, header.slot(c.field)));
            }
        }
        Importer { kind, s }
    }

    fn slot(&self, field: &str) -> Option<Slot> {
        self.s
            .iter()
            .find(|(f, _)| *f == field)
            .and_then(|(_, slot)| *slot)
    }

    fn name(&self, field: &str) -> String {
        self.slot(field)
            .map_or_else(|| field.to_string(), |s| s.name.to_string())
    }

    fn row(
        &mut self,
        bulk: &mut Bulk<'_>,
        row: &mut RowReader<'_>,
        summary: &mut ImportSummary,
    ) -> Result<Option<Outcome>, ExchangeError> {
        match self.kind {
            FileKind::Checks => self.check_row(bulk, row),
            FileKind::Samples => self.sample_row(bulk, row),
            FileKind::Events => self.event_row(bulk, row),
            FileKind::Units => self.unit_row(bulk, row, summary),
        }
    }

    /// Who confirmed a questioned reading and when (`confirmed_by`, `confirmed_at`): both or
    /// neither; absent columns are neither.
    fn confirmation(&self, row: &mut RowReader<'_>) -> Option<Confirmation> {
        let by_slot = self.slot("confirmed_by");
        let at_slot = self.slot("confirmed_at");
        let by = row.text(by_slot).map(str::to_string);
        let at_given = row.text(at_slot).is_some();
        match (by, at_given) {
            (None, false) => None,
            (Some(by), true) => row
                .when(at_slot, "confirmed_at")
                .map(|at| Confirmation { by, at }),
            (Some(_), false) => {
                row.err(
                    &self.name("confirmed_at"),
                    "confirmed_by needs the time of the confirmation in confirmed_at",
                );
                None
            }
            (None, true) => {
                row.err(
                    &self.name("confirmed_by"),
                    "confirmed_at needs who confirmed the reading in confirmed_by",
                );
                None
            }
        }
    }

    fn unit_id(&self, bulk: &Bulk<'_>, row: &mut RowReader<'_>) -> Option<Id> {
        let tag = row.need(self.slot("unit_tag"), "unit_tag")?;
        match bulk.unit_by_tag(tag) {
            Some(u) => Some(u.id),
            None => {
                row.err(
                    &self.name("unit_tag"),
                    format!(
                        "no unit `{tag}` in this shop (import the unit register, units.csv, first)"
                    ),
                );
                None
            }
        }
    }

    fn check_row(
        &self,
        bulk: &mut Bulk<'_>,
        row: &mut RowReader<'_>,
    ) -> Result<Option<Outcome>, ExchangeError> {
        let unit_id = self.unit_id(bulk, row);
        let taken_at = row.when(self.slot("taken_at"), "taken_at");
        let reservoir_temp = row.temperature(self.slot("reservoir_temp"));
        let ambient_temp = row.temperature(self.slot("ambient_temp"));
        let pressure = row.pressure(self.slot("pressure"), incl(0.0, 1000.0));
        let stroke_time = row
            .plain(self.slot("stroke_time"), above(0.0, 3600.0))
            .map(Seconds);
        let cycle_time = row
            .plain(self.slot("cycle_time"), above(0.0, 86400.0))
            .map(Seconds);
        let oil_level: Option<OilLevel> = row.parsed(self.slot("oil_level"));
        let filter: Option<FilterState> = row.parsed(self.slot("filter"));
        let hours = row.plain(self.slot("hours"), incl(0.0, 1.0e7));
        let case_drain = row.flow(self.slot("case_drain"), incl(0.0, 10000.0));
        let by = row.free(self.slot("by"));
        let note = row.free(self.slot("note"));
        let confirmed = self.confirmation(row);
        let (Some(unit_id), Some(taken_at)) = (unit_id, taken_at) else {
            return Ok(None);
        };
        if !row.errors.is_empty() {
            return Ok(None);
        }
        let check = Check {
            id: 0,
            unit_id,
            taken_at,
            reservoir_temp,
            ambient_temp,
            pressure,
            stroke_time,
            cycle_time,
            oil_level,
            filter,
            hours,
            case_drain,
            by,
            note,
            confirmed,
        };
        match bulk.put_check(&check) {
            Ok(Put::Inserted(id)) => Ok(Some(Outcome::Inserted(Some(id)))),
            Ok(Put::Exists(stored)) => {
                let c = columns::temp_c;
                let mut diff = Vec::new();
                let mut cmp = |field: &str, d: bool| {
                    if d {
                        diff.push(self.name(field));
                    }
                };
                cmp(
                    "reservoir_temp",
                    differs(check.reservoir_temp.map(c), stored.reservoir_temp.map(c)),
                );
                cmp(
                    "ambient_temp",
                    differs(check.ambient_temp.map(c), stored.ambient_temp.map(c)),
                );
                cmp(
                    "pressure",
                    differs(
                        check.pressure.map(columns::bar),
                        stored.pressure.map(columns::bar),
                    ),
                );
                cmp(
                    "stroke_time",
                    differs(
                        check.stroke_time.map(|s| s.0),
                        stored.stroke_time.map(|s| s.0),
                    ),
                );
                cmp(
                    "cycle_time",
                    differs(
                        check.cycle_time.map(|s| s.0),
                        stored.cycle_time.map(|s| s.0),
                    ),
                );
                cmp(
                    "oil_level",
                    check.oil_level.is_some() && check.oil_level != stored.oil_level,
                );
                cmp(
                    "filter",
                    check.filter.is_some() && check.filter != stored.filter,
                );
                cmp("hours", differs(check.hours, stored.hours));
                cmp(
                    "case_drain",
                    differs(
                        check.case_drain.map(columns::lpm),
                        stored.case_drain.map(columns::lpm),
                    ),
                );
                cmp("by", differs_text(&check.by, &stored.by));
                cmp("note", differs_text(&check.note, &stored.note));
                cmp(
                    "confirmed_by",
                    check.confirmed.is_some() && check.confirmed != stored.confirmed,
                );
                self.existing(row, "taken_at", "a check of this unit at this time", diff)
            }
            Err(e) => {
                row_store_error(row, e, |f| self.name(f))?;
                Ok(None)
            }
        }
    }

    /// A row whose key is stored: harmless when nothing differs, refused otherwise.
    fn existing(
        &self,
        row: &mut RowReader<'_>,
        key_field: &str,
        what: &str,
        diff: Vec<String>,
    ) -> Result<Option<Outcome>, ExchangeError> {
        if diff.is_empty() {
            Ok(Some(Outcome::Unchanged))
        } else {
            row.err(
                &self.name(key_field),
                format!(
                    "{what} is already stored with other values in {}; stored data is not overwritten by an import",
                    diff.join(", ")
                ),
            );
            Ok(None)
        }
    }

    fn sample_row(
        &self,
        bulk: &mut Bulk<'_>,
        row: &mut RowReader<'_>,
    ) -> Result<Option<Outcome>, ExchangeError> {
        let unit_id = self.unit_id(bulk, row);
        let sampled_at = row.when(self.slot("sampled_at"), "sampled_at");
        let kv40 = row.plain(self.slot("kv40"), above(0.0, 1.0e5));
        let kv100 = row.plain(self.slot("kv100"), above(0.0, 1.0e4));
        let visc = row.plain(self.slot("visc"), above(0.0, 1.0e5));
        let visc_temp = row.temperature(self.slot("visc_temp"));
        let counts = [
            row.plain(self.slot("count4"), incl(0.0, 1.0e9)),
            row.plain(self.slot("count6"), incl(0.0, 1.0e9)),
            row.plain(self.slot("count14"), incl(0.0, 1.0e9)),
        ];
        let iso4406 = row.text(self.slot("iso4406")).map(str::to_string);
        if let Some(code) = &iso4406 {
            if let Err(e) = Iso4406Code::from_str(code) {
                row.err(&self.name("iso4406"), e.to_string());
            }
        }
        let water_ppm = row.plain(self.slot("water"), incl(0.0, 1.0e6));
        let acid = row.plain(self.slot("acid"), incl(0.0, 50.0));
        let lab_ref = row.free(self.slot("lab_ref"));
        let note = row.free(self.slot("note"));
        let confirmed = self.confirmation(row);
        if let (Some(a), Some(b)) = (kv40, kv100) {
            if b >= a {
                row.err(
                    &self.name("kv100"),
                    "must be below kv40_cst (oil thins as it warms)",
                );
            }
        }
        match (visc, visc_temp) {
            (Some(_), None)
                if row
                    .errors
                    .iter()
                    .all(|e| e.column != self.name("visc_temp")) =>
            {
                row.err(
                    "visc_temp_c",
                    "a viscosity reading (visc_cst) needs the temperature it was read at",
                )
            }
            (None, Some(_)) => row.err(
                &self.name("visc"),
                "a reading temperature was given without visc_cst",
            ),
            _ => {}
        }
        let names = ["count4", "count6", "count14"];
        for (small, large) in [(0usize, 1usize), (1, 2), (0, 2)] {
            if let (Some(a), Some(b)) = (counts[small], counts[large]) {
                if b > a {
                    row.err(
                        &self.name(names[large]),
                        format!(
                            "{b} per mL is more than the {a} per mL at the smaller size {}; counts are cumulative \
                             and cannot rise with size",
                            self.name(names[small])
                        ),
                    );
                }
            }
        }
        let (Some(unit_id), Some(sampled_at)) = (unit_id, sampled_at) else {
            return Ok(None);
        };
        if !row.errors.is_empty() {
            return Ok(None);
        }
        let sample = Sample {
            id: 0,
            unit_id,
            sampled_at,
            kv40: kv40.map(Viscosity::from_cst),
            kv100: kv100.map(Viscosity::from_cst),
            visc_reading: match (visc, visc_temp) {
                (Some(v), Some(t)) => Some(ViscReading {
                    visc: Viscosity::from_cst(v),
                    at: t,
                }),
                _ => None,
            },
            counts_per_ml: counts,
            iso4406,
            water_ppm,
            acid_mgkoh_g: acid,
            lab_ref,
            note,
            confirmed,
        };
        match bulk.put_sample(&sample) {
            Ok(Put::Inserted(id)) => Ok(Some(Outcome::Inserted(Some(id)))),
            Ok(Put::Exists(st)) => {
                let cs = |v: Option<Viscosity>| v.map(columns::cst);
                let mut diff = Vec::new();
                let mut cmp = |field: &str, d: bool| {
                    if d {
                        diff.push(self.name(field));
                    }
                };
                cmp("kv40", differs(cs(sample.kv40), cs(st.kv40)));
                cmp("kv100", differs(cs(sample.kv100), cs(st.kv100)));
                cmp(
                    "visc",
                    differs(
                        cs(sample.visc_reading.map(|v| v.visc)),
                        cs(st.visc_reading.map(|v| v.visc)),
                    ),
                );
                cmp(
                    "visc_temp",
                    differs(
                        sample.visc_reading.map(|v| columns::temp_c(v.at)),
                        st.visc_reading.map(|v| columns::temp_c(v.at)),
                    ),
                );
                for (i, f) in names.iter().enumerate() {
                    cmp(f, differs(sample.counts_per_ml[i], st.counts_per_ml[i]));
                }
                cmp(
                    "iso4406",
                    sample.iso4406.is_some() && sample.iso4406 != st.iso4406,
                );
                cmp("water", differs(sample.water_ppm, st.water_ppm));
                cmp("acid", differs(sample.acid_mgkoh_g, st.acid_mgkoh_g));
                cmp("lab_ref", differs_text(&sample.lab_ref, &st.lab_ref));
                cmp("note", differs_text(&sample.note, &st.note));
                cmp(
                    "confirmed_by",
                    sample.confirmed.is_some() && sample.confirmed != st.confirmed,
                );
                self.existing(
                    row,
                    "sampled_at",
                    "a sample of this unit at this time",
                    diff,
                )
            }
            Err(e) => {
                row_store_error(row, e, |f| self.name(f))?;
                Ok(None)
            }
        }
    }

    fn event_row(
        &self,
        bulk: &mut Bulk<'_>,
        row: &mut RowReader<'_>,
    ) -> Result<Option<Outcome>, ExchangeError> {
        let unit_id = self.unit_id(bulk, row);
        let done_at = row.when(self.slot("done_at"), "done_at");
        let kind: Option<EventKind> = if row.text(self.slot("kind")).is_none() {
            row.err("kind", format!("must be given ({})", EventKind::expected()));
            None
        } else {
            row.parsed(self.slot("kind"))
        };
        let volume = row.volume(self.slot("volume"), above(0.0, 1.0e5));
        let fluid_id = match row.text(self.slot("fluid_name")) {
            Some(name) => {
                match bulk.fluid_by_name(name) {
                    Some(f) => Some(f.id),
                    None => {
                        row.err(
                        &self.name("fluid_name"),
                        format!("no fluid `{name}` in this shop (add it with the unit register first)"),
                    );
                        None
                    }
                }
            }
            None => None,
        };
        let by = row.free(self.slot("by"));
        let note = row.free(self.slot("note"));
        let (Some(unit_id), Some(done_at), Some(kind)) = (unit_id, done_at, kind) else {
            return Ok(None);
        };
        if !row.errors.is_empty() {
            return Ok(None);
        }
        let event = Event {
            id: 0,
            unit_id,
            done_at,
            kind,
            volume,
            fluid_id,
            by,
            note,
        };
        match bulk.put_event(&event) {
            Ok(Put::Inserted(_)) => Ok(Some(Outcome::Inserted(None))),
            Ok(Put::Exists(st)) => {
                let mut diff = Vec::new();
                if differs(
                    event.volume.map(columns::litres),
                    st.volume.map(columns::litres),
                ) {
                    diff.push(self.name("volume"));
                }
                if event.fluid_id.is_some() && event.fluid_id != st.fluid_id {
                    diff.push(self.name("fluid_name"));
                }
                if differs_text(&event.by, &st.by) {
                    diff.push(self.name("by"));
                }
                if differs_text(&event.note, &st.note) {
                    diff.push(self.name("note"));
                }
                self.existing(
                    row,
                    "done_at",
                    "an event of this kind on this unit at this time",
                    diff,
                )
            }
            Err(e) => {
                row_store_error(row, e, |f| self.name(f))?;
                Ok(None)
            }
        }
    }

    fn unit_row(
        &self,
        bulk: &mut Bulk<'_>,
        row: &mut RowReader<'_>,
        summary: &mut ImportSummary,
    ) -> Result<Option<Outcome>, ExchangeError> {
        let machine_tag = row
            .need(self.slot("machine_tag"), "machine_tag")
            .map(str::to_string);
        let machine_name = row.free(self.slot("machine_name"));
        let machine_kind = row.free(self.slot("machine_kind"));
        let route_order = row.integer(self.slot("route_order"));
        let unit_tag = row
            .need(self.slot("unit_tag"), "unit_tag")
            .map(str::to_string);
        let pump_kind: Option<PumpKind> = row.parsed(self.slot("pump_kind"));
        let rated_flow = row.flow(self.slot("rated_flow"), above(0.0, 10000.0));
        let relief = row.pressure(self.slot("relief"), above(0.0, 1000.0));
        let reservoir = row.volume(self.slot("reservoir"), above(0.0, 1.0e5));
        let bore = row.length(self.slot("bore"), above(0.0, 5000.0));
        let rod = row.length(self.slot("rod"), above(0.0, 5000.0));
        let stroke_len = row.length(self.slot("stroke"), above(0.0, 50000.0));
        let direction: Option<StrokeDirection> = row.parsed(self.slot("timed_direction"));
        let component: Option<SensitiveComponent> = row.parsed(self.slot("sensitive_component"));
        let fluid_name = row.text(self.slot("fluid_name")).map(str::to_string);
        let fluid_vg = row.integer(self.slot("fluid_vg"));
        let fluid_kv40 = row.plain(self.slot("fluid_kv40"), above(0.0, 1.0e5));
        let fluid_kv100 = row.plain(self.slot("fluid_kv100"), above(0.0, 1.0e4));

        let iso_vg = match fluid_vg {
            Some(v) if ISO_VG_GRADES.iter().any(|&(g, _)| i64::from(g) == v) => {
                u32::try_from(v).ok()
            }
            Some(v) => {
                let grades = ISO_VG_GRADES
                    .iter()
                    .map(|(g, _)| g.to_string())
                    .collect::<Vec<_>>()
                    .join(", ");
                row.err(
                    &self.name("fluid_vg"),
                    format!("{v} is not an ISO VG grade (ISO 3448: {grades})"),
                );
                None
            }
            None => None,
        };
        if let (Some(a), Some(b)) = (fluid_kv40, fluid_kv100) {
            if b >= a {
                row.err(
                    &self.name("fluid_kv100"),
                    "must be below fluid_kv40_cst (oil thins as it warms)",
                );
            }
        }
        if fluid_name.is_none()
            && (fluid_vg.is_some() || fluid_kv40.is_some() || fluid_kv100.is_some())
        {
            row.err(
                "fluid_name",
                "fluid properties are given without the fluid's name",
            );
        }
        // The timed stroke: bore, length and direction together; the rod for a retracting one.
        let any_stroke = self.slot("bore").is_some_and(|s| {
            row.rec
                .get(s.pos)
                .is_some_and(|c| !c.trim_ascii().is_empty())
        }) || self.slot("stroke").is_some_and(|s| {
            row.rec
                .get(s.pos)
                .is_some_and(|c| !c.trim_ascii().is_empty())
        }) || self.slot("timed_direction").is_some_and(|s| {
            row.rec
                .get(s.pos)
                .is_some_and(|c| !c.trim_ascii().is_empty())
        });
        let stroke = if any_stroke {
            match (bore, stroke_len, direction) {
                (Some(bore), Some(length), Some(direction)) => {
                    if direction == StrokeDirection::Retract && rod.is_none() {
                        row.err("rod_mm", "a retracting timed stroke needs the rod diameter");
                    }
                    if let Some(r) = rod {
                        if r.0 >= bore.0 {
                            row.err(&self.name("rod"), "must be smaller than the bore");
                        }
                    }
                    Some(TimedStroke {
                        bore,
                        rod,
                        length,
                        direction,
                    })
                }
                _ => {
                    let before = row.errors.len();
                    for (field, val) in [
                        ("bore", bore.is_some()),
                        ("stroke", stroke_len.is_some()),
                        ("timed_direction", direction.is_some()),
                    ] {
                        let stated = row.errors[..before]
                            .iter()
                            .any(|e| e.column == self.name(field));
                        if !val && !stated {
                            let name = match field {
                                "bore" => self.slot("bore").map_or("bore_mm", |s| s.name),
                                "stroke" => self.slot("stroke").map_or("stroke_mm", |s| s.name),
                                _ => "timed_direction",
                            };
                            row.err(name, "the timed stroke needs bore, stroke length and timed_direction together");
                        }
                    }
                    None
                }
            }
        } else {
            None
        };
        let (Some(machine_tag), Some(unit_tag)) = (machine_tag, unit_tag) else {
            return Ok(None);
        };
        if !row.errors.is_empty() {
            return Ok(None);
        }

        // A unit already in the register: the row must agree with it.
        if let Some(existing) = bulk.unit_by_tag(&unit_tag).cloned() {
            let mut diff = Vec::new();
            let machine = bulk.machine_by_id(existing.machine_id).cloned();
            if machine.as_ref().map(|m| m.tag.as_str()) != Some(machine_tag.as_str()) {
                diff.push(self.name("machine_tag"));
            }
            if let Some(m) = &machine {
                if differs_text(&machine_name, &m.name) {
                    diff.push(self.name("machine_name"));
                }
                if differs_text(&machine_kind, &m.kind) {
                    diff.push(self.name("machine_kind"));
                }
            }
            if route_order.is_some_and(|r| r != existing.route_order) {
                diff.push(self.name("route_order"));
            }
            if pump_kind.is_some_and(|p| p != existing.pump_kind) {
                diff.push(self.name("pump_kind"));
            }
            if differs(
                rated_flow.map(columns::lpm),
                existing.rated_flow.map(columns::lpm),
            ) {
                diff.push(self.name("rated_flow"));
            }
            if differs(relief.map(columns::bar), existing.relief.map(columns::bar)) {
                diff.push(self.name("relief"));
            }
            if differs(
                reservoir.map(columns::litres),
                existing.reservoir.map(columns::litres),
            ) {
                diff.push(self.name("reservoir"));
            }
            let es = existing.stroke;
            if differs(bore.map(columns::mm), es.map(|s| columns::mm(s.bore))) {
                diff.push(self.name("bore"));
            }
            if differs(
                rod.map(columns::mm),
                es.and_then(|s| s.rod).map(columns::mm),
            ) {
                diff.push(self.name("rod"));
            }
            if differs(
                stroke_len.map(columns::mm),
                es.map(|s| columns::mm(s.length)),
            ) {
                diff.push(self.name("stroke"));
            }
            if direction.is_some() && direction != es.map(|s| s.direction) {
                diff.push(self.name("timed_direction"));
            }
            if component.is_some_and(|c| c != existing.sensitive_component) {
                diff.push(self.name("sensitive_component"));
            }
            let stored_fluid = existing
                .fluid_id
                .and_then(|id| bulk.fluid_by_id(id))
                .cloned();
            if let Some(name) = &fluid_name {
                match &stored_fluid {
                    Some(f) if &f.name == name => {
                        diff.extend(self.fluid_diff(f, iso_vg, fluid_kv40, fluid_kv100));
                    }
                    _ => diff.push(self.name("fluid_name")),
                }
            }
            return self.existing(row, "unit_tag", "this unit", diff);
        }

        // A new unit: it needs its kind of pump and its most sensitive component.
        let Some(pump_kind) = pump_kind else {
            row.err(
                "pump_kind",
                format!("must be given for a new unit ({})", PumpKind::expected()),
            );
            return Ok(None);
        };
        let Some(component) = component else {
            row.err(
                "sensitive_component",
                format!(
                    "must be given for a new unit ({})",
                    SensitiveComponent::expected()
                ),
            );
            return Ok(None);
        };
        let fluid_id = match &fluid_name {
            Some(name) => match bulk.fluid_by_name(name).cloned() {
                Some(f) => {
                    let diff = self.fluid_diff(&f, iso_vg, fluid_kv40, fluid_kv100);
                    if !diff.is_empty() {
                        row.err(
                            &diff[0],
                            format!(
                                "fluid `{name}` is already stored with other values in {}",
                                diff.join(", ")
                            ),
                        );
                        return Ok(None);
                    }
                    Some(f.id)
                }
                None => {
                    let fluid = Fluid {
                        id: 0,
                        name: name.clone(),
                        iso_vg,
                        kv40_new: fluid_kv40.map(Viscosity::from_cst),
                        kv100_new: fluid_kv100.map(Viscosity::from_cst),
                        acid_new_mgkoh_g: None,
                        base_type: String::new(),
                    };
                    match bulk.insert_fluid(&fluid) {
                        Ok(id) => {
                            summary.fluids_added += 1;
                            Some(id)
                        }
                        Err(e) => {
                            row_store_error(row, e, |f| f.to_string())?;
                            return Ok(None);
                        }
                    }
                }
            },
            None => None,
        };
        let machine_id = match bulk.machine_by_tag(&machine_tag).cloned() {
            Some(m) => {
                let mut diff = Vec::new();
                if differs_text(&machine_name, &m.name) {
                    diff.push(self.name("machine_name"));
                }
                if differs_text(&machine_kind, &m.kind) {
                    diff.push(self.name("machine_kind"));
                }
                if !diff.is_empty() {
                    row.err(
                        &diff[0],
                        format!(
                            "machine `{machine_tag}` is already stored with other values in {}",
                            diff.join(", ")
                        ),
                    );
                    return Ok(None);
                }
                m.id
            }
            None => {
                let m = Machine {
                    id: 0,
                    tag: machine_tag.clone(),
                    name: machine_name,
                    kind: machine_kind,
                    route_order: route_order.unwrap_or(0),
                    notes: String::new(),
                    archived: false,
                };
                match bulk.insert_machine(&m) {
                    Ok(id) => {
                        summary.machines_added += 1;
                        id
                    }
                    Err(e) => {
                        row_store_error(row, e, |f| f.to_string())?;
                        return Ok(None);
                    }
                }
            }
        };
        let unit = Unit {
            id: 0,
            machine_id,
            tag: unit_tag,
            pump_kind,
            rated_flow,
            relief,
            reservoir,
            sensitive_component: component,
            fluid_id,
            stroke,
            route_order: route_order.unwrap_or(0),
            archived: false,
        };
        match bulk.insert_unit(&unit) {
            Ok(_) => Ok(Some(Outcome::Inserted(None))),
            Err(e) => {
                row_store_error(row, e, |f| f.to_string())?;
                Ok(None)
            }
        }
    }

    fn fluid_diff(
        &self,
        f: &Fluid,
        vg: Option<u32>,
        kv40: Option<f64>,
        kv100: Option<f64>,
    ) -> Vec<String> {
        let mut diff = Vec::new();
        if vg.is_some() && vg != f.iso_vg {
            diff.push(self.name("fluid_vg"));
        }
        if differs(kv40.map(columns::tidy), f.kv40_new.map(columns::cst)) {
            diff.push(self.name("fluid_kv40"));
        }
        if differs(kv100.map(columns::tidy), f.kv100_new.map(columns::cst)) {
            diff.push(self.name("fluid_kv100"));
        }
        diff
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn iso_times_are_read_and_ambiguous_ones_refused() {
        let t = |s: &str| parse_when(s).map(|t| crate::store::fmt_time_stamp(&t));
        assert_eq!(t("2025-03-04").unwrap(), "2025-03-04T00:00:00Z");
        assert_eq!(t("2025-03-04T07:30:00Z").unwrap(), "2025-03-04T07:30:00Z");
        assert_eq!(t("2025-03-04 07:30").unwrap(), "2025-03-04T07:30:00Z");
        assert_eq!(
            t("2025-03-04T08:30:00+01:00").unwrap(),
            "2025-03-04T07:30:00Z"
        );
        assert_eq!(
            t("2025-03-04T02:30:00-0500").unwrap(),
            "2025-03-04T07:30:00Z"
        );
        assert_eq!(t("2025-03-04T07:30:00").unwrap(), "2025-03-04T07:30:00Z");
        assert!(
            t("03/04/2025").unwrap_err().contains("ambiguous")
                || t("03/04/2025").unwrap_err().contains("either way")
        );
        assert!(t("2025-02-30").is_err());
        assert!(t("2025-03-04T07:30:00.5Z").unwrap_err().contains("second"));
        assert!(t("2025-03-04T25:00").is_err());
        assert!(t("2025-03-04T07:30:00+25:00").is_err());
        assert!(t("4 March 2025").is_err());
    }

    #[test]
    fn significant_digits_are_counted_as_written() {
        assert_eq!(significant_digits("172.123456789012345"), 18);
        assert_eq!(significant_digits("-0.0012500"), 3);
        assert_eq!(significant_digits("1.5e3"), 2);
        assert_eq!(significant_digits("120"), 2);
        assert_eq!(significant_digits("0"), 0);
    }

    #[test]
    fn numbers_need_a_decimal_point_and_must_be_finite() {
        assert_eq!(parse_number("-4.5").unwrap(), -4.5);
        assert_eq!(parse_number("1e3").unwrap(), 1000.0);
        assert!(parse_number("4,5").unwrap_err().contains("decimal point"));
        assert!(parse_number("NaN").is_err());
        assert!(parse_number("inf").is_err());
        assert!(parse_number("12 bar").is_err());
    }

    #[test]
    fn delimiter_comes_from_the_header_line() {
        assert_eq!(detect_delimiter(b"unit_tag,taken_at\n"), b',');
        assert_eq!(detect_delimiter(b"unit_tag;taken_at;note\n"), b';');
        assert_eq!(detect_delimiter(b"unit_tag\ttaken_at\n"), b'\t');
        assert_eq!(detect_delimiter(b"\"a;b\",c\n"), b',');
    }

    /// Reads `body` (after the header `a,b,c`) through the guard; the place of an open quote.
    fn guarded(body: &[u8]) -> Result<(), (u64, usize, bool)> {
        let mut g = QuoteGuard::new(body, b',', b"a,b,c\n");
        let mut sink = Vec::new();
        match g.read_to_end(&mut sink) {
            Ok(_) => Ok(()),
            Err(e) => {
                let q = quote_left_open(&e).expect("only an open quote fails");
                Err((q.line, q.field, q.at_end))
            }
        }
    }

    #[test]
    fn quotes_are_followed_as_the_csv_reader_reads_them() {
        // Closed quotes, doubled quotes, line breaks inside quotes, a quote inside a plain cell.
        assert_eq!(guarded(b"1,\"x, y\",3\n4,\"say \"\"hi\"\"\",6\n"), Ok(()));
        assert_eq!(guarded(b"1,\"two\nlines\",3\r\n4,5,6\r\n"), Ok(()));
        assert_eq!(guarded(b"1,5\" bore,3\n"), Ok(()));
        assert_eq!(guarded(b""), Ok(()));
        // Open at the end: line 3 (the header is line 1), third cell.
        assert_eq!(guarded(b"1,2,3\n4,5,\"never closed\n"), Err((3, 2, true)));
        assert_eq!(
            guarded(b"1,2,3\n4,\"open\n5,6,7\n8,9,10\n"),
            Err((3, 1, true))
        );
        // A quote that runs on past the record limit is stopped there, not read to the end.
        let mut long = b"1,\"".to_vec();
        long.extend(
            std::iter::repeat_n(b"x,y,z\n".as_slice(), MAX_RECORD_BYTES / 6 + 10).flatten(),
        );
        long.extend_from_slice(b"\",3\n");
        assert_eq!(guarded(&long), Err((2, 1, false)));
        // The header line itself can open a quote.
        let mut g = QuoteGuard::new(&b"still the header\",c\n1,2,3\n"[..], b',', b"a,\"b\n");
        let mut sink = Vec::new();
        assert!(g.read_to_end(&mut sink).is_ok());
    }
}
