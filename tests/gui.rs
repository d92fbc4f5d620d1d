//! The desktop app driven through its real slint components with slint's testing backend: find
//! elements by accessible label, type with key events or set values as assistive technology
//! would, press buttons by their default action, and read back what the shop file stored.
//!
//! Each test opens a fresh demo shop in a temporary directory; `init_no_event_loop` gives each
//! test thread its own headless platform.

use std::path::{Path, PathBuf};

use i_slint_backend_testing::{AccessibleRole, ElementHandle, ElementQuery};
use slint::platform::{Key, PointerEventButton, WindowEvent};
use slint::{ComponentHandle, Model, SharedString};
use sumpbook::app::shop::Shop;
use sumpbook::gui::ui::{Nav, SetupAdapter, WalkAdapter};
use sumpbook::gui::{App, Screen};

struct Fixture {
    _dir: tempfile::TempDir,
    path: PathBuf,
    app: App,
}

/// The instant the tests judge a shop at: noon a week after the demo's last walk-round, so the
/// board looks the same whatever day the tests run (work falls due as the calendar moves on).
fn demo_now() -> Option<chrono::DateTime<chrono::Utc>> {
    sumpbook::exchange::demo::end_date()
        .succ_opt()
        .and_then(|d| d.checked_add_days(chrono::Days::new(6)))
        .and_then(|d| d.and_hms_opt(12, 0, 0))
        .map(|t| t.and_utc())
}

fn open_demo() -> Fixture {
    open_demo_set(|_| {})
}

/// [`open_demo`] with `set` done to the shop before the app opens it.
fn open_demo_set(set: impl FnOnce(&Shop)) -> Fixture {
    i_slint_backend_testing::init_no_event_loop();
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("shop.sqlite");
    set(&Shop::create_demo(&path).unwrap());
    let app = App::open_at(&path, demo_now()).unwrap();
    // Tall enough that every list row of the demo is laid out (lists create visible rows only).
    app.window()
        .window()
        .set_size(slint::LogicalSize::new(1280.0, 1400.0));
    app.window().show().unwrap();
    Fixture {
        _dir: dir,
        path,
        app,
    }
}

fn shop(path: &Path) -> Shop {
    Shop::open(path).unwrap()
}

fn key(app: &App, text: impl Into<SharedString>) {
    let text = text.into();
    app.window()
        .window()
        .dispatch_event(WindowEvent::KeyPressed { text: text.clone() });
    app.window()
        .window()
        .dispatch_event(WindowEvent::KeyReleased { text });
}

fn type_text(app: &App, s: &str) {
    for c in s.chars() {
        key(app, c.to_string());
    }
}

fn by_label(app: &App, label: &str) -> ElementHandle {
    let found: Vec<ElementHandle> =
        ElementHandle::find_by_accessible_label(app.window(), label).collect();
    assert!(!found.is_empty(), "no element labelled {label:?}");
    found.into_iter().next().unwrap()
}

/// The element labelled `label` with accessible role `role` (a visible caption often carries
/// the same words as the field it names).
fn with_role(app: &App, label: &str, role: AccessibleRole) -> ElementHandle {
    ElementHandle::find_by_accessible_label(app.window(), label)
        .find(|e| e.accessible_role() == Some(role))
        .unwrap_or_else(|| panic!("no {role:?} labelled {label:?}"))
}

fn field(app: &App, label: &str) -> ElementHandle {
    with_role(app, label, AccessibleRole::TextInput)
}

fn button(app: &App, label: &str) -> ElementHandle {
    with_role(app, label, AccessibleRole::Button)
}

fn try_label(app: &App, label: &str) -> Option<ElementHandle> {
    ElementHandle::find_by_accessible_label(app.window(), label).next()
}

/// Accessible labels of elements whose label starts with `prefix`, top to bottom.
fn labels_starting(app: &App, prefix: &'static str) -> Vec<String> {
    let mut found: Vec<(f32, String)> = ElementQuery::from_root(app.window())
        .match_predicate(move |e| e.accessible_label().is_some_and(|l| l.starts_with(prefix)))
        .find_all()
        .into_iter()
        .map(|e| {
            (
                e.absolute_position().y,
                e.accessible_label().unwrap_or_default().to_string(),
            )
        })
        .collect();
    found.sort_by(|a, b| a.0.total_cmp(&b.0));
    found.into_iter().map(|(_, l)| l).collect()
}

fn message(app: &App) -> String {
    ElementHandle::find_by_accessible_label(app.window(), "message")
        .filter_map(|e| e.accessible_value())
        .map(|v| v.to_string())
        .filter(|v| !v.is_empty())
        .collect::<Vec<_>>()
        .join(" | ")
}

fn first_route_unit(path: &Path) -> (i64, String) {
    let s = shop(path);
    let stops = sumpbook::app::entry::route(&s).unwrap();
    (stops[0].unit_id, stops[0].tag.clone())
}

#[test]
fn a_walk_round_check_typed_from_the_keyboard_is_stored() {
    let f = open_demo();
    let (unit_id, tag) = first_route_unit(&f.path);
    let before = shop(&f.path)
        .store_for_tests()
        .checks_for_unit(unit_id, None)
        .unwrap();
    let last = before.last().unwrap().clone();
    f.app.show(Screen::Walk);
    // The walk-round's caution is on the screen (docs/engineering.md, "Safety").
    let caution = by_label(&f.app, "safety").accessible_value().unwrap();
    assert!(
        caution.contains("penetrate skin") && caution.contains("walk-round"),
        "{caution}"
    );
    // The cursor starts on Technician, the time is filled with now (the shop's clock, here
    // the fixed instant the app judges the demo at), and Tab goes on through the time to the
    // first reading.
    type_text(&f.app, "T. Tester");
    assert_eq!(
        field(&f.app, "Technician").accessible_value().unwrap(),
        "T. Tester"
    );
    let now = demo_now().unwrap();
    assert_eq!(
        field(&f.app, "Taken at").accessible_value().unwrap(),
        shop(&f.path).zone().show(now)
    );
    key(&f.app, Key::Tab);
    key(&f.app, Key::Tab);

    // Values close to the unit's last check, so that none is unusual.
    let oil = last.reservoir_temp.unwrap().c() + 1.0;
    let air = last.ambient_temp.unwrap().c();
    let bar = last.pressure.unwrap().bar();
    let stroke = last.stroke_time.unwrap().si() * 1.02;
    type_text(&f.app, &format!("{oil:.1}"));
    key(&f.app, Key::Tab);
    type_text(&f.app, &format!("{air:.1}"));
    key(&f.app, Key::Tab);
    type_text(&f.app, &format!("{bar:.1}"));
    key(&f.app, Key::Tab);
    type_text(&f.app, &format!("{stroke:.2}"));
    key(&f.app, Key::Tab);
    // The cycle time, a field of its own after the timed stroke.
    let cycle = last
        .cycle_time
        .expect("the first unit's checks carry a cycle time")
        .si();
    type_text(&f.app, &format!("{cycle:.1}"));
    key(&f.app, Key::Tab);
    type_text(&f.app, "o");
    key(&f.app, Key::Return);
    // The filter indicator and hour meter were read last time and are blank now: asked, and
    // Enter again saves without them.
    let msg = message(&f.app);
    assert!(
        msg.starts_with("Left blank") && msg.contains("Filter indicator"),
        "{msg}"
    );
    key(&f.app, Key::Return);

    let after = shop(&f.path)
        .store_for_tests()
        .checks_for_unit(unit_id, None)
        .unwrap();
    assert_eq!(
        after.len(),
        before.len() + 1,
        "one check stored; screen says: {}",
        message(&f.app)
    );
    let c = after
        .iter()
        .find(|c| c.by == "T. Tester")
        .expect("the new check");
    assert!((c.reservoir_temp.unwrap().c() - (oil * 10.0).round() / 10.0).abs() < 1e-9);
    assert!((c.ambient_temp.unwrap().c() - (air * 10.0).round() / 10.0).abs() < 1e-9);
    assert!((c.pressure.unwrap().bar() - (bar * 10.0).round() / 10.0).abs() < 1e-9);
    assert!((c.stroke_time.unwrap().si() - (stroke * 100.0).round() / 100.0).abs() < 1e-9);
    assert!((c.cycle_time.unwrap().si() - (cycle * 10.0).round() / 10.0).abs() < 1e-9);
    assert_eq!(c.oil_level, Some(sumpbook::model::OilLevel::Ok));
    assert_eq!(c.taken_at, now, "saved at the time the form showed");
    // Saved, with the unit's state, and on to the next unit.
    let msg = message(&f.app);
    assert!(msg.contains(&format!("Saved {tag}")), "{msg}");
    assert_eq!(f.app.window().global::<WalkAdapter>().get_current(), 1);

    // Page Down skips a unit: the cursor moves on and nothing is stored for it.
    let s = shop(&f.path);
    let second = sumpbook::app::entry::route(&s).unwrap()[1].unit_id;
    let n = s
        .store_for_tests()
        .checks_for_unit(second, None)
        .unwrap()
        .len();
    type_text(&f.app, "50");
    key(&f.app, Key::PageDown);
    assert_eq!(f.app.window().global::<WalkAdapter>().get_current(), 2);
    assert_eq!(
        shop(&f.path)
            .store_for_tests()
            .checks_for_unit(second, None)
            .unwrap()
            .len(),
        n
    );
    assert!(
        message(&f.app).starts_with("Skipped"),
        "{}",
        message(&f.app)
    );
}

#[test]
fn an_impossible_value_shows_the_reason_and_stores_nothing() {
    let f = open_demo();
    let (unit_id, _) = first_route_unit(&f.path);
    let before = shop(&f.path)
        .store_for_tests()
        .checks_for_unit(unit_id, None)
        .unwrap()
        .len();
    f.app.show(Screen::Walk);
    field(&f.app, "Technician").set_accessible_value("T. Tester");
    field(&f.app, "Reservoir temperature").set_accessible_value("320");
    button(&f.app, "Save and next").invoke_accessible_default_action();

    let problem = by_label(&f.app, "Reservoir temperature problem")
        .accessible_value()
        .unwrap_or_default();
    // docs/engineering.md, "Physical bounds of readings": temperatures above 150 °C are
    // refused, with the range in the message.
    assert!(problem.contains("150"), "{problem}");
    assert!(
        message(&f.app).starts_with("Not saved"),
        "{}",
        message(&f.app)
    );
    assert_eq!(
        shop(&f.path)
            .store_for_tests()
            .checks_for_unit(unit_id, None)
            .unwrap()
            .len(),
        before
    );
    // Still on the same unit, so the value can be corrected.
    assert_eq!(f.app.window().global::<WalkAdapter>().get_current(), 0);

    // An unusual (possible) value asks first, and a second Save keeps it.
    field(&f.app, "Reservoir temperature").set_accessible_value("95");
    button(&f.app, "Save and next").invoke_accessible_default_action();
    assert!(
        message(&f.app).starts_with("Unusual"),
        "{}",
        message(&f.app)
    );
    assert_eq!(
        shop(&f.path)
            .store_for_tests()
            .checks_for_unit(unit_id, None)
            .unwrap()
            .len(),
        before
    );
    button(&f.app, "Save and next").invoke_accessible_default_action();
    assert_eq!(
        shop(&f.path)
            .store_for_tests()
            .checks_for_unit(unit_id, None)
            .unwrap()
            .len(),
        before + 1
    );
}

