//! Unit page summary: the unit's identity and its era and baseline as key-value lines in the
//! shop's unit system. It must not evaluate or hold rules; the figures come from `app`.

use crate::app::entry::{self, UnitView};
use crate::app::vocab::Dim;
use crate::app::vocab::{BaselineIndicator, BaselineSource};
use crate::gui::fmt::dim_text;
use crate::gui::s;
use crate::gui::ui::KeyVal;
use crate::quantity::Kind;
use crate::units::UnitSystem;

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

pub(super) fn identity(v: &UnitView, sys: UnitSystem) -> Vec<KeyVal> {
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

pub(super) fn era(v: &UnitView, sys: UnitSystem) -> Vec<KeyVal> {
    let h = &v.status.health;
    let mut out = Vec::new();
    match h.eras.last() {
        None => out.push(kv("Era", "no checks yet")),
        Some(e) => {
            out.push(kv("Era since", crate::gui::fmt::date(e.start, v.zone)));
            out.push(kv("Started by", e.started_by.as_str()));
            out.push(kv("Eras so far", h.eras.len().to_string()));
        }
    }
    if let Some(c) = &v.status.waiting_cost {
        out.push(kv("Cost of waiting", c.text(sys)));
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
                    format!("median of the first {} checks", check_ids.len()),
                ),
                (
                    "Checks dated",
                    format!(
                        "{} to {}",
                        crate::gui::fmt::date(*from, v.zone),
                        crate::gui::fmt::date(*to, v.zone)
                    ),
                ),
            ],
            BaselineSource::Manual { by, at } => vec![(
                "Entered by hand",
                format!("{by}, {}", crate::gui::fmt::date(*at, v.zone)),
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
