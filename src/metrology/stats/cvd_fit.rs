//! Callendar-Van Dusen fit of a platinum resistance thermometer.
//!
//! Model (t in °C, R in Ω):
//! `R(t) = R0 [1 + A t + B t² + C (t − 100 °C) t³]`, the C term for t < 0 °C only.
//! It is linear in `p = (R0, R0·A, R0·B, R0·C)`: the fit solves for `p` by the refined QR
//! least squares of [`super::lsq`] in the scaled variable `τ = t / s` (s a power of two,
//! exact), then converts to `(R0, A, B, C)` with the covariance propagated through the
//! Jacobian of `A = p1/p0`, `B = p2/p0`, `C = p3/p0`.
//!
//! # Reference
//! IEC 60751:2008, clause 4.2 (Callendar-Van Dusen equations; clause number from memory);
//! JCGM 100:2008 5.2.2 (propagation with covariance).

use nalgebra::DMatrix;
use statrs::distribution::{ChiSquared, ContinuousCDF};

use super::dd::Dd;
use super::error::{StatsError, check_all_finite};
use super::lsq::{
    ChiSquareCheck, CovarianceConvention, DesignDd, distinct_count, pow2_at_least, row_scales,
    solve_linear,
};

/// Whether the C coefficient is fitted.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum CTerm {
    /// Fit C when at least one point is below 0 °C.
    #[default]
    Auto,
    /// Never fit C (C reported as 0 with zero uncertainty).
    Exclude,
}

/// Options of [`fit_cvd`].
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct CvdOptions {
    /// C term selection.
    pub c_term: CTerm,
    /// Covariance convention (see [`CovarianceConvention`]).
    pub covariance: CovarianceConvention,
}

/// Result of a Callendar-Van Dusen fit.
#[derive(Debug, Clone, PartialEq)]
pub struct CvdFit {
    /// R0 in Ω.
    pub r0: f64,
    /// A in °C⁻¹.
    pub a: f64,
    /// B in °C⁻².
    pub b: f64,
    /// C in °C⁻⁴ (0 when not fitted).
    pub c: f64,
    /// Whether C was fitted.
    pub c_fitted: bool,
    /// Covariance of (R0, A, B[, C]) in the units above (3×3 or 4×4).
    pub covariance: DMatrix<f64>,
    /// Standard uncertainties of (R0, A, B[, C]).
    pub standard_uncertainties: Vec<f64>,
    /// Residuals R_i − R(t_i) in Ω.
    pub residuals_ohm: Vec<f64>,
    /// Residuals expressed in temperature, (R_i − R(t_i)) / (dR/dt)(t_i), in °C.
    pub residuals_celsius: Vec<f64>,
    /// s = √(Σ w r² / (n − m)); `None` when n = m.
    pub residual_std_dev: Option<f64>,
    /// Degrees of freedom n − m.
    pub dof: usize,
    /// Condition number of the scaled, equilibrated weighted design.
    pub condition_number: f64,
    /// Whether the covariance was scaled by s².
    pub covariance_scaled: bool,
    /// χ² check (convention `Unscaled` only).
    pub chi_square: Option<ChiSquareCheck>,
    /// Covariance of the linear parameters (R0, R0A, R0B[, R0C]).
    linear_cov: Vec<Dd>,
    linear: Vec<Dd>,
}

fn basis(t: f64, with_c: bool) -> [Dd; 4] {
    let td = Dd::from_f64(t);
    let t2 = td * td;
    let c_term = if with_c && t < 0.0 {
        Dd::sum_of(t, -100.0) * t2 * td
    } else {
        Dd::ZERO
    };
    [Dd::ONE, td, t2, c_term]
}