#[test]
fn switching_to_us_units_changes_the_figures_shown() {
    let f = open_demo();
    let (unit_id, _) = first_route_unit(&f.path);
    let last_c = shop(&f.path)
        .store_for_tests()
        .checks_for_unit(unit_id, None)
        .unwrap()
        .last()
        .unwrap()
        .reservoir_temp
        .unwrap()
        .c();
    // Beside the first walk-round field: last time's reservoir temperature, in °C.
    f.app.show(Screen::Walk);
    let (v, unit) = leading_figure(&walk_hint(&f.app));
    assert_eq!(unit, "°C");
    assert!((v - last_c).abs() < 0.051, "{v} against {last_c}");

    // Setup: choose US customary in the drop-down from the keyboard, then save.
    f.app.show(Screen::Setup);
    with_role(&f.app, "Units of measure", AccessibleRole::Combobox)
        .mock_single_click(PointerEventButton::Left);
    key(&f.app, Key::DownArrow);
    key(&f.app, Key::Return);
    assert_eq!(
        f.app.window().global::<SetupAdapter>().get_unit_system(),
        1,
        "US customary chosen"
    );
    field(&f.app, "Changed by").set_accessible_value("T. Tester");
    button(&f.app, "Save shop settings").invoke_accessible_default_action();
    assert_eq!(
        shop(&f.path)
            .store_for_tests()
            .settings()
            .unwrap()
            .unit_system,
        sumpbook::units::UnitSystem::Us
    );
    assert_eq!(
        f.app.window().global::<Nav>().get_unit_system(),
        "US customary"
    );

    // The same reading now in °F: t_F = t_C × 9/5 + 32 (exact by definition of the scales).
    f.app.show(Screen::Walk);
    let (v, unit) = leading_figure(&walk_hint(&f.app));
    assert_eq!(unit, "°F");
    assert!((v - (last_c * 9.0 / 5.0 + 32.0)).abs() < 0.051, "{v}");
    // The fleet board too: heat rise in °F steps, not K.
    f.app.show(Screen::Fleet);
    let rows = labels_starting(&f.app, "");
    let row = rows
        .iter()
        .find(|l| l.contains("heat rise"))
        .cloned()
        .expect("a steady row with its heat rise");
    assert!(row.contains("°F") && !row.contains(" K "), "{row}");
}

/// `93.0 °F · 4 d ago` → (93.0, "°F").
fn leading_figure(text: &str) -> (f64, String) {
    let mut parts = text.split_whitespace();
    let v = parts
        .next()
        .and_then(|n| n.parse().ok())
        .unwrap_or(f64::NAN);
    (v, parts.next().unwrap_or("").to_string())
}

/// The text beside the first walk-round field (the last reservoir temperature).
fn walk_hint(app: &App) -> String {
    let rows = app.window().global::<WalkAdapter>().get_fields();
    slint::Model::row_data(&rows, 0)
        .map(|r| r.hint.to_string())
        .unwrap_or_default()
}

#[test]
fn acknowledging_a_flag_stores_who_and_why() {
    let f = open_demo();
    f.app.show(Screen::Fleet);
    // The worst unit is at the top of the board; open it as a user would.
    let rows = labels_starting(&f.app, "");
    let top = rows
        .iter()
        .find(|l| l.contains(", ACT, "))
        .cloned()
        .expect("an act unit on the board");
    let tag = top.split(',').next().unwrap().to_string();
    by_label(&f.app, &top).invoke_accessible_default_action();
    assert_eq!(f.app.window().global::<Nav>().get_screen(), Screen::Unit);

    let label = labels_starting(&f.app, "Acknowledge ")
        .into_iter()
        .next()
        .expect("a flag to acknowledge");
    let kind = label.trim_start_matches("Acknowledge ").to_string();
    button(&f.app, &label).invoke_accessible_default_action();
    field(&f.app, "Acknowledged by").set_accessible_value("R. Engineer");
    field(&f.app, "Acknowledgement note").set_accessible_value("pump inspection booked");
    button(&f.app, "Save acknowledgement").invoke_accessible_default_action();

    let s = shop(&f.path);
    let unit = s.store_for_tests().unit_by_tag(&tag).unwrap().unwrap();
    let acks = s.store_for_tests().acks(unit.id).unwrap();
    assert_eq!(acks.len(), 1, "{}", message(&f.app));
    assert_eq!(acks[0].kind, kind);
    assert_eq!(acks[0].by, "R. Engineer");
    assert_eq!(acks[0].note, "pump inspection booked");
    // The page shows it seen.
    assert!(try_label(&f.app, &format!("flag {kind}")).is_some());
    assert!(
        message(&f.app).contains("Acknowledged"),
        "{}",
        message(&f.app)
    );
}

#[test]
fn the_fleet_board_lists_the_demo_units_worst_first() {
    let f = open_demo();
    f.app.show(Screen::Fleet);
    let s = shop(&f.path);
    let units: Vec<String> = s
        .store_for_tests()
        .units()
        .unwrap()
        .into_iter()
        .filter(|u| !u.archived)
        .map(|u| u.tag)
        .collect();
    let rows: Vec<String> = labels_starting(&f.app, "")
        .into_iter()
        .filter(|l| units.iter().any(|t| l.starts_with(&format!("{t}, "))))
        .collect();
    assert_eq!(rows.len(), units.len(), "every unit once: {rows:?}");
    let rank = |l: &str| {
        if l.contains(", ACT, ") {
            3
        } else if l.contains(", WATCH, ") {
            2
        } else if l.contains(", not judged yet, ") {
            1
        } else {
            assert!(l.contains(", steady, "), "{l}");
            0
        }
    };
    let ranks: Vec<i32> = rows.iter().map(|l| rank(l)).collect();
    assert!(
        ranks.windows(2).all(|w| w[0] >= w[1]),
        "worst first: {rows:?}"
    );
    // The demo plants faults (pump wear, water ingress, ...): some units are at act, some steady.
    assert!(ranks.contains(&3) && ranks.contains(&0), "{rows:?}");
    // The board shows the one evaluation of the application layer, in its order.
    let fleet = sumpbook::app::status::fleet_status(&s, demo_now()).unwrap();
    let tags: Vec<String> = rows
        .iter()
        .map(|l| l.split(',').next().unwrap().to_string())
        .collect();
    let expected: Vec<String> = fleet.units.iter().map(|u| u.unit.clone()).collect();
    assert_eq!(tags, expected);
    // Searching by tag shows only that unit.
    field(&f.app, "Search by tag").set_accessible_value(&tags[0]);
    let filtered: Vec<String> = labels_starting(&f.app, "")
        .into_iter()
        .filter(|l| units.iter().any(|t| l.starts_with(&format!("{t}, "))))
        .collect();
    assert_eq!(filtered.len(), 1, "{filtered:?}");
}

/// Advances slint's mock clock (timers run) until `done` holds or ten seconds of real time
/// have passed; for work handed to a worker thread.
fn wait_for(done: impl Fn() -> bool) {
    let start = std::time::Instant::now();
    while !done() {
        assert!(
            start.elapsed() < std::time::Duration::from_secs(10),
            "timed out"
        );
        i_slint_backend_testing::mock_elapsed_time(std::time::Duration::from_millis(50));
        std::thread::sleep(std::time::Duration::from_millis(10));
    }
}

fn pdf_text(pdf: &Path) -> String {
    let out = std::process::Command::new("pdftotext")
        .args(["-raw", pdf.to_str().unwrap(), "-"])
        .output()
        .expect("pdftotext (poppler-utils) runs");
    String::from_utf8_lossy(&out.stdout).into_owned()
}

#[test]
fn the_reports_screen_writes_the_chosen_units_and_opens_the_pdf() {
    let f = open_demo();
    f.app.run_jobs_inline();
    let opened = std::rc::Rc::new(std::cell::RefCell::new(Vec::<PathBuf>::new()));
    let o = opened.clone();
    f.app.set_file_opener(move |p| {
        o.borrow_mut().push(p.to_path_buf());
        Ok(())
    });
    f.app.show(Screen::Reports);
    // Every unit is listed, worst first as on the board, and starts ticked.
    let s = shop(&f.path);
    let fleet = sumpbook::app::status::fleet_status(&s, demo_now()).unwrap();
    let listed: Vec<String> = labels_starting(&f.app, "include ")
        .into_iter()
        .map(|l| l.trim_start_matches("include ").to_string())
        .collect();
    let expected: Vec<String> = fleet.units.iter().map(|u| u.unit.clone()).collect();
    assert_eq!(listed, expected);
    // The period defaults to the last 91 days; the caution is on the screen.
    let to = with_role(&f.app, "Report to", AccessibleRole::TextInput)
        .accessible_value()
        .unwrap();
    assert_eq!(to.as_str(), demo_now().unwrap().date_naive().to_string());
    let safety = by_label(&f.app, "safety").accessible_value().unwrap();
    assert!(safety.contains("penetrate skin"), "{safety}");

    // No unit chosen: refused with the reason, no file.
    let out = f._dir.path().join("report");
    field(&f.app, "Report file").set_accessible_value(out.to_str().unwrap());
    button(&f.app, "Choose no unit").invoke_accessible_default_action();
    button(&f.app, "Write report").invoke_accessible_default_action();
    assert!(
        message(&f.app).contains("choose at least one unit"),
        "{}",
        message(&f.app)
    );
    // A date that is not one is refused, naming the field.
    by_label(&f.app, &format!("include {}", expected[0])).invoke_accessible_default_action();
    by_label(&f.app, &format!("include {}", expected[2])).invoke_accessible_default_action();
    field(&f.app, "Report from").set_accessible_value("2026-13-40");
    button(&f.app, "Write report").invoke_accessible_default_action();
    let m = message(&f.app);
    assert!(m.contains("From") && m.contains("2026-13-40"), "{m}");
    assert!(!out.with_extension("pdf").exists());

    // Two units, letter paper, a name: written, reported and opened.
    field(&f.app, "Report from").set_accessible_value("");
    field(&f.app, "Prepared by").set_accessible_value("Night shift lead");
    f.app
        .window()
        .global::<sumpbook::gui::ui::ReportAdapter>()
        .set_paper(1);
    button(&f.app, "Write report").invoke_accessible_default_action();
    let pdf = out.with_extension("pdf");
    let m = message(&f.app);
    assert!(
        m.contains("Wrote") && m.contains("(1 fleet, 2 units)"),
        "{m}"
    );
    assert!(pdf.is_file(), "{m}");
    assert_eq!(*opened.borrow(), vec![pdf.clone()]);
    let text = pdf_text(&pdf);
    // A unit page is headed "TAG · name": the two chosen have one, the one left out none.
    assert!(text.contains(&format!("{} · ", expected[0])), "{text}");
    assert!(text.contains(&format!("{} · ", expected[2])), "{text}");
    assert!(!text.contains(&format!("{} · ", expected[1])), "{text}");
    assert!(text.contains("Night shift lead"));
    // The folder button opens the folder it was written to.
    button(&f.app, "Open the report's folder").invoke_accessible_default_action();
    assert_eq!(opened.borrow().last().unwrap(), f._dir.path());
}

