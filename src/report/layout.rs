//! The page engine of the PDF report: paper sizes, the embedded fonts, exact text measuring and
//! wrapping, drawing primitives, the state marks, and a flowing layout that breaks onto
//! continuation pages, then stamps the frame (header, cautions, page numbers) on every page.
//!
//! Coordinates here are points measured from the page's top-left corner (the way a page is
//! read); they are turned into PDF's bottom-left origin only when an operation is emitted.
//! Text widths come from the embedded font's own advance widths, rounded exactly as printpdf
//! writes them into the PDF's `/W` array, so a wrapped line never runs past its box.
//! This module knows nothing of units, health or the store.

use printpdf::{
    Color, FontId, Greyscale, Line, LineDashPattern, LinePoint, Op, PaintMode, ParsedFont,
    PdfFontHandle, Point, Polygon, PolygonRing, Pt, Rect, Rgb, TextItem, WindingOrder,
};

use super::{Mark, Paper, ReportError};

/// Points per millimetre.
pub const PT_PER_MM: f32 = 72.0 / 25.4;

/// DejaVu Sans (Bitstream Vera licence, see assets/fonts/LICENSE-DejaVu.txt): it carries °, µ,
/// ≥, ±, ², accented Latin names, and is embedded so the report looks the same everywhere.
const REGULAR_TTF: &[u8] = include_bytes!("../../assets/fonts/DejaVuSans.ttf");
const BOLD_TTF: &[u8] = include_bytes!("../../assets/fonts/DejaVuSans-Bold.ttf");

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

/// Which of the two embedded faces.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Face {
    Regular,
    Bold,
}

/// The two embedded faces, parsed once; measures text exactly as it will be drawn.
pub struct Fonts {
    regular: ParsedFont,
    bold: ParsedFont,
    regular_id: Option<FontId>,
    bold_id: Option<FontId>,
}

impl Fonts {
    /// Parses the fonts built into the program.
    pub fn load() -> Result<Fonts, ReportError> {
        let mut warnings = Vec::new();
        let regular = ParsedFont::from_bytes(REGULAR_TTF, 0, &mut warnings)
            .ok_or_else(|| ReportError::Font(format!("DejaVuSans.ttf: {warnings:?}")))?;
        let bold = ParsedFont::from_bytes(BOLD_TTF, 0, &mut warnings)
            .ok_or_else(|| ReportError::Font(format!("DejaVuSans-Bold.ttf: {warnings:?}")))?;
        Ok(Fonts {
            regular,
            bold,
            regular_id: None,
            bold_id: None,
        })
    }

    /// Registers both faces with a document; text ops refer to the ids handed out here.
    pub fn register(&mut self, doc: &mut printpdf::PdfDocument) {
        self.regular_id = Some(doc.add_font(&self.regular));
        self.bold_id = Some(doc.add_font(&self.bold));
    }

    fn font(&self, face: Face) -> &ParsedFont {
        match face {
            Face::Regular => &self.regular,
            Face::Bold => &self.bold,
        }
    }

    fn handle(&self, face: Face) -> PdfFontHandle {
        let id = match face {
            Face::Regular => self.regular_id.clone(),
            Face::Bold => self.bold_id.clone(),
        };
        // Unregistered fonts only happen in layout-only tests, which never save the ops.
        PdfFontHandle::External(id.unwrap_or_else(|| FontId("unregistered".into())))
    }

    /// Advance of one character in thousandths of an em, truncated to an integer the same way
    /// printpdf writes the `/W` widths a viewer positions glyphs by.
    fn advance_milli_em(&self, face: Face, c: char) -> i64 {
        let font = self.font(face);
        let gid = font.lookup_glyph_index(c as u32).unwrap_or(0);
        let upm = f32::from(font.pdf_font_metrics.units_per_em.max(1));
        font.get_glyph_width(gid)
            .map(|w| (f32::from(w) * 1000.0 / upm) as i64)
            .unwrap_or(0)
    }

    /// Width of `text` set at `size` points, in points.
    pub fn width(&self, face: Face, size: f32, text: &str) -> f32 {
        let milli: i64 = text.chars().map(|c| self.advance_milli_em(face, c)).sum();
        milli as f32 / 1000.0 * size
    }

    /// Characters of `text` that the face has no glyph for (they would print as boxes).
    pub fn missing_glyphs(&self, face: Face, text: &str) -> Vec<char> {
        let font = self.font(face);
        let mut missing: Vec<char> = text
            .chars()
            .filter(|c| !c.is_control() && font.lookup_glyph_index(*c as u32).unwrap_or(0) == 0)
            .collect();
        missing.dedup();
        missing
    }

    /// Height above the baseline of the tallest glyphs, as a fraction of the size.
    pub fn ascent(&self, face: Face) -> f32 {
        let font = self.font(face);
        f32::from(font.font_metrics.ascent) / f32::from(font.pdf_font_metrics.units_per_em.max(1))
    }

    /// Breaks `text` into lines no wider than `max_width` points. Lines break at spaces (and
    /// after `/` or `-` inside long words); a word wider than a whole line is split between
    /// characters, so nothing is ever cut off. Explicit newlines start new lines.
    pub fn wrap(&self, face: Face, size: f32, text: &str, max_width: f32) -> Vec<String> {
        let mut lines = Vec::new();
        for para in text.split('\n') {
            let mut line = String::new();
            for word in glued_words(para) {
                let word = word.as_str();
                let candidate = if line.is_empty() {
                    word.to_string()
                } else {
                    format!("{line} {word}")
                };
                if self.width(face, size, &candidate) <= max_width {
                    line = candidate;
                    continue;
                }
                if !line.is_empty() {
                    lines.push(std::mem::take(&mut line));
                }
                // The word alone may still not fit: split it into pieces that do.
                let mut rest = word.to_string();
                while self.width(face, size, &rest) > max_width {
                    let cut = self.split_point(face, size, &rest, max_width);
                    let tail = rest.split_off(cut);
                    lines.push(rest);
                    rest = tail;
                }
                line = rest;
            }
            lines.push(line);
        }
        while lines.len() > 1 && lines.last().is_some_and(|l| l.is_empty()) {
            lines.pop();
        }
        lines
    }

