//! `sumpbook init`, `demo`, `import`, `export`, `status` (plain, as stored), `backup`, `copy`
//! and `roles`: the shop's data as a whole on the command line.
//!
//! Parses what was typed, calls `app::shop` and prints. No rules and no SQL here. Bad input
//! (a wrong file, bad rows) exits with code 2 and says what was wrong.

use std::io::Write;
use std::path::{Path, PathBuf};

use clap::{Args, ValueEnum};

use super::Failure;
use crate::app::import::{mapping_needed_text, Columns, ImportRun};
use crate::app::shop::{Shop, StoredStatus};
use crate::app::vocab::{DateOrder, FileKind, ShopRole, IGNORE};
use crate::units::UnitSystem;

/// The kinds of CSV file, as typed on the command line.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum KindArg {
    /// The unit register: machines, hydraulic units, fluids.
    Units,
    /// Walk-round checks.
    Checks,
    /// Fluid sample results.
    Samples,
    /// Maintenance events.
    Events,
}

impl From<KindArg> for FileKind {
    fn from(k: KindArg) -> Self {
        match k {
            KindArg::Units => FileKind::Units,
            KindArg::Checks => FileKind::Checks,
            KindArg::Samples => FileKind::Samples,
            KindArg::Events => FileKind::Events,
        }
    }
}

/// Unit systems, as typed on the command line.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum UnitsArg {
    /// °C, bar, L/min, L, mm.
    Metric,
    /// °F, psi, US gal/min, US gal, in.
    Us,
}

impl From<UnitsArg> for UnitSystem {
    fn from(u: UnitsArg) -> Self {
        match u {
            UnitsArg::Metric => UnitSystem::Metric,
            UnitsArg::Us => UnitSystem::Us,
        }
    }
}

#[derive(Args, Debug, Clone, PartialEq)]
pub struct InitArgs {
    /// Name the shop (shown on reports).
    #[arg(long, value_name = "NAME")]
    pub name: Option<String>,
}

#[derive(Args, Debug, Clone, PartialEq)]
pub struct ImportArgs {
    /// What the file holds.
    #[arg(value_enum)]
    pub kind: KindArg,
    /// The CSV file (`,` `;` or tab separated; UTF-8).
    pub file: PathBuf,
    /// Import the good rows and write the refused ones to FILE.rejects.csv, instead of
    /// importing nothing when any row is bad.
    #[arg(long)]
    pub keep_going: bool,
    /// Print the summary as JSON.
    #[arg(long)]
    pub json: bool,
    /// Read the file's columns through the saved column mapping NAME (without it, a file with
    /// its own column names is read through the mapping saved for the same header).
    #[arg(long, value_name = "NAME")]
    pub map: Option<String>,
    /// Save the column mapping (proposed, or --map's, with the corrections below) as NAME,
    /// then import through it.
    #[arg(long, value_name = "NAME")]
    pub save_map: Option<String>,
    /// Correct the mapping: the file's column COLUMN is sumpbook's column NAME (repeat for
    /// more columns).
    #[arg(long = "set", value_name = "COLUMN=NAME")]
    pub set: Vec<String>,
    /// Leave the file's column COLUMN out of the import on purpose (repeat for more).
    #[arg(long, value_name = "COLUMN")]
    pub ignore: Vec<String>,
    /// How the file writes its dates: iso, day-first (20/11/2026) or month-first (11/20/2026).
    #[arg(long, value_name = "ORDER")]
    pub dates: Option<String>,
}

#[derive(Args, Debug, Clone, PartialEq)]
pub struct ExportArgs {
    /// What to export.
    #[arg(value_enum)]
    pub kind: KindArg,
    /// Write to this file instead of standard output.
    #[arg(long, value_name = "FILE")]
    pub out: Option<PathBuf>,
    /// Unit system of the numbers (default: the shop's).
    #[arg(long, value_enum)]
    pub units: Option<UnitsArg>,
    /// Replace the file given with --out if it exists (otherwise an existing file is refused).
    #[arg(long, requires = "out")]
    pub force: bool,
}

