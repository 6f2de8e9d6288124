//! Rounding of reported results: the expanded uncertainty to at most two significant digits
//! and the measured value to the same decimal place, with an optional CMC floor.
//!
//! Rounded numbers are kept as decimal `mantissa × 10^exponent` ([`RoundedDecimal`]), so
//! their text form has no binary artefacts.
//!
//! **Float-noise epsilon.** Before rounding, a scaled value that lies within a relative
//! [`SNAP_REL_EPS`] (1e-7) of an integer (or, for round-to-nearest, of a tie `n + 0.5`) is
//! treated as exactly that integer (tie). A computed 0.0150000001 therefore reports as 0.015,
//! not 0.016. The epsilon is far above the accumulated rounding error of an uncertainty
//! calculation (~1e-15 relative) and far below anything that matters for a two-digit
//! uncertainty (1e-2 relative); its value is common practice, not from a standard. As a
//! consequence "rounding up" can lower a value by at most 1e-7 relative.

use std::fmt;

use super::error::{StatsError, check_finite};

/// Relative tolerance used to absorb floating-point noise before rounding (see module docs).
pub const SNAP_REL_EPS: f64 = 1e-7;

/// Rounding rule for the expanded uncertainty.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum RoundingMode {
    /// Round towards +∞ at the last kept digit (never understates the uncertainty).
    #[default]
    Up,
    /// Round to nearest, ties to even.
    HalfEven,
}

/// A decimal number `mantissa × 10^exponent`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct RoundedDecimal {
    /// Integer significand (sign included).
    pub mantissa: i64,
    /// Power of ten of the last kept digit.
    pub exponent: i32,
}

impl RoundedDecimal {
    /// Nearest `f64` (parsed from the decimal text, hence correctly rounded).
    ///
    /// # Reference
    /// IEEE 754-2019 5.12 (correctly rounded decimal-to-binary conversion; Rust `str::parse`).
    pub fn to_f64(&self) -> f64 {
        self.to_string().parse().unwrap_or(f64::NAN)
    }

    /// Number of significant digits of the mantissa (0 for zero).
    ///
    /// # Reference
    /// JCGM 100:2008 7.2.6 (significant digits of a reported uncertainty).
    pub fn significant_digits(&self) -> u32 {
        let m = self.mantissa.unsigned_abs();
        if m == 0 { 0 } else { m.ilog10() + 1 }
    }
}

impl fmt::Display for RoundedDecimal {
    /// Plain decimal notation, e.g. "0.012", "-12.35", "1200".
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let sign = if self.mantissa < 0 { "-" } else { "" };
        let digits = self.mantissa.unsigned_abs().to_string();
        if self.exponent >= 0 {
            let zeros = if self.mantissa == 0 {
                String::new()
            } else {
                "0".repeat(self.exponent as usize)
            };
            return write!(f, "{sign}{digits}{zeros}");
        }
        let frac = self.exponent.unsigned_abs() as usize;
        let padded = format!("{digits:0>width$}", width = frac + 1);
        let (int_part, frac_part) = padded.split_at(padded.len() - frac);
        write!(f, "{sign}{int_part}.{frac_part}")
    }
}

/// `v × 10^(−exponent)` with a single rounding for |exponent| ≤ 22 (exact powers of ten).
fn scale_to(v: f64, exponent: i32) -> f64 {
    if exponent >= 0 {
        v / 10f64.powi(exponent)
    } else {
        v * 10f64.powi(-exponent)
    }
}

/// Integer of the scaled value `v` (≥ 0) under `mode`, after absorbing float noise.
fn round_scaled(v: f64, mode: RoundingMode) -> f64 {
    let near = v.round();
    if (v - near).abs() <= SNAP_REL_EPS * v.abs() {
        return near;
    }
    match mode {
        RoundingMode::Up => v.ceil(),
        RoundingMode::HalfEven => {
            let fl = v.floor();
            let tie = fl + 0.5;
            if (v - tie).abs() <= SNAP_REL_EPS * v.abs() {
                if fl % 2.0 == 0.0 { fl } else { fl + 1.0 }
            } else {
                near
            }
        }
    }
}

const MAX_MANTISSA: f64 = 9_007_199_254_740_992.0; // 2^53
/// Smallest magnitude accepted by [`round_significant`] (keeps powers of ten finite).
const MIN_MAGNITUDE: f64 = 1e-280;
/// Largest magnitude accepted by [`round_significant`].
const MAX_MAGNITUDE: f64 = 1e280;

