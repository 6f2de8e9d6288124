//! Error type shared by every routine of the statistics core.

use thiserror::Error;

/// Everything that can go wrong in the statistics core.
///
/// Every public routine validates its input and returns one of these variants instead of
/// panicking. The `Display` text is a plain sentence that can be shown to a laboratory user.
#[derive(Debug, Clone, PartialEq, Error)]
#[non_exhaustive]
pub enum StatsError {
    /// Fewer observations than the model has parameters (or than the chosen covariance
    /// convention needs). `model` names the model, e.g. "degree 4".
    #[error("{model} needs at least {need} points, got {got}")]
    TooFewPoints {
        /// Human description of the model, e.g. "degree 4".
        model: String,
        /// Minimum number of points.
        need: usize,
        /// Number of points supplied.
        got: usize,
    },
    /// The design matrix does not have full column rank.
    #[error("rank-deficient design: rank {rank} for {columns} coefficients ({detail})")]
    RankDeficient {
        /// Numerical rank found.
        rank: usize,
        /// Number of coefficients to be determined.
        columns: usize,
        /// Plain-language explanation.
        detail: String,
    },
    /// A NaN or infinite value was supplied, e.g. `what = "y[3] is NaN"`.
    #[error("non-finite input: {what}")]
    NotFinite {
        /// Which value, and what it is.
        what: String,
    },
    /// A weight (or point uncertainty) that is zero, negative or not finite.
    #[error("invalid weight at index {index}: {value} (weights must be finite and > 0)")]
    InvalidWeight {
        /// Index of the offending point.
        index: usize,
        /// Value supplied.
        value: f64,
    },
    /// Two inputs that must have the same length do not.
    #[error("length mismatch: {what} has {got} entries, expected {expected}")]
    LengthMismatch {
        /// Which input.
        what: String,
        /// Expected number of entries.
        expected: usize,
        /// Supplied number of entries.
        got: usize,
    },
    /// An argument outside its domain.
    #[error("invalid {field}: {reason}")]
    InvalidInput {
        /// Name of the argument.
        field: String,
        /// Why it was rejected.
        reason: String,
    },
    /// A numerical procedure failed to converge (should not happen for valid input).
    #[error("numerical failure: {what}")]
    NumericalFailure {
        /// Which procedure.
        what: String,
    },
}

impl StatsError {
    /// Shorthand for [`StatsError::InvalidInput`].
    pub(crate) fn invalid(field: impl Into<String>, reason: impl Into<String>) -> Self {
        StatsError::InvalidInput {
            field: field.into(),
            reason: reason.into(),
        }
    }
}

/// Returns `Err(NotFinite)` naming `name[index]` when `v` is NaN or infinite.
pub(crate) fn check_finite(name: &str, index: Option<usize>, v: f64) -> Result<(), StatsError> {
    if v.is_finite() {
        return Ok(());
    }
    let kind = if v.is_nan() {
        "NaN"
    } else if v > 0.0 {
        "+infinity"
    } else {
        "-infinity"
    };
    let what = match index {
        Some(i) => format!("{name}[{i}] is {kind}"),
        None => format!("{name} is {kind}"),
    };
    Err(StatsError::NotFinite { what })
}

/// Checks every element of `values` with [`check_finite`].
pub(crate) fn check_all_finite(name: &str, values: &[f64]) -> Result<(), StatsError> {
    values
        .iter()
        .enumerate()
        .try_for_each(|(i, &v)| check_finite(name, Some(i), v))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn messages_are_plain_sentences() {
        let e = StatsError::TooFewPoints {
            model: "degree 4".into(),
            need: 5,
            got: 3,
        };
        assert_eq!(e.to_string(), "degree 4 needs at least 5 points, got 3");
        let e = check_all_finite("y", &[1.0, 2.0, 3.0, f64::NAN]).unwrap_err();
        assert_eq!(e.to_string(), "non-finite input: y[3] is NaN");
        let e = check_finite("x", None, f64::NEG_INFINITY).unwrap_err();
        assert_eq!(
            e,
            StatsError::NotFinite {
                what: "x is -infinity".into()
            }
        );
    }
}
