//! Stateless computations: `POST /api/v1/compute/fit` (weighted polynomial
//! least squares) and `POST /api/v1/compute/uncertainty` (GUM budget with an
//! optional Monte Carlo check and conformity decision).
//!
//! Numbers are returned unrounded; values rounded for reporting (ILAC-P14)
//! sit in `reported`.

use axum::Json;
use serde::{Deserialize, Serialize};

use crate::metrology::stats::{
    self, BudgetOptions, Component, Correlation, CovarianceConvention, DecisionRule, Distribution,
    Dof, McInput, McModel, McOptions, PolyOptions, ReportOptions, RoundingMode, StatsError,
    Tolerance,
};
use crate::web::AppError;
use crate::web::extract::ApiJson;

/// Largest polynomial degree accepted.
pub const MAX_DEGREE: usize = 10;
/// Most points accepted in one fit.
pub const MAX_POINTS: usize = 100_000;
/// Most budget components accepted.
pub const MAX_COMPONENTS: usize = 200;
/// Most Monte Carlo trials in one request (8 bytes of memory per trial).
pub const MAX_TRIALS: usize = 10_000_000;
/// Fewest Monte Carlo trials in one request.
pub const MIN_TRIALS: usize = 10_000;

/// Maps a statistics error onto the request field it concerns.
pub fn stats_error(error: StatsError, prefix: &str) -> AppError {
    let field = match &error {
        StatsError::TooFewPoints { .. } | StatsError::RankDeficient { .. } => "x".to_owned(),
        StatsError::NotFinite { what } => what.split_whitespace().next().unwrap_or("").to_owned(),
        StatsError::InvalidWeight { index, .. } => format!("weights[{index}]"),
        StatsError::LengthMismatch { what, .. } => what.clone(),
        StatsError::InvalidInput { field, .. } => field.clone(),
        _ => String::new(),
    };
    let field = if prefix.is_empty() || field.is_empty() {
        field
    } else {
        format!("{prefix}.{field}")
    };
    AppError::invalid(field, error.to_string())
}

// ------------------------------------------------------------------ fit

/// Body of `POST /api/v1/compute/fit`.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct FitRequest {
    /// Independent variable (e.g. reference temperature, °C).
    pub x: Vec<f64>,
    /// Dependent variable (e.g. deviation, °C).
    pub y: Vec<f64>,
    /// Polynomial degree, 0..=10.
    pub degree: usize,
    /// Fit a constant term (default true).
    #[serde(default = "yes")]
    pub intercept: bool,
    /// Weights w_i (> 0). Mutually exclusive with `uncertainties`.
    #[serde(default)]
    pub weights: Option<Vec<f64>>,
    /// Standard uncertainties u_i of y (weights 1/u_i²; covariance then
    /// unscaled, with the chi-square check).
    #[serde(default)]
    pub uncertainties: Option<Vec<f64>>,
    /// Expanded uncertainties of the points: residuals larger than these are
    /// flagged.
    #[serde(default)]
    pub expanded_uncertainties: Option<Vec<f64>>,
    /// Values of x at which to evaluate the fitted function and its standard
    /// uncertainty.
    #[serde(default)]
    pub evaluate_at: Option<Vec<f64>>,
}

fn yes() -> bool {
    true
}

