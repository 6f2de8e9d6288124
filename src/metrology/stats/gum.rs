//! Uncertainty budget by the law of propagation of uncertainty (GUM framework) for an additive
//! (or linearised) model `Y = Σ c_i X_i`.
//!
//! Welch-Satterthwaite with correlated inputs: JCGM 100 G.4.1 assumes independent inputs. When
//! correlations are given, this module still uses `ν_eff = u_c⁴ / Σ (c_i u_i)⁴ / ν_i` with u_c
//! including the correlation terms. This is common practice, not a published rule: correlated
//! inputs with finite ν make the formula approximate. Each result records it in
//! [`BudgetResult::correlated`].

use nalgebra::{DMatrix, linalg::SymmetricEigen};

use super::coverage::{P_K2, coverage_factor};
use super::dd::Dd;
use super::error::{StatsError, check_finite};

/// The quoted information about an input and how it maps to a standard uncertainty.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Distribution {
    /// Normal, quoted as expanded uncertainty `expanded` with coverage factor `k`: u = U/k.
    NormalExpanded {
        /// Expanded uncertainty U (unit of the input).
        expanded: f64,
        /// Coverage factor k > 0.
        k: f64,
    },
    /// Normal, quoted as expanded uncertainty at coverage probability `p`: u = U/k_p, k_p from
    /// the normal quantile (or the t quantile when the component has finite ν).
    NormalConfidence {
        /// Expanded uncertainty U (unit of the input).
        expanded: f64,
        /// Coverage probability, 0 < p < 1.
        p: f64,
    },
    /// Rectangular of half-width a: u = a/√3.
    Rectangular {
        /// Half-width a ≥ 0.
        half_width: f64,
    },
    /// Symmetric triangular of half-width a: u = a/√6.
    Triangular {
        /// Half-width a ≥ 0.
        half_width: f64,
    },
    /// U-shaped (arcsine) of half-width a: u = a/√2.
    UShaped {
        /// Half-width a ≥ 0.
        half_width: f64,
    },
    /// Type A evaluation: experimental standard deviation of the mean s/√n of `n` readings;
    /// ν = n − 1 by default.
    TypeA {
        /// s(x̄) = s/√n (unit of the input).
        std_dev_of_mean: f64,
        /// Number of readings n ≥ 2.
        n: u32,
    },
    /// A standard uncertainty given directly.
    Standard {
        /// u ≥ 0 (unit of the input).
        u: f64,
    },
}

/// Degrees of freedom of a component.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub enum Dof {
    /// n − 1 for Type A, infinite otherwise.
    #[default]
    Default,
    /// Infinite.
    Infinite,
    /// A stated value > 0 (may be fractional).
    Value(f64),
    /// Type B with stated relative reliability Δu/u: ν = ½ (Δu/u)⁻².
    RelativeReliability(f64),
}

/// One line of an uncertainty budget.
#[derive(Debug, Clone, PartialEq)]
pub struct Component {
    /// Label of the input quantity.
    pub name: String,
    /// Estimate x_i (unit of the input).
    pub estimate: f64,
    /// Quoted uncertainty information.
    pub distribution: Distribution,
    /// Sensitivity coefficient c_i = ∂f/∂x_i (output unit / input unit).
    pub sensitivity: f64,
    /// Degrees of freedom.
    pub dof: Dof,
}

impl Component {
    /// Component with sensitivity 1 and default degrees of freedom; `estimate` in the unit of
    /// the input.
    ///
    /// # Reference
    /// JCGM 100:2008 4.1 (input quantities and their estimates).
    pub fn new(name: impl Into<String>, estimate: f64, distribution: Distribution) -> Self {
        Component {
            name: name.into(),
            estimate,
            distribution,
            sensitivity: 1.0,
            dof: Dof::Default,
        }
    }

    /// Sets the sensitivity coefficient c_i (output unit / input unit).
    ///
    /// # Reference
    /// JCGM 100:2008 5.1.3 (sensitivity coefficients).
    pub fn with_sensitivity(mut self, c: f64) -> Self {
        self.sensitivity = c;
        self
    }

