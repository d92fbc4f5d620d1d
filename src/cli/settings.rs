//! `sumpbook settings`: shows the shop's settings and sets the ones given — the same as the
//! shop tab of Setup in the app (name, units of measure, time zone).
//!
//! Parses and prints only; the checks (a name, a known time zone) and the edit history are the
//! application layer's.

use std::io::Write;

use clap::{Args, ValueEnum};

use super::Failure;
use crate::app::entry;
use crate::app::shop::Shop;
use crate::units::UnitSystem;

#[derive(Args, Debug, Clone, PartialEq)]
pub struct SettingsArgs {
    /// The shop's name, as the board and reports show it.
    #[arg(long, value_name = "NAME")]
    pub name: Option<String>,
    /// Units of measure for what is shown, typed and exported.
    #[arg(long, value_enum, value_name = "SYSTEM")]
    pub units: Option<Units>,
    /// The shop's time zone, an IANA name such as America/New_York or Europe/Berlin.
    #[arg(long, value_name = "ZONE")]
    pub time_zone: Option<String>,
    /// What a kWh of electricity costs the shop, in its own currency (e.g. 0.18), for the
    /// yearly cost of lost flow; `none` clears it.
    #[arg(long, value_name = "PRICE", allow_hyphen_values = true)]
    pub electricity_price: Option<String>,
    /// Who makes the change (kept in the edit history); default the login name.
    #[arg(long, value_name = "NAME")]
    pub by: Option<String>,
    /// Why (kept in the edit history); default: what changed.
    #[arg(long, value_name = "TEXT", default_value = "")]
    pub reason: String,
    /// Print JSON.
    #[arg(long)]
    pub json: bool,
}

/// The unit systems as typed on the command line.
#[derive(ValueEnum, Debug, Clone, Copy, PartialEq, Eq)]
pub enum Units {
    /// °C, bar, L/min, mm, L.
    Metric,
    /// °F, psi, GPM, in, gal.
    Us,
}

impl SettingsArgs {
    /// Whether anything is to be changed (otherwise the settings are shown).
    pub fn changes(&self) -> bool {
        self.name.is_some()
            || self.units.is_some()
            || self.time_zone.is_some()
            || self.electricity_price.is_some()
    }
}

/// Runs `sumpbook settings`.
pub fn run(shop: &Shop, args: &SettingsArgs, out: &mut dyn Write) -> Result<(), Failure> {
    let mut settings = entry::shop_settings(shop)?;
    if args.changes() {
        if let Some(name) = &args.name {
            settings.shop_name = name.trim().to_string();
        }
        if let Some(units) = args.units {
            settings.unit_system = match units {
                Units::Metric => UnitSystem::Metric,
                Units::Us => UnitSystem::Us,
            };
        }
        if let Some(zone) = &args.time_zone {
            settings.time_zone = zone.trim().to_string();
        }
        if let Some(price) = &args.electricity_price {
            settings.electricity_price = entry::read_price(price)
                .map_err(|e| Failure::bad_input(format!("--electricity-price: {e}")))?;
        }
        entry::save_settings(shop, &settings, &super::who(&args.by), &args.reason)?;
        settings = entry::shop_settings(shop)?;
    }
    if args.json {
        let text = serde_json::to_string_pretty(&settings)
            .map_err(|e| Failure::failed(format!("cannot write JSON: {e}")))?;
        writeln!(out, "{text}")?;
        return Ok(());
    }
    let units = match settings.unit_system {
        UnitSystem::Metric => "metric (°C, bar, L/min, mm, L)",
        UnitSystem::Us => "US customary (°F, psi, GPM, in, gal)",
    };
    writeln!(out, "shop name         {}", settings.shop_name)?;
    writeln!(out, "units of measure  {units}")?;
    writeln!(out, "time zone         {}", settings.time_zone)?;
    writeln!(
        out,
        "electricity price {}",
        settings
            .electricity_price
            .map_or_else(|| "not set".to_string(), |p| format!("{p} per kWh"))
    )?;
    Ok(())
}
