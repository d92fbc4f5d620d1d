//! Evaluating only what changed: each unit's evaluation is kept in the shop with what it was
//! computed from, and a fleet status reads the kept ones that still hold and evaluates only the
//! rest, streaming through them a batch of units at a time so that memory stays bounded however
//! long the histories.
//!
//! A kept evaluation is read only when the unit's and the shop's counters (raised by the
//! schema's triggers on every write of a row that feeds it, whoever writes), the engine that
//! computed it and the instant judged all match; the span of instants it holds for ends at the
//! unit's next record after the instant it was computed at, at the next calendar day (planned
//! work counts days) and when the first hour-meter reading of the year leaves the year (the
//! cost of waiting). What is kept is a unit's summary only (`UnitStatus::summary`: what the
//! board, `status`, the due list and the walk-round read), less what the unit's own row gives
//! afresh, in a lean form of its own (`form`); a unit page or report evaluates its unit in full. No health rule lives here; the
//! engine stays `health::evaluate`.

use std::collections::HashMap;
use std::sync::LazyLock;

use chrono::{DateTime, Duration, Utc};

use super::status::{shop_data, store_error, unit_status, Detail, ShopData, UnitStatus};
use super::waiting_cost::run_hours_hold_until;
use super::AppError;

use crate::model::{Id, UnitHistory};
use crate::store::{KeptEvaluation, KeptRead, NextRecords, Store};

mod form;
use form::Kept;

/// Raised by hand when the engine's rules or the kept form (`form`) change in a way the
/// program's build would not show (it is part of [`engine`], beside the build's own identity).
const RULES_EDITION: u32 = 17;

/// The engine that computes an evaluation: the rules' edition, the program's version and the
/// identity of the running program file (its size and time of change), so that any other
/// build — a new version, a rebuild with changed rules — never reads what this one kept.
pub fn engine() -> &'static str {
    static ENGINE: LazyLock<String> = LazyLock::new(|| {
        let build = std::env::current_exe()
            .and_then(std::fs::metadata)
            .ok()
            .and_then(|m| {
                let t = m
                    .modified()
                    .ok()?
                    .duration_since(std::time::UNIX_EPOCH)
                    .ok()?;
                Some(format!(
                    "{}-{}.{:09}",
                    m.len(),
                    t.as_secs(),
                    t.subsec_nanos()
                ))
            });
        match build {
            Some(b) => format!("{RULES_EDITION}/{}/{b}", env!("CARGO_PKG_VERSION")),
            // Without an identity nothing is ever read back: a fresh one per process.
            None => format!(
                "{RULES_EDITION}/{}/unknown-{}-{}",
                env!("CARGO_PKG_VERSION"),
                std::process::id(),
                Utc::now().timestamp_nanos_opt().unwrap_or_default()
            ),
        }
    });
    &ENGINE
}

/// The kept text of a unit's summary `s` (of `shell`'s unit), when it reads back exactly as
/// `s` is: an instant outside the kept form's nanoseconds (years 1677 to 2262) cannot be
/// written, and a NaN figure never equals itself, so such a summary is not kept.
fn kept_text(shell: &UnitHistory, s: &UnitStatus) -> Option<String> {
    let text = Kept::of(s).text()?;
    let back = Kept::read(&text)?;
    (back.status(shell, s.health.at) == *s).then_some(text)
}

/// Replays of dates before this long ago go to the replay slot, so that they never push out
/// the evaluation of the present.
const PRESENT_WITHIN_MINUTES: i64 = 60;

/// Units evaluated from about this many checks at a time: the batch read, evaluated and
/// dropped before the next; the memory of a full evaluation follows it, not the fleet.
const BATCH_CHECKS: usize = 8_000;

/// Below this many units to evaluate, one thread does it all.
const PARALLEL_UNITS: usize = 64;

/// Fewer units than this evaluated beside kept ones are not kept, but evaluated again next
/// time: keeping writes a transaction that SQLite copies into the shop file when the program
/// closes it (five `fsync` calls: 4 to 15 ms measured on the benchmark machine), while
/// evaluating a unit of 520 checks again takes about 2 ms. Units left so wait at most this
/// many less one, and are kept with the next larger evaluation (a new day, a changed limit).
const KEEP_FROM_UNITS: usize = 8;