    /// Byte index at which to split an over-long word: after the last `/` or `-` that still
    /// fits, else after as many characters as fit (at least one).
    fn split_point(&self, face: Face, size: f32, word: &str, max_width: f32) -> usize {
        let mut fit_end = 0;
        let mut soft_break = None;
        let mut width_milli = 0i64;
        for (i, c) in word.char_indices() {
            width_milli += self.advance_milli_em(face, c);
            if width_milli as f32 / 1000.0 * size > max_width {
                break;
            }
            fit_end = i + c.len_utf8();
            if (c == '/' || c == '-') && fit_end < word.len() {
                soft_break = Some(fit_end);
            }
        }
        if fit_end == 0 {
            // Not even one character fits: take one anyway rather than loop forever.
            return word.chars().next().map_or(word.len(), char::len_utf8);
        }
        soft_break.unwrap_or(fit_end)
    }

    /// Shortens `text` with an ellipsis until it fits `max_width` (used only for labels inside
    /// charts, where the full text is also printed elsewhere).
    pub fn fit(&self, face: Face, size: f32, text: &str, max_width: f32) -> String {
        if self.width(face, size, text) <= max_width {
            return text.to_string();
        }
        let mut s: String = text.to_string();
        while !s.is_empty() && self.width(face, size, &format!("{s}…")) > max_width {
            s.pop();
        }
        format!("{s}…")
    }
}

/// The words of `para`, with the spaces that must not break glued in: between a number and
/// a short unit after it (`12.4 %`, `48.0 °C`, `89 L/min`, `15 days`) and after a lone
/// comparison sign (`≥ 8 %`), so a figure is never split over two lines.
fn glued_words(para: &str) -> Vec<String> {
    let mut out: Vec<String> = Vec::new();
    for token in para.split([' ', '\t']).filter(|t| !t.is_empty()) {
        let glue = out.last().is_some_and(|prev: &String| {
            let last = prev.rsplit(' ').next().unwrap_or("");
            let is_sign = matches!(
                last,
                "≥" | "≤" | ">" | "<" | "±" | "+" | "−" | "-" | "=" | "≈" | "~" | "×"
            );
            let after_number = is_number(last)
                && !is_number(token)
                && token.trim_end_matches([',', ';', ')', '.']).chars().count() <= 5;
            is_sign || after_number
        });
        match out.last_mut() {
            Some(prev) if glue => {
                prev.push(' ');
                prev.push_str(token);
            }
            _ => out.push(token.to_string()),
        }
    }
    out
}

/// A figure as written: digits with an optional sign, decimal point or separators.
fn is_number(token: &str) -> bool {
    let t = token.trim_start_matches(['(', '≥', '≤', '>', '<', '±', '~']);
    t.chars().any(|c| c.is_ascii_digit())
        && t.chars()
            .all(|c| c.is_ascii_digit() || ".,+-−×/".contains(c))
}

/// An RGB colour, components 0–1.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Rgbf(pub f32, pub f32, pub f32);

pub const BLACK: Rgbf = Rgbf(0.0, 0.0, 0.0);
pub const DARK: Rgbf = Rgbf(0.25, 0.25, 0.25);
pub const MID: Rgbf = Rgbf(0.55, 0.55, 0.55);
pub const LIGHT: Rgbf = Rgbf(0.85, 0.85, 0.85);
pub const FAINT: Rgbf = Rgbf(0.93, 0.93, 0.93);
pub const WHITE: Rgbf = Rgbf(1.0, 1.0, 1.0);

fn color(c: Rgbf) -> Color {
    if c.0 == c.1 && c.1 == c.2 {
        Color::Greyscale(Greyscale::new(c.0, None))
    } else {
        Color::Rgb(Rgb::new(c.0, c.1, c.2, None))
    }
}

/// Where a piece of text was put, for tests that check nothing overlaps or leaves the page.
#[derive(Clone, Debug, PartialEq)]
pub struct TextBox {
    pub x: f32,
    /// Top of the line box, from the page top.
    pub top: f32,
    pub width: f32,
    pub height: f32,
    pub text: String,
}

/// One page being drawn: PDF operations plus the record of placed text.
pub struct Page {
    pub width: f32,
    pub height: f32,
    pub ops: Vec<Op>,
    pub text_boxes: Vec<TextBox>,
}

/// Line stroke style.
#[derive(Clone, Debug, PartialEq)]
pub struct Stroke {
    pub width: f32,
    pub color: Rgbf,
    /// Dash and gap lengths in points; empty = solid.
    pub dash: Vec<f32>,
}

impl Stroke {
    pub fn solid(width: f32, color: Rgbf) -> Self {
        Stroke {
            width,
            color,
            dash: Vec::new(),
        }
    }
    pub fn dashed(width: f32, color: Rgbf, dash: &[f32]) -> Self {
        Stroke {
            width,
            color,
            dash: dash.to_vec(),
        }
    }
}

impl Page {
    pub fn new(width: f32, height: f32) -> Self {
        Page {
            width,
            height,
            ops: Vec::new(),
            text_boxes: Vec::new(),
        }
    }

    fn pt(&self, x: f32, y: f32) -> Point {
        Point {
            x: Pt(x),
            y: Pt(self.height - y),
        }
    }

    /// Draws one line of text with its baseline at `baseline` (from the top).
    #[allow(clippy::too_many_arguments)]
    pub fn text(
        &mut self,
        fonts: &Fonts,
        face: Face,
        size: f32,
        col: Rgbf,
        x: f32,
        baseline: f32,
        s: &str,
    ) {
        if s.is_empty() {
            return;
        }
        let pos = self.pt(x, baseline);
        self.ops.push(Op::StartTextSection);
        self.ops.push(Op::SetFillColor { col: color(col) });
        self.ops.push(Op::SetFont {
            font: fonts.handle(face),
            size: Pt(size),
        });
        self.ops.push(Op::SetTextCursor { pos });
        self.ops.push(Op::ShowText {
            items: vec![TextItem::Text(s.to_string())],
        });
        self.ops.push(Op::EndTextSection);
        let ascent = fonts.ascent(face) * size;
        self.text_boxes.push(TextBox {
            x,
            top: baseline - ascent,
            width: fonts.width(face, size, s),
            height: size * 1.2,
            text: s.to_string(),
        });
    }

    /// Text right-aligned so that it ends at `right`.
    #[allow(clippy::too_many_arguments)]
    pub fn text_right(
        &mut self,
        fonts: &Fonts,
        face: Face,
        size: f32,
        col: Rgbf,
        right: f32,
        baseline: f32,
        s: &str,
    ) {
        let w = fonts.width(face, size, s);
        self.text(fonts, face, size, col, right - w, baseline, s);
    }

