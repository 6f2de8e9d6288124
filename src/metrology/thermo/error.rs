//! Error type of the thermometry core.
//!
//! Every failure carries the data needed to explain it; the `Display` text is written for a
//! laboratory user (for example "type K is defined from -270 °C to 1372 °C; got 1500 °C").

use thiserror::Error;

/// Everything that can go wrong in a thermometry computation.
///
/// Inputs that are NaN or infinite are always reported as [`ThermoError::NotFinite`]; no
/// function of this module returns a non-finite number as a result.
#[derive(Debug, Clone, PartialEq, Error)]
#[non_exhaustive]
pub enum ThermoError {
    /// A quantity lies outside the range on which a function is defined.
    #[error(
        "{sensor} is defined from {} to {}; got {}",
        quantity_text(*.lo, .unit),
        quantity_text(*.hi, .unit),
        quantity_text(*.value, .unit)
    )]
    OutOfRange {
        /// What the range belongs to, e.g. "type K" or "the published inverse for type B".
        sensor: String,
        /// Which quantity was out of range, e.g. "temperature", "emf", "resistance".
        quantity: &'static str,
        /// The value that was given (or, for a computed quantity, found).
        value: f64,
        /// Lower limit of the range.
        lo: f64,
        /// Upper limit of the range.
        hi: f64,
        /// Unit of `value`, `lo` and `hi`, e.g. "°C", "mV", "Ω", "K" (empty for a ratio).
        unit: &'static str,
    },

    /// An input was NaN or infinite.
    #[error("{quantity} must be a finite number; got {value}")]
    NotFinite {
        /// Which input, e.g. "temperature".
        quantity: &'static str,
        /// The value that was given.
        value: f64,
    },

    /// A parameter is finite but not acceptable (negative resistance, R0 <= 0, ...).
    #[error("invalid {name}: {reason}")]
    InvalidParameter {
        /// Name of the parameter.
        name: &'static str,
        /// Why it was refused.
        reason: String,
    },

    /// An iterative solution did not reach its tolerance.
    #[error("{what} did not converge after {iterations} iterations")]
    NoConvergence {
        /// What was being solved.
        what: &'static str,
        /// Number of iterations performed.
        iterations: u32,
    },

    /// A thermocouple type letter that is not one of the eight letter types.
    #[error("unknown thermocouple type '{0}'; expected one of B, E, J, K, N, R, S, T")]
    UnknownType(String),

    /// Some other name (tolerance class, element kind) that is not recognised.
    #[error("unknown {what} '{given}'; expected one of {expected}")]
    UnknownName {
        /// What kind of name was expected, e.g. "PRT tolerance class".
        what: &'static str,
        /// The text that was given.
        given: String,
        /// The accepted names, comma separated.
        expected: &'static str,
    },

    /// A tolerance class is not defined for this sensor at this temperature.
    #[error(
        "{class} is not defined for {sensor} at {}; {}",
        quantity_text(*.t, "°C"),
        coverage_text(.ranges)
    )]
    ClassNotDefined {
        /// The class, e.g. "class 1" or "ASTM E230 special limits".
        class: String,
        /// The sensor, e.g. "type K" or "wire-wound elements".
        sensor: String,
        /// The temperature asked for, °C.
        t: f64,
        /// The temperature ranges (°C) the class does cover; empty if it covers none.
        ranges: Vec<(f64, f64)>,
    },

    /// A type B emf that occurs at two temperatures (the reference function of type B has a
    /// minimum near 21 °C).
    #[error(
        "{sensor} gives {} at both {} and {}; its emf identifies a single temperature only above {}",
        quantity_text(*.value, .unit),
        quantity_text(.candidates[0], "°C"),
        quantity_text(.candidates[1], "°C"),
        quantity_text(*.unique_above, "°C")
    )]
    Ambiguous {
        /// The sensor, e.g. "type B".
        sensor: String,
        /// The value that was given.
        value: f64,
        /// Unit of `value`.
        unit: &'static str,
        /// The two temperatures (°C) that give the value, lower first.
        candidates: [f64; 2],
        /// Temperature (°C) above which the inverse is unique.
        unique_above: f64,
    },
}

