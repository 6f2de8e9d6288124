//! Comparison runs: `/api/v1/runs`, set points, readings, submission and
//! the impact query.

use axum::Json;
use axum::body::Bytes;
use axum::extract::{Path, Query, State};
use axum::http::{HeaderMap, StatusCode, header};
use serde::{Deserialize, Serialize};

use super::equipment::check_date;
use super::records::{ApiResult, MAX_NAME_CHARS, Problems, record};
use crate::domain::readings;
use crate::metrology::thermo::ThermocoupleType;
use crate::store::accounts::Role;
use crate::store::equipment::{self, Equipment};
use crate::store::records::{self, Instrument};
use crate::store::runs::{self, Reading, Run, RunFields, SetPoint};
use crate::store::{self, lab};
use crate::web::auth::Caller;
use crate::web::extract::ApiJson;
use crate::web::{AppError, AppState};

/// Roles that record runs.
pub const RUN_ROLES: &[Role] = &[Role::Technician, Role::Administrator];

fn json<T: Serialize>(value: &T) -> serde_json::Value {
    serde_json::to_value(value).unwrap_or(serde_json::Value::Null)
}

/// The date of a medium's latest characterisation (entered ranges or a
/// characterisation run) on or before `date`.
///
/// # Errors
/// A database error.
pub async fn characterised_on(
    conn: &mut sqlx::SqliteConnection,
    equipment_id: i64,
    date: &str,
) -> Result<Option<String>, AppError> {
    let ranges = equipment::characterisation_on(conn, equipment_id, date).await?;
    let run = crate::store::switches::characterisation_run_on(conn, equipment_id, date).await?;
    Ok([
        ranges.first().map(|c| c.characterised_on.clone()),
        run.map(|r| r.characterised_on),
    ]
    .into_iter()
    .flatten()
    .max())
}

/// Why an equipment item may not be used on a date, if it may not.
///
/// # Errors
/// Any database error.
pub async fn unusable_reason(
    conn: &mut sqlx::SqliteConnection,
    item: &Equipment,
    date: &str,
) -> Result<Option<String>, AppError> {
    if item.status == "out_of_service" {
        let why = if item.status_reason.is_empty() {
            String::new()
        } else {
            format!(" ({})", item.status_reason)
        };
        return Ok(Some(format!("{} is out of service{why}", item.asset_id)));
    }
    if ["bath", "furnace", "dry_block"].contains(&item.kind.as_str()) {
        if let Some(last) = characterised_on(conn, item.id, date).await? {
            let interval = lab::get(conn)
                .await?
                .map_or(365, |l| l.characterisation_interval_days);
            if let (Ok(on), Ok(run)) = (parse_date(&last), parse_date(date))
                && (run - on).whole_days() > interval
            {
                return Ok(Some(format!(
                    "{} was last characterised on {last}, more than {interval} days before {date}",
                    item.asset_id
                )));
            }
        }
        return Ok(None);
    }
    match equipment::certificate_on(conn, item.id, date).await? {
        None => Ok(Some(format!(
            "{} has no calibration certificate dated on or before {date}",
            item.asset_id
        ))),
        Some(c) if c.due_on.as_str() < date => Ok(Some(format!(
            "{} was due for calibration on {} (certificate {}); the run is dated {date}",
            item.asset_id, c.due_on, c.number
        ))),
        Some(_) => Ok(None),
    }
}

fn parse_date(text: &str) -> Result<time::Date, time::error::Parse> {
    time::Date::parse(
        text,
        &time::macros::format_description!("[year]-[month]-[day]"),
    )
}

/// Body of a new run.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RunBody {
    /// Serial number of the unit under test.
    pub instrument_serial: String,
    /// Asset id of the reference standard.
    pub reference: String,
    /// Asset id of the reference's readout.
    #[serde(default)]
    pub reference_readout: Option<String>,
    /// Asset id of the UUT's readout.
    #[serde(default)]
    pub uut_readout: Option<String>,
    /// Asset id of the comparison medium.
    #[serde(default)]
    pub medium: Option<String>,
    /// Date of the measurements.
    pub performed_on: String,
    /// Procedure identifier and revision.
    pub procedure_ref: String,
    /// Location.
    #[serde(default)]
    pub location: String,
    /// Ambient temperature, °C.
    #[serde(default)]
    pub ambient_t_c: Option<f64>,
    /// Ambient relative humidity, %.
    #[serde(default)]
    pub ambient_rh_percent: Option<f64>,
    /// ice_point, measured or compensated (thermocouples).
    #[serde(default)]
    pub rj_method: Option<String>,
    /// Immersion depth, mm.
    #[serde(default)]
    pub immersion_mm: Option<f64>,
    /// as_found or as_left.
    #[serde(default = "as_found")]
    pub condition: String,
    /// simple, guarded, guarded_non_binary or none.
    #[serde(default = "simple")]
    pub decision_rule: String,
    /// Guard band factor r.
    #[serde(default = "one")]
    pub guard_band_factor: f64,
    /// Tolerance class: 1, 2, 3, standard, special (thermocouples); AA, A, B, C (PRTs).
    #[serde(default)]
    pub tolerance_class: Option<String>,
    /// Customer limit ±, °C.
    #[serde(default)]
    pub tolerance_limit_c: Option<f64>,
    /// Degree of the deviation function (0..5).
    #[serde(default)]
    pub fit_degree: Option<i64>,
    /// Lab-entered budget rows; when absent, the lab's budget template for
    /// the instrument's kind.
    #[serde(default)]
    pub extra_budget: Option<Vec<ExtraBudgetRow>>,
}

pub use crate::domain::results::ExtraBudgetRow;

fn as_found() -> String {
    "as_found".to_owned()
}
fn simple() -> String {
    "simple".to_owned()
}
fn one() -> f64 {
    1.0
}