#[test]
fn a_report_cancelled_on_the_screen_writes_nothing() {
    let f = open_demo();
    f.app.set_file_opener(|_| Err("no viewer in tests".into()));
    f.app.show(Screen::Reports);
    let out = f._dir.path().join("cancelled.pdf");
    field(&f.app, "Report file").set_accessible_value(out.to_str().unwrap());
    button(&f.app, "Write report").invoke_accessible_default_action();
    // The worker evaluates the fleet before its first progress step, where it sees the flag.
    button(&f.app, "Cancel report").invoke_accessible_default_action();
    let a = f.app.window().global::<sumpbook::gui::ui::ReportAdapter>();
    wait_for(|| !a.get_running());
    assert!(message(&f.app).contains("cancelled"), "{}", message(&f.app));
    assert!(!out.exists());
    // Written in full the next time; the viewer's failure is told, the file is kept.
    button(&f.app, "Write report").invoke_accessible_default_action();
    wait_for(|| !a.get_running());
    let m = message(&f.app);
    assert!(
        m.contains("Wrote") && m.contains("no viewer in tests"),
        "{m}"
    );
    assert!(out.is_file());
}

#[test]
fn the_window_comes_up_before_the_fleet_is_evaluated_and_fills_after() {
    i_slint_backend_testing::init_no_event_loop();
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("shop.sqlite");
    Shop::create_demo(&path).unwrap();
    let app = App::open_loading_at(&path, demo_now()).unwrap();
    let fleet = app.window().global::<sumpbook::gui::ui::FleetAdapter>();
    // At once: the shop's name, and a board saying it is being read.
    assert_eq!(
        app.window().global::<Nav>().get_shop_name().as_str(),
        shop(&path).store_for_tests().settings().unwrap().shop_name
    );
    assert!(fleet.get_summary().starts_with("Reading the shop"));
    wait_for(|| fleet.get_summary().starts_with("11 units"));
    use slint::Model;
    assert_eq!(fleet.get_rows().row_count(), 11);
}

#[test]
fn a_long_history_table_makes_only_the_rows_on_screen() {
    // One unit with 5,000 weekly checks: the table holds them all, but only the rows a screen
    // shows are made (docs/engineering.md, "Performance targets": tables scroll long histories
    // without loading them all).
    i_slint_backend_testing::init_no_event_loop();
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("long.sqlite");
    {
        let mut store =
            sumpbook::store::Store::open(&path, sumpbook::store::OpenMode::Create).unwrap();
        let spec = sumpbook::exchange::large_shop::Spec {
            units: 1,
            checks: 5000,
            samples: 50,
        };
        sumpbook::exchange::large_shop::load(&mut store, &spec, false).unwrap();
    }
    let app = App::open(&path).unwrap();
    app.window()
        .window()
        .set_size(slint::LogicalSize::new(1280.0, 800.0));
    app.window().show().unwrap();
    let s = shop(&path);
    let unit = s.store_for_tests().units().unwrap().remove(0);
    let checks = s.store_for_tests().checks_for_unit(unit.id, None).unwrap();
    app.open_unit(unit.id);
    let a = app.window().global::<sumpbook::gui::ui::UnitAdapter>();
    a.set_tab(2);
    // Finding an element lays the screen out, which makes the table's visible rows.
    let _ = labels_starting(&app, "");
    use slint::Model;
    let rows = a.get_rows();
    assert_eq!(rows.row_count(), checks.len());
    let lazy = rows
        .as_any()
        .downcast_ref::<sumpbook::gui::HistoryRows>()
        .expect("the history table's rows are made on demand");
    assert!(lazy.rows_made() > 0, "the rows on screen are made");
    assert!(lazy.rows_made() < 200, "{} rows made", lazy.rows_made());
    // Newest first, and a row asked for far down is the right one.
    let newest = sumpbook::app::entry::show_time(checks.last().unwrap().taken_at, s.zone());
    let first = rows.row_data(0).unwrap().row_data(0).unwrap().text;
    assert_eq!(first.as_str(), newest);
    let oldest = sumpbook::app::entry::show_time(checks[0].taken_at, s.zone());
    let last = rows
        .row_data(checks.len() - 1)
        .unwrap()
        .row_data(0)
        .unwrap()
        .text;
    assert_eq!(last.as_str(), oldest);
}

#[test]
fn an_existing_report_file_is_replaced_only_when_written_to_again_and_the_default_is_free() {
    let f = open_demo();
    f.app.set_file_opener(|_| Ok(()));
    // The proposed file is today's report under a name nothing is at yet.
    let today = demo_now().unwrap().date_naive();
    f.app.show(Screen::Reports);
    let a = f.app.window().global::<sumpbook::gui::ui::ReportAdapter>();
    let proposed = std::path::PathBuf::from(a.get_out().as_str());
    let name = proposed.file_name().unwrap().to_string_lossy().into_owned();
    assert!(
        name.starts_with(&format!("condition-report-{today}")),
        "{name}"
    );
    assert!(std::fs::symlink_metadata(&proposed).is_err(), "{name}");
    let out = f._dir.path().join("kept.pdf");
    std::fs::write(&out, "an earlier report").unwrap();
    field(&f.app, "Report file").set_accessible_value(out.to_str().unwrap());
    button(&f.app, "Write report").invoke_accessible_default_action();
    let m = message(&f.app);
    assert!(m.contains("already exists") && m.contains("again"), "{m}");
    assert_eq!(std::fs::read_to_string(&out).unwrap(), "an earlier report");
    // Asked and answered: the second press replaces it.
    button(&f.app, "Write report").invoke_accessible_default_action();
    wait_for(|| !a.get_running());
    let m = message(&f.app);
    assert!(m.contains("Wrote"), "{m}");
    assert!(std::fs::read(&out).unwrap().starts_with(b"%PDF"));

    // The default name never points at an existing file: the next free one is proposed.
    let folder = f._dir.path();
    std::fs::write(folder.join(format!("condition-report-{today}.pdf")), "x").unwrap();
    assert_eq!(
        sumpbook::app::report::default_out_path(folder, today),
        folder.join(format!("condition-report-{today}-2.pdf"))
    );
}

#[test]
fn a_unit_without_readings_since_its_fluid_change_shows_not_judged_yet_and_what_is_missing() {
    use chrono::Timelike;
    i_slint_backend_testing::init_no_event_loop();
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("shop.sqlite");
    let tag = {
        let s = Shop::create_demo(&path).unwrap();
        // A fluid change an hour before the board is judged, on the last unit of the route: a
        // new era, no reading yet.
        let stops = sumpbook::app::entry::route(&s).unwrap();
        let tag = stops.last().unwrap().tag.clone();
        let input = sumpbook::app::work::EventInput {
            kind: sumpbook::model::EventKind::FluidChange,
            at: demo_now().map(|t| t - chrono::Duration::hours(1)),
            volume: None,
            fluid: None,
            by: "R. Engineer".into(),
            note: String::new(),
            details: Default::default(),
            confirmed: false,
        };
        sumpbook::app::work::log_event(&s, &tag, &input).unwrap();
        // And its first walk-round check of the new era, half an hour later (so no check is
        // overdue whatever the day the test runs): one check is no baseline.
        let unit = s.store_for_tests().unit_by_tag(&tag).unwrap().unwrap();
        let mut c = s
            .store_for_tests()
            .checks_for_unit(unit.id, None)
            .unwrap()
            .pop()
            .unwrap();
        c.taken_at = (chrono::Utc::now() - chrono::Duration::minutes(30))
            .with_nanosecond(0)
            .unwrap();
        s.store_for_tests().insert_check(&c).unwrap();
        tag
    };
    let app = App::open_at(&path, demo_now()).unwrap();
    app.window()
        .window()
        .set_size(slint::LogicalSize::new(1280.0, 1400.0));
    app.window().show().unwrap();
    app.show(Screen::Fleet);
    let row = labels_starting(&app, "")
        .into_iter()
        .find(|l| l.starts_with(&format!("{tag}, ")))
        .expect("the unit is on the board");
    // Its own word and figure: never "steady" over tiles that have nothing to say.
    assert!(row.contains(", not judged yet, "), "{row}");
    assert!(row.contains("judged "), "what is missing and when: {row}");
    by_label(&app, &row).invoke_accessible_default_action();
    assert_eq!(app.window().global::<Nav>().get_screen(), Screen::Unit);
    assert!(
        try_label(&app, "state not judged yet").is_some(),
        "the page's own mark"
    );
    assert!(
        try_label(&app, "Flags: none — but not judged yet (below)").is_some(),
        "not the steady sentence"
    );
    assert!(try_label(&app, "Flags: none — every indicator is steady").is_none());
    let missing = labels_starting(&app, "Lost flow");
    assert!(
        missing.iter().any(|l| l.contains("not judged yet")),
        "the lost-flow tile says not judged yet: {missing:?}"
    );
}

#[test]
fn a_questioned_reading_is_marked_in_the_history_and_confirmed_from_the_unit_page() {
    use slint::Model;
    i_slint_backend_testing::init_no_event_loop();
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("shop.sqlite");
    let (unit_id, id) = {
        let s = Shop::create_demo(&path).unwrap();
        let (unit_id, _) = first_route_unit(&path);
        let mut c = s
            .store_for_tests()
            .checks_for_unit(unit_id, None)
            .unwrap()
            .pop()
            .unwrap();
        // The oil temperature with its decimal point slipped one place, an hour later.
        c.taken_at += chrono::Duration::hours(1);
        c.reservoir_temp = c
            .reservoir_temp
            .map(|t| sumpbook::units::Temperature::from_c(t.c() / 10.0));
        c.by = "AK".into();
        let id = s.store_for_tests().insert_check(&c).unwrap();
        (unit_id, id)
    };
    let app = App::open(&path).unwrap();
    app.window()
        .window()
        .set_size(slint::LogicalSize::new(1280.0, 1400.0));
    app.window().show().unwrap();
    app.open_unit(unit_id);
    let a = app.window().global::<sumpbook::gui::ui::UnitAdapter>();
    // The overview lists it among the questioned readings, with the screening's reason.
    assert!(
        a.get_questioned()
            .iter()
            .any(|l| l.contains("decimal point")),
        "{:?}",
        a.get_questioned().iter().collect::<Vec<_>>()
    );
    a.set_tab(2);
    let _ = labels_starting(&app, "");
    let cell = a.get_rows().row_data(0).unwrap().row_data(1).unwrap().text;
    assert!(
        cell.contains("reservoir temperature") && cell.contains("left out"),
        "{cell}"
    );
    a.set_current_row(0);
    a.invoke_select_row(0);
    let _ = labels_starting(&app, "");
    assert!(a.get_suspect_text().contains("decimal point"));
    field(&app, "Changed by").set_accessible_value("R. Engineer");
    field(&app, "Reason for the change").set_accessible_value("oil was cold after the weekend");
    button(&app, "Confirm reading").invoke_accessible_default_action();
    let stored = shop(&path).store_for_tests().check(id).unwrap().unwrap();
    let k = stored.confirmed.expect("stored as confirmed");
    assert_eq!(k.by, "R. Engineer");
    let log = shop(&path)
        .store_for_tests()
        .edit_history("checks", id)
        .unwrap();
    assert_eq!(log.len(), 1);
    assert!(log[0].reason.contains("oil was cold after the weekend"));
    // Confirmed: the confirmation can be lifted again from the same place.
    let _ = labels_starting(&app, "");
    assert!(a.get_can_lift(), "{}", message(&app));
    assert!(!a.get_can_confirm());
    field(&app, "Reason for the change").set_accessible_value("gauge found broken");
    button(&app, "Lift confirmation").invoke_accessible_default_action();
    assert_eq!(
        shop(&path)
            .store_for_tests()
            .check(id)
            .unwrap()
            .unwrap()
            .confirmed,
        None
    );
}