/// The statuses of the active units at `when` and how many had to be evaluated: kept ones that
/// hold are read (at `Detail::Summary`), the rest evaluated and kept (but see
/// [`KEEP_FROM_UNITS`]).
pub(crate) fn fleet_units(
    store: &Store,
    when: DateTime<Utc>,
    detail: Detail,
) -> Result<(Vec<UnitStatus>, usize, ShopData), AppError> {
    let keeping = detail == Detail::Summary;
    // The counters first: whatever is read after them is at least as new, so an evaluation
    // kept under them is never newer than what they say.
    let read_rest = || {
        Ok((
            shop_data(store)?,
            store.active_unit_shells().map_err(store_error)?,
        ))
    };
    let (kept, mut served, (data, shells)) = if keeping {
        read_kept(store, when, read_rest)?
    } else {
        (KeptRead::default(), HashMap::new(), read_rest()?)
    };
    let mut out = Vec::with_capacity(shells.len());
    let mut needed = Vec::new();
    for shell in shells {
        match served.remove(&shell.unit.id) {
            Some(k) => out.push(k.status(&shell, when)),
            None => needed.push(shell),
        }
    }
    let evaluated = needed.len();
    let from_kept = out.len();
    let mut fresh = evaluate_streaming(store, needed, &data, when, detail)?;
    if keeping && (from_kept == 0 || evaluated >= KEEP_FROM_UNITS) {
        if let Some(shop_rev) = kept.shop_rev {
            let slot = u8::from(when < Utc::now() - Duration::minutes(PRESENT_WITHIN_MINUTES));
            let rows = fresh.iter_mut().filter_map(|(s, until, text)| {
                Some(KeptEvaluation {
                    unit_id: s.unit_id,
                    slot,
                    unit_rev: *kept.units.get(&s.unit_id)?,
                    shop_rev,
                    engine: engine().to_string(),
                    evaluated_at: when,
                    holds_until: *until,
                    body: text.take()?,
                })
            });
            store.keep_evaluations(rows).map_err(store_error)?;
        }
    }
    out.extend(fresh.into_iter().map(|(s, _, _)| s));
    Ok((out, evaluated, data))
}

/// Kept texts handed to the parsing threads this many at a time.
const PARSE_BATCH: usize = 64;

/// The counters and the kept evaluations that hold at `when`, parsed, and what `then` reads
/// after them. Parsing the texts is most of the time of a status with nothing changed, so it
/// runs on the other cores, a batch of texts at a time, while the store reads on: the texts,
/// then `then`'s reads.
fn read_kept<T>(
    store: &Store,
    when: DateTime<Utc>,
    then: impl FnOnce() -> Result<T, AppError>,
) -> Result<(KeptRead, HashMap<Id, Kept>, T), AppError> {
    // One that does not read (another shape of the program's results) is evaluated.
    let parse = |unit: Id, text: &str| Kept::read(text).map(|k| (unit, k));
    let threads = worker_threads();
    if threads < 2 {
        let mut served = HashMap::new();
        let kept = store.kept_evaluations::<AppError>(engine(), when, |unit, body| {
            served.extend(parse(unit, body));
            Ok(())
        })?;
        return Ok((kept, served, then()?));
    }
    let parse_batch = |batch: Vec<(Id, String)>| -> Vec<(Id, Kept)> {
        batch
            .into_iter()
            .filter_map(|(unit, text)| parse(unit, &text))
            .collect()
    };
    let (read, parsed) = with_workers(threads, parse_batch, |send| {
        let mut batch = Vec::with_capacity(PARSE_BATCH);
        let kept = store.kept_evaluations::<AppError>(engine(), when, |unit, body| {
            batch.push((unit, body.to_owned()));
            if batch.len() == PARSE_BATCH {
                let full = std::mem::replace(&mut batch, Vec::with_capacity(PARSE_BATCH));
                // The workers take batches until this sender is gone.
                let _ = send.send(full);
            }
            Ok(())
        });
        if !batch.is_empty() {
            let _ = send.send(batch);
        }
        // The workers parse the last batches meanwhile.
        Ok::<_, AppError>((kept?, then()?))
    });
    let (kept, rest) = read?;
    Ok((kept, parsed.into_iter().collect(), rest))
}

/// How many threads evaluate or parse.
fn worker_threads() -> usize {
    std::thread::available_parallelism().map_or(1, |n| n.get().min(8))
}

/// Runs `produce` on this thread while `threads` workers apply `work` to each job it sends;
/// gives back what `produce` returned and all the workers made. The channel holds one job
/// waiting, so what is in memory is the jobs being worked on, the one waiting and the one
/// being made.
fn with_workers<J: Send, R: Send, P>(
    threads: usize,
    work: impl Fn(J) -> Vec<R> + Sync,
    produce: impl FnOnce(&std::sync::mpsc::SyncSender<J>) -> P,
) -> (P, Vec<R>) {
    let (send, receive) = std::sync::mpsc::sync_channel::<J>(1);
    let receive = std::sync::Mutex::new(receive);
    let work = &work;
    std::thread::scope(|scope| {
        let workers: Vec<_> = (0..threads)
            .map(|_| {
                let receive = &receive;
                scope.spawn(move || {
                    let mut done = Vec::new();
                    loop {
                        let job = match receive.lock() {
                            Ok(r) => r.recv(),
                            Err(_) => break,
                        };
                        let Ok(job) = job else { break };
                        done.extend(work(job));
                    }
                    done
                })
            })
            .collect();
        let produced = produce(&send);
        drop(send);
        let mut out = Vec::new();
        for w in workers {
            out.extend(w.join().unwrap_or_else(|e| std::panic::resume_unwind(e)));
        }
        (produced, out)
    })
}