/// Shorthand for results of this module.
pub type ThermoResult<T> = Result<T, ThermoError>;

/// Formats a number for a message: at most 7 significant digits, shortest form, no
/// exponent for ordinary magnitudes.
pub(super) fn number_text(v: f64) -> String {
    if !v.is_finite() {
        return format!("{v}");
    }
    if v == 0.0 {
        return "0".to_string();
    }
    // Round to 7 significant digits through the exponent form, then print shortest.
    let rounded: f64 = format!("{v:.6e}").parse().unwrap_or(v);
    let magnitude = rounded.abs();
    if !(1e-4..1e7).contains(&magnitude) {
        format!("{rounded:e}")
    } else {
        format!("{rounded}")
    }
}

/// A number followed by its unit, or the bare number for a dimensionless quantity.
pub(super) fn quantity_text(v: f64, unit: &str) -> String {
    if unit.is_empty() {
        number_text(v)
    } else {
        format!("{} {unit}", number_text(v))
    }
}

fn coverage_text(ranges: &[(f64, f64)]) -> String {
    if ranges.is_empty() {
        return "it is not defined at any temperature".to_string();
    }
    let parts: Vec<String> = ranges
        .iter()
        .map(|&(lo, hi)| format!("{} to {}", quantity_text(lo, "°C"), quantity_text(hi, "°C")))
        .collect();
    format!("it covers {}", parts.join(" and "))
}

/// Returns `NotFinite` unless `value` is finite.
pub(super) fn require_finite(quantity: &'static str, value: f64) -> ThermoResult<f64> {
    if value.is_finite() {
        Ok(value)
    } else {
        Err(ThermoError::NotFinite { quantity, value })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn out_of_range_reads_naturally() {
        let e = ThermoError::OutOfRange {
            sensor: "type K".to_string(),
            quantity: "temperature",
            value: 1500.0,
            lo: -270.0,
            hi: 1372.0,
            unit: "°C",
        };
        assert_eq!(
            e.to_string(),
            "type K is defined from -270 °C to 1372 °C; got 1500 °C"
        );
    }

    #[test]
    fn ratio_without_unit_has_no_trailing_space() {
        let e = ThermoError::OutOfRange {
            sensor: "x".to_string(),
            quantity: "W",
            value: 5.0,
            lo: 1.0,
            hi: 3.3760086,
            unit: "",
        };
        assert_eq!(e.to_string(), "x is defined from 1 to 3.376009; got 5");
    }

    #[test]
    fn class_not_defined_lists_ranges_or_says_none() {
        let e = ThermoError::ClassNotDefined {
            class: "class 1".to_string(),
            sensor: "type K".to_string(),
            t: 1200.0,
            ranges: vec![(-40.0, 1000.0)],
        };
        assert_eq!(
            e.to_string(),
            "class 1 is not defined for type K at 1200 °C; it covers -40 °C to 1000 °C"
        );
        let e = ThermoError::ClassNotDefined {
            class: "class 3".to_string(),
            sensor: "type J".to_string(),
            t: 100.0,
            ranges: vec![],
        };
        assert_eq!(
            e.to_string(),
            "class 3 is not defined for type J at 100 °C; it is not defined at any temperature"
        );
    }

    #[test]
    fn number_text_rounds_and_switches_to_exponent() {
        assert_eq!(number_text(54.886364025), "54.88636");
        assert_eq!(number_text(-0.2355550714927), "-0.2355551");
        assert_eq!(number_text(1768.1), "1768.1");
        assert_eq!(number_text(1e300), "1e300");
        assert_eq!(number_text(2.5e-9), "2.5e-9");
        assert_eq!(number_text(f64::NAN), "NaN");
    }

    #[test]
    fn not_finite_names_quantity_and_value() {
        assert_eq!(
            require_finite("emf", f64::NEG_INFINITY)
                .unwrap_err()
                .to_string(),
            "emf must be a finite number; got -inf"
        );
        assert_eq!(require_finite("emf", 1.5), Ok(1.5));
    }
}