struct Resolved {
    instrument: Instrument,
    fields: RunFields,
    equipment: Vec<(&'static str, Equipment)>,
}

async fn resolve(conn: &mut sqlx::SqliteConnection, body: RunBody) -> Result<Resolved, AppError> {
    let mut p = Problems::default();
    check_date(&mut p, "performed_on", &body.performed_on);
    p.text("procedure_ref", &body.procedure_ref);
    p.screen("location", &body.location, MAX_NAME_CHARS, false);
    let instrument = records::instrument_by_serial(conn, &body.instrument_serial).await?;
    if instrument.is_none() {
        p.add(
            "instrument_serial",
            format!(
                "there is no instrument with serial number {:?}",
                body.instrument_serial
            ),
        );
    }
    let mut equipment_used = Vec::new();
    let lookup = |field: &'static str, asset: Option<String>| (field, asset);
    let wanted = [
        lookup("reference", Some(body.reference.clone())),
        lookup("reference_readout", body.reference_readout.clone()),
        lookup("uut_readout", body.uut_readout.clone()),
        lookup("medium", body.medium.clone()),
    ];
    let mut ids = [None; 4];
    for (i, (field, asset)) in wanted.into_iter().enumerate() {
        let Some(asset) = asset else { continue };
        match equipment::by_asset_id(conn, &asset).await? {
            None => p.add(
                field,
                format!("there is no equipment with asset id {asset:?}"),
            ),
            Some(item) => {
                let kind_ok = match field {
                    "reference" => item.kind.starts_with("reference_"),
                    "medium" => ["bath", "furnace", "dry_block"].contains(&item.kind.as_str()),
                    _ => item.kind == "readout",
                };
                if !kind_ok {
                    p.add(
                        field,
                        format!(
                            "{asset} is a {}, which cannot serve as the {}",
                            item.kind,
                            field.replace('_', " ")
                        ),
                    );
                } else if let Some(reason) =
                    unusable_reason(conn, &item, &body.performed_on).await?
                {
                    p.add(field, format!("{reason}; it cannot be used"));
                }
                ids[i] = Some(item.id);
                equipment_used.push((field, item));
            }
        }
    }
    let kind = instrument
        .as_ref()
        .map_or("", |i| i.kind.as_str())
        .to_owned();
    let rj_method = match (kind.as_str(), body.rj_method.as_deref()) {
        ("thermocouple", Some(m @ ("ice_point" | "measured" | "compensated"))) => m.to_owned(),
        ("thermocouple", Some(other)) => {
            p.add(
                "rj_method",
                format!("unknown method {other:?}; expected ice_point, measured or compensated"),
            );
            String::new()
        }
        ("thermocouple", None) => {
            p.add("rj_method", "a thermocouple run needs the reference-junction method: ice_point, measured or compensated");
            String::new()
        }
        (_, Some(_)) => {
            p.add(
                "rj_method",
                "only thermocouple runs have a reference-junction method",
            );
            String::new()
        }
        (_, None) => "not_applicable".to_owned(),
    };
    if !["as_found", "as_left"].contains(&body.condition.as_str()) {
        p.add("condition", "expected as_found or as_left");
    }
    if !["simple", "guarded", "guarded_non_binary", "none"].contains(&body.decision_rule.as_str()) {
        p.add(
            "decision_rule",
            "expected simple, guarded, guarded_non_binary or none",
        );
    }
    if !(body.guard_band_factor.is_finite() && body.guard_band_factor >= 0.0) {
        p.add("guard_band_factor", "must be a finite number >= 0");
    }
    if let Some(class) = &body.tolerance_class {
        let ok = match kind.as_str() {
            "thermocouple" => class
                .parse::<crate::metrology::thermo::ThermocoupleClass>()
                .is_ok(),
            "prt" => class.parse::<crate::metrology::thermo::PrtClass>().is_ok(),
            _ => false,
        };
        if !ok {
            p.add("tolerance_class", format!("{class:?} is not a tolerance class for a {kind}; thermocouples: 1, 2, 3, standard, special; PRTs: AA, A, B, C"));
        }
    }
    if body.tolerance_class.is_some() && body.tolerance_limit_c.is_some() {
        p.add(
            "tolerance_limit_c",
            "give a tolerance class or a customer limit, not both",
        );
    }
    if let Some(l) = body.tolerance_limit_c
        && !(l.is_finite() && l > 0.0)
    {
        p.add("tolerance_limit_c", "must be a positive number of °C");
    }
    if body.decision_rule != "none"
        && body.tolerance_class.is_none()
        && body.tolerance_limit_c.is_none()
    {
        p.add("decision_rule", "a decision rule needs a tolerance class or a customer limit; use \"none\" for no conformity statement");
    }
    if let Some(d) = body.fit_degree
        && !(0..=5).contains(&d)
    {
        p.add("fit_degree", "must be between 0 and 5");
    }
    let extra_budget = match body.extra_budget {
        Some(rows) => rows,
        None => crate::store::templates::rows(conn, &kind).await?,
    };
    for (i, row) in extra_budget.iter().enumerate() {
        if row.name.trim().is_empty() {
            p.add(&format!("extra_budget[{i}].name"), "must not be empty");
        }
        if let Err(e) = row.item() {
            p.add(&format!("extra_budget[{i}]"), e);
        }
        if !(row.value_c.is_finite() && row.value_c >= 0.0) {
            p.add(
                &format!("extra_budget[{i}].value_c"),
                "must be a finite number of °C >= 0",
            );
        }
    }
    p.finish()?;
    let instrument =
        instrument.ok_or_else(|| AppError::Internal("instrument vanished".to_owned()))?;
    let reference_id = ids[0].ok_or_else(|| AppError::Internal("reference vanished".to_owned()))?;
    let fields = RunFields {
        instrument_id: instrument.id,
        reference_id,
        reference_readout_id: ids[1],
        uut_readout_id: ids[2],
        medium_id: ids[3],
        performed_on: body.performed_on,
        procedure_ref: body.procedure_ref.trim().to_owned(),
        location: body.location,
        ambient_t_c: body.ambient_t_c,
        ambient_rh_percent: body.ambient_rh_percent,
        rj_method,
        immersion_mm: body.immersion_mm,
        condition: body.condition,
        decision_rule: body.decision_rule,
        guard_band_factor: body.guard_band_factor,
        tolerance_class: body.tolerance_class,
        tolerance_limit_c: body.tolerance_limit_c,
        fit_degree: body.fit_degree,
        extra_budget: serde_json::to_string(&extra_budget)
            .map_err(|e| AppError::Internal(e.to_string()))?,
    };
    Ok(Resolved {
        instrument,
        fields,
        equipment: equipment_used,
    })
}

/// `POST /api/v1/runs`.
pub async fn create(
    State(state): State<AppState>,
    caller: Caller,
    ApiJson(body): ApiJson<RunBody>,
) -> ApiResult<(StatusCode, Json<Run>)> {
    let run = create_run(&state.db, &caller, body).await?;
    Ok((StatusCode::CREATED, Json(run)))
}

/// Starts a run for `caller` (the API and the pages both use this).
///
/// # Errors
/// 403 for the wrong role; 422 naming each bad field, including equipment
/// that is out of service or past its due date.
pub async fn create_run(db: &sqlx::SqlitePool, caller: &Caller, body: RunBody) -> ApiResult<Run> {
    caller.may_change(RUN_ROLES, "recording runs")?;
    let mut tx = store::begin_write(db).await?;
    let resolved = resolve(&mut tx, body).await?;
    let run = runs::create(&mut tx, &resolved.fields, caller.user_id).await?;
    let after = serde_json::json!({
        "run": run,
        "instrument": resolved.instrument.serial,
        "equipment": resolved.equipment.iter().map(|(role, e)| serde_json::json!({"role": role, "asset_id": e.asset_id})).collect::<Vec<_>>(),
    });
    record(
        &mut tx,
        caller,
        "create",
        "run",
        &run.id.to_string(),
        None,
        Some(&after),
    )
    .await?;
    tx.commit().await?;
    Ok(run)
}

/// `GET /api/v1/runs`.
pub async fn list(State(state): State<AppState>, _caller: Caller) -> ApiResult<Json<Vec<Run>>> {
    let mut conn = state.db.acquire().await?;
    Ok(Json(runs::all(&mut conn).await?))
}

/// A set point with its readings.
#[derive(Debug, Serialize)]
pub struct SetPointDetail {
    /// The set point.
    #[serde(flatten)]
    pub set_point: SetPoint,
    /// How many readings it holds.
    pub reading_count: i64,
    /// Its raw readings (absent with `?readings=false`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub readings: Option<Vec<Reading>>,
}

/// Query of `GET /api/v1/runs/{id}`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct DetailQuery {
    /// Include every raw reading (default true); `false` gives only the
    /// counts, for runs with logger files of many readings (read those
    /// page by page from `.../set-points/{sp}/readings`).
    #[serde(default = "yes")]
    pub readings: bool,
}

