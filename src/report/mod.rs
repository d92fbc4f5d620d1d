//! The condition report as a PDF: a fleet page (or pages) first, then one page per unit with
//! vector charts, flags, work due and sign-off lines, every page framed with page numbers and
//! the safety cautions.
//!
//! This module only lays out and draws. It takes a [`ReportDoc`] that the application layer
//! has already filled from the health engine's results, with every figure formatted the way
//! the rest of the program shows it; it must not read the store, evaluate health rules,
//! convert units or touch files. It hands back the PDF bytes.

pub mod charts;
mod fleet_page;
pub mod layout;
pub mod route_sheet;
mod subset;
mod unit_page;

use chrono::{DateTime, NaiveDate, Utc};
use printpdf::{PdfDocument, PdfPage, PdfSaveOptions, Pt};

use layout::{Fonts, Frame, Layout};

/// Paper size of the report.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
pub enum Paper {
    #[default]
    A4,
    Letter,
}

impl Paper {
    pub fn as_str(self) -> &'static str {
        match self {
            Paper::A4 => "a4",
            Paper::Letter => "letter",
        }
    }
}

impl std::str::FromStr for Paper {
    type Err = String;
    fn from_str(s: &str) -> Result<Self, String> {
        match s.trim().to_ascii_lowercase().as_str() {
            "a4" => Ok(Paper::A4),
            "letter" => Ok(Paper::Letter),
            other => Err(format!("`{other}` is not a paper size; use a4 or letter")),
        }
    }
}

/// The mark printed beside a state: a distinct shape per state, so a black-and-white print
/// still tells them apart (the state is always printed in words beside it, too).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Mark {
    /// Circle.
    Steady,
    /// Triangle.
    Watch,
    /// Diamond.
    Act,
    /// Open square: not judged yet (readings or a baseline missing), or no level at all.
    None,
}

/// A state as printed: the mark and the word(s) the rest of the program uses for it.
#[derive(Clone, Debug, PartialEq)]
pub struct StateText {
    pub mark: Mark,
    pub word: String,
}

/// One row of the fleet table.
#[derive(Clone, Debug, PartialEq)]
pub struct FleetRow {
    pub tag: String,
    /// Machine name and kind.
    pub name: String,
    pub state: StateText,
    /// The figures that explain the state, as the status command gives them.
    pub figures: String,
    /// Trend direction in words (and arrow).
    pub trend: String,
    pub oil_life: String,
    pub next_due: String,
}

/// A flag: what drifted, by how much, since when, the usual next step, and who has seen it.
#[derive(Clone, Debug, PartialEq)]
pub struct Finding {
    pub unit_tag: String,
    pub state: StateText,
    pub what: String,
    pub amount: String,
    pub since: String,
    pub next_step: String,
    /// "seen by … on …: comment", when acknowledged.
    pub acknowledged: Option<String>,
}

/// One line of due work.
#[derive(Clone, Debug, PartialEq)]
pub struct WorkItem {
    pub unit_tag: String,
    pub task: String,
    pub due: String,
    /// "overdue 5 days", "in 12 days", with the reason when condition pulled it forward.
    pub status: String,
    /// The state the health engine gives overdue work; `None` for work not yet due.
    pub mark: Option<Mark>,
}

/// A row of a unit's indicator table.
#[derive(Clone, Debug, PartialEq)]
pub struct IndicatorRow {
    pub name: String,
    pub state: StateText,
    pub latest: String,
    pub baseline: String,
    pub limits: String,
    /// Change over the report period.
    pub change: String,
}

/// Work done on a unit in the report's period (a fluid change, filter change, top-up, ...).
#[derive(Clone, Debug, PartialEq)]
pub struct WorkDone {
    /// When it was done, in the shop's time.
    pub when: String,
    /// What was done, in words ("fluid change").
    pub what: String,
    /// The fluid and volume put in, the hour meter, the filter part and the work order, as
    /// recorded ("180 L Stock HM 46 · hour meter 45890 h · filter part RF-10-BN").
    pub recorded: String,
    pub by: String,
    pub note: String,
}

/// A correction, deletion or restore of one of a unit's readings, made in the report's period.
#[derive(Clone, Debug, PartialEq)]
pub struct Correction {
    /// When it was made, in the shop's time.
    pub when: String,
    /// The reading and what was done to it, e.g. "check of 2026-12-01 08:00 EST (changed)".
    pub record: String,
    /// Each field old → new (a deletion or restore: what the reading held).
    pub changes: String,
    pub by: String,
    pub why: String,
}

/// Everything on one unit's page.
#[derive(Clone, Debug, PartialEq)]
pub struct UnitSection {
    pub tag: String,
    /// Machine name (may be long; it wraps).
    pub name: String,
    pub state: StateText,
    /// One line that says why the unit is in its state.
    pub summary: String,
    /// Identity of unit and machine: label, value.
    pub identity: Vec<(String, String)>,
    /// Fluid in service and era: label, value.
    pub fluid: Vec<(String, String)>,
    /// The baseline in force: its values and where they came from.
    pub baseline: String,
    pub indicators: Vec<IndicatorRow>,
    pub charts: Vec<charts::Chart>,
    pub flags: Vec<Finding>,
    pub work: Vec<WorkItem>,
    /// Lines under the summary: what cannot be judged yet and when it will be, and the
    /// readings the screening questioned (confirmed or not).
    pub remarks: Vec<String>,
    /// The corrections of the unit's readings made in the period, oldest first.
    pub corrections: Vec<Correction>,
    /// The work done on the unit in the period, oldest first.
    pub work_done: Vec<WorkDone>,
}

