//! The desktop app: the slint window of `ui/app.slint` and the adapters that feed it.
//!
//! Each screen has one adapter file here that turns application-layer results (`crate::app`)
//! into the slint models of its `…Adapter` global and answers that global's callbacks by
//! calling the application layer again. No SQL and no business rule lives in this module:
//! what is refused, unusual, due or flagged is decided by `app` and `health`; this module only
//! shows it. `charts` draws the unit page's charts with plotters.

use std::cell::{Cell, RefCell};
use std::path::{Path, PathBuf};
use std::rc::Rc;

use chrono::{DateTime, Utc};
use slint::{ComponentHandle, Model, ModelRc, SharedString, VecModel};

use crate::app::entry::{self, Field, Problem, Verdict};
use crate::app::shop::Shop;
use crate::app::status::FleetStatus;
use crate::app::AppError;
use crate::units::UnitSystem;

pub mod charts;
pub mod files;
pub mod fmt;

mod about;
mod fleet;
mod import;
mod jobs;
mod reports;
mod samples;
mod screenshots;
mod setup;
mod unit;
mod walk;
mod work;

#[allow(clippy::all, clippy::pedantic, unused_qualifications)]
pub mod ui {
    slint::include_modules!();
}

pub use ui::AppWindow;
/// The screens of the window, as `ui/app.slint` declares them for `Nav.screen`.
pub use ui::Screen;
use ui::{FormField, Nav};
pub use unit::HistoryRows;

/// What every adapter shares: the shop, the window, the unit system and each screen's state.
pub(crate) struct Ctx {
    pub shop: Shop,
    pub db_path: PathBuf,
    pub window: slint::Weak<AppWindow>,
    pub system: Cell<UnitSystem>,
    /// The shop's time zone: times are typed and shown in it.
    pub zone: Cell<crate::app::local_time::Zone>,
    /// The unit the unit page, the walk-round cursor and the sample form start from.
    pub unit_id: Cell<Option<i64>>,
    pub unit: RefCell<unit::UnitState>,
    pub walk: RefCell<walk::WalkState>,
    pub sample: RefCell<samples::SampleState>,
    pub work: RefCell<work::WorkState>,
    pub setup: RefCell<setup::SetupState>,
    pub import: RefCell<import::ImportState>,
    pub report: RefCell<reports::ReportState>,
    /// The last fleet evaluation: when, the shop's change stamp then, and the result
    /// (see `fleet::current`).
    pub fleet: RefCell<Option<FleetCache>>,
    /// Run long jobs on the calling thread (tests without an event loop).
    pub inline_jobs: Cell<bool>,
    /// Whether the start-up evaluation of `App::open_loading` is in.
    pub loaded: Cell<bool>,
    /// The instant the app judges the shop at: `None` is the wall clock; a fixed instant shows
    /// the shop as it stood then (`App::open_at`), so a test sees the same board on any day.
    pub clock: Option<DateTime<Utc>>,
    /// The shop's change mark when this window last looked (`entry::shop_changed`).
    pub saves_seen: RefCell<Option<(i64, u64)>>,
    /// Asks for a file to read or write: the desktop's dialog, or a test's stand-in.
    pub chooser: RefCell<files::Chooser>,
}

pub(crate) type FleetCache = (DateTime<Utc>, (i64, u64), Rc<FleetStatus>);

impl Ctx {
    pub fn now(&self) -> DateTime<Utc> {
        self.clock.unwrap_or_else(Utc::now)
    }

    pub fn win(&self) -> Option<AppWindow> {
        self.window.upgrade()
    }
}

/// The running app: its window and state. Tests drive it through the window.
pub struct App {
    window: AppWindow,
    ctx: Rc<Ctx>,
    /// Asks every [`SAVES_LOOK_EVERY`] whether the shop changed (`App::watch_for_saves`).
    saves_timer: slint::Timer,
}

/// How often an open window asks whether someone else saved: a change made in another window
/// or on another PC shows within a few seconds. On a server a look while nothing changed reads
/// no table (the server announces saves); on a file it reads the file's change stamp.
pub const SAVES_LOOK_EVERY: std::time::Duration = std::time::Duration::from_secs(2);

fn ui_error(e: slint::PlatformError) -> AppError {
    AppError::Failed(format!("cannot open the window: {e}"))
}

