//! Unit page adapter: identity, era and baseline, tiles, flags and their acknowledgement,
//! charts, and the history tables with corrections (who and why asked for every change).

use std::cell::Cell;
use std::collections::HashMap;
use std::rc::Rc;

use slint::language::{StandardListViewItem, TableColumn};
use slint::{ComponentHandle, Model, ModelRc, VecModel};

use super::charts::{self, ChartInput, Line, Marker};
use super::fmt::{dim_text, dim_unit, dim_value, slope_text, state_num};
use super::ui::{
    ChartData, ChartRow, FlagData, FormField, KeyVal, Nav, TileData, TileRow, UnitAdapter,
};
use super::{err_text, form_rows, mark_problems, model, problems_line, s, strings, Ctx, Screen};
use crate::app::confirm::{self, ConfirmAction, ReadingKind};
use crate::app::entry::{self, Entered, Field, Reading, SaveOutcome, UnitView};
use crate::app::status;
use crate::health::baseline::{BaselineIndicator, BaselineSource};
use crate::health::indicators::{Dim, Direction, Series};
use crate::health::screen::Record;
use crate::health::{NotJudged, State, SuspectReading, Tile};
use crate::model::EventKind;
use crate::quantity::Kind;
use crate::units::UnitSystem;

const CHART_W: u32 = 516;
const CHART_H: u32 = 262;

#[derive(Default)]
pub(crate) struct UnitState {
    /// Unit ids in the order of the unit chooser.
    choices: Vec<i64>,
    view: Option<Rc<UnitView>>,
    /// Reading ids of the rows of the history table shown.
    row_ids: Vec<i64>,
    table: Option<Reading>,
    selected: Option<(Reading, i64)>,
    /// The selected reading's edit mark when its form was filled (`entry::reading_mark`): a
    /// save is refused, naming who and when, if someone else corrected it since.
    selected_mark: Option<i64>,
    fields: Vec<Field>,
    entered: Entered,
}

pub(super) fn install(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<UnitAdapter>();
    let c = Rc::downgrade(ctx);
    a.on_choose_unit(move |i| {
        if let Some(ctx) = c.upgrade() {
            let id = ctx.unit.borrow().choices.get(i as usize).copied();
            if let Some(id) = id {
                open(&ctx, id);
            }
        }
    });
    let c = Rc::downgrade(ctx);
    a.on_acknowledge(move || {
        if let Some(ctx) = c.upgrade() {
            acknowledge(&ctx);
        }
    });
    let c = Rc::downgrade(ctx);
    a.on_choose_table(move |i| {
        if let Some(ctx) = c.upgrade() {
            fill_table(&ctx, table_of(i));
        }
    });
    let c = Rc::downgrade(ctx);
    a.on_select_row(move |r| {
        if let Some(ctx) = c.upgrade() {
            select_row(&ctx, r);
        }
    });
    let c = Rc::downgrade(ctx);
    a.on_edit_field(move |i, t| {
        if let Some(ctx) = c.upgrade() {
            let mut st = ctx.unit.borrow_mut();
            if let Some(key) = st.fields.get(i as usize).map(|f| f.key.clone()) {
                st.entered.set(&key, t.as_str());
            }
        }
    });
    let c = Rc::downgrade(ctx);
    a.on_save_edit(move || {
        if let Some(ctx) = c.upgrade() {
            save_edit(&ctx);
        }
    });
    let c = Rc::downgrade(ctx);
    a.on_delete_row(move || {
        if let Some(ctx) = c.upgrade() {
            delete_row(&ctx);
        }
    });
    let c = Rc::downgrade(ctx);
    a.on_confirm_row(move || {
        if let Some(ctx) = c.upgrade() {
            confirm_row(&ctx, true);
        }
    });
    let c = Rc::downgrade(ctx);
    a.on_lift_row(move || {
        if let Some(ctx) = c.upgrade() {
            confirm_row(&ctx, false);
        }
    });
}

fn table_of(i: i32) -> Reading {
    match i {
        1 => Reading::Sample,
        2 => Reading::Event,
        _ => Reading::Check,
    }
}

/// Opens the page of a unit and shows it.
pub(crate) fn open(ctx: &Rc<Ctx>, unit_id: i64) {
    ctx.unit_id.set(Some(unit_id));
    if let Some(w) = ctx.win() {
        let a = w.global::<UnitAdapter>();
        a.set_ack_index(-1);
        a.set_ack_message(s(""));
        a.set_edit_message(s(""));
    }
    ctx.unit.borrow_mut().selected = None;
    refresh(ctx);
    if let Some(w) = ctx.win() {
        w.global::<Nav>().set_screen(Screen::Unit as i32);
    }
}