/// The whole report, every figure already formatted for print.
#[derive(Clone, Debug, PartialEq)]
pub struct ReportDoc {
    pub shop_name: String,
    pub title: String,
    pub period: String,
    pub written: String,
    /// When it was written, for the PDF's own creation date.
    pub written_at: DateTime<Utc>,
    pub prepared_by: String,
    pub paper: Paper,
    /// Count of units by state, in words (e.g. "7 units: 4 steady, 2 watch, 1 act").
    pub fleet_summary: String,
    pub fleet: Vec<FleetRow>,
    pub exceptions: Vec<Finding>,
    /// Overdue and due within the look-ahead, soonest first.
    pub work: Vec<WorkItem>,
    /// Heading of the work list, e.g. "Work overdue and due in the next 4 weeks".
    pub work_heading: String,
    /// Notes printed under the fleet table (units of measure, what "trend" means).
    pub notes: Vec<String>,
    /// Readings questioned and not confirmed, one line each (unit, time, field, reason).
    pub questioned: Vec<String>,
    pub units: Vec<UnitSection>,
    /// The short safety cautions printed at the foot of every page.
    pub cautions: Vec<String>,
    /// The line that limits are general guidance, printed on every page.
    pub guidance: String,
}

/// Errors while laying out or writing the PDF.
#[derive(Debug, thiserror::Error)]
pub enum ReportError {
    #[error("the report font cannot be read: {0}")]
    Font(String),
    #[error("the report was cancelled")]
    Cancelled,
}

/// A finished report.
pub struct Rendered {
    pub pdf: Vec<u8>,
    pub pages: usize,
    /// Pages of the fleet part (before the first unit page).
    pub fleet_pages: usize,
}

/// Lays out and writes the report. `progress(done, total)` is called after each part (fleet,
/// each unit, writing); returning `false` cancels.
pub fn render(
    doc: &ReportDoc,
    progress: &mut dyn FnMut(usize, usize) -> bool,
) -> Result<Rendered, ReportError> {
    let total = doc.units.len() + 2;
    let mut fonts = Fonts::load()?;
    let pdf = new_pdf(
        &mut fonts,
        &format!("{} – {}", doc.title, doc.shop_name),
        &doc.prepared_by,
        &format!("{} {}", doc.title, doc.period),
        doc.written_at,
    );
    let (pages, fleet_pages) = lay_out(&fonts, doc, &mut |done| progress(done, total))?;
    let n = pages.len();
    let bytes = finish_pdf(pdf, pages);
    if !progress(total, total) {
        return Err(ReportError::Cancelled);
    }
    Ok(Rendered {
        pdf: bytes,
        pages: n,
        fleet_pages,
    })
}

/// A new PDF document with its metadata and both fonts registered (the layout's text refers
/// to them, so this comes before laying out).
pub(crate) fn new_pdf(
    fonts: &mut Fonts,
    title: &str,
    author: &str,
    subject: &str,
    written_at: DateTime<Utc>,
) -> PdfDocument {
    let mut pdf = PdfDocument::new(title);
    pdf.metadata.info.author = author.to_string();
    pdf.metadata.info.creator = "sumpbook".into();
    pdf.metadata.info.subject = subject.to_string();
    if let Ok(t) = printpdf::DateTime::from_unix_timestamp(written_at.timestamp()) {
        pdf.metadata.info.creation_date = t;
        pdf.metadata.info.modification_date = t;
        pdf.metadata.info.metadata_date = t;
    }
    fonts.register(&mut pdf);
    pdf
}

/// The laid-out pages written into `pdf`, the fonts cut down to the glyphs drawn.
pub(crate) fn finish_pdf(mut pdf: PdfDocument, pages: Vec<layout::Page>) -> Vec<u8> {
    let pdf_pages: Vec<PdfPage> = pages
        .into_iter()
        .map(|p| PdfPage::new(Pt(p.width).into(), Pt(p.height).into(), p.ops))
        .collect();
    pdf.with_pages(pdf_pages);
    // Only the glyphs drawn travel with the document (both faces whole are about 0.85 MB).
    subset::subset_document_fonts(&mut pdf);
    let mut warnings = Vec::new();
    pdf.save(&PdfSaveOptions::default(), &mut warnings)
}

/// The pages of the report, frame included, and how many belong to the fleet part.
pub fn lay_out(
    fonts: &Fonts,
    doc: &ReportDoc,
    step: &mut dyn FnMut(usize) -> bool,
) -> Result<(Vec<layout::Page>, usize), ReportError> {
    let frame = Frame {
        shop_name: doc.shop_name.clone(),
        report_title: doc.title.clone(),
        period: format!("Period {}", doc.period),
        written: format!("Written {} · prepared by {}", doc.written, doc.prepared_by),
        cautions: doc.cautions.clone(),
        guidance: doc.guidance.clone(),
    };
    let mut layout = Layout::new(fonts, doc.paper, frame);
    fleet_page::draw(&mut layout, doc);
    let fleet_pages = layout.page_count();
    if !step(1) {
        return Err(ReportError::Cancelled);
    }
    for (i, unit) in doc.units.iter().enumerate() {
        unit_page::draw(&mut layout, unit);
        if !step(i + 2) {
            return Err(ReportError::Cancelled);
        }
    }
    Ok((layout.finish(), fleet_pages))
}

/// Days from `from` to `at`, as a fraction (charts place points by it).
pub fn days_since(from: NaiveDate, at: DateTime<Utc>) -> f64 {
    let start = from.and_hms_opt(0, 0, 0).map(|d| d.and_utc()).unwrap_or(at);
    (at - start).num_seconds() as f64 / 86_400.0
}
