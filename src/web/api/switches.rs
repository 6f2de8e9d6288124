//! Temperature-switch tests over the API: the settings of a switch run, its
//! ramps (readings of the reference temperature with the contact state, or
//! the temperature observed at each change), and removal of a ramp.

use axum::Json;
use axum::extract::{Path, Query, State};
use axum::http::StatusCode;
use serde::{Deserialize, Serialize};

use super::records::{ApiResult, Problems, record};
use super::runs::{RUN_ROLES, VersionQuery, editable, run_or_404};
use crate::store;
use crate::store::records;
use crate::store::runs::{self, Run};
use crate::store::switches::{self, SwitchSettings};
use crate::web::auth::Caller;
use crate::web::extract::ApiJson;
use crate::web::{AppError, AppState};

/// Most readings in one ramp.
pub const MAX_RAMP_READINGS: usize = 100_000;

/// Body of the switch settings.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SettingsBody {
    /// The run version the change is based on.
    pub version: i64,
    /// Nominal switch point, °C.
    pub nominal_t_c: f64,
    /// "rising" or "falling".
    pub actuation_direction: String,
    /// "opens" or "closes".
    pub contact_action: String,
    /// Ramp rate, °C/min (with `time_constant_s`).
    #[serde(default)]
    pub ramp_rate_c_per_min: Option<f64>,
    /// Time constant of the switch relative to the reference, s.
    #[serde(default)]
    pub time_constant_s: Option<f64>,
    /// Or a thermal-lag half-width, °C.
    #[serde(default)]
    pub lag_half_width_c: Option<f64>,
    /// Resolution of directly observed changes, °C.
    #[serde(default)]
    pub observed_resolution_c: Option<f64>,
}

/// One reading of a ramp.
#[derive(Debug, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct StateReadingBody {
    /// Reference temperature, °C (the reference thermometer's corrected
    /// indication).
    pub t_ref_c: f64,
    /// "open" or "closed".
    pub state: String,
}

/// Body of a ramp.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RampBody {
    /// The run version the change is based on.
    pub version: i64,
    /// "rising" or "falling".
    pub direction: String,
    /// Readings in the order taken.
    #[serde(default)]
    pub readings: Option<Vec<StateReadingBody>>,
    /// Or the reference temperature observed at the change, °C.
    #[serde(default)]
    pub observed_t_c: Option<f64>,
}

/// A stored ramp with the run's new version.
#[derive(Debug, Serialize)]
pub struct RampAdded {
    /// Ramp id.
    pub id: i64,
    /// Its number in the run.
    pub position: i64,
    /// The run's new version.
    pub version: i64,
}

async fn switch_run(
    tx: &mut sqlx::SqliteConnection,
    caller: &Caller,
    id: i64,
    version: i64,
) -> Result<Run, AppError> {
    let run = run_or_404(tx, id).await?;
    editable(&run, caller, version)?;
    let instrument = records::instrument_by_id(tx, run.instrument_id)
        .await?
        .ok_or_else(|| AppError::Internal("instrument vanished".to_owned()))?;
    if instrument.kind != "switch" {
        return Err(AppError::invalid(
            "run",
            format!(
                "run {id} calibrates {} ({}); switch settings and ramps are for temperature switches",
                instrument.serial, instrument.kind
            ),
        ));
    }
    Ok(run)
}

fn finite(p: &mut Problems, field: &str, v: Option<f64>, positive: bool) {
    if let Some(v) = v
        && !(v.is_finite() && (if positive { v > 0.0 } else { v >= 0.0 }))
    {
        p.add(
            field,
            if positive {
                "must be a finite number above 0"
            } else {
                "must be a finite number of 0 or more"
            },
        );
    }
}

