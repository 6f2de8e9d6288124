//! Calibration model of Juncture: turns one comparison-calibration run (reference standard and
//! unit under test read together at several set points) into per-set-point results, GUM
//! uncertainty budgets, conformity decisions and a fitted deviation function.
//!
//! Pure computation: plain Rust types in, plain Rust types out; no I/O, no global state, no
//! panics. The same [`Run`] always gives a bit-identical [`RunResult`].
//!
//! | module | content |
//! |---|---|
//! | [`model`] | input: reference standard, unit under test, set points, readings, options |
//! | [`reference`] | t_ref from the reference signal; reference sensitivities |
//! | [`uut`] | UUT deviation dt (and dE, dR) per reading; UUT sensitivities |
//! | [`budget`] | budget items and their mapping to °C of dt |
//! | [`cmc`] | CMC table (floor of the reported U) |
//! | [`conformity`] | tolerance at t_ref and the decision |
//! | [`fit`] | deviation function and its evaluation inside the calibrated range |
//! | [`run`] | [`evaluate_run`], results and warnings |
//! | [`media`] | comparison media: uniformity, stability and loading half-widths, interpolation, due date |
//! | [`switch`] | temperature switches: switch and reset points, differential, budgets, conformity |
//! | [`error`] | [`CalibError`] with the location of every failure |
//!
//! Units: temperatures in °C (ITS-90), emf in mV, resistance in Ω; field names end in `_c`,
//! `_mv`, `_ohm` accordingly.
//!
//! # Reference
//! JCGM 100:2008 (GUM); EA-4/02 M:2013 S5 (comparison calibration of a thermocouple);
//! ITS-90 (Metrologia 27 (1990) 3-10); NIST Monograph 175 / IEC 60584-1:2013; IEC 60751:2008;
//! ILAC-P14:09/2020; ILAC-G8:09/2019.

pub mod budget;
pub mod cmc;
pub mod conformity;
pub mod error;
pub mod fit;
pub mod media;
pub mod model;
pub mod reference;
pub mod run;
pub mod switch;
pub mod uut;

#[cfg(test)]
mod scenarios;

pub use budget::{BudgetItem, ItemKind, ReadoutSpec, Sensitivities, Side, Spread};
pub use cmc::{CmcRange, CmcTable};
pub use conformity::ConformityResult;
pub use error::{CalibError, Location};
pub use fit::{DeviationFunction, FitQuantity, FlaggedResidual, temperature_from_emf};
pub use media::{
    CharacterisationInput, CharacterisedMedium, MediumAt, MediumCharacterisation, MediumPoint,
    characterise_medium,
};
pub use model::{
    ConformitySpec, FitDegree, JunctionMethod, Reading, ReferenceProbe, Run, SetPoint,
    ToleranceSpec, UnitUnderTest,
};
pub use run::{ReadingResult, RunResult, SetPointResult, Warning, WarningKind, evaluate_run};
pub use switch::{SwitchResult, SwitchTest, evaluate_switch_test};
pub use uut::UutDeviation;
