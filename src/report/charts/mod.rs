//! Vector time charts for the unit pages, drawn with printpdf's own lines and shapes: one or
//! more series over the report period, the baseline band, limit lines and event marks, with
//! a legend that tells series and lines apart by marker shape and dash, not by colour alone.
//!
//! Values arrive already in display units; the chart only scales and draws them. It must not
//! compute indicators, limits or states.
//!
//! The axes' ticks are in `ticks`.

use chrono::{DateTime, Duration, NaiveDate, Utc};

use super::layout::{size, Face, Fonts, Page, Rgbf, Stroke, BLACK, DARK, FAINT, LIGHT, MID, WHITE};
use super::{days_since, Mark};

mod ticks;

use ticks::format_tick;
pub use ticks::{date_ticks, nice_ticks};

/// One chart: a titled plot of values against dates.
#[derive(Clone, Debug, PartialEq)]
pub struct Chart {
    pub title: String,
    /// Unit of the values, printed after the title (e.g. "%", "K", "cSt", "ISO 4406 scale").
    pub unit: String,
    pub from: NaiveDate,
    pub to: NaiveDate,
    pub series: Vec<Series>,
    pub band: Option<Band>,
    pub limits: Vec<LimitLine>,
    pub events: Vec<EventMark>,
    /// Printed in the plot when no series has a point.
    pub empty_note: String,
}

/// A line of values.
#[derive(Clone, Debug, PartialEq)]
pub struct Series {
    pub label: String,
    /// Oldest first.
    pub points: Vec<(DateTime<Utc>, f64)>,
}

/// The baseline band of normal variation.
#[derive(Clone, Debug, PartialEq)]
pub struct Band {
    pub low: f64,
    pub high: f64,
    /// The baseline value itself, drawn as a thin line inside the band.
    pub centre: Option<f64>,
    pub label: String,
}

/// A horizontal limit line.
#[derive(Clone, Debug, PartialEq)]
pub struct LimitLine {
    pub value: f64,
    /// `Watch` or `Act` for a limit; `None` (or `Steady`) for a reference line such as a
    /// target. Sets the dash pattern.
    pub level: Mark,
    /// Printed beside the line, e.g. "act 15".
    pub label: String,
}

/// Something done to the unit (fluid change, filter change, rebuild), as a vertical mark.
#[derive(Clone, Debug, PartialEq)]
pub struct EventMark {
    pub at: DateTime<Utc>,
    /// One or two letters printed on the mark.
    pub code: String,
    /// Legend text, e.g. "fluid change 12 Feb".
    pub label: String,
}

const SERIES_COLOURS: [Rgbf; 4] = [
    Rgbf(0.10, 0.25, 0.55),
    Rgbf(0.12, 0.45, 0.20),
    Rgbf(0.50, 0.18, 0.50),
    Rgbf(0.45, 0.30, 0.05),
];
const WATCH_COLOUR: Rgbf = Rgbf(0.80, 0.50, 0.0);
const ACT_COLOUR: Rgbf = Rgbf(0.75, 0.08, 0.08);
const BAND_COLOUR: Rgbf = Rgbf(0.86, 0.90, 0.96);

fn series_stroke(i: usize) -> Stroke {
    let c = SERIES_COLOURS[i % SERIES_COLOURS.len()];
    match i % 4 {
        0 => Stroke::solid(0.9, c),
        1 => Stroke::dashed(0.9, c, &[3.0, 1.5]),
        2 => Stroke::dashed(0.9, c, &[0.8, 1.2]),
        _ => Stroke::dashed(0.9, c, &[4.0, 1.0, 1.0, 1.0]),
    }
}

fn limit_stroke(level: Mark) -> Stroke {
    match level {
        Mark::Act => Stroke::dashed(1.0, ACT_COLOUR, &[5.0, 1.5, 1.0, 1.5]),
        Mark::Watch => Stroke::dashed(0.8, WATCH_COLOUR, &[2.5, 1.5]),
        // A reference such as a cleanliness target: thin, long dashes, grey.
        Mark::Steady | Mark::None => Stroke::dashed(0.6, DARK, &[6.0, 2.0]),
    }
}

