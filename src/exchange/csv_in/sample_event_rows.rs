//! Sample and event rows: an oil sample or an event row turned into a record and written, or
//! refused when it differs from the stored one. No SQL here; the store does that.

use super::*;
use crate::bounds;
use std::str::FromStr;

use crate::exchange::ExchangeError;
use crate::model::{Event, EventDetails, EventKind, Sample, ViscReading};
use crate::physics::cleanliness::Iso4406Code;
use crate::store::columns::{self};
use crate::store::{Bulk, Put};
use crate::units::Viscosity;

impl Importer {
    pub(super) fn sample_row(
        &self,
        bulk: &mut Bulk<'_>,
        row: &mut RowReader<'_>,
    ) -> Result<Option<Outcome>, ExchangeError> {
        let unit_id = self.unit_id(bulk, row);
        let sampled_at = row.when(self.slot("sampled_at"), "sampled_at");
        let kv40 = row.plain(self.slot("kv40"), bound(bounds::KV40_CST));
        let kv100 = row.plain(self.slot("kv100"), bound(bounds::KV100_CST));
        let visc = row.plain(self.slot("visc"), bound(bounds::VISC_CST));
        let visc_temp = row.temperature(self.slot("visc_temp"));
        let counts = [
            row.plain(self.slot("count4"), bound(bounds::COUNT_4UM_PER_ML)),
            row.plain(self.slot("count6"), bound(bounds::COUNT_6UM_PER_ML)),
            row.plain(self.slot("count14"), bound(bounds::COUNT_14UM_PER_ML)),
        ];
        let iso4406 = row.text(self.slot("iso4406")).map(str::to_string);
        if let Some(code) = &iso4406 {
            if let Err(e) = Iso4406Code::from_str(code) {
                row.err(&self.name("iso4406"), e.to_string());
            }
        }
        let water_ppm = row.plain(self.slot("water"), bound(bounds::WATER_PPM));
        let acid = row.plain(self.slot("acid"), bound(bounds::ACID_MGKOH_G));
        let lab_ref = row.free(self.slot("lab_ref"));
        let note = row.free(self.slot("note"));
        let confirmed = self.confirmation(row);
        if let (Some(a), Some(b)) = (kv40, kv100) {
            if b >= a {
                row.err(
                    &self.name("kv100"),
                    "must be below kv40_cst (oil thins as it warms)",
                );
            }
        }
        match (visc, visc_temp) {
            (Some(_), None)
                if row
                    .errors
                    .iter()
                    .all(|e| e.column != self.name("visc_temp")) =>
            {
                row.err(
                    "visc_temp_c",
                    "a viscosity reading (visc_cst) needs the temperature it was read at",
                )
            }
            (None, Some(_)) => row.err(
                &self.name("visc"),
                "a reading temperature was given without visc_cst",
            ),
            _ => {}
        }
        let names = ["count4", "count6", "count14"];
        for (small, large) in [(0usize, 1usize), (1, 2), (0, 2)] {
            if let (Some(a), Some(b)) = (counts[small], counts[large]) {
                if b > a {
                    row.err(
                        &self.name(names[large]),
                        format!(
                            "{b} per mL is more than the {a} per mL at the smaller size {}; counts are cumulative \
                             and cannot rise with size",
                            self.name(names[small])
                        ),
                    );
                }
            }
        }
        let (Some(unit_id), Some(sampled_at)) = (unit_id, sampled_at) else {
            return Ok(None);
        };
        if !row.errors.is_empty() {
            return Ok(None);
        }
        let sample = Sample {
            id: 0,
            unit_id,
            sampled_at,
            kv40: kv40.map(Viscosity::from_cst),
            kv100: kv100.map(Viscosity::from_cst),
            visc_reading: match (visc, visc_temp) {
                (Some(v), Some(t)) => Some(ViscReading {
                    visc: Viscosity::from_cst(v),
                    at: t,
                }),
                _ => None,
            },
            counts_per_ml: counts,
            iso4406,
            water_ppm,
            acid_mgkoh_g: acid,
            lab_ref,
            note,
            confirmed,
        };
        match bulk.put_sample(&sample) {
            Ok(Put::Inserted(id)) => Ok(Some(Outcome::Inserted(Some(id)))),
            Ok(Put::Exists(st)) => {
                let cs = |v: Option<Viscosity>| v.map(columns::cst);
                let mut diff = Vec::new();
                let mut cmp = |field: &str, d: bool| {
                    if d {
                        diff.push(self.name(field));
                    }
                };
                cmp("kv40", differs(cs(sample.kv40), cs(st.kv40)));
                cmp("kv100", differs(cs(sample.kv100), cs(st.kv100)));
                cmp(
                    "visc",
                    differs(
                        cs(sample.visc_reading.map(|v| v.visc)),
                        cs(st.visc_reading.map(|v| v.visc)),
                    ),
                );
                cmp(
                    "visc_temp",
                    differs(
                        sample.visc_reading.map(|v| columns::temp_c(v.at)),
                        st.visc_reading.map(|v| columns::temp_c(v.at)),
                    ),
                );
                for (i, f) in names.iter().enumerate() {
                    cmp(f, differs(sample.counts_per_ml[i], st.counts_per_ml[i]));
                }
                cmp(
                    "iso4406",
                    sample.iso4406.is_some() && sample.iso4406 != st.iso4406,
                );
                cmp("water", differs(sample.water_ppm, st.water_ppm));
                cmp("acid", differs(sample.acid_mgkoh_g, st.acid_mgkoh_g));
                cmp("lab_ref", differs_text(&sample.lab_ref, &st.lab_ref));
                cmp("note", differs_text(&sample.note, &st.note));
                cmp(
                    "confirmed_by",
                    sample.confirmed.is_some() && sample.confirmed != st.confirmed,
                );
                self.existing(
                    row,
                    "sampled_at",
                    "a sample of this unit at this time",
                    diff,
                )
            }
            Err(e) => {
                row_store_error(row, e, |f| self.name(f))?;
                Ok(None)
            }
        }
    }

