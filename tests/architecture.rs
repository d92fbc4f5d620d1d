//! The layers, checked on the source text: SQL drivers only in `src/store`; the command line
//! and the desktop app reach the shop only through `app`; `physics` knows no record types;
//! every source file opens with a `//!` line and stays short enough to hold one concern. Each
//! failure names the file and the line.
//!
//! The rules (DEVELOPERS.md, "Code map"):
//! - `rusqlite` and `postgres` (and their companion crates) appear only under `src/store/`.
//! - `src/cli/` and `src/gui/` name, of the crate's own modules, only `app` (the one door),
//!   `model` (the plain records the app's results carry; no rules), `units` and `quantity`
//!   (SI values and their formatting at the edges), and each other (the command line opens
//!   the app). Nothing of `store`, `health`, `exchange`, `physics`, `report`, `sim` or
//!   `outfile`; and they never take the store handle (`.store()`, `.store_mut()`), which is
//!   private to `app`.
//! - The integration tests' hidden accessor `Shop::store_for_tests` is called nowhere under
//!   `src/`.
//! - `src/physics/` does not name `model`: it computes on numbers and SI newtypes only.
//! - No source file under `src/` is longer than 800 lines (a data table may be listed as an
//!   exception, with the reason).
//!
//! The source is read with comments, strings and character literals blanked, and every path
//! rooted at `crate`, `super` or `self` (in `use` trees too) is resolved to the module it
//! names, so `super::super::store` counts like `crate::store`.

use std::path::{Path, PathBuf};

/// Modules of the crate that the command line and the desktop app may name.
const FACE_ALLOWED: &[&str] = &["app", "model", "units", "quantity", "cli", "gui"];

/// Crate names that are database drivers.
const DB_CRATES: &[&str] = &[
    "rusqlite",
    "rusqlite_migration",
    "postgres",
    "postgres_types",
];

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn rust_files(dir: &Path, out: &mut Vec<PathBuf>) {
    let mut entries: Vec<_> = std::fs::read_dir(dir)
        .unwrap_or_else(|e| panic!("{}: {e}", dir.display()))
        .map(|e| e.expect("directory entry").path())
        .collect();
    entries.sort();
    for p in entries {
        if p.is_dir() {
            rust_files(&p, out);
        } else if p.extension().is_some_and(|x| x == "rs") {
            out.push(p);
        }
    }
}

/// Every `.rs` file under `src/`, as (path relative to the crate, text).
fn sources() -> Vec<(String, String)> {
    let mut files = Vec::new();
    rust_files(&root().join("src"), &mut files);
    assert!(files.len() > 50, "expected the crate's sources under src/");
    files
        .into_iter()
        .map(|p| {
            let rel = p
                .strip_prefix(root())
                .expect("under the crate")
                .to_string_lossy()
                .replace('\\', "/");
            let text = std::fs::read_to_string(&p).unwrap_or_else(|e| panic!("{rel}: {e}"));
            (rel, text)
        })
        .collect()
}

