//! Scoring a flag timeline against the truth of a simulated shop, and the fixed-limit rule a
//! shop would keep in a spreadsheet, judged the same way.
//!
//! A timeline holds, for every unit and every week, the unit's flag level (none, watch, act) and
//! the kinds of flag raised. From it: flag episodes (runs of consecutive weeks at watch or
//! worse, or at act) on healthy units, per 100 healthy unit-years, their length, and the share
//! of healthy unit-weeks at each level; per planted fault whether a flag it can raise
//! (`FaultKind::raises`) reached act between onset and repair and how many weeks after the week
//! its noise-free signal reached the act limit;
//! act episodes that start in the week of a mistyped reading or the week after (before a
//! further check could confirm it); and how many checks a flag outlives a repair.
//!
//! Pure: the truth, the timelines and the readings come in as data; the figures go out. The
//! application layer reads the files.

use std::collections::BTreeMap;

use serde::Serialize;

use super::truth::{FaultKind, Truth, UnitTruth};
use crate::physics::cleanliness::{ranges_above, Iso4406Code};

/// Flag level of a unit in one week.
pub const NONE: u8 = 0;
pub const WATCH: u8 = 1;
pub const ACT: u8 = 2;

/// A unit's flags in one week.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct WeekFlags {
    /// The worst flag: `NONE`, `WATCH` or `ACT`.
    pub level: u8,
    /// Kinds of the flags at act.
    pub act_kinds: Vec<String>,
    /// Kinds of the flags at watch (not act).
    pub watch_kinds: Vec<String>,
}

impl WeekFlags {
    /// The worst level among the flags a planted fault of `kind` can raise.
    pub fn level_for(&self, kind: FaultKind) -> u8 {
        if self.act_kinds.iter().any(|k| kind.raises(k)) {
            ACT
        } else if self.watch_kinds.iter().any(|k| kind.raises(k)) {
            WATCH
        } else {
            NONE
        }
    }
}

/// One unit's weeks, in the order of [`Truth::weeks`].
pub type Timeline = Vec<WeekFlags>;

/// Runs of consecutive weeks at `min_level` or worse: (first week, length).
pub fn episodes(levels: &[u8], min_level: u8) -> Vec<(usize, usize)> {
    let mut out = Vec::new();
    let mut start = None;
    for (w, &l) in levels.iter().enumerate() {
        match (l >= min_level, start) {
            (true, None) => start = Some(w),
            (false, Some(s)) => {
                out.push((s, w - s));
                start = None;
            }
            _ => {}
        }
    }
    if let Some(s) = start {
        out.push((s, levels.len() - s));
    }
    out
}

/// Median of a list (the mean of the middle two for an even count); `None` when empty.
/// `f64::INFINITY` stands for "never".
pub fn median(values: &[f64]) -> Option<f64> {
    if values.is_empty() {
        return None;
    }
    let mut v = values.to_vec();
    v.sort_by(f64::total_cmp);
    let n = v.len();
    Some(if n % 2 == 1 {
        v[n / 2]
    } else {
        0.5 * (v[n / 2 - 1] + v[n / 2])
    })
}

/// One sample as the fixed rule sees it: (week, water ppm, KV40 cSt, ISO 4406 code).
pub type SampleReading = (usize, Option<f64>, Option<f64>, Option<Iso4406Code>);

/// The readings the fixed-limit rule looks at, for one unit, each with the week it is first
/// known in.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct UnitReadings {
    /// (week, stroke time s, reservoir °C), oldest first.
    pub checks: Vec<(usize, Option<f64>, Option<f64>)>,
    /// (week, water ppm, KV40 cSt, ISO 4406 code), oldest first.
    pub samples: Vec<SampleReading>,
    /// KV40 of the new oil, cSt.
    pub kv40_new: Option<f64>,
    /// The unit's cleanliness target.
    pub target: Option<Iso4406Code>,
}

