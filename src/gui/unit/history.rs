//! Unit page history: the check, sample and event tables as lazily made slint rows. It must not
//! read the shop itself; the history comes with the unit's view from `app`.

use super::*;
use std::cell::Cell;
use std::collections::HashMap;
use std::rc::Rc;

use slint::language::{StandardListViewItem, TableColumn};
use slint::{ComponentHandle, Model, ModelRc, VecModel};

use crate::app::entry::{self, Reading, UnitView};
use crate::app::vocab::Dim;
use crate::app::vocab::Record;
use crate::gui::fmt::dim_value;
use crate::gui::ui::{FormField, UnitAdapter};
use crate::gui::{model, s, Ctx};
use crate::quantity::Kind;
use crate::units::UnitSystem;

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

/// The mark of a row whose reading was corrected (the Edits tab says how).
fn edited(corrected: &[i64], id: i64) -> &'static str {
    if corrected.binary_search(&id).is_ok() {
        "corrected"
    } else {
        ""
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
        col("Edited", 98.0),
    ];
    let corrected = v.edits.corrected("check");
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
            cell(entry::show_time(c.taken_at, v.zone)),
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
            cell(edited(&corrected, c.id)),
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
        col("Edited", 98.0),
    ];
    let corrected = v.edits.corrected("sample");
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
            cell(entry::show_time(smp.sampled_at, v.zone)),
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
            cell(edited(&corrected, smp.id)),
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
        col("Hour meter h", 108.0),
        col("Filter part", 118.0),
        col("Work order", 108.0),
        col("Note", 318.0),
        col("Edited", 98.0),
    ];
    let corrected = v.edits.corrected("event");
    let ids: Vec<i64> = v.history.events.iter().rev().map(|c| c.id).collect();
    let v = v.clone();
    let make = move |i: usize| {
        let e = &v.history.events[v.history.events.len() - 1 - i];
        let d = v.details_of(e.id);
        let fluid = e
            .fluid_id
            .and_then(|id| v.fluids.iter().find(|f| f.id == id))
            .map(|f| f.name.clone());
        vec![
            cell(entry::show_time(e.done_at, v.zone)),
            cell(e.kind.as_str().replace('_', " ")),
            cell(
                e.volume
                    .map(|x| format!("{:.1}", Kind::Volume.display_unit(sys).from_si(x.si())))
                    .unwrap_or_default(),
            ),
            cell(opt(fluid)),
            cell(&e.by),
            cell(
                d.and_then(|d| d.hours)
                    .map(|h| h.to_string())
                    .unwrap_or_default(),
            ),
            cell(d.map(|d| d.filter_part.as_str()).unwrap_or_default()),
            cell(d.map(|d| d.work_order.as_str()).unwrap_or_default()),
            cell(&e.note),
            cell(edited(&corrected, e.id)),
        ]
    };
    (cols, ids, Box::new(make))
}

pub(super) fn fill_table(ctx: &Rc<Ctx>, which: Reading) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<UnitAdapter>();
    let sys = ctx.system.get();
    let st = ctx.unit.borrow();
    let Some(v) = st.view.as_ref() else { return };
    let time_note = format!("Times in {}.", v.zone.name());
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
    a.set_time_note(time_note.into());
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
