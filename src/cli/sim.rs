//! `sumpbook sim-shop` and `sumpbook sim-score` (hidden): the detection benchmark's simulated
//! shop and its scoring, used by `benches/detection.sh`. Parses the arguments, calls `app::sim`
//! and prints the figures. No rules here.

use std::collections::BTreeMap;
use std::io::Write;
use std::path::PathBuf;

use clap::Args;

use super::Failure;
use crate::app::sim::{make_sim_shop, score_sim, SimReport};
use crate::app::vocab::{Chance, Detection, FaultFigures, SimParams as Params};

#[derive(Args, Debug, Clone, PartialEq)]
pub struct SimShopArgs {
    /// Parameter set: main or held-out.
    #[arg(long, default_value = "main")]
    pub set: String,
    /// Directory to write the CSV files, truth.json and weeks.txt into.
    #[arg(long, value_name = "DIR")]
    pub out: PathBuf,
    /// Another seed than the set's own.
    #[arg(long)]
    pub seed: Option<u64>,
    /// Healthy units (default: the set's).
    #[arg(long)]
    pub healthy: Option<usize>,
    /// Faulty units of each fault kind (default: the set's).
    #[arg(long)]
    pub faulty_per_kind: Option<usize>,
    /// Weeks of record (default: the set's).
    #[arg(long)]
    pub weeks: Option<usize>,
    /// Replace the files of an earlier run in DIR.
    #[arg(long)]
    pub force: bool,
    /// Print JSON.
    #[arg(long)]
    pub json: bool,
}

#[derive(Args, Debug, Clone, PartialEq)]
pub struct SimScoreArgs {
    /// A directory written by sim-shop, with status/DATE.json for every date of weeks.txt.
    #[arg(long, value_name = "DIR")]
    pub dir: PathBuf,
    /// Print JSON.
    #[arg(long)]
    pub json: bool,
}

pub fn run_shop(args: &SimShopArgs, out: &mut dyn Write) -> Result<(), Failure> {
    let mut p = Params::by_name(&args.set).ok_or_else(|| {
        Failure::bad_input(format!(
            "`{}` is not a set; expected main|held-out",
            args.set
        ))
    })?;
    if let Some(s) = args.seed {
        p.seed = s;
    }
    if let Some(n) = args.healthy {
        p.healthy = n;
    }
    if let Some(n) = args.faulty_per_kind {
        p.faulty_per_kind = n;
    }
    if let Some(n) = args.weeks {
        p.weeks = n;
    }
    p.validate().map_err(Failure::bad_input)?;
    let o = make_sim_shop(&args.out, &p, args.force)?;
    if args.json {
        let text = serde_json::to_string_pretty(&o).map_err(|e| Failure::failed(e.to_string()))?;
        writeln!(out, "{text}")?;
        return Ok(());
    }
    writeln!(
        out,
        "{}: set {}, {} units ({} faulty), {} weeks, {} checks, {} samples, {} events, {} slips",
        o.dir.display(),
        o.set,
        o.units,
        o.faulty,
        o.weeks,
        o.checks,
        o.samples,
        o.events,
        o.slips
    )?;
    Ok(())
}

pub fn run_score(args: &SimScoreArgs, out: &mut dyn Write) -> Result<(), Failure> {
    let r = score_sim(&args.dir)?;
    if args.json {
        let text = serde_json::to_string_pretty(&r).map_err(|e| Failure::failed(e.to_string()))?;
        writeln!(out, "{text}")?;
        return Ok(());
    }
    print_report(&r, out)?;
    Ok(())
}

fn opt_f(x: Option<f64>) -> String {
    x.map_or_else(|| "-".into(), |v| format!("{v:.1}"))
}

fn opt_u(x: Option<usize>) -> String {
    x.map_or_else(|| "-".into(), |v| v.to_string())
}

fn delay(median: Option<f64>, worst: Option<i64>) -> String {
    let m = median.map_or_else(|| "never".into(), |v| format!("{v:+.1}"));
    let w = worst.map_or_else(|| "never".into(), |v| format!("{v:+}"));
    format!("{m} / {w}")
}

