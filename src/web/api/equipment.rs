//! The lab's equipment register: `/api/v1/equipment`, certificates,
//! medium characterisations and the CMC table.

use axum::Json;
use axum::extract::{Path, State};
use axum::http::StatusCode;
use serde::{Deserialize, Serialize};

use super::records::{ApiResult, MAX_NAME_CHARS, MAX_TEXT_CHARS, Problems, record, unique};
use crate::domain::coefficients::{CertificateCoefficients, forms_for};
use crate::store::accounts::Role;
use crate::store::equipment::{
    self, Certificate, CertificateFields, CertificateUncertainty, Characterisation, Cmc, Equipment,
    EquipmentFields,
};
use crate::store::{self};
use crate::web::auth::Caller;
use crate::web::extract::ApiJson;
use crate::web::{AppError, AppState};

/// Roles that keep the equipment register.
pub const REGISTER_ROLES: &[Role] = &[Role::Reviewer, Role::Administrator];

/// Kinds of equipment.
pub const EQUIPMENT_KINDS: &str = "reference_sprt, reference_prt, reference_thermocouple, \
     reference_indicating, readout, bath, furnace, dry_block";

fn json<T: Serialize>(value: &T) -> serde_json::Value {
    serde_json::to_value(value).unwrap_or(serde_json::Value::Null)
}

/// Checks a calendar date `YYYY-MM-DD`.
pub fn check_date(p: &mut Problems, field: &str, value: &str) {
    let format = time::macros::format_description!("[year]-[month]-[day]");
    if time::Date::parse(value, &format).is_err() {
        p.add(field, format!("{value:?} is not a date; write YYYY-MM-DD"));
    }
}

/// Body of equipment create.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct EquipmentBody {
    /// Asset identifier.
    pub asset_id: String,
    /// Kind.
    pub kind: String,
    /// Description.
    #[serde(default)]
    pub description: String,
    /// Manufacturer.
    #[serde(default)]
    pub manufacturer: String,
    /// Model.
    #[serde(default)]
    pub model: String,
    /// Serial number.
    #[serde(default)]
    pub serial: String,
    /// Firmware.
    #[serde(default)]
    pub firmware: String,
    /// Location.
    #[serde(default)]
    pub location: String,
    /// Reference thermocouple letter type.
    #[serde(default)]
    pub tc_type: Option<String>,
    /// Readout specification unit: mV, ohm or degC.
    #[serde(default)]
    pub spec_unit: Option<String>,
    /// Accuracy offset.
    #[serde(default)]
    pub spec_offset: Option<f64>,
    /// Relative accuracy.
    #[serde(default)]
    pub spec_relative: Option<f64>,
    /// Resolution.
    #[serde(default)]
    pub spec_resolution: Option<f64>,
}

impl EquipmentBody {
    fn validate(self) -> Result<EquipmentFields, AppError> {
        let mut p = Problems::default();
        p.text("asset_id", &self.asset_id);
        p.screen("description", &self.description, MAX_TEXT_CHARS, true);
        for (field, value) in [
            ("manufacturer", &self.manufacturer),
            ("model", &self.model),
            ("serial", &self.serial),
            ("firmware", &self.firmware),
            ("location", &self.location),
        ] {
            p.screen(field, value, MAX_NAME_CHARS, false);
        }
        let kind = p.kind(&self.kind, EQUIPMENT_KINDS);
        let tc_type = p.tc_type(
            self.tc_type.as_deref(),
            kind == "reference_thermocouple",
            "a reference thermocouple",
        );
        if let Some(unit) = &self.spec_unit
            && !["mV", "ohm", "degC"].contains(&unit.as_str())
        {
            p.add(
                "spec_unit",
                format!("unknown unit {unit:?}; expected mV, ohm or degC"),
            );
        }
        for (field, v) in [
            ("spec_offset", self.spec_offset),
            ("spec_relative", self.spec_relative),
            ("spec_resolution", self.spec_resolution),
        ] {
            if let Some(v) = v
                && !(v.is_finite() && v >= 0.0)
            {
                p.add(field, "must be a finite number >= 0");
            }
        }
        let has_spec = self.spec_offset.is_some()
            || self.spec_relative.is_some()
            || self.spec_resolution.is_some();
        if has_spec && self.spec_unit.is_none() {
            p.add(
                "spec_unit",
                "a readout specification needs its unit (mV, ohm or degC)",
            );
        }
        p.finish()?;
        Ok(EquipmentFields {
            asset_id: self.asset_id.trim().to_owned(),
            kind,
            description: self.description,
            manufacturer: self.manufacturer,
            model: self.model,
            serial: self.serial,
            firmware: self.firmware,
            location: self.location,
            status: "in_service".to_owned(),
            status_reason: String::new(),
            tc_type,
            spec_unit: self.spec_unit,
            spec_offset: self.spec_offset,
            spec_relative: self.spec_relative,
            spec_resolution: self.spec_resolution,
        })
    }
}

