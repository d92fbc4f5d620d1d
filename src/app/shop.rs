//! The open shop and the actions on its data as a whole: create or open a shop file, load the
//! demo, import and export CSV, back up, and a plain listing of what is stored per unit.
//!
//! One [`Shop`] holds the store of one file. The command line and the desktop app call these
//! functions; they print nothing and parse no command lines. No SQL here (that is the store's)
//! and no health rules (that is `app::status`).

use std::io::Write;
use std::path::{Path, PathBuf};

use chrono::{DateTime, Utc};
use serde::Serialize;

use super::AppError;
use crate::exchange::demo::{self, DemoCounts};
use crate::exchange::{csv_out, ExchangeError, FileKind, ImportSummary};
use crate::model::{Check, Sample};
use crate::outfile::{Options, OutFile};
use crate::store::copy::TableDigest;
use crate::store::roles::ShopRole;
use crate::store::{OpenMode, Store, StoreError};
use crate::units::UnitSystem;

/// The time zone of the shop in `store` (UTC when its settings cannot be read).
pub fn zone_of(store: &Store) -> crate::app::local_time::Zone {
    store
        .settings()
        .map(|s| crate::app::local_time::Zone::of_setting(&s.time_zone))
        .unwrap_or_default()
}

/// An open shop database.
#[derive(Debug)]
pub struct Shop {
    store: Store,
    path: PathBuf,
}

/// What `init` found or did.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct InitOutcome {
    pub path: PathBuf,
    /// A new shop file was made (false: the file was already a shop).
    pub created: bool,
    pub schema_version: usize,
}

/// One unit and what is stored about it, without any judgement of its health.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct StoredUnit {
    pub machine_tag: String,
    pub machine_name: String,
    pub unit_tag: String,
    pub archived: bool,
    pub checks: u64,
    pub samples: u64,
    pub latest_check: Option<Check>,
    pub latest_sample: Option<Sample>,
}

/// The shop's units in route order with their latest stored readings.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct StoredStatus {
    pub shop_name: String,
    pub unit_system: UnitSystem,
    pub units: Vec<StoredUnit>,
}

/// The latest stored figures of one unit as the plain listing shows them: temperature and
/// pressure in the shop's units (as faithful to the stored value as the column units are), and
/// the sample's ISO 4406 code as given or else from its counts.
#[derive(Clone, Debug, PartialEq)]
pub struct StoredFigures {
    /// °C or °F.
    pub temp: Option<f64>,
    /// bar or psi.
    pub pressure: Option<f64>,
    pub iso4406: Option<String>,
}

impl StoredStatus {
    /// `u`'s latest stored figures in this shop's units.
    pub fn shown(&self, u: &StoredUnit) -> StoredFigures {
        use crate::store::columns;
        let us = self.unit_system == UnitSystem::Us;
        let c = u.latest_check.as_ref();
        let temp = c.and_then(|c| c.reservoir_temp).map(|t| {
            if us {
                columns::temp_f(t)
            } else {
                columns::temp_c(t)
            }
        });
        let pressure =
            c.and_then(|c| c.pressure)
                .map(|p| if us { columns::psi(p) } else { columns::bar(p) });
        let iso4406 = u.latest_sample.as_ref().and_then(|s| {
            s.iso4406.clone().or_else(|| match s.counts_per_ml {
                [Some(a), Some(b), Some(c)] => {
                    crate::physics::cleanliness::code_from_counts([a, b, c], None)
                        .ok()
                        .map(|k| k.to_string())
                }
                _ => None,
            })
        });
        StoredFigures {
            temp,
            pressure,
            iso4406,
        }
    }
}

impl Shop {
    /// Opens an existing shop file, or the shop on a database server (an empty database there
    /// becomes a new shop).
    pub fn open(path: &Path) -> Result<Shop, AppError> {
        let store = Store::open(path, OpenMode::MustExist)?;
        Ok(Shop {
            store,
            path: path.to_path_buf(),
        })
    }

    /// Opens an existing shop for a command that writes to it: refused (exit 2, with what to do)
    /// when `PRAGMA quick_check` finds the file damaged, so nothing is written into a shop
    /// that is already broken. Run once per open; reads skip it.
    pub fn open_for_writing(path: &Path) -> Result<Shop, AppError> {
        let shop = Shop::open(path)?;
        shop.store.quick_check()?;
        Ok(shop)
    }

