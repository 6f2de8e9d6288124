//! `GET /api/v1/runs/{id}/results`: per-set-point results, budgets,
//! conformity and the fitted deviation function of a run, computed from its
//! records by the calibration model.

use axum::Json;
use axum::extract::{Path, State};
use serde::Serialize;

use super::records::ApiResult;
use crate::domain::results::{self, Provenance, ResultsError};
use crate::metrology::calib::{self, DeviationFunction, SetPointResult, Warning};
use crate::store::runs;
use crate::web::auth::Caller;
use crate::web::{AppError, AppState};

/// A warning with where it applies.
#[derive(Debug, Serialize)]
pub struct WarningOut {
    /// Index of the set point (null: the run).
    pub set_point: Option<usize>,
    /// Index of the reading, if it concerns one.
    pub reading: Option<usize>,
    /// The sentence.
    pub message: String,
}

impl From<&Warning> for WarningOut {
    fn from(w: &Warning) -> Self {
        Self {
            set_point: w.at.set_point,
            reading: w.at.reading,
            message: w.message.clone(),
        }
    }
}

/// One budget row.
#[derive(Debug, Serialize)]
pub struct BudgetRow {
    /// Name.
    pub name: String,
    /// Standard uncertainty of the input (its unit).
    pub standard_uncertainty: f64,
    /// Sensitivity coefficient (°C per input unit).
    pub sensitivity: f64,
    /// Contribution to u_c, °C.
    pub contribution_c: f64,
    /// Share of u_c².
    pub variance_share: f64,
    /// Degrees of freedom (null: infinite).
    pub dof: Option<f64>,
}

/// A set point's budget.
#[derive(Debug, Serialize)]
pub struct BudgetOut {
    /// Rows.
    pub components: Vec<BudgetRow>,
    /// u_c, °C.
    pub combined_standard_uncertainty_c: f64,
    /// ν_eff (null: infinite).
    pub effective_dof: Option<f64>,
    /// k.
    pub coverage_factor: f64,
    /// Coverage probability.
    pub coverage_probability: f64,
    /// U = k u_c, °C.
    pub expanded_uncertainty_c: f64,
}

/// A conformity decision.
#[derive(Debug, Serialize)]
pub struct ConformityOut {
    /// pass, conditional pass, conditional fail, fail.
    pub outcome: &'static str,
    /// The rule as printed.
    pub statement: String,
    /// Tolerance limits [lower, upper], °C.
    pub tolerance_limits_c: [Option<f64>; 2],
    /// Acceptance limits [lower, upper], °C.
    pub acceptance_limits_c: [Option<f64>; 2],
    /// Guard band w, °C.
    pub guard_band_c: f64,
}

/// A set point's result.
#[derive(Debug, Serialize)]
pub struct SetPointOut {
    /// Nominal temperature, °C.
    pub nominal_t_c: f64,
    /// Number of readings.
    pub n: usize,
    /// Mean reference temperature, °C.
    pub mean_t_ref_c: f64,
    /// Mean UUT temperature, °C.
    pub mean_t_uut_c: f64,
    /// Mean deviation (UUT − reference), °C.
    pub mean_deviation_c: f64,
    /// Experimental standard deviation of the mean of the deviation, °C.
    pub type_a_c: f64,
    /// Mean emf deviation, mV (thermocouples).
    pub mean_deviation_emf_mv: Option<f64>,
    /// Mean resistance deviation from the nominal curve, Ω (PRTs).
    pub mean_deviation_ohm: Option<f64>,
    /// The budget.
    pub budget: BudgetOut,
    /// U expressed in mV (thermocouples).
    pub expanded_uncertainty_emf_mv: Option<f64>,
    /// The CMC here, °C.
    pub cmc_c: Option<f64>,
    /// Rounded for the certificate (ILAC-P14).
    pub reported: ReportedOut,
    /// The conformity decision.
    pub conformity: Option<ConformityOut>,
    /// Warnings about this set point.
    pub warnings: Vec<WarningOut>,
}

/// Rounded values.
#[derive(Debug, Serialize)]
pub struct ReportedOut {
    /// Deviation, °C, rounded to the last digit of U.
    pub deviation_c: String,
    /// U, °C, two significant digits rounded up, never below the CMC.
    pub expanded_uncertainty_c: String,
    /// Whether the CMC set U.
    pub cmc_floor_applied: bool,
}

/// A fitted deviation function.
#[derive(Debug, Serialize)]
pub struct FunctionOut {
    /// "deviation_c" (°C) or "deviation_emf_mv" (mV), as a polynomial in t_c.
    pub quantity: &'static str,
    /// Degree.
    pub degree: usize,
    /// Why the degree is lower than asked, if it is.
    pub degree_note: Option<String>,
    /// `coefficients[i]` multiplies t_c^i.
    pub coefficients: Vec<f64>,
    /// Their standard uncertainties.
    pub standard_uncertainties: Vec<f64>,
    /// Their covariance.
    pub covariance: Vec<Vec<f64>>,
    /// Residuals at the set points.
    pub residuals: Vec<f64>,
    /// Set points whose residual exceeds U.
    pub flagged_set_points: Vec<usize>,
    /// Chi-square of the weighted fit, with its degrees of freedom.
    pub chi_square: Option<(f64, usize)>,
    /// Validity range [lowest, highest mean reference temperature], °C.
    pub valid_c: [f64; 2],
}

