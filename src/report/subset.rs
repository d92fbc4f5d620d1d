//! Font subsetting for the report: once the pages are laid out, each embedded face is cut down
//! to the glyphs the pages draw (with a Unicode cmap for them), so a report carries tens of
//! kilobytes of font instead of both faces whole.
//!
//! Pure: font bytes and page operations in, font bytes out. It must not lay out text, read the
//! shop or touch files. A face that cannot be cut is kept whole (a larger file, never a wrong
//! one).

use std::collections::BTreeSet;

use allsorts::binary::read::ReadScope;
use allsorts::font_data::FontData;
use allsorts::subset::{subset, CmapTarget, SubsetProfile};
use printpdf::{Op, ParsedFont, PdfPage, TextItem};

/// Every character that the pages' text operations draw.
pub fn used_chars(pages: &[PdfPage]) -> BTreeSet<char> {
    let mut chars = BTreeSet::new();
    for page in pages {
        for op in &page.ops {
            if let Op::ShowText { items } = op {
                for item in items {
                    if let TextItem::Text(s) = item {
                        chars.extend(s.chars());
                    }
                }
            }
        }
    }
    chars
}

/// The TrueType face `ttf` cut down to the glyphs of `chars` (and `.notdef`, which must come
/// first), keeping a Unicode cmap for them so that text is mapped to the new glyph numbers the
/// same way it was to the old ones. Characters the face lacks are left out, as they would be
/// drawn as `.notdef` by the whole face too.
pub fn subset_face(ttf: &[u8], chars: &BTreeSet<char>) -> Result<Vec<u8>, String> {
    let mut warnings = Vec::new();
    let whole = ParsedFont::from_bytes(ttf, 0, &mut warnings)
        .ok_or_else(|| format!("the face cannot be read: {warnings:?}"))?;
    let mut ids: BTreeSet<u16> = chars
        .iter()
        .filter_map(|c| whole.lookup_glyph_index(u32::from(*c)))
        .collect();
    ids.remove(&0);
    let ids: Vec<u16> = std::iter::once(0).chain(ids).collect();
    let font = ReadScope::new(ttf)
        .read::<FontData<'_>>()
        .map_err(|e| e.to_string())?;
    let provider = font.table_provider(0).map_err(|e| e.to_string())?;
    subset(
        &provider,
        &ids,
        &SubsetProfile::Minimal,
        CmapTarget::Unicode,
    )
    .map_err(|e| e.to_string())
}

/// `doc`'s embedded faces replaced by their subsets for the characters its pages draw; a face
/// whose subset fails is left whole.
pub fn subset_document_fonts(doc: &mut printpdf::PdfDocument) {
    let chars = used_chars(&doc.pages);
    for font in doc.resources.fonts.map.values_mut() {
        let Some(bytes) = font.parsed_font.source_bytes() else {
            continue;
        };
        let Ok(cut) = subset_face(&bytes, &chars) else {
            continue;
        };
        let mut warnings = Vec::new();
        if let Some(parsed) = ParsedFont::from_bytes(&cut, 0, &mut warnings) {
            font.parsed_font = parsed;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const REGULAR: &[u8] = include_bytes!("../../assets/fonts/DejaVuSans.ttf");

    #[test]
    fn a_subset_maps_each_kept_character_to_a_glyph_of_the_same_width_and_drops_the_rest() {
        let chars: BTreeSet<char> = "Heat rise 4.2 °C ≥ µm ±".chars().collect();
        let cut = subset_face(REGULAR, &chars).unwrap();
        assert!(
            cut.len() * 20 < REGULAR.len(),
            "{} bytes of {}",
            cut.len(),
            REGULAR.len()
        );
        let mut w = Vec::new();
        let whole = ParsedFont::from_bytes(REGULAR, 0, &mut w).unwrap();
        let small = ParsedFont::from_bytes(&cut, 0, &mut w).unwrap();
        for c in chars {
            let (old, new) = (
                whole.lookup_glyph_index(u32::from(c)).unwrap(),
                small
                    .lookup_glyph_index(u32::from(c))
                    .unwrap_or_else(|| panic!("{c:?} kept")),
            );
            let width = whole.get_glyph_width(old);
            assert!(
                width.is_some() || c == ' ',
                "{c:?} has a width in the whole face"
            );
            assert_eq!(
                width,
                small.get_glyph_width(new),
                "{c:?} keeps its advance width"
            );
        }
        // A character not asked for is gone.
        assert_eq!(small.lookup_glyph_index(u32::from('Q')), None);
    }
}