    /// Opens the shop file at `path`, creating an empty shop there if the file is missing or
    /// empty.
    pub fn create(path: &Path) -> Result<Shop, AppError> {
        let store = Store::open(path, OpenMode::Create)?;
        Ok(Shop {
            store,
            path: path.to_path_buf(),
        })
    }

    /// Makes a new shop file at `path` with the demo shop in it. Refuses an existing file.
    pub fn create_demo(path: &Path) -> Result<Shop, AppError> {
        if path.exists() && !Shop::is_server(path) {
            return Err(AppError::BadInput(format!(
                "{}: the file exists; the demo shop is only written into a new file",
                path.display()
            )));
        }
        let mut shop = Shop::create(path)?;
        shop.load_demo()?;
        Ok(shop)
    }

    /// `sumpbook.sqlite` in the platform's data directory for this user.
    pub fn default_path() -> Result<PathBuf, AppError> {
        let dirs = directories::ProjectDirs::from("", "", "sumpbook").ok_or_else(|| {
            AppError::Failed("cannot find a data directory for this user; give --db FILE".into())
        })?;
        Ok(dirs.data_dir().join("sumpbook.sqlite"))
    }

    /// Opens the default shop; on first start (no file yet) creates it with the demo shop.
    pub fn open_default() -> Result<Shop, AppError> {
        let path = Shop::default_path()?;
        match std::fs::metadata(&path) {
            Ok(m) if m.len() > 0 || !m.is_file() => return Shop::open(&path),
            // An empty file where the first start would make the shop: this is a first start.
            Ok(_) => {
                let mut shop = Shop::create(&path)?;
                shop.load_demo_this_week(Utc::now())?;
                return Ok(shop);
            }
            Err(_) => {}
        }
        if let Some(dir) = path.parent() {
            std::fs::create_dir_all(dir)
                .map_err(|e| AppError::Failed(format!("{}: {e}", dir.display())))?;
        }
        let mut shop = Shop::create(&path)?;
        shop.load_demo_this_week(Utc::now())?;
        Ok(shop)
    }

    /// Creates a new empty shop at `path` (optionally naming it), or confirms that the file is
    /// already a shop.
    pub fn init(path: &Path, shop_name: Option<&str>) -> Result<(Shop, InitOutcome), AppError> {
        let (shop, created) = if Shop::is_server(path) {
            let shop = Shop::open(path)?;
            let created = shop.store.created_here();
            (shop, created)
        } else if std::fs::metadata(path).is_ok_and(|m| m.len() > 0 || !m.is_file()) {
            (Shop::open(path)?, false)
        } else {
            // Missing or empty (0 bytes): `init` is what makes a new shop.
            (Shop::create(path)?, true)
        };
        if let Some(name) = shop_name {
            if name.trim().is_empty() {
                return Err(AppError::BadInput("the shop name must not be empty".into()));
            }
            let mut settings = shop.store.settings()?;
            if settings.shop_name != name.trim() {
                settings.shop_name = name.trim().to_string();
                shop.store
                    .set_settings(&settings, "sumpbook init", "shop named at init")?;
            }
        }
        let outcome = InitOutcome {
            path: path.to_path_buf(),
            created,
            schema_version: shop.store.schema_version()?,
        };
        Ok((shop, outcome))
    }

    /// Whether `path` is the address of a database server (`postgres://...`), not a file.
    pub fn is_server(path: &Path) -> bool {
        path.to_str().is_some_and(crate::store::is_server_address)
    }

    /// The store handle, for the application layer only: the command line and the desktop app
    /// call `app` functions with the shop, the one door to its data.
    pub(in crate::app) fn store(&self) -> &Store {
        &self.store
    }

    /// The store handle for writing; see [`Shop::store`].
    pub(in crate::app) fn store_mut(&mut self) -> &mut Store {
        &mut self.store
    }

    /// The store handle for the integration tests under tests/, which set up rows no form
    /// makes and read back what was stored. Not part of the program's interface: hidden from
    /// the documentation, and tests/architecture.rs fails on any use of it under src/.
    #[doc(hidden)]
    pub fn store_for_tests(&self) -> &Store {
        &self.store
    }

    /// The shop's unit system (the default when its settings cannot be read).
    pub fn unit_system(&self) -> UnitSystem {
        self.store
            .settings()
            .map(|s| s.unit_system)
            .unwrap_or_default()
    }

    /// The shop's time zone (UTC when its settings cannot be read): typed times are read and
    /// stored instants shown in it.
    pub fn zone(&self) -> crate::app::local_time::Zone {
        zone_of(&self.store)
    }

