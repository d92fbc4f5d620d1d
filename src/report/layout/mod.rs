//! The page engine of the PDF report: paper sizes, the embedded fonts, exact text measuring and
//! wrapping, drawing primitives, the state marks, and a flowing layout that breaks onto
//! continuation pages, then stamps the frame (header, cautions, page numbers) on every page.
//!
//! Coordinates here are points measured from the page's top-left corner (the way a page is
//! read); they are turned into PDF's bottom-left origin only when an operation is emitted.
//! Text widths come from the embedded font's own advance widths, rounded exactly as printpdf
//! writes them into the PDF's `/W` array, so a wrapped line never runs past its box.
//! This module knows nothing of units, health or the store.

mod flow;
mod fonts;
mod page;
mod tables;
#[cfg(test)]
mod tests;

pub use flow::*;
pub use fonts::*;
pub use page::*;

use super::{Mark, Paper};

/// Points per millimetre.
pub const PT_PER_MM: f32 = 72.0 / 25.4;

impl Paper {
    /// Page width and height in points.
    pub fn size_pt(self) -> (f32, f32) {
        match self {
            Paper::A4 => (210.0 * PT_PER_MM, 297.0 * PT_PER_MM),
            // 8.5 in × 11 in.
            Paper::Letter => (612.0, 792.0),
        }
    }
}

/// A table cell's mark and its wrapped lines, each with its face.
type WrappedCell = (Option<Mark>, Vec<(Face, String)>);

/// Padding inside table cells.
pub const CELL_PAD: f32 = 1.3;
