//! Reliability (docs/engineering.md, "Reliability targets"): nothing entered is ever lost or
//! silently changed.
//!
//! Drives the built `sumpbook` binary on real shop files in temporary directories:
//! - the corpus of refused input in `tests/bad_input/` (files listed in `expected.tsv`, bad
//!   quantities in `quantities.tsv`): each gives exit 2 and a message naming the file, line,
//!   column and what was expected, and leaves the shop byte-for-byte as it was;
//! - valid variants (byte-order mark, `;` and tab, CRLF, US units, quoted cells) import;
//! - keep-going imports: good rows in, refused rows in a side file with their reasons;
//! - SIGKILL at random moments of an import: integrity holds, the import is all or nothing;
//! - two writers at once: no write lost, no "database is locked";
//! - schema upgrades from every earlier version with data, the backup taken before them, and
//!   refusal of a newer file; unusable files (missing, read-only, locked, text, foreign);
//! - damaged shops neither copied nor written to; a write-ahead log removed after an unclean
//!   shutdown told of;
//! - formula-safe export that import reverses;
//! - properties of the CSV reader (proptest): no panic on any input, export ∘ import = identity.

use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

use rusqlite::{Connection, OpenFlags};

// ---------------------------------------------------------------------------------------------
// Helpers

fn sumpbook() -> Command {
    let mut c = Command::new(env!("CARGO_BIN_EXE_sumpbook"));
    // Never touch the user's default shop from a test.
    c.env(
        "XDG_DATA_HOME",
        std::env::temp_dir().join("sumpbook-reliability-no-default"),
    );
    c
}

/// Runs `sumpbook --db DB ARGS...`.
fn run(db: &Path, args: &[&str]) -> Output {
    sumpbook()
        .arg("--db")
        .arg(db)
        .args(args)
        .output()
        .expect("the sumpbook binary runs")
}

fn text(b: &[u8]) -> String {
    String::from_utf8_lossy(b).into_owned()
}

/// At most the first 2000 characters, for failure messages about huge outputs.
fn short(s: &str) -> String {
    match s.char_indices().nth(2000) {
        Some((i, _)) => format!("{}… ({} bytes in all)", &s[..i], s.len()),
        None => s.to_string(),
    }
}

/// Runs and insists on exit 0; returns standard output.
fn ok(db: &Path, args: &[&str]) -> String {
    let out = run(db, args);
    assert!(
        out.status.success(),
        "sumpbook {args:?} failed ({:?}):\n{}{}",
        out.status.code(),
        text(&out.stdout),
        text(&out.stderr)
    );
    text(&out.stdout)
}

fn corpus() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/bad_input")
}

fn path_str(p: &Path) -> &str {
    p.to_str().expect("test paths are UTF-8")
}

/// A new shop with the corpus register (two units) and three checks.
fn base_shop(dir: &Path) -> PathBuf {
    let db = dir.join("shop.sqlite");
    ok(&db, &["init", "--name", "Reliability test shop"]);
    ok(
        &db,
        &[
            "import",
            "units",
            path_str(&corpus().join("shop/units.csv")),
        ],
    );
    ok(
        &db,
        &[
            "import",
            "checks",
            path_str(&corpus().join("shop/checks.csv")),
        ],
    );
    db
}

/// Everything stored, as text: schema, pragmas and every row of every table, in a fixed order.
fn dump(db: &Path) -> String {
    let conn = Connection::open_with_flags(db, OpenFlags::SQLITE_OPEN_READ_WRITE)
        .expect("the shop opens for the dump");
    let mut out = String::new();
    for pragma in ["user_version", "application_id"] {
        let v: i64 = conn
            .query_row(&format!("PRAGMA {pragma}"), [], |r| r.get(0))
            .unwrap();
        out.push_str(&format!("{pragma} = {v}\n"));
    }
    let mut st = conn
        .prepare("SELECT type, name, ifnull(sql, '') FROM sqlite_schema ORDER BY type, name")
        .unwrap();
    let objects: Vec<(String, String, String)> = st
        .query_map([], |r| Ok((r.get(0)?, r.get(1)?, r.get(2)?)))
        .unwrap()
        .map(Result::unwrap)
        .collect();
    for (kind, name, sql) in &objects {
        out.push_str(&format!("{kind} {name}: {sql}\n"));
    }
    for (kind, name, _) in &objects {
        if kind != "table" || name.starts_with("sqlite_") {
            continue;
        }
        let mut st = conn.prepare(&format!("SELECT * FROM \"{name}\"")).unwrap();
        let n = st.column_count();
        let mut rows: Vec<String> = st
            .query_map([], |r| {
                let cells: Vec<String> = (0..n)
                    .map(|i| format!("{:?}", r.get_ref(i).map(|v| v.to_owned()).ok()))
                    .collect();
                Ok(cells.join("|"))
            })
            .unwrap()
            .map(Result::unwrap)
            .collect();
        rows.sort();
        out.push_str(&format!("-- {name}: {} rows\n", rows.len()));
        for row in rows {
            out.push_str(&row);
            out.push('\n');
        }
    }
    out
}

/// The shop file's bytes and the files SQLite keeps beside it (none after a clean exit).
fn file_state(db: &Path) -> (Vec<u8>, bool) {
    let wal = PathBuf::from(format!("{}-wal", db.display()));
    (
        std::fs::read(db).expect("the shop file is readable"),
        wal.exists(),
    )
}

fn count(db: &Path, table: &str) -> i64 {
    let conn = Connection::open(db).unwrap();
    conn.query_row(&format!("SELECT count(*) FROM {table}"), [], |r| r.get(0))
        .unwrap()
}

/// Parses CSV text into rows of cells.
fn csv_rows(text: &str) -> Vec<Vec<String>> {
    let mut r = csv::ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .from_reader(text.as_bytes());
    r.records()
        .map(|rec| rec.unwrap().iter().map(str::to_string).collect())
        .collect()
}

// ---------------------------------------------------------------------------------------------
// 1. The corpus of refused input

struct Expectation {
    file: String,
    kind: String,
    line: u64,
    column: String,
    reason: String,
}

fn expectations() -> Vec<Expectation> {
    let table = std::fs::read_to_string(corpus().join("expected.tsv")).unwrap();
    table
        .lines()
        .filter(|l| !l.starts_with('#') && !l.trim().is_empty())
        .map(|l| {
            let f: Vec<&str> = l.split('\t').collect();
            assert_eq!(
                f.len(),
                5,
                "expected.tsv: five tab-separated fields in {l:?}"
            );
            Expectation {
                file: f[0].into(),
                kind: f[1].into(),
                line: f[2].parse().unwrap(),
                column: f[3].into(),
                reason: f[4].into(),
            }
        })
        .collect()
}

/// Imports `file` as `kind` into a copy of `base` and checks the refusal against `expect`.
/// Returns what went wrong, if anything.
fn refused_cleanly(
    dir: &Path,
    base: &Path,
    n: usize,
    file: &Path,
    kind: &str,
    expect: &Expectation,
) -> Option<String> {
    let db = dir.join(format!("case-{n}.sqlite"));
    std::fs::copy(base, &db).unwrap();
    let before = (file_state(&db), dump(&db));
    let out = run(&db, &["import", kind, path_str(file)]);
    let stderr = text(&out.stderr);
    let after = (file_state(&db), dump(&db));
    let mut problems = Vec::new();
    if out.status.code() != Some(2) {
        problems.push(format!("exit {:?}, expected 2", out.status.code()));
    }
    let place = format!("{}:{}: {}: ", file.display(), expect.line, expect.column);
    let named = stderr.lines().find(|l| l.contains(&place));
    match named {
        None => problems.push(format!("no line with `{place}`")),
        Some(l) if !l.contains(&expect.reason) => problems.push(format!(
            "the line for `{place}` does not say `{}`",
            expect.reason
        )),
        Some(_) => {}
    }
    if stderr.contains("panicked") {
        problems.push("it panicked".into());
    }
    if after.0 != before.0 {
        problems.push("the shop file's bytes changed".into());
    }
    if after.1 != before.1 {
        problems.push("the stored data changed".into());
    }
    if problems.is_empty() {
        None
    } else {
        Some(format!(
            "{} ({kind}): {}\n  stderr: {}",
            expect.file,
            problems.join("; "),
            short(stderr.trim_end())
        ))
    }
}

#[test]
fn every_file_of_the_bad_input_corpus_is_refused_with_its_place_and_reason() {
    let dir = tempfile::tempdir().unwrap();
    let base = base_shop(dir.path());
    let table = expectations();
    assert!(
        table.len() >= 40,
        "the corpus holds {} refused files; at least 40 are wanted",
        table.len()
    );
    for kind in ["units", "checks", "samples", "events"] {
        assert!(
            table.iter().filter(|e| e.kind == kind).count() >= 5,
            "too few {kind} files in the corpus"
        );
    }
    let mut failures = Vec::new();
    for (n, e) in table.iter().enumerate() {
        let file = corpus().join(&e.file);
        assert!(
            file.is_file(),
            "{} is listed in expected.tsv but missing",
            e.file
        );
        if let Some(f) = refused_cleanly(dir.path(), &base, n, &file, &e.kind, e) {
            failures.push(f);
        }
    }
    // Every corpus file is in the table, so none is forgotten.
    for entry in std::fs::read_dir(corpus()).unwrap() {
        let name = entry.unwrap().file_name().to_string_lossy().into_owned();
        if name.ends_with(".csv") {
            assert!(
                table.iter().any(|e| e.file == name),
                "{name} is in tests/bad_input but not in expected.tsv"
            );
        }
    }
    assert!(
        failures.is_empty(),
        "{} of {} corpus files misbehaved:\n{}",
        failures.len(),
        table.len(),
        failures.join("\n")
    );
}

