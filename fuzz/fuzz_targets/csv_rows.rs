//! Fuzz target: the CSV importer on any bytes, for each of the four file kinds.
//!
//! Byte 0 of the input picks the file kind (bits 0-1), keep-going mode (bit 2) and whether a
//! valid header for the kind is put in front (bit 3), so that the fuzzer also reaches the row
//! rules and not only the header check. The rest is the file. The shop is an in-memory one with
//! two units and a fluid; it is built again after any input that wrote to it, so every input
//! meets the same shop.
//!
//! Properties: no input panics; an import that fails writes nothing (the row counts are the
//! same before and after); the summary's counts add up (rows = inserted + unchanged + rejected).
#![no_main]

use std::cell::RefCell;
use std::path::PathBuf;

use libfuzzer_sys::fuzz_target;
use sumpbook::exchange::csv_in::import_reader;
use sumpbook::exchange::csv_out;
use sumpbook::exchange::FileKind;
use sumpbook::store::Store;
use sumpbook::units::UnitSystem;

const REGISTER: &str = "machine_tag,machine_name,unit_tag,pump_kind,rated_flow_lpm,relief_bar,reservoir_l,\
bore_mm,rod_mm,stroke_mm,timed_direction,sensitive_component,fluid_name,fluid_vg,fluid_kv40_cst,fluid_kv100_cst\n\
PR-01,Test press one,PR-01-HPU,piston_variable,120,210,400,160,110,300,extend,proportional_valve,Fuzz VG46,46,46,6.8\n\
PR-02,Test press two,PR-02-HPU,gear,40,160,120,80,45,200,retract,cylinder,Fuzz VG46,46,46,6.8\n";

fn fresh_shop() -> Store {
    let mut store = Store::open_in_memory().expect("an in-memory shop opens");
    import_reader(&mut store, FileKind::Units, "register.csv", REGISTER.as_bytes(), None)
        .expect("the fuzz shop's register imports");
    store
}

thread_local! {
    static SHOP: RefCell<Option<Store>> = const { RefCell::new(None) };
}

/// Rows of every kind, to tell whether a failed import left anything behind.
fn rows_stored(store: &Store) -> [u64; 4] {
    FileKind::ALL.map(|kind| {
        let mut sink = Vec::new();
        csv_out::export(store, kind, &mut sink, UnitSystem::Metric).expect("the fuzz shop exports")
    })
}

fuzz_target!(|data: &[u8]| {
    let Some((&mode, body)) = data.split_first() else { return };
    let kind = FileKind::ALL[usize::from(mode & 3)];
    let keep_going = mode & 4 != 0;
    let mut file = Vec::with_capacity(body.len() + 256);
    if mode & 8 != 0 {
        file.extend_from_slice(csv_out::header(kind, UnitSystem::Metric).join(",").as_bytes());
        file.push(b'\n');
    }
    file.extend_from_slice(body);
    // `/dev/null` takes the rejects of keep-going mode without leaving files behind.
    let rejects = keep_going.then(|| PathBuf::from("/dev/null"));

    SHOP.with(|cell| {
        let mut slot = cell.borrow_mut();
        let store = slot.get_or_insert_with(fresh_shop);
        let before = rows_stored(store);
        match import_reader(store, kind, "fuzz.csv", file.as_slice(), rejects) {
            Ok(summary) => {
                assert_eq!(
                    summary.rows,
                    summary.inserted + summary.unchanged + summary.rejected,
                    "summary counts disagree: {summary:?}"
                );
                if !keep_going {
                    assert_eq!(summary.rejected, 0, "{summary:?}");
                }
                if summary.inserted + summary.machines_added + summary.fluids_added > 0 {
                    *slot = None;
                }
            }
            Err(_) => {
                assert_eq!(rows_stored(store), before, "a failed import left rows behind");
            }
        }
    });
});
