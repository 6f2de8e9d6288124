//! Error type of the calibration model: every failure names where it happened (set point,
//! reading, field) and wraps the thermometry or statistics error that caused it.

use std::fmt;

use thiserror::Error;

use crate::metrology::stats::StatsError;
use crate::metrology::thermo::ThermoError;

/// Where in a run an error or a warning belongs.
///
/// Indices are 0-based, as in the input vectors; the `Display` text counts from 1, the way a
/// technician numbers set points and readings ("set point 3 (500 °C), reading 7, UUT signal").
///
/// # Reference
/// Location wording: common practice (set points and readings counted from 1).
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Location {
    /// Index of the set point in [`super::Run::set_points`] (0-based).
    pub set_point: Option<usize>,
    /// Nominal temperature of that set point, °C.
    pub nominal_c: Option<f64>,
    /// Index of the reading within the set point (0-based).
    pub reading: Option<usize>,
    /// Name of the input field or budget item concerned.
    pub field: Option<String>,
}

impl Location {
    /// The run as a whole.
    pub fn run() -> Self {
        Location::default()
    }

    /// Set point `index` (0-based) with nominal temperature `nominal_c` (°C).
    pub fn set_point(index: usize, nominal_c: f64) -> Self {
        Location {
            set_point: Some(index),
            nominal_c: Some(nominal_c),
            ..Location::default()
        }
    }

    /// The same location narrowed to reading `index` (0-based).
    pub fn reading(mut self, index: usize) -> Self {
        self.reading = Some(index);
        self
    }

    /// The same location narrowed to the input field (or budget item) `field`.
    pub fn field(mut self, field: impl Into<String>) -> Self {
        self.field = Some(field.into());
        self
    }
}

impl fmt::Display for Location {
    /// Writes e.g. "set point 3 (500 °C), reading 7, UUT signal" (counting from 1), or "run"
    /// when nothing narrower is known.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let mut parts: Vec<String> = Vec::new();
        if let Some(i) = self.set_point {
            match self.nominal_c {
                Some(t) => parts.push(format!("set point {} ({} °C)", i + 1, t)),
                None => parts.push(format!("set point {}", i + 1)),
            }
        }
        if let Some(r) = self.reading {
            parts.push(format!("reading {}", r + 1));
        }
        if let Some(field) = &self.field {
            parts.push(field.clone());
        }
        if parts.is_empty() {
            f.write_str("run")
        } else {
            f.write_str(&parts.join(", "))
        }
    }
}

/// Everything that can go wrong when a run is evaluated.
///
/// The wrapped thermometry and statistics errors are boxed to keep `Result`s small.
///
/// The `Display` text is a plain sentence for the laboratory user that starts with the
/// location, e.g. "set point 3 (500 °C), reading 7: type N is defined from -270 °C to
/// 1300 °C; got 1400 °C".
#[derive(Debug, Clone, PartialEq, Error)]
#[non_exhaustive]
pub enum CalibError {
    /// The run has no set points.
    #[error("the run has no set points")]
    EmptyRun,

    /// A numeric input is NaN or infinite.
    #[error("{at}: must be a finite number; got {value}")]
    NotFinite {
        /// Where (the field names the input).
        at: Location,
        /// The value given.
        value: f64,
    },

    /// An input is finite but not acceptable (negative half-width, missing reference-junction
    /// temperature, class that does not fit the unit under test, ...).
    #[error("{at}: {reason}")]
    InvalidInput {
        /// Where.
        at: Location,
        /// Why it was refused.
        reason: String,
    },