pub(super) fn refresh(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<UnitAdapter>();
    let sys = ctx.system.get();
    // The chooser: every unit in route order.
    let stops = super::route(ctx).unwrap_or_default();
    if ctx.unit_id.get().is_none() {
        ctx.unit_id.set(super::fleet::first_unit(ctx));
    }
    let Some(unit_id) = ctx.unit_id.get() else {
        a.set_tag(s("No unit"));
        a.set_title(s(
            "This shop has no units yet: add them in Setup or import a unit register.",
        ));
        return;
    };
    a.set_unit_choices(strings(
        stops.iter().map(|r| format!("{} — {}", r.tag, r.machine)),
    ));
    a.set_unit_index(
        stops
            .iter()
            .position(|r| r.unit_id == unit_id)
            .map(|i| i as i32)
            .unwrap_or(-1),
    );
    let view = match entry::unit_view(&ctx.shop, unit_id, ctx.now()) {
        Ok(v) => v,
        Err(e) => {
            a.set_ack_message(s(err_text(&e)));
            a.set_ack_level(2);
            return;
        }
    };
    let st = &view.status;
    a.set_tag(s(&st.unit));
    a.set_title(s(format!(
        "{} {} · {}",
        st.machine, st.machine_name, st.machine_kind
    )));
    a.set_state(state_num(st.state));
    a.set_identity(model(identity(&view, sys)));
    a.set_era(model(era(&view, sys)));
    a.set_tile_rows(model(tile_rows(
        &st.health.tiles,
        sys,
        &st.health.not_judged,
    )));
    a.set_flags(model(flags(&view)));
    a.set_waiting(strings(
        st.health
            .not_judged
            .iter()
            .filter(|n| n.expected)
            .map(|n| format!("{}: {} — judged {}.", n.label, n.missing, n.until)),
    ));
    a.set_questioned(strings(
        st.health
            .suspects
            .iter()
            .filter(|q| q.confirmed.is_none())
            .map(|q| {
                format!(
                    "{} {}: {}",
                    record_word(q.record),
                    entry::show_time(q.at),
                    q.reason
                )
            }),
    ));
    let (rows, hint) = chart_rows(&view, sys);
    a.set_chart_rows(model(rows));
    a.set_chart_hint(s(hint));
    {
        let mut u = ctx.unit.borrow_mut();
        u.choices = stops.iter().map(|r| r.unit_id).collect();
        u.view = Some(Rc::new(view));
    }
    let table = ctx.unit.borrow().table.unwrap_or(Reading::Check);
    fill_table(ctx, table);
}

fn kv(key: &str, value: impl Into<String>) -> KeyVal {
    KeyVal {
        key: s(key),
        value: s(value.into()),
    }
}

fn q(kind: Kind, si: Option<f64>, sys: UnitSystem) -> String {
    si.map(|v| entry::show(kind, v, sys))
        .unwrap_or_else(|| "—".into())
}

fn identity(v: &UnitView, sys: UnitSystem) -> Vec<KeyVal> {
    let h = &v.history;
    let u = &h.unit;
    let fluid = v.status.health.fluid.as_ref().or(h.fluid.as_ref());
    let stroke = match &u.stroke {
        None => "not set up".to_string(),
        Some(t) => {
            let rod = match (t.direction, t.rod) {
                (crate::model::StrokeDirection::Retract, Some(r)) => {
                    format!(" rod {}", entry::show(Kind::Length, r.si(), sys))
                }
                _ => String::new(),
            };
            format!(
                "{}, bore {}{rod}",
                t.direction,
                entry::show(Kind::Length, t.bore.si(), sys)
            )
        }
    };
    let mut out = vec![
        kv("Machine", format!("{} {}", h.machine.tag, h.machine.name)),
        kv("Pump", u.pump_kind.as_str().replace('_', " ")),
        kv(
            "Rated flow",
            q(Kind::Flow, u.rated_flow.map(|x| x.si()), sys),
        ),
        kv("Relief", q(Kind::Pressure, u.relief.map(|x| x.si()), sys)),
        kv(
            "Reservoir",
            q(Kind::Volume, u.reservoir.map(|x| x.si()), sys),
        ),
        kv(
            "Most sensitive",
            u.sensitive_component.as_str().replace('_', " "),
        ),
    ];
    if let Some(t) = &v.status.health.indicators.iso4406_target {
        out.push(kv("Clean target", format!("ISO 4406 {t}")));
    }
    match fluid {
        Some(f) => {
            out.push(kv("Fluid", &f.name));
            let vg = f.iso_vg.map(|g| format!("ISO VG {g}"));
            let kv40 = f.kv40_new.map(|k| format!("KV40 {:.1} cSt", k.cst()));
            let both: Vec<String> = vg.into_iter().chain(kv40).collect();
            if !both.is_empty() {
                out.push(kv("New oil", both.join(", ")));
            }
        }
        None => out.push(kv("Fluid", "not recorded")),
    }
    out.push(kv("Timed stroke", stroke));
    if let Some(t) = &u.stroke {
        out.push(kv(
            "Stroke length",
            entry::show(Kind::Length, t.length.si(), sys),
        ));
    }
    out
}

fn indicator_name(i: BaselineIndicator) -> &'static str {
    match i {
        BaselineIndicator::EffectiveFlow => "Effective flow",
        BaselineIndicator::CorrectedFlow => "Corrected flow",
        BaselineIndicator::HeatRise => "Heat rise",
        BaselineIndicator::LeakConductance => "Leak conduct.",
        BaselineIndicator::CaseDrain => "Case drain",
    }
}