/// The fixed-limit rule of a spreadsheet, on the latest reading known each week: stroke time
/// more than 15 % over the mean of the unit's first 4 timed strokes → act; reservoir above
/// 60 °C → watch, above 70 °C → act; water above 500 ppm → act; KV40 more than 10 % from the
/// new oil's → act; 2 or more ISO 4406 range numbers over the target on any size → act.
pub fn fixed_rule(r: &UnitReadings, weeks: usize) -> Timeline {
    let first: Vec<f64> = r.checks.iter().filter_map(|c| c.1).take(4).collect();
    let reference = (first.len() == 4).then(|| first.iter().sum::<f64>() / 4.0);
    let mut out = Vec::with_capacity(weeks);
    let (mut ci, mut si) = (0, 0);
    for w in 0..weeks {
        while ci < r.checks.len() && r.checks[ci].0 <= w {
            ci += 1;
        }
        while si < r.samples.len() && r.samples[si].0 <= w {
            si += 1;
        }
        let mut f = WeekFlags::default();
        let mut raise = |kind: &str, level: u8| {
            if level == ACT {
                f.act_kinds.push(kind.to_string());
            } else {
                f.watch_kinds.push(kind.to_string());
            }
            f.level = f.level.max(level);
        };
        if let Some(&(_, stroke, oil)) = ci.checked_sub(1).and_then(|i| r.checks.get(i)) {
            if let (Some(s), Some(reference)) = (stroke, reference) {
                if s > 1.15 * reference {
                    raise("stroke_time", ACT);
                }
            }
            if let Some(t) = oil {
                if t > 70.0 {
                    raise("oil_temp", ACT);
                } else if t > 60.0 {
                    raise("oil_temp", WATCH);
                }
            }
        }
        if let Some((_, water, kv40, code)) = si.checked_sub(1).and_then(|i| r.samples.get(i)) {
            if water.is_some_and(|x| x > 500.0) {
                raise("water", ACT);
            }
            if let (Some(v), Some(new)) = (kv40, r.kv40_new) {
                if (v / new - 1.0).abs() > 0.10 {
                    raise("kv40", ACT);
                }
            }
            if let (Some(c), Some(t)) = (code, &r.target) {
                if ranges_above(c, t).iter().flatten().any(|&n| n >= 2) {
                    raise("cleanliness", ACT);
                }
            }
        }
        out.push(f);
    }
    out
}

/// Detection of one planted fault.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Detection {
    pub unit: String,
    pub kind: FaultKind,
    pub detectable_week: usize,
    /// First week at act from onset until the repair (or the end), less the detectable week.
    pub act_delay: Option<i64>,
    /// The same for the first week at watch or act.
    pub watch_delay: Option<i64>,
    /// Checks taken from the detectable week up to and including the first act week.
    pub checks_to_act: Option<usize>,
    /// What the checks before the repair allow a rule to show (`Chance`).
    pub chance: Chance,
}

/// What the checks a fault had before its repair (or the end) allow a rule to show. A step
/// seen at one check can only be shown at watch there: act waits for the check that confirms
/// it (a lone far reading is how a typing slip looks too), and a fault repaired before any
/// check is invisible to every rule. Such faults are counted apart, for both rules alike.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Chance {
    /// Enough checks to be found at act.
    Judged,
    /// A step repaired after its first check: found when that check shows it at watch.
    OneCheck,
    /// No check between the onset and the repair.
    NoCheck,
}

impl Chance {
    /// The chance of a fault of `kind` with `checks` checks from its onset to its repair.
    pub fn of(kind: FaultKind, checks: usize) -> Chance {
        match checks {
            0 => Chance::NoCheck,
            1 if kind.is_step() => Chance::OneCheck,
            _ => Chance::Judged,
        }
    }
}

/// Figures per fault kind.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct FaultFigures {
    pub kind: FaultKind,
    pub planted: usize,
    /// Faults with enough checks to be found at act ([`Chance::Judged`]), and those of them
    /// at act between their onset and their repair.
    pub judged: usize,
    pub found: usize,
    /// Steps repaired after their first check, and those of them at watch on it.
    pub one_check: usize,
    pub one_check_at_watch: usize,
    /// Faults repaired before any check.
    pub no_check: usize,
    /// Over the judged faults: median and worst act delay in weeks, a missed fault counting
    /// as never (`None`).
    pub median_delay: Option<f64>,
    pub worst_delay: Option<i64>,
    pub median_watch_delay: Option<f64>,
    pub worst_watch_delay: Option<i64>,
    /// Most checks any fault of the kind took to reach act (1 = at the first check with it).
    pub worst_checks_to_act: Option<usize>,
}