fn limit_label_colour(level: Mark) -> Rgbf {
    match level {
        Mark::Act => ACT_COLOUR,
        Mark::Watch => Rgbf(0.55, 0.35, 0.0),
        Mark::Steady | Mark::None => DARK,
    }
}

/// Marker of series `i`: circle, square, triangle, cross.
fn marker(page: &mut Page, i: usize, cx: f32, cy: f32, r: f32) {
    let c = SERIES_COLOURS[i % SERIES_COLOURS.len()];
    let outline = Stroke::solid(0.5, c);
    match i % 4 {
        0 => {
            let pts: Vec<(f32, f32)> = (0..12)
                .map(|k| {
                    let a = k as f32 / 12.0 * std::f32::consts::TAU;
                    (cx + r * a.cos(), cy + r * a.sin())
                })
                .collect();
            page.shape(&pts, Some(c), Some(&outline));
        }
        1 => page.rect(
            cx - r,
            cy - r,
            2.0 * r,
            2.0 * r,
            Some(WHITE),
            Some(&outline),
        ),
        2 => page.shape(
            &[
                (cx, cy - r * 1.2),
                (cx + r * 1.1, cy + r * 0.8),
                (cx - r * 1.1, cy + r * 0.8),
            ],
            Some(c),
            Some(&outline),
        ),
        _ => {
            page.line(cx - r, cy - r, cx + r, cy + r, &outline);
            page.line(cx - r, cy + r, cx + r, cy - r, &outline);
        }
    }
}

/// A legend entry.
enum Key<'a> {
    Series(usize, &'a str),
    Band(&'a str),
    Event(&'a str, &'a str),
}

const KEY_SWATCH: f32 = 11.0;

fn key_width(fonts: &Fonts, key: &Key) -> f32 {
    let text = match key {
        Key::Series(_, s) | Key::Band(s) => s.to_string(),
        Key::Event(code, s) => format!("{code} {s}"),
    };
    KEY_SWATCH + 2.0 + fonts.width(Face::Regular, size::TINY, &text) + 6.0
}

fn legend_keys(chart: &Chart) -> Vec<Key<'_>> {
    let mut keys: Vec<Key> = Vec::new();
    if chart.series.len() > 1 {
        keys.extend(
            chart
                .series
                .iter()
                .enumerate()
                .map(|(i, s)| Key::Series(i, s.label.as_str())),
        );
    }
    if let Some(b) = &chart.band {
        keys.push(Key::Band(&b.label));
    }
    // Limit lines are labelled where they end, in the gutter; the legend does not repeat them.
    let mut seen: Vec<(&str, &str)> = Vec::new();
    for e in &chart.events {
        if !seen.contains(&(e.code.as_str(), e.label.as_str())) {
            seen.push((&e.code, &e.label));
            keys.push(Key::Event(&e.code, &e.label));
        }
    }
    keys
}

/// Splits legend keys into lines that fit `width`; an entry wider than a line gets a line.
fn legend_lines<'a>(fonts: &Fonts, keys: Vec<Key<'a>>, width: f32) -> Vec<Vec<Key<'a>>> {
    let mut lines: Vec<Vec<Key>> = Vec::new();
    let mut used = 0.0;
    for k in keys {
        let w = key_width(fonts, &k);
        if lines.is_empty() || used + w > width {
            lines.push(Vec::new());
            used = 0.0;
        }
        used += w;
        if let Some(l) = lines.last_mut() {
            l.push(k);
        }
    }
    lines
}

const LEGEND_LINE: f32 = size::TINY * 1.35;