    /// The version of the shop's schema.
    pub fn schema_version(&self) -> Result<usize, AppError> {
        Ok(self.store.schema_version()?)
    }

    pub fn path(&self) -> &Path {
        &self.path
    }

    /// A warning about the state the shop file was found in when this program first opened it
    /// (its write-ahead log removed after an unclean shutdown: the last saved changes lost), to
    /// be shown as long as the program runs; `None` when there is nothing to say.
    pub fn open_notice(&self) -> Option<String> {
        self.store.open_notice()
    }

    /// Writes the demo shop into this shop, which must have no units yet, with the dates it
    /// was made with (those of `sample-data/`).
    pub fn load_demo(&mut self) -> Result<DemoCounts, AppError> {
        self.load_demo_moved(None)
    }

    /// Writes the demo shop with its dates moved forward by whole weeks so that its last
    /// walk-round falls in the week before `now` (`demo::DemoShop::moved_to`): what a first
    /// start shows, so that a new shop does not open with every unit's work late.
    pub fn load_demo_this_week(&mut self, now: DateTime<Utc>) -> Result<DemoCounts, AppError> {
        self.load_demo_moved(Some(now))
    }

    fn load_demo_moved(&mut self, now: Option<DateTime<Utc>>) -> Result<DemoCounts, AppError> {
        let n = self.store.unit_count()?;
        if n > 0 {
            return Err(AppError::BadInput(format!(
                "{}: the shop already has {n} unit(s); the demo is only loaded into an empty shop \
                 (use a new file, e.g. --db demo.sqlite)",
                self.path.display()
            )));
        }
        let mut shop = demo::generate().map_err(|e| AppError::Failed(e.to_string()))?;
        if let Some(now) = now {
            shop = shop.moved_to(now);
        }
        demo::load(&mut self.store, &shop).map_err(|e| match e {
            demo::DemoError::Store(s) => AppError::Store(s),
            other => AppError::Failed(other.to_string()),
        })
    }

    /// Writes all rows of `kind` as CSV to the file `path`: whole or not at all, an existing
    /// file replaced only when `replace` is set (a device such as `/dev/null` is written in
    /// place). Returns the rows written.
    pub fn export_to_file(
        &self,
        kind: FileKind,
        path: &Path,
        system: Option<UnitSystem>,
        replace: bool,
    ) -> Result<u64, AppError> {
        let out = OutFile::create(
            path,
            Options {
                replace,
                devices_in_place: true,
                can_force: true,
            },
        )?;
        let mut w = std::io::BufWriter::new(out);
        let n = self.export(kind, &mut w, system).map_err(|e| match e {
            AppError::Failed(m) => AppError::Failed(format!("{}: {m}", path.display())),
            other => other,
        })?;
        let out = w.into_inner().map_err(|e| {
            AppError::Failed(format!("cannot write {}: {}", path.display(), e.error()))
        })?;
        out.commit()?;
        Ok(n)
    }

    /// Writes all rows of `kind` as CSV, in `system` or else the shop's own unit system.
    pub fn export(
        &self,
        kind: FileKind,
        out: &mut dyn Write,
        system: Option<UnitSystem>,
    ) -> Result<u64, AppError> {
        let system = match system {
            Some(s) => s,
            None => self.store.settings()?.unit_system,
        };
        csv_out::export(&self.store, kind, out, system).map_err(AppError::from)
    }

    /// Writes a consistent copy of the shop to `dest` (a new file) while it stays in use.
    pub fn backup(&self, dest: &Path) -> Result<(), AppError> {
        self.store.backup_to(dest).map_err(AppError::from)
    }

    /// Every unit in route order with its machine, counts and latest check and sample, as stored.
    pub fn stored_status(&self) -> Result<StoredStatus, AppError> {
        let settings = self.store.settings()?;
        let machines = self.store.machines()?;
        let mut checks: std::collections::HashMap<_, _> = self
            .store
            .latest_checks()?
            .into_iter()
            .map(|c| (c.unit_id, c))
            .collect();
        let mut samples: std::collections::HashMap<_, _> = self
            .store
            .latest_samples()?
            .into_iter()
            .map(|s| (s.unit_id, s))
            .collect();
        let counts = self.store.reading_counts()?;
        let mut units = Vec::new();
        for u in self.store.units()? {
            let m = machines.iter().find(|m| m.id == u.machine_id);
            let (nc, ns) = counts.get(&u.id).copied().unwrap_or((0, 0));
            units.push(StoredUnit {
                machine_tag: m.map(|m| m.tag.clone()).unwrap_or_default(),
                machine_name: m.map(|m| m.name.clone()).unwrap_or_default(),
                archived: u.archived || m.is_some_and(|m| m.archived),
                checks: nc,
                samples: ns,
                latest_check: checks.remove(&u.id),
                latest_sample: samples.remove(&u.id),
                unit_tag: u.tag,
            });
        }
        Ok(StoredStatus {
            shop_name: settings.shop_name,
            unit_system: settings.unit_system,
            units,
        })
    }
}