/// Files too large to commit, made here: 10 MB on one line with no line break at all, a header
/// followed by a single 10 MB row, and a quote left open before 10 MB of short lines.
#[test]
fn ten_megabytes_on_one_line_is_refused_without_harm() {
    let dir = tempfile::tempdir().unwrap();
    let base = base_shop(dir.path());
    let ten_mb = 10 * 1024 * 1024;

    let one_line = dir.path().join("one_line.csv");
    let mut f = std::fs::File::create(&one_line).unwrap();
    f.write_all(b"unit_tag,taken_at,").unwrap();
    f.write_all(&vec![b'x'; ten_mb]).unwrap();
    drop(f);
    let e = Expectation {
        file: "one_line.csv".into(),
        kind: "checks".into(),
        line: 1,
        column: "header".into(),
        reason: "longer than".into(),
    };
    let r1 = refused_cleanly(dir.path(), &base, 1, &one_line, "checks", &e);

    let big_row = dir.path().join("big_row.csv");
    let mut f = std::fs::File::create(&big_row).unwrap();
    f.write_all(b"unit_tag,taken_at,note\nPR-07-HPU,2025-02-03T07:30:00Z,")
        .unwrap();
    f.write_all(&vec![b'y'; ten_mb]).unwrap();
    drop(f);
    let e = Expectation {
        file: "big_row.csv".into(),
        kind: "checks".into(),
        line: 2,
        column: "row".into(),
        reason: "longer than".into(),
    };
    let r2 = refused_cleanly(dir.path(), &base, 2, &big_row, "checks", &e);

    // A quote opened and never closed, followed by 10 MB of short lines: the reader would take
    // them all into the one cell.
    let run_on = dir.path().join("run_on.csv");
    let mut f = std::io::BufWriter::new(std::fs::File::create(&run_on).unwrap());
    f.write_all(b"unit_tag,taken_at,note\nPR-07-HPU,2025-02-03T07:30:00Z,\"opened here\n")
        .unwrap();
    for i in 0..(ten_mb / 40) {
        writeln!(f, "PR-07-HPU,2025-02-04T07:30:00Z,line {i:>10}").unwrap();
    }
    drop(f);
    let e = Expectation {
        file: "run_on.csv".into(),
        kind: "checks".into(),
        line: 2,
        column: "note".into(),
        reason: "runs on for more than".into(),
    };
    let r3 = refused_cleanly(dir.path(), &base, 3, &run_on, "checks", &e);
    let failures: Vec<String> = [r1, r2, r3].into_iter().flatten().collect();
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

#[test]
fn valid_variants_import_bom_semicolon_tab_crlf_us_units_quotes() {
    let dir = tempfile::tempdir().unwrap();
    let db = base_shop(dir.path());
    let good = corpus().join("good");
    let checks_before = count(&db, "checks");
    for (file, kind, rows) in [
        ("checks_bom.csv", "checks", 2),
        ("checks_semicolon_crlf.csv", "checks", 2),
        ("samples_tab.csv", "samples", 1),
        ("checks_us_units.csv", "checks", 1),
        ("checks_quoted_and_guarded.csv", "checks", 2),
    ] {
        let out = ok(&db, &["import", kind, path_str(&good.join(file)), "--json"]);
        let summary: serde_json::Value = serde_json::from_str(&out).unwrap();
        assert_eq!(summary["inserted"], rows, "{file}: {out}");
        // A second import of the same file adds nothing.
        let again: serde_json::Value = serde_json::from_str(&ok(
            &db,
            &["import", kind, path_str(&good.join(file)), "--json"],
        ))
        .unwrap();
        assert_eq!(again["inserted"], 0, "{file}");
        assert_eq!(again["unchanged"], rows, "{file}");
    }
    assert_eq!(count(&db, "checks"), checks_before + 7);
    let conn = Connection::open(&db).unwrap();
    let q = |sql: &str| -> String { conn.query_row(sql, [], |r| r.get(0)).unwrap() };
    // The byte-order mark is not part of the first column's name, so the rows found their unit.
    assert_eq!(
        q("SELECT note FROM checks WHERE taken_at = '2025-02-13T07:30:00Z'"),
        "hose; pump side"
    );
    assert_eq!(
        q("SELECT note FROM checks WHERE taken_at = '2025-02-16T07:30:00Z'"),
        "top-up, 2 L; see \"log\""
    );
    // The formula guard of an export is taken off again.
    assert_eq!(
        q("SELECT note FROM checks WHERE taken_at = '2025-02-17T07:30:00Z'"),
        "=SUM(A1:A3)"
    );
    // 113 °F = 45 °C and 2500 psi = 172.369 bar (NIST SP 811: 1 psi = 6894.757293168 Pa).
    let (t, p): (f64, f64) = conn
        .query_row("SELECT reservoir_temp_c, pressure_bar FROM checks WHERE taken_at = '2025-02-15T07:30:00Z'", [], |r| {
            Ok((r.get(0)?, r.get(1)?))
        })
        .unwrap();
    assert!((t - 45.0).abs() < 1e-9, "{t}");
    assert!((p - 2500.0 * 6894.757293168 / 1e5).abs() < 1e-6, "{p}");
}

/// The quantity parser's half of the corpus: bad quantities on the command line.
#[test]
fn bad_quantities_on_the_command_line_are_refused_with_what_is_expected() {
    let table = std::fs::read_to_string(corpus().join("quantities.tsv")).unwrap();
    let mut failures = Vec::new();
    let mut n = 0;
    for line in table
        .lines()
        .filter(|l| !l.starts_with('#') && !l.is_empty())
    {
        let f: Vec<&str> = line.split('\t').collect();
        assert_eq!(f.len(), 3, "quantities.tsv: three fields in {line:?}");
        let (option, value, expected) = (f[0], f[1], f[2]);
        n += 1;
        let args: Vec<&str> = match option {
            "--pressure" => vec!["calc", "power", "--flow", "12gpm", "--pressure", value],
            "--flow" => vec!["calc", "power", "--flow", value, "--pressure", "2500psi"],
            "--at" => vec![
                "calc", "visc", "--kv40", "46", "--kv100", "6.8", "--at", value,
            ],
            "--bore" => vec![
                "calc", "flow", "--bore", value, "--stroke", "400mm", "--time", "2.5s",
            ],
            "--time" => vec![
                "calc", "flow", "--bore", "100mm", "--stroke", "400mm", "--time", value,
            ],
            "--kv40" => vec![
                "calc", "visc", "--kv40", value, "--kv100", "6.8", "--at", "20C",
            ],
            other => panic!("quantities.tsv: no command for {other}"),
        };
        let out = sumpbook().args(&args).output().unwrap();
        let stderr = text(&out.stderr);
        let want = format!("{option}: ");
        if out.status.code() != Some(2)
            || !stderr.contains(&want)
            || !stderr.contains(expected)
            || stderr.contains("panicked")
        {
            failures.push(format!(
                "{option} {value:?}: exit {:?}, stderr {}",
                out.status.code(),
                stderr.trim_end()
            ));
        }
    }
    assert!(n >= 20, "only {n} bad quantities");
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

// ---------------------------------------------------------------------------------------------
// 2. Keep-going imports

#[test]
fn keep_going_imports_good_rows_and_writes_each_refused_row_with_its_reason() {
    let dir = tempfile::tempdir().unwrap();
    let db = base_shop(dir.path());
    let header = "unit_tag,taken_at,reservoir_temp_c,ambient_temp_c,pressure_bar,stroke_time_s,cycle_time_s,oil_level,filter,hours,case_drain_lpm,by,note";
    let lines = [
        header,
        "PR-07-HPU,2025-03-01T07:30:00Z,45,21,172,3.9,,ok,ok,10400,,AK,good one",
        "PR-07-HPU,2025-03-02T07:30:00Z,500,21,172,3.9,,ok,ok,10440,,AK,too hot",
        "BR-02-HPU,2025-03-02T07:40:00Z,41,21,150,2.1,,ok,ok,8000,,AK,good two",
        "PR-07-HPU,03/04/2025,45,21,172,3.9,,ok,ok,10480,,AK,day or month?",
        "",
        "PR-07-HPU,2025-03-03T07:30:00Z,46,20,171,\"3.95\",,ok,alert,10520,,AK,\"good, three\"",
        "PR-99-HPU,2025-03-03T07:30:00Z,45,21,172,3.9,,ok,ok,10520,,AK,no such unit",
        // The same values as a stored check: nothing to write, not refused.
        "PR-07-HPU,2025-01-06T07:30:00Z,45,21,172,3.9,,ok,ok,10040,,AK,",
        "PR-07-HPU,2025-03-04T07:30:00Z,45,21,172,3.9,,ok,ok,10560,,AK,one too many,surplus",
        "BR-02-HPU,2025-03-04T07:40:00Z,42,21,151,2.1,,ok,ok,8040,,AK,good four",
    ];
    let file = dir.path().join("mixed.csv");
    std::fs::write(&file, lines.join("\n") + "\n").unwrap();
    let checks_before = count(&db, "checks");

    // All or nothing by default: refused, every bad row named, nothing written.
    let before = dump(&db);
    let out = run(&db, &["import", "checks", path_str(&file)]);
    assert_eq!(out.status.code(), Some(2));
    let err = text(&out.stderr);
    for line in [3, 5, 8, 10] {
        assert!(
            err.contains(&format!("{}:{line}: ", file.display())),
            "line {line} not reported:\n{err}"
        );
    }
    assert_eq!(dump(&db), before, "a refused import wrote something");

    let out = ok(
        &db,
        &[
            "import",
            "checks",
            path_str(&file),
            "--keep-going",
            "--json",
        ],
    );
    let s: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(
        (s["rows"].as_u64(), s["inserted"].as_u64()),
        (Some(9), Some(4)),
        "{out}"
    );
    assert_eq!(
        (s["unchanged"].as_u64(), s["rejected"].as_u64()),
        (Some(1), Some(4)),
        "{out}"
    );
    assert_eq!(
        s["rows"],
        s["inserted"].as_u64().unwrap()
            + s["unchanged"].as_u64().unwrap()
            + s["rejected"].as_u64().unwrap()
    );
    assert_eq!(count(&db, "checks"), checks_before + 4);
    let conn = Connection::open(&db).unwrap();
    let notes: Vec<String> = conn
        .prepare("SELECT note FROM checks WHERE taken_at >= '2025-03-01' ORDER BY taken_at")
        .unwrap()
        .query_map([], |r| r.get(0))
        .unwrap()
        .map(Result::unwrap)
        .collect();
    assert_eq!(notes, ["good one", "good two", "good, three", "good four"]);
    drop(conn);

    let rejects_path = PathBuf::from(s["rejects_file"].as_str().expect("a rejects file is named"));
    assert_eq!(rejects_path, dir.path().join("mixed.rejects.csv"));
    let rejects = csv_rows(&std::fs::read_to_string(&rejects_path).unwrap());
    let mut head: Vec<String> = header.split(',').map(str::to_string).collect();
    head.push("reject_reason".into());
    assert_eq!(
        rejects[0], head,
        "the rejects file has the same columns plus the reason"
    );
    assert_eq!(rejects.len() - 1, 4, "one row per refused row");
    let original = csv_rows(&(lines.join("\n") + "\n"));
    for (reject, (source_line, reason)) in rejects[1..].iter().zip([
        (2, "reservoir_temp_c: must be between -40 and 150 °C"),
        (4, "taken_at: "),
        (6, "unit_tag: no unit `PR-99-HPU` in this shop"),
        (8, "has 14 cells but the header names 13 columns"),
    ]) {
        let src = original
            .iter()
            .filter(|r| r.iter().any(|c| !c.is_empty()))
            .nth(source_line)
            .unwrap();
        assert_eq!(
            &reject[..13],
            &src[..13],
            "the refused row is kept as written"
        );
        assert!(
            reject[13].contains(reason),
            "reason `{}` should say `{reason}`",
            reject[13]
        );
    }
    // The surplus cell of the too-long row is not lost: the reason quotes it.
    assert!(rejects[4][13].contains("surplus"), "{}", rejects[4][13]);

    // Again: nothing new, the same rows refused, and the rejects file replaced, not appended.
    let s2: serde_json::Value = serde_json::from_str(&ok(
        &db,
        &[
            "import",
            "checks",
            path_str(&file),
            "--keep-going",
            "--json",
        ],
    ))
    .unwrap();
    assert_eq!(
        (
            s2["inserted"].as_u64(),
            s2["unchanged"].as_u64(),
            s2["rejected"].as_u64()
        ),
        (Some(0), Some(5), Some(4))
    );
    assert_eq!(
        csv_rows(&std::fs::read_to_string(&rejects_path).unwrap()).len(),
        5
    );

    // The rejects file, once corrected, imports as it stands (its reason column is ignored).
    let fixed = std::fs::read_to_string(&rejects_path)
        .unwrap()
        .replace(",500,", ",50,")
        .replace("03/04/2025", "2025-03-05T07:30:00Z")
        .replace("PR-99-HPU", "BR-02-HPU");
    let fixed_path = dir.path().join("fixed.csv");
    std::fs::write(&fixed_path, fixed).unwrap();
    let s3: serde_json::Value = serde_json::from_str(&ok(
        &db,
        &["import", "checks", path_str(&fixed_path), "--json"],
    ))
    .unwrap();
    assert_eq!(s3["inserted"].as_u64(), Some(4), "{s3}");
    assert_eq!(count(&db, "checks"), checks_before + 8);
}

// ---------------------------------------------------------------------------------------------
// 3. Killed at any moment

/// A checks file of `n` rows for the two corpus units, starting at `start_day` (days after
/// 2015-01-01), one row per unit and hour.
fn big_checks_file(path: &Path, n: usize, start_day: i64) {
    let start = chrono::NaiveDate::from_ymd_opt(2015, 1, 1)
        .unwrap()
        .and_hms_opt(0, 0, 0)
        .unwrap()
        .and_utc()
        + chrono::Duration::days(start_day);
    let mut f = std::io::BufWriter::new(std::fs::File::create(path).unwrap());
    writeln!(
        f,
        "unit_tag,taken_at,reservoir_temp_c,ambient_temp_c,pressure_bar,stroke_time_s,hours,note"
    )
    .unwrap();
    for i in 0..n {
        let unit = if i % 2 == 0 { "PR-07-HPU" } else { "BR-02-HPU" };
        let at = start + chrono::Duration::hours((i / 2) as i64);
        writeln!(
            f,
            "{unit},{},{:.1},{:.1},{},{:.2},{},row {i}",
            at.format("%Y-%m-%dT%H:%M:%SZ"),
            40.0 + (i % 13) as f64 * 0.5,
            18.0 + (i % 7) as f64,
            160 + i % 20,
            3.5 + (i % 11) as f64 * 0.03,
            1000 + i / 2
        )
        .unwrap();
    }
}

fn integrity(db: &Path) -> String {
    let conn = Connection::open(db).unwrap();
    conn.query_row("PRAGMA integrity_check", [], |r| r.get(0))
        .unwrap()
}

#[test]
fn an_import_killed_at_random_moments_is_wholly_present_or_wholly_absent() {
    let dir = tempfile::tempdir().unwrap();
    let base = base_shop(dir.path());
    // Large enough that a kill usually lands inside the import's transaction, small enough to
    // keep the test to a few seconds.
    let rows = 2_500;
    let file = dir.path().join("big.csv");
    big_checks_file(&file, rows, 400);
    let base_checks = count(&base, "checks");

    // How long a whole import takes here, to aim the kills across all of it.
    let timing = dir.path().join("timing.sqlite");
    std::fs::copy(&base, &timing).unwrap();
    let t0 = std::time::Instant::now();
    ok(&timing, &["import", "checks", path_str(&file)]);
    let full = t0.elapsed();
    assert_eq!(count(&timing, "checks"), base_checks + rows as i64);

    // A small generator of its own, seeded from the clock and printed, so a failure can be rerun.
    let mut seed = std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .unwrap()
        .as_nanos() as u64
        | 1;
    eprintln!("kill test: seed {seed}, a whole import takes {full:?}");
    let mut next = move || {
        seed ^= seed << 13;
        seed ^= seed >> 7;
        seed ^= seed << 17;
        seed
    };
    let (mut killed, mut absent, mut present) = (0, 0, 0);
    // Until 20 kills have landed while the import ran (a busy machine makes some imports end
    // sooner or later than the timing run), at most 60 rounds.
    let mut rounds = 0;
    while killed < 20 && rounds < 60 {
        let round = rounds;
        rounds += 1;
        let db = dir.path().join(format!("kill-{round}.sqlite"));
        std::fs::copy(&base, &db).unwrap();
        let wait = full.mul_f64((next() % 1000) as f64 / 1000.0 * 0.8);
        let mut child = sumpbook()
            .arg("--db")
            .arg(&db)
            .args(["import", "checks", path_str(&file)])
            .stdout(std::process::Stdio::null())
            .stderr(std::process::Stdio::null())
            .spawn()
            .unwrap();
        std::thread::sleep(wait);
        // `kill` is SIGKILL on Unix: no chance to clean up.
        let was_running = child.try_wait().unwrap().is_none();
        child.kill().ok();
        let status = child.wait().unwrap();
        if was_running && !status.success() {
            killed += 1;
        }
        assert_eq!(integrity(&db), "ok", "round {round}: killed after {wait:?}");
        let n = count(&db, "checks");
        if n == base_checks {
            absent += 1;
        } else if n == base_checks + rows as i64 {
            present += 1;
        } else {
            panic!(
                "round {round}: killed after {wait:?}, {} of {rows} rows are stored",
                n - base_checks
            );
        }
        if status.success() {
            assert_eq!(
                n,
                base_checks + rows as i64,
                "round {round}: exit 0 but the rows are missing"
            );
        }
    }
    eprintln!("kill test: {killed} killed mid-way, {absent} left nothing, {present} completed");
    assert!(
        killed >= 20,
        "only {killed} of {rounds} kills landed while the import ran"
    );
}

// ---------------------------------------------------------------------------------------------
// 4. Two writers

#[test]
fn two_processes_importing_at_once_lose_nothing_and_never_report_a_lock() {
    let dir = tempfile::tempdir().unwrap();
    let db = base_shop(dir.path());
    let mut expected = count(&db, "checks");
    for round in 0..3 {
        let a = dir.path().join(format!("a-{round}.csv"));
        let b = dir.path().join(format!("b-{round}.csv"));
        // Disjoint days: 3000 rows each.
        big_checks_file(&a, 3000, 600 + round * 200);
        big_checks_file(&b, 3000, 700 + round * 200);
        let spawn = |f: &Path| {
            sumpbook()
                .arg("--db")
                .arg(&db)
                .args(["import", "checks", path_str(f)])
                .stdout(std::process::Stdio::piped())
                .stderr(std::process::Stdio::piped())
                .spawn()
                .unwrap()
        };
        let (pa, pb) = (spawn(&a), spawn(&b));
        for (name, p) in [("a", pa), ("b", pb)] {
            let out = p.wait_with_output().unwrap();
            let err = text(&out.stderr);
            assert!(
                out.status.success(),
                "round {round} {name}: {}",
                short(&err)
            );
            assert!(
                !err.to_lowercase().contains("locked") && !err.to_lowercase().contains("busy"),
                "{err}"
            );
        }
        expected += 6000;
        assert_eq!(count(&db, "checks"), expected, "round {round}");
    }
    assert_eq!(integrity(&db), "ok");
}

#[test]
fn two_processes_logging_checks_at_once_lose_nothing_and_never_report_a_lock() {
    let dir = tempfile::tempdir().unwrap();
    let db = base_shop(dir.path());
    let before = count(&db, "checks");
    let per_writer = 15;
    let writer = |unit: &'static str, hour: u32| {
        let db = db.clone();
        std::thread::spawn(move || {
            let mut failures = Vec::new();
            for i in 0..per_writer {
                let at = format!("2025-04-{:02}T{hour:02}:{:02}:00Z", 1 + i / 4, (i % 4) * 15);
                let out = run(
                    &db,
                    &[
                        "log-check",
                        "--leave-blank",
                        unit,
                        "--at",
                        &at,
                        "--reservoir-temp",
                        "45C",
                        "--ambient-temp",
                        "21C",
                        "--pressure",
                        "172bar",
                        "--stroke-time",
                        "3.9s",
                        "--by",
                        "AK",
                        "--confirm",
                    ],
                );
                let err = text(&out.stderr);
                if !out.status.success()
                    || err.to_lowercase().contains("locked")
                    || err.to_lowercase().contains("busy")
                {
                    failures.push(format!("{unit} {at}: {:?} {err}", out.status.code()));
                }
            }
            failures
        })
    };
    let (a, b) = (writer("PR-07-HPU", 7), writer("BR-02-HPU", 8));
    let failures: Vec<String> = a
        .join()
        .unwrap()
        .into_iter()
        .chain(b.join().unwrap())
        .collect();
    assert!(failures.is_empty(), "{}", failures.join("\n"));
    assert_eq!(count(&db, "checks"), before + 2 * per_writer as i64);
    let conn = Connection::open(&db).unwrap();
    let n: i64 = conn
        .query_row("SELECT count(*) FROM checks WHERE taken_at LIKE '2025-04-%' AND taken_by = 'AK' AND pressure_bar = 172", [], |r| r.get(0))
        .unwrap();
    assert_eq!(n, 2 * per_writer as i64, "every value arrived as typed");
}

#[test]
fn log_check_refuses_impossible_values_and_names_the_field() {
    let dir = tempfile::tempdir().unwrap();
    let db = base_shop(dir.path());
    let before = dump(&db);
    for (args, expect) in [
        (vec!["--reservoir-temp", "500C"], "reservoir_temp"),
        (vec!["--stroke-time", "-2s"], "stroke_time"),
        (vec!["--pressure", "2500"], "pressure"),
        (vec!["--at", "2099-01-01T00:00:00Z"], "in the future"),
        (
            vec!["--at", "03/04/2025"],
            "dates like 03/04/2025 are refused",
        ),
        (vec!["--oil-level", "half"], "oil_level"),
    ] {
        let mut full = vec!["log-check", "PR-07-HPU", "--by", "AK"];
        full.extend(args.iter());
        let out = run(&db, &full);
        let err = text(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{args:?}: {err}");
        assert!(err.contains(expect), "{args:?}: {err}");
    }
    let out = run(
        &db,
        &[
            "log-check",
            "--leave-blank",
            "PR-99-HPU",
            "--by",
            "AK",
            "--reservoir-temp",
            "45C",
        ],
    );
    assert_eq!(out.status.code(), Some(2));
    assert!(text(&out.stderr).contains("PR-99-HPU"));
    assert_eq!(dump(&db), before, "a refused check wrote something");
}

// ---------------------------------------------------------------------------------------------
// 6. Unusable databases

/// Runs read and write commands on `db`; each must exit 2 with a message containing `expect`
/// and the file's name, must not panic, and must leave the file as it was (or absent).
fn refused_database(db: &Path, expect: &str, dir: &Path) {
    let before = std::fs::read(db).ok();
    let units = corpus().join("shop/units.csv");
    let backup = dir.join("never.sqlite");
    let commands: [Vec<&str>; 5] = [
        vec!["export", "checks"],
        vec!["status"],
        vec!["import", "units", path_str(&units)],
        vec!["backup", "--out", path_str(&backup)],
        vec![
            "log-check",
            "--leave-blank",
            "PR-07-HPU",
            "--by",
            "AK",
            "--reservoir-temp",
            "45C",
        ],
    ];
    for args in &commands {
        let out = run(db, args);
        let err = text(&out.stderr);
        assert_eq!(
            out.status.code(),
            Some(2),
            "{args:?} on {}: {err}",
            db.display()
        );
        assert!(
            err.contains(expect),
            "{args:?}: `{err}` should say `{expect}`"
        );
        let name = db.file_name().unwrap().to_string_lossy().into_owned();
        assert!(
            err.contains(&name),
            "{args:?}: `{err}` should name the file"
        );
        assert!(!err.contains("panicked"), "{err}");
        assert!(
            out.stdout.is_empty(),
            "{args:?} printed {}",
            text(&out.stdout)
        );
        assert_eq!(
            std::fs::read(db).ok(),
            before,
            "{args:?} changed {}",
            db.display()
        );
        assert!(!backup.exists(), "a backup of an unusable file was written");
    }
}

#[test]
fn a_missing_file_given_with_db_is_refused_and_not_created() {
    let dir = tempfile::tempdir().unwrap();
    let db = dir.path().join("no-such-shop.sqlite");
    refused_database(&db, "no such file", dir.path());
    assert!(!db.exists());
}

#[test]
fn a_read_only_file_is_refused_with_a_clear_message() {
    use std::os::unix::fs::PermissionsExt;
    let dir = tempfile::tempdir().unwrap();
    let db = base_shop(dir.path());
    std::fs::set_permissions(&db, std::fs::Permissions::from_mode(0o444)).unwrap();
    refused_database(&db, "read-only", dir.path());
}

#[test]
fn a_text_file_is_refused_as_not_a_database() {
    let dir = tempfile::tempdir().unwrap();
    let db = dir.path().join("notes.txt");
    std::fs::write(&db, "unit_tag,taken_at\nPR-07-HPU,2025-02-03\n").unwrap();
    refused_database(&db, "not an SQLite database", dir.path());
}

#[test]
fn an_sqlite_file_of_another_program_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    let db = dir.path().join("inventory.sqlite");
    let conn = Connection::open(&db).unwrap();
    conn.execute_batch("CREATE TABLE parts (id INTEGER PRIMARY KEY, name TEXT); INSERT INTO parts (name) VALUES ('seal kit');")
        .unwrap();
    drop(conn);
    refused_database(&db, "another program", dir.path());
}

#[test]
fn a_damaged_shop_file_is_refused_with_a_clear_message() {
    let dir = tempfile::tempdir().unwrap();
    let db = base_shop(dir.path());
    // Keep the header page and lose the rest, as a half-copied file would.
    let bytes = std::fs::read(&db).unwrap();
    let page = u16::from_be_bytes([bytes[16], bytes[17]]) as usize;
    std::fs::write(&db, &bytes[..page * 2]).unwrap();
    refused_database(&db, "damaged", dir.path());
}

#[test]
fn a_directory_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    let db = dir.path().join("a-folder.sqlite");
    std::fs::create_dir(&db).unwrap();
    for args in [vec!["export", "checks"], vec!["status"]] {
        let out = run(&db, &args);
        assert_eq!(out.status.code(), Some(2), "{}", text(&out.stderr));
        assert!(
            text(&out.stderr).contains("directory"),
            "{}",
            text(&out.stderr)
        );
    }
}