    /// Sets the degrees of freedom.
    ///
    /// # Reference
    /// JCGM 100:2008 G.3.3, G.4.2.
    pub fn with_dof(mut self, dof: Dof) -> Self {
        self.dof = dof;
        self
    }

    /// Degrees of freedom ν_i (`f64::INFINITY` for infinite).
    ///
    /// # Reference
    /// JCGM 100:2008 G.3.3 (Type A, ν = n − 1) and G.4.2 (Type B, ν ≈ ½ (Δu/u)⁻²).
    pub fn degrees_of_freedom(&self) -> Result<f64, StatsError> {
        let field = || format!("{}: degrees of freedom", self.name);
        match self.dof {
            Dof::Infinite => Ok(f64::INFINITY),
            Dof::Value(v) if v > 0.0 && !v.is_nan() => Ok(v),
            Dof::Value(v) => Err(StatsError::invalid(field(), format!("{v} is not > 0"))),
            Dof::RelativeReliability(r) if r > 0.0 && r.is_finite() => Ok(0.5 / (r * r)),
            Dof::RelativeReliability(r) => Err(StatsError::invalid(
                field(),
                format!("relative reliability {r} is not a positive number"),
            )),
            Dof::Default => match self.distribution {
                Distribution::TypeA { n, .. } if n >= 2 => Ok(f64::from(n - 1)),
                Distribution::TypeA { n, .. } => Err(StatsError::invalid(
                    field(),
                    format!("a Type A evaluation needs n >= 2 readings, got {n}"),
                )),
                _ => Ok(f64::INFINITY),
            },
        }
    }

    /// Standard uncertainty u(x_i) in the unit of the input.
    ///
    /// # Reference
    /// JCGM 100:2008 4.2.3 (Type A), 4.3.3 (expanded with k), 4.3.4 (stated confidence
    /// level, normal), 4.3.7 (rectangular), 4.3.9 (triangular); U-shaped a/√2: common practice
    /// (arcsine distribution, JCGM 101:2008 6.4.6).
    pub fn standard_uncertainty(&self) -> Result<f64, StatsError> {
        let name = &self.name;
        let nonneg = |what: &str, v: f64| -> Result<f64, StatsError> {
            check_finite(&format!("{name}: {what}"), None, v)?;
            if v < 0.0 {
                Err(StatsError::invalid(
                    format!("{name}: {what}"),
                    "must not be negative",
                ))
            } else {
                Ok(v)
            }
        };
        match self.distribution {
            Distribution::NormalExpanded { expanded, k } => {
                let u = nonneg("expanded uncertainty", expanded)?;
                if !(k.is_finite() && k > 0.0) {
                    return Err(StatsError::invalid(
                        format!("{name}: coverage factor"),
                        format!("{k} is not > 0"),
                    ));
                }
                Ok(u / k)
            }
            Distribution::NormalConfidence { expanded, p } => {
                let u = nonneg("expanded uncertainty", expanded)?;
                let k = coverage_factor(p, self.degrees_of_freedom()?)?;
                Ok(u / k)
            }
            Distribution::Rectangular { half_width } => {
                Ok(nonneg("half-width", half_width)? / 3f64.sqrt())
            }
            Distribution::Triangular { half_width } => {
                Ok(nonneg("half-width", half_width)? / 6f64.sqrt())
            }
            Distribution::UShaped { half_width } => {
                Ok(nonneg("half-width", half_width)? / std::f64::consts::SQRT_2)
            }
            Distribution::TypeA {
                std_dev_of_mean, ..
            } => nonneg("standard deviation of the mean", std_dev_of_mean),
            Distribution::Standard { u } => nonneg("standard uncertainty", u),
        }
    }
}

/// Correlation coefficient r between components `i` and `j` (indices into the budget).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Correlation {
    /// First component index.
    pub i: usize,
    /// Second component index (≠ i).
    pub j: usize,
    /// r(x_i, x_j), −1 ≤ r ≤ 1.
    pub r: f64,
}