#[test]
fn a_save_made_elsewhere_shows_on_the_board_at_the_next_look() {
    let f = open_demo();
    f.app.show(Screen::Fleet);
    // Nothing saved since the window opened: the look changes nothing.
    assert!(!f.app.look_for_saves());
    // Another program (here another connection to the same file) logs a fluid change on the
    // last unit of the route: a new era with no reading yet, so the board must say so.
    let tag = {
        let other = shop(&f.path);
        let stops = sumpbook::app::entry::route(&other).unwrap();
        let tag = stops.last().unwrap().tag.clone();
        let input = sumpbook::app::work::EventInput {
            kind: sumpbook::model::EventKind::FluidChange,
            at: demo_now().map(|t| t - chrono::Duration::hours(1)),
            volume: None,
            fluid: None,
            by: "R. Engineer".into(),
            note: String::new(),
            details: Default::default(),
            confirmed: false,
        };
        sumpbook::app::work::log_event(&other, &tag, &input).unwrap();
        tag
    };
    let row_of = |app: &App| {
        labels_starting(app, "")
            .into_iter()
            .find(|l| l.starts_with(&format!("{tag}, ")))
            .expect("the unit is on the board")
    };
    let before = row_of(&f.app);
    assert!(!before.contains("fluid change"), "{before}");
    assert!(f.app.look_for_saves(), "the other program's save is seen");
    let after = row_of(&f.app);
    assert_ne!(before, after, "the board shows the save");
    // Seen once: the next look finds nothing new.
    assert!(!f.app.look_for_saves());
}

#[test]
fn a_technician_on_a_server_sees_who_is_signed_in_and_setup_greyed_out_with_the_reason() {
    let Some(admin_url) = crate::backends::server() else {
        return;
    };
    i_slint_backend_testing::init_no_event_loop();
    let dir = tempfile::tempdir().unwrap();
    let url = crate::backends::new_database();
    let run = |args: &[&str]| {
        let out = std::process::Command::new(env!("CARGO_BIN_EXE_sumpbook"))
            .args(args)
            .current_dir(dir.path())
            .output()
            .unwrap();
        assert!(
            out.status.success(),
            "{args:?}: {}",
            String::from_utf8_lossy(&out.stderr)
        );
    };
    run(&["--db", &url, "demo"]);
    run(&["--db", &url, "roles", "--create"]);
    let name = format!(
        "gui_tech_{}_{}",
        std::process::id(),
        url.rsplit('_').next().unwrap()
    );
    postgres::Client::connect(admin_url, postgres::NoTls)
        .unwrap()
        .batch_execute(&format!("CREATE ROLE {name} LOGIN"))
        .unwrap();
    run(&[
        "--db",
        &url,
        "roles",
        "--grant",
        &name,
        "--role",
        "technician",
    ]);
    let tech = crate::backends::as_user(&url, &name);

    let app = App::open_at(Path::new(&tech), demo_now()).unwrap();
    app.window().show().unwrap();
    // The rail says who is signed in and as what.
    let who = by_label(&app, "Signed in").accessible_value().unwrap();
    assert!(who.starts_with(&format!("{name} — technician")), "{who}");
    // Setup is greyed out, with the reason beside it.
    app.show(Screen::Setup);
    let why = by_label(&app, "Setup is read-only")
        .accessible_value()
        .unwrap();
    assert!(why.contains("engineer role"), "{why}");
    assert_eq!(
        by_label(&app, "Save shop settings").accessible_enabled(),
        Some(false)
    );
    // The walk-round is the technician's own work: its save stays open.
    app.show(Screen::Walk);
    assert_eq!(
        by_label(&app, "Save and next").accessible_enabled(),
        Some(true)
    );
}

#[test]
fn a_server_that_goes_away_keeps_the_typed_form_says_so_and_saves_once_it_is_back() {
    let Some(admin_url) = crate::backends::server() else {
        return;
    };
    i_slint_backend_testing::init_no_event_loop();
    let dir = tempfile::tempdir().unwrap();
    let url = crate::backends::new_database();
    let out = std::process::Command::new(env!("CARGO_BIN_EXE_sumpbook"))
        .args(["--db", &url, "demo"])
        .current_dir(dir.path())
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let db = PathBuf::from(&url);
    let db_name = url.rsplit('/').next().unwrap().to_string();
    let (unit_id, _) = first_route_unit(&db);
    let count = || {
        shop(&db)
            .store_for_tests()
            .checks_for_unit(unit_id, None)
            .unwrap()
            .len()
    };
    let before = count();

    let app = App::open_at(&db, demo_now()).unwrap();
    app.window().show().unwrap();
    app.show(Screen::Walk);
    // Last time's reservoir temperature, so that the reading asks no confirmation.
    let (last, _) = leading_figure(&walk_hint(&app));
    let typed = format!("{last:.1}");
    field(&app, "Technician").set_accessible_value("T. Tester");
    field(&app, "Reservoir temperature").set_accessible_value(&typed);

    // The server stops taking this shop's connections and ends the open ones, as a restart
    // or a network drop would.
    let mut admin = postgres::Client::connect(admin_url, postgres::NoTls).unwrap();
    let set_open = |admin: &mut postgres::Client, open: bool| {
        admin
            .batch_execute(&format!(
                "ALTER DATABASE {db_name} ALLOW_CONNECTIONS {open}"
            ))
            .unwrap();
    };
    set_open(&mut admin, false);
    admin
        .execute(
            "SELECT pg_terminate_backend(pid) FROM pg_stat_activity \
             WHERE datname = $1 AND pid <> pg_backend_pid()",
            &[&db_name],
        )
        .unwrap();

    // The window's next look for saves meets the loss and says so in the rail.
    assert!(!app.look_for_saves());
    let rail = by_label(&app, "Connection").accessible_value().unwrap();
    assert!(rail.contains("not answering"), "{rail}");
    // A save while it is away: refused in plain words, and the form keeps what was typed.
    button(&app, "Save and next").invoke_accessible_default_action();
    let said = message(&app);
    assert!(
        said.contains("cannot be reached") && said.contains("What you typed is kept"),
        "{said}"
    );
    assert_eq!(
        field(&app, "Reservoir temperature")
            .accessible_value()
            .unwrap(),
        typed.as_str()
    );
    assert_eq!(
        field(&app, "Technician").accessible_value().unwrap(),
        "T. Tester"
    );
    assert_eq!(app.window().global::<WalkAdapter>().get_current(), 0);

    // The server is back: the same Save goes through on a new connection.
    set_open(&mut admin, true);
    button(&app, "Save and next").invoke_accessible_default_action();
    // One reading typed: the others the last check had are asked about first.
    assert!(message(&app).starts_with("Left blank"), "{}", message(&app));
    button(&app, "Save and next").invoke_accessible_default_action();
    assert!(message(&app).starts_with("Saved"), "{}", message(&app));
    assert_eq!(count(), before + 1);
    // And the rail's warning goes at the next look.
    app.look_for_saves();
    assert!(try_label(&app, "Connection").is_none());
}

#[test]
fn an_empty_shop_board_points_to_setup_and_import() {
    // With units, an empty list is the filter's doing, and says that.
    let f = open_demo();
    f.app.show(Screen::Fleet);
    let fleet = f.app.window().global::<sumpbook::gui::ui::FleetAdapter>();
    fleet.set_search("no such unit".into());
    fleet.invoke_filter_changed();
    let said = by_label(&f.app, "Board empty").accessible_value().unwrap();
    assert_eq!(said, "No unit matches the filter.");
    // A shop without units points to where they come from.
    let path = f._dir.path().join("empty.sqlite");
    drop(Shop::create(&path).unwrap());
    let app = App::open_at(&path, demo_now()).unwrap();
    app.window().show().unwrap();
    app.show(Screen::Fleet);
    let said = by_label(&app, "Board empty").accessible_value().unwrap();
    assert!(said.contains("Setup") && said.contains("Import"), "{said}");
}

#[test]
fn a_correction_over_someone_elses_is_refused_naming_who_changed_the_reading() {
    let f = open_demo();
    let s = shop(&f.path);
    let unit_id = s.store_for_tests().units().unwrap()[0].id;
    f.app.open_unit(unit_id);
    let a = f.app.window().global::<sumpbook::gui::ui::UnitAdapter>();
    // The checks table; the newest check chosen for correction.
    a.set_tab(2);
    let _ = labels_starting(&f.app, "");
    a.set_current_row(0);
    a.invoke_select_row(0);
    let _ = labels_starting(&f.app, "");
    let id = s
        .store_for_tests()
        .checks_for_unit(unit_id, None)
        .unwrap()
        .last()
        .unwrap()
        .id;
    // Meanwhile someone else corrects the same check from another window.
    let which = sumpbook::app::entry::Reading::Check;
    let fields = sumpbook::app::entry::reading_fields(&s, which, id).unwrap();
    let mut theirs = sumpbook::app::entry::Entered::from_fields(&fields);
    theirs.set("note", "read twice");
    let saved =
        sumpbook::app::entry::edit_reading(&s, which, id, &theirs, "P. Other", "typo").unwrap();
    assert!(matches!(
        saved,
        sumpbook::app::entry::SaveOutcome::Saved(())
    ));
    // This window's save is refused and says who changed the reading; nothing is overwritten.
    field(&f.app, "Changed by").set_accessible_value("R. Engineer");
    field(&f.app, "Reason for the change").set_accessible_value("tidy the note");
    button(&f.app, "Save change").invoke_accessible_default_action();
    let said = a.get_edit_message().to_string();
    assert!(said.contains("P. Other"), "{said}");
    assert_eq!(
        shop(&f.path)
            .store_for_tests()
            .check(id)
            .unwrap()
            .unwrap()
            .note,
        "read twice"
    );
}