async fn find(conn: &mut sqlx::SqliteConnection, asset_id: &str) -> Result<Equipment, AppError> {
    equipment::by_asset_id(conn, asset_id)
        .await?
        .ok_or_else(|| {
            AppError::NotFound(format!("there is no equipment with asset id {asset_id:?}"))
        })
}

/// `GET /api/v1/equipment`.
pub async fn list(
    State(state): State<AppState>,
    _caller: Caller,
) -> ApiResult<Json<Vec<Equipment>>> {
    let mut conn = state.db.acquire().await?;
    Ok(Json(equipment::all(&mut conn).await?))
}

/// An item with its certificates.
#[derive(Debug, Serialize)]
pub struct EquipmentDetail {
    /// The item.
    #[serde(flatten)]
    pub equipment: Equipment,
    /// Its certificates, newest first, each with its uncertainty table.
    pub certificates: Vec<CertificateDetail>,
}

/// A certificate with its uncertainty table.
#[derive(Debug, Serialize)]
pub struct CertificateDetail {
    /// The certificate.
    #[serde(flatten)]
    pub certificate: Certificate,
    /// Uncertainty by range.
    pub uncertainties: Vec<CertificateUncertainty>,
}

/// `GET /api/v1/equipment/{asset_id}`.
pub async fn get(
    State(state): State<AppState>,
    _caller: Caller,
    Path(asset_id): Path<String>,
) -> ApiResult<Json<EquipmentDetail>> {
    let mut conn = state.db.acquire().await?;
    let item = find(&mut conn, &asset_id).await?;
    let mut certificates = Vec::new();
    for c in equipment::certificates(&mut conn, item.id).await? {
        let uncertainties = equipment::certificate_uncertainties(&mut conn, c.id).await?;
        certificates.push(CertificateDetail {
            certificate: c,
            uncertainties,
        });
    }
    Ok(Json(EquipmentDetail {
        equipment: item,
        certificates,
    }))
}

/// `POST /api/v1/equipment`.
pub async fn create(
    State(state): State<AppState>,
    caller: Caller,
    ApiJson(body): ApiJson<EquipmentBody>,
) -> ApiResult<(StatusCode, Json<Equipment>)> {
    caller.may_change(REGISTER_ROLES, "keeping the equipment register")?;
    let fields = body.validate()?;
    let mut tx = store::begin_write(&state.db).await?;
    let item = equipment::create(&mut tx, &fields)
        .await
        .map_err(unique(format!(
            "asset id {:?} is already in the register",
            fields.asset_id
        )))?;
    record(
        &mut tx,
        &caller,
        "create",
        "equipment",
        &item.asset_id,
        None,
        Some(&json(&item)),
    )
    .await?;
    tx.commit().await?;
    Ok((StatusCode::CREATED, Json(item)))
}

/// Body of a status change.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct StatusBody {
    /// in_service or out_of_service.
    pub status: String,
    /// Why (required when taking an item out of service).
    #[serde(default)]
    pub reason: String,
}

