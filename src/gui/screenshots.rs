//! The screenshot run of `scripts/screenshots.sh`: the app steps through its screens with the
//! demo shop, saving a snapshot of the window after each. It only drives the screens' own
//! adapters; nothing here reads the shop or decides anything.

use std::cell::Cell;
use std::path::{Path, PathBuf};
use std::rc::Rc;

use slint::ComponentHandle;

use super::{
    entry, fleet, import, refresh_all, samples, setup, show, ui, ui_error, unit, walk, work, App,
    AppError, AppWindow, Ctx, Screen, UnitSystem,
};

impl App {
    /// Runs the app, stepping through `steps` and saving a snapshot of the window after each
    /// into `dir` (for `scripts/screenshots.sh`); quits at the end.
    pub fn run_screenshots(
        &self,
        dir: &Path,
        import_file: Option<PathBuf>,
    ) -> Result<(), AppError> {
        std::fs::create_dir_all(dir)
            .map_err(|e| AppError::Failed(format!("{}: {e}", dir.display())))?;
        let steps = screenshot_steps(import_file);
        let ctx = Rc::downgrade(&self.ctx);
        let dir = dir.to_path_buf();
        let index = Rc::new(Cell::new(0usize));
        let timer = Rc::new(slint::Timer::default());
        let t = timer.clone();
        let phase = Rc::new(Cell::new(false));
        timer.start(
            slint::TimerMode::Repeated,
            std::time::Duration::from_millis(900),
            move || {
                let Some(ctx) = ctx.upgrade() else { return };
                let i = index.get();
                if i >= steps.len() {
                    t.stop();
                    let _ = slint::quit_event_loop();
                    return;
                }
                let (name, step) = &steps[i];
                if !phase.get() {
                    step(&ctx);
                    phase.set(true);
                } else {
                    if let Some(w) = ctx.win() {
                        if let Err(e) =
                            save_snapshot(&w, &dir.join(format!("{:02}-{name}.ppm", i + 1)))
                        {
                            eprintln!("sumpbook: screenshot {name}: {e}");
                        }
                    }
                    phase.set(false);
                    index.set(i + 1);
                }
            },
        );
        self.window.run().map_err(ui_error)
    }
}

type Step = Box<dyn Fn(&Rc<Ctx>)>;

fn screenshot_steps(import_file: Option<PathBuf>) -> Vec<(&'static str, Step)> {
    let tab = |t: i32| -> Step {
        Box::new(move |ctx: &Rc<Ctx>| {
            if ctx.unit_id.get().is_none() {
                if let Some(first) = fleet::first_unit(ctx) {
                    unit::open(ctx, first);
                }
            }
            show(ctx, Screen::Unit);
            if let Some(w) = ctx.win() {
                w.global::<ui::UnitAdapter>().set_tab(t);
            }
        })
    };
    vec![
        (
            "fleet-board",
            Box::new(|ctx: &Rc<Ctx>| show(ctx, Screen::Fleet)),
        ),
        (
            "unit-overview",
            Box::new(|ctx: &Rc<Ctx>| {
                if let Some(first) = fleet::first_unit(ctx) {
                    unit::open(ctx, first);
                }
            }),
        ),
        ("unit-charts", tab(1)),
        (
            "unit-history",
            Box::new(move |ctx: &Rc<Ctx>| {
                tab(2)(ctx);
                unit::select_first_row(ctx);
            }),
        ),
        (
            "unit-history-questioned",
            Box::new(move |ctx: &Rc<Ctx>| {
                tab(2)(ctx);
                unit::select_questioned_row(ctx);
            }),
        ),
        (
            "walk-round",
            Box::new(|ctx: &Rc<Ctx>| {
                show(ctx, Screen::Walk);
                walk::demo_entry(ctx);
            }),
        ),
        (
            "samples",
            Box::new(|ctx: &Rc<Ctx>| {
                show(ctx, Screen::Samples);
                samples::demo_entry(ctx);
            }),
        ),
        (
            "work-due",
            Box::new(|ctx: &Rc<Ctx>| {
                show(ctx, Screen::Work);
                work::choose_first_to_mark(ctx);
            }),
        ),
        (
            "reports",
            Box::new(|ctx: &Rc<Ctx>| show(ctx, Screen::Reports)),
        ),
        (
            "import",
            Box::new(move |ctx: &Rc<Ctx>| {
                show(ctx, Screen::Import);
                if let Some(f) = &import_file {
                    import::preview_now(ctx, f);
                }
            }),
        ),
        (
            "setup-shop",
            Box::new(|ctx: &Rc<Ctx>| setup::show_tab(ctx, 0)),
        ),
        (
            "setup-units",
            Box::new(|ctx: &Rc<Ctx>| setup::show_tab(ctx, 2)),
        ),
        (
            "setup-limits",
            Box::new(|ctx: &Rc<Ctx>| setup::show_tab(ctx, 4)),
        ),
        ("about", Box::new(|ctx: &Rc<Ctx>| show(ctx, Screen::About))),
        (
            "unit-overview-us",
            Box::new(|ctx: &Rc<Ctx>| {
                // The same unit after the metric/US switch of Setup.
                if let Ok(mut st) = entry::shop_settings(&ctx.shop) {
                    st.unit_system = UnitSystem::Us;
                    let _ = entry::save_settings(&ctx.shop, &st, "screenshots", "show US units");
                }
                refresh_all(ctx);
                if let Some(w) = ctx.win() {
                    w.global::<ui::UnitAdapter>().set_tab(0);
                }
                show(ctx, Screen::Unit);
            }),
        ),
        ("unit-charts-us", tab(1)),
    ]
}

/// Writes the window's pixels as a binary PPM (the screenshot script converts it to PNG).
fn save_snapshot(w: &AppWindow, path: &Path) -> Result<(), String> {
    let shot = w.window().take_snapshot().map_err(|e| e.to_string())?;
    let mut out = format!("P6\n{} {}\n255\n", shot.width(), shot.height()).into_bytes();
    for p in shot.as_slice() {
        out.extend_from_slice(&[p.r, p.g, p.b]);
    }
    std::fs::write(path, out).map_err(|e| e.to_string())
}
