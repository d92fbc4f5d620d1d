//! The PDF condition report, read back with poppler's `pdftotext` and `pdftoppm` (an outside
//! reader): the demo shop's report carries every unit, its state and figures as the status
//! command gives them, and the cautions; both paper sizes render; long names and many flags
//! wrap or continue instead of running off the page.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

use chrono::{Duration, NaiveDate, TimeZone, Utc};
use sumpbook::health::plan::SAFETY_CAUTIONS;
use sumpbook::report::charts::{Band, Chart, EventMark, LimitLine, Series};
use sumpbook::report::{
    render, Finding, FleetRow, IndicatorRow, Mark, Paper, ReportDoc, StateText, UnitSection,
    WorkItem,
};

/// Runs a poppler tool and returns its standard output.
fn poppler(tool: &str, args: &[&str]) -> String {
    let out = Command::new(tool).args(args).output().unwrap_or_else(|e| {
        panic!("{tool} is needed for the report tests (apt-get install poppler-utils): {e}")
    });
    assert!(
        out.status.success(),
        "{tool} {args:?} failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8_lossy(&out.stdout).into_owned()
}

fn pdf_text(pdf: &Path) -> String {
    poppler("pdftotext", &["-raw", pdf.to_str().unwrap(), "-"])
}

/// Text with runs of whitespace made single spaces, so wrapped phrases can be found.
fn squeeze(s: &str) -> String {
    s.split_whitespace().collect::<Vec<_>>().join(" ")
}

fn page_count(pdf: &Path) -> usize {
    let info = poppler("pdfinfo", &[pdf.to_str().unwrap()]);
    info.lines()
        .find_map(|l| l.strip_prefix("Pages:"))
        .and_then(|n| n.trim().parse().ok())
        .expect("pdfinfo gives the page count")
}

/// One word that `pdftotext -bbox` found, in points from the top-left of its page.
#[derive(Debug, Clone)]
struct Word {
    page: usize,
    x0: f64,
    y0: f64,
    x1: f64,
    y1: f64,
    text: String,
}

/// Pages (width, height) and words of a PDF, by `pdftotext -bbox`.
fn words(pdf: &Path) -> (Vec<(f64, f64)>, Vec<Word>) {
    let html = poppler("pdftotext", &["-bbox", pdf.to_str().unwrap(), "-"]);
    let attr = |tag: &str, name: &str| -> f64 {
        let key = format!("{name}=\"");
        let start = tag
            .find(&key)
            .map(|i| i + key.len())
            .expect("attribute present");
        let end = tag[start..]
            .find('"')
            .map(|i| i + start)
            .expect("attribute closed");
        tag[start..end].parse().expect("a number")
    };
    let mut pages = Vec::new();
    let mut out = Vec::new();
    for line in html.lines() {
        let line = line.trim();
        if line.starts_with("<page ") {
            pages.push((attr(line, "width"), attr(line, "height")));
        } else if line.starts_with("<word ") {
            let text_start = line.find('>').unwrap() + 1;
            let text_end = line.rfind("</word>").unwrap();
            out.push(Word {
                page: pages.len(),
                x0: attr(line, "xMin"),
                y0: attr(line, "yMin"),
                x1: attr(line, "xMax"),
                y1: attr(line, "yMax"),
                text: line[text_start..text_end]
                    .replace("&amp;", "&")
                    .replace("&lt;", "<")
                    .replace("&gt;", ">"),
            });
        }
    }
    (pages, out)
}

/// Every word lies on its page with a margin, and no two words on a page overlap.
fn assert_nothing_overflows_or_overlaps(pdf: &Path) {
    let (pages, words) = words(pdf);
    assert!(!pages.is_empty());
    assert!(
        words.len() > 100 * pages.len(),
        "pdftotext found only {} words",
        words.len()
    );
    // 10 mm: the report's margin is 14 mm, so a word past this has run off its box.
    let margin = 10.0 * 72.0 / 25.4;
    for w in &words {
        let (pw, ph) = pages[w.page - 1];
        assert!(
            w.x0 >= margin && w.x1 <= pw - margin && w.y0 >= margin && w.y1 <= ph - margin,
            "word {:?} on page {} runs into the margin ({pw} × {ph})",
            w.text,
            w.page
        );
    }
    for p in 1..=pages.len() {
        let on_page: Vec<&Word> = words.iter().filter(|w| w.page == p).collect();
        for (i, a) in on_page.iter().enumerate() {
            for b in &on_page[i + 1..] {
                // Boxes shrunk by half a point: touching neighbours are not an overlap.
                let ix = a.x0 + 0.5 < b.x1 && b.x0 + 0.5 < a.x1;
                let iy = a.y0 + 0.5 < b.y1 && b.y0 + 0.5 < a.y1;
                assert!(!(ix && iy), "page {p}: {:?} overlaps {:?}", a, b);
            }
        }
    }
}

fn write_pdf(dir: &Path, name: &str, doc: &ReportDoc) -> (PathBuf, usize, usize) {
    let rendered = render(doc, &mut |_, _| true).expect("the report renders");
    let path = dir.join(name);
    std::fs::write(&path, &rendered.pdf).unwrap();
    (path, rendered.pages, rendered.fleet_pages)
}

fn state(mark: Mark) -> StateText {
    let word = match mark {
        Mark::Steady => "steady",
        Mark::Watch => "watch",
        Mark::Act => "act",
        Mark::None => "no data",
    };
    StateText {
        mark,
        word: word.into(),
    }
}

/// A report made up in the test, for layout only (none of its figures is a check value).
fn layout_doc(paper: Paper, name: &str, flags: usize) -> ReportDoc {
    let from = NaiveDate::from_ymd_opt(2024, 1, 1).unwrap();
    let to = NaiveDate::from_ymd_opt(2024, 3, 31).unwrap();
    let t0 = Utc.with_ymd_and_hms(2024, 1, 2, 7, 30, 0).unwrap();
    let points = |base: f64, step: f64| -> Vec<_> {
        (0..13)
            .map(|i| (t0 + Duration::days(7 * i), base + step * i as f64))
            .collect()
    };
    let chart = |title: &str, unit: &str, base: f64| Chart {
        title: title.into(),
        unit: unit.into(),
        from,
        to,
        series: vec![Series {
            label: title.into(),
            points: points(base, 0.3),
        }],
        band: Some(Band {
            low: base - 1.0,
            high: base + 1.0,
            centre: Some(base),
            label: "baseline band".into(),
        }),
        limits: vec![
            LimitLine {
                value: base + 3.0,
                level: Mark::Watch,
                label: "watch".into(),
            },
            LimitLine {
                value: base + 6.0,
                level: Mark::Act,
                label: "act".into(),
            },
        ],
        events: vec![EventMark {
            at: t0 + Duration::days(40),
            code: "F".into(),
            label: "filter change".into(),
        }],
        empty_note: "no readings".into(),
    };
    let findings: Vec<Finding> = (0..flags)
        .map(|i| Finding {
            unit_tag: "LX-01".into(),
            state: state(if i % 2 == 0 { Mark::Act } else { Mark::Watch }),
            what: format!("Flag number {i} of a long list"),
            amount: format!("+{i}.5 % over baseline (watch ≥ 8 %)"),
            since: "2024-03-02".into(),
            next_step: "Check the relief valve setting and the case drain, then time the stroke again at the \
                        same oil temperature."
                .into(),
            acknowledged: (i % 3 == 0).then(|| "seen by Technician Émile Zoë Østergård 2024-03-04".into()),
        })
        .collect();
    let unit = UnitSection {
        tag: "LX-01".into(),
        name: name.into(),
        state: state(Mark::Act),
        summary: "Many flags raised for this test.".into(),
        identity: vec![
            ("Machine".into(), name.into()),
            ("Pump".into(), "piston, variable".into()),
        ],
        fluid: vec![("Fluid".into(), "Test fluid VG 46".into())],
        baseline: "first 4 checks".into(),
        indicators: (0..8)
            .map(|i| IndicatorRow {
                name: format!("Indicator {i}"),
                state: state(Mark::Steady),
                latest: "1.0 %".into(),
                baseline: "0 %".into(),
                limits: "8 % / 15 %".into(),
                change: "+1.0 %".into(),
            })
            .collect(),
        charts: vec![
            chart("Lost flow", "%", 2.0),
            chart("Heat rise", "K", 18.0),
            chart("KV40", "cSt", 46.0),
            chart("Cleanliness", "ISO 4406", 17.0),
        ],
        flags: findings.clone(),
        work: vec![WorkItem {
            unit_tag: "LX-01".into(),
            task: "Fluid sample".into(),
            due: "2024-03-20".into(),
            status: "11 days late".into(),
            mark: Some(Mark::Watch),
        }],
        remarks: Vec::new(),
        corrections: Vec::new(),
        work_done: Vec::new(),
    };
    let short = UnitSection {
        tag: "LX-02".into(),
        name: "Short name".into(),
        flags: Vec::new(),
        ..unit.clone()
    };
    ReportDoc {
        shop_name: "Layout test shop".into(),
        title: "Condition report".into(),
        period: format!("{from} – {to}"),
        written: "2024-04-01".into(),
        written_at: Utc.with_ymd_and_hms(2024, 4, 1, 8, 0, 0).unwrap(),
        prepared_by: "Test".into(),
        paper,
        fleet_summary: "2 units".into(),
        fleet: [&unit, &short]
            .iter()
            .map(|u| FleetRow {
                tag: u.tag.clone(),
                name: u.name.clone(),
                state: u.state.clone(),
                figures: "lost flow 4.5 %".into(),
                trend: "rising".into(),
                oil_life: "40 %".into(),
                next_due: "fluid sample 2024-03-20".into(),
            })
            .collect(),
        exceptions: findings,
        work: unit.work.clone(),
        work_heading: "Work overdue and due in the next 4 weeks".into(),
        notes: vec![],
        questioned: Vec::new(),
        units: vec![unit, short],
        cautions: SAFETY_CAUTIONS[..4].iter().map(|s| s.to_string()).collect(),
        guidance: SAFETY_CAUTIONS[4].to_string(),
    }
}

/// The last day of the demo shop's records (`exchange::demo::end_date`), so that the status
/// command and the report judge the same records whatever the clock says.
const DEMO_DAY: &str = "2026-11-27";

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

/// One unit's line of the `status` fleet table, cut into its columns by the header.
struct StatusRow {
    cells: Vec<(String, String)>,
}

impl StatusRow {
    fn get(&self, column: &str) -> &str {
        self.cells
            .iter()
            .find(|(h, _)| h == column)
            .map(|(_, v)| v.as_str())
            .unwrap_or("")
    }
}

/// The fleet table of `sumpbook status`: columns start where their header starts.
fn status_table(status: &str) -> Vec<StatusRow> {
    let lines: Vec<&str> = status.lines().collect();
    let header_at = lines
        .iter()
        .position(|l| l.starts_with("UNIT"))
        .expect("status prints a table");
    let header = lines[header_at];
    let names = [
        "UNIT",
        "MACHINE",
        "STATE",
        "LOST",
        "LEAK",
        "HEAT+",
        "KV40",
        "ISO 4406/TARGET",
        "WATER",
        "OIL LIFE",
        "NEXT DUE",
    ];
    // Column starts in characters (the table holds × and —, so bytes would not do).
    let starts: Vec<usize> = names
        .iter()
        .map(|n| {
            header[..header.find(n).expect("column in header")]
                .chars()
                .count()
        })
        .collect();
    let mut rows = Vec::new();
    for line in &lines[header_at + 1..] {
        if line.trim().is_empty() {
            break;
        }
        let chars: Vec<char> = line.chars().collect();
        let cell = |i: usize| -> String {
            let a = starts[i].min(chars.len());
            let b = starts
                .get(i + 1)
                .copied()
                .unwrap_or(chars.len())
                .min(chars.len());
            chars[a..b].iter().collect::<String>().trim().to_string()
        };
        rows.push(StatusRow {
            cells: names
                .iter()
                .enumerate()
                .map(|(i, n)| (n.to_string(), cell(i)))
                .collect(),
        });
    }
    rows
}

fn demo_shop(dir: &Path) -> PathBuf {
    let db = dir.join("demo.sqlite");
    ok(dir, &["--db", db.to_str().unwrap(), "demo"]);
    db
}

fn write_demo_report(dir: &Path, db: &Path, paper: &str) -> (PathBuf, serde_json::Value) {
    let pdf = dir.join(format!("demo-{paper}.pdf"));
    let out = ok(
        dir,
        &[
            "--db",
            db.to_str().unwrap(),
            "report",
            "--out",
            pdf.to_str().unwrap(),
            "--to",
            DEMO_DAY,
            "--paper",
            paper,
            "--by",
            "Zoë Lindqvist",
            "--json",
        ],
    );
    (
        pdf,
        serde_json::from_str(&out).expect("report --json prints JSON"),
    )
}

#[test]
fn the_demo_report_carries_every_unit_its_state_and_figures_as_status_gives_them() {
    let dir = tempfile::tempdir().unwrap();
    let db = demo_shop(dir.path());
    let status = ok(
        dir.path(),
        &["--db", db.to_str().unwrap(), "status", "--at", DEMO_DAY],
    );
    let rows = status_table(&status);
    assert_eq!(rows.len(), 11, "{status}");

    let (pdf, summary) = write_demo_report(dir.path(), &db, "a4");
    let pages = page_count(&pdf);
    let fleet_pages = summary["fleet_pages"].as_u64().unwrap() as usize;
    assert_eq!(summary["pages"].as_u64().unwrap() as usize, pages);
    assert_eq!(summary["units"].as_u64().unwrap() as usize, rows.len());
    // A page per unit after the fleet part: no unit of the demo needs a second page.
    assert_eq!(
        pages,
        rows.len() + fleet_pages,
        "{pages} pages, {fleet_pages} for the fleet"
    );

    let page_text = |p: usize| {
        squeeze(&poppler(
            "pdftotext",
            &[
                "-raw",
                "-f",
                &p.to_string(),
                "-l",
                &p.to_string(),
                pdf.to_str().unwrap(),
                "-",
            ],
        ))
    };
    let fleet: String = (1..=fleet_pages)
        .map(page_text)
        .collect::<Vec<_>>()
        .join(" ");
    // The fleet table lists the units in the order the status command does (worst first);
    // each unit's row runs from its tag to the next unit's tag.
    let mut at = 0;
    let starts: Vec<usize> = rows
        .iter()
        .map(|r| {
            let tag = r.get("UNIT");
            let i = fleet[at..]
                .find(&format!("{tag} "))
                .unwrap_or_else(|| panic!("{tag} missing from the fleet table"))
                + at;
            at = i + tag.len();
            i
        })
        .collect();
    let table_end = fleet
        .find("Figures in")
        .expect("the note under the fleet table");
    // The fleet part ends with the supervisor's sign-off lines, after the work list.
    let sign = fleet.find("Fleet sign-off").expect("the fleet sign-off");
    assert!(
        sign > table_end && fleet[sign..].contains("Approved by"),
        "{}",
        &fleet[sign..]
    );
    for (k, r) in rows.iter().enumerate() {
        let tag = r.get("UNIT");
        let row = &fleet[starts[k]..starts.get(k + 1).copied().unwrap_or(table_end)];
        let state = r.get("STATE").to_lowercase();
        assert!(
            row.contains(&format!(" {state} ")),
            "{tag}: state {state} not in {row:?}"
        );
        for column in ["LOST", "LEAK", "HEAT+", "KV40", "WATER", "OIL LIFE"] {
            let figure = r.get(column);
            if figure != "—" {
                assert!(
                    row.contains(figure),
                    "{tag}: {column} {figure:?} not in {row:?}"
                );
            }
        }
        let iso = r.get("ISO 4406/TARGET");
        for code in iso.split(" / ").filter(|c| *c != "—") {
            assert!(row.contains(code), "{tag}: ISO 4406 {code} not in {row:?}");
        }
        // The unit's own page: its tag in the title and its state in words.
        let own = page_text(fleet_pages + 1 + k);
        assert!(
            own.starts_with(tag),
            "page {} is not {tag}'s: {}",
            fleet_pages + 1 + k,
            &own[..60.min(own.len())]
        );
        assert!(
            own.contains(&format!("State: {state}.")),
            "{tag}'s page lacks its state"
        );
        assert!(
            own.contains("Checked by") && own.contains("Reviewed by"),
            "{tag}'s page lacks the sign-off"
        );
        // A unit that has lost flow shows what it turns into heat and costs a year.
        let lost: f64 = r.get("LOST").trim_end_matches('%').parse().unwrap_or(0.0);
        if lost > 0.0 {
            assert!(
                own.contains("Cost of waiting") && own.contains("kW") && own.contains("a year"),
                "{tag}'s page lacks the cost of waiting"
            );
        }
    }
    // Dates and times are said to be the shop's (the demo keeps Europe/Berlin time).
    assert!(fleet.contains("Europe/Berlin"), "the report names the zone");
    assert!(
        fleet.contains("price per kWh"),
        "the notes say how the cost is reckoned"
    );
    // Every flag the status command lists is among the exceptions, with its unit.
    // (A unit "not judged yet" has no flag: it is not among the exceptions.)
    for unit in rows
        .iter()
        .filter(|r| !matches!(r.get("STATE"), "steady" | "not judged yet"))
    {
        assert!(fleet.contains(&format!(
            "{} {}",
            unit.get("UNIT"),
            unit.get("STATE").to_lowercase()
        )));
    }
    // The cautions and the guidance line, on every page.
    for p in 1..=pages {
        let text = page_text(p);
        for caution in SAFETY_CAUTIONS {
            assert!(
                text.contains(&squeeze(caution)),
                "page {p} lacks {caution:?}"
            );
        }
        assert!(text.contains(&format!("Page {p} of {pages}")));
        assert!(text.contains("prepared by Zoë Lindqvist"));
    }
}

#[test]
fn the_demo_report_renders_on_letter_and_a4_within_its_pages() {
    let dir = tempfile::tempdir().unwrap();
    let db = demo_shop(dir.path());
    for paper in ["a4", "letter"] {
        let (pdf, summary) = write_demo_report(dir.path(), &db, paper);
        let pages = page_count(&pdf);
        assert_eq!(
            pages,
            11 + summary["fleet_pages"].as_u64().unwrap() as usize,
            "{paper}"
        );
        let prefix = dir.path().join(format!("png-{paper}"));
        poppler(
            "pdftoppm",
            &[
                "-png",
                "-r",
                "30",
                pdf.to_str().unwrap(),
                prefix.to_str().unwrap(),
            ],
        );
        let pngs = std::fs::read_dir(dir.path())
            .unwrap()
            .filter_map(|e| e.ok())
            .filter(|e| {
                e.file_name()
                    .to_string_lossy()
                    .starts_with(&format!("png-{paper}"))
            })
            .filter(|e| e.metadata().map(|m| m.len() > 1000).unwrap_or(false))
            .count();
        assert_eq!(pngs, pages, "{paper}: every page rasterises");
        assert_nothing_overflows_or_overlaps(&pdf);
        // Small enough to mail: the faces carry only the glyphs drawn (whole, they are about
        // 0.85 MB), and they are still embedded, as pdffonts reads them.
        let size = std::fs::metadata(&pdf).unwrap().len();
        assert!(size <= 200_000, "{paper}: {size} bytes");
        let fonts = poppler("pdffonts", &[pdf.to_str().unwrap()]);
        let embedded: Vec<&str> = fonts.lines().filter(|l| l.contains("TrueType")).collect();
        assert!(
            embedded.len() == 2 && embedded.iter().all(|l| l.contains(" yes ")),
            "{fonts}"
        );
    }
}

#[test]
fn the_paper_follows_the_shops_units_unless_chosen() {
    let dir = tempfile::tempdir().unwrap();
    let db = demo_shop(dir.path());
    let db = db.to_str().unwrap();
    let size = |name: &str, extra: &[&str]| {
        let pdf = dir.path().join(name);
        let mut args = vec!["--db", db, "report", "--out", pdf.to_str().unwrap()];
        args.extend(extra);
        ok(dir.path(), &args);
        let info = poppler("pdfinfo", &[pdf.to_str().unwrap()]);
        info.lines()
            .find(|l| l.starts_with("Page size:"))
            .unwrap_or_default()
            .to_string()
    };
    // US Letter is 8.5 × 11 in = 612 × 792 pt; pdfinfo names A4 (ISO 216, 210 × 297 mm) itself.
    assert!(size("metric.pdf", &[]).contains("(A4)"));
    ok(
        dir.path(),
        &["--db", db, "settings", "--units", "us", "--by", "T. Tester"],
    );
    assert!(size("us.pdf", &[]).contains("612 x 792"));
    assert!(size("us-a4.pdf", &["--paper", "a4"]).contains("(A4)"));
}

#[test]
fn the_report_command_refuses_what_it_cannot_do() {
    let dir = tempfile::tempdir().unwrap();
    let db = demo_shop(dir.path());
    let db = db.to_str().unwrap();
    for (args, needle) in [
        (vec!["--unit", "NO-SUCH-UNIT"], "no unit `NO-SUCH-UNIT`"),
        (
            vec!["--from", "2026-11-01", "--to", "2026-10-01"],
            "after it ends",
        ),
        (vec!["--paper", "a3"], "not a paper size"),
        (vec!["--to", "27.11.2026"], "not a date"),
    ] {
        let mut all = vec!["--db", db, "report", "--out", "r.pdf"];
        all.extend(args);
        let out = sumpbook(dir.path(), &all);
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{all:?}: {err}");
        assert!(err.contains(needle), "{all:?}: {err}");
        assert!(
            !dir.path().join("r.pdf").exists(),
            "nothing is written on a refusal"
        );
    }
    let out = sumpbook(
        dir.path(),
        &["--db", db, "report", "--out", "missing-folder/r.pdf"],
    );
    assert_eq!(
        out.status.code(),
        Some(2),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
}

#[test]
fn chosen_units_come_in_the_order_asked_and_a_cancelled_report_writes_nothing() {
    use sumpbook::app::report::{write_report, ReportOptions};
    use sumpbook::app::shop::Shop;
    let dir = tempfile::tempdir().unwrap();
    let shop = Shop::create_demo(&dir.path().join("demo.sqlite")).unwrap();
    let out = dir.path().join("two.pdf");
    let opts = ReportOptions {
        out: out.clone(),
        units: vec!["dp-08-c".into(), "PB-03-A".into()],
        from: None,
        to: chrono::NaiveDate::from_ymd_opt(2026, 11, 27),
        paper: Paper::Letter,
        prepared_by: String::new(),
        replace: false,
    };
    let mut steps = Vec::new();
    let s = write_report(&shop, &opts, &mut |d, t| {
        steps.push((d, t));
        true
    })
    .unwrap();
    assert!(s.completed);
    assert_eq!(s.units, 2);
    assert_eq!(s.pages, s.fleet_pages + 2);
    // Progress counts up to its total, once per step.
    assert_eq!(steps.last(), Some(&(5, 5)));
    assert!(steps.windows(2).all(|w| w[1].0 == w[0].0 + 1));
    let text = squeeze(&pdf_text(&out));
    let (c, b) = (
        text.find("DP-08-C ·").unwrap(),
        text.find("PB-03-A ·").unwrap(),
    );
    assert!(c < b, "the unit pages follow the order asked");
    assert!(!text.contains("TP-07-A"), "only the chosen units");

    let cancelled = dir.path().join("cancelled.pdf");
    let s = write_report(
        &shop,
        &ReportOptions {
            out: cancelled.clone(),
            ..opts
        },
        &mut |d, _| d < 3,
    )
    .unwrap();
    assert!(!s.completed);
    assert!(!cancelled.exists());
    let left: Vec<String> = std::fs::read_dir(dir.path())
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .filter(|n| n.contains("cancelled"))
        .collect();
    assert!(left.is_empty(), "a cancelled report left {left:?}");
}

#[test]
fn a_us_customary_shop_gets_its_report_in_us_units() {
    use sumpbook::app::report::{write_report, ReportOptions};
    use sumpbook::app::shop::Shop;
    let dir = tempfile::tempdir().unwrap();
    let shop = Shop::create_demo(&dir.path().join("demo.sqlite")).unwrap();
    let mut settings = shop.store_for_tests().settings().unwrap();
    settings.unit_system = sumpbook::units::UnitSystem::Us;
    shop.store_for_tests()
        .set_settings(&settings, "test", "US report")
        .unwrap();
    let out = dir.path().join("us.pdf");
    let opts = ReportOptions {
        out: out.clone(),
        units: vec!["PB-03-A".into()],
        from: None,
        to: chrono::NaiveDate::from_ymd_opt(2026, 11, 27),
        paper: Paper::Letter,
        prepared_by: "QA".into(),
        replace: false,
    };
    let s = write_report(&shop, &opts, &mut |_, _| true).unwrap();
    assert_eq!(s.pages, s.fleet_pages + 1);
    let text = squeeze(&pdf_text(&out));
    for unit in ["GPM", "°F", "psi", "gal", "in"] {
        assert!(
            text.contains(&format!(" {unit}")),
            "no {unit} in the US report"
        );
    }
    for unit in ["L/min", "°C", " bar"] {
        assert!(!text.contains(unit), "{unit} in the US report");
    }
    assert!(text.contains("Figures in US customary units"));
}

#[test]
fn a_sixty_character_name_and_twelve_flags_stay_on_their_pages() {
    let dir = tempfile::tempdir().unwrap();
    let name = "Four-column hydraulic transfer press with servo cushion, bay 7";
    assert_eq!(name.chars().count(), 62);
    for paper in [Paper::A4, Paper::Letter] {
        let doc = layout_doc(paper, name, 12);
        let (pdf, pages, fleet_pages) =
            write_pdf(dir.path(), &format!("long-{}.pdf", paper.as_str()), &doc);
        assert_eq!(page_count(&pdf), pages);
        assert_nothing_overflows_or_overlaps(&pdf);
        let text = squeeze(&pdf_text(&pdf));
        // The whole name is there (wrapped, not cut), and so is every flag.
        assert!(text.contains(name), "the long name is cut off");
        for i in 0..12 {
            assert!(
                text.contains(&format!("Flag number {i} of a long list")),
                "flag {i} missing"
            );
        }
        // The long unit continues on a page of its own, marked as continued; the short one
        // still fits on one page.
        assert!(text.contains("(continued)"));
        assert!(pages > fleet_pages + 2, "{pages} pages");
        let sign_offs = text.matches("Checked by").count();
        assert_eq!(sign_offs, 2, "one sign-off block per unit");
        assert_eq!(text.matches("Approved by").count(), 1, "one for the fleet");
    }
}

#[test]
fn letter_and_a4_both_render_at_their_size() {
    let dir = tempfile::tempdir().unwrap();
    for (paper, w, h) in [(Paper::A4, 595.28, 841.89), (Paper::Letter, 612.0, 792.0)] {
        let doc = layout_doc(paper, "Press", 2);
        let (pdf, pages, _) = write_pdf(dir.path(), &format!("{}.pdf", paper.as_str()), &doc);
        let info = poppler("pdfinfo", &[pdf.to_str().unwrap()]);
        let size = info
            .lines()
            .find(|l| l.starts_with("Page size:"))
            .unwrap()
            .to_string();
        let nums: Vec<f64> = size
            .split_whitespace()
            .filter_map(|t| t.parse().ok())
            .collect();
        assert!(
            (nums[0] - w).abs() < 0.5 && (nums[1] - h).abs() < 0.5,
            "{size}"
        );
        // One fleet page and one page per unit at this size.
        assert_eq!(pages, 3, "{paper:?}");
        let prefix = dir.path().join(paper.as_str());
        poppler(
            "pdftoppm",
            &[
                "-png",
                "-r",
                "40",
                pdf.to_str().unwrap(),
                prefix.to_str().unwrap(),
            ],
        );
        let pngs = std::fs::read_dir(dir.path())
            .unwrap()
            .filter_map(|e| e.ok())
            .filter(|e| {
                e.file_name().to_string_lossy().starts_with(paper.as_str())
                    && e.path().extension().is_some_and(|x| x == "png")
            })
            .count();
        assert_eq!(pngs, pages);
        assert_nothing_overflows_or_overlaps(&pdf);
    }
}

#[test]
fn every_page_has_its_number_the_cautions_and_the_guidance_line() {
    let dir = tempfile::tempdir().unwrap();
    let doc = layout_doc(Paper::A4, "Press", 12);
    let (pdf, pages, _) = write_pdf(dir.path(), "frame.pdf", &doc);
    for p in 1..=pages {
        let n = p.to_string();
        let text = squeeze(&poppler(
            "pdftotext",
            &["-f", &n, "-l", &n, pdf.to_str().unwrap(), "-"],
        ));
        assert!(text.contains(&format!("Page {p} of {pages}")), "page {p}");
        for caution in SAFETY_CAUTIONS {
            assert!(
                text.contains(&squeeze(caution)),
                "page {p} lacks {caution:?}"
            );
        }
    }
}

#[test]
fn the_symbols_of_the_trade_survive_into_the_pdf_text() {
    let dir = tempfile::tempdir().unwrap();
    let mut doc = layout_doc(Paper::A4, "Presse Nº 3 – Kühlung", 1);
    doc.prepared_by = "Zoë Ångström-Łukasiewicz".into();
    doc.fleet[0].figures = "ΔT 21.3 K · 48.0 °C · ≥4 µm(c) 18 · ±0.8 cSt · 4.5 %".into();
    let (pdf, _, _) = write_pdf(dir.path(), "symbols.pdf", &doc);
    let text = squeeze(&pdf_text(&pdf));
    for s in [
        "Zoë Ångström-Łukasiewicz",
        "Presse Nº 3 – Kühlung",
        "48.0 °C",
        "≥4 µm(c)",
        "±0.8 cSt",
        "ΔT 21.3 K",
    ] {
        assert!(text.contains(s), "{s:?} missing from the PDF text");
    }
    // The font is embedded, so the report prints the same everywhere.
    let fonts = poppler("pdffonts", &[pdf.to_str().unwrap()]);
    let embedded: Vec<&str> = fonts.lines().skip(2).collect();
    assert_eq!(embedded.len(), 2, "{fonts}");
    for l in embedded {
        let cols: Vec<&str> = l.split_whitespace().collect();
        assert!(cols.contains(&"yes"), "font not embedded: {l}");
    }
}

#[test]
fn cancelling_stops_the_report() {
    let doc = layout_doc(Paper::A4, "Press", 2);
    let mut calls = Vec::new();
    let r = render(&doc, &mut |done, total| {
        calls.push((done, total));
        done < 2
    });
    assert!(matches!(r, Err(sumpbook::report::ReportError::Cancelled)));
    assert_eq!(calls, vec![(1, 4), (2, 4)]);
}

#[test]
fn a_report_to_a_device_writes_into_it_and_leaves_it_a_device() {
    use std::os::unix::fs::FileTypeExt;
    let dir = tempfile::tempdir().unwrap();
    let db = demo_shop(dir.path());
    ok(
        dir.path(),
        &[
            "--db",
            db.to_str().unwrap(),
            "report",
            "--unit",
            "PR-01-M",
            "--out",
            "/dev/null",
        ],
    );
    let kind = std::fs::metadata("/dev/null").unwrap().file_type();
    assert!(kind.is_char_device(), "/dev/null was replaced");
}

/// Every flag reads with one figure everywhere: the fleet board's text (`view::fleet_line`, what
/// the app's board row shows), `status --json` (`figure`) and the PDF report (the fleet row and
/// the exceptions table, and the unit's own page) — for every unit of the demo.
#[test]
fn each_flag_shows_the_same_figure_on_the_board_in_status_json_and_in_the_report() {
    use sumpbook::app::shop::Shop;
    use sumpbook::app::status::{fleet_status_in, Detail};
    use sumpbook::app::view::fleet_line;
    let dir = tempfile::tempdir().unwrap();
    let db = demo_shop(dir.path());
    let json: serde_json::Value = serde_json::from_str(&ok(
        dir.path(),
        &[
            "--db",
            db.to_str().unwrap(),
            "status",
            "--json",
            "--at",
            DEMO_DAY,
        ],
    ))
    .unwrap();
    let (pdf, summary) = write_demo_report(dir.path(), &db, "a4");
    let fleet_pages = summary["fleet_pages"].as_u64().unwrap() as usize;
    let page_text = |p: usize| {
        squeeze(&poppler(
            "pdftotext",
            &[
                "-raw",
                "-f",
                &p.to_string(),
                "-l",
                &p.to_string(),
                pdf.to_str().unwrap(),
                "-",
            ],
        ))
    };
    let fleet: String = (1..=fleet_pages)
        .map(page_text)
        .collect::<Vec<_>>()
        .join(" ");

    let shop = Shop::open(&db).unwrap();
    let at = chrono::NaiveDate::parse_from_str(DEMO_DAY, "%Y-%m-%d")
        .unwrap()
        .and_hms_opt(23, 59, 59)
        .unwrap()
        .and_utc();
    let board = fleet_status_in(shop.store_for_tests(), Some(at), Detail::Summary).unwrap();
    let units = json["units"].as_array().unwrap();
    assert_eq!(units.len(), board.units.len());
    let mut flags_seen = 0;
    for (k, u) in units.iter().enumerate() {
        let tag = u["unit"].as_str().unwrap();
        let b = board.units.iter().find(|x| x.unit == tag).unwrap();
        assert_eq!(b.unit, board.units[k].unit, "the same order worst first");
        let row = fleet_line(b, board.unit_system).board;
        let own = page_text(fleet_pages + 1 + k);
        assert!(own.starts_with(tag), "page of {tag}");
        for (i, f) in u["flags"].as_array().unwrap().iter().enumerate() {
            let figure = f["figure"].as_str().unwrap();
            assert!(!figure.is_empty(), "{tag}: a flag without a figure");
            if i == 0 {
                assert!(
                    row.starts_with(figure),
                    "{tag}: the board shows {row:?}, status --json {figure:?}"
                );
            }
            assert!(
                fleet.contains(&format!("{tag} ")) && fleet.contains(figure),
                "{tag}: {figure:?} not on the report's fleet pages"
            );
            assert!(own.contains(figure), "{tag}: {figure:?} not on its page");
            flags_seen += 1;
        }
    }
    assert!(flags_seen >= 5, "the demo raises flags ({flags_seen})");
}

/// The route sheet of a US shop, read back: letter paper, every unit in route order, each with
/// the walk-round form's fields in the form's order and last time's value as the form shows it,
/// the reservoir limits in °F, and the safety cautions.
#[test]
fn the_route_sheet_lists_the_round_in_form_order_with_last_values_and_limits() {
    use crate::run::ok;
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    ok(d, &["--db", "shop.sqlite", "demo"]);
    ok(
        d,
        &[
            "--db",
            "shop.sqlite",
            "settings",
            "--units",
            "us",
            "--by",
            "T. Tester",
        ],
    );
    let out = ok(
        d,
        &["--db", "shop.sqlite", "route-sheet", "--out", "route.pdf"],
    );
    assert!(out.contains("route sheet written to route.pdf"), "{out}");
    let pdf = d.join("route.pdf");
    let info = poppler("pdfinfo", &[pdf.to_str().unwrap()]);
    assert!(info.contains("612 x 792"), "letter in a US shop: {info}");
    let text = squeeze(&pdf_text(&pdf));

    let shop = sumpbook::app::shop::Shop::open(&d.join("shop.sqlite")).unwrap();
    let stops = sumpbook::app::entry::route(&shop).unwrap();
    let mut at = 0;
    for (i, s) in stops.iter().enumerate() {
        let heading = format!("{}. {} ·", i + 1, s.tag);
        let found = text[at..]
            .find(&heading)
            .unwrap_or_else(|| panic!("`{heading}` missing or out of route order"));
        at += found + heading.len();
    }
    let first = sumpbook::app::entry::check_form(&shop, stops[0].unit_id, Utc::now()).unwrap();
    let start = text.find(&format!("1. {} ·", stops[0].tag)).unwrap();
    let end = text.find(&format!("2. {} ·", stops[1].tag)).unwrap();
    let page = &text[start..end];
    let mut at = 0;
    for f in &first.fields {
        let found = page[at..]
            .find(&f.label)
            .unwrap_or_else(|| panic!("`{}` missing or out of the form's order: {page}", f.label));
        at += found + f.label.len();
    }
    let temp = &first.fields[0];
    assert_eq!(temp.key, "reservoir_temp");
    assert!(page.contains("Reservoir temperature (°F)"), "{page}");
    assert!(
        page.contains(&temp.hint),
        "last value `{}`: {page}",
        temp.hint
    );
    assert!(
        page.contains("watch ≥ 140 °F") || page.contains("watch > 140 °F"),
        "{page}"
    );
    assert!(text.contains("penetrate skin"), "{text}");
    assert!(text.contains("Technician"), "{text}");
}

/// A reading corrected after entry is marked beside every figure that rests on it, and the
/// unit page lists the period's corrections with old → new, who, when and why; a deletion and
/// its restore are listed too. Read back with pdftotext (an outside reader).
#[test]
fn figures_that_rest_on_a_corrected_reading_are_marked_and_the_corrections_listed() {
    use sumpbook::app::entry::{self, Entered, Reading};
    use sumpbook::app::report::{write_report, ReportOptions};
    use sumpbook::app::shop::Shop;
    let dir = tempfile::tempdir().unwrap();
    let shop = Shop::create_demo(&dir.path().join("demo.sqlite")).unwrap();
    let store = shop.store_for_tests();
    let unit = store.unit_by_tag("PB-03-A").unwrap().unwrap();
    let checks = store.checks_for_unit(unit.id, None).unwrap();
    let (latest, older) = (&checks[checks.len() - 1], &checks[checks.len() - 2]);
    // The latest check's pressure re-read from the gauge photo; an older one deleted and put back.
    let fields = entry::reading_fields(&shop, Reading::Check, latest.id).unwrap();
    let mut entered = Entered::from_fields(&fields);
    entered.set("note", "gauge photo re-read");
    entry::edit_reading(
        &shop,
        Reading::Check,
        latest.id,
        &entered,
        "R. Quennell",
        "typo in the note",
    )
    .unwrap();
    entry::delete_reading(&shop, Reading::Check, older.id, "AK", "typed twice").unwrap();
    let deletion = sumpbook::app::edit_trail::unit_edits(&shop, "PB-03-A")
        .unwrap()
        .edits
        .last()
        .unwrap()
        .edit_id;
    sumpbook::app::edit_trail::restore_reading(
        &shop,
        "PB-03-A",
        deletion,
        "R. Engineer",
        "not a twin",
    )
    .unwrap();

    // One of the checks the unit's baseline was computed from (its era's first twelve, from
    // 2024-11-29), corrected long before the period: marked on the baseline, not listed.
    let early = checks
        .iter()
        .find(|c| c.taken_at.date_naive() >= NaiveDate::from_ymd_opt(2024, 12, 1).unwrap())
        .unwrap();
    let fields = entry::reading_fields(&shop, Reading::Check, early.id).unwrap();
    let mut entered = Entered::from_fields(&fields);
    entered.set("note", "re-read");
    entry::edit_reading(
        &shop,
        Reading::Check,
        early.id,
        &entered,
        "JT",
        "baseline check re-read",
    )
    .unwrap();

    let out = dir.path().join("corrected.pdf");
    let opts = ReportOptions {
        out: out.clone(),
        units: vec!["PB-03-A".into(), "DP-08-C".into()],
        from: None,
        to: Some(sumpbook::exchange::demo::end_date()),
        paper: Paper::Letter,
        prepared_by: String::new(),
        replace: false,
    };
    let s = write_report(&shop, &opts, &mut |_, _| true).unwrap();
    if let Some(keep) = std::env::var_os("SUMPBOOK_KEEP_PDF") {
        std::fs::copy(&out, keep).unwrap();
    }
    assert!(s.completed);
    let text = squeeze(&pdf_text(&out));
    let (at_pb, at_dp) = (
        text.find("PB-03-A · ").unwrap(),
        text.find("DP-08-C · ").unwrap(),
    );
    assert!(at_pb < at_dp, "the order asked");
    let (pb, dp) = (&text[at_pb..at_dp], &text[at_dp..]);
    assert!(pb.contains("Corrections in the period"), "{pb}");
    assert!(pb.contains("(check corrected)"), "{pb}");
    assert!(pb.contains("1 of its checks corrected"), "{pb}");
    assert!(!pb.contains("baseline check re-read"), "{pb}");
    assert!(pb.contains("note: — → gauge photo re-read"), "{pb}");
    assert!(
        pb.contains("R. Quennell") && pb.contains("typo in the note"),
        "{pb}"
    );
    assert!(
        pb.contains("(deleted)") && pb.contains("typed twice"),
        "{pb}"
    );
    assert!(
        pb.contains("(put back)") && pb.contains("not a twin"),
        "{pb}"
    );
    // The other unit had nothing corrected: no list, no mark (its flow chart's "corrected"
    // is the flow corrected to the baseline's oil, not a corrected reading).
    assert!(!dp.contains("Corrections in the period"), "{dp}");
    for mark in [
        "check corrected",
        "sample corrected",
        "of its checks corrected",
    ] {
        assert!(!dp.contains(mark), "{mark}: {dp}");
    }
    assert!(pb.contains("check corrected") && pb.contains("of its checks corrected"));
    assert_nothing_overflows_or_overlaps(&out);
}

/// Work done in the report's period is listed on the unit's page with what was recorded with
/// it: the volume and fluid put in, the hour meter, the filter part and the work order.
#[test]
fn work_done_in_the_period_is_listed_with_its_hour_meter_filter_part_and_work_order() {
    use sumpbook::app::report::{write_report, ReportOptions};
    use sumpbook::app::shop::Shop;
    use sumpbook::app::work::{log_event_in, EventInput};
    use sumpbook::model::{EventDetails, EventKind};
    let dir = tempfile::tempdir().unwrap();
    let shop = Shop::create_demo(&dir.path().join("demo.sqlite")).unwrap();
    let store = shop.store_for_tests();
    let end = sumpbook::exchange::demo::end_date();
    let at = (end - chrono::Days::new(2))
        .and_hms_opt(10, 0, 0)
        .unwrap()
        .and_utc();
    let unit = store.unit_by_tag("PB-03-A").unwrap().unwrap();
    let around = store.hour_meter_around(unit.id, at, None).unwrap();
    let hours = around.before.unwrap().0 + 1.0;
    assert!(around.after.is_none_or(|(h, _)| h >= hours));
    let input = EventInput {
        kind: EventKind::FilterChange,
        at: Some(at),
        volume: None,
        fluid: None,
        by: "T. Fitter".into(),
        note: "pressure filter element".into(),
        details: EventDetails {
            hours: Some(hours),
            filter_part: "RF-10-BN".into(),
            work_order: "WO-4471".into(),
        },
        confirmed: false,
    };
    log_event_in(store, "PB-03-A", &input, at + chrono::Duration::hours(1)).unwrap();

    let out = dir.path().join("work-done.pdf");
    let opts = ReportOptions {
        out: out.clone(),
        units: vec!["PB-03-A".into(), "DP-08-C".into()],
        from: None,
        to: Some(end),
        paper: Paper::Letter,
        prepared_by: String::new(),
        replace: false,
    };
    assert!(
        write_report(&shop, &opts, &mut |_, _| true)
            .unwrap()
            .completed
    );
    let text = squeeze(&pdf_text(&out));
    let (at_pb, at_dp) = (
        text.find("PB-03-A · ").unwrap(),
        text.find("DP-08-C · ").unwrap(),
    );
    let pb = &text[at_pb..at_dp];
    assert!(pb.contains("Work done"), "{pb}");
    assert!(pb.contains("filter change: "), "{pb}");
    assert!(
        pb.contains(&format!(
            "hour meter {hours} h · filter part RF-10-BN · work order WO-4471"
        )),
        "{pb}"
    );
    assert!(
        pb.contains("T. Fitter") && pb.contains("pressure filter element"),
        "{pb}"
    );
    assert_nothing_overflows_or_overlaps(&out);
}
