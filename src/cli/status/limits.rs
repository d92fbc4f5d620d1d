//! `sumpbook limits`: showing and setting the shop's and a unit's limits. No rules here;
//! `app::work` checks and stores them.

use super::*;
use std::io::Write;

use clap::{Args, Subcommand};

use crate::app::shop::Shop;
use crate::app::work::{self, LimitRow};
use crate::cli::Failure;

#[derive(Args, Debug, Clone, PartialEq)]
pub struct LimitsArgs {
    #[command(subcommand)]
    pub action: Option<LimitsAction>,
    /// The limits in force for this unit (its overrides over the shop's).
    #[arg(long, value_name = "TAG")]
    pub unit: Option<String>,
    /// Print JSON.
    #[arg(long)]
    pub json: bool,
}

#[derive(Subcommand, Debug, Clone, PartialEq)]
pub enum LimitsAction {
    /// Set a shop default, or with --unit an override for one unit.
    Set {
        /// Limit key, as `sumpbook limits` lists them.
        #[arg(value_name = "KEY")]
        key: String,
        /// Watch limit, in the unit `limits` shows it in (the shop's: °F for a temperature in a
        /// US shop); a temperature also takes its unit (140F, 60C).
        #[arg(long, value_name = "X", allow_hyphen_values = true)]
        watch: Option<String>,
        /// Act limit (for a single setting such as an interval: its value).
        #[arg(long, value_name = "Y", allow_hyphen_values = true)]
        act: Option<String>,
        /// The value of a single setting (same as --act).
        #[arg(
            long,
            value_name = "V",
            conflicts_with = "act",
            allow_hyphen_values = true
        )]
        value: Option<String>,
        /// Override for this unit only (by tag); without it the shop default is set.
        #[arg(long, value_name = "TAG")]
        unit: Option<String>,
        /// Who makes the change (kept in the edit history); default the login name.
        #[arg(long, value_name = "NAME")]
        by: Option<String>,
    },
    /// Remove a stored shop default or unit override.
    Reset {
        /// Limit key, as `sumpbook limits` lists them.
        #[arg(value_name = "KEY")]
        key: String,
        /// Remove this unit's override (by tag); without it the shop default is removed.
        #[arg(long, value_name = "TAG")]
        unit: Option<String>,
        /// Who makes the change (kept in the edit history); default the login name.
        #[arg(long, value_name = "NAME")]
        by: Option<String>,
    },
}

/// A limit as typed: no trailing zeros (`1.30` → `1.3`).
pub(super) fn plain(v: f64) -> String {
    let s = format!("{v:.4}");
    let s = s.trim_end_matches('0').trim_end_matches('.');
    if s == "-0" {
        "0".into()
    } else {
        s.to_string()
    }
}

fn limits_table(out: &mut dyn Write, scope: &str, rows: &[LimitRow]) -> Result<(), Failure> {
    writeln!(out, "Limits in force for {scope} (built-in defaults are common practice; override with `limits set`)")?;
    writeln!(
        out,
        "{}{}{}{}{}{}RANGE",
        pad("KEY", 27),
        pad("", 3),
        pad("WATCH", 10),
        pad("ACT", 10),
        pad("UNIT", 15),
        pad("FROM", 16)
    )?;
    for r in rows {
        let v = |x: Option<f64>| x.map(plain).unwrap_or_else(dash);
        let from = if r.shape == "value" {
            format!("{:?}", r.act_origin).to_lowercase()
        } else {
            format!("{:?}/{:?}", r.watch_origin, r.act_origin).to_lowercase()
        };
        writeln!(
            out,
            "{}{}{}{}{}{}{}",
            pad(&r.key, 27),
            pad(r.compare.as_deref().unwrap_or("="), 3),
            pad(
                &if r.shape == "value" {
                    String::new()
                } else {
                    v(r.watch)
                },
                10
            ),
            pad(&v(r.act), 10),
            pad(&r.unit_words, 15),
            pad(&from, 16),
            r.range
        )?;
    }
    Ok(())
}

pub fn run_limits(shop: &Shop, args: &LimitsArgs, out: &mut dyn Write) -> Result<(), Failure> {
    match &args.action {
        None => {
            let v = work::limits(shop, args.unit.as_deref())?;
            if args.json {
                return json_out(out, &v);
            }
            let scope = v
                .unit
                .as_ref()
                .map(|u| format!("unit {u}"))
                .unwrap_or_else(|| "the shop".into());
            limits_table(out, &scope, &v.rows)
        }
        Some(LimitsAction::Set {
            key,
            watch,
            act,
            value,
            unit,
            by,
        }) => {
            let act = act.as_deref().or(value.as_deref());
            let r = work::set_limit(
                shop,
                key,
                watch.as_deref(),
                act,
                unit.as_deref(),
                &crate::cli::who(by),
            )?;
            if args.json {
                return json_out(out, &r);
            }
            let scope = unit
                .as_ref()
                .map(|u| format!("unit {u}"))
                .unwrap_or_else(|| "the shop".into());
            limits_table(out, &scope, std::slice::from_ref(&r))
        }
        Some(LimitsAction::Reset { key, unit, by }) => {
            let removed = work::reset_limit(shop, key, unit.as_deref(), &crate::cli::who(by))?;
            let scope = unit
                .as_ref()
                .map(|u| format!("unit {u}"))
                .unwrap_or_else(|| "the shop".into());
            if removed {
                writeln!(
                    out,
                    "Removed the stored {key} for {scope}; the default applies again."
                )?;
            } else {
                writeln!(out, "No stored {key} for {scope}; nothing changed.")?;
            }
            Ok(())
        }
    }
}