/// What `copy` did: the two shops and, per table, the rows and digest on each side.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct CopyOutcome {
    pub from: String,
    pub to: String,
    pub tables: Vec<(TableDigest, TableDigest)>,
}

impl Shop {
    /// Copies the whole shop at `from` into `to` (each a file or a server): all or nothing,
    /// verified by the row count and content digest of every table on both sides before it is
    /// kept. `to` must be a new file, an empty shop, or with `replace` any shop (its data is
    /// replaced). A file is written under a temporary name beside it and renamed when whole.
    pub fn copy(from: &Path, to: &Path, replace: bool) -> Result<CopyOutcome, AppError> {
        let same = from == to
            || (!Shop::is_server(from)
                && !Shop::is_server(to)
                && std::fs::canonicalize(from)
                    .ok()
                    .is_some_and(|a| std::fs::canonicalize(to).ok().is_some_and(|b| a == b)));
        if same {
            return Err(AppError::BadInput(
                "--from and --to name the same shop".into(),
            ));
        }
        // A damaged shop is neither copied nor written to: the source must pass its quick
        // check, and so must a shop file at `to` (also one `--replace` would overwrite: it may
        // hold what the source does not, and is recovered or removed by hand).
        let source = Shop::open_for_writing(from)?;
        let shown_to = if Shop::is_server(to) {
            Shop::open(to)?.store.path().display().to_string()
        } else {
            to.display().to_string()
        };
        let outcome = |tables| CopyOutcome {
            from: source.store.path().display().to_string(),
            to: shown_to.clone(),
            tables,
        };
        if Shop::is_server(to) {
            let dest = Shop::open(to)?;
            let tables = source.store.copy_into(&dest.store, replace)?;
            return Ok(outcome(tables));
        }
        if to.exists() {
            let dest = Shop::open_for_writing(to)?;
            if dest.store.is_empty_shop()? {
                let tables = source.store.copy_into(&dest.store, false)?;
                return Ok(outcome(tables));
            }
            if !replace {
                return Err(AppError::BadInput(format!(
                    "{}: already holds a shop; give --replace to overwrite it",
                    to.display()
                )));
            }
        }
        // A new file, or one to replace: written to a new side file beside it (never through
        // a planted link), put in place when whole and checked.
        let out = OutFile::create(
            to,
            Options {
                replace,
                devices_in_place: false,
                can_force: false,
            },
        )?;
        let Some(tmp) = out.side_path().map(Path::to_path_buf) else {
            return Err(AppError::BadInput(format!(
                "{}: not a regular file",
                to.display()
            )));
        };
        let remove_sides = || {
            for suffix in ["-journal", "-wal", "-shm"] {
                let mut p = tmp.as_os_str().to_os_string();
                p.push(suffix);
                // Nothing to do if it is not there.
                let _ = std::fs::remove_file(PathBuf::from(p));
            }
        };
        let written = (|| {
            let dest = Store::open(&tmp, OpenMode::Create)?;
            // Closing folds the write-ahead log into the file before it is put in place.
            source.store.copy_into(&dest, false)
        })();
        remove_sides();
        let tables = written?;
        out.commit()?;
        Ok(outcome(tables))
    }

    /// Creates the shop's roles on its server and gives them their rights.
    pub fn create_roles(&self) -> Result<(), AppError> {
        Ok(self.store.create_roles()?)
    }

    /// Gives a server login one of the shop's roles.
    pub fn grant_role(&self, login: &str, role: ShopRole) -> Result<(), AppError> {
        Ok(self.store.grant_role(login, role)?)
    }

    /// The signed-in server user and the shop roles it holds (`None` for a shop file).
    pub fn signed_in_roles(&self) -> Result<Option<(String, Vec<ShopRole>)>, AppError> {
        Ok(self.store.signed_in_roles()?)
    }
}

