//! Comparison of two results that carry expanded uncertainties: the
//! normalized error E_n, used to judge whether an instrument changed between
//! two calibrations.

use super::error::StatsError;

/// Normalized error of `x2` against `x1`, E_n = (x2 − x1) / √(U1² + U2²),
/// with U1 and U2 the expanded uncertainties (same coverage, usually k = 2)
/// of the two values. |E_n| ≤ 1: the two agree within their uncertainties;
/// |E_n| > 1: the difference is significant.
///
/// The two results are treated as uncorrelated (the conservative choice when
/// the same reference standard was used for both, since a common term would
/// cancel in the difference).
///
/// # Errors
/// [`StatsError::NotFinite`] for a non-finite input;
/// [`StatsError::InvalidInput`] when an uncertainty is negative or both are 0.
///
/// # Reference
/// ISO/IEC 17043:2010 B.3.1.3 and ISO 13528:2015 9.7 (E_n numbers; from
/// memory).
pub fn normalized_error(x1: f64, u1: f64, x2: f64, u2: f64) -> Result<f64, StatsError> {
    for (name, v) in [("x1", x1), ("U1", u1), ("x2", x2), ("U2", u2)] {
        if !v.is_finite() {
            return Err(StatsError::NotFinite {
                what: format!("{name} is {v}"),
            });
        }
    }
    if u1 < 0.0 || u2 < 0.0 {
        return Err(StatsError::InvalidInput {
            field: "expanded uncertainty".to_owned(),
            reason: format!("must not be negative; got U1 = {u1}, U2 = {u2}"),
        });
    }
    let denominator = u1.hypot(u2);
    if denominator == 0.0 {
        return Err(StatsError::InvalidInput {
            field: "expanded uncertainty".to_owned(),
            reason: "both are zero; E_n is undefined".to_owned(),
        });
    }
    Ok((x2 - x1) / denominator)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn normalized_error_by_hand() {
        // Hand calculation: (0.16 − 0.10) / √(0.03² + 0.04²) = 0.06 / 0.05 = 1.2.
        let en = normalized_error(0.10, 0.03, 0.16, 0.04).unwrap();
        assert!((en - 1.2).abs() < 1e-12, "{en}");
        // The sign follows the change: a fall of 0.02 with the same U's is −0.4.
        let en = normalized_error(0.10, 0.03, 0.08, 0.04).unwrap();
        assert!((en + 0.4).abs() < 1e-12, "{en}");
        // Hand calculation: 10.3 ± 0.2 against 10.0 ± 0.1 gives 0.3 / √0.05 = 1.341640786...
        let en = normalized_error(10.0, 0.1, 10.3, 0.2).unwrap();
        assert!((en - 1.341_640_786_499_874).abs() < 1e-12, "{en}");
    }

    #[test]
    fn normalized_error_refuses_bad_input() {
        assert!(matches!(
            normalized_error(f64::NAN, 0.1, 0.0, 0.1),
            Err(StatsError::NotFinite { .. })
        ));
        let e = normalized_error(0.0, -0.1, 0.0, 0.1).unwrap_err();
        assert!(e.to_string().contains("must not be negative"), "{e}");
        let e = normalized_error(0.0, 0.0, 0.1, 0.0).unwrap_err();
        assert!(e.to_string().contains("both are zero"), "{e}");
    }
}