#[derive(Args, Debug, Clone, PartialEq, Default)]
pub struct StoredStatusArgs {
    /// Print JSON instead of the table.
    #[arg(long)]
    pub json: bool,
}

#[derive(Args, Debug, Clone, PartialEq)]
pub struct BackupArgs {
    /// The backup file to write (must not exist yet).
    #[arg(long, value_name = "FILE")]
    pub out: PathBuf,
}

#[derive(Args, Debug, Clone, PartialEq)]
pub struct CopyArgs {
    /// The shop to copy: a file or postgres://USER@HOST:PORT/DBNAME.
    #[arg(long, value_name = "FILE|URL")]
    pub from: PathBuf,
    /// Where to copy it: a new file, an empty shop, or (with --replace) any shop.
    #[arg(long, value_name = "FILE|URL")]
    pub to: PathBuf,
    /// Replace the data of a shop that is not empty.
    #[arg(long)]
    pub replace: bool,
    /// Print the tables' counts and digests as JSON.
    #[arg(long)]
    pub json: bool,
}

#[derive(Args, Debug, Clone, PartialEq)]
pub struct RolesArgs {
    /// Create the roles technician, engineer and supervisor on the shop's server and give
    /// them their rights (run as the owner of the shop's database).
    #[arg(long)]
    pub create: bool,
    /// Give this server login a role (with --role).
    #[arg(long, value_name = "LOGIN", requires = "role")]
    pub grant: Option<String>,
    /// technician, engineer or supervisor.
    #[arg(long, value_name = "ROLE", requires = "grant")]
    pub role: Option<String>,
}

pub fn run_copy(args: &CopyArgs, out: &mut dyn Write) -> Result<(), Failure> {
    let outcome = Shop::copy(&args.from, &args.to, args.replace)?;
    if args.json {
        let text =
            serde_json::to_string_pretty(&outcome).map_err(|e| Failure::failed(e.to_string()))?;
        writeln!(out, "{text}")?;
        return Ok(());
    }
    writeln!(out, "copied {} to {}", outcome.from, outcome.to)?;
    writeln!(
        out,
        "{:<18} {:>10} {:>10}  {:<16}  {:<16}",
        "table", "rows from", "rows to", "digest from", "digest to"
    )?;
    for (a, b) in &outcome.tables {
        writeln!(
            out,
            "{:<18} {:>10} {:>10}  {:<16}  {:<16}",
            a.table,
            a.rows,
            b.rows,
            &a.digest[..16.min(a.digest.len())],
            &b.digest[..16.min(b.digest.len())]
        )?;
    }
    writeln!(out, "every table matches")?;
    Ok(())
}

pub fn run_roles(db: Option<&Path>, args: &RolesArgs, out: &mut dyn Write) -> Result<(), Failure> {
    // Creating roles or granting one writes to the shop: a damaged shop file is refused first,
    // as by every other command that writes.
    let shop = if args.create || args.grant.is_some() {
        open_shop_for_writing(db)?
    } else {
        open_shop(db)?
    };
    if args.create {
        shop.create_roles()?;
        writeln!(out, "roles created on {}:", shop.path().display())?;
        for role in ShopRole::ALL {
            writeln!(
                out,
                "  {:<11} {}: {}",
                role.as_str(),
                role.role_name(),
                role.may()
            )?;
        }
    }
    if let (Some(login), Some(role)) = (&args.grant, &args.role) {
        let role: ShopRole = role.parse().map_err(Failure::bad_input)?;
        shop.grant_role(login, role)?;
        writeln!(out, "{login} is now a {}", role.as_str())?;
    }
    if !args.create && args.grant.is_none() {
        match shop.signed_in_roles()? {
            None => writeln!(
                out,
                "{} is a shop file: no roles (whoever can write the file can do everything)",
                shop.path().display()
            )?,
            Some((user, roles)) if roles.is_empty() => writeln!(
                out,
                "signed in as {user}: no shop role (ask the shop's administrator for one)"
            )?,
            Some((user, roles)) => {
                for role in roles {
                    writeln!(
                        out,
                        "signed in as {user}, {}: may {}",
                        role.as_str(),
                        role.may()
                    )?;
                }
            }
        }
    }
    Ok(())
}