/// The fit answer.
#[derive(Debug, Clone, Serialize)]
pub struct FitResponse {
    /// `coefficients[i]` multiplies `x^powers[i]` (x^i with intercept,
    /// x^(i+1) without).
    pub coefficients: Vec<f64>,
    /// Power of x of each coefficient.
    pub powers: Vec<u32>,
    /// Standard uncertainties of the coefficients.
    pub standard_uncertainties: Vec<f64>,
    /// Covariance matrix of the coefficients.
    pub covariance: Vec<Vec<f64>>,
    /// Correlation matrix of the coefficients.
    pub correlation: Vec<Vec<f64>>,
    /// Fitted values at the points.
    pub fitted: Vec<f64>,
    /// Residuals y - fitted.
    pub residuals: Vec<f64>,
    /// Residual standard deviation s (null when n = m).
    pub residual_std_dev: Option<f64>,
    /// Degrees of freedom n - m.
    pub dof: usize,
    /// Coefficient of determination.
    pub r_squared: f64,
    /// Condition number of the scaled design matrix.
    pub condition_number: f64,
    /// `true` when the covariance was scaled by s² (unknown point variances).
    pub covariance_scaled: bool,
    /// Chi-square consistency check (known point uncertainties only).
    pub chi_square: Option<ChiSquareAnswer>,
    /// Points whose residual exceeds their expanded uncertainty.
    pub flagged_residuals: Vec<FlaggedResidual>,
    /// The fitted function at `evaluate_at`.
    pub evaluations: Vec<Evaluation>,
    /// Plain-language warnings.
    pub warnings: Vec<String>,
}

/// Chi-square check of a fit with known point uncertainties.
#[derive(Debug, Clone, Serialize)]
pub struct ChiSquareAnswer {
    /// Sum of w_i r_i².
    pub chi_square: f64,
    /// Degrees of freedom.
    pub dof: usize,
    /// √(χ²/ν).
    pub birge_ratio: Option<f64>,
    /// P(χ²_ν ≥ observed).
    pub p_value: Option<f64>,
}

/// A residual larger than its point's expanded uncertainty.
#[derive(Debug, Clone, Serialize)]
pub struct FlaggedResidual {
    /// Index of the point.
    pub index: usize,
    /// Its residual.
    pub residual: f64,
    /// The expanded uncertainty it exceeds.
    pub expanded_uncertainty: f64,
}

/// The fitted function at one x.
#[derive(Debug, Clone, Serialize)]
pub struct Evaluation {
    /// Where.
    pub x: f64,
    /// Fitted value.
    pub y: f64,
    /// Its standard uncertainty from the coefficient covariance.
    pub standard_uncertainty: f64,
    /// `true` outside the range of the fitted x values.
    pub extrapolated: bool,
}

fn rows(m: &nalgebra::DMatrix<f64>) -> Vec<Vec<f64>> {
    (0..m.nrows())
        .map(|i| (0..m.ncols()).map(|j| m[(i, j)]).collect())
        .collect()
}