fn era(v: &UnitView, sys: UnitSystem) -> Vec<KeyVal> {
    let h = &v.status.health;
    let mut out = Vec::new();
    match h.eras.last() {
        None => out.push(kv("Era", "no checks yet")),
        Some(e) => {
            out.push(kv("Era since", super::fmt::date(e.start)));
            out.push(kv("Started by", e.started_by.as_str()));
            out.push(kv("Eras so far", h.eras.len().to_string()));
        }
    }
    if h.baseline.is_empty() {
        out.push(kv(
            "Baseline",
            "not yet: it forms from the first checks of the era",
        ));
    }
    let mut sources: Vec<Vec<(&str, String)>> = Vec::new();
    for b in &h.baseline.values {
        let (value, spread) = match b.indicator {
            BaselineIndicator::EffectiveFlow
            | BaselineIndicator::CorrectedFlow
            | BaselineIndicator::CaseDrain => (
                dim_text(Dim::Flow, b.value, sys),
                dim_text(Dim::Flow, b.spread, sys),
            ),
            BaselineIndicator::HeatRise => (
                dim_text(Dim::TempDiff, b.value, sys),
                dim_text(Dim::TempDiff, b.spread, sys),
            ),
            // Its SI value means nothing to a reader; tiles and charts show it as a ratio to this.
            BaselineIndicator::LeakConductance => {
                let rel = if b.value.abs() > 0.0 {
                    b.spread / b.value.abs()
                } else {
                    0.0
                };
                ("1.00× (reference)".to_string(), format!("{rel:.2}×"))
            }
        };
        let source = match &b.source {
            BaselineSource::Checks {
                check_ids,
                from,
                to,
            } => vec![
                (
                    "Baseline from",
                    format!("mean of the first {} checks", check_ids.len()),
                ),
                (
                    "Checks dated",
                    format!("{} to {}", super::fmt::date(*from), super::fmt::date(*to)),
                ),
            ],
            BaselineSource::Manual { by, at } => vec![(
                "Entered by hand",
                format!("{by}, {}", super::fmt::date(*at)),
            )],
        };
        let manual = matches!(b.source, BaselineSource::Manual { .. });
        out.push(kv(
            indicator_name(b.indicator),
            format!(
                "{value} ± {spread}{}",
                if manual { " (by hand)" } else { "" }
            ),
        ));
        if !sources.contains(&source) {
            sources.push(source);
        }
    }
    for src in sources {
        for (k, v) in src {
            out.push(kv(k, v));
        }
    }
    out
}

fn limit_text(t: &Tile, sys: UnitSystem) -> String {
    let f = |v: &Vec<f64>| {
        v.iter()
            .map(|x| dim_text(t.dim, *x, sys))
            .collect::<Vec<_>>()
            .join(" / ")
    };
    match (t.watch.is_empty(), t.act.is_empty()) {
        (true, true) => "—".into(),
        (false, true) => format!("watch {}", f(&t.watch)),
        (true, false) => format!("act {}", f(&t.act)),
        (false, false) => format!("watch {} · act {}", f(&t.watch), f(&t.act)),
    }
}

fn tile(t: &Tile, sys: UnitSystem, not_judged: &[NotJudged]) -> TileData {
    let waiting = not_judged.iter().find(|n| n.key == t.key);
    let (value, small) = match (&t.text, t.value) {
        (Some(text), _) => (text.clone(), text.chars().count() > 10),
        (None, Some(v)) => (dim_text(t.dim, v, sys), false),
        (None, None) if t.state == State::NotJudged => ("not judged yet".into(), true),
        (None, None) => ("no data".into(), true),
    };
    let baseline = match (t.baseline, t.baseline_spread) {
        (Some(b), Some(sp)) if sp > 0.0 => {
            let spread_dim = if t.dim == Dim::Temperature {
                Dim::TempDiff
            } else {
                t.dim
            };
            format!(
                "{} ± {}",
                dim_text(t.dim, b, sys),
                dim_text(spread_dim, sp, sys)
            )
        }
        (Some(b), _) => dim_text(t.dim, b, sys),
        (None, _) => "—".into(),
    };
    let (arrow, trend) = match &t.trend {
        None if t.state == State::NotJudged => (
            String::new(),
            waiting
                .map(|n| format!("judged {}", n.until))
                .unwrap_or_else(|| "not judged yet".to_string()),
        ),
        None => (String::new(), "trend: too few points".to_string()),
        Some(tr) => {
            let (arrow, word) = match tr.direction {
                Direction::Rising => ("▲", "rising"),
                Direction::Falling => ("▼", "falling"),
                Direction::Flat => ("▶", "flat"),
            };
            let mut text = format!("{word} {}", slope_text(t.dim, tr.slope_per_week, sys));
            if let Some(f) = &tr.forecast {
                text = format!(
                    "{text}; {} ~{}",
                    if f.state == State::Act {
                        "act"
                    } else {
                        "watch"
                    },
                    super::fmt::date(f.date)
                );
            }
            (arrow.to_string(), text)
        }
    };
    TileData {
        label: s(&t.label),
        value: s(value),
        baseline: s(baseline),
        limit: s(limit_text(t, sys)),
        state: state_num(t.state),
        arrow: s(arrow),
        trend: s(trend),
        small,
    }
}