#[test]
fn a_file_locked_by_another_process_gives_a_clear_message_after_waiting() {
    let dir = tempfile::tempdir().unwrap();
    let db = base_shop(dir.path());
    // This test process is the other program: it holds the file's exclusive lock.
    let holder = Connection::open(&db).unwrap();
    holder.execute_batch("PRAGMA locking_mode = EXCLUSIVE; BEGIN EXCLUSIVE; UPDATE settings SET shop_name = shop_name;").unwrap();
    let t0 = std::time::Instant::now();
    let out = run(&db, &["export", "checks"]);
    let err = text(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(err.contains("locked by another program"), "{err}");
    assert!(err.contains("shop.sqlite"), "{err}");
    // It waited for the lock (the store's busy timeout) before giving up.
    assert!(
        t0.elapsed() >= std::time::Duration::from_secs(5),
        "gave up after {:?}",
        t0.elapsed()
    );
    holder.execute_batch("ROLLBACK").unwrap();
    drop(holder);
    // Once the lock is gone the shop is as it was and opens.
    assert_eq!(integrity(&db), "ok");
    ok(&db, &["export", "checks"]);
}

// ---------------------------------------------------------------------------------------------
// 7. Formula-safe export

#[test]
fn export_neutralises_formulas_keeps_numbers_and_import_reverses_it() {
    let dir = tempfile::tempdir().unwrap();
    let db = dir.path().join("a.sqlite");
    ok(&db, &["init"]);
    let units = dir.path().join("units.csv");
    std::fs::write(
        &units,
        "machine_tag,machine_name,machine_kind,unit_tag,pump_kind,sensitive_component,fluid_name,fluid_vg,fluid_kv40_cst,fluid_kv100_cst\n\
         PR-07,\"=HYPERLINK(\"\"http://example.invalid\"\",\"\"x\"\")\",-press-,PR-07-HPU,gear,cylinder,@fluid,46,46,6.8\n",
    )
    .unwrap();
    ok(&db, &["import", "units", path_str(&units)]);
    let notes = [
        "=1+2",
        "+33",
        "-minus",
        "@SUM(A1)",
        "\tTab first",
        "\rCR first",
        "'quoted",
        "plain",
        "-5",
    ];
    let mut csv_text =
        String::from("unit_tag,taken_at,reservoir_temp_c,ambient_temp_c,pressure_bar,stroke_time_s,hours,by,note\n");
    for (i, note) in notes.iter().enumerate() {
        let note = note.replace('"', "\"\"");
        csv_text.push_str(&format!(
            "PR-07-HPU,2025-01-{:02}T07:00:00Z,45.5,-30,0,3.9,{},=cmd|' /C calc'!A0,\"{note}\"\n",
            i + 1,
            100 + i
        ));
    }
    let checks = dir.path().join("checks.csv");
    std::fs::write(&checks, &csv_text).unwrap();
    ok(&db, &["import", "checks", path_str(&checks)]);

    let exported = ok(&db, &["export", "checks"]);
    let rows = csv_rows(&exported);
    let col = |name: &str| rows[0].iter().position(|h| h == name).unwrap();
    let (note, by, amb) = (col("note"), col("by"), col("ambient_temp_c"));
    assert_eq!(rows.len(), notes.len() + 1);
    for (row, original) in rows[1..].iter().zip(notes) {
        let cell = &row[note];
        let leads = ['=', '+', '-', '@', '\t', '\r'];
        assert!(!cell.starts_with(leads), "`{cell}` would run as a formula");
        if original.starts_with(leads) {
            assert_eq!(
                cell,
                &format!("'{original}"),
                "text cells are guarded by a quote"
            );
        } else {
            assert_eq!(cell, original);
        }
        assert_eq!(row[by], "'=cmd|' /C calc'!A0");
        // Numbers, negative ones too, stay numbers.
        assert_eq!(row[amb], "-30");
        for (i, h) in rows[0].iter().enumerate() {
            if h.ends_with("_c") || h.ends_with("_bar") || h.ends_with("_s") || h == "hours" {
                assert!(
                    row[i].is_empty() || row[i].parse::<f64>().is_ok(),
                    "{h} = `{}` is not a plain number",
                    row[i]
                );
            }
        }
    }
    let us = ok(&db, &["export", "checks", "--units", "us"]);
    let us_rows = csv_rows(&us);
    let amb_f = us_rows[0]
        .iter()
        .position(|h| h == "ambient_temp_f")
        .unwrap();
    // −30 °C = −22 °F exactly (°F = °C × 9/5 + 32).
    assert!(us_rows[1..].iter().all(|r| r[amb_f] == "-22"), "{us}");

    let register = ok(&db, &["export", "units"]);
    let reg = csv_rows(&register);
    let rc = |name: &str| reg[0].iter().position(|h| h == name).unwrap();
    assert_eq!(
        reg[1][rc("machine_name")],
        "'=HYPERLINK(\"http://example.invalid\",\"x\")"
    );
    assert_eq!(reg[1][rc("machine_kind")], "'-press-");
    assert_eq!(reg[1][rc("fluid_name")], "'@fluid");

    // Import reverses it: the exports read into a new shop give back the same text and values.
    let db2 = dir.path().join("b.sqlite");
    ok(&db2, &["init"]);
    let (reg_file, checks_file) = (
        dir.path().join("reg-out.csv"),
        dir.path().join("checks-out.csv"),
    );
    std::fs::write(&reg_file, &register).unwrap();
    std::fs::write(&checks_file, &exported).unwrap();
    ok(&db2, &["import", "units", path_str(&reg_file)]);
    ok(&db2, &["import", "checks", path_str(&checks_file)]);
    assert_eq!(ok(&db2, &["export", "checks"]), exported);
    assert_eq!(ok(&db2, &["export", "units"]), register);
    let conn = Connection::open(&db2).unwrap();
    let stored: Vec<String> = conn
        .prepare("SELECT note FROM checks ORDER BY taken_at")
        .unwrap()
        .query_map([], |r| r.get(0))
        .unwrap()
        .map(Result::unwrap)
        .collect();
    assert_eq!(stored, notes);
    let name: String = conn
        .query_row("SELECT name FROM machines", [], |r| r.get(0))
        .unwrap();
    assert_eq!(name, "=HYPERLINK(\"http://example.invalid\",\"x\")");
}

// ---------------------------------------------------------------------------------------------
// 5. Migrations, backups, newer files

/// The migration folders `migrations/N-name/up.sql`, in order.
fn migrations() -> Vec<(usize, String)> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("migrations")
        .join("sqlite");
    let mut out: Vec<(usize, String)> = std::fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.is_dir())
        .map(|p| {
            let name = p.file_name().unwrap().to_string_lossy().into_owned();
            let n: usize = name
                .split('-')
                .next()
                .unwrap()
                .parse()
                .expect("migration folders are N-name");
            (n, std::fs::read_to_string(p.join("up.sql")).unwrap())
        })
        .collect();
    out.sort();
    for (i, (n, _)) in out.iter().enumerate() {
        assert_eq!(*n, i + 1, "migration numbers run 1, 2, 3, ... without gaps");
    }
    out
}

