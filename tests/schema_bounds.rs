//! The one bounds table (`sumpbook::bounds`) against the schema: the range CHECK constraints
//! of the latest migrations of both backends (`migrations/sqlite/*/up.sql`,
//! `migrations/postgres/*/up.sql`, read in order, a later one replacing an earlier one's
//! constraint of the same column) are exactly the table's, column by column. A failure names
//! the backend and the column that differs.

use std::collections::BTreeMap;
use std::path::PathBuf;

use sumpbook::bounds::{Bound, ALL};

/// (lowest, whether it is accepted, highest) of a column's range CHECK.
type Range = (f64, bool, f64);

/// The range CHECKs named `"column: …"` and written `column BETWEEN a AND b` or `column > a
/// AND column <= b`, by column; other CHECKs (lists, lengths, orders) are not ranges.
fn range_checks(sql: &str, out: &mut BTreeMap<String, Range>) {
    let mut rest = sql;
    while let Some(i) = rest.find("CONSTRAINT \"") {
        rest = &rest[i + "CONSTRAINT \"".len()..];
        let Some(colon) = rest.find(':') else { break };
        let column = rest[..colon].to_string();
        let Some(q) = rest.find('"') else { break };
        let after = rest[q + 1..].trim_start();
        let Some(body) = after.strip_prefix("CHECK (") else {
            continue;
        };
        let Some(end) = body.find(')') else { continue };
        let words: Vec<&str> = body[..end].split_whitespace().collect();
        let num = |s: &str| s.parse::<f64>().ok();
        let range = match words.as_slice() {
            [c, "BETWEEN", a, "AND", b] if *c == column => {
                num(a).zip(num(b)).map(|(a, b)| (a, true, b))
            }
            [c, ">", a, "AND", c2, "<=", b] if *c == column && *c2 == column => {
                num(a).zip(num(b)).map(|(a, b)| (a, false, b))
            }
            _ => None,
        };
        if let Some(r) = range {
            out.insert(column, r);
        }
    }
}

fn schema_ranges(backend: &str) -> BTreeMap<String, Range> {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("migrations")
        .join(backend);
    let mut folders: Vec<(u32, PathBuf)> = std::fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter_map(|p| {
            let n = p.file_name()?.to_str()?.split('-').next()?.parse().ok()?;
            Some((n, p))
        })
        .collect();
    folders.sort();
    let mut out = BTreeMap::new();
    for (_, f) in folders {
        let sql = std::fs::read_to_string(f.join("up.sql")).unwrap();
        range_checks(&sql, &mut out);
    }
    out
}

#[test]
fn the_bounds_table_is_the_schemas_range_checks_on_both_backends() {
    for backend in ["sqlite", "postgres"] {
        let schema = schema_ranges(backend);
        assert!(
            schema.len() >= 20,
            "{backend}: {} range CHECKs found",
            schema.len()
        );
        for b in ALL {
            let Bound {
                column,
                lo,
                lo_incl,
                hi,
            } = *b;
            let Some(&(s_lo, s_incl, s_hi)) = schema.get(column) else {
                panic!("{backend}: column {column} has no range CHECK in the schema");
            };
            assert!(
                s_lo == lo && s_incl == lo_incl && s_hi == hi,
                "{backend}: column {column}: the schema says {} {s_lo} to {s_hi}, the table {} {lo} to {hi}",
                if s_incl { "from" } else { "above" },
                if lo_incl { "from" } else { "above" },
            );
        }
        for column in schema.keys() {
            assert!(
                ALL.iter().any(|b| b.column == column),
                "{backend}: column {column} has a range CHECK the bounds table lacks"
            );
        }
    }
}
