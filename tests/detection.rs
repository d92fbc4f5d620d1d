//! The detection benchmark's path on a tiny simulated shop: `sim-shop` writes the CSV files
//! and the truth, the real binary imports them and writes `status --json --at` for every week,
//! `sim-score` reads it all back. Checks structural facts: every fault kind is planted and
//! scored, and the fixed-limit rule sees a stroke time raised by hand by 20 % on a healthy unit.

use std::path::Path;
use std::process::{Command, Output};

fn sumpbook(dir: &Path, args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_sumpbook"))
        .args(args)
        .current_dir(dir)
        .env("HOME", dir)
        .env("XDG_DATA_HOME", dir.join("data"))
        .output()
        .unwrap()
}

fn ok(dir: &Path, args: &[&str]) -> String {
    let out = sumpbook(dir, args);
    assert!(
        out.status.success(),
        "{args:?} failed: {}{}",
        String::from_utf8_lossy(&out.stdout),
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8_lossy(&out.stdout).into_owned()
}

/// Raises every stroke time of `unit` from its 11th check on by `factor`, in place.
fn raise_strokes(path: &Path, unit: &str, factor: f64) -> usize {
    let mut r = csv::Reader::from_path(path).unwrap();
    let headers = r.headers().unwrap().clone();
    let ui = headers.iter().position(|h| h == "unit_tag").unwrap();
    let si = headers.iter().position(|h| h == "stroke_time_s").unwrap();
    let mut rows: Vec<csv::StringRecord> = r.records().map(Result::unwrap).collect();
    let mut seen = 0;
    let mut raised = 0;
    for row in rows.iter_mut() {
        if &row[ui] != unit {
            continue;
        }
        seen += 1;
        if seen > 10 && !row[si].is_empty() {
            let v: f64 = row[si].parse().unwrap();
            let new = format!("{:.2}", v * factor);
            let mut fields: Vec<String> = row.iter().map(String::from).collect();
            fields[si] = new;
            *row = csv::StringRecord::from(fields);
            raised += 1;
        }
    }
    let mut w = csv::Writer::from_path(path).unwrap();
    w.write_record(&headers).unwrap();
    for row in &rows {
        w.write_record(row).unwrap();
    }
    w.flush().unwrap();
    raised
}

#[test]
fn a_tiny_simulated_shop_goes_through_import_status_and_scoring() {
    let tmp = tempfile::tempdir().unwrap();
    let d = tmp.path();
    let shop = d.join("shop");
    let shop_s = shop.to_str().unwrap();
    ok(
        d,
        &[
            "sim-shop",
            "--set",
            "main",
            "--healthy",
            "2",
            "--faulty-per-kind",
            "1",
            "--weeks",
            "36",
            "--out",
            shop_s,
        ],
    );
    // A second run into the same folder is refused unless told to replace the files.
    let again = sumpbook(
        d,
        &[
            "sim-shop",
            "--weeks",
            "36",
            "--healthy",
            "2",
            "--faulty-per-kind",
            "1",
            "--out",
            shop_s,
        ],
    );
    assert_eq!(again.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&again.stderr).contains("--force"));
    ok(
        d,
        &[
            "sim-shop",
            "--weeks",
            "36",
            "--healthy",
            "2",
            "--faulty-per-kind",
            "1",
            "--out",
            shop_s,
            "--force",
        ],
    );
    let truth: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(shop.join("truth.json")).unwrap()).unwrap();
    let units = truth["units"].as_array().unwrap();
    assert_eq!(units.len(), 8);
    let mut kinds: Vec<&str> = units
        .iter()
        .filter_map(|u| u["fault"]["kind"].as_str())
        .collect();
    kinds.sort();
    assert_eq!(
        kinds,
        [
            "cooler_fouling",
            "particle_ingress",
            "pump_wear",
            "relief_bypass",
            "viscosity_loss",
            "water_ingress"
        ]
    );
    // A fault seen at the check carries the sound unit's checks from its onset; one seen in
    // the oil does not.
    for u in units.iter().filter(|u| u["healthy"] == false) {
        let twin = u["fault"]["twin"].as_array().map_or(0, Vec::len);
        let at_check = matches!(
            u["fault"]["kind"].as_str(),
            Some("pump_wear" | "cooler_fouling" | "relief_bypass")
        );
        assert_eq!(twin > 0, at_check, "{u}");
    }
    let healthy = units
        .iter()
        .find(|u| u["healthy"] == true)
        .and_then(|u| u["unit"].as_str())
        .unwrap()
        .to_string();
    // A 20 % slower stroke from the 11th check on: the fixed rule (more than 15 % over the
    // mean of the first 4 checks) must see it on a unit the truth calls healthy.
    assert!(raise_strokes(&shop.join("checks.csv"), &healthy, 1.2) > 15);

    let db = d.join("shop.sqlite");
    let db_s = db.to_str().unwrap();
    ok(d, &["--db", db_s, "init"]);
    for kind in ["units", "events", "checks", "samples"] {
        let file = shop.join(format!("{kind}.csv"));
        ok(d, &["--db", db_s, "import", kind, file.to_str().unwrap()]);
    }
    let weeks = std::fs::read_to_string(shop.join("weeks.txt")).unwrap();
    let weeks: Vec<&str> = weeks.lines().collect();
    assert_eq!(weeks.len(), 36);
    std::fs::create_dir_all(shop.join("status")).unwrap();
    for w in &weeks {
        let json = ok(d, &["--db", db_s, "status", "--json", "--at", w]);
        std::fs::write(shop.join("status").join(format!("{w}.json")), json).unwrap();
    }
    let report: serde_json::Value =
        serde_json::from_str(&ok(d, &["sim-score", "--dir", shop_s, "--json"])).unwrap();
    assert_eq!(report["units"], 8);
    assert_eq!(report["weeks"], 36);
    for source in ["sumpbook", "fixed"] {
        let s = &report[source];
        assert_eq!(s["healthy_units"], 2, "{source}");
        assert_eq!(s["healthy_unit_weeks"], 72, "{source}");
        assert_eq!(s["detections"].as_array().unwrap().len(), 6, "{source}");
        assert_eq!(s["faults"].as_array().unwrap().len(), 6, "{source}");
    }
    let stroke_acts = report["fixed"]["false_act_kinds"]["stroke_time"]
        .as_u64()
        .unwrap_or(0);
    assert!(stroke_acts >= 1, "{}", report["fixed"]);
    let shared = report["fixed_shared_with_sound"].as_array().unwrap();
    let compared: Vec<&str> = shared.iter().filter_map(|x| x["kind"].as_str()).collect();
    assert!(
        compared
            .iter()
            .all(|k| ["pump_wear", "cooler_fouling", "relief_bypass"].contains(k)),
        "{shared:?}"
    );
    // The text report names every target.
    let text = ok(d, &["sim-score", "--dir", shop_s]);
    for needle in [
        "healthy unit-weeks at act",
        "false act flags ≤ 2 per 100 healthy unit-years",
        "relief_bypass: act at most one check after onset",
        "pump_wear: median delay earlier than the fixed rule's",
    ] {
        assert!(text.contains(needle), "{needle} in\n{text}");
    }
}