fn fault_row(f: Option<&FaultFigures>) -> [String; 3] {
    match f {
        Some(f) => [
            format!(
                "{}/{}{}",
                f.found,
                f.judged,
                if f.planted > f.judged { "*" } else { "" }
            ),
            delay(f.median_delay, f.worst_delay),
            delay(f.median_watch_delay, f.worst_watch_delay),
        ],
        None => ["-".into(), "-".into(), "-".into()],
    }
}

fn clear_text(v: &[Option<usize>]) -> String {
    if v.is_empty() {
        return "none repaired while flagged".into();
    }
    let never = v.iter().filter(|x| x.is_none()).count();
    let worst = v.iter().flatten().max();
    let within = v.iter().flatten().filter(|&&c| c <= 2).count();
    format!(
        "{within}/{} within 2; worst {}{}",
        v.len(),
        worst.map_or_else(|| "-".into(), |w| w.to_string()),
        if never > 0 {
            format!("; {never} never")
        } else {
            String::new()
        }
    )
}

fn kinds_text(kinds: &BTreeMap<String, usize>) -> String {
    if kinds.is_empty() {
        return "none".into();
    }
    let mut v: Vec<(&String, &usize)> = kinds.iter().collect();
    v.sort_by(|a, b| b.1.cmp(a.1).then(a.0.cmp(b.0)));
    v.iter()
        .map(|(k, n)| format!("{k} {n}"))
        .collect::<Vec<_>>()
        .join(", ")
}

/// The report as a plain-text table: sumpbook beside the fixed rule, then the targets.
pub fn print_report(r: &SimReport, out: &mut dyn Write) -> std::io::Result<()> {
    let (e, f) = (&r.sumpbook, &r.fixed);
    writeln!(
        out,
        "Detection benchmark, set {}: {} units ({} healthy), {} weeks, {} planted slips",
        r.set, r.units, e.healthy_units, r.weeks, r.slips
    )?;
    let rows: Vec<(String, String, String)> = vec![
        (
            "false act flags per 100 healthy unit-years".into(),
            format!("{:.1} ({})", e.act_per_100_unit_years, e.act_episodes),
            format!("{:.1} ({})", f.act_per_100_unit_years, f.act_episodes),
        ),
        (
            "false watch-or-act flags per 100 healthy unit-years".into(),
            format!("{:.1} ({})", e.flag_per_100_unit_years, e.flag_episodes),
            format!("{:.1} ({})", f.flag_per_100_unit_years, f.flag_episodes),
        ),
        (
            "healthy unit-weeks at act".into(),
            format!("{:.2} %", 100.0 * e.act_week_share),
            format!("{:.2} %", 100.0 * f.act_week_share),
        ),
        (
            "healthy unit-weeks at watch".into(),
            format!("{:.2} %", 100.0 * e.watch_week_share),
            format!("{:.2} %", 100.0 * f.watch_week_share),
        ),
        (
            "false act lasts, median / worst weeks".into(),
            format!(
                "{} / {}",
                opt_f(e.act_length_median),
                opt_u(e.act_length_worst)
            ),
            format!(
                "{} / {}",
                opt_f(f.act_length_median),
                opt_u(f.act_length_worst)
            ),
        ),
        (
            "false flag lasts, median / worst weeks".into(),
            format!(
                "{} / {}",
                opt_f(e.flag_length_median),
                opt_u(e.flag_length_worst)
            ),
            format!(
                "{} / {}",
                opt_f(f.flag_length_median),
                opt_u(f.flag_length_worst)
            ),
        ),
        (
            "act flags started by a planted slip".into(),
            e.slip_acts.to_string(),
            f.slip_acts.to_string(),
        ),
        (
            "the fault's flags gone after the repair, in checks".into(),
            clear_text(&e.checks_to_clear),
            clear_text(&f.checks_to_clear),
        ),
        (
            "act gone after the repair, in checks".into(),
            clear_text(&e.checks_to_clear_act),
            clear_text(&f.checks_to_clear_act),
        ),
        (
            "any flag of the unit gone after the repair".into(),
            clear_text(&e.checks_to_clear_any),
            clear_text(&f.checks_to_clear_any),
        ),
    ];
    let w0 = 52;
    let w1 = 30;
    writeln!(out)?;
    writeln!(out, "{:<w0$} {:<w1$} fixed limits", "", "sumpbook")?;
    for (a, b, c) in &rows {
        writeln!(out, "{a:<w0$} {b:<w1$} {c}")?;
    }
    print_faults(r, out)?;
    print_false_acts(r, out)?;
    writeln!(out)?;
    writeln!(out, "targets (sumpbook):")?;
    for v in &r.verdicts {
        writeln!(
            out,
            "  {:<4} {:<58} {}",
            if v.pass { "PASS" } else { "MISS" },
            v.target,
            v.figure
        )?;
    }
    Ok(())
}