/// The text with comments, string literals and character literals replaced by spaces (line
/// breaks kept, so line numbers stay right).
fn code_only(text: &str) -> String {
    let c: Vec<char> = text.chars().collect();
    let mut out = String::with_capacity(text.len());
    let blank = |ch: char| if ch == '\n' { '\n' } else { ' ' };
    let mut i = 0;
    while i < c.len() {
        let ch = c[i];
        let next = c.get(i + 1).copied();
        if ch == '/' && next == Some('/') {
            while i < c.len() && c[i] != '\n' {
                out.push(' ');
                i += 1;
            }
        } else if ch == '/' && next == Some('*') {
            let mut depth = 0;
            while i < c.len() {
                if c[i] == '/' && c.get(i + 1) == Some(&'*') {
                    depth += 1;
                    out.push_str("  ");
                    i += 2;
                } else if c[i] == '*' && c.get(i + 1) == Some(&'/') {
                    depth -= 1;
                    out.push_str("  ");
                    i += 2;
                    if depth == 0 {
                        break;
                    }
                } else {
                    out.push(blank(c[i]));
                    i += 1;
                }
            }
        } else if ch == 'r'
            && (next == Some('"') || next == Some('#'))
            && (i == 0 || !(c[i - 1].is_alphanumeric() || c[i - 1] == '_'))
        {
            // A raw string r"..." or r#"..."#.
            let mut j = i + 1;
            let mut hashes = 0;
            while c.get(j) == Some(&'#') {
                hashes += 1;
                j += 1;
            }
            if c.get(j) != Some(&'"') {
                out.push(ch);
                i += 1;
                continue;
            }
            j += 1;
            loop {
                if j >= c.len() {
                    break;
                }
                if c[j] == '"' && (0..hashes).all(|k| c.get(j + 1 + k) == Some(&'#')) {
                    j += 1 + hashes;
                    break;
                }
                j += 1;
            }
            for &x in &c[i..j.min(c.len())] {
                out.push(blank(x));
            }
            i = j;
        } else if ch == '"' {
            out.push(' ');
            i += 1;
            while i < c.len() && c[i] != '"' {
                if c[i] == '\\' {
                    out.push(' ');
                    i += 1;
                }
                if i < c.len() {
                    out.push(blank(c[i]));
                    i += 1;
                }
            }
            out.push(' ');
            i += 1;
        } else if ch == '\'' {
            // A character literal ('x', '\n', '\u{b0}'); otherwise a lifetime, kept.
            let end = if next == Some('\\') {
                (i + 2..c.len().min(i + 12)).find(|&k| c[k] == '\'')
            } else if c.get(i + 2) == Some(&'\'') {
                Some(i + 2)
            } else {
                None
            };
            match end {
                Some(e) => {
                    for _ in i..=e {
                        out.push(' ');
                    }
                    i = e + 1;
                }
                None => {
                    out.push(ch);
                    i += 1;
                }
            }
        } else {
            out.push(ch);
            i += 1;
        }
    }
    out
}

/// The module path of a source file: `src/gui/unit/tiles.rs` → `gui::unit::tiles`,
/// `src/gui/unit/mod.rs` → `gui::unit`, `src/lib.rs` → the crate root.
fn module_of(rel: &str) -> Vec<String> {
    let inner = rel.trim_start_matches("src/").trim_end_matches(".rs");
    let mut parts: Vec<String> = inner.split('/').map(str::to_string).collect();
    if matches!(
        parts.last().map(String::as_str),
        Some("mod" | "lib" | "main")
    ) {
        parts.pop();
    }
    parts
}

/// Expands a `use` tree (`crate::{a::b, c::{d, e}}`) into its paths.
fn expand_use(tree: &str) -> Vec<String> {
    let tree: String = tree.chars().filter(|c| !c.is_whitespace()).collect();
    let Some(open) = tree.find('{') else {
        let path = tree.split(" as ").next().unwrap_or("").to_string();
        return vec![path];
    };
    let prefix = &tree[..open];
    let close = tree.rfind('}').unwrap_or(tree.len());
    let inner = &tree[open + 1..close];
    let mut items = Vec::new();
    let (mut depth, mut start) = (0, 0);
    for (k, ch) in inner.char_indices() {
        match ch {
            '{' => depth += 1,
            '}' => depth -= 1,
            ',' if depth == 0 => {
                items.push(&inner[start..k]);
                start = k + 1;
            }
            _ => {}
        }
    }
    items.push(&inner[start..]);
    items
        .into_iter()
        .filter(|s| !s.is_empty())
        .flat_map(|item| {
            expand_use(item).into_iter().map(move |p| {
                if p == "self" {
                    prefix.trim_end_matches("::").to_string()
                } else {
                    format!("{prefix}{p}")
                }
            })
        })
        .collect()
}

/// A path named in the code, resolved to the crate's modules when it is rooted at `crate`,
/// `super` or `self`; `None` for other roots (external crates, names already imported).
fn resolve(path: &str, module: &[String]) -> Option<Vec<String>> {
    let segs: Vec<&str> = path.split("::").filter(|s| !s.is_empty()).collect();
    let mut here: Vec<String> = module.to_vec();
    let mut k = 0;
    match segs.first() {
        Some(&"crate") => {
            here.clear();
            k = 1;
        }
        Some(&"super") | Some(&"self") => {
            while let Some(&s) = segs.get(k) {
                match s {
                    "super" => {
                        here.pop();
                    }
                    "self" => {}
                    _ => break,
                }
                k += 1;
            }
        }
        _ => return None,
    }
    here.extend(segs[k..].iter().map(|s| s.to_string()));
    Some(here)
}

