//! Weighted linear least squares by Householder QR with double-double iterative refinement,
//! and the polynomial fit built on it.
//!
//! # Method
//! * The polynomial is fitted in the centred and scaled variable `z = (x - xm) / xs`, where
//!   `xm` is the mid-range of `x` and `xs` a power of two not smaller than the half-range, so
//!   `|z| <= 1`. `x - xm` is formed exactly as a double-double (TwoSum) and the division by a
//!   power of two is exact, so the problem solved is exactly the user's problem.
//!   Without intercept the variable is only scaled (`xm = 0`): centring would introduce the
//!   constant term that the model excludes.
//! * The design matrix columns are equilibrated by powers of two (exact).
//! * Householder QR (nalgebra) of the rounded design; the normal equations are never formed.
//! * The solution is refined on the augmented system `[I A; Aᵀ 0] [r; c] = [b; 0]`
//!   (Björck's refinement): the residuals `b - r - A c` and `-Aᵀ r` are evaluated with the
//!   design, the data and the iterates held in double-double, corrections are solved with the
//!   QR factors. The same refinement applied to right-hand sides `[0; e_j]` gives the columns of
//!   `(AᵀA)⁻¹`, i.e. the covariance starts from `R⁻¹R⁻ᵀ` (triangular solves) and is refined.
//! * Coefficients and covariance are converted from `z` to `x` with the exact binomial
//!   transformation `c_x = T c_z`, `V_x = T V_z Tᵀ`, evaluated in double-double.
//! * The residual sum of squares is accumulated in double-double.
//!
//! # Reference
//! Å. Björck, "Iterative refinement of linear least squares solutions I", BIT 7 (1967);
//! G. H. Golub, C. F. Van Loan, *Matrix Computations*, 4th ed., ch. 5 (QR least squares and
//! its refinement; citation details from memory); JCGM 100:2008 H.3 (calibration straight
//! line).

use nalgebra::{DMatrix, DVector};
use statrs::distribution::{ChiSquared, ContinuousCDF};

use super::dd::Dd;
use super::error::{StatsError, check_all_finite};

/// Highest polynomial degree accepted by [`fit_polynomial`].
pub const MAX_DEGREE: usize = 10;

/// Maximum number of refinement steps per right-hand side.
const MAX_REFINE_STEPS: usize = 20;
/// Refinement stops once the correction is below this fraction of the solution (close to the
/// double-double unit roundoff, 2^-104 ≈ 5e-32).
const REFINE_STOP: f64 = 1e-30;

/// How the coefficient covariance is obtained.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum CovarianceConvention {
    /// Point variances unknown (or known only up to a common factor): the covariance is
    /// `s² (AᵀWA)⁻¹` with `s² = Σ w r² / (n - m)`. Requires `n > m`.
    #[default]
    ScaledByResidual,
    /// Point standard uncertainties known (`w_i = 1/u_i²`): the covariance is `(AᵀWA)⁻¹`, and
    /// the chi-square consistency check is reported. Requires weights.
    Unscaled,
}

/// Options of [`fit_polynomial`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct PolyOptions {
    /// Polynomial degree, 0..=10.
    pub degree: usize,
    /// `true`: `y = c0 + c1 x + ...`; `false`: `y = c1 x + ... + c_d x^d` (no constant term).
    pub intercept: bool,
    /// Covariance convention.
    pub covariance: CovarianceConvention,
}

impl PolyOptions {
    /// Degree `degree`, with intercept, covariance scaled by the residual.
    ///
    /// # Reference
    /// JCGM 100:2008 H.3 (unweighted fit, covariance from the residual scatter).
    pub fn new(degree: usize) -> Self {
        PolyOptions {
            degree,
            intercept: true,
            covariance: CovarianceConvention::ScaledByResidual,
        }
    }
}

/// Chi-square consistency check for fits with known point uncertainties.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ChiSquareCheck {
    /// χ² = Σ w_i r_i² (dimensionless).
    pub chi_square: f64,
    /// Degrees of freedom n − m.
    pub dof: usize,
    /// Birge ratio √(χ²/ν); `None` when ν = 0.
    pub birge_ratio: Option<f64>,
    /// Probability of a χ² at least as large as observed, P(χ²_ν ≥ χ²obs); `None` when ν = 0.
    pub p_value: Option<f64>,
}

/// A residual larger than the allowed expanded uncertainty of its point.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ResidualFlag {
    /// Index of the point.
    pub index: usize,
    /// Residual y − ŷ (y units).
    pub residual: f64,
    /// Expanded uncertainty it was compared with (y units).
    pub limit: f64,
}

/// Result of a weighted polynomial least-squares fit.
#[derive(Debug, Clone, PartialEq)]
pub struct PolyFit {
    /// Degree of the polynomial.
    pub degree: usize,
    /// Whether the constant term was fitted.
    pub intercept: bool,
    /// Power of x multiplying each coefficient: `0..=d` with intercept, `1..=d` without.
    pub powers: Vec<u32>,
    /// Coefficients in the user's variable x (y units / x units^power).
    pub coefficients: Vec<f64>,
    /// Covariance matrix of the coefficients (same ordering).
    pub covariance: DMatrix<f64>,
    /// Standard uncertainties (square roots of the covariance diagonal).
    pub standard_uncertainties: Vec<f64>,
    /// Fitted values ŷ_i (y units).
    pub fitted: Vec<f64>,
    /// Residuals y_i − ŷ_i (y units, unweighted).
    pub residuals: Vec<f64>,
    /// s = √(Σ w r² / (n − m)) (y units when unweighted); `None` when n = m.
    pub residual_std_dev: Option<f64>,
    /// Degrees of freedom n − m.
    pub dof: usize,
    /// Weighted coefficient of determination: 1 − SSR/SST with SST about the weighted mean
    /// (with intercept) or about zero (without intercept); 1 when SST = 0.
    pub r_squared: f64,
    /// 2-norm condition number σmax/σmin of the weighted design in the centred and scaled
    /// variable z, columns equilibrated.
    pub condition_number: f64,
    /// Covariance convention used.
    pub convention: CovarianceConvention,
    /// `true` when the covariance was multiplied by s² (convention `ScaledByResidual`).
    pub covariance_scaled: bool,
    /// χ² check (convention `Unscaled` only).
    pub chi_square: Option<ChiSquareCheck>,
    /// Refinement steps used for the coefficients.
    pub refinement_steps: usize,
    centre: f64,
    scale: f64,
    z_coef: Vec<Dd>,
    z_cov: Vec<Dd>,
}

/// Design matrix and right-hand side held in double-double, row-major (`a[i * m + j]`).
pub(crate) struct DesignDd {
    pub n: usize,
    pub m: usize,
    pub a: Vec<Dd>,
    pub b: Vec<Dd>,
}