/// A shop file at schema `version` with that version's fixture rows, made the way that
/// version of sumpbook made it: its migrations applied in order, `user_version` set, WAL on.
fn shop_at_version(path: &Path, version: usize) {
    let conn = Connection::open(path).unwrap();
    conn.execute_batch("PRAGMA journal_mode = WAL; PRAGMA foreign_keys = ON;")
        .unwrap();
    for (n, sql) in migrations().into_iter().take(version) {
        conn.execute_batch(&format!(
            "BEGIN; {sql}\n; PRAGMA user_version = {n}; COMMIT;"
        ))
        .unwrap();
    }
    conn.execute_batch(&fixture_rows(version)).unwrap();
}

/// The fixture rows of schema `version`: `tests/migrations/data-vN.sql`, after the rows of the
/// fixture it names in a line `-- builds on data-vM.sql` (valid at the later version too), so
/// that a version adds only what it changed.
fn fixture_rows(version: usize) -> String {
    let data =
        Path::new(env!("CARGO_MANIFEST_DIR")).join(format!("tests/migrations/data-v{version}.sql"));
    let rows = std::fs::read_to_string(&data).unwrap_or_else(|_| {
        panic!(
            "{} is missing: every earlier schema version needs its fixture rows",
            data.display()
        )
    });
    let base = rows.lines().find_map(|l| {
        l.strip_prefix("-- builds on data-v")?
            .split_once(".sql")?
            .0
            .parse::<usize>()
            .ok()
    });
    match base {
        Some(earlier) if earlier < version => format!("{}\n{rows}", fixture_rows(earlier)),
        _ => rows,
    }
}

/// Every row of every table as the columns it had at the older version, so that an upgrade
/// that adds columns still compares equal on what was there.
fn rows_by_table(db: &Path, tables: &[(String, Vec<String>)]) -> Vec<(String, Vec<String>)> {
    let conn = Connection::open(db).unwrap();
    tables
        .iter()
        .map(|(t, cols)| {
            let list = cols
                .iter()
                .map(|c| format!("\"{c}\""))
                .collect::<Vec<_>>()
                .join(", ");
            let mut st = conn
                .prepare(&format!("SELECT {list} FROM \"{t}\""))
                .unwrap();
            let n = cols.len();
            let mut rows: Vec<String> = st
                .query_map([], |r| {
                    Ok((0..n)
                        .map(|i| format!("{:?}", r.get_ref(i).unwrap().to_owned()))
                        .collect::<Vec<_>>()
                        .join("|"))
                })
                .unwrap()
                .map(Result::unwrap)
                .collect();
            rows.sort();
            (t.clone(), rows)
        })
        .collect()
}

fn tables_and_columns(db: &Path) -> Vec<(String, Vec<String>)> {
    let conn = Connection::open(db).unwrap();
    let names: Vec<String> = conn
        .prepare("SELECT name FROM sqlite_schema WHERE type = 'table' AND name NOT LIKE 'sqlite_%' ORDER BY name")
        .unwrap()
        .query_map([], |r| r.get(0))
        .unwrap()
        .map(Result::unwrap)
        .collect();
    names
        .into_iter()
        .map(|t| {
            let cols: Vec<String> = conn
                .prepare(&format!(
                    "SELECT name FROM pragma_table_info('{t}') ORDER BY cid"
                ))
                .unwrap()
                .query_map([], |r| r.get(0))
                .unwrap()
                .map(Result::unwrap)
                .collect();
            (t, cols)
        })
        .collect()
}

fn user_version(db: &Path) -> usize {
    let conn = Connection::open(db).unwrap();
    conn.query_row("PRAGMA user_version", [], |r| r.get::<_, i64>(0))
        .unwrap() as usize
}

#[test]
fn a_shop_of_every_earlier_schema_version_upgrades_with_all_its_rows_and_a_backup_first() {
    let latest = migrations().len();
    assert!(latest >= 2, "there is a migration to upgrade through");
    for version in 1..latest {
        let dir = tempfile::tempdir().unwrap();
        let db = dir.path().join("old.sqlite");
        shop_at_version(&db, version);
        let shape = tables_and_columns(&db);
        let old_rows = rows_by_table(&db, &shape);
        let old_dump = dump(&db);
        assert!(
            old_rows.iter().any(|(t, r)| t == "checks" && r.len() >= 5),
            "the fixture has data"
        );

        // Any command opens the shop and upgrades it: here a read.
        let exported = ok(&db, &["export", "checks", "--units", "metric"]);
        assert_eq!(user_version(&db), latest, "upgraded from {version}");
        assert_eq!(integrity(&db), "ok");
        assert_eq!(
            rows_by_table(&db, &shape),
            old_rows,
            "rows changed in the upgrade from {version}"
        );
        assert_eq!(csv_rows(&exported).len(), 1 + 6, "every check is exported");

        // The backup beside the file is the shop exactly as it was before the upgrade.
        let backup = dir
            .path()
            .join(format!("old.sqlite.before-schema-{}.sqlite", version + 1));
        assert!(backup.is_file(), "no backup at {}", backup.display());
        assert_eq!(dump(&backup), old_dump, "the backup is not the old shop");
        assert_eq!(integrity(&backup), "ok");

        // Every unit has its evaluation counter (kept evaluations, schema 7), and the shop one.
        let conn = Connection::open(&db).unwrap();
        let (units, counters): (i64, i64) = conn
            .query_row(
                "SELECT (SELECT count(*) FROM units), \
                 (SELECT count(*) FROM eval_revisions WHERE unit_id IN (SELECT id FROM units) OR unit_id = 0)",
                [],
                |r| Ok((r.get(0)?, r.get(1)?)),
            )
            .unwrap();
        assert_eq!(
            counters,
            units + 1,
            "counters after the upgrade from {version}"
        );
        // Work done before version 9 gains no hour meter, filter part or work order; from 9 on
        // it keeps its own (`data-v9.sql`: two events with them).
        let detailed: i64 = conn
            .query_row(
                "SELECT count(*) FROM events \
                 WHERE hours IS NOT NULL OR filter_part <> '' OR work_order <> ''",
                [],
                |r| r.get(0),
            )
            .unwrap();
        let expected = if version >= 9 { 2 } else { 0 };
        assert_eq!(
            detailed, expected,
            "events after the upgrade from {version}"
        );
        drop(conn);

        // The upgraded shop works as a shop: health, export, another open (no second backup).
        ok(&db, &["status"]);
        ok(&db, &["export", "units"]);
        let files = std::fs::read_dir(dir.path()).unwrap().count();
        ok(&db, &["export", "checks"]);
        assert_eq!(
            std::fs::read_dir(dir.path()).unwrap().count(),
            files,
            "a second open made another backup"
        );

        // The same schema as a shop made new by this version.
        let fresh = dir.path().join("fresh.sqlite");
        ok(&fresh, &["init"]);
        let schema = |p: &Path| -> Vec<(String, String)> {
            let conn = Connection::open(p).unwrap();
            let mut st = conn
                .prepare("SELECT name, ifnull(sql, '') FROM sqlite_schema ORDER BY name")
                .unwrap();
            let rows: Vec<(String, String)> = st
                .query_map([], |r| Ok((r.get(0)?, r.get(1)?)))
                .unwrap()
                .map(Result::unwrap)
                .collect();
            rows
        };
        assert_eq!(
            schema(&db),
            schema(&fresh),
            "an upgraded shop differs from a new one"
        );
    }
}

