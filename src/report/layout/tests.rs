//! Tests of the page engine: measuring, wrapping, flowing and the frame.

use super::*;

use crate::report::{Mark, Paper};

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
    assert!(fonts.width(Face::Regular, 10.0, "iiii") < fonts.width(Face::Regular, 10.0, "mmmm"));
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
                assert!(b.x >= 0.0 && b.x + b.width <= w && b.top >= 0.0 && b.top + b.height <= h);
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
                let overlap_y = p.top < q.top + q.height / 1.25 && q.top < p.top + p.height / 1.25;
                assert!(!(overlap_x && overlap_y), "{p:?} overlaps {q:?}");
            }
        }
    }
}