/// Stores a switch run's settings.
///
/// # Errors
/// 403, 404, 409 (stale or read-only run), 422 naming each bad field.
pub async fn put_settings_of(
    db: &sqlx::SqlitePool,
    caller: &Caller,
    id: i64,
    body: &SettingsBody,
) -> ApiResult<SwitchSettings> {
    caller.may_change(RUN_ROLES, "changing runs")?;
    let mut p = Problems::default();
    if !body.nominal_t_c.is_finite() {
        p.add("nominal_t_c", "must be a finite temperature in °C");
    }
    if !["rising", "falling"].contains(&body.actuation_direction.as_str()) {
        p.add("actuation_direction", "must be rising or falling");
    }
    if !["opens", "closes"].contains(&body.contact_action.as_str()) {
        p.add("contact_action", "must be opens or closes");
    }
    finite(
        &mut p,
        "ramp_rate_c_per_min",
        body.ramp_rate_c_per_min,
        true,
    );
    finite(&mut p, "time_constant_s", body.time_constant_s, false);
    finite(&mut p, "lag_half_width_c", body.lag_half_width_c, false);
    finite(
        &mut p,
        "observed_resolution_c",
        body.observed_resolution_c,
        false,
    );
    match (
        body.ramp_rate_c_per_min,
        body.time_constant_s,
        body.lag_half_width_c,
    ) {
        (Some(_), None, _) | (None, Some(_), _) => p.add(
            "time_constant_s",
            "give the ramp rate and the time constant together (the lag is rate × time constant)",
        ),
        (None, None, None) => p.add(
            "lag_half_width_c",
            "give the ramp rate and the switch's time constant, or a thermal-lag half-width in °C",
        ),
        _ => {}
    }
    p.finish()?;
    let mut tx = store::begin_write(db).await?;
    let run = switch_run(&mut tx, caller, id, body.version).await?;
    let settings = SwitchSettings {
        run_id: id,
        nominal_t_c: body.nominal_t_c,
        actuation_direction: body.actuation_direction.clone(),
        contact_action: body.contact_action.clone(),
        ramp_rate_c_per_min: body.ramp_rate_c_per_min,
        time_constant_s: body.time_constant_s,
        lag_half_width_c: body.lag_half_width_c,
        observed_resolution_c: body.observed_resolution_c.unwrap_or(0.0),
    };
    let before = switches::settings(&mut tx, id).await?;
    switches::put_settings(&mut tx, &settings).await?;
    runs::touch(&mut tx, id, run.version).await?;
    record(
        &mut tx,
        caller,
        "switch_settings",
        "run",
        &id.to_string(),
        before
            .as_ref()
            .map(|b| serde_json::to_value(b).unwrap_or_default())
            .as_ref(),
        Some(&serde_json::to_value(&settings).unwrap_or_default()),
    )
    .await?;
    tx.commit().await?;
    Ok(settings)
}

/// `PUT /api/v1/runs/{id}/switch`.
pub async fn put_settings(
    State(state): State<AppState>,
    caller: Caller,
    Path(id): Path<i64>,
    ApiJson(body): ApiJson<SettingsBody>,
) -> ApiResult<Json<SwitchSettings>> {
    Ok(Json(put_settings_of(&state.db, &caller, id, &body).await?))
}

/// Adds a ramp to a switch run.
///
/// # Errors
/// 403, 404, 409, 422 naming each bad field.
pub async fn add_ramp_to(
    db: &sqlx::SqlitePool,
    caller: &Caller,
    id: i64,
    body: &RampBody,
) -> ApiResult<RampAdded> {
    caller.may_change(RUN_ROLES, "entering readings")?;
    let mut p = Problems::default();
    if !["rising", "falling"].contains(&body.direction.as_str()) {
        p.add("direction", "must be rising or falling");
    }
    let readings = match (&body.readings, body.observed_t_c) {
        (Some(r), None) => {
            if r.len() < 2 {
                p.add(
                    "readings",
                    "a ramp needs at least 2 readings to show a change of state",
                );
            }
            if r.len() > MAX_RAMP_READINGS {
                p.add(
                    "readings",
                    format!("at most {MAX_RAMP_READINGS} readings per ramp"),
                );
            }
            for (i, x) in r.iter().enumerate() {
                if !x.t_ref_c.is_finite() {
                    p.add(
                        &format!("readings[{i}].t_ref_c"),
                        "must be a finite temperature in °C",
                    );
                }
                if !["open", "closed"].contains(&x.state.as_str()) {
                    p.add(
                        &format!("readings[{i}].state"),
                        format!("{:?} is not a contact state; use open or closed", x.state),
                    );
                }
            }
            let rows: Vec<(f64, &str)> = r.iter().map(|x| (x.t_ref_c, x.state.as_str())).collect();
            Some(serde_json::to_string(&rows).map_err(|e| AppError::Internal(e.to_string()))?)
        }
        (None, Some(t)) => {
            if !t.is_finite() {
                p.add("observed_t_c", "must be a finite temperature in °C");
            }
            None
        }
        _ => {
            p.add(
                "readings",
                "give either the readings of the ramp or the temperature observed at the change (observed_t_c), not both",
            );
            None
        }
    };
    p.finish()?;
    let mut tx = store::begin_write(db).await?;
    let run = switch_run(&mut tx, caller, id, body.version).await?;
    let (ramp_id, position) = switches::add_ramp(
        &mut tx,
        id,
        &body.direction,
        readings.as_deref(),
        body.observed_t_c,
    )
    .await?;
    runs::touch(&mut tx, id, run.version).await?;
    record(
        &mut tx,
        caller,
        "add_ramp",
        "run",
        &id.to_string(),
        None,
        Some(&serde_json::json!({"ramp": position, "direction": body.direction, "readings": readings, "observed_t_c": body.observed_t_c})),
    )
    .await?;
    tx.commit().await?;
    Ok(RampAdded {
        id: ramp_id,
        position,
        version: run.version + 1,
    })
}