/// `PUT /api/v1/equipment/{asset_id}/status`.
pub async fn set_status(
    State(state): State<AppState>,
    caller: Caller,
    Path(asset_id): Path<String>,
    ApiJson(body): ApiJson<StatusBody>,
) -> ApiResult<Json<Equipment>> {
    caller.may_change(REGISTER_ROLES, "changing equipment status")?;
    let mut p = Problems::default();
    if !["in_service", "out_of_service"].contains(&body.status.as_str()) {
        p.add(
            "status",
            format!(
                "unknown status {:?}; expected in_service or out_of_service",
                body.status
            ),
        );
    }
    if body.status == "out_of_service" && body.reason.trim().is_empty() {
        p.add("reason", "say why the item is taken out of service");
    }
    p.finish()?;
    let mut tx = store::begin_write(&state.db).await?;
    let before = find(&mut tx, &asset_id).await?;
    let after = equipment::set_status(&mut tx, before.id, &body.status, body.reason.trim())
        .await?
        .ok_or_else(|| {
            AppError::NotFound(format!("there is no equipment with asset id {asset_id:?}"))
        })?;
    record(
        &mut tx,
        &caller,
        "status",
        "equipment",
        &asset_id,
        Some(&json(&before)),
        Some(&json(&after)),
    )
    .await?;
    tx.commit().await?;
    Ok(Json(after))
}

/// Body of a new certificate.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CertificateBody {
    /// Certificate number.
    pub number: String,
    /// Issuing laboratory.
    pub issuer: String,
    /// Calibration date.
    pub calibrated_on: String,
    /// Due date.
    pub due_on: String,
    /// Coefficients.
    #[serde(default = "no_coefficients")]
    pub coefficients: CertificateCoefficients,
    /// Uncertainty by range.
    #[serde(default)]
    pub uncertainties: Vec<UncertaintyBody>,
}

fn no_coefficients() -> CertificateCoefficients {
    CertificateCoefficients::None
}

/// One row of a certificate's uncertainty table.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct UncertaintyBody {
    /// Lower end, °C.
    pub t_lo_c: f64,
    /// Upper end, °C.
    pub t_hi_c: f64,
    /// Expanded uncertainty, °C.
    pub expanded_c: f64,
    /// Coverage factor (default 2).
    #[serde(default = "two")]
    pub k: f64,
}

fn two() -> f64 {
    2.0
}

/// `POST /api/v1/equipment/{asset_id}/certificates`.
pub async fn add_certificate(
    State(state): State<AppState>,
    caller: Caller,
    Path(asset_id): Path<String>,
    ApiJson(body): ApiJson<CertificateBody>,
) -> ApiResult<(StatusCode, Json<CertificateDetail>)> {
    caller.may_change(REGISTER_ROLES, "recording equipment certificates")?;
    let mut tx = store::begin_write(&state.db).await?;
    let item = find(&mut tx, &asset_id).await?;
    let mut p = Problems::default();
    p.text("number", &body.number);
    p.text("issuer", &body.issuer);
    check_date(&mut p, "calibrated_on", &body.calibrated_on);
    check_date(&mut p, "due_on", &body.due_on);
    if body.due_on <= body.calibrated_on {
        p.add(
            "due_on",
            "the due date must come after the calibration date",
        );
    }
    let allowed = forms_for(&item.kind);
    if !allowed.contains(&body.coefficients.form()) {
        p.add(
            "coefficients.form",
            format!(
                "a {} carries {} coefficients, not {}",
                item.kind,
                allowed.join(" or "),
                body.coefficients.form()
            ),
        );
    } else if let Err(e) = body.coefficients.check() {
        p.add("coefficients", e);
    }
    let is_reference = item.kind.starts_with("reference_");
    if is_reference && body.uncertainties.is_empty() {
        p.add("uncertainties", "a reference standard's certificate needs its expanded uncertainty by temperature range");
    }
    for (i, u) in body.uncertainties.iter().enumerate() {
        if !(u.t_lo_c.is_finite() && u.t_hi_c.is_finite() && u.t_hi_c >= u.t_lo_c) {
            p.add(
                &format!("uncertainties[{i}].t_hi_c"),
                "the range must run from t_lo_c up to t_hi_c",
            );
        }
        if !(u.expanded_c.is_finite() && u.expanded_c > 0.0) {
            p.add(
                &format!("uncertainties[{i}].expanded_c"),
                "must be a positive number of °C",
            );
        }
        if !(u.k.is_finite() && u.k > 0.0) {
            p.add(
                &format!("uncertainties[{i}].k"),
                "must be a positive number",
            );
        }
    }
    p.finish()?;
    let fields = CertificateFields {
        number: body.number.trim().to_owned(),
        issuer: body.issuer.trim().to_owned(),
        calibrated_on: body.calibrated_on,
        due_on: body.due_on,
        coefficients: serde_json::to_string(&body.coefficients)
            .map_err(|e| AppError::Internal(e.to_string()))?,
        uncertainties: body
            .uncertainties
            .iter()
            .map(|u| CertificateUncertainty {
                t_lo_c: u.t_lo_c,
                t_hi_c: u.t_hi_c,
                expanded_c: u.expanded_c,
                k: u.k,
            })
            .collect(),
    };
    let certificate = equipment::add_certificate(&mut tx, item.id, &fields)
        .await
        .map_err(unique(format!(
            "{asset_id} already has a certificate numbered {:?}",
            fields.number
        )))?;
    let detail = CertificateDetail {
        certificate,
        uncertainties: fields.uncertainties,
    };
    record(
        &mut tx,
        &caller,
        "add_certificate",
        "equipment",
        &asset_id,
        None,
        Some(&json(&detail)),
    )
    .await?;
    tx.commit().await?;
    Ok((StatusCode::CREATED, Json(detail)))
}