/// Fits R0, A, B (and C) of the Callendar-Van Dusen equation to (t_i, R_i) pairs.
///
/// * `t`: temperatures in °C (ITS-90), `r`: resistances in Ω, `weights`: optional
///   w_i = 1/u(R_i)² in Ω⁻².
/// * C is fitted when any point is below 0 °C (unless [`CTerm::Exclude`]).
/// * Needs at least 3 (4 with C) distinct temperatures, and one more point with the
///   `ScaledByResidual` convention.
///
/// # Reference
/// IEC 60751:2008 (equation form and the C term below 0 °C); JCGM 100:2008 5.2.2 and H.3
/// (least squares and covariance).
pub fn fit_cvd(
    t: &[f64],
    r: &[f64],
    weights: Option<&[f64]>,
    options: &CvdOptions,
) -> Result<CvdFit, StatsError> {
    let n = t.len();
    if r.len() != n {
        return Err(StatsError::LengthMismatch {
            what: "r".into(),
            expected: n,
            got: r.len(),
        });
    }
    check_all_finite("t", t)?;
    check_all_finite("r", r)?;
    let scales = row_scales(weights, n)?;
    let with_c = options.c_term == CTerm::Auto && t.iter().any(|&v| v < 0.0);
    let m = if with_c { 4 } else { 3 };
    let scaled = options.covariance == CovarianceConvention::ScaledByResidual;
    let model = if with_c {
        "the Callendar-Van Dusen fit with C"
    } else {
        "the Callendar-Van Dusen fit without C"
    };
    if n < m {
        return Err(StatsError::TooFewPoints {
            model: model.into(),
            need: m,
            got: n,
        });
    }
    if scaled && n == m {
        return Err(StatsError::TooFewPoints {
            model: format!("{model}, covariance scaled by the residual,"),
            need: m + 1,
            got: n,
        });
    }
    if !scaled && weights.is_none() {
        return Err(StatsError::invalid(
            "covariance",
            "the unscaled convention needs the point uncertainties (weights)",
        ));
    }
    let distinct = distinct_count(t.iter().copied());
    if distinct < m {
        return Err(StatsError::RankDeficient {
            rank: distinct,
            columns: m,
            detail: format!("only {distinct} distinct temperatures for {m} coefficients"),
        });
    }
    // Scale t by a power of two so that |τ| <= 1: column j is multiplied by s^-k (exact).
    let s = pow2_at_least(t.iter().fold(0.0f64, |acc, v| acc.max(v.abs())));
    let col_pow = [0, 1, 2, 4];
    let mut a = Vec::with_capacity(n * m);
    for (&ti, &wi) in t.iter().zip(&scales) {
        let phi = basis(ti, with_c);
        for j in 0..m {
            a.push(phi[j].mul_f64(s.powi(-col_pow[j])).mul_f64(wi));
        }
    }
    let b: Vec<Dd> = r
        .iter()
        .zip(&scales)
        .map(|(&ri, &wi)| Dd::prod_of(ri, wi))
        .collect();
    let sol = solve_linear(&DesignDd { n, m, a, b })?;
    let dof = n - m;
    let s2 = (dof > 0).then(|| sol.ssr.mul_f64(1.0 / dof as f64));
    let factor = match (scaled, s2) {
        (true, Some(v)) => v,
        _ => Dd::ONE,
    };
    // Undo the τ scaling: p_j = β_j s^-k_j.
    let unscale: Vec<f64> = (0..m).map(|j| s.powi(-col_pow[j])).collect();
    let linear: Vec<Dd> = (0..m).map(|j| sol.coef[j].mul_f64(unscale[j])).collect();
    let linear_cov: Vec<Dd> = (0..m * m)
        .map(|q| {
            let (i, j) = (q / m, q % m);
            (sol.cov_unit[q] * factor).mul_f64(unscale[i] * unscale[j])
        })
        .collect();

    let r0 = linear[0];
    let ratio = |j: usize| linear[j].div(r0).to_f64();
    let (a_c, b_c) = (ratio(1), ratio(2));
    let c_c = if with_c { ratio(3) } else { 0.0 };
    let r0f = r0.to_f64();
    if r0f == 0.0 {
        return Err(StatsError::invalid("r", "fitted R0 is zero"));
    }
    // Jacobian of (R0, A, B, C) with respect to (p0, p1, p2, p3).
    let params = [r0f, a_c, b_c, c_c];
    let jac = DMatrix::from_fn(m, m, |i, j| match (i, j) {
        (0, 0) => 1.0,
        (i, 0) => -params[i] / r0f,
        (i, j) if i == j => 1.0 / r0f,
        _ => 0.0,
    });
    let vp = DMatrix::from_fn(m, m, |i, j| linear_cov[i * m + j].to_f64());
    let covariance = &jac * vp * jac.transpose();
    let standard_uncertainties: Vec<f64> =
        (0..m).map(|i| covariance[(i, i)].max(0.0).sqrt()).collect();

    let mut residuals_ohm = Vec::with_capacity(n);
    let mut residuals_celsius = Vec::with_capacity(n);
    for (&ti, &ri) in t.iter().zip(r) {
        let phi = basis(ti, with_c);
        let rhat = (0..m).fold(Dd::ZERO, |acc, j| acc + linear[j] * phi[j]);
        let res = (Dd::from_f64(ri) - rhat).to_f64();
        residuals_ohm.push(res);
        residuals_celsius.push(res / slope(r0f, a_c, b_c, c_c, ti));
    }
    let all_finite = params
        .iter()
        .chain(&standard_uncertainties)
        .chain(&residuals_celsius)
        .chain(covariance.iter())
        .all(|v| v.is_finite());
    if !all_finite {
        return Err(super::lsq::overflow_failure());
    }
    let ssr = sol.ssr.to_f64();
    let chi_square = if scaled {
        None
    } else {
        let (birge_ratio, p_value) = if dof > 0 {
            let p = ChiSquared::new(dof as f64)
                .map(|d| d.sf(ssr))
                .map_err(|e| StatsError::NumericalFailure {
                    what: format!("chi-square distribution: {e}"),
                })?;
            (Some((ssr / dof as f64).sqrt()), Some(p))
        } else {
            (None, None)
        };
        Some(ChiSquareCheck {
            chi_square: ssr,
            dof,
            birge_ratio,
            p_value,
        })
    };
    Ok(CvdFit {
        r0: r0f,
        a: a_c,
        b: b_c,
        c: c_c,
        c_fitted: with_c,
        covariance,
        standard_uncertainties,
        residuals_ohm,
        residuals_celsius,
        residual_std_dev: s2.map(|v| v.sqrt().to_f64()),
        dof,
        condition_number: sol.condition_number,
        covariance_scaled: scaled,
        chi_square,
        linear_cov,
        linear,
    })
}