/// Every path a file names, with its line: the `use` trees expanded, and each path written in
/// the code rooted at `crate`, `super` or `self`; inline modules (`mod tests { … }`) shift
/// what `super` means inside them.
fn paths_named(rel: &str, text: &str) -> Vec<(usize, String, Vec<String>)> {
    let code = code_only(text);
    let base = module_of(rel);
    let mut out = Vec::new();
    // Inline modules: (name, brace depth at which it closes).
    let mut inline: Vec<(String, i32)> = Vec::new();
    let mut depth = 0i32;
    let mut pending_use: Option<(usize, String)> = None;
    for (n, line) in code.lines().enumerate() {
        let line_no = n + 1;
        let mut module = base.clone();
        module.extend(inline.iter().map(|(m, _)| m.clone()));
        let trimmed = line.trim_start();
        if let Some((start, mut acc)) = pending_use.take() {
            acc.push_str(line);
            if acc.contains(';') {
                let tree = acc.split(';').next().unwrap_or("");
                for p in expand_use(tree) {
                    if let Some(abs) = resolve(&p, &module) {
                        out.push((start, p, abs));
                    }
                }
            } else {
                pending_use = Some((start, acc));
            }
        } else if let Some(rest) = trimmed
            .strip_prefix("pub use ")
            .or_else(|| trimmed.strip_prefix("use "))
            .or_else(|| {
                trimmed
                    .strip_prefix("pub(")
                    .and_then(|r| r.split_once(") use "))
                    .map(|(_, r)| r)
            })
        {
            if rest.contains(';') {
                for p in expand_use(rest.split(';').next().unwrap_or("")) {
                    if let Some(abs) = resolve(&p, &module) {
                        out.push((line_no, p, abs));
                    }
                }
            } else {
                pending_use = Some((line_no, rest.to_string()));
            }
        } else {
            // Paths written in the code: `crate::x::y`, `super::super::x`.
            let bytes: Vec<char> = line.chars().collect();
            let mut i = 0;
            while i < bytes.len() {
                let at_word = i == 0 || !(bytes[i - 1].is_alphanumeric() || bytes[i - 1] == '_');
                let rest: String = bytes[i..].iter().collect();
                let root = ["crate::", "super::", "self::"]
                    .into_iter()
                    .find(|r| rest.starts_with(r));
                if at_word && root.is_some() {
                    let len = rest
                        .find(|ch: char| !(ch.is_alphanumeric() || ch == '_' || ch == ':'))
                        .unwrap_or(rest.len());
                    let p = rest[..len].trim_end_matches(':').to_string();
                    if let Some(abs) = resolve(&p, &module) {
                        out.push((line_no, p, abs));
                    }
                    i += len.max(1);
                } else {
                    i += 1;
                }
            }
        }
        // Track inline modules by their braces.
        let words: Vec<&str> = trimmed.split_whitespace().collect();
        let mod_at = words.iter().position(|w| *w == "mod");
        for ch in line.chars() {
            match ch {
                '{' => depth += 1,
                '}' => {
                    depth -= 1;
                    if inline.last().is_some_and(|(_, d)| *d == depth) {
                        inline.pop();
                    }
                }
                _ => {}
            }
        }
        if let Some(k) = mod_at {
            if let Some(name) = words.get(k + 1) {
                let name = name.trim_end_matches('{').trim();
                if line.contains('{') && !line.contains('}') {
                    inline.push((name.to_string(), depth - 1));
                }
            }
        }
    }
    out
}

/// Lines of the code (comments and strings blanked) that hold `needle` as a whole word.
fn lines_with_word(text: &str, needle: &str) -> Vec<usize> {
    code_only(text)
        .lines()
        .enumerate()
        .filter(|(_, l)| {
            l.match_indices(needle).any(|(k, _)| {
                let before = l[..k].chars().next_back();
                let after = l[k + needle.len()..].chars().next();
                let word = |c: Option<char>| c.is_some_and(|c| c.is_alphanumeric() || c == '_');
                !word(before) && !word(after)
            })
        })
        .map(|(n, _)| n + 1)
        .collect()
}

fn db_driver_uses(rel: &str, text: &str) -> Vec<String> {
    if rel.starts_with("src/store/") {
        return Vec::new();
    }
    let mut bad = Vec::new();
    for krate in DB_CRATES {
        for line in lines_with_word(text, krate) {
            bad.push(format!(
                "{rel}:{line}: names `{krate}`; only src/store/ may use a database driver"
            ));
        }
    }
    bad
}

