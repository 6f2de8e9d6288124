//! Characterisation runs of comparison media: the raw readings at each
//! characterised temperature (axial profile, bore-to-bore, stability record,
//! loading), turned into half-widths that every budget using the medium
//! takes, interpolated between characterised temperatures.

use axum::Json;
use axum::extract::{Path, State};
use axum::http::StatusCode;
use serde::{Deserialize, Serialize};

use super::equipment::{REGISTER_ROLES, check_date};
use super::records::{ApiResult, Problems, record};
use crate::metrology::calib::media::{
    CharacterisationInput, DepthReading, RadialData, ReferenceUncertainty, StabilityReading,
    characterise_medium,
};
use crate::store::switches::{self, CharacterisationRun, MediumPointRow};
use crate::store::{self, equipment};
use crate::web::auth::Caller;
use crate::web::extract::ApiJson;
use crate::web::{AppError, AppState};

/// Kinds of equipment that are comparison media.
pub const MEDIA: &[&str] = &["bath", "furnace", "dry_block"];

/// Body of a characterisation run.
#[derive(Debug, Clone, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CharacterisationRunBody {
    /// Date of the characterisation, YYYY-MM-DD.
    pub characterised_on: String,
    /// The characterised temperatures with their readings.
    pub temperatures: Vec<TemperatureBody>,
}

/// Readings at one characterised temperature.
#[derive(Debug, Clone, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TemperatureBody {
    /// Set temperature, °C.
    pub temperature_c: f64,
    /// Axial profile: readings at heights above the bottom of the
    /// measurement zone.
    #[serde(default)]
    pub axial: Option<Vec<DepthBody>>,
    /// One reading per bore, °C.
    #[serde(default)]
    pub radial_bores_c: Option<Vec<f64>>,
    /// Or each other bore minus the reference bore, °C.
    #[serde(default)]
    pub radial_differences_c: Option<Vec<f64>>,
    /// The stability record.
    pub stability: Vec<StabilityBody>,
    /// Loaded minus unloaded temperature, °C.
    #[serde(default)]
    pub loading_difference_c: Option<f64>,
    /// Expanded uncertainty of the characterising thermometer, °C (k = 2).
    #[serde(default)]
    pub reference_expanded_c: Option<f64>,
}

/// One reading of the axial profile.
#[derive(Debug, Clone, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct DepthBody {
    /// Height above the bottom of the measurement zone, mm.
    pub height_mm: f64,
    /// Temperature, °C.
    pub t_c: f64,
}

/// One reading of the stability record.
#[derive(Debug, Clone, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct StabilityBody {
    /// Seconds since the start of the record.
    pub time_s: f64,
    /// Temperature, °C.
    pub t_c: f64,
}

/// What was derived at one temperature.
#[derive(Debug, Serialize)]
pub struct TemperatureOut {
    /// Set temperature, °C.
    pub temperature_c: f64,
    /// Uniformity half-width, °C, and how it was derived.
    pub uniformity_half_width_c: f64,
    /// Stability half-width, °C.
    pub stability_half_width_c: f64,
    /// Loading half-width, °C.
    pub loading_half_width_c: Option<f64>,
    /// How each half-width was derived.
    pub derivation: String,
    /// Warnings (e.g. a short stability record).
    pub warnings: Vec<String>,
}

/// A stored characterisation run.
#[derive(Debug, Serialize)]
pub struct CharacterisationOut {
    /// The medium.
    pub asset_id: String,
    /// Row id.
    pub id: i64,
    /// Date.
    pub characterised_on: String,
    /// Results by temperature.
    pub temperatures: Vec<TemperatureOut>,
}

fn inputs(body: &CharacterisationRunBody, p: &mut Problems) -> Vec<CharacterisationInput> {
    let mut out = Vec::new();
    if body.temperatures.is_empty() {
        p.add(
            "temperatures",
            "give at least one characterised temperature",
        );
    }
    for (i, t) in body.temperatures.iter().enumerate() {
        let radial = match (&t.radial_bores_c, &t.radial_differences_c) {
            (Some(b), None) => Some(RadialData::BoreReadings(b.clone())),
            (None, Some(d)) => Some(RadialData::DifferencesToReferenceBore(d.clone())),
            (None, None) => None,
            (Some(_), Some(_)) => {
                p.add(
                    &format!("temperatures[{i}].radial_differences_c"),
                    "give either the bore readings or the differences to the reference bore, not both",
                );
                None
            }
        };
        out.push(CharacterisationInput {
            temperature_c: t.temperature_c,
            axial: t.axial.as_ref().map(|a| {
                a.iter()
                    .map(|d| DepthReading {
                        height_mm: d.height_mm,
                        t_c: d.t_c,
                    })
                    .collect()
            }),
            radial,
            stability: t
                .stability
                .iter()
                .map(|s| StabilityReading {
                    time_s: s.time_s,
                    t_c: s.t_c,
                })
                .collect(),
            loading_difference_c: t.loading_difference_c,
            reference_uncertainty: t.reference_expanded_c.map(|u| ReferenceUncertainty {
                expanded_c: u,
                k: 2.0,
            }),
        });
    }
    out
}

fn out_of(
    asset_id: &str,
    run: &CharacterisationRun,
    warnings: &[Vec<String>],
) -> CharacterisationOut {
    CharacterisationOut {
        asset_id: asset_id.to_owned(),
        id: run.id,
        characterised_on: run.characterised_on.clone(),
        temperatures: run
            .points
            .iter()
            .enumerate()
            .map(|(i, p)| TemperatureOut {
                temperature_c: p.temperature_c,
                uniformity_half_width_c: p.uniformity_half_width_c,
                stability_half_width_c: p.stability_half_width_c,
                loading_half_width_c: p.loading_half_width_c,
                derivation: p.derivation.clone(),
                warnings: warnings.get(i).cloned().unwrap_or_default(),
            })
            .collect(),
    }
}

