//! Import adapter: a path field, a preview with every bad row before anything is written, and
//! the import itself on a worker thread with a progress bar and a cancel button. The rules
//! (what a bad row is, all-or-nothing, cancel writes nothing) are `app::entry`'s and the
//! importer's; this file runs them off the event loop and shows the results.

use std::path::{Path, PathBuf};
use std::rc::Rc;
use std::sync::Arc;

use slint::language::{StandardListViewItem, TableColumn};
use slint::{ComponentHandle, ModelRc, VecModel};

use super::jobs::{self, Job, JobView};
use super::ui::{ImportAdapter, ImportProblem, MapRow};
use super::{err_text, model, on, on_arg, on_arg2, s, Ctx};
use crate::app::entry::{self, Cancel, ImportPreview, ImportRun};
use crate::app::import::{import_columns, Columns, ImportOptions, Resolved};
use crate::app::shop::Shop;
use crate::app::vocab::{DateOrder, FileKind, ImportSummary, MapTarget, Mapping, IGNORE};

#[derive(Default)]
pub(crate) struct ImportState {
    /// The file, kind and columns a successful preview accepted.
    ready: Option<(PathBuf, FileKind, Columns)>,
    cancel: Option<Arc<Cancel>>,
    /// The column mapping on screen.
    mapping: Option<OnScreen>,
}

/// A column mapping on screen, with the file, header and first rows it was made for.
#[derive(Clone)]
pub(crate) struct OnScreen {
    m: Mapping,
    header: Vec<String>,
    rows: Vec<Vec<String>>,
    file: PathBuf,
}

/// What a column can be taken as, in the order of the choice list: not decided, ignored, then
/// sumpbook's columns for the kind.
fn map_choices(kind: FileKind) -> Vec<String> {
    let mut v = vec!["— not decided —".to_string(), IGNORE.to_string()];
    v.extend(import_columns(kind).into_iter().map(str::to_string));
    v
}

fn choice_of(m: &Mapping, t: Option<&MapTarget>) -> i32 {
    match t {
        None => 0,
        Some(MapTarget::Ignore) => 1,
        Some(MapTarget::Column(c)) => import_columns(m.kind)
            .iter()
            .position(|n| n == c)
            .map_or(0, |i| i as i32 + 2),
    }
}

/// Shows the mapping held in the state: one row per file column with an example cell.
fn show_mapping(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<ImportAdapter>();
    let st = ctx.import.borrow();
    let Some(OnScreen { m, rows, .. }) = st.mapping.as_ref() else {
        a.set_mapping_shown(false);
        return;
    };
    a.set_mapping_shown(true);
    a.set_kind_choices(model(
        FileKind::ALL
            .iter()
            .map(|k| s(kind_title(*k)))
            .collect::<Vec<_>>(),
    ));
    a.set_map_kind(FileKind::ALL.iter().position(|k| *k == m.kind).unwrap_or(0) as i32);
    a.set_date_choices(model(
        DateOrder::ALL
            .iter()
            .map(|d| s(d.words()))
            .collect::<Vec<_>>(),
    ));
    a.set_map_date(
        DateOrder::ALL
            .iter()
            .position(|d| *d == m.dates)
            .unwrap_or(0) as i32,
    );
    a.set_map_choices(model(
        map_choices(m.kind).into_iter().map(s).collect::<Vec<_>>(),
    ));
    let map_rows: Vec<MapRow> = m
        .columns
        .iter()
        .enumerate()
        .map(|(i, (name, t))| MapRow {
            column: s(name),
            example: s(rows
                .iter()
                .filter_map(|r| r.get(i))
                .find(|c| !c.trim().is_empty())
                .cloned()
                .unwrap_or_default()),
            choice: choice_of(m, t.as_ref()),
        })
        .collect();
    a.set_map_rows(model(map_rows));
    let problems = m.problems();
    a.set_map_note(s(if problems.is_empty() {
        "Every column is decided. Name the mapping after the lab or counter and save it: files \
         with this header then use it by themselves."
            .to_string()
    } else {
        format!(
            "This file names its columns its own way. Check what sumpbook proposes, map or \
             ignore each column, then save. {}",
            problems.join("; ")
        )
    }));
}

