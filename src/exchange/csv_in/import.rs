//! Import: the entry points that read a CSV file as one stream and write it through one bulk
//! transaction, all or nothing unless asked to keep going. No SQL here; the store does that.

use super::*;
use std::io::{BufRead, BufReader, Read};
use std::path::{Path, PathBuf};

use chrono::Utc;
use csv::ByteRecord;

use crate::exchange::mapping::{DateOrder, Mapping};
use crate::exchange::{ExchangeError, FileKind, ImportSummary, RowError};
use crate::store::Store;

/// A file's header and its first `max` non-blank rows as text, for choosing how to read it
/// and for showing; reads no further. The real reading, with every rule, is the importer's.
pub fn head_of_file(path: &Path, max: usize) -> std::io::Result<(Vec<String>, Vec<Vec<String>>)> {
    let mut input = BufReader::new(std::fs::File::open(path)?);
    let mut first = Vec::new();
    input.read_until(b'\n', &mut first)?;
    let first = first
        .strip_prefix(b"\xEF\xBB\xBF")
        .map(<[u8]>::to_vec)
        .unwrap_or(first);
    let delimiter = detect_delimiter(&first);
    let mut r = csv::ReaderBuilder::new()
        .delimiter(delimiter)
        .has_headers(false)
        .flexible(true)
        .from_reader(std::io::Cursor::new(first).chain(input));
    let mut rows = r.byte_records().map_while(Result::ok).map(|rec| {
        rec.iter()
            .map(|c| String::from_utf8_lossy(c).into_owned())
            .collect::<Vec<_>>()
    });
    let header = rows
        .next()
        .unwrap_or_default()
        .into_iter()
        .map(|h| h.trim().to_string())
        .collect();
    let body = rows
        .filter(|r| r.iter().any(|c| !c.trim().is_empty()))
        .take(max)
        .collect();
    Ok((header, body))
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
    import_mapped(store, kind, label, input, rejects, None)
}

/// [`import_reader`] with the file's own column names read through `mapping` (a lab's
/// "Sample Date" as `sampled_at`, its dates in the mapping's order). With a mapping, a column it
/// neither maps nor ignores is refused; messages name the columns as the file does.
pub fn import_mapped<R: Read>(
    store: &mut Store,
    kind: FileKind,
    label: &str,
    input: R,
    rejects: Option<PathBuf>,
    mapping: Option<&Mapping>,
) -> Result<ImportSummary, ExchangeError> {
    let renamed = |errors: Vec<RowError>| {
        let Some(m) = mapping else { return errors };
        errors
            .into_iter()
            .map(|mut e| {
                let own = m.columns.iter().find(|(_, t)| {
                    matches!(t, Some(crate::exchange::mapping::Target::Column(c)) if *c == e.column)
                });
                if let Some((name, _)) = own {
                    e.column = name.clone();
                }
                e
            })
            .collect()
    };
    match import_inner(store, kind, label, input, rejects, mapping) {
        Err(ExchangeError::Rows(errors)) => Err(ExchangeError::Rows(renamed(errors))),
        other => other,
    }
}

fn import_inner<R: Read>(
    store: &mut Store,
    kind: FileKind,
    label: &str,
    input: R,
    rejects: Option<PathBuf>,
    mapping: Option<&Mapping>,
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
    let header = parse_header(kind, label, &rec, mapping).map_err(ExchangeError::Rows)?;
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
        profile: None,
    };
    let mut errors: Vec<RowError> = Vec::new();
    let zone = crate::app::local_time::Zone::of_setting(&store.settings()?.time_zone);
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
            zone,
            rounded: 0,
            dates: mapping.map_or(DateOrder::Iso, |m| m.dates),
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