/// Rounds a positive `value` to `digits` significant digits (1..=15) under `mode`.
///
/// # Reference
/// JCGM 100:2008 7.2.6 (at most two significant digits, rounding up may be preferable);
/// ILAC-P14:09/2020 (reporting of the expanded uncertainty; clause numbers from memory).
pub fn round_significant(
    value: f64,
    digits: u32,
    mode: RoundingMode,
) -> Result<RoundedDecimal, StatsError> {
    check_finite("value", None, value)?;
    if value <= 0.0 {
        return Err(StatsError::invalid("value", "must be positive"));
    }
    if !(MIN_MAGNITUDE..=MAX_MAGNITUDE).contains(&value) {
        return Err(StatsError::invalid(
            "value",
            format!(
                "{value:e} is outside the supported range {MIN_MAGNITUDE:e}..={MAX_MAGNITUDE:e}"
            ),
        ));
    }
    if !(1..=15).contains(&digits) {
        return Err(StatsError::invalid("digits", "must be between 1 and 15"));
    }
    let lo = 10f64.powi(digits as i32 - 1);
    let hi = 10f64.powi(digits as i32);
    let mut exponent = value.log10().floor() as i32 - digits as i32 + 1;
    let mut v = scale_to(value, exponent);
    // Repair an off-by-one decade from log10 rounding.
    while v >= hi {
        exponent += 1;
        v = scale_to(value, exponent);
    }
    while v < lo * (1.0 - SNAP_REL_EPS) {
        exponent -= 1;
        v = scale_to(value, exponent);
    }
    let mut n = round_scaled(v, mode);
    if n < lo {
        n = lo;
    }
    if n >= hi {
        n = lo;
        exponent += 1;
    }
    Ok(RoundedDecimal {
        mantissa: n as i64,
        exponent,
    })
}

/// Rounds `value` (any sign) to the decimal place `10^exponent`, to nearest with ties to even
/// (after absorbing float noise).
///
/// # Reference
/// ISO 80000-1:2009 Annex B, rule A (round to nearest, ties to even; from memory).
pub fn round_to_exponent(value: f64, exponent: i32) -> Result<RoundedDecimal, StatsError> {
    check_finite("value", None, value)?;
    let v = scale_to(value.abs(), exponent);
    if v >= MAX_MANTISSA {
        return Err(StatsError::invalid(
            "value",
            format!("{value} has too many digits at the decimal place 1e{exponent}"),
        ));
    }
    let n = round_scaled(v, RoundingMode::HalfEven) as i64;
    Ok(RoundedDecimal {
        mantissa: if value < 0.0 { -n } else { n },
        exponent,
    })
}

/// Options of [`round_for_report`].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ReportOptions {
    /// Significant digits of the expanded uncertainty (1 or 2).
    pub significant_digits: u32,
    /// Rounding rule for the uncertainty.
    pub mode: RoundingMode,
    /// Calibration and measurement capability (expanded uncertainty, same unit), if any: the
    /// reported uncertainty is never smaller.
    pub cmc: Option<f64>,
}

impl Default for ReportOptions {
    fn default() -> Self {
        ReportOptions {
            significant_digits: 2,
            mode: RoundingMode::Up,
            cmc: None,
        }
    }
}

/// A result ready to print on a certificate.
#[derive(Debug, Clone, PartialEq)]
pub struct ReportedResult {
    /// Measured value rounded to the decimal place of the uncertainty.
    pub value: RoundedDecimal,
    /// Rounded expanded uncertainty.
    pub expanded_uncertainty: RoundedDecimal,
    /// `value` as text, e.g. "-0.162".
    pub value_text: String,
    /// `expanded_uncertainty` as text, e.g. "0.012".
    pub uncertainty_text: String,
    /// `true` when the CMC determined the reported uncertainty (the calculated U was below the
    /// CMC, or rounding to nearest would have gone below it).
    pub cmc_floor_applied: bool,
}