fn map_set(ctx: &Rc<Ctx>, row: i32, choice: i32) {
    {
        let mut st = ctx.import.borrow_mut();
        let Some(OnScreen { m, .. }) = st.mapping.as_mut() else {
            return;
        };
        let Some(col) = m.columns.get(row as usize).map(|(n, _)| n.clone()) else {
            return;
        };
        let word = match choice {
            c if c < 1 => None,
            1 => Some(IGNORE.to_string()),
            c => import_columns(m.kind)
                .get(c as usize - 2)
                .map(|n| (*n).to_string()),
        };
        match word {
            Some(w) => {
                let _ = m.set(&col, &w);
            }
            None => {
                if let Some(slot) = m.columns.get_mut(row as usize) {
                    slot.1 = None;
                }
            }
        }
    }
    show_mapping(ctx);
}

fn map_kind_set(ctx: &Rc<Ctx>, index: i32) {
    let Some(kind) = FileKind::ALL.get(index as usize).copied() else {
        return;
    };
    let proposed = {
        let st = ctx.import.borrow();
        let Some(OnScreen {
            m, header, rows, ..
        }) = st.mapping.as_ref()
        else {
            return;
        };
        if m.kind == kind {
            return;
        }
        ctx.shop
            .resolve_columns(Some(kind), header, rows, &Columns::Auto)
    };
    match proposed {
        Ok(Resolved::Needs(m) | Resolved::Mapped(m, _)) => {
            if let Some(st) = ctx.import.borrow_mut().mapping.as_mut() {
                st.m = m;
            }
        }
        Ok(Resolved::Native(_)) => {}
        Err(e) => {
            if let Some(w) = ctx.win() {
                let a = w.global::<ImportAdapter>();
                a.set_message(s(err_text(&e)));
                a.set_message_level(2);
            }
        }
    }
    show_mapping(ctx);
}

fn map_save(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<ImportAdapter>();
    let name = a.get_map_name().to_string();
    let Some(OnScreen { m, file: path, .. }) = ctx.import.borrow().mapping.clone() else {
        return;
    };
    match ctx.shop.save_import_profile(&name, &m) {
        Ok(()) => {
            let name = name.trim().to_string();
            preview_with(ctx, path, Columns::Profile(name));
        }
        Err(e) => {
            a.set_message(s(err_text(&e)));
            a.set_message_level(2);
        }
    }
}

pub(super) fn install(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<ImportAdapter>();
    a.on_preview(on(ctx, |ctx| {
        let Some(w) = ctx.win() else { return };
        let path = w.global::<ImportAdapter>().get_path().to_string();
        preview(ctx, PathBuf::from(path.trim()));
    }));
    a.on_choose_file(on(ctx, |ctx| {
        let Some(w) = ctx.win() else { return };
        let typed = w.global::<ImportAdapter>().get_path().to_string();
        if let Some(path) = super::choose_csv(ctx, &typed, "Choose a CSV file to import") {
            preview_now(ctx, &path);
        }
    }));
    a.on_start(on(ctx, start));
    {
        a.on_map_set(on_arg2(ctx, |ctx, row, choice| {
            map_set(ctx, row, choice);
        }));
    }
    a.on_map_kind_set(on_arg(ctx, map_kind_set));
    a.on_map_date_set(on_arg(ctx, |ctx, i: i32| {
        if let Some(st) = ctx.import.borrow_mut().mapping.as_mut() {
            st.m.dates = DateOrder::ALL.get(i as usize).copied().unwrap_or_default();
        }
        show_mapping(ctx);
    }));
    a.on_map_save(on(ctx, map_save));
    a.on_cancel(on(ctx, |ctx| {
        if let Some(flag) = ctx.import.borrow().cancel.as_ref() {
            flag.cancel();
        }
    }));
}

pub(super) fn refresh(ctx: &Rc<Ctx>) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<ImportAdapter>();
    if !a.get_running() && a.get_kind().is_empty() {
        a.set_summary(s("Choose a CSV file, or type its path and press Preview."));
    }
}

fn kind_title(k: FileKind) -> &'static str {
    match k {
        FileKind::Units => "Unit register",
        FileKind::Checks => "Walk-round checks",
        FileKind::Samples => "Fluid samples",
        FileKind::Events => "Events",
    }
}

fn summary_text(sum: &ImportSummary) -> String {
    let mut t = format!(
        "{} rows: {} new, {} already stored",
        sum.rows, sum.inserted, sum.unchanged
    );
    if sum.machines_added > 0 || sum.fluids_added > 0 {
        t.push_str(&format!(
            " ({} machines and {} fluids added with them)",
            sum.machines_added, sum.fluids_added
        ));
    }
    let q = crate::app::shop::questioned_lines(sum);
    if !q.is_empty() {
        t.push_str(". ");
        t.push_str(&q.join("\n"));
    }
    t
}

