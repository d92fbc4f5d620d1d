//! The printable route sheet: the walk-round on paper for a technician without a PC on the
//! floor — the units in route order, each with the walk-round form's fields in the form's
//! order, last time's value and the limits in the shop's units beside a blank cell. It fills
//! the sheet from the same form and limits the app shows and writes the file; it must not draw
//! (that is `report::route_sheet`'s) nor print.

use std::io::Write;
use std::path::{Path, PathBuf};

use chrono::{DateTime, Utc};

use super::entry::{check_form, route};
use super::report::paper_for;
use super::shop::Shop;
use super::work::{limits, LimitsView};
use super::AppError;
use crate::health::plan::{SAFETY_CAUTIONS, WALK_ROUND_CAUTION};
use crate::outfile::{Options, OutFile};
use crate::report::route_sheet::{render_route_sheet, RouteSheetDoc, SheetRow, SheetStop};
use crate::report::Paper;
use crate::units::UnitSystem;

/// What was written.
#[derive(Clone, Debug, PartialEq, serde::Serialize)]
pub struct RouteSheetSummary {
    pub path: PathBuf,
    pub pages: usize,
    pub units: usize,
}

/// Which limit stands beside a field of the check form, and how it is read there.
fn limit_key(field: &str) -> Option<(&'static str, &'static str)> {
    match field {
        "reservoir_temp" => Some(("reservoir_temp_c", "")),
        "stroke_time" => Some(("lost_flow_pct", "flow lost against baseline ")),
        "case_drain" => Some(("case_drain_rise_pct", "rise over baseline ")),
        _ => None,
    }
}

fn limit_text(field: &str, view: &LimitsView) -> String {
    let Some((key, lead)) = limit_key(field) else {
        return String::new();
    };
    let Some(row) = view.rows.iter().find(|r| r.key == key) else {
        return String::new();
    };
    let cmp = row.compare.clone().unwrap_or_default();
    let unit = if row.unit == "%" {
        "%".to_string()
    } else {
        format!(" {}", row.unit)
    };
    let one = |word: &str, v: Option<f64>| {
        v.map(|v| {
            format!(
                "{word} {cmp} {}{unit}",
                crate::app::figures::significant(v, 4, 2)
            )
        })
    };
    let parts: Vec<String> = [one("watch", row.watch), one("act", row.act)]
        .into_iter()
        .flatten()
        .collect();
    if parts.is_empty() {
        String::new()
    } else {
        format!("{lead}{}", parts.join(", "))
    }
}

/// The route sheet of the shop as it stands at `now`, on `paper` (by default the paper of the
/// shop's units: letter for US customary, A4 for metric).
pub fn route_sheet_doc(
    shop: &Shop,
    paper: Option<Paper>,
    now: DateTime<Utc>,
) -> Result<RouteSheetDoc, AppError> {
    let settings = shop.store().settings()?;
    let system = settings.unit_system;
    let zone = shop.zone();
    let mut stops = Vec::new();
    for (i, stop) in route(shop)?.iter().enumerate() {
        let form = check_form(shop, stop.unit_id, now)?;
        let view = limits(shop, Some(&stop.tag))?;
        let rows = form
            .fields
            .iter()
            .map(|f| SheetRow {
                field: if f.unit.is_empty() {
                    f.label.clone()
                } else {
                    format!("{} ({})", f.label, f.unit)
                },
                last: f.hint.clone(),
                limits: limit_text(&f.key, &view),
            })
            .collect();
        stops.push(SheetStop {
            heading: format!("{}. {} · {}", i + 1, form.tag, form.machine),
            detail: form.detail.clone(),
            rows,
        });
    }
    let units = match system {
        UnitSystem::Us => "US customary units (°F, psi, GPM)",
        UnitSystem::Metric => "metric units (°C, bar, L/min)",
    };
    Ok(RouteSheetDoc {
        shop_name: settings.shop_name,
        title: "Walk-round route sheet".into(),
        written: zone.show(now),
        written_at: now,
        paper: paper.unwrap_or(paper_for(system)),
        intro: vec![
            format!(
                "Write each reading in the Today column, in {units}. The fields follow the \
                 walk-round form, so typing the sheet in afterwards is one pass. Last time's value \
                 and the limits are beside each blank; a reading beyond a limit is judged when it \
                 is typed in."
            ),
            WALK_ROUND_CAUTION.to_string(),
        ],
        stops,
        cautions: SAFETY_CAUTIONS[..SAFETY_CAUTIONS.len() - 1]
            .iter()
            .map(|s| s.to_string())
            .collect(),
        guidance: SAFETY_CAUTIONS[SAFETY_CAUTIONS.len() - 1].to_string(),
    })
}

/// Writes the route sheet to `out` (an existing file only with `replace`).
pub fn write_route_sheet(
    shop: &Shop,
    out: &Path,
    paper: Option<Paper>,
    replace: bool,
) -> Result<RouteSheetSummary, AppError> {
    if out.as_os_str().is_empty() || out.is_dir() {
        return Err(AppError::BadInput(format!(
            "`{}`: give a file name such as route.pdf",
            out.display()
        )));
    }
    let mut file = OutFile::create(
        out,
        Options {
            replace,
            devices_in_place: true,
            can_force: true,
        },
    )?;
    let doc = route_sheet_doc(shop, paper, Utc::now())?;
    let rendered = render_route_sheet(&doc).map_err(|e| AppError::Failed(e.to_string()))?;
    file.write_all(&rendered.pdf)
        .map_err(|e| AppError::Failed(format!("cannot write {}: {e}", out.display())))?;
    file.commit()?;
    Ok(RouteSheetSummary {
        path: out.to_path_buf(),
        pages: rendered.pages,
        units: doc.stops.len(),
    })
}