/// `POST /api/v1/runs/{id}/ramps`.
pub async fn add_ramp(
    State(state): State<AppState>,
    caller: Caller,
    Path(id): Path<i64>,
    ApiJson(body): ApiJson<RampBody>,
) -> ApiResult<(StatusCode, Json<RampAdded>)> {
    Ok((
        StatusCode::CREATED,
        Json(add_ramp_to(&state.db, &caller, id, &body).await?),
    ))
}

/// Removes a ramp from an open switch run (kept in the audit trail).
///
/// # Errors
/// 403, 404, 409.
pub async fn delete_ramp_of(
    db: &sqlx::SqlitePool,
    caller: &Caller,
    id: i64,
    ramp_id: i64,
    version: i64,
) -> ApiResult<()> {
    caller.may_change(RUN_ROLES, "changing runs")?;
    let mut tx = store::begin_write(db).await?;
    let run = switch_run(&mut tx, caller, id, version).await?;
    let before = switches::ramps(&mut tx, id)
        .await?
        .into_iter()
        .find(|r| r.id == ramp_id);
    if !switches::delete_ramp(&mut tx, id, ramp_id).await? {
        return Err(AppError::NotFound(format!("run {id} has no ramp {ramp_id}")).into());
    }
    runs::touch(&mut tx, id, run.version).await?;
    record(
        &mut tx,
        caller,
        "delete_ramp",
        "run",
        &id.to_string(),
        before
            .map(|b| serde_json::to_value(b).unwrap_or_default())
            .as_ref(),
        None,
    )
    .await?;
    tx.commit().await?;
    Ok(())
}

/// `DELETE /api/v1/runs/{id}/ramps/{ramp_id}?version=N`.
pub async fn delete_ramp(
    State(state): State<AppState>,
    caller: Caller,
    Path((id, ramp_id)): Path<(i64, i64)>,
    Query(q): Query<VersionQuery>,
) -> ApiResult<StatusCode> {
    let version = q.version.ok_or_else(|| {
        AppError::invalid("version", "give the run version you loaded as ?version=N")
    })?;
    delete_ramp_of(&state.db, &caller, id, ramp_id, version).await?;
    Ok(StatusCode::NO_CONTENT)
}

/// Reads ramp readings typed or pasted one per line: a temperature in °C
/// and the contact state (`open`/`closed`, or `o`/`c`), separated by
/// spaces, tabs or a semicolon; a decimal comma is accepted. Blank lines
/// and lines starting with `#` are skipped.
///
/// # Errors
/// 422 naming the line and what was wrong.
pub fn parse_ramp_lines(text: &str) -> Result<Vec<StateReadingBody>, AppError> {
    let mut out = Vec::new();
    let mut p = Problems::default();
    for (i, line) in text.lines().enumerate() {
        let line = line.trim();
        if line.is_empty() || line.starts_with('#') {
            continue;
        }
        let parts: Vec<&str> = line
            .split([';', '\t', ' '])
            .filter(|s| !s.is_empty())
            .collect();
        let field = format!("lines[{}]", i + 1);
        if parts.len() != 2 {
            p.add(
                &field,
                format!(
                    "line {}: write a temperature and a state (open or closed); got {line:?}",
                    i + 1
                ),
            );
            continue;
        }
        let Ok(t) = parts[0].replace(',', ".").parse::<f64>() else {
            p.add(
                &field,
                format!("line {}: {:?} is not a temperature in °C", i + 1, parts[0]),
            );
            continue;
        };
        let state = match parts[1].to_ascii_lowercase().as_str() {
            "open" | "o" => "open",
            "closed" | "c" => "closed",
            other => {
                p.add(
                    &field,
                    format!(
                        "line {}: {other:?} is not a contact state; write open or closed",
                        i + 1
                    ),
                );
                continue;
            }
        };
        out.push(StateReadingBody {
            t_ref_c: t,
            state: state.to_owned(),
        });
    }
    p.finish()?;
    Ok(out)
}