fn show_preview(ctx: &Rc<Ctx>, path: &Path, p: &ImportPreview) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<ImportAdapter>();
    a.set_kind(s(match &p.profile {
        Some(name) => format!("{} (columns as mapping {name})", kind_title(p.kind)),
        None => kind_title(p.kind).to_string(),
    }));
    ctx.import.borrow_mut().mapping = p.mapping.clone().map(|m| OnScreen {
        m,
        header: p.header.clone(),
        rows: p.rows.clone(),
        file: path.to_path_buf(),
    });
    if let Some(name) = &p.profile {
        a.set_map_name(s(name));
    }
    show_mapping(ctx);
    let columns: Vec<TableColumn> = p
        .header
        .iter()
        .enumerate()
        .map(|(i, h)| {
            // Wide enough for the title and the longest cell shown (about 9 px a character, plus
            // the header's padding and sort mark).
            let longest = p
                .rows
                .iter()
                .filter_map(|r| r.get(i))
                .map(|c| c.chars().count())
                .max()
                .unwrap_or(0);
            let chars = h.chars().count().max(longest).min(40);
            let mut c = TableColumn::default();
            c.title = s(h);
            c.min_width = (chars as f32 * 9.0 + 44.0).max(70.0);
            c.width = c.min_width;
            c
        })
        .collect();
    a.set_columns(model(columns));
    let rows: Vec<ModelRc<StandardListViewItem>> = p
        .rows
        .iter()
        .map(|r| {
            ModelRc::new(VecModel::from(
                r.iter()
                    .map(|c| StandardListViewItem::from(s(c)))
                    .collect::<Vec<_>>(),
            ))
        })
        .collect();
    a.set_rows(model(rows));
    match &p.outcome {
        Ok(sum) => {
            a.set_problems(model(Vec::new()));
            a.set_summary(s(summary_text(sum)));
            let can = sum.inserted > 0;
            a.set_can_import(can);
            a.set_message(s(if can {
                "No problems found. Press Import to write the new rows (all in one go)."
            } else {
                "Everything in this file is already stored; importing would add nothing."
            }));
            a.set_message_level(0);
            let columns = p.mapping.clone().map_or(Columns::Auto, Columns::Given);
            ctx.import.borrow_mut().ready = can.then(|| (path.to_path_buf(), p.kind, columns));
        }
        Err(errors) => {
            let problems: Vec<ImportProblem> = errors
                .iter()
                .map(|e| ImportProblem {
                    line: s(e.line.to_string()),
                    column: s(&e.column),
                    reason: s(&e.reason),
                })
                .collect();
            a.set_problems(model(problems));
            a.set_summary(s(format!(
                "{} problem(s) found; nothing can be imported until they are fixed.",
                errors.len()
            )));
            a.set_can_import(false);
            a.set_message(s(if p.needs_mapping {
                "Map or ignore every column of the file above and save the mapping; nothing is imported until then."
            } else {
                "Fix the rows listed on the right in the file, then Preview again."
            }));
            a.set_message_level(2);
            ctx.import.borrow_mut().ready = None;
        }
    }
}

fn clear(a: &ImportAdapter<'_>) {
    a.set_kind(s(""));
    a.set_mapping_shown(false);
    a.set_problems(model(Vec::new()));
    a.set_rows(model(Vec::new()));
    a.set_columns(model(Vec::new()));
    a.set_can_import(false);
    a.set_progress(0.0);
    a.set_progress_text(s(""));
}

/// Previews on the event-loop thread (the screenshot script and small files).
pub(super) fn preview_now(ctx: &Rc<Ctx>, path: &Path) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<ImportAdapter>();
    a.set_path(s(path.display().to_string()));
    clear(&a);
    let cancel = Cancel::new();
    match entry::preview_import(&ctx.db_path, path, &|_| {}, &cancel) {
        Ok(Some(p)) => show_preview(ctx, path, &p),
        Ok(None) => {}
        Err(e) => {
            a.set_message(s(err_text(&e)));
            a.set_message_level(2);
        }
    }
}