/// Runs a fit request.
///
/// # Errors
/// Validation errors naming the field (e.g. `degree 4 needs at least 5 points, got 3`).
pub fn fit(request: &FitRequest) -> Result<FitResponse, AppError> {
    if request.degree > MAX_DEGREE {
        return Err(AppError::invalid(
            "degree",
            format!(
                "degree {} is not supported; allowed 0 to {MAX_DEGREE}",
                request.degree
            ),
        ));
    }
    if !request.intercept && request.degree == 0 {
        return Err(AppError::invalid(
            "degree",
            "a fit without intercept needs degree 1 or more",
        ));
    }
    if request.x.len() > MAX_POINTS {
        return Err(AppError::invalid(
            "x",
            format!(
                "{} points is more than the {MAX_POINTS} accepted",
                request.x.len()
            ),
        ));
    }
    let (weights, convention) = match (&request.weights, &request.uncertainties) {
        (Some(_), Some(_)) => {
            return Err(AppError::invalid(
                "uncertainties",
                "give weights or uncertainties, not both",
            ));
        }
        (Some(w), None) => (Some(w.clone()), CovarianceConvention::ScaledByResidual),
        (None, Some(u)) => (
            Some(
                stats::weights_from_uncertainties(u)
                    .map_err(|e| stats_error(e, ""))
                    .map_err(|e| rename_weights(e, "uncertainties"))?,
            ),
            CovarianceConvention::Unscaled,
        ),
        (None, None) => (None, CovarianceConvention::ScaledByResidual),
    };
    let options = PolyOptions {
        degree: request.degree,
        intercept: request.intercept,
        covariance: convention,
    };
    let result = stats::fit_polynomial(&request.x, &request.y, weights.as_deref(), &options)
        .map_err(|e| stats_error(e, ""))?;

    let mut warnings = Vec::new();
    let mut flagged = Vec::new();
    if let Some(expanded) = &request.expanded_uncertainties {
        for flag in result
            .residuals_exceeding(expanded)
            .map_err(|e| stats_error(e, ""))
            .map_err(|e| rename_weights(e, "expanded_uncertainties"))?
        {
            warnings.push(format!(
                "point {} (x = {}) deviates from the fitted function by {:.3e}, more than its expanded uncertainty {:.3e}",
                flag.index, request.x[flag.index], flag.residual, flag.limit
            ));
            flagged.push(FlaggedResidual {
                index: flag.index,
                residual: flag.residual,
                expanded_uncertainty: flag.limit,
            });
        }
    }
    if result.dof == 0 {
        warnings.push(
            "as many coefficients as points: the fit passes through every point and has no residual to judge it by"
                .to_owned(),
        );
    }
    if let Some(chi) = &result.chi_square
        && let Some(p) = chi.p_value
        && p < 0.05
    {
        warnings.push(format!(
            "the residuals are larger than the stated uncertainties explain (chi-square {:.3} for {} degrees of freedom, p = {:.3})",
            chi.chi_square, chi.dof, p
        ));
    }
    let (lo, hi) = request
        .x
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), &v| {
            (lo.min(v), hi.max(v))
        });
    let mut evaluations = Vec::new();
    for (i, &at) in request.evaluate_at.iter().flatten().enumerate() {
        if !at.is_finite() {
            return Err(AppError::invalid(
                format!("evaluate_at[{i}]"),
                "must be a finite number",
            ));
        }
        let (y, u) = result.evaluate(at);
        if !(y.is_finite() && u.is_finite()) {
            return Err(AppError::invalid(
                format!("evaluate_at[{i}]"),
                format!(
                    "the fitted function or its uncertainty at {at} is beyond the floating-point range; evaluate nearer the fitted range {lo} to {hi}"
                ),
            ));
        }
        let extrapolated = at < lo || at > hi;
        if extrapolated {
            warnings.push(format!(
                "evaluate_at[{i}] = {at} lies outside the fitted range {lo} to {hi}: the value is an extrapolation"
            ));
        }
        evaluations.push(Evaluation {
            x: at,
            y,
            standard_uncertainty: u,
            extrapolated,
        });
    }
    let m = result.coefficients.len();
    let correlation = (0..m)
        .map(|i| {
            (0..m)
                .map(|j| result.correlation(i, j).unwrap_or(f64::NAN))
                .map(|r| if r.is_finite() { r } else { 0.0 })
                .collect()
        })
        .collect();
    Ok(FitResponse {
        coefficients: result.coefficients.clone(),
        powers: result.powers.clone(),
        standard_uncertainties: result.standard_uncertainties.clone(),
        covariance: rows(&result.covariance),
        correlation,
        fitted: result.fitted.clone(),
        residuals: result.residuals.clone(),
        residual_std_dev: result.residual_std_dev,
        dof: result.dof,
        r_squared: result.r_squared,
        condition_number: result.condition_number,
        covariance_scaled: result.covariance_scaled,
        chi_square: result.chi_square.map(|c| ChiSquareAnswer {
            chi_square: c.chi_square,
            dof: c.dof,
            birge_ratio: c.birge_ratio,
            p_value: c.p_value,
        }),
        flagged_residuals: flagged,
        evaluations,
        warnings,
    })
}

/// Points an error about "weights" at the field the caller actually sent.
fn rename_weights(error: AppError, field: &str) -> AppError {
    match error {
        AppError::Invalid { detail, errors } => AppError::Invalid {
            detail: detail
                .replace("weights", field)
                .replace("expanded_uncertainty", field),
            errors: errors
                .into_iter()
                .map(|mut e| {
                    e.field = e
                        .field
                        .replace("weights", field)
                        .replace("expanded_uncertainty", field);
                    e
                })
                .collect(),
        },
        other => other,
    }
}

