//! Unit page tiles: `app::view`'s tiles, three to a row. It must not judge or word a figure;
//! the state and the texts come from `app::view`.

use crate::app::view::{TileView, LIMITS_HEAD};
use crate::gui::ui::HealthState;
use crate::gui::ui::{TileData, TileRow};
use crate::gui::{model, s};

fn tile(t: &TileView) -> TileData {
    TileData {
        label: s(&t.label),
        value: s(&t.value),
        baseline: s(&t.baseline),
        limit: s(if t.limits == "—" {
            String::new()
        } else {
            format!("{LIMITS_HEAD} {}", t.limits)
        }),
        state: HealthState::from(t.state),
        arrow: s(t.arrow),
        trend: s(&t.trend),
        small: !t.has_value || t.value.chars().count() > 10,
    }
}

pub(super) fn tile_rows(tiles: &[TileView]) -> Vec<TileRow> {
    // Three to a row; the last row is padded with blank tiles so all tiles are one width.
    tiles
        .chunks(3)
        .map(|c| {
            let mut row: Vec<TileData> = c.iter().map(tile).collect();
            row.resize(3, TileData::default());
            TileRow { tiles: model(row) }
        })
        .collect()
}