/// Draws `chart` into the box with top-left (`x`, `top`), `w` × `h` points.
pub fn draw(page: &mut Page, fonts: &Fonts, chart: &Chart, x: f32, top: f32, w: f32, h: f32) {
    let title = if chart.unit.is_empty() {
        chart.title.clone()
    } else {
        format!("{} ({})", chart.title, chart.unit)
    };
    let title = fonts.fit(Face::Bold, size::SMALL, &title, w);
    page.text(
        fonts,
        Face::Bold,
        size::SMALL,
        BLACK,
        x,
        top + size::SMALL,
        &title,
    );

    let legend = legend_lines(fonts, legend_keys(chart), w);
    let (plot, ticks) = plot_area(fonts, chart, x, top, w, h, legend.len());
    value_grid(page, fonts, &plot, &ticks);
    date_axis(page, fonts, chart, &plot, x, w);
    let any_point = contents(page, chart, &plot);
    event_tabs(page, fonts, chart, &plot);
    limit_labels(page, fonts, chart, &plot);
    if !any_point {
        let note = fonts.fit(
            Face::Regular,
            size::SMALL,
            &chart.empty_note,
            plot.width - 4.0,
        );
        page.text_centred(
            fonts,
            Face::Regular,
            size::SMALL,
            DARK,
            plot.left + plot.width / 2.0,
            plot.top + plot.height / 2.0,
            &note,
        );
    }
    draw_legend(page, fonts, legend, &plot, x, w);
}

/// Where a chart's plot sits on the page and what it shows: the box, the value range and the
/// period, mapped to page coordinates by [`Plot::px`] and [`Plot::py`].
#[derive(Clone, Copy)]
struct Plot {
    /// The plot's box on the page, points.
    left: f32,
    right: f32,
    width: f32,
    top: f32,
    bottom: f32,
    height: f32,
    /// The value range shown, bottom to top.
    lo: f64,
    hi: f64,
    /// The first day shown and how many days the period spans.
    from: NaiveDate,
    span_days: f64,
}

impl Plot {
    /// The page x of an instant.
    fn px(&self, at: DateTime<Utc>) -> f32 {
        self.left + (days_since(self.from, at) / self.span_days) as f32 * self.width
    }

    /// The page y of a value.
    fn py(&self, v: f64) -> f32 {
        self.bottom - ((v - self.lo) / (self.hi - self.lo)) as f32 * self.height
    }
}

/// The plot's box and scales, leaving room for the value labels on the left, the limit labels
/// on the right, the title above and `legend_lines` lines of legend below; with the value
/// ticks and their labels.
fn plot_area(
    fonts: &Fonts,
    chart: &Chart,
    x: f32,
    top: f32,
    w: f32,
    h: f32,
    legend_lines: usize,
) -> (Plot, Vec<(f64, String)>) {
    // Value range over everything drawn, so no point, band or limit falls off the plot.
    let mut values: Vec<f64> = chart
        .series
        .iter()
        .flat_map(|s| s.points.iter().map(|p| p.1))
        .collect();
    if let Some(b) = &chart.band {
        values.extend([b.low, b.high]);
    }
    values.extend(chart.limits.iter().map(|l| l.value));
    values.retain(|v| v.is_finite());
    let (vmin, vmax) = values
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), v| {
            (a.min(*v), b.max(*v))
        });
    let (vmin, vmax) = if values.is_empty() {
        (0.0, 1.0)
    } else {
        (vmin, vmax)
    };
    let pad = (vmax - vmin) * 0.06;
    let (lo, hi, ticks, decimals) = nice_ticks(vmin - pad, vmax + pad, 4);
    let tick_labels: Vec<String> = ticks.iter().map(|t| format_tick(*t, decimals)).collect();
    let y_label_w = tick_labels
        .iter()
        .map(|s| fonts.width(Face::Regular, size::TINY, s))
        .fold(0.0f32, f32::max);
    let limit_label_w = chart
        .limits
        .iter()
        .map(|l| fonts.width(Face::Regular, size::TINY, &l.label))
        .fold(0.0f32, f32::max);

    let plot_x = x + y_label_w + 3.0;
    let plot_r = x + w
        - if limit_label_w > 0.0 {
            limit_label_w + 3.0
        } else {
            2.0
        };
    let plot_w = (plot_r - plot_x).max(10.0);
    // Room for the title and for the top tick label, which stands half above its line.
    let plot_top = top + size::SMALL * 1.4 + size::TINY * 0.7;
    let plot_bottom = top + h - size::TINY * 1.6 - legend_lines as f32 * LEGEND_LINE;
    let plot_h = (plot_bottom - plot_top).max(10.0);

    // The period runs to the end of its last day.
    let span_days = days_since(
        chart.from,
        (chart.to + Duration::days(1))
            .and_hms_opt(0, 0, 0)
            .map(|d| d.and_utc())
            .unwrap_or_default(),
    )
    .max(1.0);
    let plot = Plot {
        left: plot_x,
        right: plot_r,
        width: plot_w,
        top: plot_top,
        bottom: plot_bottom,
        height: plot_h,
        lo,
        hi,
        from: chart.from,
        span_days,
    };
    (plot, ticks.into_iter().zip(tick_labels).collect())
}