fn yes() -> bool {
    true
}

/// Most readings in one page of `GET .../set-points/{sp}/readings`.
pub const MAX_READINGS_PAGE: i64 = 10_000;

/// Query of a page of readings.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ReadingsPageQuery {
    /// Readings after this position (default 0: from the first).
    #[serde(default)]
    pub after: i64,
    /// How many (default and most: 10 000).
    #[serde(default = "page_limit")]
    pub limit: i64,
}

fn page_limit() -> i64 {
    MAX_READINGS_PAGE
}

/// A page of a set point's readings.
#[derive(Debug, Serialize)]
pub struct ReadingsPage {
    /// The set point.
    pub set_point_id: i64,
    /// How many readings it holds in all.
    pub total: i64,
    /// The readings of this page, by position.
    pub readings: Vec<Reading>,
    /// Ask again with `?after=` this for the next page; absent after the last.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub next_after: Option<i64>,
}

/// `GET /api/v1/runs/{id}/set-points/{set_point_id}/readings?after=&limit=`:
/// a set point's raw readings page by page, in order of position.
pub async fn readings_page(
    State(state): State<AppState>,
    _caller: Caller,
    Path((id, set_point_id)): Path<(i64, i64)>,
    crate::web::extract::ApiQuery(q): crate::web::extract::ApiQuery<ReadingsPageQuery>,
) -> ApiResult<Json<ReadingsPage>> {
    let mut p = Problems::default();
    if q.after < 0 {
        p.add(
            "after",
            format!("{} is negative; give a position, 0 or more", q.after),
        );
    }
    if !(1..=MAX_READINGS_PAGE).contains(&q.limit) {
        p.add(
            "limit",
            format!("{} is outside 1 to {MAX_READINGS_PAGE}", q.limit),
        );
    }
    p.finish()?;
    let mut conn = state.db.acquire().await?;
    run_or_404(&mut conn, id).await?;
    if !runs::set_points(&mut conn, id)
        .await?
        .iter()
        .any(|sp| sp.id == set_point_id)
    {
        return Err(AppError::NotFound(format!("run {id} has no set point {set_point_id}")).into());
    }
    let total = runs::reading_count(&mut conn, set_point_id).await?;
    let last = runs::last_position(&mut conn, set_point_id).await?;
    let to = q.after.saturating_add(q.limit);
    let readings = runs::readings_in(&mut conn, set_point_id, q.after + 1, to).await?;
    Ok(Json(ReadingsPage {
        set_point_id,
        total,
        readings,
        next_after: (to < last).then_some(to),
    }))
}

/// A run with its set points and readings.
#[derive(Debug, Serialize)]
pub struct RunDetail {
    /// The run.
    #[serde(flatten)]
    pub run: Run,
    /// Set points by temperature.
    pub set_points: Vec<SetPointDetail>,
}

pub async fn run_or_404(conn: &mut sqlx::SqliteConnection, id: i64) -> Result<Run, AppError> {
    runs::by_id(conn, id)
        .await?
        .ok_or_else(|| AppError::NotFound(format!("there is no run {id}")))
}

/// `GET /api/v1/runs/{id}`.
pub async fn get(
    State(state): State<AppState>,
    _caller: Caller,
    Path(id): Path<i64>,
    crate::web::extract::ApiQuery(q): crate::web::extract::ApiQuery<DetailQuery>,
) -> ApiResult<Json<RunDetail>> {
    let mut conn = state.db.acquire().await?;
    let run = run_or_404(&mut conn, id).await?;
    let mut set_points = Vec::new();
    for sp in runs::set_points(&mut conn, id).await? {
        let reading_count = runs::reading_count(&mut conn, sp.id).await?;
        let readings = if q.readings {
            Some(runs::readings(&mut conn, sp.id).await?)
        } else {
            None
        };
        set_points.push(SetPointDetail {
            set_point: sp,
            reading_count,
            readings,
        });
    }
    Ok(Json(RunDetail { run, set_points }))
}

/// Refuses changes to a run the caller may not edit now, and stale edits.
pub fn editable(run: &Run, caller: &Caller, version: i64) -> Result<(), AppError> {
    if !matches!(run.status.as_str(), "open" | "returned") {
        return Err(AppError::Conflict(format!(
            "run {} has been {} and is read-only",
            run.id, run.status
        )));
    }
    if run.technician_id != caller.user_id && caller.role != Role::Administrator {
        return Err(AppError::Conflict(format!(
            "run {} belongs to another technician; only they (or an administrator) may change it",
            run.id
        )));
    }
    if run.version != version {
        return Err(AppError::Conflict(format!(
            "run {} has changed since you loaded it (you have version {version}, it is now at version {}); reload it and enter your change again",
            run.id, run.version
        )));
    }
    Ok(())
}