impl App {
    /// Builds the window on the shop at `db` (which must already be a shop file), every
    /// screen filled before it returns.
    pub fn open(db: &Path) -> Result<App, AppError> {
        App::open_at(db, None)
    }

    /// As [`App::open`], judging the shop at `at` instead of the wall clock when given: the
    /// board, unit pages and due list show the shop as it stood then.
    pub fn open_at(db: &Path, at: Option<DateTime<Utc>>) -> Result<App, AppError> {
        let app = App::build(db, at)?;
        refresh_all(&app.ctx);
        app.ctx.loaded.set(true);
        Ok(app)
    }

    /// Builds the window with only the shop's name and settings filled, and evaluates the
    /// fleet on a worker: on a large shop the window is up at once and the screens fill
    /// when the evaluation is in (a second or so for 1,000 units).
    pub fn open_loading(db: &Path) -> Result<App, AppError> {
        App::open_loading_at(db, None)
    }

    /// As [`App::open_loading`], judging the shop at `at` when given (see [`App::open_at`]).
    pub fn open_loading_at(db: &Path, at: Option<DateTime<Utc>>) -> Result<App, AppError> {
        let app = App::build(db, at)?;
        let ctx = &app.ctx;
        refresh_nav(ctx);
        app.window
            .global::<ui::FleetAdapter>()
            .set_summary(s("Reading the shop and evaluating every unit…"));
        let stamp = entry::shop_stamp(&ctx.shop)?;
        let db = ctx.db_path.clone();
        let view = jobs::JobView {
            running: |_, _| {},
            progress: std::sync::Arc::new(|_, _| {}),
        };
        jobs::run_job(
            ctx,
            view,
            Box::new(move |_, _| {
                let shop = Shop::open(&db)?;
                crate::app::status::fleet_status(&shop, at)
            }),
            move |ctx, result| {
                if let Ok(fleet) = result {
                    fleet::adopt(ctx, stamp, fleet);
                }
                // On an error the screens evaluate (and show the error) themselves.
                refresh_all(ctx);
                ctx.loaded.set(true);
            },
        );
        Ok(app)
    }

    fn build(db: &Path, clock: Option<DateTime<Utc>>) -> Result<App, AppError> {
        charts::register_fonts();
        let shop = Shop::open(db)?;
        let system = entry::shop_settings(&shop)?.unit_system;
        let zone = shop.zone();
        let window = AppWindow::new().map_err(ui_error)?;
        let ctx = Rc::new(Ctx {
            shop,
            db_path: db.to_path_buf(),
            window: window.as_weak(),
            system: Cell::new(system),
            zone: Cell::new(zone),
            unit_id: Cell::new(None),
            unit: RefCell::new(unit::UnitState::default()),
            walk: RefCell::new(walk::WalkState::default()),
            sample: RefCell::new(samples::SampleState::default()),
            work: RefCell::new(work::WorkState::default()),
            setup: RefCell::new(setup::SetupState::default()),
            import: RefCell::new(import::ImportState::default()),
            report: RefCell::new(reports::ReportState::default()),
            fleet: RefCell::new(None),
            inline_jobs: Cell::new(false),
            loaded: Cell::new(false),
            clock,
            saves_seen: RefCell::new(None),
            chooser: RefCell::new(Rc::new(files::native)),
        });
        // What this window shows is as of now: only later saves make it look again.
        let _ = entry::shop_changed(&ctx.shop, &mut ctx.saves_seen.borrow_mut());
        let app = App {
            window,
            ctx,
            saves_timer: slint::Timer::default(),
        };
        app.install();
        Ok(app)
    }

    fn install(&self) {
        let nav = self.window.global::<Nav>();
        nav.on_navigate(on_arg(&self.ctx, show));
        fleet::install(&self.ctx);
        unit::install(&self.ctx);
        walk::install(&self.ctx);
        samples::install(&self.ctx);
        work::install(&self.ctx);
        import::install(&self.ctx);
        reports::install(&self.ctx);
        setup::install(&self.ctx);
        about::install(&self.ctx);
    }

    /// Keeps the screens that only show (the fleet board, the open unit page, the due list)
    /// up to date with saves made elsewhere: every [`SAVES_LOOK_EVERY`] the window asks the
    /// application layer whether the shop changed, and refreshes those screens when it did.
    /// Forms being typed in (walk-round, samples, setup) are left alone, so nothing typed is
    /// lost; they read the shop afresh when next opened.
    pub fn watch_for_saves(&self) {
        self.saves_timer.start(
            slint::TimerMode::Repeated,
            SAVES_LOOK_EVERY,
            on(&self.ctx, |ctx| {
                look_for_saves(ctx);
            }),
        );
    }