/// `POST /api/v1/compute/fit`.
pub async fn post_fit(
    ApiJson(request): ApiJson<FitRequest>,
) -> Result<Json<FitResponse>, AppError> {
    // QR with refinement on up to 1e5 points is CPU work: keep it off the
    // async workers.
    tokio::task::spawn_blocking(move || fit(&request))
        .await
        .map_err(|e| AppError::Internal(format!("fit task failed: {e}")))?
        .map(Json)
}

// ------------------------------------------------------------ uncertainty

/// One budget component as sent by a client.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ComponentRequest {
    /// Name of the input quantity.
    pub name: String,
    /// `normal`, `rectangular`, `triangular`, `u_shaped` or `type_a`.
    pub distribution: String,
    /// Estimate of the input (its unit).
    #[serde(default)]
    pub estimate: f64,
    /// Standard uncertainty (any distribution; for `type_a` the standard
    /// deviation of the mean).
    #[serde(default)]
    pub standard_uncertainty: Option<f64>,
    /// Half-width of a rectangular, triangular or U-shaped distribution.
    #[serde(default)]
    pub half_width: Option<f64>,
    /// Expanded uncertainty of a normal distribution (with `k`).
    #[serde(default)]
    pub expanded: Option<f64>,
    /// Coverage factor of `expanded` (default 2).
    #[serde(default)]
    pub k: Option<f64>,
    /// Number of readings of a Type A evaluation.
    #[serde(default)]
    pub n: Option<u32>,
    /// Sensitivity coefficient (default 1).
    #[serde(default = "one")]
    pub sensitivity: f64,
    /// Degrees of freedom (null: n - 1 for Type A, infinite otherwise).
    #[serde(default)]
    pub dof: Option<f64>,
}

fn one() -> f64 {
    1.0
}

/// A correlation between two components (by index).
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CorrelationRequest {
    /// First component index.
    pub i: usize,
    /// Second component index.
    pub j: usize,
    /// Correlation coefficient, -1..1.
    pub r: f64,
}

/// Monte Carlo options.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct MonteCarloRequest {
    /// Number of trials; null runs the adaptive procedure (JCGM 101 7.9).
    #[serde(default)]
    pub trials: Option<usize>,
    /// Seed of the generator (results repeat for a seed).
    #[serde(default = "seed_one")]
    pub seed: u64,
    /// Significant digits of u regarded as meaningful (1 or 2; default 2):
    /// sets the numerical tolerance of the validation and of the adaptive
    /// stopping rule.
    #[serde(default = "two")]
    pub significant_digits: u32,
}

fn seed_one() -> u64 {
    1
}
fn two() -> u32 {
    2
}

/// A conformity decision to take on the result.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct DecisionRequest {
    /// Lower tolerance limit (omit for an upper limit only).
    #[serde(default)]
    pub lower: Option<f64>,
    /// Upper tolerance limit (omit for a lower limit only).
    #[serde(default)]
    pub upper: Option<f64>,
    /// `simple` (w = 0), `guarded` (binary, w = r U) or
    /// `guarded_non_binary` (pass / conditional pass / conditional fail / fail).
    pub rule: String,
    /// Guard band factor r (default 1).
    #[serde(default = "one")]
    pub guard_band_factor: f64,
    /// The value to judge (default: the budget's estimate).
    #[serde(default)]
    pub measured: Option<f64>,
}