/// How a non-integer ν_eff enters the coverage factor.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum NuEffRounding {
    /// Use the t quantile at the real ν_eff.
    #[default]
    Exact,
    /// Truncate ν_eff to the next lower integer (at least 1) before taking the quantile.
    TruncateDown,
}

/// Options of [`evaluate_budget`].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BudgetOptions {
    /// Coverage probability of the expanded uncertainty (default erf(2/√2) ≈ 0.9545).
    pub coverage_probability: f64,
    /// Treatment of non-integer ν_eff.
    pub nu_eff_rounding: NuEffRounding,
}

impl Default for BudgetOptions {
    fn default() -> Self {
        BudgetOptions {
            coverage_probability: P_K2,
            nu_eff_rounding: NuEffRounding::Exact,
        }
    }
}

/// Per-component output of a budget.
#[derive(Debug, Clone, PartialEq)]
pub struct ComponentContribution {
    /// Label.
    pub name: String,
    /// u(x_i), unit of the input.
    pub standard_uncertainty: f64,
    /// c_i.
    pub sensitivity: f64,
    /// Uncertainty contribution c_i u(x_i) (output unit, signed).
    pub contribution: f64,
    /// (c_i u_i)² / u_c² (the shares sum to 1 without correlations).
    pub variance_share: f64,
    /// ν_i (`f64::INFINITY` for infinite).
    pub dof: f64,
}

/// Result of [`evaluate_budget`].
#[derive(Debug, Clone, PartialEq)]
pub struct BudgetResult {
    /// y = Σ c_i x_i (output unit).
    pub estimate: f64,
    /// Combined standard uncertainty u_c(y) (output unit).
    pub combined_standard_uncertainty: f64,
    /// Effective degrees of freedom (Welch-Satterthwaite), `f64::INFINITY` when all ν_i are.
    pub effective_dof: f64,
    /// ν used for k (equal to `effective_dof`, or truncated).
    pub dof_for_k: f64,
    /// Coverage probability p.
    pub coverage_probability: f64,
    /// Coverage factor k_p(ν).
    pub coverage_factor: f64,
    /// Expanded uncertainty U = k u_c (output unit).
    pub expanded_uncertainty: f64,
    /// Per-component results, in input order.
    pub components: Vec<ComponentContribution>,
    /// Share of u_c² from the correlation terms, 2 Σ_{i<j} c_i c_j u_i u_j r_ij / u_c².
    pub correlation_share: f64,
    /// Whether correlations entered (ν_eff then follows the common-practice extension).
    pub correlated: bool,
}