/// A sample deleted in a shop of the schema before restores existed is put back after the
/// upgrade, as it was (every column) and with its own number; the restore is an edit of its
/// own with who, why and when, and a second restore of the same deletion is refused.
#[test]
fn a_reading_deleted_before_the_upgrade_is_put_back_after_it_as_an_edit() {
    let latest = migrations().len();
    let dir = tempfile::tempdir().unwrap();
    let db = dir.path().join("old.sqlite");
    shop_at_version(&db, latest - 1);
    let held = |conn: &Connection| -> (i64, String) {
        conn.query_row(
            "SELECT id, old_value FROM edit_log WHERE table_name = 'samples' AND action = 'delete'",
            [],
            |r| Ok((r.get(0)?, r.get(1)?)),
        )
        .unwrap()
    };
    let (deletion, before) = held(&Connection::open(&db).unwrap());
    let edit = deletion.to_string();
    let out = ok(&db, &["history", "PR-07-HPU"]);
    assert!(
        out.contains(&format!("--restore {edit} ")),
        "the deletion is offered for restoring: {out}"
    );
    let out = ok(
        &db,
        &[
            "history",
            "PR-07-HPU",
            "--restore",
            &edit,
            "--by",
            "RE",
            "--reason",
            "not a twin after all",
        ],
    );
    assert!(
        out.contains("Put back the sample of 2024-11-04 18:00 CST"),
        "{out}"
    );

    let conn = Connection::open(&db).unwrap();
    // The row as the deletion recorded it, column for column (SQLite's own JSON of the row).
    let now: String = conn
        .query_row(
            "SELECT json_object('id', id, 'unit_id', unit_id, 'sampled_at', sampled_at, 'kv40_cst', kv40_cst, \
             'kv100_cst', kv100_cst, 'visc_cst', visc_cst, 'visc_temp_c', visc_temp_c, 'count_4um_per_ml', count_4um_per_ml, \
             'count_6um_per_ml', count_6um_per_ml, 'count_14um_per_ml', count_14um_per_ml, 'iso4406', iso4406, \
             'water_ppm', water_ppm, 'acid_mgkoh_g', acid_mgkoh_g, 'lab_ref', lab_ref, 'note', note, \
             'confirmed_by', confirmed_by, 'confirmed_at', confirmed_at) FROM samples WHERE id = 3",
            [],
            |r| r.get(0),
        )
        .unwrap();
    assert_eq!(now, before);
    let (action, by, reason, new_value, at): (String, String, String, String, String) = conn
        .query_row(
            "SELECT action, edited_by, reason, new_value, edited_at FROM edit_log WHERE id = (SELECT max(id) FROM edit_log)",
            [],
            |r| Ok((r.get(0)?, r.get(1)?, r.get(2)?, r.get(3)?, r.get(4)?)),
        )
        .unwrap();
    assert_eq!(
        (action.as_str(), by.as_str(), reason.as_str()),
        ("restore", "RE", "not a twin after all")
    );
    assert_eq!(new_value, before);
    assert!(at.ends_with('Z') && at.len() == 20, "{at}");
    assert_eq!(integrity(&db), "ok");
    // The history says so, and the deletion is no longer offered.
    let out = ok(&db, &["history", "PR-07-HPU"]);
    assert!(
        out.contains("RESTORED by RE: not a twin after all"),
        "{out}"
    );
    assert!(!out.contains("--restore"), "{out}");
    let again = sumpbook()
        .arg("--db")
        .arg(&db)
        .args([
            "history",
            "PR-07-HPU",
            "--restore",
            &edit,
            "--by",
            "RE",
            "--reason",
            "twice",
        ])
        .output()
        .unwrap();
    assert_eq!(again.status.code(), Some(2));
    assert!(
        String::from_utf8_lossy(&again.stderr).contains("it was put back already"),
        "{}",
        String::from_utf8_lossy(&again.stderr)
    );
}

/// The other program upgrades the file while sumpbook waits for the lock: sumpbook has seen the
/// old version, finds the new one when its turn comes, and must not run the upgrade twice.
#[test]
fn an_upgrade_made_by_another_program_while_waiting_is_taken_as_done() {
    let latest = migrations().len();
    let dir = tempfile::tempdir().unwrap();
    let db = dir.path().join("old.sqlite");
    shop_at_version(&db, latest - 1);
    let other = Connection::open(&db).unwrap();
    other.execute_batch("BEGIN IMMEDIATE").unwrap();
    let waiting = sumpbook()
        .arg("--db")
        .arg(&db)
        .args(["export", "checks"])
        .stdout(std::process::Stdio::piped())
        .stderr(std::process::Stdio::piped())
        .spawn()
        .unwrap();
    // Long enough for it to read the old version and queue for the write lock.
    std::thread::sleep(std::time::Duration::from_millis(1500));
    for (n, sql) in migrations().into_iter().skip(latest - 1) {
        other
            .execute_batch(&format!("{sql}\n; PRAGMA user_version = {n};"))
            .unwrap();
    }
    other.execute_batch("COMMIT").unwrap();
    drop(other);
    let out = waiting.wait_with_output().unwrap();
    assert!(out.status.success(), "{}", text(&out.stderr));
    assert_eq!(csv_rows(&text(&out.stdout)).len(), 7);
    assert_eq!(user_version(&db), latest);
    assert_eq!(integrity(&db), "ok");
}

#[test]
fn two_programs_opening_an_old_shop_at_once_both_succeed() {
    let latest = migrations().len();
    for round in 0..4 {
        let dir = tempfile::tempdir().unwrap();
        let db = dir.path().join("old.sqlite");
        shop_at_version(&db, latest - 1);
        let spawn = || {
            sumpbook()
                .arg("--db")
                .arg(&db)
                .args(["export", "checks"])
                .stdout(std::process::Stdio::piped())
                .stderr(std::process::Stdio::piped())
                .spawn()
                .unwrap()
        };
        let (a, b) = (spawn(), spawn());
        for p in [a, b] {
            let out = p.wait_with_output().unwrap();
            assert!(out.status.success(), "round {round}: {}", text(&out.stderr));
            assert_eq!(csv_rows(&text(&out.stdout)).len(), 7, "round {round}");
        }
        assert_eq!(user_version(&db), latest);
        assert_eq!(integrity(&db), "ok");
    }
    // And two creating the same new shop at once.
    for round in 0..4 {
        let dir = tempfile::tempdir().unwrap();
        let db = dir.path().join("new.sqlite");
        let spawn = || {
            sumpbook()
                .arg("--db")
                .arg(&db)
                .arg("init")
                .stdout(std::process::Stdio::piped())
                .stderr(std::process::Stdio::piped())
                .spawn()
                .unwrap()
        };
        let (a, b) = (spawn(), spawn());
        for p in [a, b] {
            let out = p.wait_with_output().unwrap();
            assert!(
                out.status.success(),
                "init round {round}: {}",
                text(&out.stderr)
            );
        }
        assert_eq!(user_version(&db), latest);
    }
}