/// Body of `POST /api/v1/compute/uncertainty`.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct UncertaintyRequest {
    /// The budget's components.
    pub components: Vec<ComponentRequest>,
    /// Correlations between components.
    #[serde(default)]
    pub correlations: Vec<CorrelationRequest>,
    /// Coverage probability (default 0.9545, i.e. k = 2 for a normal).
    #[serde(default)]
    pub coverage_probability: Option<f64>,
    /// The lab's CMC at this point (expanded, output unit): the reported
    /// uncertainty is never below it.
    #[serde(default)]
    pub cmc: Option<f64>,
    /// Monte Carlo check, or null.
    #[serde(default)]
    pub monte_carlo: Option<MonteCarloRequest>,
    /// Conformity decision, or null.
    #[serde(default)]
    pub decision: Option<DecisionRequest>,
}

/// One component's share of the budget.
#[derive(Debug, Clone, Serialize)]
pub struct ComponentAnswer {
    /// Name.
    pub name: String,
    /// u(x_i).
    pub standard_uncertainty: f64,
    /// c_i.
    pub sensitivity: f64,
    /// c_i u(x_i) (output unit).
    pub contribution: f64,
    /// Share of u_c².
    pub variance_share: f64,
    /// ν_i (null for infinite).
    pub dof: Option<f64>,
}

/// Monte Carlo result.
#[derive(Debug, Clone, Serialize)]
pub struct MonteCarloAnswer {
    /// Mean of the output values.
    pub estimate: f64,
    /// Standard deviation of the output values.
    pub standard_uncertainty: f64,
    /// Shortest coverage interval.
    pub shortest_interval: [f64; 2],
    /// Probabilistically symmetric coverage interval.
    pub symmetric_interval: [f64; 2],
    /// Trials used.
    pub trials: usize,
    /// Whether the adaptive procedure stabilised (null for a fixed count).
    pub stabilized: Option<bool>,
    /// JCGM 101 clause 8: the GUM interval agrees with the symmetric Monte
    /// Carlo interval within the numerical tolerance.
    pub gum_validated: bool,
    /// |y - U - y_low|.
    pub d_low: f64,
    /// |y + U - y_high|.
    pub d_high: f64,
    /// Numerical tolerance δ of u for the chosen significant digits.
    pub numerical_tolerance: f64,
    /// The seed used.
    pub seed: u64,
}

/// A conformity decision.
#[derive(Debug, Clone, Serialize)]
pub struct DecisionAnswer {
    /// `pass`, `conditional pass`, `conditional fail` or `fail`.
    pub outcome: &'static str,
    /// The rule, in words, as a certificate prints it.
    pub statement: String,
    /// Guard band w.
    pub guard_band: f64,
    /// The value judged.
    pub measured: f64,
    /// Acceptance limits [lower, upper] (null where there is no limit).
    pub acceptance_limits: [Option<f64>; 2],
}

/// Rounded values for a certificate (ILAC-P14).
#[derive(Debug, Clone, Serialize)]
pub struct Reported {
    /// The estimate rounded to the last digit of U.
    pub estimate: String,
    /// U to at most two significant digits, rounded up.
    pub expanded_uncertainty: String,
    /// `true` when the CMC set the reported U.
    pub cmc_floor_applied: bool,
}

/// The uncertainty answer.
#[derive(Debug, Clone, Serialize)]
pub struct UncertaintyResponse {
    /// y = Σ c_i x_i.
    pub estimate: f64,
    /// u_c(y).
    pub combined_standard_uncertainty: f64,
    /// ν_eff by Welch-Satterthwaite (null when infinite).
    pub effective_dof: Option<f64>,
    /// Coverage probability.
    pub coverage_probability: f64,
    /// k.
    pub coverage_factor: f64,
    /// U = k u_c.
    pub expanded_uncertainty: f64,
    /// Per component.
    pub components: Vec<ComponentAnswer>,
    /// Share of u_c² from correlation terms.
    pub correlation_share: f64,
    /// Values rounded for reporting.
    pub reported: Reported,
    /// The Monte Carlo check, if asked for.
    pub monte_carlo: Option<MonteCarloAnswer>,
    /// The conformity decision, if asked for.
    pub decision: Option<DecisionAnswer>,
}

