//! Long work off the event loop: import, preview and report writing run on a worker thread
//! with progress and cancel wired to their screen, and hand their result back on the event
//! loop, where the `Rc` state lives. The work itself is an `app` function; this file only
//! moves it between threads.
//!
//! Tests drive the app without an event loop (slint's testing backend), where timers and
//! `invoke_from_event_loop` do not run; there `Ctx::inline_jobs` makes a job run on the
//! calling thread with the same progress and result path.

use std::rc::Rc;
use std::sync::Arc;

use slint::ComponentHandle;

use super::ui::AppWindow;
use super::Ctx;
use crate::app::entry::Cancel;

/// The work: gets a progress callback (0.0 ..= 1.0) and the cancel flag.
pub(crate) type Job<T> = Box<dyn FnOnce(&dyn Fn(f32), &Cancel) -> T + Send>;

/// Shows how far a job is (0.0 ..= 1.0) on its screen; called on the event loop.
pub(crate) type ShowProgress = Arc<dyn Fn(&AppWindow, f32) + Send + Sync>;

/// How a screen shows a job: whether it runs, and how far it is.
#[derive(Clone)]
pub(crate) struct JobView {
    pub running: fn(&AppWindow, bool),
    pub progress: ShowProgress,
}

/// Starts `job`; `done` gets its result on the event loop. Returns the job's cancel flag.
pub(crate) fn run_job<T: Send + 'static>(
    ctx: &Rc<Ctx>,
    view: JobView,
    job: Job<T>,
    done: impl FnOnce(&Rc<Ctx>, T) + 'static,
) -> Arc<Cancel> {
    let cancel = Arc::new(Cancel::new());
    let Some(w) = ctx.win() else { return cancel };
    (view.running)(&w, true);
    (view.progress)(&w, 0.0);
    if ctx.inline_jobs.get() {
        let progress = |f: f32| (view.progress)(&w, f);
        let result = job(&progress, &cancel);
        (view.running)(&w, false);
        done(ctx, result);
        return cancel;
    }
    let weak = w.as_weak();
    let ctx_weak = Rc::downgrade(ctx);
    // The result travels back through a channel read on the event loop.
    let (tx, rx) = std::sync::mpsc::channel::<T>();
    let rx = std::cell::RefCell::new(Some((rx, done)));
    let timer = Rc::new(slint::Timer::default());
    let t2 = timer.clone();
    let running = view.running;
    timer.start(
        slint::TimerMode::Repeated,
        std::time::Duration::from_millis(40),
        move || {
            let ready = rx.borrow().as_ref().and_then(|(r, _)| r.try_recv().ok());
            if let Some(result) = ready {
                t2.stop();
                if let (Some((_, done)), Some(ctx)) = (rx.borrow_mut().take(), ctx_weak.upgrade()) {
                    if let Some(w) = ctx.win() {
                        running(&w, false);
                    }
                    done(&ctx, result);
                }
            }
        },
    );
    let flag = cancel.clone();
    let show = view.progress.clone();
    std::thread::spawn(move || {
        let progress = |f: f32| {
            let show = show.clone();
            let _ = weak.upgrade_in_event_loop(move |w| show(&w, f));
        };
        let result = job(&progress, &flag);
        let _ = tx.send(result);
    });
    cancel
}