/// Until when an evaluation of `h` at `at` holds while nothing is written: the unit's next
/// record after `at` (`next`), the start of the shop's next day (`calendar`: the engine counts
/// days due and overdue on the shop's own calendar), and the cost of waiting's year.
pub(crate) fn holds_until(
    h: &UnitHistory,
    at: DateTime<Utc>,
    next: Option<DateTime<Utc>>,
    calendar: crate::health::Calendar,
) -> DateTime<Utc> {
    let next_day = calendar
        .day(at)
        .succ_opt()
        .and_then(|d| calendar.start(d))
        .unwrap_or(at + Duration::seconds(1));
    [Some(next_day), next, run_hours_hold_until(h, at)]
        .into_iter()
        .flatten()
        .min()
        .unwrap_or(next_day)
        .max(at + Duration::seconds(1))
}

/// A unit's status, until when it holds, and the text to keep of it (at `Detail::Summary`, when
/// it reads back exactly: [`kept_text`]).
type Evaluated = (UnitStatus, DateTime<Utc>, Option<String>);

/// Evaluates `units` (shells without records) at `when`, reading them a batch at a time: the
/// store reads the next batch while the cores evaluate the ones before it.
fn evaluate_streaming(
    store: &Store,
    mut units: Vec<UnitHistory>,
    data: &ShopData,
    when: DateTime<Utc>,
    detail: Detail,
) -> Result<Vec<Evaluated>, AppError> {
    if units.is_empty() {
        return Ok(Vec::new());
    }
    // Neighbouring ids in one batch: each read is one range of the (unit, time) keys.
    units.sort_by_key(|h| h.unit.id);
    let calendar = data.calendar();
    let eval = |batch: Vec<UnitHistory>, next: NextRecords| -> Vec<Evaluated> {
        batch
            .into_iter()
            .map(|h| {
                let s = unit_status(&h, data, when, detail);
                let until = holds_until(&h, when, next.get(&h.unit.id).copied(), calendar);
                let text = match detail {
                    Detail::Summary => kept_text(&h, &s),
                    Detail::Full => None,
                };
                (s, until, text)
            })
            .collect()
    };
    let threads = worker_threads();
    let per_unit = store.checks_per_unit_estimate().map_err(store_error)?;
    let mut batches = Batches::new(units, per_unit);
    if batches.len() < PARALLEL_UNITS || threads < 2 {
        let mut out = Vec::new();
        while let Some(mut batch) = batches.next_batch() {
            let next = store
                .fill_histories(&mut batch, when)
                .map_err(store_error)?;
            batches.learn(&batch);
            out.extend(eval(batch, next));
        }
        return Ok(out);
    }
    let work = |(batch, next): (Vec<UnitHistory>, NextRecords)| eval(batch, next);
    let (read, out) = with_workers(threads, work, |send| {
        while let Some(mut batch) = batches.next_batch() {
            let next = store
                .fill_histories(&mut batch, when)
                .map_err(store_error)?;
            batches.learn(&batch);
            if send.send((batch, next)).is_err() {
                break;
            }
        }
        Ok::<(), AppError>(())
    });
    read.map(|()| out)
}

/// The units to evaluate cut into batches of neighbouring ids, each of about
/// [`BATCH_CHECKS`] checks (from the shop's average at first, then from the histories read).
struct Batches {
    rest: std::iter::Peekable<std::vec::IntoIter<UnitHistory>>,
    len: usize,
    per_batch: usize,
    seen_units: usize,
    seen_checks: usize,
}

impl Batches {
    /// `per_unit`: about how many checks a unit has, for the first batch.
    fn new(units: Vec<UnitHistory>, per_unit: usize) -> Batches {
        Batches {
            len: units.len(),
            rest: units.into_iter().peekable(),
            per_batch: Self::units_for(per_unit),
            seen_units: 0,
            seen_checks: 0,
        }
    }

    fn units_for(checks_per_unit: usize) -> usize {
        (BATCH_CHECKS / checks_per_unit.max(1)).clamp(1, 1024)
    }

    fn len(&self) -> usize {
        self.len
    }

    /// Up to the batch size of units whose ids follow one another: a gap is a unit not to be
    /// evaluated (or archived) whose rows the batch's reads would pass over.
    fn next_batch(&mut self) -> Option<Vec<UnitHistory>> {
        let mut batch: Vec<UnitHistory> = Vec::new();
        while batch.len() < self.per_batch {
            let follows = match (batch.last(), self.rest.peek()) {
                (_, None) => break,
                (None, Some(_)) => true,
                (Some(last), Some(next)) => next.unit.id == last.unit.id + 1,
            };
            if !follows {
                break;
            }
            batch.extend(self.rest.next());
        }
        (!batch.is_empty()).then_some(batch)
    }

    /// Sizes the next batches by the checks a unit has had so far.
    fn learn(&mut self, batch: &[UnitHistory]) {
        self.seen_units += batch.len();
        self.seen_checks += batch.iter().map(|h| h.checks.len()).sum::<usize>();
        self.per_batch = Self::units_for(self.seen_checks.div_ceil(self.seen_units.max(1)));
    }
}
