mod bench_plans;
mod cli;
#[cfg(feature = "gui")]
mod gui;
mod health_scenarios;
mod physics_reference;
mod reliability;
mod report;
mod store_and_exchange;
