//! Charts of the unit page, drawn with plotters into a pixel buffer that becomes a
//! `slint::Image`.
//!
//! Takes values already converted to the shop's display units (see `gui::fmt`) and draws them:
//! the readings, the baseline band, the watch limit (dashed) and the act limit (solid, heavier),
//! and markers for events. Limits differ in line style and label as well as colour, and the
//! series of a multi-line chart differ in marker shape. No rule is decided here: every line
//! drawn comes from the health engine's series.

use std::sync::Once;

use chrono::{DateTime, Utc};
use plotters::coord::types::RangedCoordf64;
use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};
use slint::{Image, Rgb8Pixel, SharedPixelBuffer};

use crate::app::view::ChartSpec;
use crate::app::vocab::State;

/// The font shipped in `assets/fonts` (DejaVu Sans; licence beside it).
pub const FONT_REGULAR: &[u8] = include_bytes!("../../assets/fonts/DejaVuSans.ttf");
pub const FONT_BOLD: &[u8] = include_bytes!("../../assets/fonts/DejaVuSans-Bold.ttf");

const INK: RGBColor = RGBColor(0x1e, 0x25, 0x29);
const MUTED: RGBColor = RGBColor(0x5b, 0x64, 0x69);
const GRID: RGBColor = RGBColor(0xe6, 0xe1, 0xd6);
const BAND: RGBColor = RGBColor(0xd9, 0xe8, 0xdf);
const BASE: RGBColor = RGBColor(0x2f, 0x6b, 0x4f);
const WATCH: RGBColor = RGBColor(0xa8, 0x6a, 0x00);
const ACT: RGBColor = RGBColor(0x8e, 0x1b, 0x3a);
const EVENT: RGBColor = RGBColor(0x55, 0x5f, 0x8a);
const LINES: [RGBColor; 3] = [
    RGBColor(0x1f, 0x6f, 0x78),
    RGBColor(0x6a, 0x4c, 0x93),
    RGBColor(0x8c, 0x5e, 0x3c),
];

