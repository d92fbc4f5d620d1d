//! The two backends the store and command-line tests run on: a shop file, and a PostgreSQL
//! database of its own per shop on one throwaway server per test run.
//!
//! The server is the one `SUMPBOOK_TEST_PG` names (an address whose user may create
//! databases, e.g. `postgres://sumpbook@127.0.0.1:55432/postgres`; `.ci/run` starts one and sets
//! it). Without it, the tests start their own server from the PostgreSQL binaries found on this
//! machine (in a temporary directory, on a free port, trust on loopback only, stopped when the
//! test run ends). Only where no PostgreSQL binaries exist do the server runs print why they
//! were skipped; a server that is there but fails to start fails the tests.

use std::cell::Cell;
use std::path::{Path, PathBuf};
use std::process::Command;
use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::OnceLock;

/// The environment variable that names the test server.
pub const TEST_SERVER_VARIABLE: &str = "SUMPBOOK_TEST_PG";

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Backend {
    File,
    Server,
}

thread_local! {
    static CURRENT: Cell<Backend> = const { Cell::new(Backend::File) };
}

/// The backend of the test body now running on this thread.
pub fn current() -> Backend {
    CURRENT.with(|c| c.get())
}

/// Runs `body` once on a shop file and once on the server (if there is one); `shop_at` in the
/// body then makes shops of that backend.
pub fn on_each_backend(body: impl Fn()) {
    CURRENT.with(|c| c.set(Backend::File));
    body();
    if server().is_some() {
        CURRENT.with(|c| c.set(Backend::Server));
        body();
        CURRENT.with(|c| c.set(Backend::File));
    }
}

/// Where a new, empty shop of the current backend is: `dir/name` for a file, the address of a
/// new empty database for the server.
pub fn shop_at(dir: &Path, name: &str) -> PathBuf {
    match current() {
        Backend::File => dir.join(name),
        Backend::Server => PathBuf::from(new_database()),
    }
}

/// The admin address of the test server, if there is one.
pub fn server() -> Option<&'static str> {
    static SERVER: OnceLock<Option<String>> = OnceLock::new();
    SERVER
        .get_or_init(|| {
            if let Some(url) = std::env::var(TEST_SERVER_VARIABLE)
                .ok()
                .filter(|u| !u.is_empty())
            {
                return Some(url);
            }
            match binaries() {
                Some(bin) => Some(start_own_server(&bin)),
                None => {
                    eprintln!(
                        "PostgreSQL tests skipped: no PostgreSQL binaries (initdb, pg_ctl) on this \
                         machine and {TEST_SERVER_VARIABLE} is not set"
                    );
                    None
                }
            }
        })
        .as_deref()
}

/// A new empty database on the test server; its address.
pub fn new_database() -> String {
    static N: AtomicUsize = AtomicUsize::new(0);
    let admin = server().expect("a test server");
    let name = format!(
        "sbt_{}_{}",
        std::process::id(),
        N.fetch_add(1, Ordering::SeqCst)
    );
    let mut client = postgres::Client::connect(admin, postgres::NoTls).expect("the test server");
    client
        .batch_execute(&format!("CREATE DATABASE {name}"))
        .expect("a test database");
    with_database(admin, &name)
}

/// `url` with its database name replaced by `db`.
pub fn with_database(url: &str, db: &str) -> String {
    let (base, _) = url.rsplit_once('/').expect("an address ends in /DBNAME");
    format!("{base}/{db}")
}

/// `url` with its user replaced by `user`.
pub fn as_user(url: &str, user: &str) -> String {
    let (scheme, rest) = url.split_once("://").expect("scheme://");
    let host = rest.split_once('@').map_or(rest, |(_, h)| h);
    format!("{scheme}://{user}@{host}")
}

/// The folder of `initdb` and `pg_ctl`: the newest version under /usr/lib/postgresql, or on
/// the PATH.
fn binaries() -> Option<PathBuf> {
    let mut found: Vec<(u32, PathBuf)> = std::fs::read_dir("/usr/lib/postgresql")
        .ok()?
        .filter_map(|e| {
            let e = e.ok()?;
            let v: u32 = e.file_name().to_str()?.parse().ok()?;
            let bin = e.path().join("bin");
            bin.join("initdb").exists().then_some((v, bin))
        })
        .collect();
    found.sort();
    if let Some((_, bin)) = found.pop() {
        return Some(bin);
    }
    let path = std::env::var_os("PATH")?;
    std::env::split_paths(&path).find(|d| d.join("initdb").exists() && d.join("pg_ctl").exists())
}

fn is_root() -> bool {
    Command::new("id")
        .arg("-u")
        .output()
        .is_ok_and(|o| String::from_utf8_lossy(&o.stdout).trim() == "0")
}

/// Runs a PostgreSQL program: as the `postgres` user when this is root (initdb refuses root).
fn pg_command(bin: &Path, program: &str, root: bool) -> Command {
    if root {
        let mut c = Command::new("runuser");
        c.args(["-u", "postgres", "--"]).arg(bin.join(program));
        c
    } else {
        Command::new(bin.join(program))
    }
}

fn start_own_server(bin: &Path) -> String {
    let root = is_root();
    let dir = tempfile::Builder::new()
        .prefix("sumpbook-test-pg-")
        .tempdir()
        .expect("a temporary directory")
        .keep();
    if root {
        let ok = Command::new("chown")
            .arg("postgres")
            .arg(&dir)
            .status()
            .is_ok_and(|s| s.success());
        assert!(ok, "cannot give {} to the postgres user", dir.display());
    }
    let data = dir.join("data");
    let out = pg_command(bin, "initdb", root)
        .arg("-D")
        .arg(&data)
        .args(["-U", "sumpbook", "--auth=trust", "--no-sync"])
        .output()
        .expect("initdb runs");
    assert!(
        out.status.success(),
        "initdb failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    let port = std::net::TcpListener::bind("127.0.0.1:0")
        .and_then(|l| l.local_addr())
        .expect("a free port")
        .port();
    let out = pg_command(bin, "pg_ctl", root)
        .arg("-D")
        .arg(&data)
        .arg("-l")
        .arg(dir.join("log"))
        .arg("-w")
        .arg("-o")
        .arg(format!(
            "-p {port} -k {} -c listen_addresses=127.0.0.1 -c fsync=off -c max_connections=100",
            dir.display()
        ))
        .arg("start")
        .output()
        .expect("pg_ctl runs");
    assert!(
        out.status.success(),
        "the test server did not start: {}{}",
        String::from_utf8_lossy(&out.stderr),
        std::fs::read_to_string(dir.join("log")).unwrap_or_default()
    );
    // Stops the server and removes its folder once this test run has ended.
    let stop = format!(
        "while [ -d /proc/{pid} ]; do sleep 1; done; {pg_ctl} -D '{data}' -m immediate stop >/dev/null 2>&1; rm -rf '{dir}'",
        pid = std::process::id(),
        pg_ctl = if root {
            format!("runuser -u postgres -- '{}'", bin.join("pg_ctl").display())
        } else {
            format!("'{}'", bin.join("pg_ctl").display())
        },
        data = data.display(),
        dir = dir.display(),
    );
    // Started in the background by a shell that returns at once.
    let started = Command::new("sh")
        .args(["-c", &format!("({stop}) </dev/null >/dev/null 2>&1 &")])
        .status()
        .is_ok_and(|s| s.success());
    assert!(
        started,
        "the watchdog that stops the test server did not start"
    );
    format!("postgres://sumpbook@127.0.0.1:{port}/postgres")
}