/// The scores of one flag source (sumpbook or the fixed rule) on one shop.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Scores {
    pub source: String,
    pub healthy_units: usize,
    pub healthy_unit_weeks: usize,
    pub act_episodes: usize,
    /// Episodes at watch or worse.
    pub flag_episodes: usize,
    pub act_per_100_unit_years: f64,
    pub flag_per_100_unit_years: f64,
    /// Shares of healthy unit-weeks at act, and at watch (not act).
    pub act_week_share: f64,
    pub watch_week_share: f64,
    pub act_length_median: Option<f64>,
    pub act_length_worst: Option<usize>,
    pub flag_length_median: Option<f64>,
    pub flag_length_worst: Option<usize>,
    /// Act episodes on healthy units by the kinds at act in their first week.
    pub false_act_kinds: BTreeMap<String, usize>,
    /// Healthy unit-weeks at act by each kind at act in them.
    pub false_act_weeks_by_kind: BTreeMap<String, usize>,
    pub faults: Vec<FaultFigures>,
    pub detections: Vec<Detection>,
    /// Act episodes, outside any fault, that start in the week of a planted slip or the next.
    pub slip_acts: usize,
    /// (unit, week, field) of each.
    pub slip_act_list: Vec<(String, usize, String)>,
    /// Repaired faults flagged in the week before their repair by a flag the fault can raise
    /// (`FaultKind::raises`), and how many checks from the repair until the unit showed no
    /// such flag (`None`: never in the record). A flag of another kind has a cause the repair
    /// did not remove (a sample's KV40 a little off), so it is not counted here.
    pub repairs_flagged: usize,
    pub checks_to_clear: Vec<Option<usize>>,
    pub checks_to_clear_act: Vec<Option<usize>>,
    /// The same, counting every flag of the unit whatever its kind (for reference).
    pub checks_to_clear_any: Vec<Option<usize>>,
}

/// What the scorer needs per unit besides its timeline.
#[derive(Clone, Debug)]
pub struct UnitFacts<'a> {
    pub truth: &'a UnitTruth,
    /// Whether the unit has a check in each week.
    pub checked: Vec<bool>,
}

fn checks_between(checked: &[bool], from: usize, to: usize) -> usize {
    (from..=to.min(checked.len().saturating_sub(1)))
        .filter(|&w| checked[w])
        .count()
}