    /// Text centred on `cx`.
    #[allow(clippy::too_many_arguments)]
    pub fn text_centred(
        &mut self,
        fonts: &Fonts,
        face: Face,
        size: f32,
        col: Rgbf,
        cx: f32,
        baseline: f32,
        s: &str,
    ) {
        let w = fonts.width(face, size, s);
        self.text(fonts, face, size, col, cx - w / 2.0, baseline, s);
    }

    fn set_stroke(&mut self, stroke: &Stroke) {
        self.ops.push(Op::SetOutlineColor {
            col: color(stroke.color),
        });
        self.ops.push(Op::SetOutlineThickness {
            pt: Pt(stroke.width),
        });
        self.ops.push(Op::SetLineDashPattern {
            dash: LineDashPattern::new(0.0, &stroke.dash),
        });
    }

    /// An open polyline.
    pub fn polyline(&mut self, points: &[(f32, f32)], stroke: &Stroke) {
        if points.len() < 2 {
            return;
        }
        self.set_stroke(stroke);
        let points = points
            .iter()
            .map(|&(x, y)| LinePoint {
                p: self.pt(x, y),
                bezier: false,
            })
            .collect();
        self.ops.push(Op::DrawLine {
            line: Line {
                points,
                is_closed: false,
            },
        });
        if !stroke.dash.is_empty() {
            self.ops.push(Op::SetLineDashPattern {
                dash: LineDashPattern::solid(),
            });
        }
    }

    pub fn line(&mut self, x1: f32, y1: f32, x2: f32, y2: f32, stroke: &Stroke) {
        self.polyline(&[(x1, y1), (x2, y2)], stroke);
    }

    /// A closed shape, filled and/or outlined.
    pub fn shape(&mut self, points: &[(f32, f32)], fill: Option<Rgbf>, stroke: Option<&Stroke>) {
        if points.len() < 3 {
            return;
        }
        let mode = match (fill, stroke) {
            (Some(_), Some(_)) => PaintMode::FillStroke,
            (Some(_), None) => PaintMode::Fill,
            (None, Some(_)) => PaintMode::Stroke,
            (None, None) => return,
        };
        if let Some(f) = fill {
            self.ops.push(Op::SetFillColor { col: color(f) });
        }
        if let Some(s) = stroke {
            self.set_stroke(s);
        }
        let points = points
            .iter()
            .map(|&(x, y)| LinePoint {
                p: self.pt(x, y),
                bezier: false,
            })
            .collect();
        self.ops.push(Op::DrawPolygon {
            polygon: Polygon {
                rings: vec![PolygonRing { points }],
                mode,
                winding_order: WindingOrder::NonZero,
            },
        });
    }

    /// An axis-aligned rectangle with its top-left corner at (`x`, `top`).
    pub fn rect(
        &mut self,
        x: f32,
        top: f32,
        w: f32,
        h: f32,
        fill: Option<Rgbf>,
        stroke: Option<&Stroke>,
    ) {
        self.shape(
            &[(x, top), (x + w, top), (x + w, top + h), (x, top + h)],
            fill,
            stroke,
        );
    }

    /// Restricts drawing to a rectangle until `unclip`.
    pub fn clip(&mut self, x: f32, top: f32, w: f32, h: f32) {
        self.ops.push(Op::SaveGraphicsState);
        let ll = self.pt(x, top + h);
        self.ops.push(Op::DrawRectangle {
            rectangle: Rect {
                x: ll.x,
                y: ll.y,
                width: Pt(w),
                height: Pt(h),
                mode: Some(PaintMode::Clip),
                winding_order: Some(WindingOrder::NonZero),
            },
        });
    }

    pub fn unclip(&mut self) {
        self.ops.push(Op::RestoreGraphicsState);
    }

    /// The state mark centred on (`cx`, `cy`), `size` points across: a distinct shape per
    /// state so the report reads in black and white; the fill colour is only an extra.
    pub fn mark(&mut self, mark: Mark, cx: f32, cy: f32, size: f32) {
        let r = size / 2.0;
        let outline = Stroke::solid(0.6, BLACK);
        match mark {
            // Steady: a circle.
            Mark::Steady => {
                let pts: Vec<(f32, f32)> = (0..20)
                    .map(|i| {
                        let a = i as f32 / 20.0 * std::f32::consts::TAU;
                        (cx + r * 0.9 * a.cos(), cy + r * 0.9 * a.sin())
                    })
                    .collect();
                self.shape(&pts, Some(Rgbf(0.55, 0.80, 0.60)), Some(&outline));
            }
            // Watch: a triangle standing on its base.
            Mark::Watch => {
                let pts = [
                    (cx, cy - r),
                    (cx + r, cy + r * 0.85),
                    (cx - r, cy + r * 0.85),
                ];
                self.shape(&pts, Some(Rgbf(0.98, 0.78, 0.25)), Some(&outline));
            }
            // Act: a diamond, solid dark so it is the heaviest mark on the page.
            Mark::Act => {
                let pts = [
                    (cx, cy - r * 1.1),
                    (cx + r * 1.1, cy),
                    (cx, cy + r * 1.1),
                    (cx - r * 1.1, cy),
                ];
                self.shape(&pts, Some(Rgbf(0.70, 0.08, 0.08)), Some(&outline));
            }
            // No judgement possible (no data, no baseline): an open square.
            Mark::None => {
                let s = r * 0.75;
                self.rect(
                    cx - s,
                    cy - s,
                    2.0 * s,
                    2.0 * s,
                    Some(WHITE),
                    Some(&outline),
                );
            }
        }
    }
}

/// Sizes used throughout the report, in points.
pub mod size {
    pub const TITLE: f32 = 14.0;
    pub const HEADING: f32 = 10.0;
    pub const BODY: f32 = 8.0;
    pub const SMALL: f32 = 7.0;
    pub const TINY: f32 = 6.0;
    /// Line advance as a multiple of the font size.
    pub const LEADING: f32 = 1.25;
}

/// What every page carries around its content.
pub struct Frame {
    pub shop_name: String,
    pub report_title: String,
    pub period: String,
    pub written: String,
    /// Short safety cautions, one paragraph each.
    pub cautions: Vec<String>,
    /// The line that limits are guidance only.
    pub guidance: String,
}