fn tile_rows(tiles: &[Tile], sys: UnitSystem, not_judged: &[NotJudged]) -> Vec<TileRow> {
    // Three to a row; the last row is padded with blank tiles so all tiles are one width.
    tiles
        .chunks(3)
        .map(|c| {
            let mut row: Vec<TileData> = c.iter().map(|t| tile(t, sys, not_judged)).collect();
            row.resize(3, TileData::default());
            TileRow { tiles: model(row) }
        })
        .collect()
}

fn flags(v: &UnitView) -> Vec<FlagData> {
    v.status
        .health
        .flags
        .iter()
        .map(|f| FlagData {
            kind: s(f.kind.as_str()),
            state: state_num(f.state),
            state_key: s(f.state.as_str()),
            message: s(&f.message),
            since: s(super::fmt::day(f.since)),
            ack: match &f.acknowledgement {
                Some(a) if f.acknowledged => s(format!(
                    "seen by {} on {}{}",
                    a.by,
                    super::fmt::date(a.at),
                    if a.note.is_empty() {
                        String::new()
                    } else {
                        format!(": {}", a.note)
                    }
                )),
                _ => s(""),
            },
        })
        .collect()
}

fn find<'a>(v: &'a UnitView, key: &str) -> Option<&'a Series> {
    v.status.health.series.iter().find(|x| x.key == key)
}

fn event_label(k: EventKind) -> &'static str {
    match k {
        EventKind::FluidChange => "fluid",
        EventKind::TopUp => "top-up",
        EventKind::FilterChange => "filter",
        EventKind::Rebuild => "rebuild",
        EventKind::Repair => "repair",
        EventKind::CoolerClean => "cooler",
        EventKind::Note => "note",
    }
}

fn chart_from(series: &Series, sys: UnitSystem, markers: &[Marker], empty: &str) -> ChartInput {
    let conv = |x: f64| dim_value(series.dim, x, sys);
    let spread_dim = if series.dim == Dim::Temperature {
        Dim::TempDiff
    } else {
        series.dim
    };
    ChartInput {
        title: series.label.clone(),
        unit: dim_unit(series.dim, sys).to_string(),
        lines: vec![Line {
            label: String::new(),
            points: series
                .points
                .iter()
                .map(|p| (charts::day_number(p.at), conv(p.value)))
                .collect(),
        }],
        baseline: series.baseline.map(conv),
        spread: series
            .baseline_spread
            .map(|sp| dim_value(spread_dim, sp, sys))
            .filter(|sp| *sp > 0.0),
        watch: series.watch.iter().map(|x| conv(*x)).collect(),
        act: series.act.iter().map(|x| conv(*x)).collect(),
        markers: markers.to_vec(),
        empty_text: empty.to_string(),
    }
}

fn chart_rows(v: &UnitView, sys: UnitSystem) -> (Vec<ChartRow>, String) {
    let era_start = v.status.health.eras.last().map(|e| e.start);
    let markers: Vec<Marker> = v
        .history
        .events
        .iter()
        .filter(|e| era_start.is_none_or(|s| e.done_at >= s))
        .filter(|e| !matches!(e.kind, EventKind::Note | EventKind::TopUp))
        .map(|e| Marker {
            at: charts::day_number(e.done_at),
            label: event_label(e.kind).to_string(),
        })
        .collect();
    let sample_markers: Vec<Marker> = markers.clone();
    let mut inputs: Vec<ChartInput> = Vec::new();
    for (key, empty) in [
        ("effective_flow", "no timed strokes in this era"),
        (
            "lost_flow",
            "lost flow needs a baseline: the first checks of the era",
        ),
        ("heat_rise", "no oil and ambient temperatures in this era"),
        ("kv40", "no viscosity results in this era"),
        ("cleanliness", "no particle counts in this era"),
    ] {
        if let Some(series) = find(v, key) {
            let m = if key == "kv40" || key == "cleanliness" {
                &sample_markers
            } else {
                &markers
            };
            inputs.push(chart_from(series, sys, m, empty));
        }
    }
    // The code by size, one line each (shape tells them apart as well as colour).
    let sizes: Vec<&Series> = ["iso4406_4um", "iso4406_6um", "iso4406_14um"]
        .iter()
        .filter_map(|k| find(v, k))
        .collect();
    if !sizes.is_empty() {
        inputs.push(ChartInput {
            title: "ISO 4406 code by size".into(),
            unit: "scale number".into(),
            lines: sizes
                .iter()
                .map(|s| Line {
                    label: s.label.trim_start_matches("ISO 4406 ").to_string(),
                    points: s
                        .points
                        .iter()
                        .map(|p| (charts::day_number(p.at), p.value))
                        .collect(),
                })
                .collect(),
            markers: sample_markers.clone(),
            ..ChartInput::default()
        });
    }
    let images: Vec<ChartData> = inputs
        .iter()
        .map(|i| {
            let image = charts::render(i, CHART_W, CHART_H).unwrap_or_default();
            let note = match (i.lines.first().and_then(|l| l.points.last()), i.act.first()) {
                (Some(p), Some(a)) => format!("latest {:.2} {}, act limit {:.2}", p.1, i.unit, a),
                (Some(p), None) => format!("latest {:.2} {}", p.1, i.unit),
                _ => i.empty_text.clone(),
            };
            ChartData {
                title: s(&i.title),
                image,
                note: s(note),
            }
        })
        .collect();
    let rows = images
        .chunks(2)
        .map(|c| ChartRow {
            charts: model(c.to_vec()),
        })
        .collect();
    let hint = match era_start {
        Some(t) => format!(
            "The era in force, since {}. Band: baseline ± one spread; dashed ochre: watch; solid red: act; \
             dashed blue: events.",
            super::fmt::date(t)
        ),
        None => "No era yet: charts appear with the first checks.".into(),
    };
    (rows, hint)
}