/// Evaluates an uncertainty budget for `Y = Σ c_i X_i`.
///
/// # Reference
/// JCGM 100:2008 5.1.2 (uncorrelated), 5.2.2 (correlated inputs), G.4.1 (Welch-Satterthwaite,
/// Eq. G.2b), G.4.2 (ν of Type B), 6.2.1 and 6.3.3 (U = k u_c, k from the t distribution).
pub fn evaluate_budget(
    components: &[Component],
    correlations: &[Correlation],
    options: &BudgetOptions,
) -> Result<BudgetResult, StatsError> {
    if components.is_empty() {
        return Err(StatsError::invalid("components", "the budget is empty"));
    }
    let nc = components.len();
    let mut us = Vec::with_capacity(nc);
    let mut nus = Vec::with_capacity(nc);
    for c in components {
        check_finite(&format!("{}: estimate", c.name), None, c.estimate)?;
        check_finite(&format!("{}: sensitivity", c.name), None, c.sensitivity)?;
        us.push(c.standard_uncertainty()?);
        nus.push(c.degrees_of_freedom()?);
    }
    let mut corr = DMatrix::<f64>::identity(nc, nc);
    for (q, cr) in correlations.iter().enumerate() {
        let field = || format!("correlations[{q}]");
        if cr.i >= nc || cr.j >= nc {
            return Err(StatsError::invalid(field(), "component index out of range"));
        }
        if cr.i == cr.j {
            return Err(StatsError::invalid(field(), "i and j must differ"));
        }
        if cr.r.is_nan() || cr.r.abs() > 1.0 {
            return Err(StatsError::invalid(
                field(),
                format!("r = {} is outside [-1, 1]", cr.r),
            ));
        }
        if corr[(cr.i, cr.j)] != 0.0 {
            return Err(StatsError::invalid(field(), "pair given twice"));
        }
        corr[(cr.i, cr.j)] = cr.r;
        corr[(cr.j, cr.i)] = cr.r;
    }
    let correlated = correlations.iter().any(|c| c.r != 0.0);
    if correlated {
        let eig = SymmetricEigen::try_new(corr.clone(), f64::EPSILON, 10_000).ok_or_else(|| {
            StatsError::NumericalFailure {
                what: "eigenvalues of the correlation matrix".into(),
            }
        })?;
        let min_eig = eig.eigenvalues.iter().fold(f64::INFINITY, |a, &v| a.min(v));
        if min_eig < -1e-12 {
            return Err(StatsError::invalid(
                "correlations",
                format!(
                    "the correlation matrix is not positive semidefinite \
                     (smallest eigenvalue {min_eig:.3e})"
                ),
            ));
        }
    }
    let contrib: Vec<f64> = components
        .iter()
        .zip(&us)
        .map(|(c, u)| c.sensitivity * u)
        .collect();
    let mut diag = Dd::ZERO;
    for v in &contrib {
        diag = diag + Dd::prod_of(*v, *v);
    }
    let mut cross = Dd::ZERO;
    for i in 0..nc {
        for j in (i + 1)..nc {
            let r = corr[(i, j)];
            if r != 0.0 {
                cross = cross + Dd::prod_of(contrib[i], contrib[j]).mul_f64(2.0 * r);
            }
        }
    }
    let var = (diag + cross).to_f64().max(0.0);
    let uc = var.sqrt();
    let estimate = components
        .iter()
        .fold(Dd::ZERO, |acc, c| {
            acc + Dd::prod_of(c.sensitivity, c.estimate)
        })
        .to_f64();

    // Welch-Satterthwaite (G.2b); terms with infinite ν or zero contribution vanish.
    let den: f64 = contrib
        .iter()
        .zip(&nus)
        .filter(|(_, nu)| nu.is_finite())
        .map(|(c, nu)| c.powi(4) / nu)
        .sum();
    let effective_dof = if den > 0.0 && uc > 0.0 {
        (uc.powi(4) / den).max(f64::MIN_POSITIVE)
    } else {
        f64::INFINITY
    };
    let dof_for_k = match options.nu_eff_rounding {
        NuEffRounding::Exact => effective_dof,
        NuEffRounding::TruncateDown if effective_dof.is_finite() => effective_dof.floor().max(1.0),
        NuEffRounding::TruncateDown => effective_dof,
    };
    let p = options.coverage_probability;
    let k = coverage_factor(p, dof_for_k)?;
    let components_out = components
        .iter()
        .zip(us.iter().zip(&nus))
        .zip(&contrib)
        .map(|((c, (&u, &nu)), &ci)| ComponentContribution {
            name: c.name.clone(),
            standard_uncertainty: u,
            sensitivity: c.sensitivity,
            contribution: ci,
            variance_share: if var > 0.0 { ci * ci / var } else { 0.0 },
            dof: nu,
        })
        .collect();
    Ok(BudgetResult {
        estimate,
        combined_standard_uncertainty: uc,
        effective_dof,
        dof_for_k,
        coverage_probability: p,
        coverage_factor: k,
        expanded_uncertainty: k * uc,
        components: components_out,
        correlation_share: if var > 0.0 { cross.to_f64() / var } else { 0.0 },
        correlated,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Relative tolerance for closed-form arithmetic.
    const REL: f64 = 1e-13;

    fn close(a: f64, b: f64) -> bool {
        ((a - b) / b).abs() < REL
    }

    #[test]
    fn standard_uncertainty_of_each_distribution() {
        // JCGM 100:2008 4.3.7 (a/√3), 4.3.9 (a/√6), arcsine a/√2 (JCGM 101 6.4.6), 4.3.3 (U/k).
        let u = |d| Component::new("x", 0.0, d).standard_uncertainty().unwrap();
        assert!(close(
            u(Distribution::Rectangular {
                half_width: 3f64.sqrt()
            }),
            1.0
        ));
        assert!(close(
            u(Distribution::Triangular {
                half_width: 6f64.sqrt()
            }),
            1.0
        ));
        assert!(close(
            u(Distribution::UShaped {
                half_width: 2f64.sqrt()
            }),
            1.0
        ));
        assert!(close(
            u(Distribution::NormalExpanded {
                expanded: 0.5,
                k: 2.0
            }),
            0.25
        ));
        assert!(close(
            u(Distribution::TypeA {
                std_dev_of_mean: 0.3,
                n: 4
            }),
            0.3
        ));
        // U = 1.96 at 95 %, normal: k = 1.959963984540054 (scipy 1.17.1 stats.norm.ppf(0.975)).
        assert!(close(
            u(Distribution::NormalConfidence {
                expanded: 1.96,
                p: 0.95
            }),
            1.96 / 1.959963984540054
        ));
        let neg = Component::new("x", 0.0, Distribution::Rectangular { half_width: -1.0 });
        assert!(neg.standard_uncertainty().is_err());
    }

    #[test]
    fn degrees_of_freedom_rules() {
        // JCGM 100:2008 G.4.2: reliability "about 25 %" gives ν = ½ (0.25)⁻² = 8.
        let c = Component::new("x", 0.0, Distribution::Standard { u: 1.0 })
            .with_dof(Dof::RelativeReliability(0.25));
        assert_eq!(c.degrees_of_freedom().unwrap(), 8.0);
        let a = Component::new(
            "r",
            0.0,
            Distribution::TypeA {
                std_dev_of_mean: 1.0,
                n: 10,
            },
        );
        assert_eq!(a.degrees_of_freedom().unwrap(), 9.0);
        let b = Component::new("b", 0.0, Distribution::Rectangular { half_width: 1.0 });
        assert_eq!(b.degrees_of_freedom().unwrap(), f64::INFINITY);
        let bad = Component::new(
            "r",
            0.0,
            Distribution::TypeA {
                std_dev_of_mean: 1.0,
                n: 1,
            },
        );
        assert!(bad.degrees_of_freedom().is_err());
    }

    #[test]
    fn gum_g41_welch_satterthwaite_example() {
        // JCGM 100:2008 G.4.1 example (numbers from memory): Y = b X1 X2 X3 with relative
        // standard uncertainties 0.25 %, 0.57 %, 0.82 % from n = 10, 5, 15 readings; published
        // u_c(y)/y = 1.03 %, ν_eff = 19.0, t_95(19) = 2.09, U_95/y = 2.2 %. Relative
        // uncertainties of a product combine as an additive budget with c_i = 1.
        let comp = |name: &str, u: f64, n: u32| {
            Component::new(
                name,
                0.0,
                Distribution::TypeA {
                    std_dev_of_mean: u,
                    n,
                },
            )
        };
        let budget = [
            comp("X1", 0.25, 10),
            comp("X2", 0.57, 5),
            comp("X3", 0.82, 15),
        ];
        let opts = BudgetOptions {
            coverage_probability: 0.95,
            ..BudgetOptions::default()
        };
        let r = evaluate_budget(&budget, &[], &opts).unwrap();
        assert!((r.combined_standard_uncertainty - 1.03).abs() < 0.005);
        assert!((r.effective_dof - 19.0).abs() < 0.05, "{}", r.effective_dof);
        assert!((r.coverage_factor - 2.09).abs() < 0.005);
        assert!((r.expanded_uncertainty - 2.2).abs() < 0.05);
        // Same budget with truncation to the next lower integer (G.4.1 note): ν = 18.
        let trunc = BudgetOptions {
            nu_eff_rounding: NuEffRounding::TruncateDown,
            ..opts
        };
        let rt = evaluate_budget(&budget, &[], &trunc).unwrap();
        assert_eq!(rt.dof_for_k, 18.0);
        // t_0.975(18) = 2.10092204024096 (scipy 1.17.1).
        assert!((rt.coverage_factor - 2.1009220402410382).abs() < 1e-10);
        let shares: f64 = r.components.iter().map(|c| c.variance_share).sum();
        assert!((shares - 1.0).abs() < 1e-14);
        assert!(!r.correlated && r.correlation_share == 0.0);
    }

    #[test]
    fn infinite_dof_gives_k_two_at_default_probability() {
        // Worked by hand: u = 0.1/√3·2, 0.05; c = 2, −1; u_c² = (0.2/√3)² + 0.05².
        let budget = [
            Component::new("offset", 1.5, Distribution::Rectangular { half_width: 0.1 })
                .with_sensitivity(2.0),
            Component::new(
                "ref",
                10.0,
                Distribution::NormalExpanded {
                    expanded: 0.1,
                    k: 2.0,
                },
            )
            .with_sensitivity(-1.0),
        ];
        let r = evaluate_budget(&budget, &[], &BudgetOptions::default()).unwrap();
        let uc = ((0.2 / 3f64.sqrt()).powi(2) + 0.05f64.powi(2)).sqrt();
        assert!(close(r.combined_standard_uncertainty, uc));
        assert_eq!(r.effective_dof, f64::INFINITY);
        assert!((r.coverage_factor - 2.0).abs() < 1e-14);
        assert!(close(r.expanded_uncertainty, 2.0 * uc));
        assert!(close(r.estimate, 2.0 * 1.5 - 10.0));
        assert!(close(r.components[1].contribution, -0.05));
        assert!(close(
            r.components[0].variance_share,
            (0.2f64 / 3f64.sqrt()).powi(2) / (uc * uc)
        ));
    }

    #[test]
    fn correlations_enter_the_combined_uncertainty() {
        // JCGM 100:2008 5.2.2: with r = +1 and c = 1, u_c = u1 + u2; with r = −1, |u1 − u2|.
        let b = [
            Component::new("a", 0.0, Distribution::Standard { u: 0.3 }),
            Component::new("b", 0.0, Distribution::Standard { u: 0.4 }),
        ];
        let plus = evaluate_budget(
            &b,
            &[Correlation { i: 0, j: 1, r: 1.0 }],
            &BudgetOptions::default(),
        )
        .unwrap();
        assert!(close(plus.combined_standard_uncertainty, 0.7));
        assert!(plus.correlated);
        assert!(close(plus.correlation_share, 2.0 * 0.3 * 0.4 / 0.49));
        let minus = evaluate_budget(
            &b,
            &[Correlation {
                i: 1,
                j: 0,
                r: -1.0,
            }],
            &BudgetOptions::default(),
        )
        .unwrap();
        assert!((minus.combined_standard_uncertainty - 0.1).abs() < 1e-15);
        // Inconsistent correlations (r12 = r13 = 0.9, r23 = −0.9) are rejected.
        let three = [b[0].clone(), b[1].clone(), b[0].clone()];
        let bad = [
            Correlation { i: 0, j: 1, r: 0.9 },
            Correlation { i: 0, j: 2, r: 0.9 },
            Correlation {
                i: 1,
                j: 2,
                r: -0.9,
            },
        ];
        let e = evaluate_budget(&three, &bad, &BudgetOptions::default()).unwrap_err();
        assert!(e.to_string().contains("not positive semidefinite"), "{e}");
        assert!(
            evaluate_budget(
                &b,
                &[Correlation { i: 0, j: 0, r: 0.5 }],
                &BudgetOptions::default()
            )
            .is_err()
        );
        assert!(
            evaluate_budget(
                &b,
                &[Correlation { i: 0, j: 1, r: 1.5 }],
                &BudgetOptions::default()
            )
            .is_err()
        );
        assert!(evaluate_budget(&[], &[], &BudgetOptions::default()).is_err());
    }
}
