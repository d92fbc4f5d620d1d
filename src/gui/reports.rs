//! Reports adapter: the units (worst first, with their state), the period, paper and who
//! prepared it; `app::report::write_report` on a worker with progress and cancel; then the PDF
//! opened with the desktop's viewer or its folder shown. What the report holds, and which
//! units and days it may cover, is decided by `app::report`.

use std::path::{Path, PathBuf};
use std::rc::Rc;
use std::sync::Arc;

use chrono::Duration;
use slint::{ComponentHandle, Model, ModelRc};

use super::jobs::{self, JobView};
use super::ui::HealthState;
use super::ui::{ReportAdapter, ReportUnit};
use super::{err_text, model, on, on_arg, s, Ctx};
use crate::app::entry::Cancel;
use crate::app::report::{
    default_out_path, out_is_taken, read_day, write_report, ReportOptions, ReportSummary,
    DEFAULT_PERIOD_DAYS,
};
use crate::app::shop::Shop;
use crate::app::vocab::Paper;
use crate::app::vocab::SAFETY_CAUTIONS;
use crate::app::AppError;

/// Opens a file or folder with the desktop's own program; tests put a recorder in its place.
pub type Opener = Rc<dyn Fn(&Path) -> Result<(), String>>;

pub(crate) struct ReportState {
    cancel: Option<Arc<Cancel>>,
    /// Whether the period and file fields have been given their defaults.
    filled: bool,
    /// A file that exists and that the user was asked about: writing to it again replaces it.
    asked_replace: Option<PathBuf>,
    pub opener: Opener,
    /// Where printed files go by default, when set (tests); else the documents folder.
    pub folder: Option<PathBuf>,
}

impl Default for ReportState {
    fn default() -> Self {
        ReportState {
            cancel: None,
            filled: false,
            asked_replace: None,
            opener: Rc::new(open_with_desktop),
            folder: None,
        }
    }
}

/// `xdg-open`, `open` or `start`: the program the desktop has for the file's type.
fn open_with_desktop(path: &Path) -> Result<(), String> {
    let mut cmd = if cfg!(target_os = "windows") {
        let mut c = std::process::Command::new("cmd");
        c.args(["/C", "start", ""]);
        c
    } else if cfg!(target_os = "macos") {
        std::process::Command::new("open")
    } else {
        std::process::Command::new("xdg-open")
    };
    let program = format!("{:?}", cmd.get_program());
    let mut child = cmd
        .arg(path)
        .stdin(std::process::Stdio::null())
        .stdout(std::process::Stdio::null())
        .stderr(std::process::Stdio::null())
        .spawn()
        .map_err(|e| {
            format!(
                "cannot open {} with {program}: {e}; open it from your file manager",
                path.display()
            )
        })?;
    // Reaped on a side thread so no zombie is left while the app runs.
    std::thread::spawn(move || {
        let _ = child.wait();
    });
    Ok(())
}

pub(super) fn install(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<ReportAdapter>();
    a.set_safety(s(SAFETY_CAUTIONS.join(" ")));
    a.on_toggle(on_arg(ctx, toggle));
    a.on_choose(on_arg(ctx, choose));
    a.on_write(on(ctx, write));
    a.on_choose_out(on(ctx, |ctx| {
        let Some(w) = ctx.win() else { return };
        let a = w.global::<ReportAdapter>();
        if let Some(path) = super::choose_pdf(ctx, &a.get_out(), "Save the report as") {
            a.set_out(s(path.display().to_string()));
        }
    }));
    a.on_cancel(on(ctx, |ctx| {
        if let Some(flag) = ctx.report.borrow().cancel.as_ref() {
            flag.cancel();
        }
    }));
    a.on_open_file(on(ctx, |ctx| open_written(ctx, false)));
    a.on_open_folder(on(ctx, |ctx| open_written(ctx, true)));
}

/// Where a report goes by default: the user's documents folder, else home, else beside the
/// shop file.
pub(super) fn default_folder(ctx: &Ctx) -> PathBuf {
    if let Some(f) = ctx.report.borrow().folder.clone() {
        return f;
    }
    directories::UserDirs::new()
        .and_then(|u| {
            u.document_dir()
                .filter(|d| d.is_dir())
                .map(Path::to_path_buf)
                .or_else(|| Some(u.home_dir().to_path_buf()))
        })
        .filter(|d| d.is_dir())
        .or_else(|| ctx.db_path.parent().map(Path::to_path_buf))
        .unwrap_or_default()
}

