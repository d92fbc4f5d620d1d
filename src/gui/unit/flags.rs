//! Unit page flags: the unit's flags as rows, and acknowledging one. It must not judge; the
//! flags and the acknowledgement go through `app`.

use super::*;
use std::rc::Rc;

use slint::{ComponentHandle, Model};

use crate::app::entry::{self, UnitView};
use crate::app::view;
use crate::gui::ui::HealthState;
use crate::gui::ui::{FlagData, UnitAdapter};
use crate::gui::{err_text, s, Ctx};

pub(super) fn flags(v: &UnitView) -> Vec<FlagData> {
    v.status
        .health
        .flags
        .iter()
        .map(|f| {
            let f = view::flag_view(f, v.system, v.zone);
            FlagData {
                kind: s(f.kind_key),
                state: HealthState::from(f.state),
                state_key: s(f.state_word),
                message: s(format!("{} — {}", f.figure, f.message)),
                since: s(crate::gui::fmt::day(f.since)),
                ack: s(f.seen.unwrap_or_default()),
            }
        })
        .collect()
}

pub(super) fn acknowledge(ctx: &Rc<Ctx>) {
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
            crate::gui::fleet::refresh(ctx);
        }
        Err(e) => {
            a.set_ack_message(s(err_text(&e)));
            a.set_ack_level(2);
        }
    }
}
