mod architecture;
mod backends;
mod bench_plans;
mod cli;
mod detection;
#[cfg(feature = "gui")]
mod faces;
#[cfg(feature = "gui")]
mod gui;
mod health_scenarios;
mod kept;
mod physics_reference;
mod reliability;
mod report;
mod run;
mod schema_bounds;
mod server;
mod store_and_exchange;
