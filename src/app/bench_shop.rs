//! Making the large generated shop the benchmarks run on (`sumpbook bench-shop`, hidden).
//!
//! Writes the register and the readings of `exchange::large_shop` into an empty shop, or the
//! register into the shop and the readings into CSV files for the import benchmark. No SQL,
//! no printing, no health here.

use std::fs::File;
use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};

use serde::Serialize;

use super::shop::Shop;
use super::AppError;
use crate::exchange::large_shop::{self, Counts, LargeShopError, Spec};

/// What `bench-shop` wrote.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct BenchShopOutcome {
    pub db: PathBuf,
    /// Written into the shop.
    pub stored: Counts,
    /// Written as CSV (when a directory was given): the files and their row counts.
    pub checks_csv: Option<PathBuf>,
    pub samples_csv: Option<PathBuf>,
    pub csv: Option<Counts>,
}

fn failed(e: LargeShopError) -> AppError {
    match e {
        LargeShopError::Spec(msg) => AppError::BadInput(msg),
        LargeShopError::Store(s) => AppError::Store(s),
        other => AppError::Failed(other.to_string()),
    }
}

/// Fills `shop` (which must have no units) with a generated shop of `spec`. With `csv_dir`, only
/// the register goes into the shop and the checks and samples go to `csv_dir/checks.csv` and
/// `csv_dir/samples.csv` instead.
pub fn make_bench_shop(
    shop: &mut Shop,
    spec: Spec,
    csv_dir: Option<&Path>,
) -> Result<BenchShopOutcome, AppError> {
    spec.validate().map_err(AppError::BadInput)?;
    let n = shop.store().unit_count()?;
    if n > 0 {
        return Err(AppError::BadInput(format!(
            "{}: the shop already has {n} unit(s); a benchmark shop is only written into an empty shop",
            shop.path().display()
        )));
    }
    let db = shop.path().to_path_buf();
    let Some(dir) = csv_dir else {
        let stored = large_shop::load(shop.store_mut(), &spec, false).map_err(failed)?;
        return Ok(BenchShopOutcome {
            db,
            stored,
            checks_csv: None,
            samples_csv: None,
            csv: None,
        });
    };
    std::fs::create_dir_all(dir)
        .map_err(|e| AppError::Failed(format!("{}: {e}", dir.display())))?;
    let checks_path = dir.join("checks.csv");
    let samples_path = dir.join("samples.csv");
    let create = |p: &Path| -> Result<BufWriter<File>, AppError> {
        let f = File::create(p).map_err(|e| AppError::BadInput(format!("{}: {e}", p.display())))?;
        Ok(BufWriter::with_capacity(1 << 16, f))
    };
    let mut cw = create(&checks_path)?;
    let csv = if spec.samples > 0 {
        let mut sw = create(&samples_path)?;
        let csv = large_shop::write_csv(&spec, &mut cw, &mut sw).map_err(failed)?;
        sw.flush()
            .map_err(|e| AppError::Failed(format!("{}: {e}", samples_path.display())))?;
        csv
    } else {
        large_shop::write_csv(&spec, &mut cw, &mut std::io::sink()).map_err(failed)?
    };
    cw.flush()
        .map_err(|e| AppError::Failed(format!("{}: {e}", checks_path.display())))?;
    let stored = large_shop::load(shop.store_mut(), &spec, true).map_err(failed)?;
    Ok(BenchShopOutcome {
        db,
        stored,
        checks_csv: Some(checks_path),
        samples_csv: (spec.samples > 0).then_some(samples_path),
        csv: Some(csv),
    })
}
