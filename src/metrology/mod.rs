//! The numerical core: pure functions of published standards, with no I/O,
//! no async and no web or database types (CI checks this).
//!
//! * [`thermo`]: reference functions and tolerance classes of the sensors a
//!   temperature laboratory calibrates.
//! * [`stats`]: weighted least squares, GUM budgets, coverage factors,
//!   Monte Carlo propagation, reporting rules and decision rules.
//! * [`calib`]: the calibration model: a run's readings to per-set-point
//!   results, budgets, conformity and the fitted deviation function.
//! * [`validation`]: the known-answer checks of this core against published
//!   values, run inside the installed binary (`juncture validate`).

pub mod calib;
pub mod stats;
pub mod thermo;
pub mod validation;

#[cfg(test)]
mod properties;
