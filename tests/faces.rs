//! The three faces agree: for every unit of the demo shop, the desktop app's fleet board (its
//! rows read through slint's testing backend, as a screen reader would), `status --json` and
//! the PDF report (read back with poppler's `pdftotext`) show the same state and the same key
//! figures. The numbers are parsed out of each face's text and compared as numbers with the
//! JSON's, so a face that rounded, converted or chose a figure of its own would fail.

use std::path::Path;
use std::process::Command;

use i_slint_backend_testing::ElementQuery;
use slint::ComponentHandle;
use sumpbook::gui::{App, Screen};

use crate::run::ok;

/// The demo's last walk-round day plus a week: the board, `status --at` and `report --to` are
/// all judged at the end of this day in the shop's time zone.
fn judged_day() -> chrono::NaiveDate {
    sumpbook::exchange::demo::end_date() + chrono::Days::new(7)
}

/// The fleet board's rows as read aloud: `TAG, STATE, figures`.
fn board_rows(db: &Path, day: chrono::NaiveDate) -> Vec<String> {
    i_slint_backend_testing::init_no_event_loop();
    // As `status --at DAY` takes it: the day's last second where the shop is (the engine
    // counts days due and overdue on the shop's calendar).
    let zone = sumpbook::app::shop::Shop::open(db).unwrap().zone();
    let at = Some(zone.day_end(day));
    let app = App::open_at(db, at).unwrap();
    app.window()
        .window()
        .set_size(slint::LogicalSize::new(1280.0, 1400.0));
    app.window().show().unwrap();
    app.show(Screen::Fleet);
    ElementQuery::from_root(app.window())
        .find_all()
        .into_iter()
        .filter_map(|e| e.accessible_label().map(|l| l.to_string()))
        .collect()
}

/// The number after `label` in `text` (`lost flow 4.5 %` → 4.5), sign kept.
fn number_after(text: &str, label: &str) -> Option<f64> {
    let rest = &text[text.find(label)? + label.len()..];
    let n: String = rest
        .trim_start()
        .chars()
        .take_while(|c| c.is_ascii_digit() || matches!(c, '.' | '-' | '+'))
        .collect();
    n.parse().ok()
}

/// The state word a face uses for a JSON state key (the board writes act and watch in
/// capitals, the report in lower case).
fn state_words(key: &str) -> &'static str {
    match key {
        "steady" => "steady",
        "watch" => "watch",
        "act" => "act",
        "not_judged" => "not judged yet",
        other => panic!("unknown state {other}"),
    }
}

/// The first state word in a report row's text (after the unit's name).
fn first_state_word(row: &str) -> Option<&'static str> {
    ["steady", "watch", "act", "not judged yet"]
        .into_iter()
        .filter_map(|w| row.find(&format!(" {w} ")).map(|i| (i, w)))
        .min_by_key(|(i, _)| *i)
        .map(|(_, w)| w)
}

/// The key figures compared, as (phrase before the number, JSON indicator, decimals the
/// faces print): lost flow in %, the heat rise's drift against baseline in K (a metric shop),
/// water in ppm.
const FIGURES: [(&str, &str, i32); 3] = [
    ("lost flow", "lost_flow_pct", 1),
    ("heat rise", "heat_rise_drift_k", 1),
    ("water", "water_ppm", 0),
];

/// `shown` is `json` printed to `decimals` decimals (half a last digit either way, plus the
/// JSON's own rounding to 0.05 of that).
fn agrees(shown: f64, json: f64, decimals: i32) -> bool {
    (shown - json).abs() <= 0.5 * 10f64.powi(-decimals) + 0.05
}