    /// One look for saves made elsewhere (what the timer of [`App::watch_for_saves`] does):
    /// whether the shop had changed, the showing screens refreshed if so.
    pub fn look_for_saves(&self) -> bool {
        look_for_saves(&self.ctx)
    }

    /// Runs long work (report writing) on the calling thread, for tests that drive the window
    /// without an event loop.
    pub fn run_jobs_inline(&self) {
        self.ctx.inline_jobs.set(true);
    }

    /// Puts `opener` in place of the desktop's file opener (tests record what was opened).
    pub fn set_file_opener(&self, opener: impl Fn(&Path) -> Result<(), String> + 'static) {
        self.ctx.report.borrow_mut().opener = Rc::new(opener);
    }

    /// Puts `chooser` in place of the desktop's file dialogs (tests answer with a path, or
    /// `None` for a dialog cancelled).
    pub fn set_file_chooser(
        &self,
        chooser: impl Fn(&files::FileQuestion) -> Option<PathBuf> + 'static,
    ) {
        *self.ctx.chooser.borrow_mut() = Rc::new(chooser);
    }

    /// Puts `folder` in place of the documents folder printed files go to by default.
    pub fn set_output_folder(&self, folder: &Path) {
        self.ctx.report.borrow_mut().folder = Some(folder.to_path_buf());
    }

    pub fn window(&self) -> &AppWindow {
        &self.window
    }

    /// Shows a screen, refreshed from the shop.
    pub fn show(&self, screen: Screen) {
        show(&self.ctx, screen);
    }

    /// Opens a unit's page.
    pub fn open_unit(&self, unit_id: i64) {
        unit::open(&self.ctx, unit_id);
    }

    /// Renders one frame as soon as the event loop runs (or once the start-up evaluation is in,
    /// with `filled`), reports the time on stderr and quits.
    fn exit_after_first_frame(&self, filled: bool) {
        let start = std::time::Instant::now();
        let ctx = Rc::downgrade(&self.ctx);
        let timer = Rc::new(slint::Timer::default());
        let t = timer.clone();
        timer.start(
            slint::TimerMode::Repeated,
            std::time::Duration::from_millis(if filled { 5 } else { 0 }),
            move || {
                let Some(ctx) = ctx.upgrade() else { return };
                if filled && !ctx.loaded.get() {
                    return;
                }
                t.stop();
                let frame = match ctx.win().map(|w| w.window().take_snapshot()) {
                    Some(Ok(shot)) => format!("{}x{} px", shot.width(), shot.height()),
                    Some(Err(e)) => format!("not rendered: {e}"),
                    None => "no window".to_string(),
                };
                let what = if filled {
                    "screens filled"
                } else {
                    "first frame"
                };
                eprintln!(
                    "sumpbook: {what} ({frame}) after {:.3} s of the event loop",
                    start.elapsed().as_secs_f64()
                );
                let _ = slint::quit_event_loop();
            },
        );
    }

    /// Runs the event loop until the window is closed.
    pub fn run(&self) -> Result<(), AppError> {
        self.window.run().map_err(ui_error)
    }
}

/// Switches to a screen and refreshes it from the shop.
pub(crate) fn show(ctx: &Rc<Ctx>, screen: Screen) {
    let Some(w) = ctx.win() else { return };
    match screen {
        Screen::Fleet => fleet::refresh(ctx),
        Screen::Unit => unit::refresh(ctx),
        Screen::Walk => {
            walk::refresh(ctx);
            walk::offer_sheet_out(ctx);
        }
        Screen::Samples => samples::refresh(ctx),
        Screen::Work => work::refresh(ctx),
        Screen::Import => import::refresh(ctx),
        Screen::Setup => setup::refresh(ctx),
        Screen::About => about::refresh(ctx),
        Screen::Reports => reports::refresh(ctx),
    }
    w.global::<Nav>().set_screen(screen);
}