/// Body of a new set point.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SetPointBody {
    /// Nominal temperature, °C.
    pub nominal_t_c: f64,
    /// The run version the change is based on.
    pub version: i64,
}

/// `POST /api/v1/runs/{id}/set-points`.
pub async fn add_set_point(
    State(state): State<AppState>,
    caller: Caller,
    Path(id): Path<i64>,
    ApiJson(body): ApiJson<SetPointBody>,
) -> ApiResult<(StatusCode, Json<SetPoint>)> {
    let sp = add_set_point_to(&state.db, &caller, id, body).await?;
    Ok((StatusCode::CREATED, Json(sp)))
}

/// Adds a set point to run `id`.
///
/// # Errors
/// 403, 404, 409 (read-only or stale), 422 (duplicate or not finite).
pub async fn add_set_point_to(
    db: &sqlx::SqlitePool,
    caller: &Caller,
    id: i64,
    body: SetPointBody,
) -> ApiResult<SetPoint> {
    caller.may_change(RUN_ROLES, "changing runs")?;
    if !body.nominal_t_c.is_finite() {
        return Err(AppError::invalid("nominal_t_c", "must be a finite temperature in °C").into());
    }
    let mut tx = store::begin_write(db).await?;
    let run = run_or_404(&mut tx, id).await?;
    editable(&run, caller, body.version)?;
    // The set point must lie where the unit's and the reference's
    // reference functions are defined.
    let instrument = records::instrument_by_id(&mut tx, run.instrument_id)
        .await?
        .ok_or_else(|| AppError::Internal("instrument vanished".to_owned()))?;
    let reference = equipment::by_id(&mut tx, run.reference_id)
        .await?
        .ok_or_else(|| AppError::Internal("reference vanished".to_owned()))?;
    for (who, kind, tc_type) in [
        (
            format!("{} ({})", instrument.serial, instrument.kind),
            instrument.kind.as_str(),
            instrument.tc_type.as_deref(),
        ),
        (
            format!("the reference {}", reference.asset_id),
            reference.kind.as_str(),
            reference.tc_type.as_deref(),
        ),
    ] {
        if let Some((lo, hi)) = crate::domain::results::defined_range(kind, tc_type)
            && !(lo..=hi).contains(&body.nominal_t_c)
        {
            return Err(AppError::invalid(
                "nominal_t_c",
                format!(
                    "{} °C is outside the range of {who}, {lo} °C to {hi} °C",
                    body.nominal_t_c
                ),
            )
            .into());
        }
    }
    let sp = runs::add_set_point(&mut tx, id, body.nominal_t_c)
        .await
        .map_err(|e| match e.as_database_error() {
            Some(db) if db.is_unique_violation() => AppError::invalid(
                "nominal_t_c",
                format!(
                    "run {id} already has a set point at {} °C",
                    body.nominal_t_c
                ),
            ),
            _ => AppError::Db(e),
        })?;
    runs::touch(&mut tx, id, run.version).await?;
    record(
        &mut tx,
        caller,
        "add_set_point",
        "run",
        &id.to_string(),
        None,
        Some(&json(&sp)),
    )
    .await?;
    tx.commit().await?;
    Ok(sp)
}

/// `DELETE /api/v1/runs/{id}/set-points/{set_point_id}?version=N`: removes
/// a set point and its readings from an open run (kept in the audit trail).
pub async fn delete_set_point(
    State(state): State<AppState>,
    caller: Caller,
    Path((id, set_point_id)): Path<(i64, i64)>,
    Query(query): Query<VersionQuery>,
) -> ApiResult<StatusCode> {
    let version = query.version.ok_or_else(|| {
        AppError::invalid("version", "give the run version you loaded as ?version=N")
    })?;
    remove_set_point(&state.db, &caller, id, set_point_id, version).await?;
    Ok(StatusCode::NO_CONTENT)
}

/// Removes a set point and its readings from run `id`.
///
/// # Errors
/// 403, 404, 409.
pub async fn remove_set_point(
    db: &sqlx::SqlitePool,
    caller: &Caller,
    id: i64,
    set_point_id: i64,
    version: i64,
) -> ApiResult<()> {
    caller.may_change(RUN_ROLES, "changing runs")?;
    let mut tx = store::begin_write(db).await?;
    let run = run_or_404(&mut tx, id).await?;
    editable(&run, caller, version)?;
    let Some(sp) = runs::set_points(&mut tx, id)
        .await?
        .into_iter()
        .find(|sp| sp.id == set_point_id)
    else {
        return Err(AppError::NotFound(format!("run {id} has no set point {set_point_id}")).into());
    };
    let readings = runs::readings(&mut tx, sp.id).await?;
    runs::delete_set_point(&mut tx, id, set_point_id).await?;
    runs::touch(&mut tx, id, run.version).await?;
    let before = serde_json::json!({"set_point": sp, "readings": readings});
    record(
        &mut tx,
        caller,
        "delete_set_point",
        "run",
        &id.to_string(),
        Some(&before),
        None,
    )
    .await?;
    tx.commit().await?;
    Ok(())
}

/// Body of readings as JSON.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ReadingsBody {
    /// The run version the change is based on.
    pub version: i64,
    /// The readings, in the order taken.
    pub readings: Vec<ReadingBody>,
}

/// One reading as JSON.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ReadingBody {
    /// When taken (free text, e.g. ISO 8601).
    #[serde(default)]
    pub taken_at: Option<String>,
    /// Reference signal.
    pub reference_signal: f64,
    /// UUT signal.
    pub uut_signal: f64,
    /// Reference-junction temperature, °C.
    #[serde(default)]
    pub rj_t_c: Option<f64>,
}

/// Query of a text upload.
#[derive(Debug, Deserialize)]
pub struct VersionQuery {
    /// The run version the change is based on.
    pub version: Option<i64>,
}

/// The outcome of adding readings.
#[derive(Debug, Serialize)]
pub struct ReadingsAdded {
    /// How many were added.
    pub added: usize,
    /// How many the set point now holds.
    pub total: i64,
    /// The run's new version.
    pub version: i64,
}

