//! Columns: every CSV column of each file kind, its field and the unit its numbers are in, and
//! which columns a file must have. It must not read files or judge cells.

use crate::exchange::FileKind;

/// The unit a column's numbers are in, read from its name.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum ColUnit {
    Plain,
    C,
    F,
    Bar,
    Psi,
    Lpm,
    Gpm,
    L,
    Gal,
    Mm,
    In,
}

/// One accepted header name: the field it fills and the unit of its numbers.
pub(crate) struct ColSpec {
    pub field: &'static str,
    pub name: &'static str,
    pub unit: ColUnit,
}

const fn col(field: &'static str, name: &'static str, unit: ColUnit) -> ColSpec {
    ColSpec { field, name, unit }
}

use ColUnit::{Bar, Gal, Gpm, In, Lpm, Mm, Plain, Psi, C, F, L};

pub(crate) const UNIT_COLS: &[ColSpec] = &[
    col("machine_tag", "machine_tag", Plain),
    col("machine_name", "machine_name", Plain),
    col("machine_kind", "machine_kind", Plain),
    col("route_order", "route_order", Plain),
    col("unit_tag", "unit_tag", Plain),
    col("pump_kind", "pump_kind", Plain),
    col("rated_flow", "rated_flow_lpm", Lpm),
    col("rated_flow", "rated_flow_gpm", Gpm),
    col("relief", "relief_bar", Bar),
    col("relief", "relief_psi", Psi),
    col("reservoir", "reservoir_l", L),
    col("reservoir", "reservoir_gal", Gal),
    col("bore", "bore_mm", Mm),
    col("bore", "bore_in", In),
    col("rod", "rod_mm", Mm),
    col("rod", "rod_in", In),
    col("stroke", "stroke_mm", Mm),
    col("stroke", "stroke_in", In),
    col("timed_direction", "timed_direction", Plain),
    col("sensitive_component", "sensitive_component", Plain),
    col("fluid_name", "fluid_name", Plain),
    col("fluid_vg", "fluid_vg", Plain),
    col("fluid_kv40", "fluid_kv40_cst", Plain),
    col("fluid_kv100", "fluid_kv100_cst", Plain),
];

pub(crate) const CHECK_COLS: &[ColSpec] = &[
    col("unit_tag", "unit_tag", Plain),
    col("taken_at", "taken_at", Plain),
    col("reservoir_temp", "reservoir_temp_c", C),
    col("reservoir_temp", "reservoir_temp_f", F),
    col("ambient_temp", "ambient_temp_c", C),
    col("ambient_temp", "ambient_temp_f", F),
    col("pressure", "pressure_bar", Bar),
    col("pressure", "pressure_psi", Psi),
    col("stroke_time", "stroke_time_s", Plain),
    col("cycle_time", "cycle_time_s", Plain),
    col("oil_level", "oil_level", Plain),
    col("filter", "filter", Plain),
    col("hours", "hours", Plain),
    col("case_drain", "case_drain_lpm", Lpm),
    col("case_drain", "case_drain_gpm", Gpm),
    col("by", "by", Plain),
    col("note", "note", Plain),
    col("confirmed_by", "confirmed_by", Plain),
    col("confirmed_at", "confirmed_at", Plain),
];

pub(crate) const SAMPLE_COLS: &[ColSpec] = &[
    col("unit_tag", "unit_tag", Plain),
    col("sampled_at", "sampled_at", Plain),
    col("kv40", "kv40_cst", Plain),
    col("kv100", "kv100_cst", Plain),
    col("visc", "visc_cst", Plain),
    col("visc_temp", "visc_temp_c", C),
    col("visc_temp", "visc_temp_f", F),
    col("count4", "count_4um_per_ml", Plain),
    col("count6", "count_6um_per_ml", Plain),
    col("count14", "count_14um_per_ml", Plain),
    col("iso4406", "iso4406", Plain),
    col("water", "water_ppm", Plain),
    col("acid", "acid_mgkoh_g", Plain),
    col("lab_ref", "lab_ref", Plain),
    col("note", "note", Plain),
    col("confirmed_by", "confirmed_by", Plain),
    col("confirmed_at", "confirmed_at", Plain),
];

pub(crate) const EVENT_COLS: &[ColSpec] = &[
    col("unit_tag", "unit_tag", Plain),
    col("done_at", "done_at", Plain),
    col("kind", "kind", Plain),
    col("volume", "volume_l", L),
    col("volume", "volume_gal", Gal),
    col("fluid_name", "fluid_name", Plain),
    col("fluid_vg", "fluid_vg", Plain),
    col("fluid_kv40", "fluid_kv40_cst", Plain),
    col("fluid_kv100", "fluid_kv100_cst", Plain),
    col("by", "by", Plain),
    col("note", "note", Plain),
    col("hours", "hours", Plain),
    col("filter_part", "filter_part", Plain),
    col("work_order", "work_order", Plain),
];

pub(crate) fn specs(kind: FileKind) -> &'static [ColSpec] {
    match kind {
        FileKind::Units => UNIT_COLS,
        FileKind::Checks => CHECK_COLS,
        FileKind::Samples => SAMPLE_COLS,
        FileKind::Events => EVENT_COLS,
    }
}

/// The fields a file of `kind` must have a column for.
pub(crate) fn required_fields(kind: FileKind) -> &'static [&'static str] {
    match kind {
        FileKind::Units => &["machine_tag", "unit_tag"],
        FileKind::Checks => &["unit_tag", "taken_at"],
        FileKind::Samples => &["unit_tag", "sampled_at"],
        FileKind::Events => &["unit_tag", "done_at", "kind"],
    }
}