/// Refreshes every screen (after the unit system changed, an import, ...).
/// Refreshes the screens that only show the shop when someone saved since the last look.
/// A shop that cannot be read just now (a server restarting) is looked at again next time;
/// the screens keep what they show and the next action says what is wrong.
fn look_for_saves(ctx: &Rc<Ctx>) -> bool {
    if !ctx.loaded.get() {
        return false;
    }
    let changed = entry::shop_changed(&ctx.shop, &mut ctx.saves_seen.borrow_mut());
    let Some(w) = ctx.win() else { return false };
    let nav = w.global::<ui::Nav>();
    let changed = match changed {
        Err(e) if e.is_connection_lost() => {
            // The next look connects again; until then the rail says why nothing refreshes.
            nav.set_connection(
                "Server not answering: trying again every few seconds. Unsaved entries are kept."
                    .into(),
            );
            return false;
        }
        Err(_) => false,
        // Back after a loss: whatever was saved meanwhile is shown now.
        Ok(changed) => changed || !nav.get_connection().is_empty(),
    };
    nav.set_connection("".into());
    if !changed {
        return false;
    }
    refresh_nav(ctx);
    fleet::refresh(ctx);
    unit::refresh(ctx);
    work::refresh(ctx);
    true
}

pub(crate) fn refresh_all(ctx: &Rc<Ctx>) {
    refresh_nav(ctx);
    fleet::refresh(ctx);
    unit::refresh(ctx);
    walk::refresh(ctx);
    samples::refresh(ctx);
    work::refresh(ctx);
    setup::refresh(ctx);
    about::refresh(ctx);
    reports::refresh(ctx);
}

/// The shop's name, file and unit system in the navigation rail, and what the signed-in person
/// may do (`app::rights`), which greys out the actions beyond it.
fn refresh_nav(ctx: &Rc<Ctx>) {
    if let (Ok(r), Some(w)) = (crate::app::rights::rights(&ctx.shop), ctx.win()) {
        let g = w.global::<ui::Rights>();
        g.set_who(r.who.into());
        g.set_may_configure(r.may_configure);
        g.set_configure_why(r.configure_why.into());
        g.set_may_record(r.may_record);
        g.set_record_why(r.record_why.into());
    }
    if let Ok(s) = entry::shop_settings(&ctx.shop) {
        ctx.system.set(s.unit_system);
        ctx.zone
            .set(crate::app::local_time::Zone::of_setting(&s.time_zone));
        if let Some(w) = ctx.win() {
            let nav = w.global::<Nav>();
            nav.set_shop_name(s.shop_name.into());
            nav.set_db_file(ctx.db_path.display().to_string().into());
            nav.set_shop_warning(ctx.shop.open_notice().unwrap_or_default().into());
            nav.set_unit_system(
                match s.unit_system {
                    UnitSystem::Metric => "metric",
                    UnitSystem::Us => "US customary",
                }
                .into(),
            );
        }
    }
}

/// Asks for a file with the window's chooser; `None` when cancelled.
pub(crate) fn choose_file(ctx: &Rc<Ctx>, q: &files::FileQuestion) -> Option<PathBuf> {
    // The chooser is taken out first: a dialog runs its own event loop, in which a callback
    // may look at the context again.
    let chooser = ctx.chooser.borrow().clone();
    chooser(q)
}

/// Asks for a CSV file to read, the dialog opening in the folder of the path `typed` so far.
pub(crate) fn choose_csv(ctx: &Rc<Ctx>, typed: &str, title: &str) -> Option<PathBuf> {
    let folder = files::folder_of(typed, reports::default_folder(ctx));
    choose_file(ctx, &files::FileQuestion::open_csv(title, folder))
}

/// Asks where to save a PDF now typed as `typed`, the dialog opening at that file (its folder
/// and name; the output folder when it has none). A name chosen without its ending gets .pdf.
pub(crate) fn choose_pdf(ctx: &Rc<Ctx>, typed: &str, title: &str) -> Option<PathBuf> {
    let q = files::FileQuestion::save_pdf(
        title,
        std::path::Path::new(typed.trim()),
        reports::default_folder(ctx),
    );
    let mut path = choose_file(ctx, &q)?;
    if path.extension().is_none() {
        path.set_extension("pdf");
    }
    Some(path)
}

/// The walk-round order, from the current fleet evaluation.
pub(crate) fn route(ctx: &Rc<Ctx>) -> Result<Vec<entry::RouteStop>, AppError> {
    fleet::current(ctx).map(|f| entry::route_from(&f))
}