/// The scores of `timelines` (one per unit of `facts`, in the same order).
pub fn score(
    source: &str,
    truth: &Truth,
    facts: &[UnitFacts<'_>],
    timelines: &[Timeline],
) -> Scores {
    let weeks = truth.weeks.len();
    let mut s = Scores {
        source: source.to_string(),
        healthy_units: 0,
        healthy_unit_weeks: 0,
        act_episodes: 0,
        flag_episodes: 0,
        act_per_100_unit_years: 0.0,
        flag_per_100_unit_years: 0.0,
        act_week_share: 0.0,
        watch_week_share: 0.0,
        act_length_median: None,
        act_length_worst: None,
        flag_length_median: None,
        flag_length_worst: None,
        false_act_kinds: BTreeMap::new(),
        false_act_weeks_by_kind: BTreeMap::new(),
        faults: Vec::new(),
        detections: Vec::new(),
        slip_acts: 0,
        slip_act_list: Vec::new(),
        repairs_flagged: 0,
        checks_to_clear: Vec::new(),
        checks_to_clear_act: Vec::new(),
        checks_to_clear_any: Vec::new(),
    };
    let (mut act_weeks, mut watch_weeks) = (0usize, 0usize);
    let (mut act_lengths, mut flag_lengths) = (Vec::new(), Vec::new());
    for (f, tl) in facts.iter().zip(timelines) {
        let levels: Vec<u8> = tl.iter().map(|w| w.level).collect();
        let acts = episodes(&levels, ACT);
        // Weeks in which a planted fault may rightly raise flags.
        let fault_window = f.truth.fault.as_ref().map(|ft| {
            (
                ft.onset_week,
                ft.repair_week.map_or(weeks, |r| (r + 3).min(weeks)),
            )
        });
        let in_fault = |w: usize| fault_window.is_some_and(|(a, b)| w >= a && w < b);
        for &(start, _) in &acts {
            if in_fault(start) {
                continue;
            }
            let slip = truth
                .slips
                .iter()
                .find(|sl| sl.unit == f.truth.unit && (sl.week == start || sl.week + 1 == start));
            if let Some(sl) = slip {
                s.slip_acts += 1;
                s.slip_act_list
                    .push((sl.unit.clone(), start, sl.field.clone()));
            }
        }
        if f.truth.healthy {
            s.healthy_units += 1;
            s.healthy_unit_weeks += levels.len();
            act_weeks += levels.iter().filter(|&&l| l == ACT).count();
            for week in tl.iter().filter(|w| w.level == ACT) {
                let mut kinds = week.act_kinds.clone();
                kinds.sort();
                kinds.dedup();
                for k in kinds {
                    *s.false_act_weeks_by_kind.entry(k).or_default() += 1;
                }
            }
            watch_weeks += levels.iter().filter(|&&l| l == WATCH).count();
            for &(start, len) in &acts {
                act_lengths.push(len);
                let mut kinds = tl[start].act_kinds.clone();
                kinds.sort();
                kinds.dedup();
                for k in kinds {
                    *s.false_act_kinds.entry(k).or_default() += 1;
                }
            }
            s.act_episodes += acts.len();
            let flags = episodes(&levels, WATCH);
            s.flag_episodes += flags.len();
            flag_lengths.extend(flags.iter().map(|e| e.1));
        }
        if let Some(ft) = &f.truth.fault {
            let end = ft.repair_week.unwrap_or(weeks).min(weeks);
            // Found by a flag the fault can raise: a stroke-time act in a hot summer does not
            // find a dirt ingress, nor an acid slip a worn pump.
            let own: Vec<u8> = tl.iter().map(|w| w.level_for(ft.kind)).collect();
            let first_at = |lvl: u8| (ft.onset_week..end).find(|&w| own[w] >= lvl);
            let act = first_at(ACT);
            let watch = first_at(WATCH);
            let d = ft.detectable_week as i64;
            let with_fault = if end > ft.onset_week {
                checks_between(&f.checked, ft.onset_week, end - 1)
            } else {
                0
            };
            s.detections.push(Detection {
                unit: f.truth.unit.clone(),
                kind: ft.kind,
                detectable_week: ft.detectable_week,
                act_delay: act.map(|w| w as i64 - d),
                watch_delay: watch.map(|w| w as i64 - d),
                checks_to_act: act.map(|w| {
                    if w < ft.detectable_week {
                        0
                    } else {
                        checks_between(&f.checked, ft.detectable_week, w)
                    }
                }),
                chance: Chance::of(ft.kind, with_fault),
            });
            if let Some(r) = ft.repair_week {
                let clear = |lv: &[u8], lvl: u8| {
                    (r..weeks)
                        .find(|&w| lv[w] < lvl)
                        .map(|w| checks_between(&f.checked, r, w))
                };
                if r >= 1 && r < weeks && own[r - 1] >= WATCH {
                    s.repairs_flagged += 1;
                    s.checks_to_clear.push(clear(&own, WATCH));
                    s.checks_to_clear_act.push(if own[r - 1] >= ACT {
                        clear(&own, ACT)
                    } else {
                        Some(0)
                    });
                }
                if r >= 1 && r < weeks && levels[r - 1] >= WATCH {
                    s.checks_to_clear_any.push(clear(&levels, WATCH));
                }
            }
        }
    }
    let years = s.healthy_unit_weeks as f64 / (365.25 / 7.0);
    if years > 0.0 {
        s.act_per_100_unit_years = 100.0 * s.act_episodes as f64 / years;
        s.flag_per_100_unit_years = 100.0 * s.flag_episodes as f64 / years;
    }
    if s.healthy_unit_weeks > 0 {
        s.act_week_share = act_weeks as f64 / s.healthy_unit_weeks as f64;
        s.watch_week_share = watch_weeks as f64 / s.healthy_unit_weeks as f64;
    }
    let as_f = |v: &[usize]| v.iter().map(|&x| x as f64).collect::<Vec<_>>();
    s.act_length_median = median(&as_f(&act_lengths));
    s.act_length_worst = act_lengths.iter().copied().max();
    s.flag_length_median = median(&as_f(&flag_lengths));
    s.flag_length_worst = flag_lengths.iter().copied().max();
    s.faults = per_kind(&s.detections);
    s
}

/// The figures of each fault kind planted, from its faults' detections.
fn per_kind(detections: &[Detection]) -> Vec<FaultFigures> {
    let mut out = Vec::new();
    for kind in FaultKind::ALL {
        let all: Vec<&Detection> = detections.iter().filter(|d| d.kind == kind).collect();
        if all.is_empty() {
            continue;
        }
        let with = |c: Chance| all.iter().filter(move |d| d.chance == c);
        let ds: Vec<&Detection> = with(Chance::Judged).copied().collect();
        let never = |x: Option<i64>| x.map_or(f64::INFINITY, |v| v as f64);
        let worst = |xs: Vec<Option<i64>>| -> Option<i64> {
            if xs.iter().any(Option::is_none) {
                None
            } else {
                xs.into_iter().flatten().max()
            }
        };
        out.push(FaultFigures {
            kind,
            planted: all.len(),
            judged: ds.len(),
            found: ds.iter().filter(|d| d.act_delay.is_some()).count(),
            one_check: with(Chance::OneCheck).count(),
            one_check_at_watch: with(Chance::OneCheck)
                .filter(|d| d.watch_delay.is_some())
                .count(),
            no_check: with(Chance::NoCheck).count(),
            median_delay: median(&ds.iter().map(|d| never(d.act_delay)).collect::<Vec<_>>())
                .filter(|m| m.is_finite()),
            worst_delay: worst(ds.iter().map(|d| d.act_delay).collect()),
            median_watch_delay: median(
                &ds.iter().map(|d| never(d.watch_delay)).collect::<Vec<_>>(),
            )
            .filter(|m| m.is_finite()),
            worst_watch_delay: worst(ds.iter().map(|d| d.watch_delay).collect()),
            worst_checks_to_act: if ds.iter().any(|d| d.checks_to_act.is_none()) {
                None
            } else {
                ds.iter().filter_map(|d| d.checks_to_act).max()
            },
        });
    }
    out
}

/// One target of the benchmark with its verdict.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Verdict {
    pub target: String,
    pub figure: String,
    pub pass: bool,
}