/// A shop whose write-ahead log was removed after the program writing to it stopped unclean
/// has lost the changes saved in it: the window says so above every screen, naming the log,
/// and the whole app works on. A shop closed cleanly shows no such line.
#[test]
fn a_shop_whose_log_was_removed_after_a_crash_says_so_above_every_screen() {
    i_slint_backend_testing::init_no_event_loop();
    let dir = tempfile::tempdir().unwrap();
    let lost = crate::reliability::shop_left_open_after_a_check(
        &dir.path().join("held"),
        &dir.path().join("lost"),
    );
    let mut log = lost.as_os_str().to_os_string();
    log.push("-wal");
    std::fs::remove_file(&log).unwrap();
    let app = App::open(&lost).unwrap();
    app.window().show().unwrap();
    let said = app.window().global::<Nav>().get_shop_warning();
    assert!(
        said.contains("stopped without closing it") && said.contains("shop.sqlite-wal"),
        "{said}"
    );
    for screen in [Screen::Fleet, Screen::Work] {
        app.show(screen);
        let line = by_label(&app, "Shop warning").accessible_value().unwrap();
        assert_eq!(line.as_str(), said.as_str());
    }

    let clean = dir.path().join("clean.sqlite");
    Shop::create_demo(&clean).unwrap();
    let app = App::open(&clean).unwrap();
    assert_eq!(app.window().global::<Nav>().get_shop_warning().as_str(), "");
    assert!(
        ElementHandle::find_by_accessible_label(app.window(), "Shop warning")
            .next()
            .is_none()
    );
}

#[test]
fn a_new_york_shop_chosen_from_the_list_reads_and_shows_new_york_time() {
    // Offsets and change-overs of America/New_York: US Energy Policy Act of 2005 (EST =
    // UTC-5; daylight saving time begins 2026-03-08 at 02:00), as the IANA time-zone database
    // holds them.
    let f = open_demo();
    f.app.show(Screen::Setup);
    // The zone is chosen from the list, narrowed by the words typed beside it.
    field(&f.app, "Find a time zone").set_accessible_value("new york");
    let choices = f.app.window().global::<SetupAdapter>().get_zone_choices();
    use slint::Model;
    assert_eq!(
        choices.iter().map(|c| c.to_string()).collect::<Vec<_>>(),
        ["America/New_York"]
    );
    with_role(&f.app, "Time zone", AccessibleRole::Combobox)
        .mock_single_click(PointerEventButton::Left);
    key(&f.app, Key::DownArrow);
    key(&f.app, Key::Return);
    assert_eq!(
        f.app.window().global::<SetupAdapter>().get_time_zone(),
        "America/New_York"
    );
    // The electricity price is set on the same tab.
    field(&f.app, "Electricity price per kWh").set_accessible_value("0.21");
    field(&f.app, "Changed by").set_accessible_value("T. Tester");
    button(&f.app, "Save shop settings").invoke_accessible_default_action();
    let saved = shop(&f.path).store_for_tests().settings().unwrap();
    assert_eq!(saved.time_zone, "America/New_York");
    assert_eq!(saved.electricity_price, Some(0.21));

    // The walk-round reads the time typed as New York's.
    let (unit_id, _) = first_route_unit(&f.path);
    let last = shop(&f.path)
        .store_for_tests()
        .checks_for_unit(unit_id, None)
        .unwrap()
        .last()
        .unwrap()
        .clone();
    f.app.show(Screen::Walk);
    field(&f.app, "Technician").set_accessible_value("T. Tester");
    // An hour the clocks skip is refused, saying so.
    field(&f.app, "Taken at").set_accessible_value("2026-03-08 02:30");
    field(&f.app, "Reservoir temperature")
        .set_accessible_value(format!("{:.1}", last.reservoir_temp.unwrap().c()));
    button(&f.app, "Save and next").invoke_accessible_default_action();
    let msg = message(&f.app);
    assert!(msg.contains("does not exist in America/New_York"), "{msg}");
    field(&f.app, "Taken at").set_accessible_value("2026-12-01 08:00");
    button(&f.app, "Save and next").invoke_accessible_default_action();
    // The readings the last check had and this one lacks are asked about; Save again.
    assert!(
        message(&f.app).starts_with("Left blank"),
        "{}",
        message(&f.app)
    );
    button(&f.app, "Save and next").invoke_accessible_default_action();
    let checks = shop(&f.path)
        .store_for_tests()
        .checks_for_unit(unit_id, None)
        .unwrap();
    let c = checks
        .iter()
        .find(|c| c.by == "T. Tester")
        .unwrap_or_else(|| panic!("saved; screen says {}", message(&f.app)));
    assert_eq!(c.taken_at.to_rfc3339(), "2026-12-01T13:00:00+00:00");

    // The unit page's history shows it at 08:00 and names the zone.
    f.app.open_unit(unit_id);
    let a = f.app.window().global::<sumpbook::gui::ui::UnitAdapter>();
    a.set_tab(2);
    let _ = labels_starting(&f.app, "");
    assert_eq!(a.get_time_note(), "Times in America/New_York.");
    let first = a.get_rows().row_data(0).unwrap().row_data(0).unwrap().text;
    assert_eq!(first.as_str(), "2026-12-01 08:00");
}

#[test]
fn the_edits_tab_shows_who_changed_or_deleted_what_and_corrected_rows_are_marked() {
    let f = open_demo();
    let s = shop(&f.path);
    let unit_id = s.store_for_tests().units().unwrap()[0].id;
    let checks = s.store_for_tests().checks_for_unit(unit_id, None).unwrap();
    let (newest, older) = (checks[checks.len() - 1].id, checks[checks.len() - 2].id);
    // A correction of the second newest check, made elsewhere.
    let which = sumpbook::app::entry::Reading::Check;
    let fields = sumpbook::app::entry::reading_fields(&s, which, older).unwrap();
    let mut entered = sumpbook::app::entry::Entered::from_fields(&fields);
    entered.set("note", "gauge re-read");
    sumpbook::app::entry::edit_reading(&s, which, older, &entered, "P. Other", "typo").unwrap();

    // The newest check deleted on the unit page, with who and why.
    f.app.open_unit(unit_id);
    let a = f.app.window().global::<sumpbook::gui::ui::UnitAdapter>();
    a.set_tab(2);
    let _ = labels_starting(&f.app, "");
    a.set_current_row(0);
    a.invoke_select_row(0);
    let _ = labels_starting(&f.app, "");
    field(&f.app, "Changed by").set_accessible_value("R. Engineer");
    field(&f.app, "Reason for the change").set_accessible_value("typed on the wrong unit");
    button(&f.app, "Delete reading").invoke_accessible_default_action();
    assert!(shop(&f.path)
        .store_for_tests()
        .check(newest)
        .unwrap()
        .is_none());

    // The history marks the corrected check (now the newest row) in its last column.
    use slint::Model;
    let rows = a.get_rows();
    let row = rows.row_data(0).unwrap();
    let last = row.row_data(row.row_count() - 1).unwrap().text;
    assert_eq!(last.as_str(), "corrected");
    let next = rows.row_data(1).unwrap();
    assert_eq!(
        next.row_data(next.row_count() - 1).unwrap().text.as_str(),
        ""
    );

    // The Edits tab lists both, oldest first, with the fields old → new.
    a.set_tab(3);
    let edits: Vec<String> = a.get_edits().iter().map(|e| e.to_string()).collect();
    assert_eq!(edits.len(), 2, "{edits:?}");
    assert!(edits[0].contains("changed by P. Other: typo"), "{edits:?}");
    assert!(edits[0].contains("note: — → gauge re-read"), "{edits:?}");
    assert!(
        edits[1].contains("DELETED by R. Engineer: typed on the wrong unit"),
        "{edits:?}"
    );
    let shown: Vec<String> = ElementHandle::find_by_accessible_label(f.app.window(), "edit")
        .filter_map(|e| e.accessible_value())
        .map(|v| v.to_string())
        .collect();
    assert_eq!(shown.len(), 2, "both on screen: {shown:?}");

    // The deleted check is offered for putting back; without a reason nothing is restored.
    let offered: Vec<String> = a
        .get_deleted_choices()
        .iter()
        .map(|e| e.to_string())
        .collect();
    assert_eq!(offered.len(), 1, "{offered:?}");
    assert!(offered[0].contains("by R. Engineer"), "{offered:?}");
    field(&f.app, "Restored by").set_accessible_value("R. Engineer");
    field(&f.app, "Reason for the restore").set_accessible_value("");
    button(&f.app, "Restore reading").invoke_accessible_default_action();
    assert!(shop(&f.path)
        .store_for_tests()
        .check(newest)
        .unwrap()
        .is_none());
    assert!(
        a.get_edit_message()
            .contains("say why the reading is put back"),
        "{}",
        a.get_edit_message()
    );
    field(&f.app, "Reason for the restore").set_accessible_value("it was the right unit");
    button(&f.app, "Restore reading").invoke_accessible_default_action();
    assert!(
        shop(&f.path)
            .store_for_tests()
            .check(newest)
            .unwrap()
            .is_some(),
        "{}",
        a.get_edit_message()
    );
    let edits: Vec<String> = a.get_edits().iter().map(|e| e.to_string()).collect();
    assert_eq!(edits.len(), 3, "{edits:?}");
    assert!(
        edits[2].contains("RESTORED by R. Engineer: it was the right unit"),
        "{edits:?}"
    );
    assert_eq!(
        a.get_deleted_choices().row_count(),
        0,
        "nothing left to put back"
    );
}

