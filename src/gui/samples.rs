//! Samples adapter: the sample form, a live preview of what the result means (derived code,
//! KV40, VI, drift, flags — computed by `app::entry` through the health engine), saving, and
//! the way to the import screen for a lab's CSV.

use std::rc::Rc;

use slint::ComponentHandle;

use super::ui::HealthState;
use super::ui::{ImportAdapter, KeyVal, PreviewFlag, SampleAdapter};
use super::{
    err_text, form_rows, mark_problems, model, on, on_arg, on_arg2, problems_line, s, strings, Ctx,
    Screen,
};
use crate::app::entry::{self, Entered, Field, SampleReview, SaveOutcome};
use crate::app::vocab::Kv40Source;
use crate::app::vocab::SAFETY_CAUTIONS;
use crate::units::{Temperature, UnitSystem};

#[derive(Default)]
pub(crate) struct SampleState {
    units: Vec<i64>,
    fields: Vec<Field>,
    entered: Entered,
    pending_confirm: Option<Entered>,
}

pub(super) fn install(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<SampleAdapter>();
    a.set_safety(s(format!(
        "Before sampling: {} {} {}",
        SAFETY_CAUTIONS[1], SAFETY_CAUTIONS[0], SAFETY_CAUTIONS[2]
    )));
    a.on_choose_unit(on_arg(ctx, |ctx, i| {
        let id = ctx.sample.borrow().units.get(i as usize).copied();
        if let Some(id) = id {
            ctx.unit_id.set(Some(id));
            update_preview(ctx);
        }
    }));
    a.on_field_edited(on_arg2(ctx, |ctx, i: i32, t: slint::SharedString| {
        {
            let mut st = ctx.sample.borrow_mut();
            if let Some(key) = st.fields.get(i as usize).map(|f| f.key.clone()) {
                st.entered.set(&key, t.as_str());
            }
        }
        update_preview(ctx);
    }));
    a.on_save(on(ctx, |ctx| {
        save(ctx);
    }));
    a.on_choose_import_file(on(ctx, |ctx| {
        let Some(w) = ctx.win() else { return };
        let typed = w.global::<SampleAdapter>().get_import_path().to_string();
        if let Some(path) = super::choose_csv(ctx, &typed, "Choose the lab's CSV file") {
            let a = w.global::<SampleAdapter>();
            a.set_import_path(s(path.display().to_string()));
            a.invoke_import_file();
        }
    }));
    a.on_import_file(on(ctx, |ctx| {
        let Some(w) = ctx.win() else { return };
        let path = w.global::<SampleAdapter>().get_import_path().to_string();
        w.global::<ImportAdapter>().set_path(s(&path));
        super::show(ctx, Screen::Import);
        if !path.trim().is_empty() {
            super::import::preview_now(ctx, std::path::Path::new(path.trim()));
        }
    }));
}

pub(super) fn refresh(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<SampleAdapter>();
    let stops = super::route(ctx).unwrap_or_default();
    if ctx.unit_id.get().is_none() {
        ctx.unit_id.set(stops.first().map(|r| r.unit_id));
    }
    let current = ctx.unit_id.get();
    a.set_unit_choices(strings(
        stops.iter().map(|r| format!("{} — {}", r.tag, r.machine)),
    ));
    a.set_unit_index(
        current
            .and_then(|id| stops.iter().position(|r| r.unit_id == id))
            .map(|i| i as i32)
            .unwrap_or(0),
    );
    let fields = entry::sample_fields(ctx.system.get());
    {
        let mut st = ctx.sample.borrow_mut();
        st.units = stops.iter().map(|r| r.unit_id).collect();
        st.fields = fields.clone();
        st.pending_confirm = None;
    }
    let entered = ctx.sample.borrow().entered.clone();
    a.set_fields(model(form_rows(&fields, &entered, &[])));
    update_preview(ctx);
}

fn kv(key: &str, value: impl Into<String>) -> KeyVal {
    KeyVal {
        key: s(key),
        value: s(value.into()),
    }
}

fn derived(review: &SampleReview, sys: UnitSystem) -> Vec<KeyVal> {
    let Some(p) = review.preview.as_ref() else {
        return Vec::new();
    };
    let mut out = Vec::new();
    if let Some(f) = &p.fluid {
        out.push(kv("Fluid", &f.name));
        if let Some(k) = f.kv40_new {
            out.push(kv("New oil KV40", format!("{:.1} cSt", k.cst())));
        }
    }
    let Some(pt) = p.point.as_ref() else {
        out.push(kv("Result", "nothing to derive yet"));
        return out;
    };
    match pt.code {
        Some(c) => out.push(kv("ISO 4406 code", c.to_string())),
        None => out.push(kv("ISO 4406 code", "— (give counts or a code)")),
    }
    if let Some(t) = &p.target {
        let over = match pt.over_target_max {
            Some(o) if o > 0 => format!(" ({o} over)"),
            Some(_) => " (met)".to_string(),
            None => String::new(),
        };
        out.push(kv("Target", format!("{t}{over}")));
    }
    if let Some(k) = pt.kv40 {
        out.push(kv("KV40", format!("{:.1} cSt", k * 1e6)));
        if let Some(Kv40Source::FieldReading { at_k }) = pt.kv40_source {
            out.push(kv(
                "KV40 from",
                format!(
                    "reading at {} (D341)",
                    entry::show(
                        crate::quantity::Kind::Temperature,
                        Temperature(at_k).si(),
                        sys
                    )
                ),
            ));
        }
    }
    if let Some(d) = pt.kv40_drift_pct {
        out.push(kv("Viscosity drift", format!("{d:+.1} % against new")));
    }
    match pt.in_vg_band {
        Some(true) => out.push(kv("ISO VG band", "inside")),
        Some(false) => out.push(kv("ISO VG band", "OUTSIDE")),
        None => {}
    }
    if let Some(vi) = pt.viscosity_index {
        out.push(kv("Viscosity index", format!("{vi:.0}")));
    }
    if let Some(wp) = pt.water_ppm {
        out.push(kv("Water", format!("{wp:.0} ppm")));
    }
    if let Some(r) = pt.acid_rise {
        out.push(kv("Acid rise", format!("{r:+.2} mg KOH/g over new")));
    }
    out
}