fn face_violations(rel: &str, text: &str) -> Vec<String> {
    if !(rel.starts_with("src/cli/") || rel.starts_with("src/gui/")) {
        return Vec::new();
    }
    let mut bad = Vec::new();
    for (line, written, abs) in paths_named(rel, text) {
        if let Some(first) = abs.first() {
            if !FACE_ALLOWED.contains(&first.as_str()) {
                bad.push(format!(
                    "{rel}:{line}: `{written}` reaches `{first}`; the command line and the app \
                     go through `app` (allowed: {})",
                    FACE_ALLOWED.join(", ")
                ));
            }
        }
    }
    for (line, handle) in store_handle_calls(text) {
        bad.push(format!(
            "{rel}:{line}: takes the store handle `{handle}`; call an `app` function with the shop"
        ));
    }
    bad
}

/// The store handle's accessors of `Shop`: `store` and `store_mut` (private to `app`) and the
/// integration tests' hidden one.
const STORE_HANDLES: &[&str] = &["store", "store_mut", "store_for_tests"];

/// Every call of a store handle accessor, as (line, name): a method call `.store(` (spaces
/// allowed around the dot and before the parenthesis) or a path `Shop::store(`.
fn store_handle_calls(text: &str) -> Vec<(usize, String)> {
    let mut found = Vec::new();
    for (n, line) in code_only(text).lines().enumerate() {
        for handle in STORE_HANDLES {
            for (k, _) in line.match_indices(handle) {
                let before = line[..k].trim_end();
                let after = line[k + handle.len()..].trim_start();
                let word_before = line[..k]
                    .chars()
                    .next_back()
                    .is_some_and(|c| c.is_alphanumeric() || c == '_');
                let called = before.ends_with('.') || before.ends_with("::");
                if !word_before && called && after.starts_with('(') {
                    found.push((n + 1, format!("{handle}(")));
                }
            }
        }
    }
    found
}

/// The integration tests' store accessor is for tests/ only: nothing under src/ calls it.
fn test_handle_in_sources(rel: &str, text: &str) -> Vec<String> {
    store_handle_calls(text)
        .into_iter()
        .filter(|(_, h)| h == "store_for_tests(")
        .map(|(line, _)| {
            format!(
                "{rel}:{line}: `store_for_tests` is for the integration tests under tests/ only"
            )
        })
        .collect()
}

fn physics_violations(rel: &str, text: &str) -> Vec<String> {
    if !rel.starts_with("src/physics/") {
        return Vec::new();
    }
    paths_named(rel, text)
        .into_iter()
        .filter(|(_, _, abs)| abs.first().is_some_and(|f| f == "model"))
        .map(|(line, written, _)| {
            format!("{rel}:{line}: `{written}` is a record type; physics computes on numbers and SI values")
        })
        .collect()
}

fn opening_line(rel: &str, text: &str) -> Vec<String> {
    if text.starts_with("//!") {
        Vec::new()
    } else {
        vec![format!(
            "{rel}:1: does not open with a `//!` line saying what it owns and what it must not do"
        )]
    }
}

/// The most lines a source file under `src/` holds: past it a file holds more than one concern,
/// or one that wants a folder of its own whose file names say what each part owns.
const MAX_LINES: usize = 800;

/// Files allowed past [`MAX_LINES`], each with the reason: only data tables that read best
/// whole, and generated code. None is needed today (the generated slint code is written under
/// the build's target folder, not `src/`).
const LONG_FILES_ALLOWED: &[(&str, &str)] = &[];

fn file_length(rel: &str, text: &str) -> Vec<String> {
    let lines = text.lines().count();
    if lines <= MAX_LINES || LONG_FILES_ALLOWED.iter().any(|(f, _)| *f == rel) {
        return Vec::new();
    }
    vec![format!(
        "{rel}:{}: {lines} lines, past {MAX_LINES}; split it along its concerns into a folder \
         (or, for a data table, list it in LONG_FILES_ALLOWED with the reason)",
        MAX_LINES + 1
    )]
}

fn check_all(rule: fn(&str, &str) -> Vec<String>) {
    let bad: Vec<String> = sources()
        .iter()
        .flat_map(|(rel, text)| rule(rel, text))
        .collect();
    assert!(
        bad.is_empty(),
        "{} violation(s):\n{}",
        bad.len(),
        bad.join("\n")
    );
}

#[test]
fn database_drivers_only_in_the_store() {
    check_all(db_driver_uses);
}