/// A chart as the application's presentation layer specifies it (`app::view::ChartSpec`),
/// with times as day numbers for the x axis.
struct ChartInput<'a> {
    spec: &'a ChartSpec,
    lines: Vec<(&'a str, Vec<(f64, f64)>)>,
    markers: Vec<(f64, &'a str)>,
    watch: Vec<(f64, &'a str)>,
    act: Vec<(f64, &'a str)>,
    targets: Vec<(f64, &'a str)>,
}

impl<'a> ChartInput<'a> {
    fn of(spec: &'a ChartSpec) -> Self {
        let level = |l: Option<State>| {
            spec.limits
                .iter()
                .filter(move |x| x.level == l)
                .map(|x| (x.value, x.label.as_str()))
                .collect()
        };
        ChartInput {
            spec,
            lines: spec
                .series
                .iter()
                .map(|s| {
                    (
                        s.label.as_str(),
                        s.points.iter().map(|p| (day_number(p.0), p.1)).collect(),
                    )
                })
                .collect(),
            markers: spec
                .events
                .iter()
                .map(|e| (day_number(e.at), e.what))
                .collect(),
            watch: level(Some(State::Watch)),
            act: level(Some(State::Act)),
            targets: level(None),
        }
    }
}

#[derive(Debug, thiserror::Error)]
#[error("cannot draw the chart: {0}")]
pub struct ChartError(String);

fn err<E: std::fmt::Debug>(e: E) -> ChartError {
    ChartError(format!("{e:?}"))
}

static FONTS: Once = Once::new();

/// Registers the shipped font with plotters (once per process); without it plotters cannot
/// draw any text.
pub fn register_fonts() {
    FONTS.call_once(|| {
        // A font that does not parse is a build defect; plotters then reports it at draw time.
        let _ = plotters::style::register_font("sans-serif", FontStyle::Normal, FONT_REGULAR);
        let _ = plotters::style::register_font("sans-serif", FontStyle::Bold, FONT_BOLD);
    });
}

/// Days since the Unix epoch, the x coordinate of every chart.
pub fn day_number(t: DateTime<Utc>) -> f64 {
    t.timestamp() as f64 / 86_400.0
}

fn date_label(day: f64) -> String {
    DateTime::<Utc>::from_timestamp((day * 86_400.0) as i64, 0)
        .map(|t| t.format("%d %b %y").to_string())
        .unwrap_or_default()
}

/// Draws the chart at `w`×`h` pixels.
pub fn render(spec: &ChartSpec, w: u32, h: u32) -> Result<Image, ChartError> {
    register_fonts();
    let input = ChartInput::of(spec);
    let input = &input;
    let mut buf = SharedPixelBuffer::<Rgb8Pixel>::new(w, h);
    {
        let backend = BitMapBackend::with_buffer(buf.make_mut_bytes(), (w, h));
        let root = backend.into_drawing_area();
        draw(&root, input)?;
        root.present().map_err(err)?;
    }
    Ok(Image::from_rgb8(buf))
}

fn x_range(input: &ChartInput<'_>) -> Option<(f64, f64)> {
    let xs = input
        .lines
        .iter()
        .flat_map(|l| l.1.iter().map(|p| p.0))
        .chain(input.markers.iter().map(|m| m.0));
    let (lo, hi) = xs.fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), x| {
        (a.min(x), b.max(x))
    });
    if !lo.is_finite() {
        return None;
    }
    let span = (hi - lo).max(7.0);
    Some((lo - span * 0.03, lo + span * 1.03))
}

fn y_range(input: &ChartInput<'_>) -> Option<(f64, f64)> {
    let mut ys: Vec<f64> = input
        .lines
        .iter()
        .flat_map(|l| l.1.iter().map(|p| p.1))
        .collect();
    if ys.is_empty() {
        return None;
    }
    if let Some(b) = &input.spec.band {
        ys.extend([b.low, b.high]);
    }
    ys.extend(input.watch.iter().map(|l| l.0));
    ys.extend(input.act.iter().map(|l| l.0));
    ys.extend(input.targets.iter().map(|l| l.0));
    let (lo, hi) = ys
        .iter()
        .filter(|v| v.is_finite())
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &y| {
            (a.min(y), b.max(y))
        });
    if !lo.is_finite() {
        return None;
    }
    let span = if hi - lo > 1e-9 {
        hi - lo
    } else {
        lo.abs().max(1.0) * 0.2
    };
    Some((lo - span * 0.12, hi + span * 0.16))
}

fn draw(
    root: &DrawingArea<BitMapBackend<'_>, Shift>,
    input: &ChartInput<'_>,
) -> Result<(), ChartError> {
    let spec = input.spec;
    root.fill(&WHITE).map_err(err)?;
    let title_style = ("sans-serif", 15)
        .into_font()
        .style(FontStyle::Bold)
        .color(&INK);
    let small = ("sans-serif", 11).into_font().color(&MUTED);
    let title = if spec.unit.is_empty() {
        spec.title.clone()
    } else {
        format!("{} ({})", spec.title, spec.unit)
    };
    root.draw(&Text::new(title, (10, 6), title_style))
        .map_err(err)?;

    let (Some((x0, x1)), Some((y0, y1))) = (x_range(input), y_range(input)) else {
        let (w, h) = root.dim_in_pixel();
        let centre = Pos::new(HPos::Center, VPos::Center);
        let text = if spec.empty_note.is_empty() {
            "no readings yet"
        } else {
            spec.empty_note.as_str()
        };
        root.draw(&Text::new(
            text.to_string(),
            (w as i32 / 2, h as i32 / 2),
            small.clone().pos(centre),
        ))
        .map_err(err)?;
        return Ok(());
    };

    let legend_y = 24;
    legend(root, input, legend_y)?;

    let mut chart = ChartBuilder::on(root)
        .margin_top(40)
        .margin_right(62)
        .margin_left(8)
        .margin_bottom(6)
        .x_label_area_size(22)
        .y_label_area_size(52)
        .build_cartesian_2d(x0..x1, y0..y1)
        .map_err(err)?;
    let fmt_x = |d: &f64| date_label(*d);
    let fmt_y = |v: &f64| axis_number(*v);
    chart
        .configure_mesh()
        .light_line_style(WHITE)
        .bold_line_style(GRID)
        .axis_style(MUTED)
        .x_labels(7)
        .y_labels(6)
        .x_label_formatter(&fmt_x)
        .y_label_formatter(&fmt_y)
        .label_style(("sans-serif", 11).into_font().color(&MUTED))
        .draw()
        .map_err(err)?;

    draw_guides(&mut chart, input, (x0, x1), (y0, y1))?;
    draw_readings(&mut chart, input)?;
    draw_labels(root, &chart, input, (x1, y1), &small)?;
    Ok(())
}

/// The plotting area of a chart: days across, the indicator's value up.
type Plot<'a, 'b> =
    ChartContext<'a, BitMapBackend<'b>, Cartesian2d<RangedCoordf64, RangedCoordf64>>;

/// What the readings are read against: the baseline band and line, the event markers and the
/// limit and target lines over the whole width `(x0, x1)` and height `(y0, y1)`.
fn draw_guides(
    chart: &mut Plot<'_, '_>,
    input: &ChartInput<'_>,
    (x0, x1): (f64, f64),
    (y0, y1): (f64, f64),
) -> Result<(), ChartError> {
    let spec = input.spec;
    // Baseline band and line
    if let Some(band) = &spec.band {
        if band.high > band.low {
            chart
                .draw_series(std::iter::once(Rectangle::new(
                    [(x0, band.low), (x1, band.high)],
                    BAND.filled(),
                )))
                .map_err(err)?;
        }
        if let Some(b) = band.centre {
            chart
                .draw_series(DashedLineSeries::new(
                    [(x0, b), (x1, b)],
                    2,
                    3,
                    BASE.stroke_width(1),
                ))
                .map_err(err)?;
        }
    }
    // Event markers
    for m in &input.markers {
        chart
            .draw_series(DashedLineSeries::new(
                [(m.0, y0), (m.0, y1)],
                3,
                3,
                EVENT.stroke_width(1),
            ))
            .map_err(err)?;
    }
    // Limits: watch dashed, act solid and heavier, targets dotted in the baseline's colour
    for &(v, _) in &input.targets {
        chart
            .draw_series(DashedLineSeries::new(
                [(x0, v), (x1, v)],
                2,
                4,
                BASE.stroke_width(1),
            ))
            .map_err(err)?;
    }
    for &(v, _) in &input.watch {
        chart
            .draw_series(DashedLineSeries::new(
                [(x0, v), (x1, v)],
                8,
                5,
                WATCH.stroke_width(2),
            ))
            .map_err(err)?;
    }
    for &(v, _) in &input.act {
        chart
            .draw_series(LineSeries::new([(x0, v), (x1, v)], ACT.stroke_width(3)))
            .map_err(err)?;
    }
    Ok(())
}

/// The readings, one line per series with its own marker shape.
fn draw_readings(chart: &mut Plot<'_, '_>, input: &ChartInput<'_>) -> Result<(), ChartError> {
    for (i, (_, points)) in input.lines.iter().enumerate() {
        let c = LINES[i % LINES.len()];
        chart
            .draw_series(LineSeries::new(points.iter().copied(), c.stroke_width(2)))
            .map_err(err)?;
        match i % 3 {
            0 => chart
                .draw_series(points.iter().map(|&p| Circle::new(p, 3, c.filled())))
                .map(|_| ())
                .map_err(err)?,
            1 => chart
                .draw_series(
                    points
                        .iter()
                        .map(|&p| TriangleMarker::new(p, 4, c.filled())),
                )
                .map(|_| ())
                .map_err(err)?,
            _ => {
                chart
                    .draw_series(points.iter().map(|&p| {
                        EmptyElement::at(p) + Rectangle::new([(-3, -3), (3, 3)], c.filled())
                    }))
                    .map(|_| ())
                    .map_err(err)?
            }
        }
    }

    Ok(())
}

/// The labels of the limit lines at the right edge `x1`, of the baseline, and of the event
/// markers along the top `y1`.
fn draw_labels(
    root: &DrawingArea<BitMapBackend<'_>, Shift>,
    chart: &Plot<'_, '_>,
    input: &ChartInput<'_>,
    (x1, y1): (f64, f64),
    small: &TextStyle<'_>,
) -> Result<(), ChartError> {
    let spec = input.spec;
    // Labels at the right edge of limit lines and the top of event markers, in pixels
    let area = chart.plotting_area();
    let label_at = |x: f64, y: f64| area.map_coordinate(&(x, y));
    let right = Pos::new(HPos::Left, VPos::Center);
    for &(v, label) in &input.watch {
        let (px, py) = label_at(x1, v);
        root.draw(&Text::new(
            label.to_string(),
            (px + 4, py),
            small.clone().color(&WATCH).pos(right),
        ))
        .map_err(err)?;
    }
    for &(v, label) in &input.act {
        let (px, py) = label_at(x1, v);
        let style = ("sans-serif", 11)
            .into_font()
            .style(FontStyle::Bold)
            .color(&ACT)
            .pos(right);
        root.draw(&Text::new(label.to_string(), (px + 4, py), style))
            .map_err(err)?;
    }
    if let Some(b) = spec.band.as_ref().and_then(|b| b.centre) {
        let (px, py) = label_at(x1, b);
        root.draw(&Text::new(
            "base".to_string(),
            (px + 4, py),
            small.clone().color(&BASE).pos(right),
        ))
        .map_err(err)?;
    }
    // Event labels along the top, skipping one that would run into the last drawn.
    let top = Pos::new(HPos::Left, VPos::Top);
    let mut free_from = i32::MIN;
    for &(at, label) in &input.markers {
        let (px, py) = label_at(at, y1);
        let width = label.chars().count() as i32 * 7;
        if px + 2 < free_from {
            continue;
        }
        root.draw(&Text::new(
            label.to_string(),
            (px + 2, py + 2),
            small.clone().color(&EVENT).pos(top),
        ))
        .map_err(err)?;
        free_from = px + 2 + width + 4;
    }
    Ok(())
}

fn legend(
    root: &DrawingArea<BitMapBackend<'_>, Shift>,
    input: &ChartInput<'_>,
    y: i32,
) -> Result<(), ChartError> {
    let small = ("sans-serif", 11).into_font().color(&MUTED);
    let left = Pos::new(HPos::Left, VPos::Center);
    let mut x = 12;
    for (i, (line_label, _)) in input.lines.iter().enumerate() {
        let c = LINES[i % LINES.len()];
        root.draw(&PathElement::new(
            vec![(x, y), (x + 16, y)],
            c.stroke_width(2),
        ))
        .map_err(err)?;
        match i % 3 {
            0 => root
                .draw(&Circle::new((x + 8, y), 3, c.filled()))
                .map_err(err)?,
            1 => root
                .draw(&TriangleMarker::new((x + 8, y), 4, c.filled()))
                .map_err(err)?,
            _ => root
                .draw(&Rectangle::new(
                    [(x + 5, y - 3), (x + 11, y + 3)],
                    c.filled(),
                ))
                .map_err(err)?,
        }
        let label = if line_label.is_empty() {
            "reading".to_string()
        } else {
            line_label.to_string()
        };
        let w = (label.chars().count() as i32) * 7 + 30;
        root.draw(&Text::new(label, (x + 20, y), small.clone().pos(left)))
            .map_err(err)?;
        x += w;
    }
    if let Some(band) = &input.spec.band {
        root.draw(&Rectangle::new(
            [(x, y - 5), (x + 16, y + 5)],
            BAND.filled(),
        ))
        .map_err(err)?;
        let w = (band.label.chars().count() as i32) * 7 + 26;
        root.draw(&Text::new(
            band.label.clone(),
            (x + 20, y),
            small.clone().pos(left),
        ))
        .map_err(err)?;
        x += w;
    }
    if !input.watch.is_empty() {
        root.draw(&PathElement::new(
            vec![(x, y), (x + 7, y)],
            WATCH.stroke_width(2),
        ))
        .map_err(err)?;
        root.draw(&PathElement::new(
            vec![(x + 11, y), (x + 18, y)],
            WATCH.stroke_width(2),
        ))
        .map_err(err)?;
        root.draw(&Text::new(
            "watch".to_string(),
            (x + 22, y),
            small.clone().pos(left),
        ))
        .map_err(err)?;
        x += 70;
    }
    if !input.act.is_empty() {
        root.draw(&PathElement::new(
            vec![(x, y), (x + 18, y)],
            ACT.stroke_width(3),
        ))
        .map_err(err)?;
        root.draw(&Text::new(
            "act".to_string(),
            (x + 22, y),
            small.clone().pos(left),
        ))
        .map_err(err)?;
        x += 56;
    }
    if !input.markers.is_empty() {
        root.draw(&PathElement::new(
            vec![(x + 6, y - 6), (x + 6, y + 6)],
            EVENT.stroke_width(1),
        ))
        .map_err(err)?;
        root.draw(&Text::new(
            "event".to_string(),
            (x + 12, y),
            small.pos(left),
        ))
        .map_err(err)?;
    }
    Ok(())
}

/// A tick or limit value with as many decimals as its size needs.
fn axis_number(v: f64) -> String {
    let a = v.abs();
    if a < 1e-9 {
        "0".into()
    } else if a >= 100.0 {
        format!("{v:.0}")
    } else if a >= 10.0 {
        format!("{v:.1}")
    } else if a >= 1.0 {
        format!("{v:.2}")
    } else {
        format!("{v:.3}")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn input() -> ChartSpec {
        use crate::app::view::{BandSpec, EventSpec, LimitSpec, SeriesSpec};
        let day = |d: i64| DateTime::<Utc>::from_timestamp(d * 86_400, 0).unwrap();
        ChartSpec {
            key: "effective_flow",
            title: "Effective flow".into(),
            unit: "L/min".into(),
            series: vec![SeriesSpec {
                label: String::new(),
                points: vec![
                    (day(19_000), 40.0),
                    (day(19_007), 39.0),
                    (day(19_014), 36.5),
                ],
            }],
            band: Some(BandSpec {
                low: 38.4,
                high: 41.6,
                centre: Some(40.0),
                label: "baseline ± 2σ".into(),
            }),
            limits: vec![
                LimitSpec {
                    value: 36.8,
                    level: Some(State::Watch),
                    label: "watch 36.8".into(),
                },
                LimitSpec {
                    value: 34.0,
                    level: Some(State::Act),
                    label: "act 34".into(),
                },
            ],
            events: vec![EventSpec {
                at: day(19_010),
                code: "FL",
                what: "filter change",
            }],
            empty_note: String::new(),
            note: String::new(),
        }
    }

    #[test]
    fn draws_readings_limits_and_band_in_their_colours() {
        let img = render(&input(), 400, 220).unwrap();
        let px = img.to_rgb8().unwrap();
        let has = |c: RGBColor| {
            px.as_slice()
                .iter()
                .any(|p| p.r == c.0 && p.g == c.1 && p.b == c.2)
        };
        assert!(has(LINES[0]), "reading line drawn");
        assert!(has(ACT), "act limit drawn");
        assert!(has(WATCH), "watch limit drawn");
        assert!(has(BAND), "baseline band drawn");
    }

    #[test]
    fn nothing_to_draw_still_gives_an_image_with_its_note() {
        let mut i = input();
        i.series.clear();
        i.events.clear();
        i.empty_note = "no samples in this era".into();
        let img = render(&i, 300, 160).unwrap();
        let px = img.to_rgb8().unwrap();
        // Only text on white: some dark pixels (the note and the title), no limit colours.
        assert!(px.as_slice().iter().any(|p| p.r < 0x80));
        assert!(!px
            .as_slice()
            .iter()
            .any(|p| p.r == ACT.0 && p.g == ACT.1 && p.b == ACT.2));
    }

    #[test]
    fn axis_numbers_keep_three_figures() {
        assert_eq!(axis_number(123.4), "123");
        assert_eq!(axis_number(36.84), "36.8");
        assert_eq!(axis_number(1.25), "1.25");
        assert_eq!(axis_number(0.1234), "0.123");
    }
}