fn db_path(db: Option<&Path>) -> Result<PathBuf, Failure> {
    match db {
        Some(p) => Ok(p.to_path_buf()),
        None => Ok(Shop::default_path()?),
    }
}

/// Opens the shop named by `--db` (it must exist), or the default shop (created with the demo
/// on first start).
pub fn open_shop(db: Option<&Path>) -> Result<Shop, Failure> {
    match db {
        Some(p) => Ok(Shop::open(p)?),
        None => Ok(Shop::open_default()?),
    }
}

/// [`open_shop`] for a command that writes: the shop must pass its quick check first.
pub fn open_shop_for_writing(db: Option<&Path>) -> Result<Shop, Failure> {
    match db {
        Some(p) => Ok(Shop::open_for_writing(p)?),
        None => {
            let shop = Shop::open_default()?;
            let path = shop.path().to_path_buf();
            drop(shop);
            Ok(Shop::open_for_writing(&path)?)
        }
    }
}

pub fn run_init(db: Option<&Path>, args: &InitArgs, out: &mut dyn Write) -> Result<(), Failure> {
    let path = db_path(db)?;
    if let Some(dir) = path
        .parent()
        .filter(|_| !Shop::is_server(&path))
        .filter(|d| !d.as_os_str().is_empty() && !d.exists())
    {
        std::fs::create_dir_all(dir)
            .map_err(|e| Failure::failed(format!("{}: {e}", dir.display())))?;
    }
    let (_, outcome) = Shop::init(&path, args.name.as_deref())?;
    if outcome.created {
        writeln!(
            out,
            "created shop {} (schema version {})",
            path.display(),
            outcome.schema_version
        )?;
    } else {
        writeln!(
            out,
            "{} is already a shop (schema version {})",
            path.display(),
            outcome.schema_version
        )?;
    }
    Ok(())
}

/// Arguments of `demo`.
#[derive(clap::Args, Debug)]
pub struct DemoArgs {
    /// Move every date forward by whole weeks so that the last walk-round falls in the
    /// current week, as on the app's first start (default: the dates of `sample-data/`).
    #[arg(long)]
    pub this_week: bool,
}

pub fn run_demo(db: Option<&Path>, args: &DemoArgs, out: &mut dyn Write) -> Result<(), Failure> {
    let path = db_path(db)?;
    let mut shop = if Shop::is_server(&path)
        || std::fs::metadata(&path).is_ok_and(|m| m.len() > 0 || !m.is_file())
    {
        Shop::open_for_writing(&path)?
    } else {
        Shop::create(&path)?
    };
    let n = if args.this_week {
        shop.load_demo_this_week(chrono::Utc::now())?
    } else {
        shop.load_demo()?
    };
    writeln!(
        out,
        "demo shop written to {}: {} machines, {} units, {} fluids, {} checks, {} samples, {} events",
        path.display(),
        n.machines,
        n.units,
        n.fluids,
        n.checks,
        n.samples,
        n.events
    )?;
    Ok(())
}