/// Cell of a table: text, optionally preceded by a state mark, optionally bold.
#[derive(Clone, Debug, PartialEq)]
pub struct Cell {
    pub text: String,
    pub mark: Option<Mark>,
    pub bold: bool,
    /// Regular text under the main text (a name under a bold tag).
    pub sub: Option<String>,
}

impl Cell {
    pub fn plain(text: impl Into<String>) -> Self {
        Cell {
            text: text.into(),
            mark: None,
            bold: false,
            sub: None,
        }
    }
    pub fn bold(text: impl Into<String>) -> Self {
        Cell {
            text: text.into(),
            mark: None,
            bold: true,
            sub: None,
        }
    }
    pub fn marked(mark: Mark, text: impl Into<String>) -> Self {
        Cell {
            text: text.into(),
            mark: Some(mark),
            bold: false,
            sub: None,
        }
    }
    /// Bold main text with a regular line (or lines) under it.
    pub fn titled(text: impl Into<String>, sub: impl Into<String>) -> Self {
        let sub = sub.into();
        Cell {
            text: text.into(),
            mark: None,
            bold: true,
            sub: (!sub.is_empty()).then_some(sub),
        }
    }
}

/// A flowing layout: content goes down the page; whatever does not fit continues on a new
/// page that repeats the section title with "(continued)".
pub struct Layout<'f> {
    pub fonts: &'f Fonts,
    frame: Frame,
    pub page_w: f32,
    pub page_h: f32,
    pub margin: f32,
    header_h: f32,
    footer_h: f32,
    pages: Vec<Page>,
    /// Title of the section now being laid out, repeated on its continuation pages.
    section: String,
    /// Current position from the page top.
    pub y: f32,
    /// A narrower column in force: offset from the left margin and width.
    column: Option<(f32, f32)>,
}

/// Space between the body of the page and the frame.
const FRAME_GAP: f32 = 8.0;

impl<'f> Layout<'f> {
    pub fn new(fonts: &'f Fonts, paper: Paper, frame: Frame) -> Self {
        let (page_w, page_h) = paper.size_pt();
        let margin = 12.0 * PT_PER_MM;
        // One header line when shop, title and period fit side by side, else two.
        let one_line = fonts.width(Face::Bold, size::BODY, &frame.shop_name)
            + fonts.width(
                Face::Regular,
                size::BODY,
                &format!(" · {}", frame.report_title),
            )
            + fonts.width(Face::Regular, size::BODY, &frame.period)
            + 12.0
            <= page_w - 2.0 * margin;
        let header_h = size::BODY * size::LEADING * if one_line { 1.0 } else { 2.0 } + 3.0;
        let mut layout = Layout {
            fonts,
            frame,
            page_w,
            page_h,
            margin,
            header_h,
            footer_h: 0.0,
            pages: Vec::new(),
            section: String::new(),
            y: 0.0,
            column: None,
        };
        layout.footer_h = layout.footer_lines().len() as f32 * size::TINY * size::LEADING
            + size::SMALL * 1.6
            + 4.0;
        layout
    }

    /// Left edge of the content (of the column, when one is set).
    pub fn left(&self) -> f32 {
        self.margin + self.column.map_or(0.0, |c| c.0)
    }
    /// Width of the content (of the column, when one is set).
    pub fn content_w(&self) -> f32 {
        self.column.map_or(self.page_w - 2.0 * self.margin, |c| c.1)
    }
    /// Width between the margins, whatever the column.
    pub fn full_w(&self) -> f32 {
        self.page_w - 2.0 * self.margin
    }
    /// Lowest y content may reach on a page.
    pub fn bottom(&self) -> f32 {
        self.page_h - self.margin - self.footer_h - FRAME_GAP
    }
    /// Highest y content starts at on a page.
    pub fn top(&self) -> f32 {
        self.margin + self.header_h + FRAME_GAP
    }
    /// Space left on the current page.
    pub fn remaining(&self) -> f32 {
        self.bottom() - self.y
    }
    /// Height of the content area of a whole page.
    pub fn page_capacity(&self) -> f32 {
        self.bottom() - self.top()
    }

    fn footer_lines(&self) -> Vec<(Face, String)> {
        let w = self.full_w();
        let mut lines = Vec::new();
        let mut all: Vec<&String> = self.frame.cautions.iter().collect();
        all.push(&self.frame.guidance);
        let text = all
            .iter()
            .map(|s| s.as_str())
            .collect::<Vec<_>>()
            .join("  ");
        for l in self.fonts.wrap(Face::Regular, size::TINY, &text, w) {
            lines.push((Face::Regular, l));
        }
        lines
    }

    /// Pages started so far.
    pub fn page_count(&self) -> usize {
        self.pages.len()
    }

    /// The page now being drawn.
    pub fn page(&mut self) -> &mut Page {
        if self.pages.is_empty() {
            self.pages.push(Page::new(self.page_w, self.page_h));
        }
        let last = self.pages.len() - 1;
        &mut self.pages[last]
    }

    /// Starts a new section on a fresh page, with its title.
    pub fn start_section(&mut self, title: &str) {
        self.column = None;
        self.section = title.to_string();
        self.pages.push(Page::new(self.page_w, self.page_h));
        self.y = self.top();
        self.section_title(false);
    }

    fn section_title(&mut self, continued: bool) {
        let title = if continued {
            format!("{} (continued)", self.section)
        } else {
            self.section.clone()
        };
        let lines = self
            .fonts
            .wrap(Face::Bold, size::TITLE, &title, self.content_w());
        for l in lines {
            let base = self.y + size::TITLE;
            let (fonts, x) = (self.fonts, self.left());
            self.page()
                .text(fonts, Face::Bold, size::TITLE, BLACK, x, base, &l);
            self.y += size::TITLE * size::LEADING;
        }
        self.y += 4.0;
    }

    /// Continues the current section on a new page.
    pub fn break_page(&mut self) {
        self.column = None;
        self.pages.push(Page::new(self.page_w, self.page_h));
        self.y = self.top();
        self.section_title(true);
    }

    /// Makes sure `h` points are free below the cursor, breaking the page if not. A block
    /// taller than a whole page is allowed to start at the top of a new page.
    pub fn ensure(&mut self, h: f32) {
        if self.y + h > self.bottom() && self.y > self.top() + size::TITLE * 2.0 {
            self.break_page();
        }
    }