/// Checks readings against the sensors' ranges; names the offending one.
fn check_readings(
    readings: &[Reading],
    instrument: &Instrument,
    rj_method: &str,
) -> Result<(), AppError> {
    let mut p = Problems::default();
    for (i, r) in readings.iter().enumerate() {
        check_reading(
            &mut p,
            &|| format!("readings[{i}]"),
            r.uut_signal,
            r.rj_t_c,
            instrument,
            rj_method,
        );
    }
    p.finish()
}

/// Checks one reading (named by `at`, called only for a problem) against
/// the sensors' ranges.
fn check_reading(
    p: &mut Problems,
    at: &dyn Fn() -> String,
    uut_signal: f64,
    rj_t_c: Option<f64>,
    instrument: &Instrument,
    rj_method: &str,
) {
    match instrument.kind.as_str() {
        "thermocouple" => {
            if rj_method != "compensated"
                && let Some(t) = instrument
                    .tc_type
                    .as_deref()
                    .and_then(|t| t.parse::<ThermocoupleType>().ok())
            {
                let (lo, hi) = t.emf_range();
                if !(lo..=hi).contains(&uut_signal) {
                    p.add(
                        &format!("{}.uut_signal", at()),
                        format!(
                            "{uut_signal} mV is outside the emf range of type {t}, {lo:.3} mV to {hi:.3} mV"
                        ),
                    );
                }
            }
            if rj_method == "measured" && rj_t_c.is_none() {
                p.add(
                    &format!("{}.rj_t_c", at()),
                    "the reference junction is measured: give its temperature in °C with every reading",
                );
            }
        }
        "prt" | "sprt" if uut_signal <= 0.0 => {
            p.add(
                &format!("{}.uut_signal", at()),
                format!("{uut_signal} Ω: a resistance must be positive"),
            );
        }
        _ => {}
    }
    if let Some(t) = rj_t_c
        && !(-50.0..=100.0).contains(&t)
    {
        p.add(
            &format!("{}.rj_t_c", at()),
            format!("{t} °C is not a plausible reference-junction temperature (-50 °C to 100 °C)"),
        );
    }
}

/// `POST /api/v1/runs/{id}/set-points/{set_point_id}/readings`: JSON
/// (`application/json`) or text pasted from a spreadsheet or exported by a
/// logger (`text/csv`, `text/tab-separated-values`, `text/plain`, with
/// `?version=N`).
pub async fn add_readings(
    State(state): State<AppState>,
    caller: Caller,
    Path((id, set_point_id)): Path<(i64, i64)>,
    Query(query): Query<VersionQuery>,
    headers: HeaderMap,
    body: Bytes,
) -> ApiResult<(StatusCode, Json<ReadingsAdded>)> {
    caller.may_change(RUN_ROLES, "entering readings")?;
    let content_type = headers
        .get(header::CONTENT_TYPE)
        .and_then(|v| v.to_str().ok())
        .unwrap_or("")
        .to_ascii_lowercase();
    let (version, readings) = if content_type.starts_with("application/json") {
        let parsed: ReadingsBody = crate::web::extract::json_from_slice(&body)?;
        let readings = parsed
            .readings
            .into_iter()
            .map(|r| Reading {
                position: 0,
                taken_at: r.taken_at,
                reference_signal: r.reference_signal,
                uut_signal: r.uut_signal,
                rj_t_c: r.rj_t_c,
            })
            .collect::<Vec<_>>();
        (parsed.version, readings)
    } else if content_type.starts_with("text/") {
        let version = query.version.ok_or_else(|| {
            AppError::invalid("version", "give the run version you loaded as ?version=N")
        })?;
        let text = std::str::from_utf8(&body)
            .map_err(|_| AppError::BadRequest("the readings text is not UTF-8".to_owned()))?;
        let readings = readings::parse(text)
            .map_err(|e| AppError::invalid(format!("line {}", e.line), e.to_string()))?;
        (version, readings)
    } else {
        return Err(AppError::BadRequest(
            "send readings as application/json, or as text/csv, text/tab-separated-values or text/plain with a header row".to_owned(),
        )
        .into());
    };
    let added = add_readings_to(&state.db, &caller, id, set_point_id, version, readings).await?;
    Ok((StatusCode::CREATED, Json(added)))
}

/// Most readings accepted from one logger file.
pub const MAX_FILE_READINGS: usize = 2_000_000;

/// Longest time stamp accepted in a logger file, in characters.
const MAX_TIME_STAMP_CHARS: usize = 64;

/// The outcome of a logger file upload.
#[derive(Debug, Serialize)]
pub struct FileAdded {
    /// How many readings were added.
    pub added: usize,
    /// How many the set point now holds.
    pub total: i64,
    /// The run's new version.
    pub version: i64,
    /// Size of the file as received, bytes.
    pub bytes: u64,
    /// SHA-256 of the file as received (also in the audit trail).
    pub sha256: String,
}

/// Reads a logger file from a request body as it arrives: splits it into
/// lines across chunks, parses each line with the header's layout, checks
/// it and keeps it as columns. The body itself is never held whole.
#[derive(Debug)]
pub struct FileReader<'a> {
    instrument: &'a Instrument,
    rj_method: &'a str,
    layout: Option<readings::Layout>,
    /// Bytes of an unfinished line carried into the next chunk.
    pending: Vec<u8>,
    line: usize,
    columns: runs::ReadingColumns,
    problems: Problems,
    hasher: sha2::Sha256,
    /// Bytes taken so far.
    pub bytes: u64,
}

/// Field errors collected from a file before giving up.
const MAX_FILE_PROBLEMS: usize = 20;

impl<'a> FileReader<'a> {
    /// A reader for readings of `instrument` taken with the reference
    /// junction method `rj_method`.
    #[must_use]
    pub fn new(instrument: &'a Instrument, rj_method: &'a str) -> Self {
        Self {
            instrument,
            rj_method,
            layout: None,
            pending: Vec::new(),
            line: 0,
            columns: runs::ReadingColumns::default(),
            problems: Problems::default(),
            hasher: sha2::Digest::new(),
            bytes: 0,
        }
    }