/// Rounds a measured value and its expanded uncertainty `U` (same unit, U ≥ 0) for reporting:
/// U to at most `significant_digits` digits (rounding up by default), never below the CMC when
/// one is given; the value to the same decimal place (nearest, ties to even).
///
/// # Reference
/// ILAC-P14:09/2020 (at most two significant digits; uncertainty not smaller than the CMC;
/// value rounded to the last digit of U; clause numbers from memory); JCGM 100:2008 7.2.6.
pub fn round_for_report(
    value: f64,
    expanded_uncertainty: f64,
    options: &ReportOptions,
) -> Result<ReportedResult, StatsError> {
    check_finite("value", None, value)?;
    check_finite("expanded_uncertainty", None, expanded_uncertainty)?;
    if expanded_uncertainty < 0.0 {
        return Err(StatsError::invalid(
            "expanded_uncertainty",
            "must not be negative",
        ));
    }
    if !(1..=2).contains(&options.significant_digits) {
        return Err(StatsError::invalid(
            "significant_digits",
            "must be 1 or 2 for a reported uncertainty",
        ));
    }
    let digits = options.significant_digits;
    let mut floor_applied = false;
    let rounded = match options.cmc {
        Some(cmc) => {
            check_finite("cmc", None, cmc)?;
            if cmc <= 0.0 {
                return Err(StatsError::invalid("cmc", "must be positive"));
            }
            if expanded_uncertainty < cmc {
                floor_applied = true;
            }
            let mut r = round_significant(expanded_uncertainty.max(cmc), digits, options.mode)?;
            if r.to_f64() < cmc {
                // Strict ceiling of the CMC, without noise absorption, so that U ≥ CMC.
                floor_applied = true;
                r = ceil_significant(cmc, digits)?;
            }
            r
        }
        None => {
            if expanded_uncertainty == 0.0 {
                return Err(StatsError::invalid(
                    "expanded_uncertainty",
                    "is zero and no CMC is given",
                ));
            }
            round_significant(expanded_uncertainty, digits, options.mode)?
        }
    };
    let v = round_to_exponent(value, rounded.exponent)?;
    Ok(ReportedResult {
        value_text: v.to_string(),
        uncertainty_text: rounded.to_string(),
        value: v,
        expanded_uncertainty: rounded,
        cmc_floor_applied: floor_applied,
    })
}