// ---------------------------------------------------------------------------------------------
// Shared callback and model helpers

/// A slint callback that runs `f` on the app's context while it lives: adapters hold only a
/// weak reference, so the window's callbacks do not keep the context alive.
pub(crate) fn on(ctx: &Rc<Ctx>, f: impl Fn(&Rc<Ctx>) + 'static) -> impl Fn() + 'static {
    let c = Rc::downgrade(ctx);
    move || {
        if let Some(ctx) = c.upgrade() {
            f(&ctx);
        }
    }
}

/// [`on`] for a callback with one argument.
pub(crate) fn on_arg<A>(ctx: &Rc<Ctx>, f: impl Fn(&Rc<Ctx>, A) + 'static) -> impl Fn(A) + 'static {
    let c = Rc::downgrade(ctx);
    move |arg| {
        if let Some(ctx) = c.upgrade() {
            f(&ctx, arg);
        }
    }
}

/// [`on`] for a callback with two arguments.
pub(crate) fn on_arg2<A, B>(
    ctx: &Rc<Ctx>,
    f: impl Fn(&Rc<Ctx>, A, B) + 'static,
) -> impl Fn(A, B) + 'static {
    let c = Rc::downgrade(ctx);
    move |a, b| {
        if let Some(ctx) = c.upgrade() {
            f(&ctx, a, b);
        }
    }
}

/// [`on`] for a callback with three arguments.
pub(crate) fn on_arg3<A, B, C>(
    ctx: &Rc<Ctx>,
    f: impl Fn(&Rc<Ctx>, A, B, C) + 'static,
) -> impl Fn(A, B, C) + 'static {
    let c = Rc::downgrade(ctx);
    move |a, b, x| {
        if let Some(ctx) = c.upgrade() {
            f(&ctx, a, b, x);
        }
    }
}

pub(crate) fn s(text: impl AsRef<str>) -> SharedString {
    SharedString::from(text.as_ref())
}

pub(crate) fn model<T: Clone + 'static>(items: Vec<T>) -> ModelRc<T> {
    ModelRc::new(VecModel::from(items))
}

pub(crate) fn strings(items: impl IntoIterator<Item = String>) -> ModelRc<SharedString> {
    model(items.into_iter().map(SharedString::from).collect())
}

/// The slint form rows of entry fields, with each field's problem beside it.
pub(crate) fn form_rows(
    fields: &[Field],
    texts: &entry::Entered,
    problems: &[Problem],
) -> Vec<FormField> {
    fields
        .iter()
        .map(|f| {
            let text = texts
                .0
                .iter()
                .find(|(k, _)| *k == f.key)
                .map(|(_, v)| v.clone())
                .unwrap_or_else(|| f.value.clone());
            let problem = problems
                .iter()
                .filter(|p| p.field == f.key)
                .max_by_key(|p| p.verdict);
            FormField {
                key: s(&f.key),
                label: s(&f.label),
                unit: s(&f.unit),
                choice: f.choices.iter().position(|c| *c == text).unwrap_or(0) as i32,
                choices: strings(f.choices.clone()),
                text: s(&text),
                placeholder: s(&f.placeholder),
                hint: s(&f.hint),
                message: problem.map(|p| s(&p.message)).unwrap_or_default(),
                level: match problem.map(|p| p.verdict) {
                    Some(Verdict::Refused) => 2,
                    Some(Verdict::Unusual) | Some(Verdict::Blank) => 1,
                    None => 0,
                },
            }
        })
        .collect()
}

/// Updates the problem shown beside each row of a form model in place (so a field being
/// typed in keeps its focus and text).
pub(crate) fn mark_problems(rows: &ModelRc<FormField>, problems: &[Problem]) {
    for i in 0..rows.row_count() {
        let Some(mut r) = rows.row_data(i) else {
            continue;
        };
        let problem = problems
            .iter()
            .filter(|p| p.field == r.key.as_str())
            .max_by_key(|p| p.verdict);
        let (message, level) = match problem {
            Some(p) => (
                s(&p.message),
                if p.verdict == Verdict::Refused { 2 } else { 1 },
            ),
            None => (SharedString::default(), 0),
        };
        if r.message != message || r.level != level {
            r.message = message;
            r.level = level;
            rows.set_row_data(i, r);
        }
    }
}