    /// Takes the next chunk of the body.
    ///
    /// # Errors
    /// A line that cannot be read, or too many problems; 422 naming lines.
    pub fn chunk(&mut self, chunk: &[u8]) -> Result<(), AppError> {
        sha2::Digest::update(&mut self.hasher, chunk);
        self.bytes += chunk.len() as u64;
        let mut rest = chunk;
        while let Some(end) = rest.iter().position(|&b| b == b'\n') {
            if self.pending.is_empty() {
                self.one_line(&rest[..end])?;
            } else {
                let mut whole = std::mem::take(&mut self.pending);
                whole.extend_from_slice(&rest[..end]);
                self.one_line(&whole)?;
            }
            rest = &rest[end + 1..];
        }
        self.pending.extend_from_slice(rest);
        if self.pending.len() > 64 * 1024 {
            return Err(AppError::invalid(
                format!("line {}", self.line + 1),
                "a line longer than 64 KiB; is this a readings file with one reading per line?",
            ));
        }
        Ok(())
    }

    fn one_line(&mut self, raw: &[u8]) -> Result<(), AppError> {
        self.line += 1;
        let line = self.line;
        let text = std::str::from_utf8(raw).map_err(|e| {
            AppError::invalid(
                format!("line {line}"),
                format!(
                    "line {line}: not UTF-8 text (byte {} of the line)",
                    e.valid_up_to() + 1
                ),
            )
        })?;
        let Some(layout) = &self.layout else {
            if !text.trim().is_empty() {
                match readings::Layout::from_header(line, text) {
                    Ok(layout) => self.layout = Some(layout),
                    Err(e) => return Err(self.stop(&e)),
                }
            }
            return Ok(());
        };
        let row = match layout.row(line, text) {
            Ok(Some(row)) => row,
            Ok(None) => return Ok(()),
            Err(e) => return Err(self.stop(&e)),
        };
        let at = || format!("line {line}");
        if let Some(t) = row.taken_at {
            // Printable ASCII within the limit needs no closer look.
            if t.len() > MAX_TIME_STAMP_CHARS || !t.bytes().all(|b| (0x20..0x7f).contains(&b)) {
                self.problems
                    .screen(&format!("{}.time", at()), t, MAX_TIME_STAMP_CHARS, false);
            }
        }
        check_reading(
            &mut self.problems,
            &at,
            row.uut_signal,
            row.rj_t_c,
            self.instrument,
            self.rj_method,
        );
        if self.problems.0.len() >= MAX_FILE_PROBLEMS {
            return Err(self.all_problems());
        }
        if self.columns.len() >= MAX_FILE_READINGS {
            return Err(AppError::invalid(
                at(),
                format!("more than {MAX_FILE_READINGS} readings in one file; split it"),
            ));
        }
        self.columns.push(
            row.taken_at,
            row.reference_signal,
            row.uut_signal,
            row.rj_t_c,
        );
        Ok(())
    }

    /// A line that cannot be read ends the upload: the problems found so
    /// far, then this one.
    fn stop(&mut self, e: &readings::ImportError) -> AppError {
        self.problems
            .add(&format!("line {}", e.line), e.to_string());
        self.all_problems()
    }

    fn all_problems(&mut self) -> AppError {
        std::mem::take(&mut self.problems)
            .finish()
            .err()
            .unwrap_or_else(|| AppError::Internal("no problem recorded".to_owned()))
    }

    /// The readings and the file's size and SHA-256, once the body ended.
    ///
    /// # Errors
    /// Problems found, an empty file or no readings; 422 naming lines.
    pub fn finish(mut self) -> Result<(runs::ReadingColumns, u64, String), AppError> {
        if !self.pending.is_empty() {
            let last = std::mem::take(&mut self.pending);
            self.one_line(&last)?;
        }
        std::mem::take(&mut self.problems).finish()?;
        if self.layout.is_none() {
            return Err(AppError::invalid(
                "line 1",
                "the file is empty; expected a header row such as `time,reference,uut`",
            ));
        }
        if self.columns.is_empty() {
            return Err(AppError::invalid(
                "readings",
                "the header row is followed by no readings",
            ));
        }
        let sha256 = hex::encode(sha2::Digest::finalize(self.hasher));
        Ok((self.columns, self.bytes, sha256))
    }
}

/// `POST /api/v1/runs/{id}/set-points/{set_point_id}/readings/file?version=N`:
/// a data logger's file (`text/csv`, `text/tab-separated-values` or
/// `text/plain` with a header row, as for pasted readings), up to the
/// service's upload limit and [`MAX_FILE_READINGS`] readings. The body is
/// parsed and checked as it arrives and kept as columns; the readings are
/// then written in one transaction (all or none). The audit event records
/// the count, positions and the file's SHA-256 instead of every value.
pub async fn add_readings_file(
    State(state): State<AppState>,
    caller: Caller,
    Path((id, set_point_id)): Path<(i64, i64)>,
    Query(query): Query<VersionQuery>,
    headers: HeaderMap,
    body: axum::body::Body,
) -> ApiResult<(StatusCode, Json<FileAdded>)> {
    use axum::body::HttpBody;
    caller.may_change(RUN_ROLES, "entering readings")?;
    let content_type = headers
        .get(header::CONTENT_TYPE)
        .and_then(|v| v.to_str().ok())
        .unwrap_or("")
        .to_ascii_lowercase();
    if !content_type.starts_with("text/") {
        return Err(AppError::UnsupportedMediaType(
            "send a logger file as text/csv, text/tab-separated-values or text/plain with a header row".to_owned(),
        )
        .into());
    }
    let version = query.version.ok_or_else(|| {
        AppError::invalid("version", "give the run version you loaded as ?version=N")
    })?;
    let limit = state.http.upload_limit_bytes;
    if headers
        .get(header::CONTENT_LENGTH)
        .and_then(|v| v.to_str().ok())
        .and_then(|v| v.parse::<u64>().ok())
        .is_some_and(|n| n > limit)
    {
        return Err(too_large(limit));
    }
    // Who may add what, checked before the body is read (and again in the
    // write transaction).
    let (run, instrument) = file_target(&state.db, id, set_point_id).await?;
    editable(&run, &caller, version)?;
    let mut reader = FileReader::new(&instrument, &run.rj_method);
    let mut body = std::pin::pin!(body);
    while let Some(frame) = std::future::poll_fn(|cx| body.as_mut().poll_frame(cx)).await {
        let frame = frame.map_err(|e| body_error(&e))?;
        if let Ok(data) = frame.into_data() {
            if reader.bytes + data.len() as u64 > limit {
                return Err(too_large(limit));
            }
            reader.chunk(&data)?;
        }
    }
    let (columns, bytes, sha256) = reader.finish()?;
    let added = store_file_readings(
        &state.db,
        &caller,
        id,
        set_point_id,
        version,
        &columns,
        bytes,
        sha256,
    )
    .await?;
    Ok((StatusCode::CREATED, Json(added)))
}