/// The half-widths (with how they were derived) and warnings at each
/// characterised temperature, sorted by temperature.
///
/// # Errors
/// 422 with the calculation's sentence (too few depths or bores, a
/// stability record out of order, a repeated temperature, ...).
pub fn derive_points(
    asset_id: &str,
    characterised_on: &str,
    inputs: &[CharacterisationInput],
) -> Result<(Vec<MediumPointRow>, Vec<Vec<String>>), AppError> {
    let medium = characterise_medium(asset_id, characterised_on, inputs)
        .map_err(|e| AppError::invalid("temperatures", e.to_string()))?;
    let mut order: Vec<usize> = (0..medium.temperatures.len()).collect();
    order.sort_by(|a, b| {
        medium.temperatures[*a]
            .temperature_c
            .total_cmp(&medium.temperatures[*b].temperature_c)
    });
    let mut points = Vec::new();
    let mut warnings = Vec::new();
    for i in order {
        let t = &medium.temperatures[i];
        let mut derivation = vec![
            format!("uniformity: {}", t.uniformity.derivation),
            format!("stability: {}", t.stability.derivation),
        ];
        if let Some(l) = &t.loading {
            derivation.push(format!("loading: {}", l.derivation));
        }
        if let Some(n) = &t.reference_note {
            derivation.push(n.clone());
        }
        points.push(MediumPointRow {
            temperature_c: t.temperature_c,
            uniformity_half_width_c: t.uniformity.half_width_c,
            stability_half_width_c: t.stability.half_width_c,
            loading_half_width_c: t.loading.as_ref().map(|l| l.half_width_c),
            derivation: derivation.join("; "),
        });
        warnings.push(t.warnings.iter().map(|w| w.message.clone()).collect());
    }
    Ok((points, warnings))
}

/// Checks a characterisation body and turns it into the calculation's
/// input.
///
/// # Errors
/// 422 naming each bad field.
pub fn inputs_of(body: &CharacterisationRunBody) -> Result<Vec<CharacterisationInput>, AppError> {
    let mut p = Problems::default();
    let inputs = inputs(body, &mut p);
    p.finish()?;
    Ok(inputs)
}

/// Records a characterisation run: checks the readings, derives the
/// half-widths, and stores readings and results with an audit event, all or
/// nothing.
///
/// # Errors
/// 403 for a role that does not keep the register, 404 for an unknown
/// asset, 422 naming each bad field or reading.
pub async fn record_characterisation(
    db: &sqlx::SqlitePool,
    caller: &Caller,
    asset_id: &str,
    body: &CharacterisationRunBody,
) -> ApiResult<CharacterisationOut> {
    caller.may_change(REGISTER_ROLES, "recording medium characterisations")?;
    let mut tx = store::begin_write(db).await?;
    let item = equipment::by_asset_id(&mut tx, asset_id)
        .await?
        .ok_or_else(|| {
            AppError::NotFound(format!("there is no equipment with asset id {asset_id:?}"))
        })?;
    let mut p = Problems::default();
    if !MEDIA.contains(&item.kind.as_str()) {
        p.add(
            "asset_id",
            format!(
                "{asset_id} is a {}; only baths, furnaces and dry blocks are characterised",
                item.kind.replace('_', " ")
            ),
        );
    }
    check_date(&mut p, "characterised_on", &body.characterised_on);
    let inputs = inputs(body, &mut p);
    p.finish()?;
    let (points, warnings) = derive_points(asset_id, &body.characterised_on, &inputs)?;
    let input = serde_json::to_string(body).map_err(|e| AppError::Internal(e.to_string()))?;
    let id = switches::add_characterisation_run(
        &mut tx,
        item.id,
        &body.characterised_on,
        &input,
        caller.user_id,
        &points,
    )
    .await?;
    let stored = CharacterisationRun {
        id,
        characterised_on: body.characterised_on.clone(),
        input,
        points,
    };
    let out = out_of(asset_id, &stored, &warnings);
    record(
        &mut tx,
        caller,
        "add_characterisation_run",
        "equipment",
        asset_id,
        None,
        Some(&serde_json::to_value(&out).unwrap_or_default()),
    )
    .await?;
    tx.commit().await?;
    Ok(out)
}

/// `POST /api/v1/equipment/{asset_id}/characterisation-runs`.
pub async fn add(
    State(state): State<AppState>,
    caller: Caller,
    Path(asset_id): Path<String>,
    ApiJson(body): ApiJson<CharacterisationRunBody>,
) -> ApiResult<(StatusCode, Json<CharacterisationOut>)> {
    let out = record_characterisation(&state.db, &caller, &asset_id, &body).await?;
    Ok((StatusCode::CREATED, Json(out)))
}

/// `GET /api/v1/equipment/{asset_id}/characterisation-runs`: newest first.
pub async fn list(
    State(state): State<AppState>,
    _caller: Caller,
    Path(asset_id): Path<String>,
) -> ApiResult<Json<Vec<CharacterisationOut>>> {
    let mut conn = state.db.acquire().await?;
    let item = equipment::by_asset_id(&mut conn, &asset_id)
        .await?
        .ok_or_else(|| {
            AppError::NotFound(format!("there is no equipment with asset id {asset_id:?}"))
        })?;
    let runs = switches::characterisation_runs(&mut conn, item.id).await?;
    Ok(Json(
        runs.iter().map(|r| out_of(&asset_id, r, &[])).collect(),
    ))
}