/// The plot's white box and its value grid with the labels on the left.
fn value_grid(page: &mut Page, fonts: &Fonts, plot: &Plot, ticks: &[(f64, String)]) {
    let py = |v: f64| plot.py(v);
    page.rect(
        plot.left,
        plot.top,
        plot.width,
        plot.height,
        Some(WHITE),
        None,
    );
    for (t, label) in ticks {
        let y = py(*t);
        page.line(plot.left, y, plot.right, y, &Stroke::solid(0.3, FAINT));
        page.text_right(
            fonts,
            Face::Regular,
            size::TINY,
            DARK,
            plot.left - 2.0,
            y + size::TINY * 0.35,
            label,
        );
    }
}

/// The date axis: a tick and a faint line at each date, the labels that fit.
fn date_axis(page: &mut Page, fonts: &Fonts, chart: &Chart, plot: &Plot, x: f32, w: f32) {
    let px = |at: DateTime<Utc>| plot.px(at);
    let mut label_end = f32::NEG_INFINITY;
    for (d, label) in date_ticks(fonts, chart.from, chart.to, plot.width) {
        let at = d
            .and_hms_opt(0, 0, 0)
            .map(|t| t.and_utc())
            .unwrap_or_default();
        let tx = px(at);
        page.line(
            tx,
            plot.bottom,
            tx,
            plot.bottom + 2.0,
            &Stroke::solid(0.4, MID),
        );
        page.line(tx, plot.top, tx, plot.bottom, &Stroke::solid(0.2, FAINT));
        let lw = fonts.width(Face::Regular, size::TINY, &label);
        // Kept clear of the value labels on the left and inside the box on the right.
        let lx = (tx - lw / 2.0).max(plot.left - 1.0).min(x + w - lw);
        // A label pushed against its neighbour is left out; its tick stays.
        if lx < label_end + 3.0 {
            continue;
        }
        label_end = lx + lw;
        page.text(
            fonts,
            Face::Regular,
            size::TINY,
            DARK,
            lx,
            plot.bottom + 2.0 + size::TINY,
            &label,
        );
    }
}

/// Inside the plot: the baseline band, the limits, the event lines and the series; whether
/// any point was drawn.
fn contents(page: &mut Page, chart: &Chart, plot: &Plot) -> bool {
    let px = |at: DateTime<Utc>| plot.px(at);
    let py = |v: f64| plot.py(v);
    page.clip(plot.left, plot.top, plot.width, plot.height);
    if let Some(b) = &chart.band {
        let (y1, y2) = (py(b.high), py(b.low));
        page.rect(
            plot.left,
            y1,
            plot.width,
            (y2 - y1).max(0.5),
            Some(BAND_COLOUR),
            None,
        );
        if let Some(c) = b.centre {
            page.line(
                plot.left,
                py(c),
                plot.right,
                py(c),
                &Stroke::solid(0.5, MID),
            );
        }
    }
    for l in &chart.limits {
        page.line(
            plot.left,
            py(l.value),
            plot.right,
            py(l.value),
            &limit_stroke(l.level),
        );
    }
    for e in &chart.events {
        let ex = px(e.at);
        page.line(
            ex,
            plot.top,
            ex,
            plot.bottom,
            &Stroke::dashed(0.6, DARK, &[1.0, 1.5]),
        );
    }
    let mut any_point = false;
    for (i, s) in chart.series.iter().enumerate() {
        let pts: Vec<(f32, f32)> = s
            .points
            .iter()
            .filter(|p| p.1.is_finite())
            .map(|p| (px(p.0), py(p.1)))
            .collect();
        any_point |= !pts.is_empty();
        page.polyline(&pts, &series_stroke(i));
        let r = if pts.len() > 40 { 1.0 } else { 1.5 };
        for (cx, cy) in &pts {
            marker(page, i, *cx, *cy, r);
        }
    }
    page.unclip();

    any_point
}