pub(super) fn refresh(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<ReportAdapter>();
    if a.get_running() {
        return;
    }
    let fleet = match super::fleet::current(ctx) {
        Ok(f) => f,
        Err(e) => {
            a.set_message(s(err_text(&e)));
            a.set_message_level(2);
            return;
        }
    };
    // A unit keeps its tick across refreshes; a unit new to the list starts ticked.
    let old = a.get_units();
    let was = |tag: &str| {
        (0..old.row_count())
            .filter_map(|i| old.row_data(i))
            .find(|u| u.tag == tag)
            .map(|u| u.chosen)
    };
    let units: Vec<ReportUnit> = fleet
        .units
        .iter()
        .map(|u| ReportUnit {
            tag: s(&u.unit),
            machine: s(format!("{} {}", u.machine, u.machine_name)),
            state: HealthState::from(u.state),
            chosen: was(&u.unit).unwrap_or(true),
        })
        .collect();
    a.set_units(model(units));
    if !ctx.report.borrow().filled {
        let today = ctx.shop.zone().date_of(ctx.now());
        a.set_to(s(today.to_string()));
        a.set_from(s((today - Duration::days(DEFAULT_PERIOD_DAYS)).to_string()));
        a.set_paper(match crate::app::report::paper_for(fleet.unit_system) {
            Paper::A4 => 0,
            Paper::Letter => 1,
        });
        a.set_out(s(default_out_path(&default_folder(ctx), today)
            .display()
            .to_string()));
        ctx.report.borrow_mut().filled = true;
    }
    show_summary(&a);
}

fn show_summary(a: &ReportAdapter<'_>) {
    let units = a.get_units();
    let chosen = (0..units.row_count())
        .filter_map(|i| units.row_data(i))
        .filter(|u| u.chosen)
        .count();
    a.set_summary(s(format!(
        "{chosen} of {} units chosen: {} page{} or more",
        units.row_count(),
        chosen + 1,
        if chosen == 0 { "" } else { "s" }
    )));
}

fn toggle(ctx: &Rc<Ctx>, i: i32) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<ReportAdapter>();
    let units = a.get_units();
    let Ok(i) = usize::try_from(i) else { return };
    if let Some(mut u) = units.row_data(i) {
        u.chosen = !u.chosen;
        units.set_row_data(i, u);
    }
    show_summary(&a);
}

fn choose(ctx: &Rc<Ctx>, which: i32) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<ReportAdapter>();
    let units = a.get_units();
    for i in 0..units.row_count() {
        if let Some(mut u) = units.row_data(i) {
            let want = match which {
                0 => false,
                2 => matches!(u.state, HealthState::Watch | HealthState::Act),
                _ => true,
            };
            if u.chosen != want {
                u.chosen = want;
                units.set_row_data(i, u);
            }
        }
    }
    show_summary(&a);
}

/// The report's options from the screen, or why they cannot be used.
fn options(ctx: &Ctx, a: &ReportAdapter<'_>) -> Result<ReportOptions, AppError> {
    let from = read_day("From", &a.get_from())?;
    let to = read_day("To", &a.get_to())?;
    let units: ModelRc<ReportUnit> = a.get_units();
    let all: Vec<ReportUnit> = (0..units.row_count())
        .filter_map(|i| units.row_data(i))
        .collect();
    let chosen: Vec<String> = all
        .iter()
        .filter(|u| u.chosen)
        .map(|u| u.tag.to_string())
        .collect();
    if chosen.is_empty() {
        return Err(AppError::BadInput(
            "choose at least one unit for the report".into(),
        ));
    }
    let mut out = PathBuf::from(a.get_out().trim());
    if out.as_os_str().is_empty() {
        out = default_out_path(
            &default_folder(ctx),
            to.unwrap_or_else(|| ctx.shop.zone().date_of(ctx.now())),
        );
        a.set_out(s(out.display().to_string()));
    } else if out.extension().is_none() && !out.is_dir() {
        out.set_extension("pdf");
        a.set_out(s(out.display().to_string()));
    }
    Ok(ReportOptions {
        out,
        // Every unit: the report's own order (worst first when judged at the period's end).
        units: if chosen.len() == all.len() {
            Vec::new()
        } else {
            chosen
        },
        from,
        to,
        paper: if a.get_paper() == 1 {
            Paper::Letter
        } else {
            Paper::A4
        },
        prepared_by: a.get_by().trim().to_string(),
        replace: false,
    })
}