pub fn run_import(
    db: Option<&Path>,
    args: &ImportArgs,
    out: &mut dyn Write,
) -> Result<(), Failure> {
    let mut shop = open_shop_for_writing(db)?;
    let kind = FileKind::from(args.kind);
    let correcting = args.save_map.is_some() || !args.set.is_empty() || !args.ignore.is_empty();
    let columns = if correcting || args.dates.is_some() {
        let mut m = shop.mapping_for(Some(kind), &args.file, args.map.as_deref())?;
        for pair in &args.set {
            let (col, to) = pair
                .rsplit_once('=')
                .ok_or_else(|| Failure::bad_input(format!("--set `{pair}`: write COLUMN=NAME")))?;
            m.set(col, to).map_err(Failure::bad_input)?;
        }
        for col in &args.ignore {
            m.set(col, IGNORE).map_err(Failure::bad_input)?;
        }
        if let Some(d) = &args.dates {
            m.dates = d.parse::<DateOrder>().map_err(Failure::bad_input)?;
        }
        match &args.save_map {
            Some(name) => {
                shop.save_import_profile(name, &m)?;
                if !args.json {
                    writeln!(out, "column mapping {name} saved")?;
                }
                Columns::Profile(name.clone())
            }
            None => Columns::Given(m),
        }
    } else {
        args.map.clone().map_or(Columns::Auto, Columns::Profile)
    };
    let opts = crate::app::import::ImportOptions {
        keep_going: args.keep_going,
        columns,
        ..Default::default()
    };
    let s = match shop.import(kind, &args.file, &opts)? {
        ImportRun::NeedsMapping(m) => {
            let mut text = mapping_needed_text(&args.file, &m);
            text.push_str(&format!(
                "Save it with: sumpbook import {kind} {} --save-map NAME, correcting it with \
                 --set 'COLUMN=NAME', --ignore 'COLUMN' and --dates iso|day-first|month-first \
                 (NAME: the lab's or the counter's); files with the same header then use it by \
                 themselves.",
                args.file.display()
            ));
            return Err(Failure::bad_input(text));
        }
        run => run.into_summary()?,
    };
    if args.json {
        let text = serde_json::to_string_pretty(&s).map_err(|e| Failure::failed(e.to_string()))?;
        writeln!(out, "{text}")?;
        return Ok(());
    }
    if let Some(p) = &s.profile {
        writeln!(out, "columns read through the saved mapping {p}")?;
    }
    write!(
        out,
        "{}: {} rows read, {} added, {} already stored",
        args.file.display(),
        s.rows,
        s.inserted,
        s.unchanged
    )?;
    if kind == FileKind::Units {
        write!(
            out,
            " ({} machines and {} fluids added)",
            s.machines_added, s.fluids_added
        )?;
    }
    if s.rounded > 0 {
        write!(
            out,
            "; {} number{} had more than 12 significant digits and {} stored rounded to 12",
            s.rounded,
            if s.rounded == 1 { "" } else { "s" },
            if s.rounded == 1 { "was" } else { "were" }
        )?;
    }
    if args.keep_going {
        write!(out, ", {} refused", s.rejected)?;
        if let Some(p) = &s.rejects_file {
            write!(out, " (written to {})", p.display())?;
        }
    }
    writeln!(out)?;
    for line in crate::app::shop::questioned_lines(&s) {
        writeln!(out, "{line}")?;
    }
    Ok(())
}

pub fn run_import_maps(
    db: Option<&Path>,
    args: &StoredStatusArgs,
    out: &mut dyn Write,
) -> Result<(), Failure> {
    let profiles = open_shop(db)?.import_profiles()?;
    if args.json {
        let list: Vec<serde_json::Value> = profiles
            .iter()
            .map(|p| {
                serde_json::json!({
                    "name": p.name,
                    "kind": p.kind,
                    "dates": p.date_order,
                    "header": p.header,
                    "columns": p.columns,
                })
            })
            .collect();
        let text =
            serde_json::to_string_pretty(&list).map_err(|e| Failure::failed(e.to_string()))?;
        writeln!(out, "{text}")?;
        return Ok(());
    }
    if profiles.is_empty() {
        writeln!(
            out,
            "no column mapping saved; `import` proposes one for a file with its own column names"
        )?;
    }
    for p in &profiles {
        writeln!(out, "{} ({} file, dates {})", p.name, p.kind, p.date_order)?;
        for (from, to) in &p.columns {
            writeln!(out, "  {from} → {to}")?;
        }
    }
    Ok(())
}