    /// Two set points have the same nominal temperature.
    #[error(
        "set points {} and {} have the same nominal temperature {nominal_c} °C",
        .first + 1,
        .second + 1
    )]
    DuplicateSetPoint {
        /// Index of the first of the two (0-based).
        first: usize,
        /// Index of the second (0-based).
        second: usize,
        /// The repeated nominal temperature, °C.
        nominal_c: f64,
    },

    /// A set point has too few readings to evaluate its repeatability.
    #[error("{at}: {got} reading(s); at least {need} are needed for a Type A evaluation")]
    TooFewReadings {
        /// The set point.
        at: Location,
        /// Number of readings given.
        got: usize,
        /// Minimum number.
        need: usize,
    },

    /// A thermometry computation failed (a reading outside the range of a reference function,
    /// a tolerance class that cannot be evaluated, ...).
    #[error("{at}: {source}")]
    Thermo {
        /// Where.
        at: Location,
        /// The underlying error.
        #[source]
        source: Box<ThermoError>,
    },

    /// A statistics computation failed (budget, coverage factor, fit, rounding, decision).
    #[error("{at}: {what}: {source}")]
    Stats {
        /// Where.
        at: Location,
        /// What was being computed, e.g. "uncertainty budget".
        what: &'static str,
        /// The underlying error.
        #[source]
        source: Box<StatsError>,
    },

    /// The requested degree of the deviation function cannot be fitted to the set points.
    #[error("a deviation function of degree {degree} cannot be fitted: {reason}")]
    UnsupportedDegree {
        /// Requested degree.
        degree: usize,
        /// Number of set points available.
        points: usize,
        /// Why not.
        reason: String,
    },

    /// A deviation function was asked for a temperature outside its validity range.
    #[error(
        "the deviation function is valid from {lo_c} °C to {hi_c} °C (the calibrated range); \
         {t_c} °C is outside it and is not extrapolated"
    )]
    OutsideValidityRange {
        /// Temperature asked for, °C.
        t_c: f64,
        /// Lower end of the validity range, °C.
        lo_c: f64,
        /// Upper end of the validity range, °C.
        hi_c: f64,
    },

    /// An iteration of the calibration model did not converge.
    #[error("{at}: {what} did not converge")]
    NoConvergence {
        /// Where.
        at: Location,
        /// What was being solved.
        what: &'static str,
    },
}

impl CalibError {
    /// Wraps a thermometry error with its location.
    pub(crate) fn thermo(at: &Location, source: ThermoError) -> Self {
        CalibError::Thermo {
            at: at.clone(),
            source: Box::new(source),
        }
    }

    /// Wraps a statistics error with its location and what was being computed.
    pub(crate) fn stats(at: &Location, what: &'static str, source: StatsError) -> Self {
        CalibError::Stats {
            at: at.clone(),
            what,
            source: Box::new(source),
        }
    }

    /// An invalid input at `at`.
    pub(crate) fn invalid(at: &Location, reason: impl Into<String>) -> Self {
        CalibError::InvalidInput {
            at: at.clone(),
            reason: reason.into(),
        }
    }
}

/// Returns `value` when finite, else [`CalibError::NotFinite`] at `at`.
pub(crate) fn finite(at: &Location, value: f64) -> Result<f64, CalibError> {
    if value.is_finite() {
        Ok(value)
    } else {
        Err(CalibError::NotFinite {
            at: at.clone(),
            value,
        })
    }
}

/// Returns `value` when finite and not negative.
pub(crate) fn non_negative(at: &Location, value: f64) -> Result<f64, CalibError> {
    let v = finite(at, value)?;
    if v < 0.0 {
        return Err(CalibError::invalid(
            at,
            format!("must not be negative; got {v}"),
        ));
    }
    Ok(v)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn location_counts_from_one() {
        let at = Location::set_point(2, 500.0).reading(6).field("UUT signal");
        assert_eq!(
            at.to_string(),
            "set point 3 (500 °C), reading 7, UUT signal"
        );
        assert_eq!(Location::run().to_string(), "run");
    }

    #[test]
    fn thermo_error_keeps_its_sentence() {
        let at = Location::set_point(2, 500.0).reading(6);
        let e = CalibError::thermo(
            &at,
            ThermoError::OutOfRange {
                sensor: "type N".into(),
                quantity: "temperature",
                value: 1400.0,
                lo: -270.0,
                hi: 1300.0,
                unit: "°C",
            },
        );
        assert_eq!(
            e.to_string(),
            "set point 3 (500 °C), reading 7: type N is defined from -270 °C to 1300 °C; \
             got 1400 °C"
        );
    }
}