/// Body of a medium characterisation: one date, several ranges.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CharacterisationBody {
    /// When characterised.
    pub characterised_on: String,
    /// Ranges.
    pub ranges: Vec<RangeBody>,
}

/// One characterised range.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RangeBody {
    /// Lower end, °C.
    pub t_lo_c: f64,
    /// Upper end, °C.
    pub t_hi_c: f64,
    /// Uniformity half-width, °C.
    pub uniformity_half_width_c: f64,
    /// Stability half-width, °C.
    pub stability_half_width_c: f64,
}

/// `POST /api/v1/equipment/{asset_id}/characterisations`.
pub async fn add_characterisation(
    State(state): State<AppState>,
    caller: Caller,
    Path(asset_id): Path<String>,
    ApiJson(body): ApiJson<CharacterisationBody>,
) -> ApiResult<(StatusCode, Json<Vec<Characterisation>>)> {
    caller.may_change(REGISTER_ROLES, "recording medium characterisations")?;
    let mut tx = store::begin_write(&state.db).await?;
    let item = find(&mut tx, &asset_id).await?;
    let mut p = Problems::default();
    if !["bath", "furnace", "dry_block"].contains(&item.kind.as_str()) {
        p.add(
            "asset_id",
            format!(
                "{asset_id} is a {}; only baths, furnaces and dry blocks are characterised",
                item.kind
            ),
        );
    }
    check_date(&mut p, "characterised_on", &body.characterised_on);
    if body.ranges.is_empty() {
        p.add("ranges", "give at least one temperature range");
    }
    for (i, r) in body.ranges.iter().enumerate() {
        if !(r.t_lo_c.is_finite() && r.t_hi_c.is_finite() && r.t_hi_c >= r.t_lo_c) {
            p.add(
                &format!("ranges[{i}].t_hi_c"),
                "the range must run from t_lo_c up to t_hi_c",
            );
        }
        for (name, v) in [
            ("uniformity_half_width_c", r.uniformity_half_width_c),
            ("stability_half_width_c", r.stability_half_width_c),
        ] {
            if !(v.is_finite() && v >= 0.0) {
                p.add(
                    &format!("ranges[{i}].{name}"),
                    "must be a finite number of °C >= 0",
                );
            }
        }
    }
    p.finish()?;
    let mut saved = Vec::new();
    for r in &body.ranges {
        let c = Characterisation {
            characterised_on: body.characterised_on.clone(),
            t_lo_c: r.t_lo_c,
            t_hi_c: r.t_hi_c,
            uniformity_half_width_c: r.uniformity_half_width_c,
            stability_half_width_c: r.stability_half_width_c,
        };
        equipment::add_characterisation(&mut tx, item.id, &c).await?;
        saved.push(c);
    }
    record(
        &mut tx,
        &caller,
        "add_characterisation",
        "equipment",
        &asset_id,
        None,
        Some(&json(&saved)),
    )
    .await?;
    tx.commit().await?;
    Ok((StatusCode::CREATED, Json(saved)))
}

/// `GET /api/v1/cmc`.
pub async fn list_cmc(State(state): State<AppState>, _caller: Caller) -> ApiResult<Json<Vec<Cmc>>> {
    let mut conn = state.db.acquire().await?;
    Ok(Json(equipment::cmc_table(&mut conn).await?))
}