/// The run `id` and its instrument, checking that `set_point_id` is one of
/// its set points: what a logger file is read against.
///
/// # Errors
/// 404 for an unknown run or set point; a database error.
pub async fn file_target(
    db: &sqlx::SqlitePool,
    id: i64,
    set_point_id: i64,
) -> Result<(runs::Run, Instrument), AppError> {
    let mut conn = db.acquire().await?;
    let run = run_or_404(&mut conn, id).await?;
    if !runs::set_points(&mut conn, id)
        .await?
        .iter()
        .any(|sp| sp.id == set_point_id)
    {
        return Err(AppError::NotFound(format!(
            "run {id} has no set point {set_point_id}"
        )));
    }
    let instrument = records::instrument_by_id(&mut conn, run.instrument_id)
        .await?
        .ok_or_else(|| AppError::Internal("instrument vanished".to_owned()))?;
    Ok((run, instrument))
}

/// Stores the readings read from a logger file (size `bytes`, SHA-256
/// `sha256`) at a set point of run `id`, in one transaction with its audit
/// event.
///
/// # Errors
/// 403, 409 (stale version, run not editable), a database error.
#[expect(clippy::too_many_arguments, reason = "one operation, named fields")]
pub async fn store_file_readings(
    db: &sqlx::SqlitePool,
    caller: &Caller,
    id: i64,
    set_point_id: i64,
    version: i64,
    columns: &runs::ReadingColumns,
    bytes: u64,
    sha256: String,
) -> ApiResult<FileAdded> {
    caller.may_change(RUN_ROLES, "entering readings")?;
    let mut tx = store::begin_write(db).await?;
    let run = run_or_404(&mut tx, id).await?;
    editable(&run, caller, version)?;
    let total = runs::append_reading_columns(&mut tx, set_point_id, columns).await?;
    runs::touch(&mut tx, id, run.version).await?;
    let added = columns.len();
    let after = serde_json::json!({
        "set_point_id": set_point_id,
        "file_sha256": sha256,
        "file_bytes": bytes,
        "readings": added,
        "positions": [total - added as i64 + 1, total],
    });
    record(
        &mut tx,
        caller,
        "add_readings_file",
        "run",
        &id.to_string(),
        None,
        Some(&after),
    )
    .await?;
    tx.commit().await?;
    Ok(FileAdded {
        added,
        total,
        version: run.version + 1,
        bytes,
        sha256,
    })
}

/// 413 naming the upload limit.
fn too_large(limit: u64) -> super::records::ApiError {
    AppError::PayloadTooLarge {
        limit_bytes: usize::try_from(limit).unwrap_or(usize::MAX),
    }
    .into()
}

/// A body that broke off (the client went away or sent a broken chunk).
fn body_error(e: &axum::Error) -> AppError {
    AppError::BadRequest(format!("the upload broke off: {e}"))
}

/// Appends readings to a set point of run `id`, all or none.
///
/// # Errors
/// 403, 404, 409, 422 naming the reading and field.
pub async fn add_readings_to(
    db: &sqlx::SqlitePool,
    caller: &Caller,
    id: i64,
    set_point_id: i64,
    version: i64,
    readings: Vec<Reading>,
) -> ApiResult<ReadingsAdded> {
    caller.may_change(RUN_ROLES, "entering readings")?;
    if readings.is_empty() {
        return Err(AppError::invalid("readings", "no readings given").into());
    }
    let most = crate::domain::readings::MAX_READINGS;
    if readings.len() > most {
        return Err(AppError::invalid(
            "readings",
            format!(
                "{} readings in one request; at most {most} are accepted (send them in parts)",
                readings.len()
            ),
        )
        .into());
    }
    let mut tx = store::begin_write(db).await?;
    let run = run_or_404(&mut tx, id).await?;
    editable(&run, caller, version)?;
    if !runs::set_points(&mut tx, id)
        .await?
        .iter()
        .any(|sp| sp.id == set_point_id)
    {
        return Err(AppError::NotFound(format!("run {id} has no set point {set_point_id}")).into());
    }
    let instrument = records::instrument_by_id(&mut tx, run.instrument_id)
        .await?
        .ok_or_else(|| AppError::Internal("instrument vanished".to_owned()))?;
    check_readings(&readings, &instrument, &run.rj_method)?;
    let total = runs::append_readings(&mut tx, set_point_id, &readings).await?;
    runs::touch(&mut tx, id, run.version).await?;
    let after = serde_json::json!({"set_point_id": set_point_id, "readings": readings});
    record(
        &mut tx,
        caller,
        "add_readings",
        "run",
        &id.to_string(),
        None,
        Some(&after),
    )
    .await?;
    tx.commit().await?;
    Ok(ReadingsAdded {
        added: readings.len(),
        total,
        version: run.version + 1,
    })
}

/// Body of a submission.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SubmitBody {
    /// The run version the submission is based on.
    pub version: i64,
}

/// `POST /api/v1/runs/{id}/submit`: hands the run to review; it is then
/// read-only for its technician.
pub async fn submit(
    State(state): State<AppState>,
    caller: Caller,
    Path(id): Path<i64>,
    ApiJson(body): ApiJson<SubmitBody>,
) -> ApiResult<Json<Run>> {
    Ok(Json(
        submit_run(&state.db, &caller, id, body.version).await?,
    ))
}

/// Submits run `id` for review.
///
/// # Errors
/// 403, 404, 409, 422 (no set points, too few readings).
pub async fn submit_run(
    db: &sqlx::SqlitePool,
    caller: &Caller,
    id: i64,
    version: i64,
) -> ApiResult<Run> {
    caller.may_change(RUN_ROLES, "submitting runs")?;
    let mut tx = store::begin_write(db).await?;
    let run = run_or_404(&mut tx, id).await?;
    editable(&run, caller, version)?;
    let instrument = records::instrument_by_id(&mut tx, run.instrument_id)
        .await?
        .ok_or_else(|| AppError::Internal("instrument vanished".to_owned()))?;
    if instrument.kind == "switch" {
        // A switch test is submitted once its results can be computed.
        crate::domain::switches::evaluate(&mut tx, &run)
            .await
            .map_err(super::results::results_error)?;
    }
    let set_points = runs::set_points(&mut tx, id).await?;
    if instrument.kind == "switch" {
        // no set points: the ramps were checked above
    } else if set_points.is_empty() {
        return Err(AppError::invalid(
            "set_points",
            format!("run {id} has no set points to submit"),
        )
        .into());
    }
    for sp in &set_points {
        let n = runs::readings(&mut tx, sp.id).await?.len();
        if n < 2 {
            return Err(AppError::invalid(
                "set_points",
                format!("the set point at {} °C has {n} reading(s); at least 2 are needed for a Type A evaluation", sp.nominal_t_c),
            )
            .into());
        }
    }
    runs::submit(&mut tx, id).await?;
    let after = run_or_404(&mut tx, id).await?;
    record(
        &mut tx,
        caller,
        "submit",
        "run",
        &id.to_string(),
        Some(&json(&run)),
        Some(&json(&after)),
    )
    .await?;
    tx.commit().await?;
    Ok(after)
}

