//! Coverage factors k_p(ν) from the Student t distribution (normal for ν = ∞).
//!
//! Three regimes:
//! * ν = ∞: normal quantile `k = Φ⁻¹((1 + p)/2)` (statrs).
//! * ν ≤ [`STATRS_MAX_NU`]: statrs `StudentsT::inverse_cdf` (incomplete-beta inversion);
//!   checked against scipy to ~1e-12 relative over the test grid (see tests).
//! * ν > [`STATRS_MAX_NU`]: statrs 0.19 loses accuracy there (it returns 1.8266 instead of
//!   1.95996 at ν = 1e7, p = 0.95, and does not terminate for ν = ∞), so the Cornish-Fisher
//!   expansion of the t quantile in powers of 1/ν is used (Abramowitz & Stegun 26.7.5,
//!   coefficients written from memory and verified numerically against scipy in the tests;
//!   at ν ≥ 1e3 its truncation error is below 1e-12 even for p = 99.73 %).
//!
//! Domain: [`MIN_P`] ≤ p ≤ [`MAX_P`] and ν ≥ [`MIN_NU`]. Outside it statrs' inversion was seen
//! to fail (e.g. ν = 0.5, p = 0.9999 gives 9.2e7 instead of 4.1e7; p = 1e-9 is wrong at every
//! ν), and coverage factors there have no use in calibration; such arguments are refused.

use statrs::distribution::{ContinuousCDF, Normal, StudentsT};

use super::error::StatsError;

/// Coverage probability of the interval ±1σ of a normal distribution, erf(1/√2).
pub const P_K1: f64 = 0.6826894921370859;
/// Coverage probability of ±2σ of a normal distribution, erf(2/√2) ("95.45 %").
pub const P_K2: f64 = 0.9544997361036416;
/// Coverage probability of ±3σ of a normal distribution, erf(3/√2) ("99.73 %").
pub const P_K3: f64 = 0.9973002039367398;

/// Largest ν for which statrs' Student-t inverse CDF is used.
pub const STATRS_MAX_NU: f64 = 1e4;
/// Smallest accepted coverage probability.
pub const MIN_P: f64 = 0.5;
/// Largest accepted coverage probability (k ≈ 3.89 for ν = ∞).
pub const MAX_P: f64 = 0.9999;
/// Smallest accepted number of degrees of freedom (JCGM 100 Table G.2 starts at ν = 1).
pub const MIN_NU: f64 = 1.0;

/// Probability content of ±k standard deviations of the normal distribution, erf(k/√2)
/// (k ≥ 0, dimensionless; NaN for NaN input).
///
/// Evaluated with the all-positive series erf(x) = 2/√π e^(−x²) Σ 2ⁿ x^(2n+1) / (2n+1)!!,
/// accurate to a few ulp for |x| ≤ 6, and 1 beyond (erfc(6) ≈ 2e-17). (statrs 0.19 `erf`
/// is off by up to ~3e-11 near x = 0.7, too coarse for the p = erf(k/√2) constants.)
///
/// # Reference
/// JCGM 100:2008 G.1.3 and Table G.1 (normal coverage probabilities); the series is
/// Abramowitz & Stegun 7.1.6 (from memory).
pub fn normal_coverage_probability(k: f64) -> f64 {
    let x = (k / std::f64::consts::SQRT_2).abs();
    if x.is_nan() {
        return f64::NAN;
    }
    if x > 6.0 {
        return 1.0;
    }
    let x2 = x * x;
    let mut term = x;
    let mut sum = x;
    let mut n = 0.0;
    while term > sum * 1e-18 {
        n += 1.0;
        term *= 2.0 * x2 / (2.0 * n + 1.0);
        sum += term;
    }
    (2.0 / std::f64::consts::PI.sqrt() * (-x2).exp() * sum).min(1.0)
}

fn check_p(p: f64) -> Result<(), StatsError> {
    if (MIN_P..=MAX_P).contains(&p) {
        Ok(())
    } else {
        Err(StatsError::invalid(
            "coverage probability",
            format!("{p} is outside the supported range {MIN_P}..={MAX_P}"),
        ))
    }
}

