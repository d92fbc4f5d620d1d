//! One unit of the demo shop week by week: its walk-round checks, samples and maintenance
//! events from its model and its own random stream. Pure; the shop around it is `generate`'s.

use super::*;

/// One unit's records: its checks, samples and events in the order they were made.
pub(super) struct UnitRecords {
    pub checks: Vec<Check>,
    pub samples: Vec<Sample>,
    pub events: Vec<Event>,
}

/// One unit's two years: checks, samples and events in the order they were made (the caller
/// sorts the shop's records by time). `start` is the first walk-round day and `ambient_noise`
/// the shared weather of each week.
pub(super) fn unit_records(
    ui: usize,
    def: &UnitDef,
    start: NaiveDate,
    ambient_noise: &[f64],
) -> Result<UnitRecords, DemoError> {
    let mut checks = Vec::new();
    let mut samples = Vec::new();
    let mut events = Vec::new();
    let unit_id = ui as Id + 1;
    let fluid_def = &FLUIDS[def.fluid];
    let fluid_id = def.fluid as Id + 1;
    let model = UnitModel::new(def, fluid_def)?;
    // Each unit has its own stream, so adding a unit does not change the others.
    let mut rng = SplitMix64::new(SEED ^ (ui as u64 + 1).wrapping_mul(0xA24B_AED4_963E_E407));
    let mut hours = def.hours_at_start;
    let mut level_l = def.reservoir_l;
    let mut prev_filter_change = start - Duration::days(7 * (ui as i64 % 13));
    // The maintenance history from before the records begin: the oil in service and the
    // filter element in place.
    let filled = match def.fault {
        Fault::FluidChange { .. } => date(2022, 3, 14),
        _ => date(2024, 1, 15) + Duration::days(23 * ui as i64),
    };
    events.push(Event {
        id: 0,
        unit_id,
        done_at: at(filled, 10, 0),
        kind: EventKind::FluidChange,
        volume: Some(Volume::from_l(round_to(def.reservoir_l * 0.95, 1.0))),
        fluid_id: Some(fluid_id),
        by: FITTER.into(),
        note: "fluid in service when records began".into(),
    });
    events.push(Event {
        id: 0,
        unit_id,
        done_at: at(prev_filter_change, 14, 0),
        kind: EventKind::FilterChange,
        volume: None,
        fluid_id: None,
        by: FITTER.into(),
        note: "routine return-filter element change".into(),
    });
    for week in 0..WEEKS {
        let day = start + Duration::weeks(week);
        hours += 38.0 + rng.normal() * 3.0;
        level_l -= def.loss_l_per_week * (1.0 + 0.3 * rng.normal());
        let missing =
            matches!(def.fault, Fault::MissingWeeks { from, until } if day >= from && day <= until);
        let amb_true = ambient_c(day) + ambient_noise[week as usize];
        let load = 1.0 + 0.05 * rng.normal();
        let (t_oil, q_true, q_leak) = model.operating_point(day, amb_true, load);
        let walk_minute = 6 * 60 + (ui as u32) * 7 + (rng.uniform() * 4.0) as u32;
        let taken_at = at(day, walk_minute / 60, walk_minute % 60);
        let technician = PEOPLE[((week as usize) + ui / 4) % PEOPLE.len()];
        let oil_low = level_l < def.reservoir_l * 0.96;

        let filter = match def.fault {
            Fault::Contamination { alert, filter, .. } if day >= alert && day < filter => {
                FilterState::Alert
            }
            _ => FilterState::Ok,
        };
        if !missing {
            let stroke_s = model.volume_m3 / q_true * (1.0 + 0.02 * rng.normal());
            let pressure = def.work_bar * (1.0 + 0.012 * rng.normal());
            let case_drain = def.case_drain.then(|| {
                let lpm = Flow(q_leak).lpm() * 0.6 * (1.0 + 0.04 * rng.normal());
                Flow::from_lpm(round_to(lpm, 0.1))
            });
            let cycle = def.cycle_s.map(|c| {
                let t = c
                    * (1.0 + 0.3 * (stroke_s * q_true / model.volume_m3 - 1.0))
                    * (1.0 + 0.01 * rng.normal());
                Seconds(round_to(t, 0.1))
            });
            let note = check_note(def, day);
            checks.push(Check {
                id: 0,
                unit_id,
                taken_at,
                reservoir_temp: Some(Temperature::from_c(round_to(
                    t_oil + 0.3 * rng.normal(),
                    0.1,
                ))),
                ambient_temp: Some(Temperature::from_c(round_to(
                    amb_true + 0.3 * rng.normal(),
                    0.1,
                ))),
                pressure: Some(Pressure::from_bar(round_to(pressure, 1.0))),
                stroke_time: Some(Seconds(round_to(stroke_s, 0.01))),
                cycle_time: cycle,
                oil_level: Some(if oil_low { OilLevel::Low } else { OilLevel::Ok }),
                filter: Some(filter),
                hours: Some(round_to(hours, 1.0)),
                case_drain,
                by: technician.into(),
                note: note.into(),
                confirmed: None,
            });
            if oil_low {
                let litres = round_to(def.reservoir_l - level_l, 1.0).max(1.0);
                level_l = def.reservoir_l;
                events.push(Event {
                    id: 0,
                    unit_id,
                    done_at: at(day, 13, 30),
                    kind: EventKind::TopUp,
                    volume: Some(Volume::from_l(litres)),
                    fluid_id: Some(fluid_id),
                    by: technician.into(),
                    note: String::new(),
                });
            }
        }

        // A routine filter change about once a year (2000 run-hours).
        if days_between(prev_filter_change, day) >= 364.0 {
            prev_filter_change = day;
            events.push(Event {
                id: 0,
                unit_id,
                done_at: at(day, 14, 0),
                kind: EventKind::FilterChange,
                volume: None,
                fluid_id: None,
                by: FITTER.into(),
                note: "routine return-filter element change".into(),
            });
        }

        // Samples: a lab sample each quarter; a bench sample in the other months on
        // units sampled monthly.
        let quarter = week % 13 == (ui as i64 % 4) + 1;
        let month =
            def.monthly_samples && week % 13 != (ui as i64 % 4) + 1 && week % 4 == (ui as i64 % 4);
        if (quarter || month) && !missing {
            samples.push(sample_of(
                &UnitAt {
                    def,
                    model: &model,
                    unit_id,
                },
                (start, day),
                (taken_at, t_oil, quarter),
                &mut rng,
            )?);
        }
    }
    events.extend(fault_events(def, unit_id, fluid_id));
    Ok(UnitRecords {
        checks,
        samples,
        events,
    })
}