    pub fn gap(&mut self, h: f32) {
        self.y = (self.y + h).min(self.bottom());
    }

    /// A heading; kept on the page with at least `keep_with` points of what follows.
    pub fn heading(&mut self, text: &str, keep_with: f32) {
        let lines = self
            .fonts
            .wrap(Face::Bold, size::HEADING, text, self.content_w());
        let h = lines.len() as f32 * size::HEADING * size::LEADING + 2.0;
        self.ensure(h + keep_with);
        for l in lines {
            let base = self.y + size::HEADING;
            let (fonts, x) = (self.fonts, self.left());
            self.page()
                .text(fonts, Face::Bold, size::HEADING, BLACK, x, base, &l);
            self.y += size::HEADING * size::LEADING;
        }
        self.y += 2.0;
    }

    /// A wrapped paragraph starting at `indent` points from the left margin; breaks between
    /// lines when the page is full.
    pub fn paragraph(&mut self, face: Face, sz: f32, col: Rgbf, indent: f32, text: &str) {
        let lines = self.fonts.wrap(face, sz, text, self.content_w() - indent);
        for l in lines {
            self.ensure(sz * size::LEADING);
            let base = self.y + sz;
            let (fonts, x) = (self.fonts, self.left() + indent);
            self.page().text(fonts, face, sz, col, x, base, &l);
            self.y += sz * size::LEADING;
        }
    }

    /// Label–value pairs in `columns` columns, labels in bold, values wrapped.
    pub fn key_values(&mut self, pairs: &[(String, String)], columns: usize, sz: f32) {
        let columns = columns.max(1);
        let col_w = self.content_w() / columns as f32;
        let label_w = pairs
            .iter()
            .map(|(k, _)| self.fonts.width(Face::Bold, sz, k))
            .fold(0.0f32, f32::max)
            .min(col_w * 0.45)
            + 4.0;
        for row in pairs.chunks(columns) {
            let wrapped: Vec<(Vec<String>, Vec<String>)> = row
                .iter()
                .map(|(k, v)| {
                    (
                        self.fonts.wrap(Face::Bold, sz, k, label_w - 4.0),
                        self.fonts.wrap(Face::Regular, sz, v, col_w - label_w - 6.0),
                    )
                })
                .collect();
            let n = wrapped
                .iter()
                .map(|(k, v)| k.len().max(v.len()))
                .max()
                .unwrap_or(1);
            let h = n as f32 * sz * size::LEADING;
            self.ensure(h);
            let top = self.y;
            let fonts = self.fonts;
            for (i, (k, v)) in wrapped.iter().enumerate() {
                let x = self.left() + i as f32 * col_w;
                for (j, l) in k.iter().enumerate() {
                    let base = top + sz + j as f32 * sz * size::LEADING;
                    self.page().text(fonts, Face::Bold, sz, DARK, x, base, l);
                }
                for (j, l) in v.iter().enumerate() {
                    let base = top + sz + j as f32 * sz * size::LEADING;
                    self.page()
                        .text(fonts, Face::Regular, sz, BLACK, x + label_w, base, l);
                }
            }
            self.y += h;
        }
    }

    /// A paragraph led by a state mark and a bold lead-in (the state in words).
    pub fn marked_paragraph(&mut self, mark: Mark, lead: &str, text: &str, sz: f32) {
        let indent = sz * 1.6;
        let full = if text.is_empty() {
            lead.to_string()
        } else {
            format!("{lead} {text}")
        };
        // The lead-in is set bold, which is wider than the regular face it is wrapped in.
        let extra =
            self.fonts.width(Face::Bold, sz, lead) - self.fonts.width(Face::Regular, sz, lead);
        let lines = self.fonts.wrap(
            Face::Regular,
            sz,
            &full,
            self.content_w() - indent - extra.max(0.0),
        );
        self.ensure(sz * size::LEADING);
        let top = self.y;
        let (fonts, left) = (self.fonts, self.left());
        self.page()
            .mark(mark, left + sz * 0.6, top + sz * 0.62, sz * 1.1);
        for (i, l) in lines.iter().enumerate() {
            if i > 0 {
                self.ensure(sz * size::LEADING);
            }
            let base = self.y + sz;
            // The lead-in is bold where it begins the first line.
            if i == 0 && l.starts_with(lead) {
                self.page()
                    .text(fonts, Face::Bold, sz, BLACK, left + indent, base, lead);
                let rest = &l[lead.len()..];
                let lead_w = fonts.width(Face::Bold, sz, lead);
                self.page().text(
                    fonts,
                    Face::Regular,
                    sz,
                    BLACK,
                    left + indent + lead_w,
                    base,
                    rest,
                );
            } else {
                self.page()
                    .text(fonts, Face::Regular, sz, BLACK, left + indent, base, l);
            }
            self.y += sz * size::LEADING;
        }
    }

    /// One line explaining the state marks.
    pub fn mark_legend(&mut self, items: &[(Mark, String)], sz: f32) {
        self.ensure(sz * size::LEADING + 2.0);
        let (fonts, mut x) = (self.fonts, self.left());
        let top = self.y;
        let right = self.left() + self.content_w();
        for (m, word) in items {
            let w = sz * 1.4 + fonts.width(Face::Regular, sz, word) + sz * 1.5;
            if x + w > right && x > self.left() {
                self.y += sz * size::LEADING;
                x = self.left();
            }
            let line_top = self.y.max(top);
            self.page()
                .mark(*m, x + sz * 0.5, line_top + sz * 0.62, sz * 1.0);
            self.page().text(
                fonts,
                Face::Regular,
                sz,
                BLACK,
                x + sz * 1.4,
                line_top + sz,
                word,
            );
            x += w;
        }
        self.y += sz * size::LEADING + 2.0;
    }

    /// Sign-off lines, kept together: each row a set of entries, each entry a label and a rule
    /// to write on, with the share of the width it takes.
    pub fn sign_off(&mut self, rows: &[&[(&str, f32)]], sz: f32) {
        self.ensure(self.sign_off_height(rows.len(), sz));
        let (fonts, left, cw) = (self.fonts, self.left(), self.content_w());
        for entries in rows {
            let row_h = self.sign_off_height(1, sz);
            let total: f32 = entries.iter().map(|e| e.1).sum();
            let base = self.y + row_h - 4.0 - sz * 0.6;
            let mut x = left;
            for (label, share) in entries.iter() {
                let w = share / total * cw;
                self.page()
                    .text(fonts, Face::Bold, sz, BLACK, x, base, label);
                let lw = fonts.width(Face::Bold, sz, label) + 4.0;
                self.page().line(
                    x + lw,
                    base + 1.0,
                    x + w - 10.0,
                    base + 1.0,
                    &Stroke::solid(0.5, BLACK),
                );
                x += w;
            }
            self.y += row_h;
        }
    }