/// Keys of a form model's rows, in the form's order.
pub(crate) fn row_keys(rows: &ModelRc<FormField>) -> Vec<String> {
    rows.iter().map(|r| r.key.to_string()).collect()
}

/// Where the cursor goes after a save that stopped: of the fields in `order` (the form's
/// order), the first with the gravest problem (a refused value before a question), so it can
/// be put right at once; `None` when no field in `order` has one.
pub(crate) fn first_to_fix(order: &[String], problems: &[Problem]) -> Option<String> {
    let worst = problems
        .iter()
        .filter(|p| order.contains(&p.field))
        .map(|p| p.verdict)
        .max()?;
    order
        .iter()
        .find(|k| {
            problems
                .iter()
                .any(|p| p.verdict == worst && p.field == k.as_str())
        })
        .cloned()
}

/// One line summing up problems that belong to no single field, or all of them.
pub(crate) fn problems_line(problems: &[Problem]) -> (String, i32) {
    let refused: Vec<&Problem> = problems
        .iter()
        .filter(|p| p.verdict == Verdict::Refused)
        .collect();
    if !refused.is_empty() {
        let general: Vec<&str> = refused
            .iter()
            .filter(|p| p.field.is_empty())
            .map(|p| p.message.as_str())
            .collect();
        let n = refused.len();
        let text = if general.is_empty() {
            format!(
                "Not saved: {n} value{} refused — {}",
                if n == 1 { "" } else { "s" },
                refused
                    .iter()
                    .map(|p| p.message.as_str())
                    .collect::<Vec<_>>()
                    .join("; ")
            )
        } else {
            format!("Not saved: {}", general.join("; "))
        };
        return (text, 2);
    }
    let said = |v: Verdict| -> Vec<&str> {
        problems
            .iter()
            .filter(|p| p.verdict == v)
            .map(|p| p.message.as_str())
            .collect()
    };
    let (unusual, blank) = (said(Verdict::Unusual), said(Verdict::Blank));
    let mut parts = Vec::new();
    if !unusual.is_empty() {
        parts.push(format!(
            "Unusual: {} — check, then press Enter (or Save) again to keep the values as typed.",
            unusual.join("; ")
        ));
    }
    if !blank.is_empty() {
        parts.push(format!(
            "Left blank: {} — type today's reading, or press Enter (or Save) again to save without it.",
            blank.join("; ")
        ));
    }
    if parts.is_empty() {
        return (String::new(), 0);
    }
    (parts.join(" "), 1)
}

/// The message of an application error, for a message bar.
pub(crate) fn err_text(e: &AppError) -> String {
    if e.is_connection_lost() {
        // A form's entries stay where they are on any error; say so, because a lost
        // connection is the one error where trying the same thing again is the answer.
        return format!(
            "Not done: {e}. What you typed is kept: try again once the server answers."
        );
    }
    e.to_string()
}

/// The start-up benchmark's switch (benches/run.sh): `1` ends the app once its first frame is
/// rendered, `filled` once the screens are filled after the start-up evaluation.
const FIRST_FRAME_EXIT: &str = "SUMPBOOK_EXIT_AFTER_FIRST_FRAME";

/// Opens the app on `db`, or on the default shop file when `None` (created with the demo shop
/// on first start), and runs it until the window closes. A `--db` file must already be a shop
/// (`sumpbook --db FILE init` or `demo` makes one).
pub fn run(db: Option<&Path>) -> Result<(), AppError> {
    let path = match db {
        Some(p) => {
            if !p.exists() && !Shop::is_server(p) {
                return Err(AppError::BadInput(format!(
                    "{}: no such file; make a shop there with `sumpbook --db {} init` (empty) or `demo`",
                    p.display(),
                    p.display()
                )));
            }
            p.to_path_buf()
        }
        None => Shop::open_default()?.path().to_path_buf(),
    };
    if let Some(dir) = std::env::var_os("SUMPBOOK_SCREENSHOTS") {
        return App::open(&path)?.run_screenshots(
            Path::new(&dir),
            std::env::var_os("SUMPBOOK_SCREENSHOT_IMPORT").map(PathBuf::from),
        );
    }
    let app = App::open_loading(&path)?;
    app.watch_for_saves();
    if let Some(when) = std::env::var_os(FIRST_FRAME_EXIT) {
        app.exit_after_first_frame(when == "filled");
    }
    app.run()
}