fn finite_or_null(v: f64) -> Option<f64> {
    v.is_finite().then_some(v)
}

/// Builds the core component from a request line; `at` is its index.
fn component(c: &ComponentRequest, at: usize) -> Result<Component, AppError> {
    let field = |name: &str| format!("components[{at}].{name}");
    let need = |value: Option<f64>, name: &str, what: &str| {
        value.ok_or_else(|| {
            AppError::invalid(field(name), format!("a {what} component needs {name}"))
        })
    };
    let kind = c.distribution.trim().to_ascii_lowercase();
    let given = [
        c.standard_uncertainty.is_some(),
        c.half_width.is_some(),
        c.expanded.is_some(),
    ]
    .iter()
    .filter(|g| **g)
    .count();
    if given > 1 {
        return Err(AppError::invalid(
            field("standard_uncertainty"),
            "give one of standard_uncertainty, half_width or expanded",
        ));
    }
    let distribution = match kind.as_str() {
        "normal" => match (c.expanded, c.standard_uncertainty) {
            (Some(expanded), _) => Distribution::NormalExpanded {
                expanded,
                k: c.k.unwrap_or(2.0),
            },
            (None, Some(u)) => Distribution::Standard { u },
            (None, None) => {
                return Err(AppError::invalid(
                    field("expanded"),
                    "a normal component needs expanded (with k) or standard_uncertainty",
                ));
            }
        },
        "rectangular" | "triangular" | "u_shaped" => {
            let half_width = match (c.half_width, c.standard_uncertainty) {
                (Some(a), _) => a,
                (None, Some(u)) => {
                    u * match kind.as_str() {
                        "rectangular" => 3f64.sqrt(),
                        "triangular" => 6f64.sqrt(),
                        _ => 2f64.sqrt(),
                    }
                }
                (None, None) => need(None, "half_width", &kind)?,
            };
            match kind.as_str() {
                "rectangular" => Distribution::Rectangular { half_width },
                "triangular" => Distribution::Triangular { half_width },
                _ => Distribution::UShaped { half_width },
            }
        }
        "type_a" => {
            let s = need(c.standard_uncertainty, "standard_uncertainty", "type_a")?;
            match c.n {
                Some(n) => Distribution::TypeA {
                    std_dev_of_mean: s,
                    n,
                },
                None if c.dof.is_some() => Distribution::Standard { u: s },
                None => {
                    return Err(AppError::invalid(
                        field("n"),
                        "a type_a component needs n (the number of readings) or dof",
                    ));
                }
            }
        }
        other => {
            return Err(AppError::invalid(
                field("distribution"),
                format!(
                    "unknown distribution {other:?}; expected normal, rectangular, triangular, u_shaped or type_a"
                ),
            ));
        }
    };
    let mut out =
        Component::new(c.name.clone(), c.estimate, distribution).with_sensitivity(c.sensitivity);
    if let Some(dof) = c.dof {
        out = out.with_dof(Dof::Value(dof));
    }
    // Validate now so the error names this component.
    out.standard_uncertainty()
        .map_err(|e| stats_error(e, &format!("components[{at}]")))?;
    out.degrees_of_freedom()
        .map_err(|e| stats_error(e, &format!("components[{at}]")))?;
    Ok(out)
}