/// Solution of a linear least-squares problem.
pub(crate) struct LinearLsq {
    pub coef: Vec<Dd>,
    /// (AᵀA)⁻¹, row-major m×m.
    pub cov_unit: Vec<Dd>,
    /// Σ (b − A c)².
    pub ssr: Dd,
    pub condition_number: f64,
    pub steps: usize,
}

struct Factored {
    n: usize,
    m: usize,
    /// Equilibrated design in double-double.
    a: Vec<Dd>,
    a_hi: DMatrix<f64>,
    qr: nalgebra::linalg::QR<f64, nalgebra::Dyn, nalgebra::Dyn>,
    r: DMatrix<f64>,
}

fn factor_failed() -> StatsError {
    StatsError::NumericalFailure {
        what: "triangular solve with a zero pivot in the QR factor".into(),
    }
}

impl Factored {
    /// Solves `[I A; Aᵀ 0] [r; x] = [b; c]` with refinement; returns (x, r, steps).
    fn refine(&self, b: &[Dd], c: &[Dd]) -> Result<(Vec<Dd>, Vec<Dd>, usize), StatsError> {
        let (n, m) = (self.n, self.m);
        let mut x = vec![Dd::ZERO; m];
        let mut r = vec![Dd::ZERO; n];
        let mut prev = f64::INFINITY;
        let mut steps = 0;
        for step in 0..MAX_REFINE_STEPS {
            let mut f = DVector::<f64>::zeros(n);
            for i in 0..n {
                let row = &self.a[i * m..(i + 1) * m];
                let acc = row
                    .iter()
                    .zip(&x)
                    .fold(b[i] - r[i], |acc, (&aij, &xj)| acc - aij * xj);
                f[i] = acc.to_f64();
            }
            let mut g = DVector::<f64>::zeros(m);
            for (j, gj) in g.iter_mut().enumerate() {
                let acc = (0..n).fold(c[j], |acc, i| acc - self.a[i * m + j] * r[i]);
                *gj = acc.to_f64();
            }
            let h = self
                .r
                .tr_solve_upper_triangular(&g)
                .ok_or_else(factor_failed)?;
            let mut qf = f.clone();
            self.qr.q_tr_mul(&mut qf);
            let d = qf.rows(0, m) - h;
            let dx = self
                .r
                .solve_upper_triangular(&d)
                .ok_or_else(factor_failed)?;
            let dr = &f - &self.a_hi * &dx;
            let dnorm = dx.amax();
            if !dnorm.is_finite() || (step >= 1 && dnorm > prev) {
                // Diverging (condition too large for refinement): keep the last iterate.
                break;
            }
            for (xj, &dj) in x.iter_mut().zip(dx.iter()) {
                *xj = xj.add_f64(dj);
            }
            for (ri, &di) in r.iter_mut().zip(dr.iter()) {
                *ri = ri.add_f64(di);
            }
            steps = step + 1;
            let xnorm = x.iter().fold(0.0f64, |acc, v| acc.max(v.hi.abs()));
            if dnorm <= REFINE_STOP * xnorm || dnorm == 0.0 {
                break;
            }
            prev = dnorm;
        }
        Ok((x, r, steps))
    }
}

/// Solves the (already weighted) linear least-squares problem `min ‖b − A c‖₂`.
pub(crate) fn solve_linear(design: &DesignDd) -> Result<LinearLsq, StatsError> {
    let (n, m) = (design.n, design.m);
    let finite = |v: &Dd| v.hi.is_finite() && v.lo.is_finite();
    if !design.a.iter().all(finite) || !design.b.iter().all(finite) {
        return Err(StatsError::invalid(
            "data",
            "values overflow the floating-point range after scaling and weighting",
        ));
    }
    if m == 0 || n < m {
        return Err(StatsError::TooFewPoints {
            model: format!("a linear model with {m} coefficients"),
            need: m.max(1),
            got: n,
        });
    }
    // Column equilibration by powers of two (exact).
    let mut col_scale = vec![1.0f64; m];
    for (j, s) in col_scale.iter_mut().enumerate() {
        let norm = (0..n)
            .map(|i| design.a[i * m + j].hi)
            .fold(0.0f64, |acc, v| acc.hypot(v));
        if norm == 0.0 || !norm.is_finite() {
            return Err(StatsError::RankDeficient {
                rank: m - 1,
                columns: m,
                detail: format!("column {j} of the design matrix is zero"),
            });
        }
        *s = 2f64.powi(-(norm.log2().round() as i32));
    }
    let a: Vec<Dd> = (0..n * m)
        .map(|k| design.a[k].mul_f64(col_scale[k % m]))
        .collect();
    if !a.iter().all(finite) {
        return Err(StatsError::invalid(
            "data",
            "values leave the floating-point range when the columns are equilibrated",
        ));
    }
    let a_hi = DMatrix::from_fn(n, m, |i, j| a[i * m + j].hi);

    let svd = nalgebra::linalg::SVD::try_new(a_hi.clone(), false, false, f64::EPSILON, 10_000)
        .ok_or_else(|| StatsError::NumericalFailure {
            what: "singular value decomposition did not converge".into(),
        })?;
    let sv = svd.singular_values;
    let smax = sv.iter().fold(0.0f64, |acc, &v| acc.max(v));
    let smin = sv.iter().fold(f64::INFINITY, |acc, &v| acc.min(v));
    let tol = smax * (n.max(m) as f64) * f64::EPSILON;
    let rank = sv.iter().filter(|&&v| v > tol).count();
    if rank < m {
        return Err(StatsError::RankDeficient {
            rank,
            columns: m,
            detail: format!(
                "the columns are linearly dependent at working precision \
                 (smallest singular value {smin:.3e}, largest {smax:.3e})"
            ),
        });
    }
    let condition_number = smax / smin;

    let qr = a_hi.clone().qr();
    let r = qr.r();
    let fac = Factored {
        n,
        m,
        a,
        a_hi,
        qr,
        r,
    };

    let zero_m = vec![Dd::ZERO; m];
    let (x, _, steps) = fac.refine(&design.b, &zero_m)?;
    let coef: Vec<Dd> = x
        .iter()
        .zip(&col_scale)
        .map(|(v, &s)| v.mul_f64(s))
        .collect();

    // (AᵀA)⁻¹ column by column: the augmented system with b = 0, c = e_j gives x = −(AᵀA)⁻¹e_j.
    let zero_n = vec![Dd::ZERO; n];
    let mut cov_s = vec![Dd::ZERO; m * m];
    for j in 0..m {
        let mut e = vec![Dd::ZERO; m];
        e[j] = Dd::ONE;
        let (col, _, _) = fac.refine(&zero_n, &e)?;
        for (i, v) in col.iter().enumerate() {
            cov_s[i * m + j] = -*v;
        }
    }
    let mut cov_unit = vec![Dd::ZERO; m * m];
    for i in 0..m {
        for j in 0..m {
            // Symmetrise and undo the column equilibration (exact powers of two).
            let v = (cov_s[i * m + j] + cov_s[j * m + i]).mul_f64(0.5);
            cov_unit[i * m + j] = v.mul_f64(col_scale[i] * col_scale[j]);
        }
    }

    // Σ (b − A c)², residuals and sum both in double-double.
    let ssr = (0..n)
        .map(|i| (0..m).fold(design.b[i], |acc, j| acc - design.a[i * m + j] * coef[j]))
        .fold(Dd::ZERO, |acc, v| acc + v * v);
    Ok(LinearLsq {
        coef,
        cov_unit,
        ssr,
        condition_number,
        steps,
    })
}

