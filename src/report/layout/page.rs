//! Page: colours, strokes and one page's drawing primitives (text, lines, shapes, clips, state
//! marks) in top-left points. It must not flow content across pages.

use super::*;
use printpdf::{
    Color, Greyscale, Line, LineDashPattern, LinePoint, Op, PaintMode, Point, Polygon, PolygonRing,
    Pt, Rect, Rgb, TextItem, WindingOrder,
};

use crate::report::Mark;

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