// ---------------------------------------------------------------------------------------------
// Acknowledgement

fn acknowledge(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<UnitAdapter>();
    let idx = a.get_ack_index();
    let flag = a.get_flags().row_data(idx.max(0) as usize);
    let (Some(flag), Some(unit_id)) = (flag.filter(|_| idx >= 0), ctx.unit_id.get()) else {
        a.set_ack_message(s("Choose a flag to acknowledge."));
        a.set_ack_level(2);
        return;
    };
    match entry::acknowledge(
        &ctx.shop,
        unit_id,
        &flag.kind,
        &a.get_ack_by(),
        &a.get_ack_note(),
        ctx.now(),
    ) {
        Ok(r) => {
            a.set_ack_index(-1);
            a.set_ack_note(s(""));
            a.set_ack_message(s(format!(
                "Acknowledged: {} ({}) on {}.",
                r.flag.kind, r.flag.state, r.unit
            )));
            a.set_ack_level(0);
            refresh(ctx);
            super::fleet::refresh(ctx);
        }
        Err(e) => {
            a.set_ack_message(s(err_text(&e)));
            a.set_ack_level(2);
        }
    }
}

// ---------------------------------------------------------------------------------------------
// History tables and corrections

fn col(title: &str, width: f32) -> TableColumn {
    let mut c = TableColumn::default();
    c.title = s(title);
    c.min_width = width;
    c.width = width;
    c
}

fn cell(t: impl Into<String>) -> StandardListViewItem {
    StandardListViewItem::from(s(t.into()))
}

fn opt(v: Option<String>) -> String {
    v.unwrap_or_default()
}

/// The rows of a history table, newest first, made when the table asks for them: a table
/// instantiates the rows on screen only, so a unit with 100,000 checks costs a screenful of
/// rows, not all of them (docs/engineering.md, "Performance targets").
pub struct HistoryRows {
    count: usize,
    make: RowMaker,
    made: Cell<usize>,
    notify: slint::ModelNotify,
}

type RowMaker = Box<dyn Fn(usize) -> Vec<StandardListViewItem>>;

impl HistoryRows {
    /// How many rows have been made so far (a table shows a screenful).
    pub fn rows_made(&self) -> usize {
        self.made.get()
    }
}

impl Model for HistoryRows {
    type Data = ModelRc<StandardListViewItem>;

    fn row_count(&self) -> usize {
        self.count
    }

    fn row_data(&self, row: usize) -> Option<Self::Data> {
        if row >= self.count {
            return None;
        }
        self.made.set(self.made.get() + 1);
        Some(ModelRc::new(VecModel::from((self.make)(row))))
    }

    fn model_tracker(&self) -> &dyn slint::ModelTracker {
        &self.notify
    }

    fn as_any(&self) -> &dyn std::any::Any {
        self
    }
}

fn num(x: Option<f64>, d: usize) -> String {
    x.map(|v| format!("{v:.d$}")).unwrap_or_default()
}

fn check_table(v: &Rc<UnitView>, sys: UnitSystem) -> (Vec<TableColumn>, Vec<i64>, RowMaker) {
    let t = |k: Kind| k.display_unit(sys).symbol();
    let cols = vec![
        col("Taken", 168.0),
        col("Questioned", 190.0),
        col(&format!("Oil {}", t(Kind::Temperature)), 100.0),
        col(&format!("Air {}", t(Kind::Temperature)), 100.0),
        col(&format!("Press. {}", t(Kind::Pressure)), 118.0),
        col("Stroke s", 108.0),
        col(&format!("Flow {}", t(Kind::Flow)), 123.0),
        col("Lost %", 98.0),
        col("Level", 86.0),
        col("Filter", 88.0),
        col("Hours", 98.0),
        col("By", 98.0),
        col("Note", 238.0),
    ];
    let ids: Vec<i64> = v.history.checks.iter().rev().map(|c| c.id).collect();
    // The engine's figures of each check, found by id once rather than per row shown.
    let points: HashMap<i64, usize> = v
        .status
        .health
        .checks
        .iter()
        .enumerate()
        .map(|(i, p)| (p.check_id, i))
        .collect();
    let marks = suspect_marks(v, Record::Check);
    let v = v.clone();
    let make = move |i: usize| {
        let c = &v.history.checks[v.history.checks.len() - 1 - i];
        let point = points.get(&c.id).map(|&k| &v.status.health.checks[k]);
        let conv = |k: Kind, si: Option<f64>| {
            si.map(|x| format!("{:.1}", k.display_unit(sys).from_si(x)))
                .unwrap_or_default()
        };
        vec![
            cell(entry::show_time(c.taken_at)),
            cell(marks.get(&c.id).cloned().unwrap_or_default()),
            cell(conv(Kind::Temperature, c.reservoir_temp.map(|x| x.si()))),
            cell(conv(Kind::Temperature, c.ambient_temp.map(|x| x.si()))),
            cell(conv(Kind::Pressure, c.pressure.map(|x| x.si()))),
            cell(num(c.stroke_time.map(|x| x.si()), 2)),
            cell(
                point
                    .and_then(|p| p.effective_flow)
                    .map(|q| format!("{:.1}", dim_value(Dim::Flow, q, sys)))
                    .unwrap_or_default(),
            ),
            cell(num(point.and_then(|p| p.lost_flow_pct), 1)),
            cell(opt(c.oil_level.map(|x| x.to_string()))),
            cell(opt(c.filter.map(|x| x.to_string()))),
            cell(num(c.hours, 0)),
            cell(&c.by),
            cell(&c.note),
        ]
    };
    (cols, ids, Box::new(make))
}

