//! Thermometry core of Juncture: thermocouple reference functions (NIST Monograph 175 /
//! IEC 60584-1:2013), industrial platinum resistance thermometers (IEC 60751:2008), standard
//! platinum resistance thermometers on ITS-90, and tolerance classes.
//!
//! Pure computation: no I/O, no state. Temperatures are ITS-90 values (t90 in °C, T90 in K),
//! emf in mV, resistance in Ω. NaN or infinite inputs are refused with
//! [`ThermoError::NotFinite`]; no function panics or returns a non-finite result.

pub mod error;
pub mod its90;
mod numeric;
pub mod prt;
#[cfg(test)]
mod test_json;
pub mod thermocouple;
mod thermocouple_tables;
pub mod tolerance;

pub use error::{ThermoError, ThermoResult};
pub use its90::{Its90Temperature, Sprt, SprtSubRange, sprt_temperature};
pub use prt::{CvdCoefficients, ElementKind, PrtClass};
pub use thermocouple::{PublishedInverse, ThermocoupleType};
pub use tolerance::{ThermocoupleClass, thermocouple_tolerance};

/// Kelvin value of 0 °C: T90 / K = t90 / °C + 273.15.
///
/// # Reference
/// ITS-90 (Metrologia 27 (1990) 3-10), units of temperature.
pub const ZERO_CELSIUS_K: f64 = 273.15;
