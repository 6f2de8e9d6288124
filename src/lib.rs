//! Juncture: a service for temperature-calibration laboratories.
//!
//! The crate is layered; each layer only points inward:
//!
//! * [`metrology`] is the numerical core (reference functions, statistics, the
//!   calibration model). It has no I/O, no async and no web or database types.
//! * [`store`] is the only place with SQL: connection set-up, migrations and
//!   one module per group of tables.
//! * [`web`] is the axum application: state, router, errors, JSON API and
//!   browser pages. Handlers parse, call the store or the core, and render.
//! * [`domain`] holds the rules between records and core (coefficient
//!   forms, readings import).
//! * [`config`] gathers the run-time settings; [`demo`] loads the invented
//!   demonstration laboratory.

// The OpenAPI document is one large `serde_json::json!` literal.
#![recursion_limit = "512"]

pub mod config;
pub mod demo;
pub mod domain;
pub mod generate;
pub mod metrology;
pub mod report;
pub mod store;
pub mod web;

/// The crate version, as printed by `/healthz` and `juncture --version`.
pub const VERSION: &str = env!("CARGO_PKG_VERSION");