fn write(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<ReportAdapter>();
    if a.get_running() {
        return;
    }
    let mut opts = match options(ctx, &a) {
        Ok(o) => o,
        Err(e) => {
            a.set_message(s(format!("Not written: {}", err_text(&e))));
            a.set_message_level(2);
            return;
        }
    };
    // An existing file is replaced only when the user, told so, writes to it again.
    if out_is_taken(&opts.out) {
        let asked = ctx.report.borrow().asked_replace.as_ref() == Some(&opts.out);
        if !asked {
            a.set_message(s(format!(
                "{} already exists. Press Write report again to replace it, or change the file name.",
                opts.out.display()
            )));
            a.set_message_level(1);
            ctx.report.borrow_mut().asked_replace = Some(opts.out.clone());
            return;
        }
        opts.replace = true;
    }
    ctx.report.borrow_mut().asked_replace = None;
    a.set_message(s(""));
    a.set_progress_text(s("writing"));
    let db = ctx.db_path.clone();
    let view = JobView {
        running: |w, on| w.global::<ReportAdapter>().set_running(on),
        progress: Arc::new(|w, f| {
            let a = w.global::<ReportAdapter>();
            a.set_progress(f);
            a.set_progress_text(s(format!("writing {:.0} %", f * 100.0)));
        }),
    };
    let cancel = jobs::run_job(
        ctx,
        view,
        Box::new(move |progress, cancel| {
            // The worker reads through its own connection; the window's stays on its thread.
            let shop = Shop::open(&db)?;
            write_report(&shop, &opts, &mut |done, total| {
                progress(done as f32 / total.max(1) as f32);
                !cancel.is_cancelled()
            })
        }),
        finished,
    );
    if a.get_running() {
        ctx.report.borrow_mut().cancel = Some(cancel);
    }
}

fn finished(ctx: &Rc<Ctx>, result: Result<ReportSummary, AppError>) {
    ctx.report.borrow_mut().cancel = None;
    let Some(w) = ctx.win() else { return };
    let a = w.global::<ReportAdapter>();
    match result {
        Ok(sum) if sum.completed => {
            a.set_progress(1.0);
            a.set_progress_text(s("done"));
            let path = sum.path.display().to_string();
            a.set_written(s(&path));
            let mut text = format!(
                "Wrote {path}: {} page{} ({} fleet, {} unit{}), {} – {}.",
                sum.pages,
                if sum.pages == 1 { "" } else { "s" },
                sum.fleet_pages,
                sum.units,
                if sum.units == 1 { "" } else { "s" },
                super::fmt::day(sum.from),
                super::fmt::day(sum.to),
            );
            let mut level = 0;
            if a.get_open_when_written() {
                let opener = ctx.report.borrow().opener.clone();
                if let Err(e) = opener(&sum.path) {
                    text.push_str(&format!(" {e}."));
                    level = 1;
                }
            }
            a.set_message(s(text));
            a.set_message_level(level);
        }
        Ok(_) => {
            a.set_progress(0.0);
            a.set_progress_text(s("cancelled"));
            a.set_message(s("Report cancelled; no file was written."));
            a.set_message_level(1);
        }
        Err(e) => {
            a.set_progress(0.0);
            a.set_progress_text(s(""));
            a.set_message(s(format!("Not written: {}", err_text(&e))));
            a.set_message_level(2);
        }
    }
}

fn open_written(ctx: &Rc<Ctx>, folder: bool) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<ReportAdapter>();
    let file = PathBuf::from(a.get_written().as_str());
    if file.as_os_str().is_empty() {
        return;
    }
    let target = if folder {
        match file.parent().filter(|p| !p.as_os_str().is_empty()) {
            Some(p) => p.to_path_buf(),
            None => PathBuf::from("."),
        }
    } else {
        file
    };
    let opener = ctx.report.borrow().opener.clone();
    if let Err(e) = opener(&target) {
        a.set_message(s(e));
        a.set_message_level(1);
    }
}
