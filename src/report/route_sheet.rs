//! The printable route sheet: for a technician without a PC on the floor, the units in route
//! order, each with the walk-round form's fields in the form's order, last time's value and the
//! limits beside a blank cell to write in, so that typing it in afterwards is one pass.
//! Draws what the application layer put in the [`RouteSheetDoc`]; decides nothing.

use chrono::{DateTime, Utc};

use super::layout::{size, Cell, Face, Frame, Layout, DARK};
use super::{Paper, Rendered, ReportError};

/// One field of a unit's check, as printed.
#[derive(Clone, Debug, PartialEq)]
pub struct SheetRow {
    /// The field's label with the unit to write in (`Reservoir temperature (°F)`).
    pub field: String,
    /// Last time's value and how long ago, or that there is none.
    pub last: String,
    /// The limits that apply, in the shop's units; empty when none.
    pub limits: String,
}

/// One unit of the round.
#[derive(Clone, Debug, PartialEq)]
pub struct SheetStop {
    /// `3. PR-01-M · P-01 Main press`
    pub heading: String,
    /// What the technician needs at the unit (the timed stroke, ...).
    pub detail: String,
    pub rows: Vec<SheetRow>,
}

/// The whole sheet, every figure already formatted for print.
#[derive(Clone, Debug, PartialEq)]
pub struct RouteSheetDoc {
    pub shop_name: String,
    pub title: String,
    pub written: String,
    pub written_at: DateTime<Utc>,
    pub paper: Paper,
    /// Lines under the title (how to fill it in, the units of measure).
    pub intro: Vec<String>,
    pub stops: Vec<SheetStop>,
    pub cautions: Vec<String>,
    pub guidance: String,
}

const HEADER: [&str; 4] = ["Field", "Last time", "Limits", "Today"];
const WIDTHS: [f32; 4] = [2.2, 1.8, 2.2, 1.8];

/// Lays out and writes the route sheet.
pub fn render_route_sheet(doc: &RouteSheetDoc) -> Result<Rendered, ReportError> {
    let mut fonts = super::layout::Fonts::load()?;
    let pdf = super::new_pdf(
        &mut fonts,
        &format!("{} – {}", doc.title, doc.shop_name),
        "",
        &doc.title,
        doc.written_at,
    );
    let frame = Frame {
        shop_name: doc.shop_name.clone(),
        report_title: doc.title.clone(),
        period: String::new(),
        written: format!("Printed {}", doc.written),
        cautions: doc.cautions.clone(),
        guidance: doc.guidance.clone(),
    };
    let mut l = Layout::new(&fonts, doc.paper, frame);
    l.start_section(&doc.title);
    for line in &doc.intro {
        l.paragraph(Face::Regular, size::SMALL, DARK, 0.0, line);
    }
    l.gap(4.0);
    l.sign_off(
        &[&[("Technician", 0.5), ("Date and start time", 0.5)]],
        size::BODY,
    );
    l.gap(4.0);
    let header = HEADER.map(Cell::bold);
    for stop in &doc.stops {
        let rows: Vec<Vec<Cell>> = stop
            .rows
            .iter()
            .map(|r| {
                vec![
                    Cell::bold(r.field.clone()),
                    Cell::plain(r.last.clone()),
                    Cell::plain(r.limits.clone()),
                    Cell::plain(""),
                ]
            })
            .collect();
        // A unit is kept on one page: its heading moves with its table.
        let keep = l.table_height(&WIDTHS, &header, &rows, size::BODY)
            + l.paragraph_height(Face::Regular, size::SMALL, 0.0, &stop.detail);
        l.heading(&stop.heading, keep);
        l.paragraph(Face::Regular, size::SMALL, DARK, 0.0, &stop.detail);
        l.table(&WIDTHS, &header, &rows, size::BODY);
        l.gap(6.0);
    }
    let pages = l.finish();
    let n = pages.len();
    let pdf = super::finish_pdf(pdf, pages);
    Ok(Rendered {
        pdf,
        pages: n,
        fleet_pages: 0,
    })
}