    /// Narrows the flow to a column `offset` points from the left margin and `width` wide, or
    /// back to the full width with `None`. Only for blocks known to fit the page: a page
    /// break inside a column would start the next page in the column.
    pub fn set_column(&mut self, column: Option<(f32, f32)>) {
        self.column = column;
    }

    /// Height a table row takes with these cells and column widths.
    fn row_height(&self, cells: &[Cell], widths: &[f32], sz: f32, header: bool) -> f32 {
        let lines = cells
            .iter()
            .zip(widths)
            .map(|(c, w)| self.cell_lines(c, *w, sz, header).len())
            .max()
            .unwrap_or(1)
            .max(1);
        lines as f32 * sz * size::LEADING + CELL_PAD * 2.0
    }

    fn cell_lines(&self, cell: &Cell, width: f32, sz: f32, header: bool) -> Vec<(Face, String)> {
        let face = if cell.bold || header {
            Face::Bold
        } else {
            Face::Regular
        };
        let avail =
            (width - 2.0 * CELL_PAD - if cell.mark.is_some() { sz + 2.0 } else { 0.0 }).max(sz);
        let mut lines: Vec<(Face, String)> = self
            .fonts
            .wrap(face, sz, &cell.text, avail)
            .into_iter()
            .map(|l| (face, l))
            .collect();
        if let Some(sub) = &cell.sub {
            lines.extend(
                self.fonts
                    .wrap(Face::Regular, sz, sub, avail)
                    .into_iter()
                    .map(|l| (Face::Regular, l)),
            );
        }
        lines
    }

    /// Height `table` takes when it does not break.
    pub fn table_height(
        &self,
        fractions: &[f32],
        header: &[Cell],
        rows: &[Vec<Cell>],
        sz: f32,
    ) -> f32 {
        let total: f32 = fractions.iter().sum();
        let widths: Vec<f32> = fractions
            .iter()
            .map(|f| f / total * self.content_w())
            .collect();
        self.row_height(header, &widths, sz, true)
            + rows
                .iter()
                .map(|r| self.row_height(r, &widths, sz, false))
                .sum::<f32>()
    }

    /// Height `paragraph` takes.
    pub fn paragraph_height(&self, face: Face, sz: f32, indent: f32, text: &str) -> f32 {
        self.fonts
            .wrap(face, sz, text, self.content_w() - indent)
            .len() as f32
            * sz
            * size::LEADING
    }

    /// Height `heading` takes.
    pub fn heading_height(&self, text: &str) -> f32 {
        self.fonts
            .wrap(Face::Bold, size::HEADING, text, self.content_w())
            .len() as f32
            * size::HEADING
            * size::LEADING
            + 2.0
    }

    /// Height `sign_off` takes with `rows` rows: room above each rule to write in.
    pub fn sign_off_height(&self, rows: usize, sz: f32) -> f32 {
        rows as f32 * (sz * 3.4 + 4.0)
    }

    /// Draws lines `from..to` of a row whose cells are already wrapped; marks go with the
    /// first line.
    #[allow(clippy::too_many_arguments)]
    fn draw_row_lines(
        &mut self,
        cells: &[WrappedCell],
        widths: &[f32],
        sz: f32,
        from: usize,
        to: usize,
        shade: Option<Rgbf>,
        header: bool,
    ) {
        let h = (to - from).max(1) as f32 * sz * size::LEADING + CELL_PAD * 2.0;
        let top = self.y;
        let (fonts, left, cw) = (self.fonts, self.left(), self.content_w());
        if let Some(fill) = shade {
            self.page().rect(left, top, cw, h, Some(fill), None);
        }
        let mut x = left;
        for ((mark, lines), w) in cells.iter().zip(widths) {
            let mut tx = x + CELL_PAD;
            if let Some(m) = mark {
                if from == 0 {
                    self.page()
                        .mark(*m, tx + sz * 0.45, top + CELL_PAD + sz * 0.55, sz * 0.9);
                }
                tx += sz + 2.0;
            }
            for (i, (face, l)) in lines.iter().enumerate().take(to).skip(from) {
                let base = top + CELL_PAD + sz + (i - from) as f32 * sz * size::LEADING;
                self.page().text(fonts, *face, sz, BLACK, tx, base, l);
            }
            x += w;
        }
        let line = Stroke::solid(
            if header { 0.8 } else { 0.3 },
            if header { DARK } else { LIGHT },
        );
        self.page().line(left, top + h, left + cw, top + h, &line);
        self.y += h;
    }

    fn wrapped_row(
        &self,
        cells: &[Cell],
        widths: &[f32],
        sz: f32,
        header: bool,
    ) -> Vec<WrappedCell> {
        cells
            .iter()
            .zip(widths)
            .map(|(c, w)| (c.mark, self.cell_lines(c, *w, sz, header)))
            .collect()
    }

