//! Flow: the layout that puts content down the page, breaks onto continuation pages with the
//! section title repeated, and stamps the frame on every page when finished. It must not know
//! units, health or the store.

use super::*;

use crate::report::{Mark, Paper};

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