    pub(super) fn event_row(
        &self,
        bulk: &mut Bulk<'_>,
        row: &mut RowReader<'_>,
        summary: &mut crate::exchange::ImportSummary,
    ) -> Result<Option<Outcome>, ExchangeError> {
        let unit_id = self.unit_id(bulk, row);
        let done_at = row.when(self.slot("done_at"), "done_at");
        let kind: Option<EventKind> = if row.text(self.slot("kind")).is_none() {
            row.err("kind", format!("must be given ({})", EventKind::expected()));
            None
        } else {
            row.parsed(self.slot("kind"))
        };
        let volume = row.volume(self.slot("volume"), bound(bounds::VOLUME_L));
        // The fluid put in: a stored one by name, or one the shop lacks, added from the row's
        // data as the unit register adds it (an export carries each fluid's data beside its
        // name, so a fluid no unit has in service any more still reaches a new shop). A name
        // alone that the shop lacks is refused: it is more likely a slip than a new fluid.
        let fluid = self.fluid_cells(row);
        if let Some(name) = &fluid.name {
            if !fluid.has_data && bulk.fluid_by_name(name).is_none() {
                row.err(
                    &self.name("fluid_name"),
                    format!(
                        "no fluid `{name}` in this shop (add it with the unit register first, \
                         or give its fluid_vg or viscosities in this row)"
                    ),
                );
            }
        }
        let by = row.free(self.slot("by"));
        let note = row.free(self.slot("note"));
        let details = EventDetails {
            hours: row.plain(self.slot("hours"), bound(bounds::HOURS)),
            filter_part: row.free(self.slot("filter_part")),
            work_order: row.free(self.slot("work_order")),
        };
        let (Some(unit_id), Some(done_at), Some(kind)) = (unit_id, done_at, kind) else {
            return Ok(None);
        };
        if !row.errors.is_empty() {
            return Ok(None);
        }
        let Some(fluid_id) = self.fluid_of_row(bulk, row, &fluid, summary)? else {
            return Ok(None);
        };
        let event = Event {
            id: 0,
            unit_id,
            done_at,
            kind,
            volume,
            fluid_id,
            by,
            note,
        };
        match bulk.put_event_with(&event, &details) {
            Ok(Put::Inserted(_)) => Ok(Some(Outcome::Inserted(None))),
            Ok(Put::Exists(stored)) => {
                let (st, st_details) = *stored;
                let mut diff = Vec::new();
                if differs(
                    event.volume.map(columns::litres),
                    st.volume.map(columns::litres),
                ) {
                    diff.push(self.name("volume"));
                }
                if event.fluid_id.is_some() && event.fluid_id != st.fluid_id {
                    diff.push(self.name("fluid_name"));
                }
                if differs_text(&event.by, &st.by) {
                    diff.push(self.name("by"));
                }
                if differs_text(&event.note, &st.note) {
                    diff.push(self.name("note"));
                }
                if differs(details.hours, st_details.hours) {
                    diff.push(self.name("hours"));
                }
                if differs_text(&details.filter_part, &st_details.filter_part) {
                    diff.push(self.name("filter_part"));
                }
                if differs_text(&details.work_order, &st_details.work_order) {
                    diff.push(self.name("work_order"));
                }
                self.existing(
                    row,
                    "done_at",
                    "an event of this kind on this unit at this time",
                    diff,
                )
            }
            Err(e) => {
                row_store_error(row, e, |f| self.name(f))?;
                Ok(None)
            }
        }
    }
}