/// Validates weights `w_i = 1/u_i²` (finite, > 0) and returns the row scales √w_i.
pub(crate) fn row_scales(weights: Option<&[f64]>, n: usize) -> Result<Vec<f64>, StatsError> {
    match weights {
        None => Ok(vec![1.0; n]),
        Some(w) => {
            if w.len() != n {
                return Err(StatsError::LengthMismatch {
                    what: "weights".into(),
                    expected: n,
                    got: w.len(),
                });
            }
            w.iter()
                .enumerate()
                .map(|(i, &v)| {
                    if v.is_finite() && v > 0.0 && v.sqrt() > 0.0 && v.sqrt().is_finite() {
                        Ok(v.sqrt())
                    } else {
                        Err(StatsError::InvalidWeight { index: i, value: v })
                    }
                })
                .collect()
        }
    }
}

/// Converts point standard uncertainties u_i (y units) into weights w_i = 1/u_i².
///
/// # Reference
/// JCGM 100:2008 H.3 and common practice for weighted least squares (w = 1/u²).
pub fn weights_from_uncertainties(u: &[f64]) -> Result<Vec<f64>, StatsError> {
    u.iter()
        .enumerate()
        .map(|(i, &v)| {
            let w = 1.0 / (v * v);
            if v.is_finite() && v > 0.0 && w.is_finite() {
                Ok(w)
            } else {
                Err(StatsError::InvalidWeight { index: i, value: v })
            }
        })
        .collect()
}

/// Smallest power of two that is >= `v` (capped at 2^1023); 1 for v = 0 or non-finite v.
pub(crate) fn pow2_at_least(v: f64) -> f64 {
    if v.is_nan() || v <= 0.0 || !v.is_finite() {
        return 1.0;
    }
    let e = v.log2().ceil().clamp(-1022.0, 1023.0) as i32;
    let p = 2f64.powi(e);
    // One correction step for a log2 rounded across a power of two.
    if p < v && e < 1023 {
        2.0 * p
    } else if p / 2.0 >= v && e > -1022 {
        p / 2.0
    } else {
        p
    }
}

/// Number of distinct values in `v` (exact comparison).
pub(crate) fn distinct_count(v: impl Iterator<Item = f64>) -> usize {
    let mut s: Vec<f64> = v.collect();
    s.sort_by(f64::total_cmp);
    s.dedup();
    s.len()
}

fn binomial(n: u32, k: u32) -> f64 {
    (0..k).fold(1.0, |acc, i| acc * f64::from(n - i) / f64::from(i + 1))
}