/// Runs an uncertainty request.
///
/// # Errors
/// Validation errors naming the field (e.g. `components[2].half_width`).
pub fn uncertainty(request: &UncertaintyRequest) -> Result<UncertaintyResponse, AppError> {
    if request.components.is_empty() {
        return Err(AppError::invalid(
            "components",
            "the budget has no components",
        ));
    }
    if request.components.len() > MAX_COMPONENTS {
        return Err(AppError::invalid(
            "components",
            format!(
                "{} components is more than the {MAX_COMPONENTS} accepted",
                request.components.len()
            ),
        ));
    }
    let components = request
        .components
        .iter()
        .enumerate()
        .map(|(i, c)| component(c, i))
        .collect::<Result<Vec<_>, _>>()?;
    let correlations: Vec<Correlation> = request
        .correlations
        .iter()
        .map(|c| Correlation {
            i: c.i,
            j: c.j,
            r: c.r,
        })
        .collect();
    let options = BudgetOptions {
        coverage_probability: request.coverage_probability.unwrap_or(stats::P_K2),
        ..BudgetOptions::default()
    };
    let budget = stats::evaluate_budget(&components, &correlations, &options).map_err(|e| {
        let field_hint = match &e {
            StatsError::InvalidInput { field, .. } if field.contains("correlation") => {
                "correlations"
            }
            StatsError::InvalidInput { field, .. } if field.contains("coverage") => {
                "coverage_probability"
            }
            _ => "",
        };
        if field_hint.is_empty() {
            stats_error(e, "")
        } else {
            AppError::invalid(field_hint, e.to_string())
        }
    })?;
    if let Some(cmc) = request.cmc
        && !(cmc.is_finite() && cmc >= 0.0)
    {
        return Err(AppError::invalid("cmc", "must be a finite number >= 0"));
    }
    let reported = stats::round_for_report(
        budget.estimate,
        budget.expanded_uncertainty,
        &ReportOptions {
            significant_digits: 2,
            mode: RoundingMode::Up,
            cmc: request.cmc,
        },
    )
    .map_err(|e| stats_error(e, ""))?;

    let monte_carlo = match &request.monte_carlo {
        None => None,
        Some(mc) => Some(monte_carlo(mc, &components, &correlations, &budget)?),
    };
    let decision = match &request.decision {
        None => None,
        Some(d) => Some(decision(d, budget.estimate, budget.expanded_uncertainty)?),
    };
    Ok(UncertaintyResponse {
        estimate: budget.estimate,
        combined_standard_uncertainty: budget.combined_standard_uncertainty,
        effective_dof: finite_or_null(budget.effective_dof),
        coverage_probability: budget.coverage_probability,
        coverage_factor: budget.coverage_factor,
        expanded_uncertainty: budget.expanded_uncertainty,
        components: budget
            .components
            .iter()
            .map(|c| ComponentAnswer {
                name: c.name.clone(),
                standard_uncertainty: c.standard_uncertainty,
                sensitivity: c.sensitivity,
                contribution: c.contribution,
                variance_share: c.variance_share,
                dof: finite_or_null(c.dof),
            })
            .collect(),
        correlation_share: budget.correlation_share,
        reported: Reported {
            estimate: reported.value_text,
            expanded_uncertainty: reported.uncertainty_text,
            cmc_floor_applied: reported.cmc_floor_applied,
        },
        monte_carlo,
        decision,
    })
}