impl From<ExchangeError> for AppError {
    fn from(e: ExchangeError) -> Self {
        match e {
            ExchangeError::Rows(errors) => AppError::Import { errors },
            ExchangeError::Io { path, source } => {
                AppError::BadInput(format!("{}: {source}", path.display()))
            }
            ExchangeError::Write(e) if e.kind() == std::io::ErrorKind::BrokenPipe => {
                AppError::OutputClosed
            }
            ExchangeError::Write(e) => AppError::Failed(format!("cannot write: {e}")),
            ExchangeError::Store(s) => AppError::Store(s),
            ExchangeError::Out(o) => AppError::from(o),
        }
    }
}

/// Sets what is told while a writer waits for another program's lock on the shop:
/// `f(shop file, waited so far)`.
pub fn report_waits_with(f: fn(&Path, std::time::Duration)) {
    crate::store::report_waits_with(f);
}

/// Sets what is told when a shop file is found in a state the user must know of (see
/// [`Shop::open_notice`]): `f(shop file, what to say)`, once, when it is found.
pub fn report_notices_with(f: fn(&Path, &str)) {
    crate::store::report_notices_with(f);
}

/// Whether a store error is about the file or the input the user gave (a wrong, damaged or
/// locked file, a refused value): exit code 2.
pub(crate) fn store_error_is_input(e: &StoreError) -> bool {
    if let StoreError::Out(o) = e {
        return o.is_input();
    }
    matches!(
        e,
        StoreError::Missing { .. }
            | StoreError::NoShop { .. }
            | StoreError::NotSqlite { .. }
            | StoreError::NotSumpbook { .. }
            | StoreError::TooNew { .. }
            | StoreError::CannotOpen { .. }
            | StoreError::ReadOnlyFile { .. }
            | StoreError::Locked { .. }
            | StoreError::Busy
            | StoreError::Damaged { .. }
            | StoreError::Corrupt(_)
            | StoreError::Invalid { .. }
            | StoreError::Duplicate { .. }
            | StoreError::NotFound(_)
            | StoreError::BadReference
            | StoreError::NoEditContext
            | StoreError::Refused(_)
            | StoreError::NotAllowed(_)
            | StoreError::Conflict { .. }
    )
}

/// Fills `summary.questioned` with the readings of this import that the screening questions
/// (the same rule as the entry forms and the health engine, `health::screen`): each imported
/// check or sample is judged against the unit's history and physical frame as stored now. The
/// rows stay stored, unconfirmed; the engine leaves them out of baselines and detectors until a
/// person or the next reading confirms them. Only the units the import wrote to are read.
pub fn mark_questioned(
    store: &crate::store::Store,
    kind: FileKind,
    summary: &mut ImportSummary,
) -> Result<(), AppError> {
    use crate::health::screen::{self, Record};
    let record = match kind {
        FileKind::Checks => Record::Check,
        FileKind::Samples => Record::Sample,
        FileKind::Units | FileKind::Events => return Ok(()),
    };
    let Some((lo, hi)) = summary.inserted_ids else {
        return Ok(());
    };
    let sys = store.settings()?.unit_system;
    let mut out = Vec::new();
    for unit_id in store.units_with_rows(kind == FileKind::Samples, lo, hi)? {
        let Some(h) = store.unit_history(unit_id, None)? else {
            continue;
        };
        for q in screen::screen_history(&h, h.fluid.as_ref(), sys) {
            if q.record == record && (lo..=hi).contains(&q.id) && q.confirmed.is_none() {
                out.push(crate::exchange::QuestionedRow {
                    unit: h.unit.tag.clone(),
                    at: crate::store::fmt_time_stamp(&q.at),
                    field: q.field.key().to_string(),
                    reason: q.reason,
                });
            }
        }
    }
    out.sort_by(|a, b| (&a.at, &a.unit).cmp(&(&b.at, &b.unit)));
    summary.questioned = out;
    Ok(())
}

/// The import summary's line on questioned readings, naming each (empty when none).
pub fn questioned_lines(summary: &ImportSummary) -> Vec<String> {
    if summary.questioned.is_empty() {
        return Vec::new();
    }
    let n = summary.questioned.len();
    let mut lines = vec![format!(
        "{n} reading{} questioned and kept unconfirmed (left out of baselines and detectors until \
         confirmed; `sumpbook confirm`, or Confirm on the unit page):",
        if n == 1 { "" } else { "s" }
    )];
    lines.extend(
        summary
            .questioned
            .iter()
            .map(|q| format!("  {} {} {}: {}", q.unit, q.at, q.field, q.reason)),
    );
    lines
}