#[test]
fn a_shop_from_a_newer_sumpbook_is_refused_and_left_alone() {
    let dir = tempfile::tempdir().unwrap();
    let db = base_shop(dir.path());
    let latest = migrations().len();
    {
        let conn = Connection::open(&db).unwrap();
        conn.execute_batch(&format!(
            "PRAGMA user_version = {}; CREATE TABLE from_the_future (id INTEGER PRIMARY KEY);",
            latest + 1
        ))
        .unwrap();
    }
    let before = (file_state(&db), dump(&db));
    for args in [
        vec!["export", "checks"],
        vec!["status"],
        vec![
            "import",
            "checks",
            path_str(&corpus().join("good/checks_bom.csv")),
        ],
    ] {
        let out = run(&db, &args);
        let err = text(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{err}");
        assert!(
            err.contains("newer sumpbook")
                && err.contains(&format!("schema version {}", latest + 1)),
            "{err}"
        );
    }
    assert_eq!(
        (file_state(&db), dump(&db)),
        before,
        "the newer file was changed"
    );
    assert!(!std::fs::read_dir(dir.path()).unwrap().any(|e| e
        .unwrap()
        .file_name()
        .to_string_lossy()
        .contains("before-schema")));
}

#[test]
fn backup_on_demand_is_a_consistent_copy_even_while_another_process_imports() {
    let dir = tempfile::tempdir().unwrap();
    let db = base_shop(dir.path());
    let out_file = dir.path().join("copy.sqlite");
    ok(&db, &["backup", "--out", path_str(&out_file)]);
    assert_eq!(dump(&out_file), dump(&db));
    assert_eq!(integrity(&out_file), "ok");
    ok(&out_file, &["export", "checks"]);

    // An existing file is never overwritten.
    let before = std::fs::read(&out_file).unwrap();
    let again = run(&db, &["backup", "--out", path_str(&out_file)]);
    assert_eq!(again.status.code(), Some(2), "{}", text(&again.stderr));
    assert!(text(&again.stderr).contains("exists"));
    assert_eq!(std::fs::read(&out_file).unwrap(), before);

    // Taken during an import: the copy holds all of it or none of it.
    let base_checks = count(&db, "checks");
    let big = dir.path().join("big.csv");
    big_checks_file(&big, 6000, 900);
    for round in 0..3 {
        let mut import = sumpbook()
            .arg("--db")
            .arg(&db)
            .args(["import", "checks", path_str(&big)])
            .stdout(std::process::Stdio::null())
            .stderr(std::process::Stdio::piped())
            .spawn()
            .unwrap();
        std::thread::sleep(std::time::Duration::from_millis(30 * round));
        let copy = dir.path().join(format!("during-{round}.sqlite"));
        ok(&db, &["backup", "--out", path_str(&copy)]);
        assert!(import.wait().unwrap().success());
        let n = count(&copy, "checks");
        assert!(
            n == base_checks || n == base_checks + 6000,
            "round {round}: the copy holds {n} checks"
        );
        assert_eq!(integrity(&copy), "ok");
        // Undo for the next round, as a person would: restore the first copy.
        std::fs::remove_file(&db).unwrap();
        for side in ["-wal", "-shm"] {
            let _ = std::fs::remove_file(format!("{}{side}", db.display()));
        }
        std::fs::copy(&out_file, &db).unwrap();
    }
}

// ---------------------------------------------------------------------------------------------
// 8. Properties of the CSV reader (the quantity parser's are beside it in src/quantity.rs)

mod csv_properties {
    use proptest::prelude::*;
    use sumpbook::exchange::csv_in::import_reader;
    use sumpbook::exchange::{csv_out, escape_cell, unescape_cell, FileKind};
    use sumpbook::store::Store;
    use sumpbook::units::UnitSystem;

    const REGISTER: &str = "machine_tag,unit_tag,pump_kind,sensitive_component,fluid_name,fluid_vg,fluid_kv40_cst,fluid_kv100_cst\n\
        PR-07,PR-07-HPU,piston_variable,proportional_valve,Shop HM 46,46,46,6.8\n\
        BR-02,BR-02-HPU,gear,cylinder,Shop HM 46,46,46,6.8\n";

    fn shop() -> Store {
        let mut s = Store::open_in_memory().unwrap();
        import_reader(
            &mut s,
            FileKind::Units,
            "register.csv",
            REGISTER.as_bytes(),
            None,
        )
        .unwrap();
        s
    }

    fn export_all(s: &Store) -> Vec<String> {
        FileKind::ALL
            .iter()
            .map(|&k| {
                let mut out = Vec::new();
                csv_out::export(s, k, &mut out, UnitSystem::Metric).unwrap();
                String::from_utf8(out).unwrap()
            })
            .collect()
    }

    fn kind() -> impl Strategy<Value = FileKind> {
        prop::sample::select(FileKind::ALL.to_vec())
    }

    /// Cells made of what breaks CSV readers: delimiters, quotes, line ends, signs, units.
    fn nasty_cell() -> impl Strategy<Value = String> {
        prop_oneof![
            "[,;\t\"\r\n '=+@-]{0,4}",
            "[0-9.eE+-]{1,8}",
            "(PR-07-HPU|BR-02-HPU|2025-02-03|2025-02-03T07:30:00Z|45C|NaN|inf|-1|1e309|18/16/13|ok|low|top_up)",
            any::<String>(),
        ]
    }

    fn header_of(kind: FileKind) -> String {
        csv_out::header(kind, UnitSystem::Metric).join(",")
    }

    proptest! {
        #![proptest_config(ProptestConfig { cases: 256, ..ProptestConfig::default() })]

        /// Any bytes, with or without a valid header in front: no panic, counts add up, and a
        /// refused import leaves the shop as it was.
        #[test]
        fn any_bytes_import_without_panic_and_a_refusal_writes_nothing(
            kind in kind(), with_header in any::<bool>(), keep_going in any::<bool>(),
            body in prop::collection::vec(any::<u8>(), 0..600),
        ) {
            let mut s = shop();
            let before = export_all(&s);
            let mut file = if with_header { format!("{}\n", header_of(kind)).into_bytes() } else { Vec::new() };
            file.extend_from_slice(&body);
            let rejects = keep_going.then(|| std::path::PathBuf::from("/dev/null"));
            match import_reader(&mut s, kind, "any.csv", file.as_slice(), rejects) {
                Ok(sum) => prop_assert_eq!(sum.rows, sum.inserted + sum.unchanged + sum.rejected),
                Err(_) => prop_assert_eq!(export_all(&s), before),
            }
        }

        /// Rows of troublesome cells under a valid header, joined by any of the delimiters.
        #[test]
        fn rows_of_nasty_cells_import_without_panic(
            kind in kind(), delim in prop::sample::select(vec![",", ";", "\t"]),
            rows in prop::collection::vec(prop::collection::vec(nasty_cell(), 0..16), 0..6),
        ) {
            let mut s = shop();
            let before = export_all(&s);
            let mut text = csv_out::header(kind, UnitSystem::Metric).join(delim);
            for r in &rows {
                text.push('\n');
                text.push_str(&r.join(delim));
            }
            if import_reader(&mut s, kind, "nasty.csv", text.as_bytes(), None).is_err() {
                prop_assert_eq!(export_all(&s), before);
            }
        }

        /// Export ∘ import is the identity: checks with any note and by text and values in
        /// range read back from an export exactly as they were typed.
        #[test]
        fn exported_checks_import_to_the_same_values_and_text(
            checks in prop::collection::btree_map(
                (0u32..2, 0i64..100_000),
                (-400i32..=1500, 0u32..=10_000, 1u32..=36_000, any::<String>(), "[A-Za-z=+@' -]{0,6}"),
                1..12,
            )
        ) {
            let mut a = shop();
            let mut text = String::from("unit_tag,taken_at,reservoir_temp_c,pressure_bar,stroke_time_s,by,note\n");
            let mut typed = Vec::new();
            for ((u, minute), (t10, p10, s100, note, by)) in &checks {
                let unit = ["PR-07-HPU", "BR-02-HPU"][*u as usize];
                let at = chrono::DateTime::from_timestamp(1_700_000_000 + minute * 60, 0).unwrap();
                let at = at.format("%Y-%m-%dT%H:%M:%SZ").to_string();
                let temp = f64::from(*t10) / 10.0;
                let pressure = f64::from(*p10) / 10.0;
                let stroke = f64::from(*s100) / 100.0;
                let cell = |s: &str| format!("\"{}\"", escape_cell(s).replace('"', "\"\""));
                text.push_str(&format!("{unit},{at},{temp},{pressure},{stroke},{},{}\n", cell(by), cell(note)));
                typed.push((unit, at, temp, pressure, stroke, by.clone(), note.clone()));
            }
            let sum = import_reader(&mut a, FileKind::Checks, "typed.csv", text.as_bytes(), None).unwrap();
            prop_assert_eq!(sum.inserted as usize, typed.len());
            let first = export_all(&a);
            let mut b = shop();
            let sum_b = import_reader(&mut b, FileKind::Checks, "export.csv", first[1].as_bytes(), None).unwrap();
            prop_assert_eq!(sum_b.inserted as usize, typed.len());
            prop_assert_eq!(&export_all(&b), &first);
            let back = b.checks_for_unit(b.unit_by_tag("PR-07-HPU").unwrap().unwrap().id, None).unwrap()
                .into_iter()
                .chain(b.checks_for_unit(b.unit_by_tag("BR-02-HPU").unwrap().unwrap().id, None).unwrap())
                .count();
            prop_assert_eq!(back, typed.len());
            let rows = super::csv_rows(&first[1]);
            for (unit, at, temp, pressure, stroke, by, note) in &typed {
                let row = rows.iter().find(|r| &r[0] == unit && &r[1] == at).expect("every check is exported");
                prop_assert_eq!(row[2].parse::<f64>().unwrap(), *temp);
                prop_assert_eq!(row[4].parse::<f64>().unwrap(), *pressure);
                prop_assert_eq!(row[5].parse::<f64>().unwrap(), *stroke);
                // Text comes back as typed; only a cell of nothing but blanks is kept as empty.
                let keep = |s: &str| if s.trim().is_empty() { String::new() } else { s.to_string() };
                prop_assert_eq!(unescape_cell(&row[11]), keep(by));
                prop_assert_eq!(unescape_cell(&row[12]), keep(note));
            }
        }

        #[test]
        fn escaping_is_reversed_and_never_leaves_a_formula(s in any::<String>()) {
            let e = escape_cell(&s);
            prop_assert_eq!(unescape_cell(&e), s.as_str());
            prop_assert!(!e.starts_with(['=', '+', '-', '@', '\t', '\r']));
        }
    }
}

#[test]
fn two_processes_importing_the_same_register_at_once_both_succeed_and_store_it_once() {
    // The second import waits for the first one's write lock; it must then see the register
    // the first one stored and count its rows as already there, not try to add them again.
    let units = std::path::PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("sample-data/units.csv");
    for round in 0..3 {
        let dir = tempfile::tempdir().unwrap();
        let db = dir.path().join("shop.sqlite");
        let init = sumpbook()
            .arg("--db")
            .arg(&db)
            .arg("init")
            .output()
            .unwrap();
        assert!(init.status.success(), "{}", text(&init.stderr));
        let spawn = || {
            sumpbook()
                .arg("--db")
                .arg(&db)
                .args(["import", "units", path_str(&units)])
                .stdout(std::process::Stdio::piped())
                .stderr(std::process::Stdio::piped())
                .spawn()
                .unwrap()
        };
        let (pa, pb) = (spawn(), spawn());
        for (name, p) in [("a", pa), ("b", pb)] {
            let out = p.wait_with_output().unwrap();
            assert!(
                out.status.success(),
                "round {round} {name}: {}",
                short(&text(&out.stderr))
            );
        }
        // The demo register: 11 units on 8 machines (sample-data/README.md).
        assert_eq!(count(&db, "units"), 11, "round {round}");
        assert_eq!(count(&db, "machines"), 8, "round {round}");
        assert_eq!(integrity(&db), "ok");
    }
}

// ---------------------------------------------------------------------------------------------
// 9. Files written beside a user's path: never through a link, whole or not at all, an
//    existing file replaced only when asked

/// Names in `dir` that look like a side file of ours or of an earlier sumpbook (`.partial`,
/// `.part`, `.upgrading`).
fn side_files(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .filter(|n| n.contains(".partial") || n.ends_with(".part") || n.ends_with(".upgrading"))
        .collect();
    v.sort();
    v
}

fn is_link(p: &Path) -> bool {
    std::fs::symlink_metadata(p).is_ok_and(|m| m.file_type().is_symlink())
}

/// A checks file with one good and one refused row (500 °C).
fn one_good_one_bad(path: &Path) {
    std::fs::write(
        path,
        "unit_tag,taken_at,reservoir_temp_c,by\n\
         PR-07-HPU,2025-04-01T07:30:00Z,45,AK\n\
         PR-07-HPU,2025-04-02T07:30:00Z,500,AK\n",
    )
    .unwrap();
}

#[test]
fn side_files_are_never_written_through_a_link_planted_at_their_name() {
    use std::os::unix::fs::symlink;
    let dir = tempfile::tempdir().unwrap();
    let db = base_shop(dir.path());
    let victim = dir.path().join("victim.txt");
    std::fs::write(&victim, "precious").unwrap();
    let dangling = dir.path().join("made-through-a-link");

    // The names the side files used to have, planted as links to the victim or to nothing.
    let csv = dir.path().join("out.csv");
    symlink(&victim, dir.path().join("out.csv.partial")).unwrap();
    ok(&db, &["export", "checks", "--out", path_str(&csv)]);
    let pdf = dir.path().join("r.pdf");
    symlink(&dangling, dir.path().join("r.pdf.part")).unwrap();
    ok(&db, &["report", "--out", path_str(&pdf)]);
    assert!(!is_link(&csv) && csv.is_file() && !is_link(&pdf) && pdf.is_file());

    // A link planted at the rejects file itself is replaced by the file, not written through.
    let mixed = dir.path().join("mixed.csv");
    one_good_one_bad(&mixed);
    let rejects = dir.path().join("mixed.rejects.csv");
    symlink(&victim, &rejects).unwrap();
    ok(&db, &["import", "checks", path_str(&mixed), "--keep-going"]);
    assert!(
        !is_link(&rejects),
        "the rejects file is still the planted link"
    );
    assert!(std::fs::read_to_string(&rejects)
        .unwrap()
        .contains("reject_reason"));

    // The target itself a link: refused without --force; with it the link is replaced.
    let linked = dir.path().join("linked.csv");
    symlink(&victim, &linked).unwrap();
    let out = run(&db, &["export", "checks", "--out", path_str(&linked)]);
    assert_eq!(out.status.code(), Some(2), "{}", text(&out.stderr));
    assert!(is_link(&linked));
    ok(
        &db,
        &["export", "checks", "--out", path_str(&linked), "--force"],
    );
    assert!(!is_link(&linked) && linked.is_file());

    // The lock file of a new or upgrading shop: a link there is refused, not followed.
    let new = dir.path().join("new.sqlite");
    symlink(&dangling, dir.path().join("new.sqlite.upgrading")).unwrap();
    let out = run(&new, &["init", "--name", "New"]);
    let err = text(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(
        err.contains("new.sqlite.upgrading") && err.contains("link"),
        "{err}"
    );

    assert_eq!(std::fs::read_to_string(&victim).unwrap(), "precious");
    assert!(
        std::fs::symlink_metadata(&dangling).is_err(),
        "a dangling link's target was created"
    );
}

#[test]
fn an_existing_export_or_report_is_replaced_only_with_force() {
    let dir = tempfile::tempdir().unwrap();
    let db = base_shop(dir.path());
    for (args, file) in [
        (vec!["export", "checks"], "out.csv"),
        (vec!["report"], "r.pdf"),
    ] {
        let target = dir.path().join(file);
        std::fs::write(&target, "mine").unwrap();
        let mut a = args.clone();
        a.extend(["--out", path_str(&target)]);
        let out = run(&db, &a);
        let err = text(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{a:?}: {err}");
        assert!(
            err.contains("already exists") && err.contains("--force"),
            "{err}"
        );
        assert_eq!(std::fs::read_to_string(&target).unwrap(), "mine");
        a.push("--force");
        ok(&db, &a);
        assert_ne!(std::fs::read(&target).unwrap(), b"mine");
        assert_eq!(side_files(dir.path()), Vec::<String>::new());
    }
    // A device is written in place, no --force needed, and stays a device.
    ok(&db, &["export", "checks", "--out", "/dev/null"]);
    use std::os::unix::fs::FileTypeExt;
    assert!(std::fs::metadata("/dev/null")
        .unwrap()
        .file_type()
        .is_char_device());
}

#[test]
fn an_existing_rejects_file_stays_until_a_new_one_replaces_it() {
    let dir = tempfile::tempdir().unwrap();
    let db = base_shop(dir.path());
    let file = dir.path().join("round.csv");
    one_good_one_bad(&file);
    ok(&db, &["import", "checks", path_str(&file), "--keep-going"]);
    let rejects = dir.path().join("round.rejects.csv");
    let first = std::fs::read_to_string(&rejects).unwrap();
    assert!(first.contains("500"), "{first}");

    // Nothing refused this time: the earlier rejects file is left as it was.
    std::fs::write(
        &file,
        "unit_tag,taken_at,reservoir_temp_c,by\nPR-07-HPU,2025-04-03T07:30:00Z,46,AK\n",
    )
    .unwrap();
    let out = ok(&db, &["import", "checks", path_str(&file), "--keep-going"]);
    assert!(out.contains("0 refused"), "{out}");
    assert_eq!(std::fs::read_to_string(&rejects).unwrap(), first);

    // A keep-going import that fails as a whole (a quote never closed) leaves it too, and no
    // side file.
    std::fs::write(
        &file,
        "unit_tag,taken_at,reservoir_temp_c,by\nPR-07-HPU,2025-04-04T07:30:00Z,900,AK\nPR-07-HPU,\"2025-04-05,46,AK\n",
    )
    .unwrap();
    let out = run(&db, &["import", "checks", path_str(&file), "--keep-going"]);
    assert_eq!(out.status.code(), Some(2), "{}", text(&out.stderr));
    assert_eq!(std::fs::read_to_string(&rejects).unwrap(), first);
    assert_eq!(side_files(dir.path()), Vec::<String>::new());

    // Refused rows again: a new rejects file replaces the old one.
    std::fs::write(
        &file,
        "unit_tag,taken_at,reservoir_temp_c,by\nPR-07-HPU,2025-04-06T07:30:00Z,-99,AK\n",
    )
    .unwrap();
    ok(&db, &["import", "checks", path_str(&file), "--keep-going"]);
    let second = std::fs::read_to_string(&rejects).unwrap();
    assert!(
        second.contains("-99") && !second.contains("500"),
        "{second}"
    );
}

/// Runs sumpbook with a file size limit of `blocks` (512-byte blocks, `ulimit -f` of `sh`),
/// the signal for an overlong file ignored, so that a write past it fails as on a full disk.
fn run_with_file_limit(db: &Path, blocks: u32, args: &[&str]) -> Output {
    Command::new("sh")
        .arg("-c")
        .arg(format!(
            "trap '' XFSZ; ulimit -f {blocks}; exec \"$0\" \"$@\""
        ))
        .arg(env!("CARGO_BIN_EXE_sumpbook"))
        .arg("--db")
        .arg(db)
        .args(args)
        .env(
            "XDG_DATA_HOME",
            std::env::temp_dir().join("sumpbook-reliability-no-default"),
        )
        .output()
        .unwrap()
}

#[test]
fn a_report_or_export_that_cannot_be_written_whole_leaves_no_file() {
    let dir = tempfile::tempdir().unwrap();
    let db = base_shop(dir.path());
    let big = dir.path().join("big.csv");
    big_checks_file(&big, 3000, 400);
    ok(&db, &["import", "checks", path_str(&big)]);
    // A file size limit (in 512-byte blocks) with room for SQLite's own files beside the shop
    // (its index file is 32 KiB), not for the report or the export: each is first written
    // whole without the limit to show that it is larger.
    for (args, file, blocks) in [
        (vec!["report"], "r.pdf", 72u32),
        (vec!["export", "checks"], "out.csv", 128),
    ] {
        let whole = dir.path().join(format!("whole-{file}"));
        let mut a = args.clone();
        a.extend(["--out", path_str(&whole)]);
        ok(&db, &a);
        let size = std::fs::metadata(&whole).unwrap().len();
        assert!(size > u64::from(blocks) * 512, "{a:?}: only {size} bytes");
        std::fs::remove_file(&whole).unwrap();

        let target = dir.path().join(file);
        let mut a = args.clone();
        a.extend(["--out", path_str(&target)]);
        let out = run_with_file_limit(&db, blocks, &a);
        let err = text(&out.stderr);
        assert_eq!(out.status.code(), Some(1), "{a:?}: {err}");
        assert!(err.contains(file), "{err}");
        assert!(!target.exists(), "{a:?} left {}", target.display());
        assert_eq!(side_files(dir.path()), Vec::<String>::new(), "{a:?}");
    }
}

#[test]
fn a_killed_backup_leaves_nothing_by_its_name_and_the_next_one_clears_what_it_left() {
    let dir = tempfile::tempdir().unwrap();
    let db = base_shop(dir.path());
    let big = dir.path().join("big.csv");
    big_checks_file(&big, 6000, 400);
    ok(&db, &["import", "checks", path_str(&big)]);
    let copies = dir.path().join("copies");
    std::fs::create_dir(&copies).unwrap();
    let t0 = std::time::Instant::now();
    ok(
        &db,
        &["backup", "--out", path_str(&copies.join("timing.sqlite"))],
    );
    let full = t0.elapsed();
    let mut seed = std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .unwrap()
        .as_nanos() as u64
        | 1;
    eprintln!("backup kill test: seed {seed}, a whole backup takes {full:?}");
    // Until 3 kills have left a side file, at most 150 rounds.
    let (mut landed, mut rounds) = (0, 0);
    while landed < 3 && rounds < 150 {
        seed ^= seed << 13;
        seed ^= seed >> 7;
        seed ^= seed << 17;
        let copy = copies.join(format!("copy-{rounds}.sqlite"));
        rounds += 1;
        let mut child = sumpbook()
            .arg("--db")
            .arg(&db)
            .args(["backup", "--out", path_str(&copy)])
            .stdout(std::process::Stdio::null())
            .stderr(std::process::Stdio::null())
            .spawn()
            .unwrap();
        std::thread::sleep(full.mul_f64((seed % 1000) as f64 / 1000.0));
        child.kill().ok();
        child.wait().unwrap();
        if !side_files(&copies).is_empty() {
            landed += 1;
        }
        // A file by the backup's name is a whole backup.
        if copy.exists() {
            assert_eq!(integrity(&copy), "ok");
            assert_eq!(count(&copy, "checks"), count(&db, "checks"));
        }
    }
    eprintln!("backup kill test: {landed} of {rounds} kills left a side file");
    assert!(
        landed >= 3,
        "only {landed} of {rounds} kills landed mid-backup"
    );
    ok(
        &db,
        &["backup", "--out", path_str(&copies.join("next.sqlite"))],
    );
    assert_eq!(side_files(&copies), Vec::<String>::new());
}

// ---------------------------------------------------------------------------------------------
// 10. Every limit and interval has a physical range; no stored value breaks the shop

#[test]
fn a_limit_outside_its_range_is_refused_with_exit_2_naming_the_range() {
    let dir = tempfile::tempdir().unwrap();
    let db = base_shop(dir.path());
    let before = dump(&db);
    for (key, args, range) in [
        (
            "check_interval_days",
            vec!["--value", "100000000"],
            "from 1 to 366 days",
        ),
        (
            "sample_interval_weeks",
            vec!["--value", "1e308"],
            "from 1 to 260 weeks",
        ),
        (
            "check_interval_days",
            vec!["--value", "0"],
            "from 1 to 366 days",
        ),
        ("water_ppm", vec!["--act", "1e308"], "up to 1000000 ppm"),
        (
            "lost_flow_pct",
            vec!["--watch", "-5"],
            "above 0 and up to 100 %",
        ),
        (
            "reservoir_temp_c",
            vec!["--watch", "1e308"],
            "from -40 to 150 °C",
        ),
        (
            "fluid_change_months",
            vec!["--value", "1.5"],
            "a whole number from 1 to 240",
        ),
    ] {
        let mut a = vec!["limits", "set", key];
        a.extend(&args);
        a.extend(["--by", "AK"]);
        let out = run(&db, &a);
        let err = text(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{a:?}: {err}");
        assert!(err.contains(key) && err.contains(range), "{a:?}: {err}");
        assert!(err.contains("outside its range"), "{err}");
    }
    assert_eq!(dump(&db), before, "a refused limit was stored");
}

/// Runs status, due and report on `db`; each must succeed.
fn status_due_report(db: &Path, dir: &Path, what: &str) {
    for args in [
        vec!["status"],
        vec!["status", "--json"],
        vec!["due"],
        vec!["report", "--out", "/dev/null"],
    ] {
        let out = run(db, &args);
        let err = text(&out.stderr);
        assert!(
            out.status.success(),
            "{what}: {args:?} failed ({:?}): {}",
            out.status.code(),
            short(&err)
        );
        assert!(!err.contains("panicked"), "{what}: {err}");
    }
    let _ = dir;
}

#[test]
fn every_limit_at_its_extremes_leaves_status_due_and_report_working() {
    use sumpbook::health::limits::{LimitKey, LimitShape};
    let dir = tempfile::tempdir().unwrap();
    let db = dir.path().join("demo.sqlite");
    ok(&db, &["demo"]);
    // The least and the greatest value each key takes (just above an excluded lower bound).
    let ends = |k: LimitKey| {
        let r = k.range();
        let lo = if r.lo_incl {
            r.lo
        } else if r.whole {
            r.lo + 1.0
        } else {
            r.lo + (r.hi - r.lo) * 1e-6
        };
        (lo, r.hi)
    };
    // All at the least, all at the greatest, and half and half both ways.
    for round in 0..4 {
        for (i, &key) in LimitKey::ALL.iter().enumerate() {
            let (lo, hi) = ends(key);
            let v = match round {
                0 => lo,
                1 => hi,
                2 => [lo, hi][i % 2],
                _ => [hi, lo][i % 2],
            };
            let v = format!("{v}");
            let mut a = vec!["limits", "set", key.as_str()];
            match key.shape() {
                LimitShape::Value => a.extend(["--value", &v]),
                // Watch and act both at the end: watch must not pass act.
                LimitShape::Threshold(_) => a.extend(["--watch", &v, "--act", &v]),
            }
            a.extend(["--by", "AK"]);
            // Watch before act: lowering both at once may meet the old act; set act first then.
            let out = run(&db, &a);
            if !out.status.success() {
                let mut b = vec!["limits", "set", key.as_str(), "--act", &v, "--by", "AK"];
                ok(&db, &b);
                b[3] = "--watch";
                ok(&db, &b);
            }
        }
        status_due_report(&db, dir.path(), &format!("round {round}"));
    }
}

#[test]
fn limits_stored_out_of_range_by_an_older_program_do_not_break_status_due_or_report() {
    use sumpbook::health::limits::{LimitKey, LimitShape};
    let dir = tempfile::tempdir().unwrap();
    let db = dir.path().join("demo.sqlite");
    ok(&db, &["demo"]);
    for extreme in [1e308, -1e308] {
        {
            let mut conn = Connection::open(&db).unwrap();
            let conn = conn.transaction().unwrap();
            // Who and why, as the schema's edit history asks of every change.
            conn.execute(
                "INSERT INTO edit_context (id, edited_by, reason, edited_at) \
                 VALUES (1, 'test', 'an older program', '2026-01-01T00:00:00Z')",
                [],
            )
            .unwrap();
            conn.execute("DELETE FROM limits", []).unwrap();
            for &key in LimitKey::ALL {
                let watch = match key.shape() {
                    LimitShape::Value => None,
                    LimitShape::Threshold(_) => Some(extreme),
                };
                conn.execute(
                    "INSERT INTO limits (unit_id, key, watch, act) VALUES (NULL, ?1, ?2, ?3)",
                    rusqlite::params![key.as_str(), watch, extreme],
                )
                .unwrap();
            }
            conn.execute("DELETE FROM edit_context", []).unwrap();
            conn.commit().unwrap();
        }
        status_due_report(&db, dir.path(), &format!("stored {extreme}"));
    }
}

// ---------------------------------------------------------------------------------------------
// 11. Refusals in the user's terms

#[test]
fn a_device_or_a_read_only_folder_given_as_db_is_named_with_what_to_do() {
    use std::os::unix::fs::PermissionsExt;
    for dev in ["/dev/null", "/dev/zero", "/dev/full"] {
        for args in [
            vec!["status"],
            vec!["export", "checks"],
            vec!["init", "--name", "x"],
        ] {
            let out = run(Path::new(dev), &args);
            let err = text(&out.stderr);
            assert_eq!(out.status.code(), Some(2), "{dev} {args:?}: {err}");
            assert!(err.contains(dev) && err.contains("device"), "{err}");
            assert!(!err.contains("disk I/O"), "{err}");
        }
    }
    let dir = tempfile::tempdir().unwrap();
    let folder = dir.path().join("locked-folder");
    std::fs::create_dir(&folder).unwrap();
    let db = base_shop(&folder);
    std::fs::set_permissions(&folder, std::fs::Permissions::from_mode(0o555)).unwrap();
    let outs: Vec<Output> = [
        vec!["status"],
        vec![
            "log-check",
            "--leave-blank",
            "PR-07-HPU",
            "--by",
            "AK",
            "--reservoir-temp",
            "45C",
        ],
    ]
    .iter()
    .map(|a| run(&db, a))
    .collect();
    std::fs::set_permissions(&folder, std::fs::Permissions::from_mode(0o755)).unwrap();
    for out in outs {
        let err = text(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{err}");
        assert!(
            err.contains("locked-folder is read-only") && err.contains("make the folder writable"),
            "{err}"
        );
    }
}

#[test]
fn a_utf16_file_without_a_byte_order_mark_is_told_once_to_be_saved_as_utf8() {
    let dir = tempfile::tempdir().unwrap();
    let db = base_shop(dir.path());
    let out = run(
        &db,
        &[
            "import",
            "checks",
            path_str(&corpus().join("checks_utf16_no_bom.csv")),
        ],
    );
    let err = text(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert_eq!(err.matches("save it as UTF-8").count(), 1, "{err}");
    assert!(
        !err.contains("unknown column") && !err.contains('\0'),
        "{err}"
    );
}

#[test]
fn control_characters_in_typed_text_are_printed_escaped() {
    let dir = tempfile::tempdir().unwrap();
    let db = base_shop(dir.path());
    let esc = "PR-07\u{1b}[2J\u{1b}]0;owned\u{7}";
    // A refusal quoting the cell (standard error) ...
    let file = dir.path().join("esc.csv");
    std::fs::write(
        &file,
        format!("unit_tag,taken_at,reservoir_temp_c,by\n{esc},2025-04-01T07:30:00Z,45,AK\n"),
    )
    .unwrap();
    let out = run(&db, &["import", "checks", path_str(&file)]);
    let err = text(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(
        !out.stderr.contains(&0x1b) && !out.stderr.contains(&0x07),
        "{err}"
    );
    assert!(
        err.contains("PR-07\\u{1b}[2J\\u{1b}]0;owned\\u{7}"),
        "{err}"
    );
    // ... and a stored note and name (standard output).
    ok(
        &db,
        &[
            "log-check",
            "--leave-blank",
            "PR-07-HPU",
            "--by",
            "AK\u{1b}[31m",
            "--reservoir-temp",
            "45C",
            "--note",
            esc,
        ],
    );
    let settings_name = "Shop\u{1b}[5m";
    let conn = Connection::open(&db).unwrap();
    conn.execute_batch(&format!(
        "INSERT INTO edit_context (id, edited_by, reason, edited_at) VALUES (1, 't', 't', '2026-01-01T00:00:00Z'); \
         UPDATE settings SET shop_name = '{settings_name}'; DELETE FROM edit_context;"
    ))
    .unwrap();
    drop(conn);
    for args in [
        vec!["status"],
        vec!["due"],
        vec!["export", "checks", "--out", "/dev/null"],
    ] {
        let out = run(&db, &args);
        assert!(out.status.success(), "{args:?}: {}", text(&out.stderr));
        assert!(
            !out.stdout.contains(&0x1b),
            "{args:?}: {}",
            text(&out.stdout)
        );
    }
    assert!(ok(&db, &["status"]).contains("Shop\\u{1b}[5m"));
    // Export to standard output is data: the note comes back as typed, for a round trip.
    assert!(ok(&db, &["export", "checks"]).contains(esc));
}

#[test]
fn typed_digits_beyond_the_twelve_stored_are_said_to_be_rounded() {
    let dir = tempfile::tempdir().unwrap();
    let db = base_shop(dir.path());
    let file = dir.path().join("long.csv");
    std::fs::write(
        &file,
        "unit_tag,taken_at,reservoir_temp_c,pressure_bar,by\n\
         PR-07-HPU,2025-04-01T07:30:00Z,45.1234567890123,172.123456789012345,AK\n\
         PR-07-HPU,2025-04-02T07:30:00Z,45.5,172.5,AK\n",
    )
    .unwrap();
    let out = ok(&db, &["import", "checks", path_str(&file)]);
    assert!(
        out.contains("2 numbers had more than 12 significant digits and were stored rounded to 12"),
        "{out}"
    );
    let conn = Connection::open(&db).unwrap();
    let p: f64 = conn
        .query_row(
            "SELECT pressure_bar FROM checks WHERE taken_at = '2025-04-01T07:30:00Z'",
            [],
            |r| r.get(0),
        )
        .unwrap();
    // 172.123456789012345 to 12 significant digits.
    assert_eq!(p, 172.123456789);
    drop(conn);
    // A file of at most 12 digits per number says nothing of rounding.
    let plain = dir.path().join("plain.csv");
    std::fs::write(
        &plain,
        "unit_tag,taken_at,reservoir_temp_c,by\nPR-07-HPU,2025-04-03T07:30:00Z,45.25,AK\n",
    )
    .unwrap();
    let out = ok(&db, &["import", "checks", path_str(&plain)]);
    assert!(!out.contains("rounded"), "{out}");
}

// ---------------------------------------------------------------------------------------------
// 12. A writer waits for another that makes progress, saying what it waits for

#[test]
fn a_writer_waits_for_a_holder_that_makes_progress_longer_than_the_give_up_time() {
    let dir = tempfile::tempdir().unwrap();
    let db = base_shop(dir.path());
    // This test process is the other program: it holds the write lock for longer than the
    // 10 s a stalled holder is given, writing all the while (a tiny page cache spills every
    // few rows to the write-ahead log, as a long import does).
    let mut holder = Connection::open(&db).unwrap();
    holder
        .execute_batch("PRAGMA cache_size = 1; CREATE TABLE scratch (b BLOB);")
        .unwrap();
    let tx = holder
        .transaction_with_behavior(rusqlite::TransactionBehavior::Immediate)
        .unwrap();
    let writer = sumpbook()
        .arg("--db")
        .arg(&db)
        .args([
            "log-check",
            "--leave-blank",
            "PR-07-HPU",
            "--by",
            "AK",
            "--reservoir-temp",
            "45C",
        ])
        .stdout(std::process::Stdio::piped())
        .stderr(std::process::Stdio::piped())
        .spawn()
        .unwrap();
    // 13 s of writing, by rounds (not a clock): 260 rounds of 50 ms.
    for _ in 0..260 {
        tx.execute("INSERT INTO scratch (b) VALUES (zeroblob(8192))", [])
            .unwrap();
        std::thread::sleep(std::time::Duration::from_millis(50));
    }
    tx.rollback().unwrap();
    holder.execute_batch("DROP TABLE scratch").unwrap();
    drop(holder);
    let out = writer.wait_with_output().unwrap();
    let err = text(&out.stderr);
    assert!(out.status.success(), "{err}");
    assert!(
        err.contains("waiting for") && err.contains("shop.sqlite"),
        "the wait was not told: {err}"
    );
    assert!(text(&out.stdout).contains("saved"), "{}", text(&out.stdout));
}

// ---------------------------------------------------------------------------------------------
// Damaged and empty shop files: quick check before writes and backups, no shop made by a read

/// A copy of the demo shop with bytes flipped in the header of the `checks` table's b-tree
/// root page, so that `PRAGMA quick_check` fails while the file still opens.
fn shop_failing_its_quick_check(dir: &Path) -> PathBuf {
    let demo = dir.join("demo.sqlite");
    ok(&demo, &["demo"]);
    let db = dir.join("damaged.sqlite");
    std::fs::copy(&demo, &db).unwrap();
    std::fs::remove_file(&demo).unwrap();
    let (page_size, root) = {
        let conn = Connection::open(&db).unwrap();
        conn.execute_batch("PRAGMA wal_checkpoint(TRUNCATE)")
            .unwrap();
        let page_size: i64 = conn
            .query_row("PRAGMA page_size", [], |r| r.get(0))
            .unwrap();
        let root: i64 = conn
            .query_row(
                "SELECT rootpage FROM sqlite_schema WHERE type = 'table' AND name = 'checks'",
                [],
                |r| r.get(0),
            )
            .unwrap();
        (page_size as usize, root as usize)
    };
    for side in ["-wal", "-shm"] {
        let mut p = db.as_os_str().to_os_string();
        p.push(side);
        let _ = std::fs::remove_file(PathBuf::from(p));
    }
    let mut bytes = std::fs::read(&db).unwrap();
    let start = (root - 1) * page_size;
    // Bytes 3-4 of a b-tree page header: its number of cells; 0xFFFF cells cannot fit a page.
    bytes[start + 3] ^= 0xFF;
    bytes[start + 4] ^= 0xFF;
    std::fs::write(&db, &bytes).unwrap();
    let conn = Connection::open(&db).unwrap();
    let check: String = conn
        .query_row("PRAGMA quick_check", [], |r| r.get(0))
        .unwrap_or_else(|e| e.to_string());
    assert_ne!(
        check, "ok",
        "the flipped bytes must make the quick check fail"
    );
    drop(conn);
    db
}

/// The files in `dir`, by name.
fn names_in(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    v.sort();
    v
}

#[test]
fn a_shop_failing_its_quick_check_is_neither_backed_up_nor_written_to() {
    let dir = tempfile::tempdir().unwrap();
    let db = shop_failing_its_quick_check(dir.path());
    let good = dir.path().join("good.sqlite");
    ok(&good, &["init"]);
    let good_before = std::fs::read(&good).unwrap();
    let before = std::fs::read(&db).unwrap();
    let files_before = names_in(dir.path());
    let backup = dir.path().join("copy.sqlite");
    let units = corpus().join("shop/units.csv");
    let (db_s, good_s) = (path_str(&db), path_str(&good));
    let commands: [Vec<&str>; 7] = [
        vec!["backup", "--out", path_str(&backup)],
        vec!["roles", "--create"],
        vec!["copy", "--from", db_s, "--to", path_str(&backup)],
        vec!["copy", "--from", good_s, "--to", db_s],
        vec!["copy", "--from", good_s, "--to", db_s, "--replace"],
        vec!["import", "units", path_str(&units)],
        vec![
            "log-check",
            "--leave-blank",
            "PR-07-HPU",
            "--by",
            "AK",
            "--reservoir-temp",
            "45C",
        ],
    ];
    for args in &commands {
        let out = run(&db, args);
        let err = text(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{args:?}: {err}");
        for said in ["damaged", "backup", ".recover", "damaged.sqlite"] {
            assert!(err.contains(said), "{args:?}: `{err}` should say `{said}`");
        }
        assert!(!err.contains("panicked"), "{err}");
        assert_eq!(std::fs::read(&db).unwrap(), before, "{args:?} wrote");
        assert_eq!(std::fs::read(&good).unwrap(), good_before, "{args:?} wrote");
        assert!(
            !backup.exists(),
            "{args:?}: a copy of a damaged shop was kept"
        );
        assert_eq!(names_in(dir.path()), files_before, "{args:?} left a file");
    }
}

#[test]
fn a_backup_of_a_good_shop_passes_its_quick_check() {
    let dir = tempfile::tempdir().unwrap();
    let db = base_shop(dir.path());
    let backup = dir.path().join("copy.sqlite");
    ok(&db, &["backup", "--out", path_str(&backup)]);
    let conn = Connection::open_with_flags(&backup, OpenFlags::SQLITE_OPEN_READ_WRITE).unwrap();
    let check: String = conn
        .query_row("PRAGMA quick_check", [], |r| r.get(0))
        .unwrap();
    assert_eq!(check, "ok");
}

/// The side file `SHOP-SUFFIX` of a shop file.
fn side_of(db: &Path, suffix: &str) -> PathBuf {
    let mut p = db.as_os_str().to_os_string();
    p.push(suffix);
    PathBuf::from(p)
}

/// A shop as a program leaves it when it stops without closing the shop (killed, a crash, a
/// power cut) after saving a check: the shop file, its write-ahead log holding that check and
/// the log's shared-memory index, copied byte for byte into `into` while a connection that
/// wrote the check still holds them open (what a killed holder leaves on disk). The check's
/// note is `the last check`.
pub(crate) fn shop_left_open_after_a_check(dir: &Path, into: &Path) -> PathBuf {
    let db = base_shop(dir);
    let holder = Connection::open(&db).unwrap();
    holder
        .execute(
            "INSERT INTO checks (unit_id, taken_at, pressure_bar, taken_by, note) \
             VALUES ((SELECT min(id) FROM units), '2025-03-03T07:30:00Z', 171.0, 'AK', 'the last check')",
            [],
        )
        .unwrap();
    std::fs::create_dir_all(into).unwrap();
    let copy = into.join("shop.sqlite");
    for suffix in ["", "-wal", "-shm"] {
        let from = side_of(&db, suffix);
        assert!(
            from.is_file(),
            "{} while the holder is open",
            from.display()
        );
        std::fs::copy(&from, side_of(&copy, suffix)).unwrap();
    }
    drop(holder);
    copy
}

/// After an unclean shutdown SQLite takes the saved changes from the write-ahead log; when the
/// log was deleted by hand they are gone, and the shop says so on standard error (a warning,
/// not a refusal: exit 0) and in the app (`gui::a_shop_whose_log_was_removed_after_a_crash_says_so_above_every_screen`).
/// No warning while another program holds the shop (its log is there), after a clean close, or
/// when the log is there to recover from.
#[test]
fn a_shop_whose_log_was_removed_after_an_unclean_shutdown_says_so() {
    let dir = tempfile::tempdir().unwrap();
    let warned = |db: &Path, args: &[&str]| -> (String, String) {
        let out = run(db, args);
        let err = text(&out.stderr);
        assert!(out.status.success(), "{args:?}: {err}");
        (text(&out.stdout), err)
    };

    // The log is there: the check is recovered from it, nothing to say.
    let whole = shop_left_open_after_a_check(&dir.path().join("a"), &dir.path().join("whole"));
    let (checks, err) = warned(&whole, &["export", "checks"]);
    assert!(checks.contains("the last check"), "not recovered: {checks}");
    assert!(!err.contains("warning"), "{err}");

    // The log removed by hand: the check is lost and the first program to open the shop says
    // so, naming the shop and the log, and what to do.
    let lost = shop_left_open_after_a_check(&dir.path().join("b"), &dir.path().join("lost"));
    std::fs::remove_file(side_of(&lost, "-wal")).unwrap();
    let (checks, err) = warned(&lost, &["export", "checks"]);
    assert!(!checks.contains("the last check"), "{checks}");
    for said in [
        "sumpbook: warning:",
        "stopped without closing it",
        "shop.sqlite-wal",
        "are not in the shop",
        "put it back beside the shop",
    ] {
        assert!(err.contains(said), "`{err}` should say `{said}`");
    }
    assert_eq!(integrity(&lost), "ok");
    // Said once: the open reset what it was told from, and the shop is whole without it.
    let (_, err) = warned(&lost, &["status"]);
    assert!(!err.contains("warning"), "{err}");

    // A write command is warned the same way and goes on.
    let lost = shop_left_open_after_a_check(&dir.path().join("c"), &dir.path().join("lost2"));
    std::fs::remove_file(side_of(&lost, "-wal")).unwrap();
    let (_, err) = warned(
        &lost,
        &[
            "log-check",
            "--leave-blank",
            "PR-07-HPU",
            "--by",
            "AK",
            "--reservoir-temp",
            "45C",
        ],
    );
    assert!(err.contains("are not in the shop"), "{err}");

    // Another program holds the shop open (log and index both there): no warning.
    let held = base_shop(&dir.path().join("d"));
    let holder = Connection::open(&held).unwrap();
    holder
        .execute("UPDATE settings SET shop_name = shop_name WHERE id = 1", [])
        .unwrap();
    assert!(side_of(&held, "-shm").is_file() && side_of(&held, "-wal").is_file());
    let (_, err) = warned(&held, &["status"]);
    assert!(!err.contains("warning"), "{err}");
    drop(holder);
}

#[test]
fn an_empty_file_is_made_a_shop_only_by_init() {
    let dir = tempfile::tempdir().unwrap();
    let db = dir.path().join("empty.sqlite");
    std::fs::write(&db, "").unwrap();
    for args in [vec!["status"], vec!["export", "checks"], vec!["due"]] {
        let out = run(&db, &args);
        let err = text(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{args:?}: {err}");
        let want = format!(
            "no shop at {p}; create one with `sumpbook --db {p} init`",
            p = db.display()
        );
        assert!(err.contains(&want), "{args:?}: `{err}` should say `{want}`");
        assert_eq!(std::fs::metadata(&db).unwrap().len(), 0, "{args:?} wrote");
    }
    let said = ok(&db, &["init"]);
    assert!(said.contains("created shop"), "{said}");
    ok(&db, &["status"]);
}