fn monte_carlo(
    mc: &MonteCarloRequest,
    components: &[Component],
    correlations: &[Correlation],
    budget: &stats::BudgetResult,
) -> Result<MonteCarloAnswer, AppError> {
    if !correlations.is_empty() {
        return Err(AppError::invalid(
            "monte_carlo",
            "the Monte Carlo check does not yet sample correlated inputs; remove the correlations or the monte_carlo request",
        ));
    }
    if !(1..=2).contains(&mc.significant_digits) {
        return Err(AppError::invalid(
            "monte_carlo.significant_digits",
            "must be 1 or 2",
        ));
    }
    if let Some(trials) = mc.trials
        && !(MIN_TRIALS..=MAX_TRIALS).contains(&trials)
    {
        return Err(AppError::invalid(
            "monte_carlo.trials",
            format!(
                "{trials} trials; allowed {MIN_TRIALS} to {MAX_TRIALS} (or null for the adaptive procedure)"
            ),
        ));
    }
    let inputs = components
        .iter()
        .enumerate()
        .map(|(i, c)| {
            McInput::from_component(c).map_err(|e| stats_error(e, &format!("components[{i}]")))
        })
        .collect::<Result<Vec<_>, _>>()?;
    let sensitivities: Vec<f64> = components.iter().map(|c| c.sensitivity).collect();
    let options = McOptions {
        coverage_probability: budget.coverage_probability,
        seed: mc.seed,
    };
    let model = McModel::Additive(&sensitivities);
    let result = match mc.trials {
        Some(trials) => stats::run_fixed(&inputs, model, trials, &options),
        None => stats::run_adaptive(
            &inputs,
            model,
            &options,
            &stats::AdaptiveOptions {
                ndig: mc.significant_digits,
                max_trials: MAX_TRIALS,
                ..stats::AdaptiveOptions::default()
            },
        ),
    }
    .map_err(|e| AppError::invalid("monte_carlo", e.to_string()))?;
    let validation = stats::validate_gum(
        budget.estimate,
        budget.combined_standard_uncertainty,
        budget.expanded_uncertainty,
        result.symmetric,
        mc.significant_digits,
    )
    .map_err(|e| AppError::invalid("monte_carlo", e.to_string()))?;
    Ok(MonteCarloAnswer {
        estimate: result.estimate,
        standard_uncertainty: result.standard_uncertainty,
        shortest_interval: [result.shortest.low, result.shortest.high],
        symmetric_interval: [result.symmetric.low, result.symmetric.high],
        trials: result.trials,
        stabilized: result.adaptive.map(|a| a.stabilized),
        gum_validated: validation.passed,
        d_low: validation.d_low,
        d_high: validation.d_high,
        numerical_tolerance: validation.tolerance,
        seed: mc.seed,
    })
}

fn decision(d: &DecisionRequest, estimate: f64, expanded: f64) -> Result<DecisionAnswer, AppError> {
    let tolerance = match (d.lower, d.upper) {
        (Some(lower), Some(upper)) => Tolerance::Interval { lower, upper },
        (None, Some(upper)) => Tolerance::UpperOnly { upper },
        (Some(lower), None) => Tolerance::LowerOnly { lower },
        (None, None) => {
            return Err(AppError::invalid(
                "decision.upper",
                "a decision needs a lower limit, an upper limit, or both",
            ));
        }
    };
    let r = d.guard_band_factor;
    let rule = match d.rule.trim().to_ascii_lowercase().as_str() {
        "simple" => DecisionRule::SimpleAcceptance,
        "guarded" => DecisionRule::GuardedBinary { r },
        "guarded_non_binary" => DecisionRule::GuardedNonBinary { r },
        other => {
            return Err(AppError::invalid(
                "decision.rule",
                format!("unknown rule {other:?}; expected simple, guarded or guarded_non_binary"),
            ));
        }
    };
    let measured = d.measured.unwrap_or(estimate);
    let decided = stats::decide(measured, expanded, &tolerance, rule).map_err(|e| match &e {
        // The core calls the guard band factor r (ILAC-G8); the request
        // field is `guard_band_factor`.
        StatsError::InvalidInput { field, .. } if field == "r" => {
            AppError::invalid("decision.guard_band_factor", e.to_string())
        }
        _ => stats_error(e, "decision"),
    })?;
    Ok(DecisionAnswer {
        outcome: decided.outcome.label(),
        statement: decided.statement,
        guard_band: decided.guard_band,
        measured,
        acceptance_limits: [
            decided.acceptance_limits.lower,
            decided.acceptance_limits.upper,
        ],
    })
}

/// `POST /api/v1/compute/uncertainty`.
pub async fn post_uncertainty(
    ApiJson(request): ApiJson<UncertaintyRequest>,
) -> Result<Json<UncertaintyResponse>, AppError> {
    // Monte Carlo runs up to 1e7 trials: CPU work off the async workers.
    tokio::task::spawn_blocking(move || uncertainty(&request))
        .await
        .map_err(|e| AppError::Internal(format!("uncertainty task failed: {e}")))?
        .map(Json)
}
