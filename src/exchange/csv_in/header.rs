//! Header: mapping a file's header line to columns and units, and telling its delimiter. It must
//! not read data rows.

use super::*;
use std::collections::HashMap;

use csv::ByteRecord;

use crate::exchange::mapping::{Mapping, Target};
use crate::exchange::{FileKind, RowError};

/// Where a field is in the file and in which unit.
#[derive(Clone, Copy, Debug)]
pub(super) struct Slot {
    pub(super) pos: usize,
    pub(super) unit: ColUnit,
    pub(super) name: &'static str,
}

pub(super) struct Header {
    slots: HashMap<&'static str, Slot>,
    pub(super) width: usize,
}

impl Header {
    pub(super) fn slot(&self, field: &str) -> Option<Slot> {
        self.slots.get(field).copied()
    }

    /// The header name of the column at `pos`.
    pub(super) fn name_at(&self, pos: usize) -> String {
        self.slots
            .values()
            .find(|s| s.pos == pos)
            .map_or_else(|| format!("column {}", pos + 1), |s| s.name.to_string())
    }
}

/// The cell where a quote was opened and never closed: the reader then takes every following
/// line into that cell. Recognised by a line break in a cell followed by a line that holds a
/// whole row's worth of delimiters.
pub(super) fn unclosed_quote(rec: &ByteRecord, delimiter: u8, width: usize) -> Option<usize> {
    if width < 2 {
        return None;
    }
    rec.iter().position(|cell| {
        cell.split(|&b| b == b'\n')
            .skip(1)
            .any(|line| line.iter().filter(|&&b| b == delimiter).count() >= width - 1)
    })
}

pub(super) fn parse_header(
    kind: FileKind,
    file: &str,
    rec: &ByteRecord,
    mapping: Option<&Mapping>,
) -> Result<Header, Vec<RowError>> {
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
        // Through a mapping the file's own name stands for one of sumpbook's; a column the
        // mapping does not decide is refused rather than dropped unseen.
        let name = match mapping {
            None => name,
            Some(m) => match m.target(name) {
                Some(Target::Column(c)) => c,
                Some(Target::Ignore) => continue,
                None => {
                    errors.push(err(
                        &clip(name, 60),
                        "the column mapping neither maps nor ignores this column; map it to one \
                         of sumpbook's columns or ignore it"
                            .into(),
                    ));
                    continue;
                }
            },
        };
        let Some(spec) = specs.iter().find(|s| s.name == name) else {
            let shown = if name.is_empty() {
                format!("column {}", pos + 1)
            } else {
                clip(name, 60)
            };
            let expected = specs.iter().map(|s| s.name).collect::<Vec<_>>().join(", ");
            // Say what the line probably is, when it is plainly not a header as sumpbook reads it.
            let hint = if parse_number(name).is_ok() || parse_when(name, Default::default()).is_ok()
            {
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
    for field in required_fields(kind) {
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
pub(super) fn detect_delimiter(header_line: &[u8]) -> u8 {
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