/// The per-fault table, the fixed rule's acts the sound unit shares, and the faults counted
/// apart.
fn print_faults(r: &SimReport, out: &mut dyn Write) -> std::io::Result<()> {
    let (e, f) = (&r.sumpbook, &r.fixed);
    writeln!(out)?;
    writeln!(
        out,
        "per fault: found (act) | act delay median / worst weeks after detectable | watch delay"
    )?;
    for ef in &e.faults {
        let ff = f.faults.iter().find(|x| x.kind == ef.kind);
        let a = fault_row(Some(ef));
        let b = fault_row(ff);
        writeln!(
            out,
            "  {:<17} sumpbook {:>5} | {:>15} | {:>15}    fixed {:>5} | {:>15} | {:>15}",
            ef.kind.as_str(),
            a[0],
            a[1],
            a[2],
            b[0],
            b[1],
            b[2]
        )?;
    }
    for sh in &r.fixed_shared_with_sound {
        writeln!(
            out,
            "  fixed rule, {}: first act raised on the same unit without the fault too in {} of {}; \
             counting the first act it does not share, median delay {}",
            sh.kind.as_str(),
            sh.shared,
            sh.compared,
            sh.median_delay_own
                .map_or_else(|| "never".to_string(), |d| format!("{d:+.1} wk"))
        )?;
    }
    // The faults left out of the found counts and delays above (the starred counts).
    for d in e.detections.iter().filter(|d| d.chance != Chance::Judged) {
        let shown = |x: Option<&Detection>| match x {
            Some(x) if x.act_delay.is_some() => "act",
            Some(x) if x.watch_delay.is_some() => "watch",
            _ => "nothing",
        };
        let theirs = f
            .detections
            .iter()
            .find(|x| x.unit == d.unit && x.kind == d.kind);
        writeln!(
            out,
            "  * {} {}: {}; sumpbook {}, fixed {}",
            d.unit,
            d.kind.as_str(),
            match d.chance {
                Chance::OneCheck => "a step repaired after its one check (found if at watch)",
                _ => "repaired before any check",
            },
            shown(Some(d)),
            shown(theirs)
        )?;
    }
    Ok(())
}

/// The false acts on healthy units by the kinds that raised them, and the acts after a slip.
fn print_false_acts(r: &SimReport, out: &mut dyn Write) -> std::io::Result<()> {
    let (e, f) = (&r.sumpbook, &r.fixed);
    writeln!(out)?;
    writeln!(
        out,
        "false act flags on healthy units by kind (first week of each):"
    )?;
    writeln!(out, "  sumpbook: {}", kinds_text(&e.false_act_kinds))?;
    writeln!(out, "  fixed:    {}", kinds_text(&f.false_act_kinds))?;
    writeln!(out, "healthy unit-weeks at act by kind:")?;
    writeln!(
        out,
        "  sumpbook: {}",
        kinds_text(&e.false_act_weeks_by_kind)
    )?;
    writeln!(
        out,
        "  fixed:    {}",
        kinds_text(&f.false_act_weeks_by_kind)
    )?;
    if !e.slip_act_list.is_empty() {
        let list: Vec<String> = e
            .slip_act_list
            .iter()
            .map(|(u, w, field)| format!("{u} week {w} ({field})"))
            .collect();
        writeln!(out, "  sumpbook acts after a slip: {}", list.join(", "))?;
    }
    writeln!(
        out,
        "  (left out: {} healthy unit-weeks with late planned work at act)",
        r.overdue_act_weeks
    )?;
    Ok(())
}