fn standard_normal() -> Result<Normal, StatsError> {
    Normal::new(0.0, 1.0).map_err(|e| StatsError::NumericalFailure {
        what: format!("normal distribution: {e}"),
    })
}

/// Cornish-Fisher expansion of the two-sided t quantile (A&S 26.7.5, from memory).
fn t_large_nu(x: f64, nu: f64) -> f64 {
    let x2 = x * x;
    let g1 = (x2 + 1.0) * x / 4.0;
    let g2 = ((5.0 * x2 + 16.0) * x2 + 3.0) * x / 96.0;
    let g3 = (((3.0 * x2 + 19.0) * x2 + 17.0) * x2 - 15.0) * x / 384.0;
    let g4 = ((((79.0 * x2 + 776.0) * x2 + 1482.0) * x2 - 1920.0) * x2 - 945.0) * x / 92160.0;
    let v = 1.0 / nu;
    x + v * (g1 + v * (g2 + v * (g3 + v * g4)))
}

/// Coverage factor `k_p(ν) = t_{(1+p)/2}(ν)`: the two-sided Student-t quantile for coverage
/// probability `p` (0.5 ≤ p ≤ 0.9999) and `nu` ≥ 1 degrees of freedom (`f64::INFINITY` for the
/// normal distribution). Non-integer ν (Welch-Satterthwaite) is used as is. Dimensionless.
///
/// # Reference
/// JCGM 100:2008 G.3.4 and Table G.2 (t-distribution coverage factors), G.4.1; for large ν,
/// Abramowitz & Stegun (1964) 26.7.5.
pub fn coverage_factor(p: f64, nu: f64) -> Result<f64, StatsError> {
    check_p(p)?;
    if nu.is_nan() || nu < MIN_NU {
        return Err(StatsError::invalid(
            "degrees of freedom",
            format!("{nu} is below {MIN_NU}: no coverage factor is defined here"),
        ));
    }
    let q = 0.5 * (1.0 + p);
    let x = standard_normal()?.inverse_cdf(q);
    if nu.is_infinite() {
        return Ok(x);
    }
    if nu > STATRS_MAX_NU {
        return Ok(t_large_nu(x, nu));
    }
    let dist = StudentsT::new(0.0, 1.0, nu).map_err(|e| StatsError::NumericalFailure {
        what: format!("Student t distribution: {e}"),
    })?;
    let k = dist.inverse_cdf(q);
    if k.is_finite() && k > 0.0 {
        Ok(k)
    } else {
        Err(StatsError::NumericalFailure {
            what: format!("Student t quantile for p = {p}, nu = {nu}"),
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Relative agreement required with scipy (incomplete-beta inversion in statrs).
    const SCIPY_REL_TOL: f64 = 1e-10;

    const SCIPY: &str = include_str!(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/data/t_quantiles_scipy.csv"
    ));
    const TABLE: &str = include_str!(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/data/coverage_factors.csv"
    ));

    fn parse_nu(s: &str) -> f64 {
        if s == "inf" {
            f64::INFINITY
        } else {
            s.parse().unwrap()
        }
    }

    #[test]
    fn agrees_with_scipy_over_the_grid() {
        // tests/data/t_quantiles_scipy.csv: scipy 1.17.1 stats.t.ppf / stats.norm.ppf (see
        // t_quantiles_gen.py): nu = 1..50, 100, 1e3..1e9, fractional nu, infinity;
        // p = 0.5, 68.27 %, 90 %, 95 %, 95.45 %, 99 %, 99.73 %, 99.99 %.
        let mut worst: f64 = 0.0;
        let mut rows = 0;
        for line in SCIPY.lines().filter(|l| !l.starts_with('#')) {
            let f: Vec<&str> = line.split(',').collect();
            let nu = parse_nu(f[0]);
            let p: f64 = f[2].parse().unwrap();
            let want: f64 = f[3].parse().unwrap();
            let got = coverage_factor(p, nu).unwrap();
            let rel = ((got - want) / want).abs();
            assert!(rel < SCIPY_REL_TOL, "nu={nu} p={p}: {got} vs scipy {want}");
            worst = worst.max(rel);
            rows += 1;
        }
        assert_eq!(rows, 552);
        eprintln!("worst relative deviation from scipy: {worst:e}");
    }

    #[test]
    fn large_nu_expansion_and_statrs_agree_at_the_switch() {
        // Continuity check at the switch: both methods must agree closely at nu = 1e4.
        for p in [P_K1, 0.9, 0.95, P_K2, 0.99, P_K3] {
            let x = standard_normal().unwrap().inverse_cdf(0.5 * (1.0 + p));
            let cf = t_large_nu(x, STATRS_MAX_NU);
            let st = coverage_factor(p, STATRS_MAX_NU).unwrap();
            assert!(((cf - st) / st).abs() < 1e-11, "p={p}: {cf} vs {st}");
        }
        // The case that statrs 0.19 gets wrong (1.8266): nu = 1e7, p = 0.95.
        // scipy 1.17.1: stats.t.ppf(0.975, 1e7) = 1.959964221767205.
        let k = coverage_factor(0.95, 1e7).unwrap();
        assert!((k - 1.959964221767205).abs() < 1e-14);
    }

    #[test]
    fn published_table_to_printed_digits() {
        // tests/data/coverage_factors.csv: NIST TN 1297 Table B.1 (= JCGM 100 Table G.2, the
        // identity from memory per the refdata README). 68.27/95.45/99.73 % mean erf(k/√2).
        // Known exception: nu = 35, p = 90 % prints 1.70 although t = 1.68957.
        let mut checked = 0;
        for line in TABLE.lines().skip(1) {
            let f: Vec<&str> = line.split(',').collect();
            let nu = parse_nu(f[0]);
            let p = match f[1] {
                "68.27" => P_K1,
                "95.45" => P_K2,
                "99.73" => P_K3,
                other => other.parse::<f64>().unwrap() / 100.0,
            };
            let printed = f[2];
            let decimals = printed.split_once('.').map_or(0, |(_, d)| d.len()) as i32;
            let published: f64 = printed.parse().unwrap();
            let k = coverage_factor(p, nu).unwrap();
            let half_unit = 0.5 * 10f64.powi(-decimals);
            if nu == 35.0 && f[1] == "90" {
                assert!((k - 1.68957).abs() < 1e-5, "known misprint row");
                assert!((k - published).abs() > half_unit);
            } else {
                assert!(
                    (k - published).abs() <= half_unit + 1e-12,
                    "nu={nu} p={}: {k} vs printed {printed}",
                    f[1]
                );
            }
            checked += 1;
        }
        assert_eq!(checked, 168);
    }

    #[test]
    fn normal_limits_and_errors() {
        // k = 2 for P_K2 and 1.959963984540054 for 95 % (scipy 1.17.1 stats.norm.ppf(0.975)).
        assert!((coverage_factor(P_K2, f64::INFINITY).unwrap() - 2.0).abs() < 1e-14);
        assert!((coverage_factor(0.95, f64::INFINITY).unwrap() - 1.959963984540054).abs() < 1e-14);
        // With p = 99.73 % taken literally, nu = 1 gives 235.78 (refdata README), not 235.80.
        let k = coverage_factor(0.9973, 1.0).unwrap();
        assert!((k - 235.78).abs() < 0.005, "{k}");
        // P_K1..P_K3: mpmath 1.3.0 erf(k/sqrt(2)) at 50 digits, rounded to binary64.
        assert!((normal_coverage_probability(1.0) - P_K1).abs() < 4e-16);
        assert!((normal_coverage_probability(2.0) - P_K2).abs() < 4e-16);
        assert!((normal_coverage_probability(3.0) - P_K3).abs() < 4e-16);
        assert!(coverage_factor(1.0, 5.0).is_err());
        assert!(coverage_factor(0.99999, 5.0).is_err());
        assert!(coverage_factor(0.4, 5.0).is_err());
        assert!(coverage_factor(0.95, 0.0).is_err());
        assert_eq!(
            coverage_factor(0.95, 0.78).unwrap_err().to_string(),
            "invalid degrees of freedom: 0.78 is below 1: no coverage factor is defined here"
        );
        assert!(coverage_factor(f64::NAN, 5.0).is_err());
        assert!(coverage_factor(0.95, f64::NAN).is_err());
    }
}