/// The unit a sample is drawn from.
pub(super) struct UnitAt<'a> {
    pub def: &'a UnitDef,
    pub model: &'a UnitModel<'a>,
    pub unit_id: Id,
}

/// The sample of `day` (a lab sample each quarter, else a bench one), drawn `(taken_at, the
/// oil's temperature, whether it is the quarter's)` at the walk-round, `start` the first day.
pub(super) fn sample_of(
    u: &UnitAt<'_>,
    (start, day): (NaiveDate, NaiveDate),
    (taken_at, t_oil, quarter): (DateTime<Utc>, f64, bool),
    rng: &mut SplitMix64,
) -> Result<Sample, DemoError> {
    let (def, model, unit_id) = (u.def, u.model, u.unit_id);
    let fluid_def = &FLUIDS[def.fluid];
    let sampled_at = taken_at + Duration::minutes(10);
    let vf = model.visc_factor(day);
    let contamination = contamination_codes(def, day);
    let mut counts = [0.0; 3];
    for (i, c) in counts.iter_mut().enumerate() {
        let extra = if i == 2 {
            contamination * 1.2
        } else {
            contamination
        };
        *c = count_for_code(def.clean_codes[i] + extra + 0.35 * rng.normal());
    }
    counts[1] = counts[1].min(counts[0]);
    counts[2] = counts[2].min(counts[1]);
    let water = water_ppm(def, day) * (1.0 + 0.12 * rng.normal());
    let water = round_to(water.max(10.0), 1.0);
    let acid_rise = 0.0015 * days_between(start, day) / 30.44;
    let acid = match def.fault {
        Fault::FluidChange { changed } if day < changed => {
            0.62 + 0.01 * days_between(start, day) / 30.44
        }
        Fault::FluidChange { changed } => {
            fluid_def.acid + 0.0015 * days_between(changed, day) / 30.44
        }
        _ => fluid_def.acid + acid_rise,
    } + 0.015 * rng.normal();
    let sample = if quarter {
        Sample {
            id: 0,
            unit_id,
            sampled_at,
            kv40: Some(Viscosity::from_cst(round_to(
                fluid_def.kv40 * vf * (1.0 + 0.008 * rng.normal()),
                0.1,
            ))),
            kv100: Some(Viscosity::from_cst(round_to(
                fluid_def.kv100 * vf.powf(0.8) * (1.0 + 0.008 * rng.normal()),
                0.01,
            ))),
            visc_reading: None,
            counts_per_ml: counts.map(Some),
            iso4406: None,
            water_ppm: Some(water),
            acid_mgkoh_g: Some(round_to(acid.max(0.01), 0.01)),
            // Numbered below, in the order the lab receives them.
            lab_ref: "lab".into(),
            note: String::new(),
            confirmed: None,
        }
    } else {
        let nu =
            model.walther.at(Temperature::from_c(t_oil)).cst() * vf * (1.0 + 0.015 * rng.normal());
        let (counts_out, code) = if def.code_only_bench {
            ([None; 3], Some(code_from_counts(counts, None)?.to_string()))
        } else {
            (counts.map(Some), None)
        };
        Sample {
            id: 0,
            unit_id,
            sampled_at,
            kv40: None,
            kv100: None,
            visc_reading: Some(ViscReading {
                visc: Viscosity::from_cst(round_to(nu, 0.1)),
                at: Temperature::from_c(round_to(t_oil, 0.5)),
            }),
            counts_per_ml: counts_out,
            iso4406: code,
            water_ppm: Some(water),
            acid_mgkoh_g: None,
            lab_ref: String::new(),
            note: "bench".into(),
            confirmed: None,
        }
    };
    Ok(sample)
}