fn sample_table(v: &Rc<UnitView>) -> (Vec<TableColumn>, Vec<i64>, RowMaker) {
    let cols = vec![
        col("Sampled", 168.0),
        col("Questioned", 190.0),
        col("KV40 cSt", 113.0),
        col("KV100 cSt", 118.0),
        col("ISO 4406", 113.0),
        col("≥4 /mL", 103.0),
        col("≥6 /mL", 103.0),
        col("≥14 /mL", 108.0),
        col("Water ppm", 123.0),
        col("Acid", 88.0),
        col("Lab ref", 128.0),
        col("Note", 238.0),
    ];
    let ids: Vec<i64> = v.history.samples.iter().rev().map(|c| c.id).collect();
    let points: HashMap<i64, usize> = v
        .status
        .health
        .samples
        .iter()
        .enumerate()
        .map(|(i, p)| (p.sample_id, i))
        .collect();
    let marks = suspect_marks(v, Record::Sample);
    let v = v.clone();
    let make = move |i: usize| {
        let smp = &v.history.samples[v.history.samples.len() - 1 - i];
        let point = points.get(&smp.id).map(|&k| &v.status.health.samples[k]);
        let kv40 = smp
            .kv40
            .map(|k| k.cst())
            .or_else(|| point.and_then(|p| p.kv40).map(|k| k * 1e6));
        vec![
            cell(entry::show_time(smp.sampled_at)),
            cell(marks.get(&smp.id).cloned().unwrap_or_default()),
            cell(num(kv40, 1)),
            cell(num(smp.kv100.map(|k| k.cst()), 2)),
            cell(
                point
                    .and_then(|p| p.code)
                    .map(|c| c.to_string())
                    .or_else(|| smp.iso4406.clone())
                    .unwrap_or_default(),
            ),
            cell(num(smp.counts_per_ml[0], 0)),
            cell(num(smp.counts_per_ml[1], 0)),
            cell(num(smp.counts_per_ml[2], 0)),
            cell(num(smp.water_ppm, 0)),
            cell(num(smp.acid_mgkoh_g, 2)),
            cell(&smp.lab_ref),
            cell(&smp.note),
        ]
    };
    (cols, ids, Box::new(make))
}

fn event_table(v: &Rc<UnitView>, sys: UnitSystem) -> (Vec<TableColumn>, Vec<i64>, RowMaker) {
    let t = |k: Kind| k.display_unit(sys).symbol();
    let cols = vec![
        col("Done", 168.0),
        col("What", 138.0),
        col(&format!("Volume {}", t(Kind::Volume)), 123.0),
        col("Fluid", 168.0),
        col("By", 98.0),
        col("Note", 318.0),
    ];
    let ids: Vec<i64> = v.history.events.iter().rev().map(|c| c.id).collect();
    let v = v.clone();
    let make = move |i: usize| {
        let e = &v.history.events[v.history.events.len() - 1 - i];
        let fluid = e
            .fluid_id
            .and_then(|id| v.fluids.iter().find(|f| f.id == id))
            .map(|f| f.name.clone());
        vec![
            cell(entry::show_time(e.done_at)),
            cell(e.kind.as_str().replace('_', " ")),
            cell(
                e.volume
                    .map(|x| format!("{:.1}", Kind::Volume.display_unit(sys).from_si(x.si())))
                    .unwrap_or_default(),
            ),
            cell(opt(fluid)),
            cell(&e.by),
            cell(&e.note),
        ]
    };
    (cols, ids, Box::new(make))
}