/// Body of a CMC row.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CmcBody {
    /// Kind of unit under test.
    pub instrument_kind: String,
    /// Lower end, °C.
    pub t_lo_c: f64,
    /// Upper end, °C.
    pub t_hi_c: f64,
    /// Expanded uncertainty, °C.
    pub expanded_c: f64,
}

/// `POST /api/v1/cmc`.
pub async fn add_cmc(
    State(state): State<AppState>,
    caller: Caller,
    ApiJson(body): ApiJson<CmcBody>,
) -> ApiResult<(StatusCode, Json<Cmc>)> {
    caller.may_change(&[Role::Administrator], "changing the CMC table")?;
    let mut p = Problems::default();
    if !super::records::INSTRUMENT_KINDS
        .split(", ")
        .any(|k| k == body.instrument_kind)
    {
        p.add(
            "instrument_kind",
            format!(
                "unknown kind {:?}; expected one of {}",
                body.instrument_kind,
                super::records::INSTRUMENT_KINDS
            ),
        );
    }
    if !(body.t_lo_c.is_finite() && body.t_hi_c.is_finite() && body.t_hi_c >= body.t_lo_c) {
        p.add("t_hi_c", "the range must run from t_lo_c up to t_hi_c");
    }
    if !(body.expanded_c.is_finite() && body.expanded_c > 0.0) {
        p.add("expanded_c", "must be a positive number of °C");
    }
    p.finish()?;
    let row = Cmc {
        instrument_kind: body.instrument_kind,
        t_lo_c: body.t_lo_c,
        t_hi_c: body.t_hi_c,
        expanded_c: body.expanded_c,
    };
    let mut tx = store::begin_write(&state.db).await?;
    equipment::add_cmc(&mut tx, &row).await?;
    record(
        &mut tx,
        &caller,
        "create",
        "cmc",
        &row.instrument_kind,
        None,
        Some(&json(&row)),
    )
    .await?;
    tx.commit().await?;
    Ok((StatusCode::CREATED, Json(row)))
}

/// A kind's budget template.
#[derive(Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TemplateBody {
    /// The rows, in order.
    pub rows: Vec<crate::domain::results::ExtraBudgetRow>,
}

fn check_kind(kind: &str) -> Result<(), AppError> {
    if super::records::INSTRUMENT_KINDS
        .split(", ")
        .any(|k| k == kind)
    {
        Ok(())
    } else {
        Err(AppError::NotFound(format!(
            "there is no instrument kind {kind:?}; expected one of {}",
            super::records::INSTRUMENT_KINDS
        )))
    }
}

/// `GET /api/v1/budget-templates/{kind}`.
pub async fn get_template(
    State(state): State<AppState>,
    _caller: Caller,
    Path(kind): Path<String>,
) -> ApiResult<Json<TemplateBody>> {
    check_kind(&kind)?;
    let mut conn = state.db.acquire().await?;
    Ok(Json(TemplateBody {
        rows: store::templates::rows(&mut conn, &kind).await?,
    }))
}

/// `PUT /api/v1/budget-templates/{kind}`: replaces the kind's rows.
pub async fn put_template(
    State(state): State<AppState>,
    caller: Caller,
    Path(kind): Path<String>,
    ApiJson(body): ApiJson<TemplateBody>,
) -> ApiResult<Json<TemplateBody>> {
    caller.may_change(REGISTER_ROLES, "changing budget templates")?;
    check_kind(&kind)?;
    let mut p = Problems::default();
    for (i, row) in body.rows.iter().enumerate() {
        p.text(&format!("rows[{i}].name"), &row.name);
        if let Err(e) = row.item() {
            p.add(&format!("rows[{i}]"), e);
        }
        if !(row.value_c.is_finite() && row.value_c >= 0.0) {
            p.add(
                &format!("rows[{i}].value_c"),
                "must be a finite number of °C >= 0",
            );
        }
    }
    p.finish()?;
    let mut tx = store::begin_write(&state.db).await?;
    let before = store::templates::rows(&mut tx, &kind).await?;
    store::templates::replace(&mut tx, &kind, &body.rows).await?;
    record(
        &mut tx,
        &caller,
        "replace",
        "budget_template",
        &kind,
        Some(&json(&before)),
        Some(&json(&body.rows)),
    )
    .await?;
    tx.commit().await?;
    Ok(Json(body))
}