impl From<&DeviationFunction> for FunctionOut {
    fn from(f: &DeviationFunction) -> Self {
        Self {
            quantity: match f.quantity {
                calib::FitQuantity::EmfDeviation => "deviation_emf_mv",
                calib::FitQuantity::TemperatureDeviation => "deviation_c",
            },
            degree: f.degree,
            degree_note: f.degree_note.clone(),
            coefficients: f.coefficients.clone(),
            standard_uncertainties: f.standard_uncertainties.clone(),
            covariance: f.covariance.clone(),
            residuals: f.residuals.clone(),
            flagged_set_points: f.flagged.iter().map(|r| r.set_point).collect(),
            chi_square: f.chi_square.map(|c| (c.chi_square, c.dof)),
            valid_c: [f.validity_c.0, f.validity_c.1],
        }
    }
}

/// The results of a run.
#[derive(Debug, Serialize)]
pub struct ResultsOut {
    /// Run id.
    pub run_id: i64,
    /// Run status.
    pub status: String,
    /// What the computation used.
    pub provenance: Provenance,
    /// Per set point.
    pub set_points: Vec<SetPointOut>,
    /// Temperature deviation function.
    pub deviation_function: Option<FunctionOut>,
    /// Emf deviation function (thermocouples).
    pub emf_deviation_function: Option<FunctionOut>,
    /// Run-level warnings.
    pub warnings: Vec<WarningOut>,
}

fn finite(v: f64) -> Option<f64> {
    v.is_finite().then_some(v)
}

fn set_point_out(sp: &SetPointResult) -> SetPointOut {
    let b = &sp.budget;
    SetPointOut {
        nominal_t_c: sp.nominal_c,
        n: sp.n,
        mean_t_ref_c: sp.mean_t_ref_c,
        mean_t_uut_c: sp.mean_t_uut_c,
        mean_deviation_c: sp.mean_deviation_c,
        type_a_c: sp.std_dev_of_mean_c,
        mean_deviation_emf_mv: sp.mean_deviation_emf_mv,
        mean_deviation_ohm: sp.mean_deviation_ohm,
        budget: BudgetOut {
            components: b
                .components
                .iter()
                .map(|c| BudgetRow {
                    name: c.name.clone(),
                    standard_uncertainty: c.standard_uncertainty,
                    sensitivity: c.sensitivity,
                    contribution_c: c.contribution,
                    variance_share: c.variance_share,
                    dof: finite(c.dof),
                })
                .collect(),
            combined_standard_uncertainty_c: b.combined_standard_uncertainty,
            effective_dof: finite(b.effective_dof),
            coverage_factor: b.coverage_factor,
            coverage_probability: b.coverage_probability,
            expanded_uncertainty_c: b.expanded_uncertainty,
        },
        expanded_uncertainty_emf_mv: sp.expanded_uncertainty_emf_mv,
        cmc_c: sp.cmc_c,
        reported: ReportedOut {
            deviation_c: sp.reported.value_text.clone(),
            expanded_uncertainty_c: sp.reported.uncertainty_text.clone(),
            cmc_floor_applied: sp.reported.cmc_floor_applied,
        },
        conformity: sp.conformity.as_ref().map(|c| ConformityOut {
            outcome: c.decision.outcome.label(),
            statement: c.decision.statement.clone(),
            tolerance_limits_c: [
                c.decision.tolerance_limits.lower,
                c.decision.tolerance_limits.upper,
            ],
            acceptance_limits_c: [
                c.decision.acceptance_limits.lower,
                c.decision.acceptance_limits.upper,
            ],
            guard_band_c: c.decision.guard_band,
        }),
        warnings: sp.warnings.iter().map(WarningOut::from).collect(),
    }
}

/// Maps a results error to an API error.
pub fn results_error(e: ResultsError) -> AppError {
    match e {
        ResultsError::Records { field, message } => AppError::invalid(field, message),
        ResultsError::Calc(c) => AppError::invalid("readings", c.to_string()),
        ResultsError::Db(d) => AppError::Db(d),
    }
}

/// `GET /api/v1/runs/{id}/results`.
pub async fn get(
    State(state): State<AppState>,
    _caller: Caller,
    Path(id): Path<i64>,
) -> ApiResult<axum::response::Response> {
    use axum::response::IntoResponse;
    let mut conn = state.db.acquire().await?;
    let run = runs::by_id(&mut conn, id)
        .await?
        .ok_or_else(|| AppError::NotFound(format!("there is no run {id}")))?;
    let is_switch = crate::store::records::instrument_by_id(&mut conn, run.instrument_id)
        .await?
        .is_some_and(|i| i.kind == "switch");
    if is_switch {
        let out = crate::domain::switches::results(&mut conn, &run)
            .await
            .map_err(results_error)?;
        return Ok(Json(out).into_response());
    }
    let prepared = results::prepare(&mut conn, &run)
        .await
        .map_err(results_error)?;
    drop(conn);
    let model = prepared.model;
    let computed = tokio::task::spawn_blocking(move || calib::evaluate_run(&model))
        .await
        .map_err(|e| AppError::Internal(format!("results task failed: {e}")))?
        .map_err(|e| results_error(e.into()))?;
    Ok(Json(ResultsOut {
        run_id: id,
        status: run.status,
        provenance: prepared.provenance,
        set_points: computed.set_points.iter().map(set_point_out).collect(),
        deviation_function: computed.deviation_function.as_ref().map(FunctionOut::from),
        emf_deviation_function: computed
            .emf_deviation_function
            .as_ref()
            .map(FunctionOut::from),
        warnings: computed.warnings.iter().map(WarningOut::from).collect(),
    })
    .into_response())
}