/// Smallest `digits`-digit decimal that is ≥ `value` as an f64 (no noise absorption).
fn ceil_significant(value: f64, digits: u32) -> Result<RoundedDecimal, StatsError> {
    let mut r = round_significant(value, digits, RoundingMode::Up)?;
    while r.to_f64() < value {
        r.mantissa += 1;
        if r.mantissa >= 10i64.pow(digits) {
            r.mantissa /= 10;
            r.exponent += 1;
        }
    }
    Ok(r)
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn report(v: f64, u: f64, opts: ReportOptions) -> (String, String, bool) {
        let r = round_for_report(v, u, &opts).unwrap();
        (r.value_text, r.uncertainty_text, r.cmc_floor_applied)
    }

    #[test]
    fn rounds_up_to_two_digits_and_value_to_same_place() {
        // Worked by hand from the rules (ILAC-P14: two significant digits, value to the same
        // decimal place; rounding up per JCGM 100 7.2.6).
        let o = ReportOptions::default();
        assert_eq!(
            report(-0.16245, 0.01123, o),
            ("-0.162".into(), "0.012".into(), false)
        );
        assert_eq!(
            report(100.04449, 0.0101, o),
            ("100.044".into(), "0.011".into(), false)
        );
        assert_eq!(
            report(12345.6, 1234.0, o),
            ("12300".into(), "1300".into(), false)
        );
        assert_eq!(
            report(2.71234, 0.0996, o),
            ("2.71".into(), "0.10".into(), false)
        );
        assert_eq!(
            report(-0.0004, 0.0021, o),
            ("-0.0004".into(), "0.0021".into(), false)
        );
        assert_eq!(
            report(-0.00004, 0.0021, o),
            ("0.0000".into(), "0.0021".into(), false)
        );
        // Float noise: 0.0150000001 is 0.015, not 0.016; 0.1 + 0.2 is 0.30.
        assert_eq!(report(1.0, 0.0150000001, o).1, "0.015");
        assert_eq!(report(1.0, 0.1 + 0.2, o).1, "0.30");
        // A real excess still rounds up.
        assert_eq!(report(1.0, 0.01501, o).1, "0.016");
    }

    #[test]
    fn nearest_mode_and_ties() {
        let o = ReportOptions {
            mode: RoundingMode::HalfEven,
            ..ReportOptions::default()
        };
        assert_eq!(report(2.0, 0.01234, o).1, "0.012");
        assert_eq!(report(2.0, 0.01236, o).1, "0.012");
        assert_eq!(report(2.0, 0.01251, o).1, "0.013");
        // Binary-exact ties go to even: 0.125 at 0.01 → 0.12, 0.375 → 0.38.
        assert_eq!(round_to_exponent(0.125, -2).unwrap().to_string(), "0.12");
        assert_eq!(round_to_exponent(0.375, -2).unwrap().to_string(), "0.38");
        // Decimal tie hidden by binary representation (2.675 is 2.67499999...): absorbed.
        assert_eq!(round_to_exponent(2.675, -2).unwrap().to_string(), "2.68");
        let one = ReportOptions {
            significant_digits: 1,
            ..ReportOptions::default()
        };
        assert_eq!(report(7.77, 0.23, one), ("7.8".into(), "0.3".into(), false));
    }

    #[test]
    fn cmc_floor() {
        let o = ReportOptions {
            cmc: Some(0.02),
            ..ReportOptions::default()
        };
        assert_eq!(
            report(1.23456, 0.012, o),
            ("1.235".into(), "0.020".into(), true)
        );
        assert_eq!(
            report(1.23446, 0.025, o),
            ("1.234".into(), "0.025".into(), false)
        );
        // Nearest rounding would report 0.012 < CMC 0.0123: rounded up to 0.013 instead.
        let n = ReportOptions {
            mode: RoundingMode::HalfEven,
            cmc: Some(0.0123),
            ..ReportOptions::default()
        };
        let (_, u, flag) = report(1.0, 0.01231, n);
        assert_eq!((u.as_str(), flag), ("0.013", true));
        // Zero computed uncertainty is allowed only with a CMC.
        assert_eq!(report(5.0, 0.0, o).1, "0.020");
        assert!(round_for_report(5.0, 0.0, &ReportOptions::default()).is_err());
        assert!(round_for_report(f64::NAN, 0.1, &ReportOptions::default()).is_err());
    }

    #[test]
    fn decimal_text_forms() {
        let d = |m, e| RoundedDecimal {
            mantissa: m,
            exponent: e,
        };
        assert_eq!(d(12, -3).to_string(), "0.012");
        assert_eq!(d(-1235, -2).to_string(), "-12.35");
        assert_eq!(d(12, 2).to_string(), "1200");
        assert_eq!(d(0, -3).to_string(), "0.000");
        assert_eq!(d(12, -3).to_f64(), 0.012);
        assert_eq!(d(12, -3).significant_digits(), 2);
        assert_eq!(
            round_significant(9.96, 2, RoundingMode::HalfEven).unwrap(),
            d(10, 0)
        );
        assert_eq!(
            round_significant(0.000999, 2, RoundingMode::Up).unwrap(),
            d(10, -4)
        );
        assert!(round_significant(1e-320, 2, RoundingMode::Up).is_err());
        assert!(round_significant(1e300, 2, RoundingMode::Up).is_err());
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(256))]

        #[test]
        fn rounded_up_uncertainty_is_never_smaller_and_has_two_digits(
            mant in 1.0f64..10.0, exp in -9i32..12, value in -1e3f64..1e3,
        ) {
            let u = mant * 10f64.powi(exp);
            let r = round_for_report(value, u, &ReportOptions::default()).unwrap();
            let ru = r.expanded_uncertainty.to_f64();
            prop_assert!(ru >= u * (1.0 - SNAP_REL_EPS), "{} < {}", ru, u);
            prop_assert!(r.expanded_uncertainty.significant_digits() <= 2);
            prop_assert!(ru <= u * 1.11 + 1e-300, "{} too large for {}", ru, u);
            prop_assert_eq!(r.value.exponent, r.expanded_uncertainty.exponent);
        }

        #[test]
        fn reported_uncertainty_never_below_cmc(
            u in 1e-6f64..10.0, cmc in 1e-6f64..10.0, half_even in proptest::bool::ANY,
        ) {
            let opts = ReportOptions {
                mode: if half_even { RoundingMode::HalfEven } else { RoundingMode::Up },
                cmc: Some(cmc),
                ..ReportOptions::default()
            };
            let r = round_for_report(1.0, u, &opts).unwrap();
            prop_assert!(r.expanded_uncertainty.to_f64() >= cmc);
            prop_assert!(r.expanded_uncertainty.significant_digits() <= 2);
            if u < cmc {
                prop_assert!(r.cmc_floor_applied);
            }
        }
    }
}