/// Runs an import step on a worker with this screen's progress bar and cancel button.
fn run_job<T: Send + 'static>(
    ctx: &Rc<Ctx>,
    label: &'static str,
    job: Job<T>,
    done: impl FnOnce(&Rc<Ctx>, T) + 'static,
) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<ImportAdapter>();
    a.set_progress_text(s(label));
    a.set_message(s(""));
    let view = JobView {
        running: |w, on| w.global::<ImportAdapter>().set_running(on),
        progress: Arc::new(move |w, f| {
            let a = w.global::<ImportAdapter>();
            a.set_progress(f);
            a.set_progress_text(s(format!("{label} {:.0} %", f * 100.0)));
        }),
    };
    let cancel = jobs::run_job(ctx, view, job, move |ctx, result| {
        ctx.import.borrow_mut().cancel = None;
        done(ctx, result);
    });
    // An inline job (tests) is over already and must not leave a cancel flag behind.
    if w.global::<ImportAdapter>().get_running() {
        ctx.import.borrow_mut().cancel = Some(cancel);
    }
}

fn preview(ctx: &Rc<Ctx>, path: PathBuf) {
    preview_with(ctx, path, Columns::Auto);
}

fn preview_with(ctx: &Rc<Ctx>, path: PathBuf, columns: Columns) {
    let Some(w) = ctx.win() else { return };
    let a = w.global::<ImportAdapter>();
    clear(&a);
    if path.as_os_str().is_empty() {
        a.set_message(s("Choose a CSV file, or type its path, first."));
        a.set_message_level(2);
        return;
    }
    let db = ctx.db_path.clone();
    let file = path.clone();
    run_job(
        ctx,
        "checking",
        Box::new(move |progress, cancel| {
            entry::preview_import_with(&db, &file, &columns, progress, cancel)
        }),
        move |ctx, result| {
            let Some(w) = ctx.win() else { return };
            let a = w.global::<ImportAdapter>();
            a.set_progress_text(s(""));
            a.set_progress(0.0);
            match result {
                Ok(Some(p)) => show_preview(ctx, &path, &p),
                Ok(None) => {
                    a.set_message(s("Preview cancelled."));
                    a.set_message_level(0);
                }
                Err(e) => {
                    a.set_message(s(err_text(&e)));
                    a.set_message_level(2);
                }
            }
        },
    );
}

fn start(ctx: &Rc<Ctx>) {
    let Some((file, kind, columns)) = ctx.import.borrow().ready.clone() else {
        return;
    };
    let db = ctx.db_path.clone();
    run_job(
        ctx,
        "importing",
        Box::new(move |progress, cancel| {
            // A connection of its own, so the import runs beside the app's; a damaged shop
            // is refused before anything is written.
            let opts = ImportOptions {
                progress,
                cancel: Some(cancel),
                name_only: true,
                columns,
                ..ImportOptions::default()
            };
            Shop::open_for_writing(&db)?.import(kind, &file, &opts)
        }),
        move |ctx, result| {
            let Some(w) = ctx.win() else { return };
            let a = w.global::<ImportAdapter>();
            ctx.import.borrow_mut().ready = None;
            a.set_can_import(false);
            match result {
                Ok(ImportRun::Done(sum)) => {
                    a.set_progress(1.0);
                    a.set_progress_text(s("done"));
                    a.set_message(s(format!("Imported. {}", summary_text(&sum))));
                    a.set_message_level(0);
                    super::refresh_all(ctx);
                }
                Ok(ImportRun::Cancelled) => {
                    a.set_progress(0.0);
                    a.set_progress_text(s("cancelled"));
                    a.set_message(s("Import cancelled; nothing was written."));
                    a.set_message_level(1);
                }
                Ok(ImportRun::NeedsMapping(_)) => {
                    a.set_progress_text(s(""));
                    a.set_message(s(
                        "The file's columns changed since the preview; preview it again. Nothing was written.",
                    ));
                    a.set_message_level(2);
                }
                Ok(ImportRun::Refused(errors)) => {
                    a.set_progress_text(s(""));
                    a.set_problems(model(
                        errors
                            .iter()
                            .map(|e| ImportProblem {
                                line: s(e.line.to_string()),
                                column: s(&e.column),
                                reason: s(&e.reason),
                            })
                            .collect(),
                    ));
                    a.set_message(s(
                        "The file changed since the preview and has bad rows; nothing was written.",
                    ));
                    a.set_message_level(2);
                }
                Err(e) => {
                    a.set_progress_text(s(""));
                    a.set_message(s(err_text(&e)));
                    a.set_message_level(2);
                }
            }
        },
    );
}