/// Event codes on a white tab at the top of their line, and the plot's frame.
fn event_tabs(page: &mut Page, fonts: &Fonts, chart: &Chart, plot: &Plot) {
    let px = |at: DateTime<Utc>| plot.px(at);
    for e in &chart.events {
        let ex = px(e.at);
        if ex < plot.left - 0.5 || ex > plot.right + 0.5 {
            continue;
        }
        let cw = fonts.width(Face::Bold, size::TINY, &e.code) + 2.0;
        page.rect(
            ex - cw / 2.0,
            plot.top + 0.5,
            cw,
            size::TINY * 1.2,
            Some(WHITE),
            Some(&Stroke::solid(0.3, DARK)),
        );
        page.text_centred(
            fonts,
            Face::Bold,
            size::TINY,
            BLACK,
            ex,
            plot.top + 0.5 + size::TINY,
            &e.code,
        );
    }
    page.rect(
        plot.left,
        plot.top,
        plot.width,
        plot.height,
        None,
        Some(&Stroke::solid(0.5, MID)),
    );
}

/// Limit labels in the right gutter, pushed apart when two limits are close.
fn limit_labels(page: &mut Page, fonts: &Fonts, chart: &Chart, plot: &Plot) {
    let py = |v: f64| plot.py(v);
    let mut label_ys: Vec<(f32, &LimitLine)> =
        chart.limits.iter().map(|l| (py(l.value), l)).collect();
    label_ys.sort_by(|a, b| a.0.total_cmp(&b.0));
    let mut last = f32::NEG_INFINITY;
    for (y, l) in label_ys {
        let base = (y + size::TINY * 0.35)
            .max(last + size::TINY * 1.1)
            .clamp(plot.top + size::TINY, plot.bottom + size::TINY);
        let col = limit_label_colour(l.level);
        page.text(
            fonts,
            Face::Regular,
            size::TINY,
            col,
            plot.right + 2.0,
            base,
            &l.label,
        );
        last = base;
    }
}

