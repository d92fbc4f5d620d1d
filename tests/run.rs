//! Running the `sumpbook` binary in a test's folder: its output, success, and a refusal with
//! exit code 2 and no panic; and a reading deleted as the unit page deletes it. Shared by the
//! command-line, server and report tests.

use std::path::Path;
use std::process::{Command, Output};

/// The binary run in `dir`, with its default shop kept inside `dir` and no shop named by the
/// environment.
pub fn sumpbook(dir: &Path, args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_sumpbook"))
        .args(args)
        .current_dir(dir)
        .env("HOME", dir)
        .env("XDG_DATA_HOME", dir.join("data"))
        .env_remove("SUMPBOOK_DB")
        .output()
        .unwrap()
}

pub fn text(b: &[u8]) -> String {
    String::from_utf8_lossy(b).into_owned()
}

/// Runs and asserts success; the standard output.
pub fn ok(dir: &Path, args: &[&str]) -> String {
    let out = sumpbook(dir, args);
    assert!(
        out.status.success(),
        "{args:?} failed: {}{}",
        text(&out.stdout),
        text(&out.stderr)
    );
    text(&out.stdout)
}

/// Exit code 2, a message on stderr that contains `needle`, and no panic; the message.
pub fn refused(dir: &Path, args: &[&str], needle: &str) -> String {
    let out = sumpbook(dir, args);
    let err = text(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{args:?}: {err}");
    assert!(
        err.contains(needle),
        "{args:?}: expected `{needle}` in: {err}"
    );
    assert!(!err.contains("panicked"), "{err}");
    err
}

/// Deletes the newest check of unit `tag` in the shop at `path` as the unit page does (by AK,
/// "typed on the wrong unit"); its id.
pub fn delete_newest_check(path: &Path, tag: &str) -> i64 {
    let shop = sumpbook::app::shop::Shop::open_for_writing(path).unwrap();
    let unit = shop.store_for_tests().unit_by_tag(tag).unwrap().unwrap();
    let last = shop
        .store_for_tests()
        .checks_for_unit(unit.id, None)
        .unwrap()
        .pop()
        .unwrap();
    sumpbook::app::entry::delete_reading(
        &shop,
        sumpbook::app::entry::Reading::Check,
        last.id,
        "AK",
        "typed on the wrong unit",
    )
    .unwrap();
    last.id
}
