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
    let mut input = BufReader::with_capacity(
        1 << 16,
        LineGuard {
            inner: input,
            breaks: 0,
            run: 0,
        },
    );
    let first_line = first_line(kind, label, &mut input)?;
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
    read_header(label, &mut reader, &mut rec)?;
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
                    // The rest of the file cannot be read safely: nothing is imported.
                    let unsafe_rest = too_long(ioe)
                        .map(|t| (t.line, "row".to_string(), t.to_string()))
                        // Everything after the quote was read into one cell.
                        .or_else(|| {
                            quote_left_open(ioe)
                                .map(|q| (q.line, header.name_at(q.field), q.to_string()))
                        });
                    if let Some((line, column, reason)) = unsafe_rest {
                        errors.push(RowError {
                            file: label.into(),
                            line,
                            column,
                            reason,
                        });
                        bulk.rollback();
                        return Err(ExchangeError::Rows(errors));
                    }
                    return Err(io_error(label, e.into()));
                }
                let line = e.position().map_or(0, |p| p.line());
                // Not even keep-going passes this row over: its cells are not to hand, so it
                // could not be written to the rejects file and would be lost.
                errors.push(RowError {
                    file: label.into(),
                    line,
                    column: "row".into(),
                    reason: format!("cannot read: {e}"),
                });
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
        let outcome = if misshapen(&mut row, &rec, delimiter, &header) {
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

/// One error that stops the whole file, at `line`, in `column`.
fn file_error(label: &str, line: u64, column: &str, reason: String) -> ExchangeError {
    ExchangeError::Rows(vec![RowError {
        file: label.into(),
        line,
        column: column.into(),
        reason,
    }])
}

/// The file could not be read at all.
fn io_error(label: &str, source: std::io::Error) -> ExchangeError {
    ExchangeError::Io {
        path: PathBuf::from(label),
        source,
    }
}

/// The file's first line, without a UTF-8 byte-order mark; refused when it is too long, the
/// file is UTF-16 text, or there is nothing in it.
fn first_line<R: Read>(
    kind: FileKind,
    label: &str,
    input: &mut BufReader<LineGuard<R>>,
) -> Result<Vec<u8>, ExchangeError> {
    let mut first = Vec::new();
    if let Err(e) = input.read_until(b'\n', &mut first) {
        return Err(match too_long(&e) {
            Some(t) => file_error(label, 1, "header", t.to_string()),
            None => io_error(label, e),
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
        return Err(file_error(
            label,
            1,
            "column 1",
            "the file is UTF-16 text; save it as UTF-8 (in a spreadsheet: CSV UTF-8)".into(),
        ));
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
        return Err(file_error(
            label,
            1,
            "header",
            format!("the file is empty; a {kind} file starts with a header line naming its columns: {expected}"),
        ));
    }
    Ok(first_line)
}

/// Reads the header line into `rec`; refused when it is too long, opens a quote it never
/// closes, or is not there.
fn read_header<R: Read>(
    label: &str,
    reader: &mut csv::Reader<R>,
    rec: &mut ByteRecord,
) -> Result<(), ExchangeError> {
    match reader.read_byte_record(rec) {
        Ok(true) => Ok(()),
        Ok(false) => Err(file_error(
            label,
            1,
            "header",
            "the file has no header line".into(),
        )),
        Err(e) => {
            if let csv::ErrorKind::Io(ioe) = e.kind() {
                if let Some(t) = too_long(ioe) {
                    return Err(file_error(label, 1, "header", t.to_string()));
                }
                if let Some(q) = quote_left_open(ioe) {
                    return Err(file_error(label, q.line, "header", q.to_string()));
                }
            }
            Err(io_error(label, e.into()))
        }
    }
}

/// Whether the row is not the header's shape — a quote never closed, or another number of
/// cells — said on `row`.
fn misshapen(row: &mut RowReader, rec: &ByteRecord, delimiter: u8, header: &Header) -> bool {
    if let Some(column) = unclosed_quote(rec, delimiter, header.width) {
        let name = header.name_at(column);
        row.err(
            &name,
            "a quote (\") opened in this cell is never closed, so the rows after it were read into \
             the cell; close the quote",
        );
        return true;
    }
    if rec.len() != header.width {
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
        return true;
    }
    false
}