/// Fits `y = Σ c_k x^k` by weighted least squares.
///
/// * `x`, `y`: the points (any consistent units); `weights`: optional w_i = 1/u_i² in
///   1/(y units)² (use [`weights_from_uncertainties`]).
/// * Requires n ≥ m (m = number of coefficients) and, with
///   [`CovarianceConvention::ScaledByResidual`], n > m; at least m distinct x values (m distinct
///   non-zero x values without intercept).
///
/// The returned coefficients refer to powers of `x` itself (see [`PolyFit::powers`]).
///
/// # Reference
/// JCGM 100:2008 H.3 (least-squares calibration line, covariance, s); Björck (1967) for the
/// refinement; common practice for the χ² and Birge-ratio check of weighted fits.
pub fn fit_polynomial(
    x: &[f64],
    y: &[f64],
    weights: Option<&[f64]>,
    options: &PolyOptions,
) -> Result<PolyFit, StatsError> {
    let n = x.len();
    if y.len() != n {
        return Err(StatsError::LengthMismatch {
            what: "y".into(),
            expected: n,
            got: y.len(),
        });
    }
    let d = options.degree;
    if d > MAX_DEGREE {
        return Err(StatsError::invalid(
            "degree",
            format!("{d} exceeds the maximum degree {MAX_DEGREE}"),
        ));
    }
    if !options.intercept && d == 0 {
        return Err(StatsError::invalid(
            "degree",
            "a polynomial without intercept needs degree >= 1",
        ));
    }
    check_all_finite("x", x)?;
    check_all_finite("y", y)?;
    let scales = row_scales(weights, n)?;
    let powers: Vec<u32> = if options.intercept {
        (0..=d as u32).collect()
    } else {
        (1..=d as u32).collect()
    };
    let m = powers.len();
    let scaled = options.covariance == CovarianceConvention::ScaledByResidual;
    let model = if options.intercept {
        format!("degree {d}")
    } else {
        format!("degree {d} without intercept")
    };
    if n < m {
        return Err(StatsError::TooFewPoints {
            model,
            need: m,
            got: n,
        });
    }
    if scaled && n == m {
        return Err(StatsError::TooFewPoints {
            model: format!("{model} with covariance scaled by the residual"),
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
    let distinct = if options.intercept {
        distinct_count(x.iter().copied())
    } else {
        distinct_count(x.iter().copied().filter(|&v| v != 0.0))
    };
    if distinct < m {
        let which = if options.intercept { "" } else { "non-zero " };
        return Err(StatsError::RankDeficient {
            rank: distinct,
            columns: m,
            detail: format!(
                "only {distinct} distinct {which}x values for {m} coefficients: \
                 repeated x values cannot determine a {model} polynomial"
            ),
        });
    }

    // Centre and scale.
    let (xmin, xmax) = x
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), &v| {
            (lo.min(v), hi.max(v))
        });
    let (centre, scale) = if options.intercept {
        let c = 0.5 * xmin + 0.5 * xmax;
        let half = (xmax - c).abs().max((c - xmin).abs());
        (c, pow2_at_least(half))
    } else {
        (0.0, pow2_at_least(xmin.abs().max(xmax.abs())))
    };
    let inv_scale = 1.0 / scale;
    let z: Vec<Dd> = x
        .iter()
        .map(|&xi| Dd::sum_of(xi, -centre).mul_f64(inv_scale))
        .collect();
    let mut a = Vec::with_capacity(n * m);
    for (zi, &si) in z.iter().zip(&scales) {
        for &p in &powers {
            a.push(zi.powi(p).mul_f64(si));
        }
    }
    let b: Vec<Dd> = y
        .iter()
        .zip(&scales)
        .map(|(&yi, &si)| Dd::prod_of(yi, si))
        .collect();
    let sol = solve_linear(&DesignDd { n, m, a, b })?;

    let dof = n - m;
    let s2 = if dof > 0 {
        Some(sol.ssr.mul_f64(1.0 / dof as f64))
    } else {
        None
    };
    let factor = match (scaled, s2) {
        (true, Some(v)) => v,
        _ => Dd::ONE,
    };
    let z_cov: Vec<Dd> = sol.cov_unit.iter().map(|&v| v * factor).collect();

    // Binomial transformation z -> x: c_x[j] = Σ_k T[j][k] c_z[k].
    let neg_c = Dd::from_f64(-centre);
    let t = |j: usize, k: usize| -> Dd {
        let (pj, pk) = (powers[j], powers[k]);
        if pk < pj {
            return Dd::ZERO;
        }
        neg_c
            .powi(pk - pj)
            .mul_f64(binomial(pk, pj))
            .mul_f64(inv_scale.powi(pk as i32))
    };
    let tm: Vec<Dd> = (0..m * m).map(|q| t(q / m, q % m)).collect();
    let coefficients: Vec<f64> = (0..m)
        .map(|j| {
            (0..m)
                .fold(Dd::ZERO, |acc, k| acc + tm[j * m + k] * sol.coef[k])
                .to_f64()
        })
        .collect();
    // V_x = T V_z Tᵀ.
    let tv: Vec<Dd> = (0..m * m)
        .map(|q| {
            let (j, l) = (q / m, q % m);
            (0..m).fold(Dd::ZERO, |acc, k| acc + tm[j * m + k] * z_cov[k * m + l])
        })
        .collect();
    let vx: Vec<Dd> = (0..m * m)
        .map(|q| {
            let (j, l) = (q / m, q % m);
            (0..m).fold(Dd::ZERO, |acc, k| acc + tv[j * m + k] * tm[l * m + k])
        })
        .collect();
    let covariance = DMatrix::from_fn(m, m, |i, j| vx[i * m + j].to_f64());
    let standard_uncertainties: Vec<f64> = (0..m).map(|j| vx[j * m + j].sqrt().to_f64()).collect();

    // Fitted values and residuals from the z form (double-double evaluation).
    let mut fitted = Vec::with_capacity(n);
    let mut residuals = Vec::with_capacity(n);
    for (zi, &yi) in z.iter().zip(y) {
        let yhat = eval_z(&sol.coef, &powers, *zi);
        fitted.push(yhat.to_f64());
        residuals.push((Dd::from_f64(yi) - yhat).to_f64());
    }

    let ssr = sol.ssr.to_f64();
    let w: Vec<f64> = scales.iter().map(|s| s * s).collect();
    let sst = if options.intercept {
        let sw = w.iter().sum::<f64>();
        let mean = y.iter().zip(&w).map(|(yi, wi)| yi * wi).sum::<f64>() / sw;
        y.iter()
            .zip(&w)
            .map(|(yi, wi)| wi * (yi - mean) * (yi - mean))
            .sum::<f64>()
    } else {
        y.iter().zip(&w).map(|(yi, wi)| wi * yi * yi).sum::<f64>()
    };
    let r_squared = if sst > 0.0 { 1.0 - ssr / sst } else { 1.0 };
    let residual_std_dev = s2.map(|v| v.sqrt().to_f64());
    // The residuals and their sum of squares can overflow when the coefficients do not
    // (with the unscaled covariance nothing else shows it): refuse them as well.
    let all_finite = coefficients
        .iter()
        .chain(&standard_uncertainties)
        .chain(&fitted)
        .chain(covariance.iter())
        .chain(&residuals)
        .chain([ssr, r_squared].iter())
        .chain(residual_std_dev.iter())
        .all(|v| v.is_finite());
    if !all_finite {
        return Err(overflow_failure());
    }
    let chi_square = if scaled {
        None
    } else {
        let (birge_ratio, p_value) = if dof > 0 {
            let p = ChiSquared::new(dof as f64)
                .map(|dist| dist.sf(ssr))
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
    Ok(PolyFit {
        degree: d,
        intercept: options.intercept,
        powers,
        coefficients,
        covariance,
        standard_uncertainties,
        fitted,
        residuals,
        residual_std_dev,
        dof,
        r_squared,
        condition_number: sol.condition_number,
        convention: options.covariance,
        covariance_scaled: scaled,
        chi_square,
        refinement_steps: sol.steps,
        centre,
        scale,
        z_coef: sol.coef,
        z_cov,
    })
}

pub(crate) fn overflow_failure() -> StatsError {
    StatsError::NumericalFailure {
        what: "the coefficients, their covariance or the residuals overflow the \
               floating-point range in the user's variable; rescale x or y"
            .into(),
    }
}

fn eval_z(coef: &[Dd], powers: &[u32], z: Dd) -> Dd {
    coef.iter()
        .zip(powers)
        .fold(Dd::ZERO, |acc, (&c, &p)| acc + c * z.powi(p))
}

impl PolyFit {
    /// Value of the fitted polynomial at `x` and its standard uncertainty
    /// `u = √(gᵀ V g)` from the coefficient covariance (y units). Evaluated internally in the
    /// centred variable in double-double arithmetic. A non-finite `x` gives non-finite output.
    ///
    /// # Reference
    /// JCGM 100:2008 5.2.2 (law of propagation with correlated inputs), H.3.4.
    pub fn evaluate(&self, x: f64) -> (f64, f64) {
        let z = Dd::sum_of(x, -self.centre).mul_f64(1.0 / self.scale);
        let m = self.powers.len();
        let g: Vec<Dd> = self.powers.iter().map(|&p| z.powi(p)).collect();
        let value = eval_z(&self.z_coef, &self.powers, z);
        // Far outside the data gᵀ V g can overflow while u = √(gᵀ V g) is still a number
        // (found by fuzzing: degree 4 at x = 5.6e40). g is scaled by a power of two first,
        // which is exact, and u scaled back.
        let g_max = g.iter().fold(0.0f64, |acc, v| acc.max(v.to_f64().abs()));
        let unit = pow2_at_least(g_max);
        let g: Vec<Dd> = g.iter().map(|v| v.mul_f64(1.0 / unit)).collect();
        let mut var = Dd::ZERO;
        for i in 0..m {
            for j in 0..m {
                var = var + g[i] * self.z_cov[i * m + j] * g[j];
            }
        }
        (value.to_f64(), (var.sqrt().to_f64() * unit).abs())
    }

    /// Correlation coefficient r(c_i, c_j) = u(c_i, c_j) / (u(c_i) u(c_j)) (dimensionless);
    /// `None` for an index out of range or a zero variance.
    ///
    /// # Reference
    /// JCGM 100:2008 5.2.2 (correlation coefficient), H.3.2.
    pub fn correlation(&self, i: usize, j: usize) -> Option<f64> {
        let m = self.coefficients.len();
        if i >= m || j >= m {
            return None;
        }
        let den = self.standard_uncertainties[i] * self.standard_uncertainties[j];
        (den > 0.0).then(|| self.covariance[(i, j)] / den)
    }

    /// Points whose residual magnitude exceeds the given per-point expanded uncertainty
    /// (y units, same length as the data). A residual exactly equal to its limit is not flagged.
    ///
    /// # Reference
    /// Common practice: a calibration point that deviates from the fitted function by more
    /// than its expanded uncertainty is inconsistent with the model.
    pub fn residuals_exceeding(
        &self,
        expanded_uncertainty: &[f64],
    ) -> Result<Vec<ResidualFlag>, StatsError> {
        if expanded_uncertainty.len() != self.residuals.len() {
            return Err(StatsError::LengthMismatch {
                what: "expanded_uncertainty".into(),
                expected: self.residuals.len(),
                got: expanded_uncertainty.len(),
            });
        }
        check_all_finite("expanded_uncertainty", expanded_uncertainty)?;
        if let Some(i) = expanded_uncertainty.iter().position(|&u| u < 0.0) {
            return Err(StatsError::invalid(
                format!("expanded_uncertainty[{i}]"),
                "must not be negative",
            ));
        }
        Ok(self
            .residuals
            .iter()
            .zip(expanded_uncertainty)
            .enumerate()
            .filter(|(_, (r, u))| r.abs() > **u)
            .map(|(index, (&residual, &limit))| ResidualFlag {
                index,
                residual,
                limit,
            })
            .collect())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    /// Required number of correct significant digits on the ill-conditioned checks.
    const REQUIRED_DIGITS: f64 = 9.0;
    /// Relative tolerance for exactly representable polynomial data.
    const EXACT_REL_TOL: f64 = 1e-9;
    /// Relative tolerance against closed-form double-precision formulas.
    const CLOSED_FORM_REL_TOL: f64 = 1e-12;

    fn parse_csv(text: &str) -> (Vec<f64>, Vec<f64>) {
        text.lines()
            .skip(1)
            .filter(|l| !l.trim().is_empty())
            .map(|l| {
                let (a, b) = l.split_once(',').expect("two columns");
                (
                    a.trim().parse::<f64>().unwrap(),
                    b.trim().parse::<f64>().unwrap(),
                )
            })
            .unzip()
    }

    /// All numbers following `"key": ` in a JSON text, in order (the fixtures are flat enough).
    pub(crate) fn json_numbers(text: &str, key: &str) -> Vec<f64> {
        let pat = format!("\"{key}\":");
        text.match_indices(&pat)
            .map(|(i, _)| {
                let rest = text[i + pat.len()..].trim_start();
                let end = rest
                    .find(|c: char| !(c.is_ascii_digit() || "+-.eE".contains(c)))
                    .unwrap_or(rest.len());
                rest[..end].parse().unwrap()
            })
            .collect()
    }

    /// Number of correct significant digits (log relative error, capped at 17).
    fn digits(got: f64, want: f64) -> f64 {
        if got == want {
            return 17.0;
        }
        (-((got - want) / want).abs().log10()).min(17.0)
    }

    /// Checks `got` against reference values given as decimal text (20 digits from mpmath).
    fn check_digits(name: &str, got: &[f64], want: &[&str]) -> f64 {
        assert_eq!(got.len(), want.len(), "{name}: length");
        let mut worst: f64 = 17.0;
        for (j, (&g, w)) in got.iter().zip(want).enumerate() {
            let w: f64 = w.parse().unwrap();
            let d = digits(g, w);
            assert!(
                d >= REQUIRED_DIGITS,
                "{name}[{j}]: got {g:e}, want {w:e} ({d:.1} digits)"
            );
            worst = worst.min(d);
        }
        eprintln!("DIGITS {name}: {worst:.1}");
        worst
    }

    /// Published-digit check: `|got - published| <= half a unit of the last published digit`.
    fn assert_published(name: &str, got: f64, published: f64, last_digit: f64) {
        assert!(
            (got - published).abs() <= 0.5 * last_digit,
            "{name}: {got} does not round to {published}"
        );
    }

    const GUM_H3: &str = include_str!(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/data/gum_h3.json"
    ));

    #[test]
    fn gum_h3_thermometer_calibration_line() {
        // Data and published results: JCGM 100:2008 Annex H.3, via tests/data/gum_h3.json
        // (its "data_sources" and "published_value_source" record where each value was read;
        // r = -0.930 and s = 0.0035 are marked from memory there).
        let t = json_numbers(GUM_H3, "t_k_C");
        let b = json_numbers(GUM_H3, "b_k_C");
        assert_eq!((t.len(), b.len()), (11, 11));
        let x: Vec<f64> = t.iter().map(|v| v - 20.0).collect();
        let fit = fit_polynomial(&x, &b, None, &PolyOptions::new(1)).unwrap();
        assert_eq!(fit.dof, 9);
        assert_published("y1", fit.coefficients[0], -0.1712, 1e-4);
        assert_published("s(y1)", fit.standard_uncertainties[0], 0.0029, 1e-4);
        assert_published("y2", fit.coefficients[1], 0.00218, 1e-5);
        assert_published("s(y2)", fit.standard_uncertainties[1], 0.00067, 1e-5);
        assert_published("r", fit.correlation(0, 1).unwrap(), -0.930, 1e-3);
        assert_published("s", fit.residual_std_dev.unwrap(), 0.0035, 1e-4);
        let (b30, u30) = fit.evaluate(30.0 - 20.0);
        assert_published("b(30 C)", b30, -0.1494, 1e-4);
        assert_published("u(b(30 C))", u30, 0.0041, 1e-4);
        // Full-precision values computed with numpy (normal equations and polyfit), recorded
        // in gum_h3.json "verification"; the independent computations there agree to ~1e-15.
        let tight = 1e-12;
        assert!((fit.coefficients[0] - -0.17120379013134981).abs() < tight);
        assert!((fit.standard_uncertainties[0] - 0.00287759783515996).abs() < tight);
        assert!((fit.coefficients[1] - 0.0021826977398872014).abs() < tight);
        assert!((fit.standard_uncertainties[1] - 0.0006679387732278331).abs() < tight);
        assert!((fit.correlation(0, 1).unwrap() - -0.9304296030934461).abs() < 1e-12);
        assert!((u30 - 0.004138595752854955).abs() < tight);
        assert!(
            (fit.residuals[3] - 0.00565).abs() < 5e-6,
            "residual k=4 (gum_h3.json)"
        );
    }

    #[test]
    fn exact_quintic_wampler_style() {
        // y = 1 + x + x^2 + x^3 + x^4 + x^5 on x = 0..20: exact data, so every coefficient is
        // exactly 1 and the residuals are 0 (construction, no external source needed).
        let x: Vec<f64> = (0..=20).map(f64::from).collect();
        let y: Vec<f64> = x.iter().map(|&v| (0..6).map(|k| v.powi(k)).sum()).collect();
        let fit = fit_polynomial(&x, &y, None, &PolyOptions::new(5)).unwrap();
        for (k, c) in fit.coefficients.iter().enumerate() {
            assert!((c - 1.0).abs() <= EXACT_REL_TOL, "c{k} = {c}");
        }
        let ymax = y.iter().fold(0.0f64, |a, v| a.max(v.abs()));
        assert!(fit.residuals.iter().all(|r| r.abs() <= 1e-15 * ymax));
        assert!(fit.residual_std_dev.unwrap() <= 1e-15 * ymax);
        assert!(fit.standard_uncertainties.iter().all(|&u| u < 1e-9));

        // Scaled variants: x' = 1000 x (exact), y' = 1e-3 y (rounded): c'_k = 1e-3 / 1000^k.
        let xs: Vec<f64> = x.iter().map(|v| v * 1000.0).collect();
        let ys: Vec<f64> = y.iter().map(|v| v * 1e-3).collect();
        let fit = fit_polynomial(&xs, &ys, None, &PolyOptions::new(5)).unwrap();
        for (k, c) in fit.coefficients.iter().enumerate() {
            let want = 1e-3 / 1000f64.powi(k as i32);
            assert!(((c - want) / want).abs() <= EXACT_REL_TOL, "c{k} = {c:e}");
        }
        // Same data, x' only.
        let fit = fit_polynomial(&xs, &y, None, &PolyOptions::new(5)).unwrap();
        for (k, c) in fit.coefficients.iter().enumerate() {
            let want = 1000f64.powi(-(k as i32));
            assert!(((c - want) / want).abs() <= EXACT_REL_TOL, "c{k} = {c:e}");
        }
    }

    // Reference values of the three constructed problems: exact least-squares solution of the
    // binary64 data in tests/data/*.csv, computed by tests/data/reference_gen.py with mpmath
    // 1.3.0 at mp.dps = 100 (normal equations, harmless at that precision) and cross-checked
    // against an exact rational solution (Python fractions); printed to 20 digits in
    // tests/data/reference_values.txt.

    #[test]
    fn filip_like_degree_10_against_mpmath() {
        let (x, y) = parse_csv(include_str!(concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/tests/data/filip_like.csv"
        )));
        let fit = fit_polynomial(&x, &y, None, &PolyOptions::new(10)).unwrap();
        let c: [&str; 11] = [
            "-55.40158330297767119",
            "-102.26180146941889246",
            "-82.610296886206214719",
            "-39.031196846369178306",
            "-11.931169905573399396",
            "-2.4622895678989952226",
            "-0.34709591766008972813",
            "-0.032990073051110411323",
            "-0.0020240713270833651488",
            "-0.000072452779657834243204",
            "-1.1504361723772867114e-6",
        ];
        let sd: [&str; 11] = [
            "77.643683840865678889",
            "147.151771651344627",
            "123.68371004929153051",
            "60.721750881335472865",
            "19.286788303327902049",
            "4.1423644743101631365",
            "0.60945775237397686389",
            "0.060675232587011835287",
            "0.0039133922515878444578",
            "0.00014772118555370449241",
            "2.4793026181474249421e-6",
        ];
        check_digits("filip c", &fit.coefficients, &c);
        check_digits("filip sd", &fit.standard_uncertainties, &sd);
        check_digits(
            "filip s",
            &[fit.residual_std_dev.unwrap()],
            &["0.0010069071328738995807"],
        );
    }

    #[test]
    fn clustered_degree_8_against_mpmath() {
        let (x, y) = parse_csv(include_str!(concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/tests/data/clustered.csv"
        )));
        let fit = fit_polynomial(&x, &y, None, &PolyOptions::new(8)).unwrap();
        let c: [&str; 9] = [
            "136617.77417058672609",
            "-98639.486429450209347",
            "31128.398872183588907",
            "-5607.9620357623744364",
            "630.82723722114220352",
            "-45.370046774757044041",
            "2.0374082893122216697",
            "-0.052229431956681403241",
            "0.00058518574188240772046",
        ];
        let sd: [&str; 9] = [
            "246611.80115167724609",
            "180837.04511667695602",
            "57982.079189307532513",
            "10617.358892610203959",
            "1214.4321777964742231",
            "88.851295052220282799",
            "4.0605775171533391288",
            "0.10598079278742484636",
            "0.0012094776167935013824",
        ];
        check_digits("clustered c", &fit.coefficients, &c);
        check_digits("clustered sd", &fit.standard_uncertainties, &sd);
        check_digits(
            "clustered s",
            &[fit.residual_std_dev.unwrap()],
            &["0.000030376014621880167258"],
        );
    }

    #[test]
    fn wampler_like_noisy_quintic_against_mpmath() {
        let (x, y) = parse_csv(include_str!(concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/tests/data/wampler_like.csv"
        )));
        let fit = fit_polynomial(&x, &y, None, &PolyOptions::new(5)).unwrap();
        let c: [&str; 6] = [
            "-460.01290014333492594",
            "604.39042076961043175",
            "-180.52031539600526005",
            "22.33092851645146705",
            "-0.08035557120225312445",
            "1.0197899085703635441",
        ];
        let sd: [&str; 6] = [
            "316.49342120446944512",
            "347.55352532009634222",
            "114.60023715181177471",
            "14.921683272270006211",
            "0.83017891549467766175",
            "0.01651704874988499736",
        ];
        check_digits("wampler c", &fit.coefficients, &c);
        check_digits("wampler sd", &fit.standard_uncertainties, &sd);
        check_digits(
            "wampler s",
            &[fit.residual_std_dev.unwrap()],
            &["347.05257822124714192"],
        );
    }

    #[test]
    fn no_intercept_offset_problem_against_mpmath() {
        // Condition number of the scaled design ~4e8: refinement is needed here.
        let (x, y) = parse_csv(include_str!(concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/tests/data/offset_no_intercept.csv"
        )));
        let opts = PolyOptions {
            intercept: false,
            ..PolyOptions::new(4)
        };
        let fit = fit_polynomial(&x, &y, None, &opts).unwrap();
        assert_eq!(fit.powers, vec![1, 2, 3, 4]);
        assert!(fit.condition_number > 1e8);
        let c: [&str; 4] = [
            "1.8748042984583298078",
            "-0.04510771518767959271",
            "0.00034770536277591763653",
            "-8.2108652127409203066e-7",
        ];
        let sd: [&str; 4] = [
            "2.8539756793408032028",
            "0.085193675789003040934",
            "0.00084769801268608915269",
            "2.8115880738581184578e-6",
        ];
        check_digits("offset c", &fit.coefficients, &c);
        check_digits("offset sd", &fit.standard_uncertainties, &sd);
        check_digits(
            "offset s",
            &[fit.residual_std_dev.unwrap()],
            &["0.000027878172524178851513"],
        );
    }

    #[test]
    fn exact_fit_without_intercept() {
        // y = 2x + 3x^2 exactly (construction): coefficients [2, 3] for powers [1, 2].
        let x: Vec<f64> = (1..=10).map(f64::from).collect();
        let y: Vec<f64> = x.iter().map(|v| 2.0 * v + 3.0 * v * v).collect();
        let opts = PolyOptions {
            intercept: false,
            ..PolyOptions::new(2)
        };
        let fit = fit_polynomial(&x, &y, None, &opts).unwrap();
        assert_eq!(fit.powers, vec![1, 2]);
        assert!((fit.coefficients[0] - 2.0).abs() < 1e-13);
        assert!((fit.coefficients[1] - 3.0).abs() < 1e-13);
        assert_eq!(fit.dof, 8);
        let (v, _) = fit.evaluate(0.0);
        assert_eq!(
            v, 0.0,
            "no constant term: the curve passes through the origin"
        );
    }

    #[test]
    fn weighted_line_matches_closed_form_and_chi_square() {
        // Closed-form weighted straight line (standard formulas, from memory):
        // Δ = S Sxx − Sx², a = (Sxx Sy − Sx Sxy)/Δ, b = (S Sxy − Sx Sy)/Δ,
        // var a = Sxx/Δ, var b = S/Δ, cov = −Sx/Δ (known point uncertainties).
        let x = [1.0, 2.0, 3.0, 4.0, 5.0, 6.0];
        let y = [2.1, 3.9, 6.2, 7.8, 10.1, 12.2];
        let u = [0.1, 0.1, 0.2, 0.2, 0.3, 0.3];
        let w = weights_from_uncertainties(&u).unwrap();
        let s: f64 = w.iter().sum();
        let sx: f64 = w.iter().zip(&x).map(|(w, x)| w * x).sum();
        let sy: f64 = w.iter().zip(&y).map(|(w, y)| w * y).sum();
        let sxx: f64 = w.iter().zip(&x).map(|(w, x)| w * x * x).sum();
        let sxy: f64 = (0..6).map(|i| w[i] * x[i] * y[i]).sum();
        let delta = s * sxx - sx * sx;
        let a = (sxx * sy - sx * sxy) / delta;
        let b = (s * sxy - sx * sy) / delta;
        let opts = PolyOptions {
            covariance: CovarianceConvention::Unscaled,
            ..PolyOptions::new(1)
        };
        let fit = fit_polynomial(&x, &y, Some(&w), &opts).unwrap();
        let rel = |g: f64, want: f64| ((g - want) / want).abs();
        assert!(rel(fit.coefficients[0], a) < CLOSED_FORM_REL_TOL);
        assert!(rel(fit.coefficients[1], b) < CLOSED_FORM_REL_TOL);
        assert!(rel(fit.covariance[(0, 0)], sxx / delta) < CLOSED_FORM_REL_TOL);
        assert!(rel(fit.covariance[(1, 1)], s / delta) < CLOSED_FORM_REL_TOL);
        assert!(rel(fit.covariance[(0, 1)], -sx / delta) < CLOSED_FORM_REL_TOL);
        assert!(!fit.covariance_scaled);
        // numpy 2.4.6 closed form and scipy 1.17.1 stats.chi2.sf(chi2, 4):
        // a = 0.027496115555049792, b = 1.9930482822121183,
        // chi2 = 4.490936295102733, p = 0.34362355404487316.
        let chi = fit.chi_square.unwrap();
        assert!(rel(fit.coefficients[0], 0.027496115555049792) < 1e-12);
        assert!(rel(chi.chi_square, 4.490936295102733) < 1e-12);
        assert_eq!(chi.dof, 4);
        assert!(
            rel(
                chi.birge_ratio.unwrap(),
                (4.490936295102733f64 / 4.0).sqrt()
            ) < 1e-12
        );
        assert!(rel(chi.p_value.unwrap(), 0.34362355404487316) < 1e-9);

        // Scaled convention: same coefficients, covariance multiplied by s² = χ²/ν.
        let scaled = fit_polynomial(&x, &y, Some(&w), &PolyOptions::new(1)).unwrap();
        assert!(scaled.covariance_scaled && scaled.chi_square.is_none());
        let s2 = chi.chi_square / 4.0;
        assert!(rel(scaled.covariance[(1, 1)], s2 * s / delta) < CLOSED_FORM_REL_TOL);
    }

    #[test]
    fn residual_flags_compare_with_expanded_uncertainty() {
        let t = json_numbers(GUM_H3, "t_k_C");
        let b = json_numbers(GUM_H3, "b_k_C");
        let fit = fit_polynomial(&t, &b, None, &PolyOptions::new(1)).unwrap();
        // Residuals of H.3 (gum_h3.json computed_extras): the largest are +0.00565 (k = 4)
        // and +0.00535 (k = 7); a limit of 0.005 flags exactly those two.
        let flags = fit.residuals_exceeding(&[0.005; 11]).unwrap();
        let idx: Vec<usize> = flags.iter().map(|f| f.index).collect();
        assert_eq!(idx, vec![3, 6]);
        assert!((flags[0].residual - 0.00565).abs() < 5e-6);
        assert!(fit.residuals_exceeding(&[0.006; 11]).unwrap().is_empty());
        assert!(matches!(
            fit.residuals_exceeding(&[0.005; 3]),
            Err(StatsError::LengthMismatch { .. })
        ));
    }

    #[test]
    fn refuses_bad_input_with_plain_messages() {
        let e = fit_polynomial(
            &[1.0, 2.0, 3.0],
            &[1.0, 2.0, 3.0],
            None,
            &PolyOptions::new(4),
        )
        .unwrap_err();
        assert_eq!(e.to_string(), "degree 4 needs at least 5 points, got 3");
        let x = [1.0, 1.0, 2.0, 2.0, 3.0, 3.0];
        let e = fit_polynomial(&x, &[1.0; 6], None, &PolyOptions::new(3)).unwrap_err();
        assert!(matches!(
            e,
            StatsError::RankDeficient {
                rank: 3,
                columns: 4,
                ..
            }
        ));
        assert!(
            e.to_string()
                .contains("only 3 distinct x values for 4 coefficients"),
            "{e}"
        );
        let y = [1.0, 2.0, 3.0, f64::NAN, 5.0];
        let e =
            fit_polynomial(&[1.0, 2.0, 3.0, 4.0, 5.0], &y, None, &PolyOptions::new(1)).unwrap_err();
        assert_eq!(e.to_string(), "non-finite input: y[3] is NaN");
        let e = fit_polynomial(
            &[1.0, 2.0, 3.0],
            &[1.0, 2.0, 3.0],
            Some(&[1.0, -2.0, 1.0]),
            &PolyOptions::new(1),
        )
        .unwrap_err();
        assert_eq!(
            e,
            StatsError::InvalidWeight {
                index: 1,
                value: -2.0
            }
        );
        let e = fit_polynomial(&[1.0, 2.0], &[1.0, 2.0], None, &PolyOptions::new(1)).unwrap_err();
        assert_eq!(
            e.to_string(),
            "degree 1 with covariance scaled by the residual needs at least 3 points, got 2"
        );
        assert!(matches!(
            fit_polynomial(&[1.0; 20], &[1.0; 20], None, &PolyOptions::new(11)),
            Err(StatsError::InvalidInput { .. })
        ));
        assert!(matches!(
            fit_polynomial(&[1.0, 2.0], &[1.0], None, &PolyOptions::new(0)),
            Err(StatsError::LengthMismatch { .. })
        ));
        // Distinct but nearly equal x far from the origin, without intercept: the columns
        // x, x², x³, x⁴ coincide at working precision; the SVD rank test catches it. (With an
        // intercept the same x are harmless: centring is exact.)
        let x: Vec<f64> = (0..12).map(|i| 1.0 + f64::from(i) * 1e-15).collect();
        let no_icpt = PolyOptions {
            intercept: false,
            ..PolyOptions::new(4)
        };
        let e = fit_polynomial(&x, &x, None, &no_icpt).unwrap_err();
        assert!(
            matches!(e, StatsError::RankDeficient { columns: 4, .. }),
            "{e}"
        );
        let fit = fit_polynomial(&x, &x, None, &PolyOptions::new(1)).unwrap();
        assert!((fit.coefficients[1] - 1.0).abs() < 1e-9);
        // Extreme magnitudes: the x-variable coefficients of a quadratic on x ~ 1e200 involve
        // (1e201)² and overflow; refused rather than returned as NaN.
        let x: Vec<f64> = (0..10).map(|i| 1e200 * f64::from(i)).collect();
        let y: Vec<f64> = (0..10).map(|i| 1e300 * f64::from(i * i)).collect();
        let e = fit_polynomial(&x, &y, None, &PolyOptions::new(2)).unwrap_err();
        assert!(matches!(e, StatsError::NumericalFailure { .. }), "{e}");
        let e = fit_polynomial(&x, &y, Some(&[1e20; 10]), &PolyOptions::new(2)).unwrap_err();
        assert!(matches!(e, StatsError::InvalidInput { .. }), "{e}");
        // All-zero y: zero coefficients, zero residual scatter.
        let x: Vec<f64> = (0..6).map(f64::from).collect();
        let fit = fit_polynomial(&x, &[0.0; 6], None, &PolyOptions::new(2)).unwrap();
        assert!(fit.coefficients.iter().all(|&c| c == 0.0));
        assert_eq!(fit.residual_std_dev, Some(0.0));
    }

    /// Found by fuzzing (fuzz target `compute_fit`): the uncertainty of a degree-4 fit
    /// evaluated at x = 5.6e40 came back as NaN because gᵀ V g (about x^8) overflowed,
    /// although u itself (about x^4) is a number.
    #[test]
    fn evaluation_far_outside_the_data_keeps_a_finite_uncertainty() {
        let x = [0.0, 10.0, 20.0, 65.0, 40.0, 50.0];
        let y = [0.01, 0.012, 0.018, 0.021, 0.03, 0.041];
        let fit = fit_polynomial(&x, &y, None, &PolyOptions::new(4)).unwrap();
        let far = 5.555555555555556e40;
        let (value, u) = fit.evaluate(far);
        assert!(
            value.is_finite() && u.is_finite() && u > 0.0,
            "{value} ± {u}"
        );
        // u grows as |x|^4 far out: u(2x) / u(x) = 16 to working precision.
        let (_, u2) = fit.evaluate(2.0 * far);
        assert!((u2 / u - 16.0).abs() < 1e-9, "{}", u2 / u);
        // Near the data the scaling changes nothing: u at x = 30 equals √(gᵀVg) in x form.
        let (_, u30) = fit.evaluate(30.0);
        let g: Vec<f64> = (0..5).map(|p| 30f64.powi(p)).collect();
        let var: f64 = (0..5)
            .flat_map(|i| (0..5).map(move |j| (i, j)))
            .map(|(i, j)| g[i] * fit.covariance[(i, j)] * g[j])
            .sum();
        assert!(
            (u30 - var.sqrt()).abs() < 1e-9 * u30,
            "{u30} vs {}",
            var.sqrt()
        );
    }

    /// Found by fuzzing (fuzz target `compute_fit`): with point uncertainties (unscaled
    /// covariance) and one y of 1e163, the coefficients and their covariance stay finite but
    /// the weighted residual sum of squares, 2500 (1e163)², overflows: the fit came back with
    /// s = NaN, χ² = inf and R² = NaN. It is refused as an overflow now.
    #[test]
    fn overflowing_residuals_are_refused() {
        let x = [250.0, 0.0, 100.0, 200.0];
        let y = [-0.03, 0.0, 1e163, 0.09];
        let w = weights_from_uncertainties(&[0.01, 0.01, 0.02, 0.02]).unwrap();
        let options = PolyOptions {
            degree: 1,
            intercept: false,
            covariance: CovarianceConvention::Unscaled,
        };
        let e = fit_polynomial(&x, &y, Some(&w), &options).unwrap_err();
        assert!(matches!(e, StatsError::NumericalFailure { .. }), "{e}");
        assert!(e.to_string().contains("residuals overflow"), "{e}");
        // The same points with y scaled by 1e-150 are fitted, with finite statistics.
        let y: Vec<f64> = y.iter().map(|v| v * 1e-150).collect();
        let fit = fit_polynomial(&x, &y, Some(&w), &options).unwrap();
        let chi = fit.chi_square.unwrap();
        assert!(chi.chi_square.is_finite() && fit.r_squared.is_finite());
        assert!(fit.residual_std_dev.unwrap().is_finite());
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(64))]

        /// Fitted values and residuals do not depend on an affine change of the x variable.
        #[test]
        fn fit_invariant_under_shift_and_scale_of_x(
            degree in 0usize..=4,
            ys in proptest::collection::vec(-100.0f64..100.0, 8..20),
            shift in -1e4f64..1e4,
            log_scale in -3.0f64..3.0,
        ) {
            let n = ys.len();
            let x: Vec<f64> = (0..n).map(|i| i as f64 * 0.75 + 0.1 * (i % 3) as f64).collect();
            let scale = 10f64.powf(log_scale);
            let x2: Vec<f64> = x.iter().map(|v| v * scale + shift).collect();
            let a = fit_polynomial(&x, &ys, None, &PolyOptions::new(degree)).unwrap();
            let b = fit_polynomial(&x2, &ys, None, &PolyOptions::new(degree)).unwrap();
            let ymax = ys.iter().fold(1.0f64, |m, v| m.max(v.abs()));
            for i in 0..n {
                prop_assert!((a.fitted[i] - b.fitted[i]).abs() <= 1e-9 * ymax);
                prop_assert!((a.residuals[i] - b.residuals[i]).abs() <= 1e-9 * ymax);
            }
            let (sa, sb) = (a.residual_std_dev.unwrap(), b.residual_std_dev.unwrap());
            prop_assert!((sa - sb).abs() <= 1e-9 * ymax);
        }
    }
}