#[test]
fn every_demo_unit_shows_the_same_key_figures_and_state_on_board_json_and_paper() {
    let dir = tempfile::tempdir().unwrap();
    let db = dir.path().join("demo.sqlite");
    let dbs = db.to_str().unwrap();
    ok(dir.path(), &["--db", dbs, "demo"]);
    let day = judged_day().to_string();
    let json: serde_json::Value = serde_json::from_str(&ok(
        dir.path(),
        &["--db", dbs, "status", "--json", "--at", &day],
    ))
    .unwrap();
    let pdf = dir.path().join("faces.pdf");
    let summary: serde_json::Value = serde_json::from_str(&ok(
        dir.path(),
        &[
            "--db",
            dbs,
            "report",
            "--out",
            pdf.to_str().unwrap(),
            "--to",
            &day,
            "--json",
        ],
    ))
    .unwrap();
    let fleet_pages = summary["fleet_pages"].as_u64().unwrap().to_string();
    let out = Command::new("pdftotext")
        .args([
            "-raw",
            "-f",
            "1",
            "-l",
            &fleet_pages,
            pdf.to_str().unwrap(),
            "-",
        ])
        .output()
        .expect("pdftotext is needed (apt-get install poppler-utils)");
    let paper = String::from_utf8_lossy(&out.stdout)
        .split_whitespace()
        .collect::<Vec<_>>()
        .join(" ");
    let board = board_rows(&db, judged_day());

    let units = json["units"].as_array().unwrap();
    assert!(units.len() >= 5, "the demo has a fleet");
    // The report's fleet table lists the units worst first as `status` does: each unit's row
    // runs from its tag to the next unit's tag.
    let tags: Vec<&str> = units.iter().map(|u| u["unit"].as_str().unwrap()).collect();
    let table = &paper[paper.find("Next work due").expect("the fleet table")..];
    let mut starts = Vec::new();
    let mut from = 0;
    for t in &tags {
        let i = from
            + table[from..]
                .find(&format!("{t} "))
                .unwrap_or_else(|| panic!("{t} on paper"));
        starts.push(i);
        from = i + t.len();
    }
    starts.push(
        table
            .find("Figures in ")
            .expect("the notes under the fleet table"),
    );

    let (mut compared, mut flagged) = (0, 0);
    for (k, u) in units.iter().enumerate() {
        let tag = tags[k];
        let state = u["state"].as_str().unwrap();
        let row_paper = &table[starts[k]..starts[k + 1]];
        let row_board = board
            .iter()
            .find(|l| l.starts_with(&format!("{tag}, ")))
            .unwrap_or_else(|| panic!("{tag} not on the board"));

        // State: the same on all three.
        assert_eq!(
            first_state_word(row_paper),
            Some(state_words(state)),
            "{tag}: status --json says {state}, the report's row {row_paper:?}"
        );
        let board_word = row_board.split(", ").nth(1).unwrap().to_lowercase();
        assert_eq!(board_word, state_words(state), "{tag}: board {row_board:?}");

        // A flagged unit's board row leads with its worst flag's figure; its number is the
        // flag's value in `status --json` and the report shows it too.
        if let Some(f) = u["flags"].as_array().and_then(|f| f.first()) {
            flagged += 1;
            let figure = f["figure"].as_str().unwrap();
            // The words before the number: up to the first digit or a sign before one (the
            // hyphen of "case-drain" is no sign).
            let chars: Vec<char> = figure.chars().collect();
            let cut = (0..chars.len())
                .find(|&i| {
                    chars[i].is_ascii_digit()
                        || (matches!(chars[i], '+' | '-')
                            && chars.get(i + 1).is_some_and(|c| c.is_ascii_digit()))
                })
                .unwrap_or(chars.len());
            let measure: String = chars[..cut].iter().collect();
            let measure = measure.as_str();
            let on_board = number_after(row_board, measure).unwrap_or_else(|| {
                panic!("{tag}: no {measure:?} figure on the board {row_board:?}")
            });
            let on_paper = number_after(row_paper, measure).unwrap_or_else(|| {
                panic!("{tag}: no {measure:?} figure in the report {row_paper:?}")
            });
            assert_eq!(on_board, on_paper, "{tag}: {measure}");
            if let Some(v) = f["value"].as_f64() {
                assert!(
                    (on_board - v).abs() <= 0.01 * v.abs().max(1.0),
                    "{tag}: the board shows {measure}{on_board}, status --json's value is {v}"
                );
            }
        }

        // The key figures: on the report's row for every unit, on the board for a steady one.
        for (phrase, key, decimals) in FIGURES {
            let Some(v) = u["indicators"][key].as_f64() else {
                assert!(
                    !row_paper.contains(&format!("· {phrase} ")),
                    "{tag}: the report shows {phrase} that status --json has not"
                );
                continue;
            };
            // A flagged or not-judged row leads with what explains it, then `; ` the figures.
            let explained = !u["flags"].as_array().unwrap().is_empty() || state == "not_judged";
            let key_part = if explained {
                &row_paper[row_paper.find("; ").expect("explanation; key figures")..]
            } else {
                row_paper
            };
            let shown = number_after(key_part, phrase)
                .unwrap_or_else(|| panic!("{tag}: no {phrase} in the report's row {row_paper:?}"));
            assert!(
                agrees(shown, v, decimals),
                "{tag}: {phrase} {shown} on paper, {v} in JSON"
            );
            compared += 1;
            if state == "steady" {
                let shown = number_after(row_board, phrase)
                    .unwrap_or_else(|| panic!("{tag}: no {phrase} on the board {row_board:?}"));
                assert!(
                    agrees(shown, v, decimals),
                    "{tag}: {phrase} {shown} on the board, {v} in JSON"
                );
                compared += 1;
            }
        }
    }
    assert!(
        flagged >= 2 && compared >= 20,
        "{flagged} flagged, {compared} figures compared"
    );
}
