//! `sumpbook bench-shop` (hidden): make the large generated shop the benchmarks in `benches/`
//! run on. Parses the sizes, calls `app::bench_shop` and prints what was written.

use std::io::Write;
use std::path::{Path, PathBuf};

use clap::Args;

use super::Failure;
use crate::app::bench_shop::make_bench_shop;
use crate::app::shop::Shop;
use crate::app::vocab::LargeShopSpec as Spec;

#[derive(Args, Debug, Clone, PartialEq)]
pub struct BenchShopArgs {
    /// Number of hydraulic units (two per machine).
    #[arg(long, default_value_t = 1000)]
    pub units: usize,
    /// Weekly checks per unit.
    #[arg(long, default_value_t = 520)]
    pub checks: usize,
    /// Fluid samples per unit.
    #[arg(long, default_value_t = 52)]
    pub samples: usize,
    /// Write only the register into the shop, and the checks and samples as DIR/checks.csv
    /// and DIR/samples.csv (for the import benchmark).
    #[arg(long, value_name = "DIR")]
    pub csv_dir: Option<PathBuf>,
    /// Print JSON.
    #[arg(long)]
    pub json: bool,
}

pub fn run(db: Option<&Path>, args: &BenchShopArgs, out: &mut dyn Write) -> Result<(), Failure> {
    let path = db.ok_or_else(|| Failure::bad_input("bench-shop needs --db FILE (a new file)"))?;
    let mut shop = Shop::create(path)?;
    let spec = Spec {
        units: args.units,
        checks: args.checks,
        samples: args.samples,
    };
    let o = make_bench_shop(&mut shop, spec, args.csv_dir.as_deref())?;
    if args.json {
        let text = serde_json::to_string_pretty(&o).map_err(|e| Failure::failed(e.to_string()))?;
        writeln!(out, "{text}")?;
        return Ok(());
    }
    let s = o.stored;
    writeln!(
        out,
        "{}: {} machines, {} units, {} fluids, {} checks, {} samples, {} events",
        o.db.display(),
        s.machines,
        s.units,
        s.fluids,
        s.checks,
        s.samples,
        s.events
    )?;
    if let (Some(c), Some(p)) = (o.csv, &o.checks_csv) {
        writeln!(out, "{}: {} checks", p.display(), c.checks)?;
        if let Some(p) = &o.samples_csv {
            writeln!(out, "{}: {} samples", p.display(), c.samples)?;
        }
    }
    Ok(())
}