/// dR/dt of the Callendar-Van Dusen equation in Ω/°C.
fn slope(r0: f64, a: f64, b: f64, c: f64, t: f64) -> f64 {
    let c_part = if t < 0.0 {
        c * (4.0 * t * t * t - 300.0 * t * t)
    } else {
        0.0
    };
    r0 * (a + 2.0 * b * t + c_part)
}

impl CvdFit {
    /// Resistance R(t) in Ω at `t` in °C, with its standard uncertainty from the fitted
    /// covariance, u = √(gᵀ V g) with g = (1, t, t², (t − 100) t³ for t < 0, else 0).
    ///
    /// # Reference
    /// IEC 60751:2008 (equation); JCGM 100:2008 5.2.2 (propagation).
    pub fn resistance(&self, t: f64) -> (f64, f64) {
        let m = self.linear.len();
        let phi = basis(t, self.c_fitted);
        let value = (0..m).fold(Dd::ZERO, |acc, j| acc + self.linear[j] * phi[j]);
        let mut var = Dd::ZERO;
        for i in 0..m {
            for j in 0..m {
                var = var + phi[i] * self.linear_cov[i * m + j] * phi[j];
            }
        }
        (value.to_f64(), var.sqrt().to_f64().abs())
    }

    /// Sensitivity dR/dt in Ω/°C at `t` (°C).
    ///
    /// # Reference
    /// Derivative of the IEC 60751:2008 equation.
    pub fn sensitivity(&self, t: f64) -> f64 {
        slope(self.r0, self.a, self.b, self.c, t)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // IEC 60751:2008 nominal Pt100 constants (tests/data provenance: refdata prt.json, read
    // from t-d-i.co.uk and tinkererway.dev quoting IEC 60751 Ed. 2 2008-07).
    const R0: f64 = 100.0;
    const A: f64 = 3.9083e-3;
    const B: f64 = -5.775e-7;
    const C: f64 = -4.183e-12;
    /// Required relative recovery of the nominal coefficients (brief: 1e-10).
    const RECOVERY_REL_TOL: f64 = 1e-10;

    fn nominal(t: f64) -> f64 {
        let c = if t < 0.0 {
            C * (t - 100.0) * t * t * t
        } else {
            0.0
        };
        R0 * (1.0 + A * t + B * t * t + c)
    }

    #[test]
    fn recovers_iec_60751_pt100_with_c() {
        let t: Vec<f64> = (-20..=85).map(|k| f64::from(k) * 10.0).collect();
        let r: Vec<f64> = t.iter().map(|&v| nominal(v)).collect();
        let fit = fit_cvd(&t, &r, None, &CvdOptions::default()).unwrap();
        assert!(fit.c_fitted);
        let rel = |g: f64, w: f64| ((g - w) / w).abs();
        assert!(rel(fit.r0, R0) < RECOVERY_REL_TOL, "R0 {}", fit.r0);
        assert!(rel(fit.a, A) < RECOVERY_REL_TOL, "A {:e}", fit.a);
        assert!(rel(fit.b, B) < RECOVERY_REL_TOL, "B {:e}", fit.b);
        assert!(rel(fit.c, C) < RECOVERY_REL_TOL, "C {:e}", fit.c);
        // Generated data carry only float rounding (~1e-14 Ω).
        assert!(fit.residuals_ohm.iter().all(|r| r.abs() < 1e-12));
        assert!(fit.residuals_celsius.iter().all(|r| r.abs() < 1e-11));
        // Check values at 100 °C and -200 °C: 138.5055 Ω and 18.52008 Ω (refdata prt.json,
        // computed from the constants; tables print 138.51 Ω and 18.52 Ω).
        assert!((fit.resistance(100.0).0 - 138.5055).abs() < 1e-9);
        assert!((fit.resistance(-200.0).0 - 18.52008).abs() < 1e-9);
        assert_eq!(fit.covariance.nrows(), 4);
    }

    #[test]
    fn recovers_pt100_above_zero_without_c_and_reports_celsius_residuals() {
        let t: Vec<f64> = vec![0.0, 50.0, 100.0, 150.0, 200.0, 300.0, 420.0];
        let mut r: Vec<f64> = t.iter().map(|&v| nominal(v)).collect();
        // Perturb one point by +1 mΩ: the °C residual is about 1 mΩ / (dR/dt).
        r[3] += 1e-3;
        let fit = fit_cvd(&t, &r, None, &CvdOptions::default()).unwrap();
        assert!(!fit.c_fitted && fit.c == 0.0);
        assert_eq!(fit.standard_uncertainties.len(), 3);
        assert_eq!(fit.dof, 4);
        for (ro, rc) in fit.residuals_ohm.iter().zip(&fit.residuals_celsius) {
            let ratio = ro / rc;
            // dR/dt of a Pt100 between 0 and 420 °C is 0.34..0.39 Ω/°C (IEC 60751 constants).
            assert!(ratio > 0.33 && ratio < 0.40, "{ratio}");
        }
        assert!(fit.residuals_ohm[3] > 5e-4);
        let (_, u) = fit.resistance(150.0);
        assert!(u > 0.0 && u < 1e-3);
        assert!((fit.a - A).abs() / A < 1e-4);
    }

    #[test]
    fn weighted_fit_with_known_uncertainties() {
        // Nominal Pt100 plus a deterministic ±0.5 mΩ pattern; u(R) = 1 mΩ for every point.
        let t: Vec<f64> = (-4..=8).map(|k| f64::from(k) * 50.0).collect();
        let r: Vec<f64> = t
            .iter()
            .enumerate()
            .map(|(i, &v)| nominal(v) + if i % 2 == 0 { 5e-4 } else { -5e-4 })
            .collect();
        let w = crate::metrology::stats::lsq::weights_from_uncertainties(&[1e-3; 13]).unwrap();
        let known = CvdOptions {
            covariance: CovarianceConvention::Unscaled,
            ..CvdOptions::default()
        };
        let fit = fit_cvd(&t, &r, Some(&w), &known).unwrap();
        let chi = fit.chi_square.unwrap();
        assert_eq!(chi.dof, 9);
        // χ² = Σ (r_i / 1 mΩ)² and s² = χ²/ν (definitions); the scaled convention multiplies
        // the covariance by exactly that factor.
        let chi2: f64 = fit.residuals_ohm.iter().map(|r| (r / 1e-3).powi(2)).sum();
        assert!((chi.chi_square - chi2).abs() < 1e-9 * chi2);
        assert!(chi.p_value.unwrap() > 0.0 && chi.p_value.unwrap() <= 1.0);
        let scaled = fit_cvd(&t, &r, Some(&w), &CvdOptions::default()).unwrap();
        let s2 = chi.chi_square / 9.0;
        for i in 0..4 {
            let ratio = scaled.covariance[(i, i)] / fit.covariance[(i, i)];
            assert!((ratio / s2 - 1.0).abs() < 1e-9, "{i}: {ratio} vs {s2}");
        }
        assert!(
            fit_cvd(&t, &r, None, &known).is_err(),
            "unscaled needs weights"
        );
    }

    #[test]
    fn cvd_refuses_too_few_points_and_nan() {
        let e = fit_cvd(
            &[-50.0, 0.0, 100.0],
            &[80.0, 100.0, 138.0],
            None,
            &CvdOptions::default(),
        )
        .unwrap_err();
        assert_eq!(
            e.to_string(),
            "the Callendar-Van Dusen fit with C needs at least 4 points, got 3"
        );
        let e = fit_cvd(
            &[0.0, 100.0, 200.0, 300.0],
            &[100.0, f64::NAN, 175.0, 212.0],
            None,
            &CvdOptions::default(),
        )
        .unwrap_err();
        assert_eq!(e.to_string(), "non-finite input: r[1] is NaN");
        let e = fit_cvd(
            &[0.0, 0.0, 100.0, 100.0],
            &[100.0, 100.0, 138.0, 138.0],
            None,
            &CvdOptions::default(),
        )
        .unwrap_err();
        assert!(matches!(e, StatsError::RankDeficient { rank: 2, .. }));
    }
}