    /// A table with a header row repeated on each page it runs onto. `fractions` are the
    /// column widths as parts of the content width. Rows wrap their cells and move whole to
    /// the next page when they do not fit; only a row taller than a whole page is split,
    /// between lines, so nothing is ever cut off.
    pub fn table(&mut self, fractions: &[f32], header: &[Cell], rows: &[Vec<Cell>], sz: f32) {
        let total: f32 = fractions.iter().sum();
        let widths: Vec<f32> = fractions
            .iter()
            .map(|f| f / total * self.content_w())
            .collect();
        let head = self.wrapped_row(header, &widths, sz, true);
        let head_lines = head.iter().map(|c| c.1.len()).max().unwrap_or(1).max(1);
        let line_h = sz * size::LEADING;
        let head_h = head_lines as f32 * line_h + CELL_PAD * 2.0;
        let first_h = rows
            .first()
            .map_or(0.0, |r| self.row_height(r, &widths, sz, false));
        self.ensure(head_h + first_h.min(self.page_capacity() - head_h));
        self.draw_row_lines(&head, &widths, sz, 0, head_lines, Some(FAINT), true);
        for (i, row) in rows.iter().enumerate() {
            let cells = self.wrapped_row(row, &widths, sz, false);
            let n = cells.iter().map(|c| c.1.len()).max().unwrap_or(1).max(1);
            let h = n as f32 * line_h + CELL_PAD * 2.0;
            let shade = if i % 2 == 1 {
                Some(Rgbf(0.975, 0.975, 0.975))
            } else {
                None
            };
            let fits_on_a_page = h <= self.page_capacity() - head_h - size::TITLE * 2.0;
            if self.y + h > self.bottom() && fits_on_a_page {
                self.break_page();
                self.draw_row_lines(&head, &widths, sz, 0, head_lines, Some(FAINT), true);
            }
            let mut from = 0;
            while from < n {
                let room = ((self.bottom() - self.y - CELL_PAD * 2.0) / line_h)
                    .floor()
                    .max(0.0) as usize;
                if room == 0 {
                    self.break_page();
                    self.draw_row_lines(&head, &widths, sz, 0, head_lines, Some(FAINT), true);
                    continue;
                }
                let to = (from + room).min(n);
                self.draw_row_lines(&cells, &widths, sz, from, to, shade, false);
                from = to;
            }
        }
    }

    /// Lays out the page frame on every page and hands back the finished pages.
    pub fn finish(mut self) -> Vec<Page> {
        let n = self.pages.len();
        let footer = self.footer_lines();
        let fonts = self.fonts;
        let (m, w, h) = (self.margin, self.page_w, self.page_h);
        let frame = &self.frame;
        for (i, page) in self.pages.iter_mut().enumerate() {
            // Header: shop and report on the left, period on the right (below, when the shop's
            // name is too long to share the line), a rule under it.
            let b1 = m + size::BODY;
            page.text(
                fonts,
                Face::Bold,
                size::BODY,
                BLACK,
                m,
                b1,
                &frame.shop_name,
            );
            let shop_w = fonts.width(Face::Bold, size::BODY, &frame.shop_name);
            let two_lines = self.header_h > size::BODY * size::LEADING * 1.5 + 3.0;
            if two_lines {
                page.text(
                    fonts,
                    Face::Regular,
                    size::BODY,
                    DARK,
                    m,
                    b1 + size::BODY * size::LEADING,
                    &frame.report_title,
                );
                page.text_right(
                    fonts,
                    Face::Regular,
                    size::BODY,
                    BLACK,
                    w - m,
                    b1 + size::BODY * size::LEADING,
                    &frame.period,
                );
            } else {
                page.text(
                    fonts,
                    Face::Regular,
                    size::BODY,
                    DARK,
                    m + shop_w,
                    b1,
                    &format!(" · {}", frame.report_title),
                );
                page.text_right(
                    fonts,
                    Face::Regular,
                    size::BODY,
                    BLACK,
                    w - m,
                    b1,
                    &frame.period,
                );
            }
            let rule_y = m + self.header_h;
            page.line(m, rule_y, w - m, rule_y, &Stroke::solid(0.6, BLACK));

            // Footer: a rule, the cautions, then the page number line.
            let top = h - m - self.footer_h;
            page.line(m, top, w - m, top, &Stroke::solid(0.4, MID));
            let mut y = top + 2.0 + size::TINY;
            for (face, l) in &footer {
                page.text(fonts, *face, size::TINY, DARK, m, y, l);
                y += size::TINY * size::LEADING;
            }
            let last = h - m;
            page.text(
                fonts,
                Face::Regular,
                size::SMALL,
                BLACK,
                m,
                last,
                &frame.written,
            );
            page.text_right(
                fonts,
                Face::Bold,
                size::SMALL,
                BLACK,
                w - m,
                last,
                &format!("Page {} of {}", i + 1, n),
            );
        }
        self.pages
    }
}

/// A table cell's mark and its wrapped lines, each with its face.
type WrappedCell = (Option<Mark>, Vec<(Face, String)>);

/// Padding inside table cells.
pub const CELL_PAD: f32 = 1.3;

#[cfg(test)]
mod tests {
    use super::*;

    fn frame() -> Frame {
        Frame {
            shop_name: "Test shop".into(),
            report_title: "Condition report".into(),
            period: "2024-01-01 – 2024-03-31".into(),
            written: "written 2024-04-01".into(),
            cautions: vec![
                "Caution one is a sentence of some length.".into(),
                "Caution two.".into(),
            ],
            guidance: "Limits are general guidance.".into(),
        }
    }

    #[test]
    fn the_font_carries_the_trade_symbols() {
        let fonts = Fonts::load().unwrap();
        for face in [Face::Regular, Face::Bold] {
            assert!(fonts
                .missing_glyphs(face, "°C µm ≥ ± ² ³ – — · → ↑ ↓ ≤ é ü ñ ø Å ł ő")
                .is_empty());
        }
        // A character outside the font is reported, not silently accepted.
        assert_eq!(
            fonts.missing_glyphs(Face::Regular, "a\u{4E2D}b"),
            vec!['\u{4E2D}']
        );
    }

    #[test]
    fn width_adds_up_and_scales_with_size() {
        let fonts = Fonts::load().unwrap();
        let a = fonts.width(Face::Regular, 10.0, "Lost flow");
        let b = fonts.width(Face::Regular, 10.0, "Lost ");
        let c = fonts.width(Face::Regular, 10.0, "flow");
        assert!((a - (b + c)).abs() < 1e-3);
        assert!((fonts.width(Face::Regular, 20.0, "Lost flow") - 2.0 * a).abs() < 1e-3);
        assert!(fonts.width(Face::Bold, 10.0, "Lost flow") > a);
        // "i" is narrower than "m" in a proportional face.
        assert!(
            fonts.width(Face::Regular, 10.0, "iiii") < fonts.width(Face::Regular, 10.0, "mmmm")
        );
    }