/// The legend under the plot, a line of keys at a time.
fn draw_legend(page: &mut Page, fonts: &Fonts, legend: Vec<Vec<Key>>, plot: &Plot, x: f32, w: f32) {
    let mut ly = plot.bottom + size::TINY * 1.6 + size::TINY;
    for line in legend {
        let mut lx = x;
        for key in line {
            let sw_y = ly - size::TINY * 0.35;
            let text = match &key {
                Key::Series(i, label) => {
                    page.line(lx, sw_y, lx + KEY_SWATCH, sw_y, &series_stroke(*i));
                    marker(page, *i, lx + KEY_SWATCH / 2.0, sw_y, 1.5);
                    label.to_string()
                }
                Key::Band(label) => {
                    page.rect(
                        lx,
                        sw_y - 2.5,
                        KEY_SWATCH,
                        5.0,
                        Some(BAND_COLOUR),
                        Some(&Stroke::solid(0.3, LIGHT)),
                    );
                    page.line(lx, sw_y, lx + KEY_SWATCH, sw_y, &Stroke::solid(0.5, MID));
                    label.to_string()
                }
                Key::Event(code, label) => {
                    page.text(fonts, Face::Bold, size::TINY, BLACK, lx + 2.0, ly, code);
                    label.to_string()
                }
            };
            let text = fonts.fit(
                Face::Regular,
                size::TINY,
                &text,
                (x + w - lx - KEY_SWATCH - 2.0).max(4.0),
            );
            page.text(
                fonts,
                Face::Regular,
                size::TINY,
                DARK,
                lx + KEY_SWATCH + 2.0,
                ly,
                &text,
            );
            lx += key_width(fonts, &key);
        }
        ly += LEGEND_LINE;
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use chrono::TimeZone;

    fn at(y: i32, m: u32, d: u32) -> DateTime<Utc> {
        Utc.with_ymd_and_hms(y, m, d, 8, 0, 0).unwrap()
    }

    fn chart() -> Chart {
        Chart {
            title: "Lost flow".into(),
            unit: "%".into(),
            from: NaiveDate::from_ymd_opt(2024, 1, 1).unwrap(),
            to: NaiveDate::from_ymd_opt(2024, 6, 30).unwrap(),
            series: vec![Series {
                label: "lost flow".into(),
                points: vec![(at(2024, 1, 8), 1.0), (at(2024, 6, 24), 12.0)],
            }],
            band: Some(Band {
                low: -2.0,
                high: 2.0,
                centre: Some(0.0),
                label: "baseline band".into(),
            }),
            limits: vec![
                LimitLine {
                    value: 8.0,
                    level: Mark::Watch,
                    label: "watch 8".into(),
                },
                LimitLine {
                    value: 15.0,
                    level: Mark::Act,
                    label: "act 15".into(),
                },
            ],
            events: vec![EventMark {
                at: at(2024, 3, 1),
                code: "F".into(),
                label: "fluid change 1 Mar".into(),
            }],
            empty_note: "no checks in this period".into(),
        }
    }

    #[test]
    fn a_chart_draws_its_limits_band_events_and_legend_inside_its_box() {
        let fonts = Fonts::load().unwrap();
        let mut page = Page::new(600.0, 800.0);
        let (x, top, w, h) = (50.0, 100.0, 250.0, 120.0);
        draw(&mut page, &fonts, &chart(), x, top, w, h);
        for b in &page.text_boxes {
            assert!(b.x >= x - 0.01 && b.x + b.width <= x + w + 0.01, "{b:?}");
            assert!(
                b.top >= top - 0.01 && b.top + b.height <= top + h + 2.0,
                "{b:?}"
            );
        }
        let texts: Vec<&str> = page.text_boxes.iter().map(|b| b.text.as_str()).collect();
        for t in [
            "Lost flow (%)",
            "watch 8",
            "act 15",
            "F",
            "fluid change 1 Mar",
            "baseline band",
        ] {
            assert!(texts.contains(&t), "{t} missing from {texts:?}");
        }
        // Two limit lines and the band and points are drawn as vector operations.
        let lines = page
            .ops
            .iter()
            .filter(|o| matches!(o, printpdf::Op::DrawLine { .. }))
            .count();
        let shapes = page
            .ops
            .iter()
            .filter(|o| matches!(o, printpdf::Op::DrawPolygon { .. }))
            .count();
        assert!(lines >= 5, "{lines} lines");
        assert!(shapes >= 3, "{shapes} shapes");
    }

    #[test]
    fn no_two_labels_of_a_chart_overlap_and_the_last_day_is_inside() {
        let fonts = Fonts::load().unwrap();
        let mut c = chart();
        // A period that starts mid-month, as a default period does.
        c.from = NaiveDate::from_ymd_opt(2026, 8, 28).unwrap();
        c.to = NaiveDate::from_ymd_opt(2026, 11, 27).unwrap();
        c.series[0].points = vec![(at(2026, 8, 28), 1.0), (at(2026, 11, 27), 12.0)];
        c.events[0].at = at(2026, 10, 23);
        for w in [180.0, 250.0, 400.0] {
            let mut page = Page::new(600.0, 800.0);
            draw(&mut page, &fonts, &c, 50.0, 100.0, w, 110.0);
            let b = &page.text_boxes;
            for i in 0..b.len() {
                for j in i + 1..b.len() {
                    let (p, q) = (&b[i], &b[j]);
                    let ox = p.x < q.x + q.width && q.x < p.x + p.width;
                    let oy = p.top < q.top + q.height / 1.25 && q.top < p.top + p.height / 1.25;
                    assert!(!(ox && oy), "width {w}: {p:?} overlaps {q:?}");
                }
            }
        }
    }

    #[test]
    fn an_empty_chart_says_so() {
        let fonts = Fonts::load().unwrap();
        let mut c = chart();
        c.series[0].points.clear();
        let mut page = Page::new(600.0, 800.0);
        draw(&mut page, &fonts, &c, 50.0, 100.0, 250.0, 120.0);
        assert!(page
            .text_boxes
            .iter()
            .any(|b| b.text == "no checks in this period"));
    }
}
