//! Fonts: the two embedded DejaVu faces and exact text measuring and wrapping by the widths
//! printpdf writes. It must not draw or lay out pages.

use printpdf::{FontId, ParsedFont, PdfFontHandle};

use crate::report::ReportError;

/// DejaVu Sans (Bitstream Vera licence, see assets/fonts/LICENSE-DejaVu.txt): it carries °, µ,
/// ≥, ±, ², accented Latin names, and is embedded so the report looks the same everywhere.
const REGULAR_TTF: &[u8] = include_bytes!("../../../assets/fonts/DejaVuSans.ttf");
const BOLD_TTF: &[u8] = include_bytes!("../../../assets/fonts/DejaVuSans-Bold.ttf");

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

    pub(super) fn handle(&self, face: Face) -> PdfFontHandle {
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