    #[test]
    fn wrapped_lines_fit_and_lose_no_text() {
        let fonts = Fonts::load().unwrap();
        let text = "Hydraulic power unit of the 400-tonne transfer press, line 3 (north bay), \
                    rebuilt pump; a_very_long_identifier_without_any_spaces_that_cannot_fit_on_a_line";
        for max in [40.0, 90.0, 200.0] {
            let lines = fonts.wrap(Face::Regular, 8.0, text, max);
            assert!(lines.len() > 1);
            for l in &lines {
                assert!(
                    fonts.width(Face::Regular, 8.0, l) <= max + 1e-3,
                    "{l:?} wider than {max}"
                );
            }
            let joined: String = lines
                .concat()
                .chars()
                .filter(|c| !c.is_whitespace())
                .collect();
            let original: String = text.chars().filter(|c| !c.is_whitespace()).collect();
            assert_eq!(joined, original);
        }
        assert_eq!(
            fonts.wrap(Face::Regular, 8.0, "short", 200.0),
            vec!["short".to_string()]
        );
        assert_eq!(
            fonts.wrap(Face::Regular, 8.0, "one\ntwo", 200.0),
            vec!["one".to_string(), "two".to_string()]
        );
    }

    #[test]
    fn figures_and_their_units_stay_on_one_line() {
        let fonts = Fonts::load().unwrap();
        let text = "lost flow 12.4 % · heat rise +3.1 K · KV40 +6.3 % (watch ≥ 8 %) at 48.0 °C";
        for max in [40.0, 55.0, 70.0, 90.0, 120.0] {
            for l in fonts.wrap(Face::Regular, 8.0, text, max) {
                let first = l.split(' ').next().unwrap_or("");
                assert!(!matches!(first, "%" | "K" | "°C" | "8"), "{l:?}");
                assert!(!l.ends_with('≥'), "{l:?}");
            }
        }
    }

    #[test]
    fn long_words_break_after_a_slash_or_hyphen_when_they_can() {
        let fonts = Fonts::load().unwrap();
        let w = fonts.width(Face::Regular, 8.0, "PRESS-LINE-");
        let lines = fonts.wrap(Face::Regular, 8.0, "PRESS-LINE-NORTH", w + 1.0);
        assert_eq!(lines, vec!["PRESS-LINE-".to_string(), "NORTH".to_string()]);
    }

    #[test]
    fn a_long_table_continues_on_new_pages_inside_the_content_area() {
        let fonts = Fonts::load().unwrap();
        for paper in [Paper::A4, Paper::Letter] {
            let mut layout = Layout::new(&fonts, paper, frame());
            layout.start_section("Fleet");
            let rows: Vec<Vec<Cell>> = (0..120)
                .map(|i| {
                    vec![
                        Cell::marked(Mark::Watch, format!("U-{i}")),
                        Cell::plain("a fairly long explanation that will need to wrap onto more than one line here"),
                    ]
                })
                .collect();
            layout.table(
                &[1.0, 2.0],
                &[Cell::bold("Unit"), Cell::bold("Why")],
                &rows,
                size::BODY,
            );
            let bottom = layout.bottom();
            let top = layout.top();
            let pages = layout.finish();
            assert!(pages.len() >= 3, "{} pages", pages.len());
            let (w, h) = paper.size_pt();
            for (pi, page) in pages.iter().enumerate() {
                for b in &page.text_boxes {
                    assert!(
                        b.x >= 0.0 && b.x + b.width <= w && b.top >= 0.0 && b.top + b.height <= h
                    );
                }
                // Body text (not the frame) stays between header and footer.
                let body: Vec<_> = page
                    .text_boxes
                    .iter()
                    .filter(|b| b.text.starts_with("U-"))
                    .collect();
                assert!(!body.is_empty(), "page {pi} has no rows");
                for b in body {
                    assert!(
                        b.top >= top - 1.0 && b.top + b.height <= bottom + 1.0,
                        "{b:?}"
                    );
                }
                // The header row repeats on each page.
                assert!(page.text_boxes.iter().any(|b| b.text == "Unit"));
                assert!(page
                    .text_boxes
                    .iter()
                    .any(|b| b.text == format!("Page {} of {}", pi + 1, pages.len())));
            }
            // Every row appears exactly once.
            for i in 0..120 {
                let tag = format!("U-{i}");
                let n: usize = pages
                    .iter()
                    .map(|p| p.text_boxes.iter().filter(|b| b.text == tag).count())
                    .sum();
                assert_eq!(n, 1, "{tag}");
            }
        }
    }

    #[test]
    fn a_row_taller_than_a_page_is_split_between_lines() {
        let fonts = Fonts::load().unwrap();
        let mut layout = Layout::new(&fonts, Paper::Letter, frame());
        layout.start_section("Notes");
        let long: String = (0..2000).map(|i| format!("word{i} ")).collect();
        layout.table(
            &[1.0, 3.0],
            &[Cell::bold("Tag"), Cell::bold("Note")],
            &[vec![Cell::plain("U-1"), Cell::plain(long.clone())]],
            size::BODY,
        );
        let bottom = layout.bottom();
        let pages = layout.finish();
        assert!(pages.len() >= 2);
        let mut seen = 0;
        for page in &pages {
            for b in page
                .text_boxes
                .iter()
                .filter(|b| b.text.starts_with("word"))
            {
                assert!(b.top + b.height <= bottom + 1.0, "{b:?}");
                seen += b.text.split(' ').count();
            }
        }
        assert_eq!(seen, 2000);
    }

    #[test]
    fn text_boxes_of_a_table_do_not_overlap() {
        let fonts = Fonts::load().unwrap();
        let mut layout = Layout::new(&fonts, Paper::A4, frame());
        layout.start_section("A section title that is long enough to need two lines on the page when set in the title size");
        let rows: Vec<Vec<Cell>> = (0..30)
            .map(|i| {
                vec![
                    Cell::plain(format!("row {i} with words that wrap in a narrow column")),
                    Cell::plain("x"),
                ]
            })
            .collect();
        layout.table(
            &[1.0, 4.0],
            &[Cell::bold("A"), Cell::bold("B")],
            &rows,
            size::BODY,
        );
        for page in layout.finish() {
            let b = &page.text_boxes;
            for i in 0..b.len() {
                for j in i + 1..b.len() {
                    let (p, q) = (&b[i], &b[j]);
                    // Line boxes include leading; compare the glyph bands (ascent to baseline).
                    let overlap_x = p.x < q.x + q.width && q.x < p.x + p.width;
                    let overlap_y =
                        p.top < q.top + q.height / 1.25 && q.top < p.top + p.height / 1.25;
                    assert!(!(overlap_x && overlap_y), "{p:?} overlaps {q:?}");
                }
            }
        }
    }
}