pub fn run_export(
    db: Option<&Path>,
    args: &ExportArgs,
    out: &mut dyn Write,
) -> Result<(), Failure> {
    let shop = open_shop(db)?;
    let kind = FileKind::from(args.kind);
    let system = args.units.map(UnitSystem::from);
    match &args.out {
        None => {
            shop.export(kind, out, system)?;
        }
        Some(path) => {
            let n = shop.export_to_file(kind, path, system, args.force)?;
            writeln!(out, "{n} {kind} rows written to {}", path.display())?;
        }
    }
    Ok(())
}

pub fn run_backup(
    db: Option<&Path>,
    args: &BackupArgs,
    out: &mut dyn Write,
) -> Result<(), Failure> {
    let shop = open_shop(db)?;
    shop.backup(&args.out)?;
    writeln!(
        out,
        "backup of {} written to {}",
        shop.path().display(),
        args.out.display()
    )?;
    Ok(())
}

pub fn run_stored_status(
    db: Option<&Path>,
    args: &StoredStatusArgs,
    out: &mut dyn Write,
) -> Result<(), Failure> {
    let shop = open_shop(db)?;
    let status = shop.stored_status()?;
    if args.json {
        let text =
            serde_json::to_string_pretty(&status).map_err(|e| Failure::failed(e.to_string()))?;
        writeln!(out, "{text}")?;
        return Ok(());
    }
    print_status(&status, shop.zone(), out)
}

fn print_status(
    s: &StoredStatus,
    zone: crate::app::local_time::Zone,
    out: &mut dyn Write,
) -> Result<(), Failure> {
    let us = s.unit_system == UnitSystem::Us;
    let (t_unit, p_unit) = if us { ("°F", "psi") } else { ("°C", "bar") };
    writeln!(
        out,
        "{} — {} unit(s); latest stored readings (times in {})",
        s.shop_name,
        s.units.len(),
        zone.name()
    )?;
    writeln!(
        out,
        "{:<10} {:<8} {:>6}  {:<17} {:>7} {:>7} {:>8}  {:>7}  {:<17} {:<10} {:>7}",
        "unit",
        "machine",
        "checks",
        "last check",
        format!("oil {t_unit}"),
        p_unit,
        "stroke s",
        "samples",
        "last sample",
        "ISO 4406",
        "water"
    )?;
    for u in &s.units {
        let c = u.latest_check.as_ref();
        let smp = u.latest_sample.as_ref();
        let opt = |v: Option<f64>| {
            v.map(|x| format!("{}", (x * 10.0).round() / 10.0))
                .unwrap_or_else(|| "-".into())
        };
        let when = |t: Option<chrono::DateTime<chrono::Utc>>| {
            t.map(|t| zone.show(t)).unwrap_or_else(|| "-".into())
        };
        let shown = s.shown(u);
        writeln!(
            out,
            "{:<10} {:<8} {:>6}  {:<17} {:>7} {:>7} {:>8}  {:>7}  {:<17} {:<10} {:>7}{}",
            u.unit_tag,
            u.machine_tag,
            u.checks,
            when(c.map(|c| c.taken_at)),
            opt(shown.temp),
            opt(shown.pressure),
            c.and_then(|c| c.stroke_time)
                .map(|t| format!("{}", t.0))
                .unwrap_or_else(|| "-".into()),
            u.samples,
            when(smp.map(|s| s.sampled_at)),
            shown.iso4406.unwrap_or_else(|| "-".into()),
            smp.and_then(|s| s.water_ppm)
                .map(|w| format!("{w} ppm"))
                .unwrap_or_else(|| "-".into()),
            if u.archived { "  (archived)" } else { "" }
        )?;
    }
    Ok(())
}