/// A lab's own file on the import screen: the mapping proposed from its header is shown with
/// the column it cannot place undecided; saving is refused until that column is decided; once
/// saved the preview reads through it and the import writes the rows (US dates included), and
/// the next file with the same header is read through it by itself.
#[test]
fn a_lab_file_is_mapped_on_the_import_screen_saved_and_used_again_by_itself() {
    use sumpbook::gui::ui::ImportAdapter;
    let f = open_demo();
    f.app.run_jobs_inline();
    f.app.show(Screen::Import);
    let header = "Sample Date,Equipment ID,Visc @ 40C (cSt),Water (ppm),Tech";
    let csv = f._dir.path().join("lab.csv");
    std::fs::write(&csv, format!("{header}\n11/20/2026,PR-01-M,45.8,85,JR\n")).unwrap();
    field(&f.app, "CSV file path").set_accessible_value(csv.to_str().unwrap());
    button(&f.app, "Preview").invoke_accessible_default_action();
    let a = f.app.window().global::<ImportAdapter>();
    assert!(a.get_mapping_shown(), "{}", message(&f.app));
    assert!(!a.get_can_import());
    let chosen = |col: &str| {
        let choices: Vec<String> = a.get_map_choices().iter().map(|c| c.to_string()).collect();
        let row = a
            .get_map_rows()
            .iter()
            .find(|r| r.column == col)
            .unwrap_or_else(|| panic!("no row for {col}"));
        choices[row.choice as usize].clone()
    };
    assert_eq!(chosen("Sample Date"), "sampled_at");
    assert_eq!(chosen("Equipment ID"), "unit_tag");
    assert_eq!(chosen("Visc @ 40C (cSt)"), "kv40_cst");
    assert_eq!(chosen("Water (ppm)"), "water_ppm");
    assert_eq!(chosen("Tech"), "— not decided —");
    let dates: Vec<String> = a.get_date_choices().iter().map(|c| c.to_string()).collect();
    assert!(dates[a.get_map_date() as usize].starts_with("month first"));

    field(&f.app, "Mapping name").set_accessible_value("north-lab");
    button(&f.app, "Save mapping").invoke_accessible_default_action();
    let m = message(&f.app);
    assert!(m.contains("Tech") && m.contains("cannot be saved"), "{m}");
    assert!(shop(&f.path).import_profiles().unwrap().is_empty());

    // Ignored as the column's choice box would: then saved, previewed through it, imported.
    let tech = a
        .get_map_rows()
        .iter()
        .position(|r| r.column == "Tech")
        .unwrap();
    a.invoke_map_set(tech as i32, 1);
    assert_eq!(chosen("Tech"), "ignore");
    button(&f.app, "Save mapping").invoke_accessible_default_action();
    assert!(a.get_can_import(), "{}", message(&f.app));
    assert!(a.get_kind().contains("north-lab"), "{}", a.get_kind());
    a.invoke_start();
    let m = message(&f.app);
    assert!(m.contains("Imported") && m.contains("1 new"), "{m}");
    let s = shop(&f.path);
    let csv_out = {
        let mut out = Vec::new();
        s.export(sumpbook::app::vocab::FileKind::Samples, &mut out, None)
            .unwrap();
        String::from_utf8(out).unwrap()
    };
    assert!(
        csv_out.contains("PR-01-M,2026-11-20T11:00:00Z,45.8,"),
        "{csv_out}"
    );

    // The next file with the same header: the saved mapping by itself.
    let next = f._dir.path().join("lab-dec.csv");
    std::fs::write(&next, format!("{header}\n12/01/2026,PR-01-M,45.9,90,KT\n")).unwrap();
    field(&f.app, "CSV file path").set_accessible_value(next.to_str().unwrap());
    button(&f.app, "Preview").invoke_accessible_default_action();
    assert!(a.get_kind().contains("north-lab"), "{}", a.get_kind());
    assert!(a.get_can_import(), "{}", message(&f.app));
}

/// The walk-round's button prints the route sheet: written into the output folder under a
/// free name, opened, and it lists the round's first unit.
#[test]
fn the_walk_round_prints_its_route_sheet_and_opens_it() {
    let f = open_demo();
    let opened = std::rc::Rc::new(std::cell::RefCell::new(Vec::<PathBuf>::new()));
    let o = opened.clone();
    f.app.set_file_opener(move |p| {
        o.borrow_mut().push(p.to_path_buf());
        Ok(())
    });
    f.app.set_output_folder(f._dir.path());
    f.app.show(Screen::Walk);
    button(&f.app, "Print route sheet").invoke_accessible_default_action();
    let m = message(&f.app);
    assert!(m.contains("Route sheet written"), "{m}");
    let pdf = opened
        .borrow()
        .first()
        .cloned()
        .expect("the sheet is opened");
    assert_eq!(pdf.parent(), Some(f._dir.path()));
    let (_, first) = first_route_unit(&f.path);
    assert!(pdf_text(&pdf).contains(&format!("1. {first} ·")));
}

/// Setup names hydraulic units so (not "Units" beside "Units of measure"), and saving a stored
/// record unchanged asks no reason and writes nothing.
#[test]
fn setup_saves_an_unchanged_record_without_asking_a_reason() {
    let f = open_demo();
    f.app.show(Screen::Setup);
    let a = f.app.window().global::<SetupAdapter>();
    a.set_tab(2);
    a.invoke_tab_changed(2);
    assert_eq!(a.get_new_label().as_str(), "New hydraulic unit");
    a.invoke_choose_record(0);
    assert!(
        a.get_record_title().starts_with("Edit hydraulic unit "),
        "{}",
        a.get_record_title()
    );
    let edits = |p: &Path| {
        rusqlite::Connection::open(p)
            .unwrap()
            .query_row("SELECT count(*) FROM edit_log", [], |r| r.get::<_, i64>(0))
            .unwrap()
    };
    let before = edits(&f.path);
    button(&f.app, "Save record").invoke_accessible_default_action();
    let m = message(&f.app);
    assert!(m.contains("Nothing changed"), "{m}");
    assert!(!m.to_lowercase().contains("reason"), "{m}");
    assert_eq!(edits(&f.path), before);
}

#[test]
fn the_unit_page_says_what_the_lost_flow_costs() {
    let f = open_demo();
    let s = shop(&f.path);
    let unit = s.store_for_tests().unit_by_tag("PB-03-A").unwrap().unwrap();
    f.app.open_unit(unit.id);
    let a = f.app.window().global::<sumpbook::gui::ui::UnitAdapter>();
    use slint::Model;
    let cost = a
        .get_era()
        .iter()
        .find(|kv| kv.key == "Cost of waiting")
        .map(|kv| kv.value.to_string())
        .expect("the worn pump's page gives the cost of waiting");
    // The demo's price is 0.18 per kWh; the figures are those of `status --json`.
    assert!(cost.contains(" kW (") && cost.contains("per kWh"), "{cost}");
    let st = sumpbook::app::status::unit_status_of(&s, "PB-03-A", demo_now()).unwrap();
    let c = st.waiting_cost.unwrap();
    assert!(
        cost.starts_with(&format!("{:.2} kW ({:.2} hp)", c.heat_kw, c.heat_hp)),
        "{cost}"
    );
}

/// A demo shop whose clock is New York's, opened at [`demo_now`].
fn open_demo_in_new_york() -> Fixture {
    open_demo_set(|s| {
        let mut settings = sumpbook::app::entry::shop_settings(s).unwrap();
        settings.time_zone = "America/New_York".into();
        sumpbook::app::entry::save_settings(s, &settings, "T. Tester", "the shop's clock").unwrap();
    })
}

#[test]
fn the_walk_round_opens_on_technician_with_now_in_the_shops_time_and_enter_saves_from_any_field() {
    // New York's offset at the instant: the IANA time-zone database through chrono-tz (EST,
    // UTC-5, in winter; EDT, UTC-4, in summer).
    let f = open_demo_in_new_york();
    let (unit_id, _) = first_route_unit(&f.path);
    let before = shop(&f.path)
        .store_for_tests()
        .checks_for_unit(unit_id, None)
        .unwrap()
        .len();
    f.app.show(Screen::Walk);
    let now = demo_now().unwrap();
    let local = now
        .with_timezone(&chrono_tz::America::New_York)
        .format("%Y-%m-%d %H:%M")
        .to_string();
    assert_eq!(field(&f.app, "Taken at").accessible_value().unwrap(), local);
    assert_eq!(
        f.app.window().global::<WalkAdapter>().get_zone_name(),
        "America/New_York"
    );
    // The cursor is on Technician: what is typed goes there.
    type_text(&f.app, "T. Tester");
    assert_eq!(
        field(&f.app, "Technician").accessible_value().unwrap(),
        "T. Tester"
    );
    // Tab goes to the time; Enter there saves (nothing typed yet, so it is refused).
    key(&f.app, Key::Tab);
    key(&f.app, Key::Return);
    let msg = message(&f.app);
    assert!(msg.contains("nothing was entered"), "{msg}");
    assert_eq!(field(&f.app, "Taken at").accessible_value().unwrap(), local);
    // Tab goes on to the first reading; Enter saves at the time shown.
    key(&f.app, Key::Tab);
    let last = shop(&f.path)
        .store_for_tests()
        .checks_for_unit(unit_id, None)
        .unwrap()
        .last()
        .unwrap()
        .clone();
    type_text(&f.app, &format!("{:.1}", last.reservoir_temp.unwrap().c()));
    key(&f.app, Key::Return);
    // The other readings the last check had are asked about; Enter again saves.
    assert!(
        message(&f.app).starts_with("Left blank"),
        "{}",
        message(&f.app)
    );
    key(&f.app, Key::Return);
    let checks = shop(&f.path)
        .store_for_tests()
        .checks_for_unit(unit_id, None)
        .unwrap();
    assert_eq!(checks.len(), before + 1, "{}", message(&f.app));
    let c = checks.iter().find(|c| c.by == "T. Tester").unwrap();
    assert_eq!(c.taken_at, now);
    // The next unit's form opens with the cursor on its first reading (the technician stays).
    type_text(&f.app, "40");
    let second = f.app.window().global::<WalkAdapter>().get_fields();
    assert_eq!(second.row_data(0).unwrap().key, "reservoir_temp");
    assert_eq!(
        field(&f.app, "Technician").accessible_value().unwrap(),
        "T. Tester"
    );
    assert_eq!(
        field(&f.app, "Reservoir temperature")
            .accessible_value()
            .unwrap(),
        "40"
    );
}

#[test]
fn a_reading_filled_last_time_and_left_blank_now_is_asked_about_and_nothing_typed_is_lost() {
    let f = open_demo();
    let (unit_id, _) = first_route_unit(&f.path);
    let before = shop(&f.path)
        .store_for_tests()
        .checks_for_unit(unit_id, None)
        .unwrap();
    let last = before.last().unwrap().clone();
    assert!(
        last.oil_level.is_some(),
        "the demo's first unit had its oil level checked"
    );
    f.app.show(Screen::Walk);
    field(&f.app, "Technician").set_accessible_value("T. Tester");
    // Every reading the last check had, but the oil level.
    let typed: Vec<(&str, String)> = [
        (
            "Reservoir temperature",
            last.reservoir_temp.map(|t| format!("{:.1}", t.c())),
        ),
        (
            "Ambient temperature",
            last.ambient_temp.map(|t| format!("{:.1}", t.c())),
        ),
        (
            "Working pressure",
            last.pressure.map(|p| format!("{:.1}", p.bar())),
        ),
        (
            "Timed stroke",
            last.stroke_time.map(|s| format!("{:.2}", s.si())),
        ),
        (
            "Cycle time",
            last.cycle_time.map(|s| format!("{:.1}", s.si())),
        ),
        ("Filter indicator", last.filter.map(|v| v.to_string())),
        (
            "Hour meter",
            last.hours.map(|h| format!("{:.0}", h + 100.0)),
        ),
        (
            "Case-drain flow",
            last.case_drain.map(|q| format!("{:.2}", q.si() * 60_000.0)),
        ),
    ]
    .into_iter()
    .filter_map(|(label, v)| v.map(|v| (label, v)))
    .collect();
    for (label, v) in &typed {
        field(&f.app, label).set_accessible_value(v.as_str());
    }
    button(&f.app, "Save and next").invoke_accessible_default_action();
    // Asked, beside the field and in the message, naming last time's value; nothing stored.
    let msg = message(&f.app);
    assert!(msg.starts_with("Left blank: Oil level is blank"), "{msg}");
    let beside = by_label(&f.app, "Oil level problem")
        .accessible_value()
        .unwrap_or_default();
    assert!(
        beside.contains(&format!("had {}", last.oil_level.unwrap())),
        "{beside}"
    );
    let n = |p: &Path| {
        shop(p)
            .store_for_tests()
            .checks_for_unit(unit_id, None)
            .unwrap()
            .len()
    };
    assert_eq!(n(&f.path), before.len());
    // Still on the same unit, with everything typed still there.
    assert_eq!(f.app.window().global::<WalkAdapter>().get_current(), 0);
    for (label, v) in &typed {
        assert_eq!(field(&f.app, label).accessible_value().unwrap(), v.as_str());
    }
    // Save again: kept without the oil level, as said.
    button(&f.app, "Save and next").invoke_accessible_default_action();
    let after = shop(&f.path)
        .store_for_tests()
        .checks_for_unit(unit_id, None)
        .unwrap();
    assert_eq!(after.len(), before.len() + 1, "{}", message(&f.app));
    let c = after.iter().find(|c| c.by == "T. Tester").unwrap();
    assert_eq!(c.oil_level, None);
    assert!(c.filter.is_some() || last.filter.is_none());
}