fn update_preview(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<SampleAdapter>();
    let Some(unit_id) = ctx.unit_id.get() else {
        return;
    };
    let entered = ctx.sample.borrow().entered.clone();
    let blank = entered.0.iter().all(|(_, v)| v.trim().is_empty());
    match entry::review_sample(&ctx.shop, unit_id, &entered, ctx.now()) {
        Ok(review) => {
            // A blank form says nothing yet; problems show once something is typed.
            let problems = if blank {
                Vec::new()
            } else {
                review.problems.clone()
            };
            mark_problems(&a.get_fields(), &problems);
            a.set_derived(model(derived(&review, ctx.system.get())));
            let flags: Vec<PreviewFlag> = review
                .preview
                .as_ref()
                .map(|p| {
                    p.flags
                        .iter()
                        .map(|f| PreviewFlag {
                            state: HealthState::from(f.state),
                            message: s(&f.message),
                        })
                        .collect()
                })
                .unwrap_or_default();
            a.set_flags(model(flags));
            let refused = problems
                .iter()
                .any(|p| p.verdict == entry::Verdict::Refused);
            if refused {
                let (text, level) = problems_line(&problems);
                a.set_message(s(text.replacen("Not saved: ", "Cannot be saved yet: ", 1)));
                a.set_message_level(level);
            } else {
                a.set_message(s(""));
            }
        }
        Err(e) => {
            a.set_message(s(err_text(&e)));
            a.set_message_level(2);
        }
    }
}

fn save(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<SampleAdapter>();
    let Some(unit_id) = ctx.unit_id.get() else {
        return;
    };
    let (entered, confirmed) = {
        let st = ctx.sample.borrow();
        (
            st.entered.clone(),
            st.pending_confirm.as_ref() == Some(&st.entered),
        )
    };
    match entry::save_sample(&ctx.shop, unit_id, &entered, confirmed, ctx.now()) {
        Ok(SaveOutcome::Saved(saved)) => {
            let st = &saved.status;
            {
                let mut ss = ctx.sample.borrow_mut();
                ss.entered = Entered::new();
                ss.pending_confirm = None;
            }
            refresh(ctx);
            a.set_message(s(format!(
                "Sample saved for {}: the unit is now {}.",
                st.unit,
                st.state.as_str().to_uppercase()
            )));
            a.set_message_level(0);
            super::fleet::refresh(ctx);
        }
        Ok(SaveOutcome::NeedsConfirmation(p)) => {
            mark_problems(&a.get_fields(), &p);
            let (text, level) = problems_line(&p);
            a.set_message(s(text));
            a.set_message_level(level);
            ctx.sample.borrow_mut().pending_confirm = Some(entered);
        }
        Ok(SaveOutcome::Refused(p)) => {
            mark_problems(&a.get_fields(), &p);
            let (text, level) = problems_line(&p);
            a.set_message(s(text));
            a.set_message_level(level);
            // The cursor to the first refused field, its reason beside it.
            if let Some(key) = super::first_to_fix(&super::row_keys(&a.get_fields()), &p) {
                a.set_focus_key(s(key));
                a.set_focus_tick(a.get_focus_tick().wrapping_add(1));
            }
        }
        Err(e) => {
            a.set_message(s(err_text(&e)));
            a.set_message_level(2);
        }
    }
}

/// For the screenshots: a bench result typed in, previewed but not saved.
pub(super) fn demo_entry(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<SampleAdapter>();
    let fields = a.get_fields();
    let typed = [
        ("kv40", "49.8"),
        ("count_4", "2400"),
        ("count_6", "610"),
        ("count_14", "45"),
        ("water_ppm", "180"),
        ("by", "J. Doe"),
    ];
    for (key, text) in typed {
        let idx = ctx.sample.borrow().fields.iter().position(|f| f.key == key);
        if let Some(i) = idx {
            if let Some(mut r) = slint::Model::row_data(&fields, i) {
                r.text = s(text);
                slint::Model::set_row_data(&fields, i, r);
            }
            a.invoke_field_edited(i as i32, s(text));
        }
    }
}