fn fill_table(ctx: &Rc<Ctx>, which: Reading) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<UnitAdapter>();
    let sys = ctx.system.get();
    let st = ctx.unit.borrow();
    let Some(v) = st.view.as_ref() else { return };
    let (columns, ids, make) = match which {
        Reading::Check => check_table(v, sys),
        Reading::Sample => sample_table(v),
        Reading::Event => event_table(v, sys),
    };
    let selected = st.selected;
    drop(st);
    a.set_table(match which {
        Reading::Check => 0,
        Reading::Sample => 1,
        Reading::Event => 2,
    });
    a.set_columns(model(columns));
    a.set_rows(ModelRc::new(HistoryRows {
        count: ids.len(),
        make,
        made: Cell::new(0),
        notify: Default::default(),
    }));
    let keep = selected
        .filter(|(t, _)| *t == which)
        .and_then(|(_, id)| ids.iter().position(|x| *x == id));
    {
        let mut st = ctx.unit.borrow_mut();
        st.row_ids = ids;
        if st.table != Some(which) || keep.is_none() {
            st.selected = None;
            st.fields.clear();
        }
        st.table = Some(which);
    }
    a.set_current_row(keep.map(|i| i as i32).unwrap_or(-1));
    if keep.is_none() {
        a.set_edit_fields(model(Vec::<FormField>::new()));
        a.set_edit_title(s(""));
        a.set_suspect_text(s(""));
        a.set_can_confirm(false);
        a.set_can_lift(false);
    }
}

fn select_row(ctx: &Rc<Ctx>, row: i32) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<UnitAdapter>();
    let (which, id) = {
        let st = ctx.unit.borrow();
        let Some(which) = st.table else { return };
        let Some(&id) = st.row_ids.get(row.max(0) as usize).filter(|_| row >= 0) else {
            return;
        };
        (which, id)
    };
    match entry::reading_fields(&ctx.shop, which, id) {
        Ok(fields) => {
            let entered = Entered::from_fields(&fields);
            a.set_edit_fields(model(form_rows(&fields, &entered, &[])));
            let when = a
                .get_rows()
                .row_data(row as usize)
                .and_then(|r| r.row_data(0))
                .map(|c| c.text.to_string())
                .unwrap_or_default();
            a.set_edit_title(s(format!(
                "Correct the {} of {when}",
                match which {
                    Reading::Check => "check",
                    Reading::Sample => "sample",
                    Reading::Event => "event",
                }
            )));
            a.set_edit_message(s(""));
            show_suspicion(ctx, &a, which, id);
            let mark = entry::reading_mark(&ctx.shop, which, id).ok();
            let mut st = ctx.unit.borrow_mut();
            st.selected = Some((which, id));
            st.selected_mark = mark;
            st.fields = fields;
            st.entered = entered;
        }
        Err(e) => {
            a.set_edit_message(s(err_text(&e)));
            a.set_edit_level(2);
        }
    }
}

fn record_word(r: Record) -> &'static str {
    match r {
        Record::Check => "Check of",
        Record::Sample => "Sample of",
    }
}

/// The "Questioned" cell of each questioned reading of a kind, by reading id: the field(s)
/// and whether they are left out or were confirmed, and by whom.
fn suspect_marks(v: &UnitView, record: Record) -> HashMap<i64, String> {
    let mut out: HashMap<i64, String> = HashMap::new();
    for q in v
        .status
        .health
        .suspects
        .iter()
        .filter(|q| q.record == record)
    {
        let text = match &q.confirmed {
            None => format!("? {} — left out", q.field.label()),
            Some(c) => format!(
                "✓ {} — confirmed ({})",
                q.field.label(),
                status::confirmed_by_text(c).0
            ),
        };
        out.entry(q.id)
            .and_modify(|t| {
                t.push_str("; ");
                t.push_str(&text);
            })
            .or_insert(text);
    }
    out
}

/// The chosen reading's questions, and whether it can be confirmed or its confirmation lifted.
fn show_suspicion(ctx: &Rc<Ctx>, a: &UnitAdapter, which: Reading, id: i64) {
    let st = ctx.unit.borrow();
    let Some(v) = st.view.as_ref() else { return };
    let record = match which {
        Reading::Check => Record::Check,
        Reading::Sample => Record::Sample,
        Reading::Event => {
            a.set_suspect_text(s(""));
            a.set_can_confirm(false);
            a.set_can_lift(false);
            return;
        }
    };
    let qs: Vec<&SuspectReading> = v
        .status
        .health
        .suspects
        .iter()
        .filter(|q| q.record == record && q.id == id)
        .collect();
    let person = match which {
        Reading::Check => v
            .history
            .checks
            .iter()
            .find(|c| c.id == id)
            .and_then(|c| c.confirmed.clone()),
        _ => v
            .history
            .samples
            .iter()
            .find(|c| c.id == id)
            .and_then(|c| c.confirmed.clone()),
    };
    let mut lines: Vec<String> = qs
        .iter()
        .map(|q| {
            let state = match &q.confirmed {
                None => "not confirmed: left out of baselines and flags".to_string(),
                Some(c) => {
                    let (by, at) = status::confirmed_by_text(c);
                    format!("confirmed by {by} on {}", super::fmt::date(at))
                }
            };
            format!("Questioned — {} ({state})", q.reason)
        })
        .collect();
    if let Some(k) = &person {
        if qs.is_empty() {
            lines.push(format!(
                "Confirmed by {} on {}.",
                k.by,
                super::fmt::date(k.at)
            ));
        }
    }
    a.set_suspect_text(s(lines.join("\n")));
    a.set_can_confirm(person.is_none() && qs.iter().any(|q| q.confirmed.is_none()));
    a.set_can_lift(person.is_some());
}