fn show_delay(x: Option<f64>) -> String {
    x.map_or_else(|| "never".into(), |v| format!("{v:+.1} wk"))
}

/// The targets, judged on sumpbook's scores `e` against the fixed rule's `f` on the same shop.
pub fn verdicts(e: &Scores, f: &Scores) -> Vec<Verdict> {
    let mut out = vec![
        Verdict {
            target: "healthy unit-weeks at act ≤ 0.3 %".into(),
            figure: format!("{:.2} %", 100.0 * e.act_week_share),
            pass: e.act_week_share <= 0.003,
        },
        Verdict {
            target: "false act flags ≤ 2 per 100 healthy unit-years".into(),
            figure: format!("{:.1}", e.act_per_100_unit_years),
            pass: e.act_per_100_unit_years <= 2.0,
        },
        Verdict {
            target: "0 act flags started by an unconfirmed slip".into(),
            figure: e.slip_acts.to_string(),
            pass: e.slip_acts == 0,
        },
    ];
    let worst_clear = if e.checks_to_clear.iter().any(Option::is_none) {
        None
    } else {
        e.checks_to_clear.iter().flatten().max().copied()
    };
    out.push(Verdict {
        target: "a repaired fault's flags gone within 2 checks of the fix".into(),
        figure: format!(
            "worst {} of {} repaired and flagged",
            worst_clear.map_or_else(|| "never".into(), |c| format!("{c} checks")),
            e.checks_to_clear.len()
        ),
        pass: worst_clear.is_some_and(|c| c <= 2),
    });
    let sum = |f: fn(&FaultFigures) -> usize| e.faults.iter().map(f).sum::<usize>();
    let (found, judged) = (sum(|x| x.found), sum(|x| x.judged));
    let (one, one_watch, none) = (
        sum(|x| x.one_check),
        sum(|x| x.one_check_at_watch),
        sum(|x| x.no_check),
    );
    let mut figure = format!("{found} / {judged}");
    if one > 0 {
        figure += &format!("; repaired after one check: {one_watch} / {one} at watch");
    }
    if none > 0 {
        figure += &format!("; {none} repaired before any check");
    }
    out.push(Verdict {
        target: "every planted fault found (act)".into(),
        figure,
        pass: found == judged && one_watch == one,
    });
    for ef in &e.faults {
        let ff = f.faults.iter().find(|x| x.kind == ef.kind);
        if ef.kind.is_step() {
            out.push(Verdict {
                target: format!("{}: act at most one check after onset", ef.kind),
                figure: format!(
                    "worst act at check {}",
                    ef.worst_checks_to_act
                        .map_or_else(|| "never".into(), |c| c.to_string())
                ),
                pass: ef.worst_checks_to_act.is_some_and(|c| c <= 2),
            });
            continue;
        }
        let strict = matches!(ef.kind, FaultKind::PumpWear | FaultKind::CoolerFouling);
        let mine = ef.median_delay.unwrap_or(f64::INFINITY);
        let theirs = ff.and_then(|x| x.median_delay).unwrap_or(f64::INFINITY);
        let pass = if strict {
            mine < theirs
        } else {
            mine <= theirs
        } && mine.is_finite();
        out.push(Verdict {
            target: format!(
                "{}: median delay {} the fixed rule's",
                ef.kind,
                if strict {
                    "earlier than"
                } else {
                    "no later than"
                }
            ),
            figure: format!(
                "{} vs {}",
                show_delay(ef.median_delay),
                show_delay(ff.and_then(|x| x.median_delay))
            ),
            pass,
        });
    }
    out
}

mod sound;
pub use sound::{shared_with_sound, sound_readings, SoundShare};

#[cfg(test)]
mod tests;
