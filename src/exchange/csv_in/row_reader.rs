//! Row reader: one data row's cells read into SI values, each checked against its column's
//! bounds, collecting every bad cell as `FILE:LINE: COLUMN: reason`. It must not write the shop.

use super::*;
use std::str::FromStr;

use chrono::{DateTime, Utc};
use csv::ByteRecord;

use crate::exchange::{unescape_cell, RowError};
use crate::store::columns::{self, round_sig};
use crate::units::{Flow, Length, Pressure, Temperature, Volume};

/// A limit, in the column's metric unit, and whether it is itself allowed.
#[derive(Clone, Copy)]
pub(super) struct Range {
    lo: f64,
    lo_incl: bool,
    hi: f64,
}

/// The range of a column of the one bounds table (`crate::bounds`).
pub(super) const fn bound(b: crate::bounds::Bound) -> Range {
    Range {
        lo: b.lo,
        lo_incl: b.lo_incl,
        hi: b.hi,
    }
}

const TEMP: Range = bound(crate::bounds::RESERVOIR_TEMP_C);

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
pub(super) struct RowReader<'r> {
    pub(super) rec: &'r ByteRecord,
    pub(super) file: &'r str,
    pub(super) line: u64,
    pub(super) errors: Vec<RowError>,
    /// Readings later than this are in the future (a day of slack for clocks and zones).
    pub(super) latest: DateTime<Utc>,
    /// The shop's time zone: times without an offset are its wall clock.
    pub(super) zone: crate::app::local_time::Zone,
    /// Numbers of this row written with more significant digits than are stored.
    pub(super) rounded: u64,
    /// How the file writes day and month (a lab's `11/20/2026`).
    pub(super) dates: crate::exchange::mapping::DateOrder,
}

impl<'r> RowReader<'r> {
    pub(super) fn err(&mut self, column: &str, reason: impl Into<String>) {
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
    pub(super) fn text(&mut self, slot: Option<Slot>) -> Option<&'r str> {
        self.raw(slot).map(str::trim)
    }

    /// Free text (notes, names): kept as written, empty when absent.
    pub(super) fn free(&mut self, slot: Option<Slot>) -> String {
        self.raw(slot).map(str::to_string).unwrap_or_default()
    }

    pub(super) fn need(&mut self, slot: Option<Slot>, field: &str) -> Option<&'r str> {
        let v = self.text(slot);
        if v.is_none() {
            let name = slot.map_or(field, |s| s.name);
            self.err(name, "must be given");
        }
        v
    }

    pub(super) fn parsed<T: FromStr<Err = String>>(&mut self, slot: Option<Slot>) -> Option<T> {
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

    pub(super) fn when(&mut self, slot: Option<Slot>, field: &str) -> Option<DateTime<Utc>> {
        let text = self.need(slot, field)?;
        let name = slot.map_or(field, |s| s.name);
        let iso = match crate::exchange::mapping::iso_date_text(text, self.dates) {
            Ok(t) => t,
            Err(e) => {
                self.err(name, e);
                return None;
            }
        };
        match parse_when(&iso, self.zone) {
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

    pub(super) fn integer(&mut self, slot: Option<Slot>) -> Option<i64> {
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

    pub(super) fn temperature(&mut self, slot: Option<Slot>) -> Option<Temperature> {
        let (v, s) = self.number(slot)?;
        let t = if s.unit == ColUnit::F {
            Temperature::from_f(v)
        } else {
            Temperature::from_c(v)
        };
        self.in_range(s, columns::temp_c(t), TEMP).then_some(t)
    }

    pub(super) fn pressure(&mut self, slot: Option<Slot>, r: Range) -> Option<Pressure> {
        let (v, s) = self.number(slot)?;
        let p = if s.unit == ColUnit::Psi {
            Pressure::from_psi(v)
        } else {
            Pressure::from_bar(v)
        };
        self.in_range(s, columns::bar(p), r).then_some(p)
    }

    pub(super) fn flow(&mut self, slot: Option<Slot>, r: Range) -> Option<Flow> {
        let (v, s) = self.number(slot)?;
        let q = if s.unit == ColUnit::Gpm {
            Flow::from_gpm(v)
        } else {
            Flow::from_lpm(v)
        };
        self.in_range(s, columns::lpm(q), r).then_some(q)
    }

    pub(super) fn volume(&mut self, slot: Option<Slot>, r: Range) -> Option<Volume> {
        let (v, s) = self.number(slot)?;
        let q = if s.unit == ColUnit::Gal {
            Volume::from_gal(v)
        } else {
            Volume::from_l(v)
        };
        self.in_range(s, columns::litres(q), r).then_some(q)
    }

    pub(super) fn length(&mut self, slot: Option<Slot>, r: Range) -> Option<Length> {
        let (v, s) = self.number(slot)?;
        let l = if s.unit == ColUnit::In {
            Length::from_in(v)
        } else {
            Length::from_mm(v)
        };
        self.in_range(s, columns::mm(l), r).then_some(l)
    }

    /// A plain number (seconds, cSt, ppm, per mL, hours, mg KOH/g) with its range.
    pub(super) fn plain(&mut self, slot: Option<Slot>, r: Range) -> Option<f64> {
        let (v, s) = self.number(slot)?;
        self.in_range(s, v, r).then_some(v)
    }
}