#[test]
fn command_line_and_app_go_through_app() {
    check_all(face_violations);
}

#[test]
fn the_tests_store_handle_stays_in_the_tests() {
    check_all(test_handle_in_sources);
}

#[test]
fn no_source_file_is_longer_than_its_concern() {
    check_all(file_length);
    // Every allowed file is still there and still long: a stale entry would let a new file by
    // that name grow unchecked.
    let sources = sources();
    for (file, why) in LONG_FILES_ALLOWED {
        let text = sources.iter().find(|(rel, _)| rel == file).map(|(_, t)| t);
        assert!(
            text.is_some_and(|t| t.lines().count() > MAX_LINES),
            "{file} is allowed past {MAX_LINES} lines ({why}) but is gone or shorter now; remove it from LONG_FILES_ALLOWED"
        );
    }
}

#[test]
fn physics_knows_no_records() {
    check_all(physics_violations);
}

#[test]
fn every_source_file_says_what_it_owns() {
    check_all(opening_line);
}

/// The `file:line` each violation names.
fn places(found: &[String]) -> Vec<&str> {
    found
        .iter()
        .map(|m| m.split(": ").next().unwrap_or(""))
        .collect()
}

/// The checks themselves catch what they are for (and let pass what they should), on small
/// invented files.
#[test]
fn the_checks_catch_what_they_are_for() {
    let bad = "//! x\nuse crate::app::shop::Shop;\nuse crate::{model::Unit, store::{Store, columns}};\nfn f(s: &Shop) {\n    let n = super::super::super::health::State::Act; // crate::store in a comment\n    let t = \"crate::exchange in a string\";\n    s.store();\n}\n";
    let found = face_violations("src/gui/unit/tiles.rs", bad);
    assert_eq!(
        places(&found),
        [
            "src/gui/unit/tiles.rs:3",
            "src/gui/unit/tiles.rs:3",
            "src/gui/unit/tiles.rs:5",
            "src/gui/unit/tiles.rs:7"
        ],
        "{found:#?}"
    );
    // `super` inside an inline test module of src/cli/mod.rs is `cli`; twice is the root.
    let inline =
        "//! x\nmod tests {\n    use super::Failure;\n    use super::super::store::Store;\n}\n";
    let found = face_violations("src/cli/mod.rs", inline);
    assert_eq!(found.len(), 1, "{found:#?}");
    assert!(found[0].starts_with("src/cli/mod.rs:4:"), "{found:#?}");
    assert!(face_violations("src/app/shop.rs", bad).is_empty());
    // Every way of writing a call of the handle, and what only looks like one.
    let handles = "//! x\nfn f(s: &Shop) {\n    s . store_mut ();\n    Shop::store(s);\n    s\n        .store_for_tests();\n    s.store_name(); restore(s); s.store;\n    let t = \"s.store()\";\n}\n";
    let found = face_violations("src/cli/status/mod.rs", handles);
    assert_eq!(
        places(&found),
        [
            "src/cli/status/mod.rs:3",
            "src/cli/status/mod.rs:4",
            "src/cli/status/mod.rs:6"
        ],
        "{found:#?}"
    );
    assert_eq!(
        test_handle_in_sources("src/app/work/mod.rs", handles).len(),
        1
    );
    assert!(test_handle_in_sources("src/app/work/mod.rs", bad).is_empty());

    let sql = "//! x\nuse rusqlite::Connection;\n// rusqlite in a comment\nfn f() { let _ = \"postgres://\"; }\n";
    assert_eq!(db_driver_uses("src/app/x.rs", sql).len(), 1);
    assert!(db_driver_uses("src/store/db.rs", sql).is_empty());

    let phys = "//! x\nuse crate::units::Flow;\nfn f(c: &super::super::model::Check) {}\n";
    assert_eq!(physics_violations("src/physics/stats.rs", phys).len(), 1);
    let long = "//! x\n".repeat(MAX_LINES + 1);
    let found = file_length("src/app/x.rs", &long);
    assert_eq!(found.len(), 1, "{found:#?}");
    assert!(
        found[0].starts_with("src/app/x.rs:801: 801 lines"),
        "{found:#?}"
    );
    assert!(file_length("src/app/x.rs", &"//! x\n".repeat(MAX_LINES)).is_empty());
    assert!(opening_line("src/x.rs", "use std::io;\n").len() == 1);
    assert!(opening_line("src/x.rs", "//! x\n").is_empty());
}