#[test]
fn after_a_refused_save_the_cursor_goes_to_the_first_refused_field_with_its_reason_beside_it() {
    let f = open_demo();
    f.app.show(Screen::Walk);
    // From the keyboard: past Technician (left blank) and the time to the readings, an
    // impossible reservoir temperature, then on to the ambient temperature and Enter there.
    key(&f.app, Key::Tab);
    key(&f.app, Key::Tab);
    type_text(&f.app, "320");
    key(&f.app, Key::Tab);
    type_text(&f.app, "21");
    key(&f.app, Key::Return);
    assert!(
        message(&f.app).starts_with("Not saved"),
        "{}",
        message(&f.app)
    );
    // Technician comes first in the form: its reason is beside it and the cursor is there.
    let why = by_label(&f.app, "Technician problem")
        .accessible_value()
        .unwrap_or_default();
    assert!(why.contains("name or initials"), "{why}");
    type_text(&f.app, "T. Tester");
    assert_eq!(
        field(&f.app, "Technician").accessible_value().unwrap(),
        "T. Tester"
    );
    assert_eq!(
        field(&f.app, "Ambient temperature")
            .accessible_value()
            .unwrap(),
        "21"
    );
    // Enter from there: now the reservoir temperature is the first refused field.
    key(&f.app, Key::Return);
    assert!(try_label(&f.app, "Technician problem").is_none());
    let why = by_label(&f.app, "Reservoir temperature problem")
        .accessible_value()
        .unwrap_or_default();
    assert!(why.contains("150"), "{why}");
    type_text(&f.app, "x");
    let typed = field(&f.app, "Reservoir temperature")
        .accessible_value()
        .unwrap();
    assert!(
        typed.len() == 4 && typed.contains('x') && typed.contains("320"),
        "{typed}"
    );
    assert_eq!(
        field(&f.app, "Ambient temperature")
            .accessible_value()
            .unwrap(),
        "21"
    );
}

#[test]
fn a_refused_sample_puts_the_cursor_in_the_first_refused_field() {
    let f = open_demo();
    f.app.show(Screen::Samples);
    field(&f.app, "Viscosity at 40 °C (KV40)").set_accessible_value("thick");
    field(&f.app, "Sampled by").set_accessible_value("T. Tester");
    // Typing in the last field, then Enter there.
    field(&f.app, "Note").mock_single_click(PointerEventButton::Left);
    type_text(&f.app, "cloudy");
    key(&f.app, Key::Return);
    assert!(message(&f.app).contains("Not saved"), "{}", message(&f.app));
    assert!(try_label(&f.app, "Viscosity at 40 °C (KV40) problem").is_some());
    type_text(&f.app, "x");
    assert_eq!(
        field(&f.app, "Viscosity at 40 °C (KV40)")
            .accessible_value()
            .unwrap()
            .matches('x')
            .count(),
        1
    );
    assert_eq!(field(&f.app, "Note").accessible_value().unwrap(), "cloudy");
}

/// Texts a person reads that look like stored codes: a word joined by `_`, or a backquote.
fn looks_coded(text: &str) -> bool {
    text.contains('`')
        || text
            .split(|c: char| !(c.is_alphanumeric() || c == '_'))
            .any(|w| w.contains('_'))
}

#[test]
fn setup_shows_words_not_codes_and_names_a_new_record_once_saved() {
    let f = open_demo();
    f.app.show(Screen::Setup);
    let a = f.app.window().global::<SetupAdapter>();
    a.set_tab(2);
    a.invoke_tab_changed(2);
    a.invoke_choose_record(0);
    let rows = a.get_fields();
    let mut seen = Vec::new();
    for r in rows.iter() {
        seen.push(r.text.to_string());
        seen.extend(r.choices.iter().map(|c| c.to_string()));
    }
    let coded: Vec<&String> = seen.iter().filter(|t| looks_coded(t)).collect();
    assert!(coded.is_empty(), "codes shown: {coded:?}");
    let pump = rows.iter().find(|r| r.key == "pump_kind").unwrap();
    assert!(
        pump.choices.iter().any(|c| c == "variable piston pump"),
        "{:?}",
        pump.choices.iter().collect::<Vec<_>>()
    );

    // A new unit, its pump chosen by its words: saved as that kind, and the heading then
    // names the unit saved instead of still saying "New …".
    a.invoke_new_record();
    assert_eq!(a.get_record_title().as_str(), "New hydraulic unit");
    field(&f.app, "Unit tag").set_accessible_value("PR-99-A");
    let rows = a.get_fields();
    let i = rows.iter().position(|r| r.key == "pump_kind").unwrap();
    a.invoke_field_edited(i as i32, "variable piston pump".into());
    button(&f.app, "Save record").invoke_accessible_default_action();
    assert!(message(&f.app).starts_with("Added"), "{}", message(&f.app));
    assert_eq!(a.get_record_title().as_str(), "Edit hydraulic unit PR-99-A");
    let s = shop(&f.path);
    let u = s
        .store_for_tests()
        .unit_by_tag("PR-99-A")
        .unwrap()
        .expect("the new unit is stored");
    assert_eq!(u.pump_kind, sumpbook::model::PumpKind::PistonVariable);

    // The limits tab: every label in words.
    a.set_tab(4);
    a.invoke_tab_changed(4);
    let limits = a.get_limits();
    assert!(limits.row_count() > 10);
    let coded: Vec<String> = limits
        .iter()
        .map(|l| l.label.to_string())
        .filter(|l| looks_coded(l))
        .collect();
    assert!(coded.is_empty(), "codes in limit labels: {coded:?}");
    // A ratio is not shown as a bare letter.
    let units: Vec<String> = limits.iter().map(|l| l.unit.to_string()).collect();
    assert!(!units.iter().any(|u| u == "x"), "{units:?}");
    let ratio = limits
        .iter()
        .find(|l| l.key == "leak_conductance_ratio")
        .unwrap();
    assert_eq!(ratio.unit.as_str(), "× (ratio)");
    // In a narrow window the longest description wraps onto more lines (its row grows)
    // instead of being cut off; the shortest keeps one row's height.
    f.app
        .window()
        .window()
        .set_size(slint::LogicalSize::new(900.0, 1400.0));
    let labels: Vec<String> = limits.iter().map(|l| l.label.to_string()).collect();
    let longest = labels.iter().max_by_key(|l| l.chars().count()).unwrap();
    let shortest = labels.iter().min_by_key(|l| l.chars().count()).unwrap();
    let height = |label: &str| with_role(&f.app, label, AccessibleRole::Text).size().height;
    assert!(
        height(longest) > height(shortest) + 8.0,
        "{longest:?} {} px, {shortest:?} {} px",
        height(longest),
        height(shortest)
    );
}

/// Page Down skips the unit from every field of the walk-round form, the Technician and the
/// time as well as the readings; each of them has the readings' focus ring.
#[test]
fn page_down_skips_the_unit_from_the_technician_and_the_time_too() {
    let f = open_demo();
    f.app.show(Screen::Walk);
    let a = f.app.window().global::<WalkAdapter>();
    assert_eq!(a.get_current(), 0);
    // The cursor opens on Technician: what is typed goes there, and Page Down skips.
    type_text(&f.app, "T. Tester");
    assert_eq!(
        field(&f.app, "Technician").accessible_value().unwrap(),
        "T. Tester"
    );
    key(&f.app, Key::PageDown);
    assert_eq!(a.get_current(), 1, "{}", message(&f.app));
    assert!(
        message(&f.app).starts_with("Skipped"),
        "{}",
        message(&f.app)
    );
    // The next form opens on its first reading; Shift+Tab goes back to the time, where what
    // is typed lands, and Page Down skips from there too.
    key(&f.app, Key::Backtab);
    type_text(&f.app, "9");
    assert!(
        field(&f.app, "Taken at")
            .accessible_value()
            .unwrap()
            .ends_with('9'),
        "{:?}",
        field(&f.app, "Taken at").accessible_value()
    );
    key(&f.app, Key::PageDown);
    assert_eq!(a.get_current(), 2, "{}", message(&f.app));
}

/// The questions a file dialog was asked, and the answers it gives next (first first).
type Asked = std::rc::Rc<std::cell::RefCell<Vec<sumpbook::gui::files::FileQuestion>>>;
type Answers = std::rc::Rc<std::cell::RefCell<Vec<Option<PathBuf>>>>;

/// A stand-in for the desktop's file dialog: records each question, gives the next answer.
fn stand_in_chooser(app: &App) -> (Asked, Answers) {
    let asked = Asked::default();
    let answers = Answers::default();
    let (a, b) = (asked.clone(), answers.clone());
    app.set_file_chooser(move |q| {
        a.borrow_mut().push(q.clone());
        b.borrow_mut().remove(0)
    });
    (asked, answers)
}