/// Confirms the chosen reading (`confirm`) or lifts its confirmation, by the name in "Changed
/// by" and with the reason.
fn confirm_row(ctx: &Rc<Ctx>, confirm: bool) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<UnitAdapter>();
    let sel = ctx.unit.borrow().selected;
    let Some((which, id)) = sel else { return };
    let found = {
        let st = ctx.unit.borrow();
        st.view.as_ref().and_then(|v| {
            let at = match which {
                Reading::Check => v
                    .history
                    .checks
                    .iter()
                    .find(|c| c.id == id)
                    .map(|c| c.taken_at),
                Reading::Sample => v
                    .history
                    .samples
                    .iter()
                    .find(|c| c.id == id)
                    .map(|c| c.sampled_at),
                Reading::Event => None,
            }?;
            Some((v.status.unit.clone(), at))
        })
    };
    let Some((tag, at)) = found else { return };
    let kind = if which == Reading::Sample {
        ReadingKind::Sample
    } else {
        ReadingKind::Check
    };
    let by = a.get_edit_by().to_string();
    let why = a.get_edit_reason().to_string();
    let r = if confirm {
        confirm::confirm_reading(&ctx.shop, &tag, kind, at, &by, &why, ctx.now())
    } else {
        confirm::lift_confirmation(&ctx.shop, &tag, kind, at, &by, &why, ctx.now())
    };
    match r {
        Ok(done) => {
            a.set_edit_message(s(match done.action {
                ConfirmAction::Confirmed => format!(
                    "Confirmed by {}: the reading counts in baselines and flags.",
                    by.trim()
                ),
                ConfirmAction::Lifted => {
                    "Confirmation lifted; kept in the edit history.".to_string()
                }
            }));
            a.set_edit_level(0);
            a.set_edit_reason(s(""));
            refresh(ctx);
            super::fleet::refresh(ctx);
            show_suspicion(ctx, &a, which, id);
        }
        Err(e) => {
            a.set_edit_message(s(err_text(&e)));
            a.set_edit_level(2);
        }
    }
}

fn save_edit(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<UnitAdapter>();
    let (sel, mark, entered) = {
        let st = ctx.unit.borrow();
        (st.selected, st.selected_mark, st.entered.clone())
    };
    let Some((which, id)) = sel else { return };
    let (by, reason) = (a.get_edit_by(), a.get_edit_reason());
    let saved = match mark {
        Some(seen) => entry::edit_reading_seen(&ctx.shop, which, id, seen, &entered, &by, &reason),
        None => entry::edit_reading(&ctx.shop, which, id, &entered, &by, &reason),
    };
    match saved {
        Ok(SaveOutcome::Saved(())) => {
            // Our own change is the row's latest edit now: a further save builds on it.
            ctx.unit.borrow_mut().selected_mark = entry::reading_mark(&ctx.shop, which, id).ok();
            a.set_edit_message(s("Changed; the old value is kept in the edit history."));
            a.set_edit_level(0);
            a.set_edit_reason(s(""));
            refresh(ctx);
            super::fleet::refresh(ctx);
        }
        Ok(SaveOutcome::Refused(p)) | Ok(SaveOutcome::NeedsConfirmation(p)) => {
            mark_problems(&a.get_edit_fields(), &p);
            let (text, level) = problems_line(&p);
            a.set_edit_message(s(text));
            a.set_edit_level(level);
        }
        Err(e) => {
            a.set_edit_message(s(err_text(&e)));
            a.set_edit_level(2);
        }
    }
}

fn delete_row(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<UnitAdapter>();
    let sel = ctx.unit.borrow().selected;
    let Some((which, id)) = sel else { return };
    match entry::delete_reading(&ctx.shop, which, id, &a.get_edit_by(), &a.get_edit_reason()) {
        Ok(()) => {
            a.set_edit_message(s("Deleted; the reading is kept in the edit history."));
            a.set_edit_level(0);
            a.set_edit_reason(s(""));
            ctx.unit.borrow_mut().selected = None;
            refresh(ctx);
            super::fleet::refresh(ctx);
        }
        Err(e) => {
            a.set_edit_message(s(err_text(&e)));
            a.set_edit_level(2);
        }
    }
}

/// For the screenshots: the newest check chosen for correction.
pub(super) fn select_first_row(ctx: &Rc<Ctx>) {
    if let Some(w) = ctx.win() {
        w.global::<UnitAdapter>().set_current_row(0);
    }
    select_row(ctx, 0);
}

/// For the screenshots: the newest questioned check of the unit shown chosen, with its
/// reason and the Confirm action (the newest check when none is questioned).
pub(super) fn select_questioned_row(ctx: &Rc<Ctx>) {
    let row = {
        let st = ctx.unit.borrow();
        st.view.as_ref().and_then(|v| {
            let q = v
                .status
                .health
                .suspects
                .iter()
                .rev()
                .find(|q| q.record == Record::Check && q.confirmed.is_none())?;
            st.row_ids.iter().position(|id| *id == q.id)
        })
    };
    let row = row.unwrap_or(0) as i32;
    if let Some(w) = ctx.win() {
        w.global::<UnitAdapter>().set_current_row(row);
    }
    select_row(ctx, row);
}