/// Query of the impact search.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ImpactQuery {
    /// Asset id of the equipment item.
    pub asset_id: String,
    /// First date (YYYY-MM-DD).
    pub from: String,
    /// Last date (YYYY-MM-DD).
    pub to: String,
}

/// The runs affected by an equipment item.
#[derive(Debug, Serialize)]
pub struct Impact {
    /// The item.
    pub asset_id: String,
    /// First date.
    pub from: String,
    /// Last date.
    pub to: String,
    /// Runs that used it, by date.
    pub runs: Vec<Run>,
}

/// `GET /api/v1/impact?asset_id=..&from=..&to=..`: every run that used an
/// equipment item (as reference, readout or medium) between two dates.
pub async fn impact(
    State(state): State<AppState>,
    _caller: Caller,
    crate::web::extract::ApiQuery(q): crate::web::extract::ApiQuery<ImpactQuery>,
) -> ApiResult<Json<Impact>> {
    let mut p = Problems::default();
    check_date(&mut p, "from", &q.from);
    check_date(&mut p, "to", &q.to);
    if q.from > q.to {
        p.add("to", "the last date comes before the first");
    }
    p.finish()?;
    let mut conn = state.db.acquire().await?;
    let item = equipment::by_asset_id(&mut conn, &q.asset_id)
        .await?
        .ok_or_else(|| {
            AppError::NotFound(format!(
                "there is no equipment with asset id {:?}",
                q.asset_id
            ))
        })?;
    let runs = runs::using_equipment(&mut conn, item.id, &q.from, &q.to).await?;
    Ok(Json(Impact {
        asset_id: q.asset_id,
        from: q.from,
        to: q.to,
        runs,
    }))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn prt() -> Instrument {
        Instrument {
            id: 1,
            serial: "PT-1".to_owned(),
            kind: "prt".to_owned(),
            tc_type: None,
            r0_ohm: Some(100.0),
            description: String::new(),
            manufacturer: String::new(),
            model: String::new(),
            customer_id: 1,
            created_at: String::new(),
            updated_at: String::new(),
        }
    }

    /// A logger file (tab separated, decimal comma, CRLF line ends, a blank
    /// line, no line end after the last reading).
    fn file() -> String {
        let mut text = String::from("time\treference\tuut\r\n");
        for i in 0..200 {
            text += &format!(
                "2026-11-20T10:{:02}:{:02}Z\t138,{:04}\t138,{:04}\r\n",
                i / 60,
                i % 60,
                5000 + i,
                5300 + 2 * i
            );
            if i == 100 {
                text += "\r\n";
            }
        }
        text.trim_end().to_owned()
    }

    fn read_in_chunks(text: &[u8], size: usize) -> (runs::ReadingColumns, u64, String) {
        let instrument = prt();
        let mut reader = FileReader::new(&instrument, "none");
        for chunk in text.chunks(size) {
            reader.chunk(chunk).expect("chunk");
        }
        reader.finish().expect("finish")
    }

    #[test]
    fn a_file_reads_the_same_in_chunks_of_any_size_as_pasted_whole() {
        let text = file();
        // The pasted-text parser is the reference for what the file holds.
        let whole = readings::parse(&text).expect("parses");
        assert_eq!(whole.len(), 200);
        for size in [1, 2, 3, 7, 64, 4096, text.len()] {
            let (columns, bytes, sha) = read_in_chunks(text.as_bytes(), size);
            assert_eq!(columns.len(), 200, "chunks of {size}");
            assert_eq!(bytes, text.len() as u64);
            // FIPS 180-4 SHA-256 of the bytes as sent (sha2 crate).
            assert_eq!(
                sha,
                hex::encode(<sha2::Sha256 as sha2::Digest>::digest(text.as_bytes()))
            );
            for (i, r) in whole.iter().enumerate() {
                assert_eq!(
                    columns.get(i),
                    (
                        r.taken_at.as_deref(),
                        r.reference_signal,
                        r.uut_signal,
                        r.rj_t_c
                    ),
                    "reading {i}, chunks of {size}"
                );
            }
        }
        assert_eq!(
            read_in_chunks(text.as_bytes(), 5).0.get(7),
            (Some("2026-11-20T10:00:07Z"), 138.5007, 138.5314, None)
        );
    }

    #[test]
    fn a_bad_line_is_named_whatever_the_chunk_boundaries() {
        let text = "reference,uut\n138.5,138.6\n138.5,-1.0\n138.5,oops\n";
        for size in [1, 4, 100] {
            let instrument = prt();
            let mut reader = FileReader::new(&instrument, "none");
            let e = text
                .as_bytes()
                .chunks(size)
                .try_for_each(|c| reader.chunk(c))
                .expect_err("line 4 is not a number");
            let AppError::Invalid { errors: fields, .. } = e else {
                panic!("{e:?}")
            };
            // Both problems, in the order of the lines.
            assert_eq!(fields.len(), 2, "{fields:?}");
            assert_eq!(fields[0].field, "line 3.uut_signal");
            assert_eq!(fields[1].field, "line 4");
            assert!(
                fields[1]
                    .message
                    .contains("\"oops\" in column `uut` is not a number")
            );
        }
        // A negative resistance alone is reported when the body ends.
        let instrument = prt();
        let mut reader = FileReader::new(&instrument, "none");
        reader
            .chunk(b"reference,uut\n138.5,138.6\n138.5,-1.0\n")
            .expect("parsed");
        let e = reader.finish().expect_err("negative resistance");
        let AppError::Invalid { errors: fields, .. } = e else {
            panic!("{e:?}")
        };
        assert_eq!(fields[0].field, "line 3.uut_signal");
        assert!(fields[0].message.contains("a resistance must be positive"));
    }
}