#[test]
fn file_fields_have_the_desktops_chooser_beside_the_typed_path() {
    use sumpbook::gui::ui::{ImportAdapter, SampleAdapter};
    let f = open_demo();
    f.app.run_jobs_inline();
    f.app.set_output_folder(f._dir.path());
    let (asked, answers) = stand_in_chooser(&f.app);
    let lab = f._dir.path().join("lab.csv");
    std::fs::write(
        &lab,
        "Sample Date,Equipment ID,Visc @ 40C (cSt),Water (ppm),Tech\n11/20/2026,PR-01-M,45.8,85,JR\n",
    )
    .unwrap();

    // Import: the chosen file is in the path field and previewed at once.
    f.app.show(Screen::Import);
    answers.borrow_mut().push(Some(lab.clone()));
    button(&f.app, "Choose a CSV file").invoke_accessible_default_action();
    let q = asked.borrow().last().cloned().unwrap();
    assert!(
        !q.save && q.extensions.contains(&"csv".to_string()),
        "{q:?}"
    );
    assert_eq!(
        field(&f.app, "CSV file path").accessible_value().unwrap(),
        lab.display().to_string()
    );
    let a = f.app.window().global::<ImportAdapter>();
    assert!(a.get_mapping_shown(), "{}", message(&f.app));
    // A dialog cancelled changes nothing.
    answers.borrow_mut().push(None);
    button(&f.app, "Choose a CSV file").invoke_accessible_default_action();
    assert_eq!(
        field(&f.app, "CSV file path").accessible_value().unwrap(),
        lab.display().to_string()
    );
    // It opened in the typed file's folder.
    assert_eq!(asked.borrow().last().unwrap().folder, f._dir.path());

    // The samples screen's lab file goes the same way to the import preview.
    f.app.show(Screen::Samples);
    answers.borrow_mut().push(Some(lab.clone()));
    button(&f.app, "Choose a lab CSV file").invoke_accessible_default_action();
    assert_eq!(
        f.app.window().global::<SampleAdapter>().get_import_path(),
        lab.display().to_string()
    );
    assert_eq!(
        f.app.window().global::<Nav>().get_screen(),
        sumpbook::gui::Screen::Import
    );

    // Reports: a save dialog offering the default name in the output folder; a name chosen
    // without its ending gets .pdf.
    f.app.show(Screen::Reports);
    let before = field(&f.app, "Report file").accessible_value().unwrap();
    answers
        .borrow_mut()
        .push(Some(f._dir.path().join("for the supervisor")));
    button(&f.app, "Choose where to save the report").invoke_accessible_default_action();
    let q = asked.borrow().last().cloned().unwrap();
    assert!(q.save && q.extensions == ["pdf"], "{q:?}");
    assert_eq!(
        q.name.as_deref(),
        Path::new(before.as_str())
            .file_name()
            .and_then(|n| n.to_str())
    );
    assert_eq!(
        Some(q.folder.as_path()),
        Path::new(before.as_str()).parent()
    );
    assert_eq!(
        field(&f.app, "Report file").accessible_value().unwrap(),
        f._dir
            .path()
            .join("for the supervisor.pdf")
            .display()
            .to_string()
    );
    // The typed path is still the other way in.
    let typed = f._dir.path().join("typed.pdf");
    field(&f.app, "Report file").set_accessible_value(typed.to_str().unwrap());
    assert_eq!(
        field(&f.app, "Report file").accessible_value().unwrap(),
        typed.display().to_string()
    );
}

/// Marking a fluid change done from the work list: the caution is beside the form, the form
/// opens on when it was done (now, the shop's time) with the cursor there, Tab goes on to who,
/// the fluid is chosen from the shop's fluids (the unit's own first), and Enter records it from
/// any field. An hour meter below the last reading is refused with the reason, the cursor goes
/// to it and nothing typed is lost; corrected, the event is stored with every detail and the
/// unit's history lists them.
#[test]
fn mark_done_records_when_hour_meter_fluid_filter_part_and_work_order_from_the_keyboard() {
    use sumpbook::gui::ui::{UnitAdapter, WorkAdapter};
    let f = open_demo();
    f.app.show(Screen::Work);
    let label = labels_starting(&f.app, "Mark done… ")
        .into_iter()
        .find(|l| l.ends_with(" fluid change"))
        .expect("a fluid change on the work list");
    let tag = label
        .trim_start_matches("Mark done… ")
        .trim_end_matches(" fluid change")
        .to_string();
    button(&f.app, &label).invoke_accessible_default_action();
    let a = f.app.window().global::<WorkAdapter>();
    assert!(
        a.get_safety().contains("Relieve pressure"),
        "{}",
        a.get_safety()
    );
    assert!(
        a.get_safety().contains("machine builder"),
        "{}",
        a.get_safety()
    );
    let zone = sumpbook::app::entry::shop_settings(&shop(&f.path))
        .unwrap()
        .time_zone;
    let at_label = format!("Done on (shop time, {zone})");
    let now = demo_now().unwrap();
    let tz: chrono_tz::Tz = zone.parse().unwrap();
    assert_eq!(
        field(&f.app, &at_label).accessible_value().unwrap(),
        now.with_timezone(&tz).format("%Y-%m-%d %H:%M").to_string()
    );
    // The shop's fluids to choose from, the unit's fluid in service chosen.
    let s = shop(&f.path);
    let unit = s.store_for_tests().unit_by_tag(&tag).unwrap().unwrap();
    let fluids: Vec<String> = a.get_fluids().iter().map(|f| f.to_string()).collect();
    let in_service = s
        .store_for_tests()
        .fluid(unit.fluid_id.unwrap())
        .unwrap()
        .unwrap()
        .name;
    assert_eq!(
        fluids.get(a.get_fluid_index() as usize),
        Some(&in_service),
        "{fluids:?}"
    );
    assert!(fluids.len() >= 2, "{fluids:?}");
    let other = fluids.iter().position(|n| *n != in_service).unwrap();
    with_role(&f.app, "Fluid put in", AccessibleRole::Combobox);
    a.set_fluid_index(other as i32);

    // The cursor is on "Done on": a minute earlier typed over it, Tab to who.
    let earlier = now - chrono::Duration::minutes(1);
    field(&f.app, &at_label).set_accessible_value(
        earlier
            .with_timezone(&tz)
            .format("%Y-%m-%d %H:%M")
            .to_string(),
    );
    key(&f.app, Key::Tab);
    type_text(&f.app, "T. Fitter");
    assert_eq!(
        field(&f.app, "Done by").accessible_value().unwrap(),
        "T. Fitter"
    );
    let last = s
        .store_for_tests()
        .hour_meter_around(unit.id, now, None)
        .unwrap()
        .before
        .expect("the unit's hour meter was read")
        .0;
    assert!(a.get_hours_hint().starts_with(&format!("{last} h on ")));
    key(&f.app, Key::Tab);
    type_text(&f.app, &format!("{}", last - 10.0));
    let volume = labels_starting(&f.app, "Volume put in (");
    field(&f.app, &volume[0]).set_accessible_value("180");
    field(&f.app, "Filter part").set_accessible_value("RF-10-BN");
    field(&f.app, "Work order").set_accessible_value("WO-4471");
    field(&f.app, "Hour meter (h)").set_accessible_value(format!("{}", last - 10.0));
    key(&f.app, Key::Return);
    // Below the last reading: asked (a replaced meter is kept by Enter again), not written.
    let msg = message(&f.app);
    assert!(msg.contains("is below the"), "{msg}");
    assert!(msg.contains("was the meter replaced?"), "{msg}");
    assert!(msg.contains("press Enter (or Save) again"), "{msg}");
    let events = |s: &Shop| s.store_for_tests().events_for_unit(unit.id, None).unwrap();
    let before = events(&s).len();
    assert_eq!(a.get_focus_on(), "hours");
    assert_eq!(
        field(&f.app, "Filter part").accessible_value().unwrap(),
        "RF-10-BN"
    );
    assert_eq!(
        field(&f.app, "Done by").accessible_value().unwrap(),
        "T. Fitter"
    );

    // Corrected, Enter records it.
    field(&f.app, "Hour meter (h)").set_accessible_value(format!("{}", last + 4.0));
    key(&f.app, Key::Return);
    let msg = message(&f.app);
    assert!(msg.starts_with("Recorded: fluid change on"), "{msg}");
    // Another oil went in: the message says the unit's fluid in service changed, as the
    // command line does.
    assert!(
        msg.contains(". The unit's fluid in service is now "),
        "{msg}"
    );
    let after = events(&shop(&f.path));
    assert_eq!(after.len(), before + 1, "{msg}");
    let e = after.iter().find(|e| e.by == "T. Fitter").unwrap();
    assert_eq!(e.done_at, earlier);
    assert_eq!(e.kind, sumpbook::model::EventKind::FluidChange);
    assert!((e.volume.unwrap().litres() - 180.0).abs() < 1e-9);
    assert_eq!(
        e.fluid_id.map(|id| id != unit.fluid_id.unwrap()),
        Some(true)
    );
    let details = shop(&f.path)
        .store_for_tests()
        .event_details_of_unit(unit.id)
        .unwrap();
    let (_, d) = details.iter().find(|(id, _)| *id == e.id).unwrap();
    assert_eq!(d.hours, Some(last + 4.0));
    assert_eq!(d.filter_part, "RF-10-BN");
    assert_eq!(d.work_order, "WO-4471");

    // The unit's history lists the work done with its details, newest first.
    f.app.open_unit(unit.id);
    let u = f.app.window().global::<UnitAdapter>();
    u.invoke_choose_table(2);
    let columns: Vec<String> = u
        .get_columns()
        .iter()
        .map(|c| c.title.to_string())
        .collect();
    let row = u.get_rows().row_data(0).unwrap();
    let cell = |title: &str| {
        let i = columns.iter().position(|c| c == title).unwrap();
        row.row_data(i).unwrap().text.to_string()
    };
    assert_eq!(cell("Hour meter h"), format!("{}", last + 4.0));
    assert_eq!(cell("Filter part"), "RF-10-BN");
    assert_eq!(cell("Work order"), "WO-4471");
    assert_eq!(cell("By"), "T. Fitter");
}

/// The route sheet's file has the desktop's save dialog beside the typed path, as the report's
/// does: it opens at the name offered in the output folder, a name chosen without its ending
/// gets .pdf, a cancelled dialog changes nothing, and the sheet is written where chosen.
#[test]
fn the_route_sheet_file_has_the_desktops_chooser_beside_the_typed_path() {
    use std::cell::RefCell;
    use std::rc::Rc;
    let f = open_demo();
    f.app.set_output_folder(f._dir.path());
    let opened: Rc<RefCell<Vec<PathBuf>>> = Rc::default();
    {
        let o = opened.clone();
        f.app.set_file_opener(move |p| {
            o.borrow_mut().push(p.to_path_buf());
            Ok(())
        });
    }
    let (asked, answers) = stand_in_chooser(&f.app);
    f.app.show(Screen::Walk);
    let offered = field(&f.app, "Route sheet file")
        .accessible_value()
        .unwrap();
    assert_eq!(Path::new(offered.as_str()).parent(), Some(f._dir.path()));
    assert!(offered.ends_with(".pdf"), "{offered}");

    answers.borrow_mut().push(None);
    button(&f.app, "Choose where to save the route sheet").invoke_accessible_default_action();
    let q = asked.borrow().last().cloned().unwrap();
    assert!(q.save && q.extensions == ["pdf"], "{q:?}");
    assert_eq!(q.folder, f._dir.path());
    assert_eq!(
        q.name.as_deref(),
        Path::new(offered.as_str())
            .file_name()
            .and_then(|n| n.to_str())
    );
    assert_eq!(
        field(&f.app, "Route sheet file")
            .accessible_value()
            .unwrap(),
        offered
    );

    let sub = f._dir.path().join("rounds");
    std::fs::create_dir(&sub).unwrap();
    answers.borrow_mut().push(Some(sub.join("monday round")));
    button(&f.app, "Choose where to save the route sheet").invoke_accessible_default_action();
    let chosen = sub.join("monday round.pdf");
    assert_eq!(
        field(&f.app, "Route sheet file")
            .accessible_value()
            .unwrap(),
        chosen.display().to_string()
    );
    button(&f.app, "Print route sheet").invoke_accessible_default_action();
    let m = message(&f.app);
    assert!(m.contains("Route sheet written"), "{m}");
    assert_eq!(*opened.borrow(), vec![chosen.clone()]);
    let (_, first) = first_route_unit(&f.path);
    assert!(pdf_text(&chosen).contains(&format!("1. {first} ·")));
    assert!(
        !Path::new(offered.as_str()).exists(),
        "nothing at the name offered"
    );
}
