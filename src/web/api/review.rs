//! Review and certificates: the review queue, approval (which issues a
//! certificate), return to the technician, certificate snapshots and the
//! deviation-function API of an instrument's current certificate.

use std::sync::Arc;

use axum::Json;
use axum::body::Bytes;
use axum::extract::{Path, State};
use axum::http::{HeaderMap, HeaderValue, StatusCode, header};
use axum::response::{IntoResponse, Response};
use serde::{Deserialize, Serialize};

use super::records::{ApiError, ApiResult, record};
use super::runs::run_or_404;
use crate::domain::certificates::{Issue, build_snapshot, compute, expand_pattern};
use crate::metrology::calib::temperature_from_emf;
use crate::metrology::thermo::ThermocoupleType;
use crate::report::snapshot::{CertificateSnapshot, FunctionBlock};
use crate::store::accounts::Role;
use crate::store::lookups::{self, CertificateHeader};
use crate::store::runs::{self, Run};
use crate::store::{self, certificates, lab, records};
use crate::web::auth::Caller;
use crate::web::extract::{ApiJson, ApiQuery};
use crate::web::{AppError, AppState};

/// Roles that review.
pub const REVIEW_ROLES: &[Role] = &[Role::Reviewer, Role::Administrator];

/// `GET /api/v1/review`: runs waiting for review, oldest first.
pub async fn queue(State(state): State<AppState>, _caller: Caller) -> ApiResult<Json<Vec<Run>>> {
    let mut conn = state.db.acquire().await?;
    let mut waiting: Vec<Run> = runs::all(&mut conn)
        .await?
        .into_iter()
        .filter(|r| r.status == "submitted")
        .collect();
    waiting.reverse();
    Ok(Json(waiting))
}

/// Body of an approval.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ApproveBody {
    /// The run version reviewed.
    pub version: i64,
}

/// The certificate an approval issued.
#[derive(Debug, Serialize)]
pub struct Issued {
    /// Number.
    pub number: String,
    /// Revision.
    pub revision: i64,
    /// Issue date.
    pub issued_on: String,
    /// SHA-256 of the snapshot.
    pub sha256: String,
}

fn today() -> (String, i64) {
    let now = time::OffsetDateTime::now_utc();
    let text = now
        .date()
        .format(&time::macros::format_description!("[year]-[month]-[day]"))
        .unwrap_or_default();
    (text, i64::from(now.year()))
}

/// Approves run `id` and issues its certificate (revision 0).
///
/// # Errors
/// 403 for the wrong role or for approving one's own run, 409 for a run not
/// waiting for review or a stale version, 422 when results cannot be computed.
pub async fn approve_run(
    db: &sqlx::SqlitePool,
    caller: &Caller,
    id: i64,
    version: i64,
) -> ApiResult<Issued> {
    caller.may_change(REVIEW_ROLES, "approving runs")?;
    let mut tx = store::begin_write(db).await?;
    let run = run_or_404(&mut tx, id).await?;
    if run.technician_id == caller.user_id {
        return Err(AppError::Forbidden(format!(
            "you performed run {id}; another person must review and approve it"
        ))
        .into());
    }
    if run.status != "submitted" {
        return Err(AppError::Conflict(format!(
            "run {id} is not waiting for review (it is {})",
            run.status
        ))
        .into());
    }
    if run.version != version {
        return Err(AppError::Conflict(format!(
            "run {id} has changed since you loaded it (version {version}, now {}); reload it",
            run.version
        ))
        .into());
    }
    let results = compute(&mut tx, &run)
        .await
        .map_err(super::results::results_error)?;
    let (issued_on, year) = today();
    let pattern = lab::get(&mut tx).await?.map_or_else(
        || "C{year}-{seq:5}".to_owned(),
        |l| l.certificate_number_pattern,
    );
    let seq = certificates::next_sequence(&mut tx, year).await?;
    let number = expand_pattern(&pattern, year, seq);
    let snapshot = build_snapshot(
        &mut tx,
        Issue {
            run: &run,
            results: &results,
            number: &number,
            revision: 0,
            replaces: None,
            issued_on: &issued_on,
            approved_by: &caller.display_name,
        },
    )
    .await
    .map_err(super::results::results_error)?;
    let json = snapshot
        .canonical_json()
        .map_err(|e| AppError::Internal(e.to_string()))?;
    let sha256 = snapshot
        .fingerprint()
        .map_err(|e| AppError::Internal(e.to_string()))?;
    let instrument_id = run.instrument_id;
    certificates::insert(
        &mut tx,
        &certificates::NewCertificate {
            number: &number,
            revision: 0,
            run_id: id,
            instrument_id,
            issued_on: &issued_on,
            approved_by: caller.user_id,
            snapshot: &json,
            sha256: &sha256,
            replaces_id: None,
            amendment_reason: None,
            outcome: snapshot.overall_outcome(),
        },
    )
    .await
    .map_err(super::records::unique(format!(
        "certificate number {number} is taken; check the lab's number pattern"
    )))?;
    runs::set_review_state(&mut tx, id, "approved", None).await?;
    let after = serde_json::json!({"certificate": number, "revision": 0, "sha256": sha256});
    record(
        &mut tx,
        caller,
        "approve",
        "run",
        &id.to_string(),
        None,
        Some(&after),
    )
    .await?;
    tx.commit().await?;
    Ok(Issued {
        number,
        revision: 0,
        issued_on,
        sha256,
    })
}

/// `POST /api/v1/runs/{id}/approve`.
pub async fn approve(
    State(state): State<AppState>,
    caller: Caller,
    Path(id): Path<i64>,
    ApiJson(body): ApiJson<ApproveBody>,
) -> ApiResult<(StatusCode, Json<Issued>)> {
    let issued = approve_run(&state.db, &caller, id, body.version).await?;
    Ok((StatusCode::CREATED, Json(issued)))
}

/// Body of a return.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ReturnBody {
    /// The run version reviewed.
    pub version: i64,
    /// What the technician must change.
    pub reason: String,
}

/// Returns run `id` to its technician with a reason.
///
/// # Errors
/// 403, 409, 422 (empty reason).
pub async fn return_run(
    db: &sqlx::SqlitePool,
    caller: &Caller,
    id: i64,
    version: i64,
    reason: &str,
) -> ApiResult<Run> {
    caller.may_change(REVIEW_ROLES, "returning runs")?;
    if reason.trim().is_empty() {
        return Err(AppError::invalid("reason", "say what the technician must change").into());
    }
    let mut p = super::records::Problems::default();
    p.screen("reason", reason, super::records::MAX_TEXT_CHARS, true);
    p.finish()?;
    let mut tx = store::begin_write(db).await?;
    let run = run_or_404(&mut tx, id).await?;
    if run.status != "submitted" {
        return Err(AppError::Conflict(format!(
            "run {id} is not waiting for review (it is {})",
            run.status
        ))
        .into());
    }
    if run.version != version {
        return Err(AppError::Conflict(format!(
            "run {id} has changed since you loaded it; reload it"
        ))
        .into());
    }
    runs::set_review_state(&mut tx, id, "returned", Some(reason.trim())).await?;
    let after = run_or_404(&mut tx, id).await?;
    let before = serde_json::to_value(&run).unwrap_or_default();
    let after_json = serde_json::to_value(&after).unwrap_or_default();
    record(
        &mut tx,
        caller,
        "return",
        "run",
        &id.to_string(),
        Some(&before),
        Some(&after_json),
    )
    .await?;
    tx.commit().await?;
    Ok(after)
}

/// `POST /api/v1/runs/{id}/return`.
pub async fn return_to_technician(
    State(state): State<AppState>,
    caller: Caller,
    Path(id): Path<i64>,
    ApiJson(body): ApiJson<ReturnBody>,
) -> ApiResult<Json<Run>> {
    Ok(Json(
        return_run(&state.db, &caller, id, body.version, &body.reason).await?,
    ))
}

/// Query naming a revision.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RevisionQuery {
    /// Revision (default: the latest).
    pub revision: Option<i64>,
}

fn etag(sha256: &str) -> String {
    format!("\"{sha256}\"")
}

fn not_modified(headers: &HeaderMap, tag: &str) -> bool {
    headers
        .get(header::IF_NONE_MATCH)
        .and_then(|v| v.to_str().ok())
        .is_some_and(|v| v.split(',').any(|t| t.trim() == tag))
}

/// `GET /api/v1/certificates/{number}`: the frozen snapshot, byte for byte.
pub async fn certificate_json(
    State(state): State<AppState>,
    _caller: Caller,
    Path(number): Path<String>,
    ApiQuery(q): ApiQuery<RevisionQuery>,
) -> ApiResult<Response> {
    let c = header_by_number(&state, &number, q.revision).await?;
    let body = cached_snapshot_json(&state, &c).await?;
    let mut response = ([(header::CONTENT_TYPE, "application/json")], body).into_response();
    let h = response.headers_mut();
    if let Ok(v) = HeaderValue::from_str(&c.sha256) {
        h.insert("x-certificate-sha256", v);
    }
    if let Ok(v) = HeaderValue::from_str(&etag(&c.sha256)) {
        h.insert(header::ETAG, v);
    }
    Ok(response)
}

async fn current_with_instrument(
    conn: &mut sqlx::SqliteConnection,
    serial: &str,
) -> Result<
    (
        certificates::Certificate,
        CertificateSnapshot,
        records::Instrument,
    ),
    AppError,
> {
    let instrument = records::instrument_by_serial(conn, serial)
        .await?
        .ok_or_else(|| {
            AppError::NotFound(format!(
                "there is no instrument with serial number {serial:?}"
            ))
        })?;
    let c = certificates::current_for_instrument(conn, instrument.id)
        .await?
        .ok_or_else(|| {
            AppError::NotFound(format!("instrument {serial} has no issued certificate"))
        })?;
    let snapshot: CertificateSnapshot = serde_json::from_str(&c.snapshot)
        .map_err(|e| AppError::Internal(format!("stored snapshot unreadable: {e}")))?;
    Ok((c, snapshot, instrument))
}

/// The current certificate of the instrument `serial`, without reading its
/// snapshot; when there is none, the full look-up names what is missing.
///
/// Kept in memory until the next database change (`cache::Fresh`), so a
/// repeated request needs no connection.
async fn current_header(state: &AppState, serial: &str) -> Result<CertificateHeader, AppError> {
    let changes = state.changes.changes();
    if let Some(h) = state.lookups.current.get(serial, changes) {
        return Ok(h);
    }
    let mut conn = state.db.acquire().await?;
    if let Some(h) = lookups::current_by_serial(&mut conn, serial).await? {
        state
            .lookups
            .current
            .insert(serial.to_owned(), h.clone(), changes);
        return Ok(h);
    }
    let (c, _, instrument) = current_with_instrument(&mut conn, serial).await?;
    Ok(CertificateHeader {
        id: c.id,
        number: c.number,
        revision: c.revision,
        issued_on: c.issued_on,
        sha256: c.sha256,
        tc_type: instrument.tc_type,
        replaced_by_id: c.replaced_by_id,
    })
}

/// Certificate `number` at `revision` (the latest when `None`), without
/// its snapshot; kept in memory until the next database change.
///
/// # Errors
/// 404 when there is no such certificate; a database error.
pub async fn header_by_number(
    state: &AppState,
    number: &str,
    revision: Option<i64>,
) -> Result<CertificateHeader, AppError> {
    let changes = state.changes.changes();
    let key = (number.to_owned(), revision.unwrap_or(-1));
    if let Some(h) = state.lookups.by_number.get(&key, changes) {
        return Ok(h);
    }
    let mut conn = state.db.acquire().await?;
    let h = lookups::by_number(&mut conn, number, revision)
        .await?
        .ok_or_else(|| {
            AppError::NotFound(match revision {
                Some(r) => format!("there is no revision {r} of certificate {number:?}"),
                None => format!("there is no certificate {number:?}"),
            })
        })?;
    state.lookups.by_number.insert(key, h.clone(), changes);
    Ok(h)
}

/// The snapshot JSON of certificate row `id`.
async fn snapshot_json(state: &AppState, id: i64) -> Result<String, AppError> {
    let mut conn = state.db.acquire().await?;
    lookups::snapshot(&mut conn, id)
        .await?
        .ok_or_else(|| AppError::NotFound(format!("certificate row {id} is gone")))
}

/// The snapshot of certificate `h` as stored (canonical JSON), kept in
/// memory by its SHA-256 once read.
///
/// # Errors
/// A database error.
pub async fn cached_snapshot_json(
    state: &AppState,
    h: &CertificateHeader,
) -> Result<Bytes, AppError> {
    if let Some(json) = state.artefacts.snapshot_json.get(&h.sha256) {
        return Ok(json);
    }
    let json = Bytes::from(snapshot_json(state, h.id).await?);
    state
        .artefacts
        .snapshot_json
        .insert(h.sha256.clone(), json.clone(), json.len());
    Ok(json)
}

/// The snapshot of certificate `h` parsed, kept in memory by its SHA-256.
///
/// # Errors
/// A database error or an unreadable stored snapshot.
pub async fn cached_snapshot(
    state: &AppState,
    h: &CertificateHeader,
) -> Result<Arc<CertificateSnapshot>, AppError> {
    if let Some(s) = state.artefacts.snapshot.get(&h.sha256) {
        return Ok(s);
    }
    let json = cached_snapshot_json(state, h).await?;
    let snapshot: CertificateSnapshot = serde_json::from_slice(&json)
        .map_err(|e| AppError::Internal(format!("stored snapshot unreadable: {e}")))?;
    let snapshot = Arc::new(snapshot);
    state
        .artefacts
        .snapshot
        .insert(h.sha256.clone(), snapshot.clone(), 2 * json.len());
    Ok(snapshot)
}

/// The deviation function of certificate `h` (None when it states none),
/// parsed once per snapshot and then kept in memory.
async fn function_of(
    state: &AppState,
    h: &CertificateHeader,
) -> Result<Option<Arc<FunctionBlock>>, AppError> {
    if let Some(f) = state.artefacts.function.get(&h.sha256) {
        return Ok(f);
    }
    let json = snapshot_json(state, h.id).await?;
    let snapshot: CertificateSnapshot = serde_json::from_str(&json)
        .map_err(|e| AppError::Internal(format!("stored snapshot unreadable: {e}")))?;
    let f = snapshot.deviation_function.map(Arc::new);
    let weight = f.as_ref().map_or(64, |f| {
        512 + f.usage.len()
            + 8 * (f.coefficients.len() + f.covariance.iter().map(Vec::len).sum::<usize>())
    });
    state
        .artefacts
        .function
        .insert(h.sha256.clone(), f.clone(), weight);
    Ok(f)
}

/// The deviation function of an instrument's current certificate (stable
/// API contract, DESIGN.md section 5).
#[derive(Debug, Serialize)]
pub struct DeviationOut {
    /// Serial number.
    pub serial: String,
    /// Certificate number.
    pub certificate_number: String,
    /// Revision.
    pub revision: i64,
    /// Issue date.
    pub issued_on: String,
    /// "polynomial".
    pub form: String,
    /// "t_c".
    pub variable: String,
    /// `coefficients[i]` multiplies t_c^i; deviation = indication − reference, °C.
    pub coefficients: Vec<f64>,
    /// Covariance of the coefficients.
    pub covariance: Vec<Vec<f64>>,
    /// Emf deviation coefficients, mV (thermocouples).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub emf_coefficients: Option<Vec<f64>>,
    /// Lower end of validity, °C.
    pub valid_from_t_c: f64,
    /// Upper end of validity, °C.
    pub valid_to_t_c: f64,
    /// Expanded uncertainty of a corrected reading, °C.
    pub expanded_uncertainty_c: f64,
    /// Its coverage factor.
    pub coverage_factor: f64,
    /// SHA-256 of the certificate snapshot.
    pub certificate_sha256: String,
}

/// `GET /api/v1/instruments/{serial}/deviation`. The answer is kept in
/// memory by the snapshot's SHA-256 (an issued certificate never changes).
pub async fn deviation(
    State(state): State<AppState>,
    _caller: Caller,
    headers: HeaderMap,
    Path(serial): Path<String>,
) -> ApiResult<Response> {
    let h = current_header(&state, &serial).await?;
    let tag = etag(&h.sha256);
    let cache = [
        (header::ETAG, tag.clone()),
        (header::CACHE_CONTROL, "private, no-cache".to_owned()),
    ];
    if not_modified(&headers, &tag) {
        return Ok((StatusCode::NOT_MODIFIED, cache).into_response());
    }
    let body = if let Some(body) = state.artefacts.deviation_json.get(&h.sha256) {
        body
    } else {
        let f = function_of(&state, &h).await?.ok_or_else(|| {
            AppError::NotFound(format!(
                "certificate {} has no deviation function",
                h.number
            ))
        })?;
        let out = DeviationOut {
            serial,
            certificate_number: h.number.clone(),
            revision: h.revision,
            issued_on: h.issued_on.clone(),
            form: f.form.clone(),
            variable: f.variable.clone(),
            coefficients: f.coefficients.clone(),
            covariance: f.covariance.clone(),
            emf_coefficients: f.emf_coefficients.clone(),
            valid_from_t_c: f.valid_from_t_c,
            valid_to_t_c: f.valid_to_t_c,
            expanded_uncertainty_c: f.expanded_uncertainty_c,
            coverage_factor: f.coverage_factor,
            certificate_sha256: h.sha256.clone(),
        };
        let body =
            Bytes::from(serde_json::to_vec(&out).map_err(|e| AppError::Internal(e.to_string()))?);
        state
            .artefacts
            .deviation_json
            .insert(h.sha256.clone(), body.clone(), body.len());
        body
    };
    Ok((
        cache,
        [(
            header::CONTENT_TYPE,
            HeaderValue::from_static("application/json"),
        )],
        body,
    )
        .into_response())
}

/// Query of the evaluate endpoint: exactly one of `t_c` and `emf_mv`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct EvaluateQuery {
    /// Temperature, °C.
    pub t_c: Option<f64>,
    /// Measured emf of a thermocouple, mV, reference junction at 0 °C.
    pub emf_mv: Option<f64>,
}

/// The deviation function at one temperature.
#[derive(Debug, Serialize)]
pub struct EvaluateOut {
    /// Temperature, °C (for an emf query: the corrected temperature).
    pub t_c: f64,
    /// Deviation (indication − reference), °C.
    pub deviation_c: f64,
    /// Correction (−deviation), °C.
    pub correction_c: f64,
    /// Expanded uncertainty of a corrected reading, °C.
    pub expanded_uncertainty_c: f64,
    /// Its coverage factor.
    pub coverage_factor: f64,
    /// Certificate number.
    pub certificate_number: String,
    /// The emf asked about, mV (emf queries only).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub emf_mv: Option<f64>,
    /// The temperature the reference function alone gives for that emf, °C.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub indicated_t_c: Option<f64>,
    /// The emf deviation at `t_c`, mV (thermocouples with an emf deviation function).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub emf_deviation_mv: Option<f64>,
}

fn outside_validity(what: &str, value: String, number: &str, f: &FunctionBlock) -> ApiError {
    AppError::invalid(
        what,
        format!(
            "{value} is outside the range the deviation function of certificate {number} is valid for, {:.3} °C to {:.3} °C; it is never extrapolated",
            f.valid_from_t_c, f.valid_to_t_c
        ),
    )
    .into()
}

/// `GET /api/v1/instruments/{serial}/deviation/evaluate?t_c=..` or `?emf_mv=..`.
pub async fn evaluate(
    State(state): State<AppState>,
    _caller: Caller,
    Path(serial): Path<String>,
    ApiQuery(q): ApiQuery<EvaluateQuery>,
) -> ApiResult<Json<EvaluateOut>> {
    let c = current_header(&state, &serial).await?;
    let f = function_of(&state, &c).await?.ok_or_else(|| {
        AppError::NotFound(format!(
            "certificate {} has no deviation function",
            c.number
        ))
    })?;
    let (t_c, emf) = match (q.t_c, q.emf_mv) {
        (Some(t), None) => {
            if !t.is_finite() {
                return Err(AppError::invalid("t_c", "must be a finite temperature in °C").into());
            }
            if t < f.valid_from_t_c || t > f.valid_to_t_c {
                return Err(outside_validity("t_c", format!("{t} °C"), &c.number, &f));
            }
            (t, None)
        }
        (None, Some(e)) => {
            let tc: ThermocoupleType = c
                .tc_type
                .as_deref()
                .and_then(|t| t.parse().ok())
                .ok_or_else(|| {
                    AppError::invalid(
                        "emf_mv",
                        format!("instrument {serial} is not a thermocouple; ask with t_c (°C)"),
                    )
                })?;
            let coefficients = f.emf_coefficients.as_deref().ok_or_else(|| {
                AppError::invalid(
                    "emf_mv",
                    format!(
                        "certificate {} states no emf deviation function; ask with t_c (°C)",
                        c.number
                    ),
                )
            })?;
            let (t, indicated) = temperature_from_emf(tc, e, coefficients)
                .map_err(|err| AppError::invalid("emf_mv", err.to_string()))?;
            if t < f.valid_from_t_c || t > f.valid_to_t_c {
                return Err(outside_validity(
                    "emf_mv",
                    format!("{e} mV (about {t:.3} °C)"),
                    &c.number,
                    &f,
                ));
            }
            (t, Some((e, indicated)))
        }
        _ => {
            return Err(AppError::invalid(
                "query",
                "give exactly one of t_c (temperature, °C) and emf_mv (thermocouple emf, mV, reference junction at 0 °C)",
            )
            .into());
        }
    };
    let deviation_c = crate::domain::coefficients::poly(&f.coefficients, t_c);
    let emf_deviation_mv = f
        .emf_coefficients
        .as_deref()
        .map(|e| crate::domain::coefficients::poly(e, t_c));
    Ok(Json(EvaluateOut {
        t_c,
        deviation_c,
        correction_c: -deviation_c,
        expanded_uncertainty_c: f.expanded_uncertainty_c,
        coverage_factor: f.coverage_factor,
        certificate_number: c.number,
        emf_mv: emf.map(|e| e.0),
        indicated_t_c: emf.map(|e| e.1),
        emf_deviation_mv,
    }))
}

/// `GET /api/v1/certificates/{number}/pdf`: the certificate as PDF, rendered
/// from the frozen snapshot (the same bytes every time).
pub async fn certificate_pdf(
    State(state): State<AppState>,
    _caller: Caller,
    Path(number): Path<String>,
    ApiQuery(q): ApiQuery<RevisionQuery>,
) -> ApiResult<Response> {
    let c = header_by_number(&state, &number, q.revision).await?;
    let pdf = cached_pdf(&state, &c).await?;
    let disposition = format!(
        "inline; filename=\"{}-rev{}.pdf\"",
        c.number.replace(['"', '\\', '/'], "_"),
        c.revision
    );
    let mut response = ([(header::CONTENT_TYPE, "application/pdf")], pdf).into_response();
    if let Ok(v) = HeaderValue::from_str(&disposition) {
        response
            .headers_mut()
            .insert(header::CONTENT_DISPOSITION, v);
    }
    if let Ok(v) = HeaderValue::from_str(&etag(&c.sha256)) {
        response.headers_mut().insert(header::ETAG, v);
    }
    Ok(response)
}

/// The PDF of certificate `h`: rendered once from its snapshot, then kept
/// in memory by the snapshot's SHA-256 (bounded; oldest evicted first).
///
/// # Errors
/// As [`pdf_of`], or a database error.
pub async fn cached_pdf(state: &AppState, h: &CertificateHeader) -> Result<Bytes, AppError> {
    if let Some(pdf) = state.artefacts.pdf.get(&h.sha256) {
        return Ok(pdf);
    }
    let json = snapshot_json(state, h.id).await?;
    let pdf = Bytes::from(pdf_of(&json).await?);
    state
        .artefacts
        .pdf
        .insert(h.sha256.clone(), pdf.clone(), pdf.len());
    Ok(pdf)
}

/// Renders a stored snapshot as PDF off the async workers.
///
/// # Errors
/// A stored snapshot that cannot be read, or a rendering failure.
pub async fn pdf_of(snapshot_json: &str) -> Result<Vec<u8>, AppError> {
    let snapshot: CertificateSnapshot = serde_json::from_str(snapshot_json)
        .map_err(|e| AppError::Internal(format!("stored snapshot unreadable: {e}")))?;
    tokio::task::spawn_blocking(move || crate::report::pdf::render_pdf(&snapshot))
        .await
        .map_err(|e| AppError::Internal(format!("PDF task failed: {e}")))?
        .map_err(|e| AppError::Internal(format!("PDF rendering failed: {e}")))
}

/// Body of an amendment.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct AmendBody {
    /// Why the certificate is amended (printed on the new revision).
    pub reason: String,
}

/// Issues the next revision of certificate `number`, rebuilt from its run's
/// current records, naming the revision it replaces and why. The replaced
/// revision stays as issued and retrievable.
///
/// # Errors
/// 403 (role, or the caller performed the run), 404, 422 (no reason).
pub async fn amend_certificate(
    db: &sqlx::SqlitePool,
    caller: &Caller,
    number: &str,
    reason: &str,
) -> ApiResult<Issued> {
    caller.may_change(REVIEW_ROLES, "amending certificates")?;
    if reason.trim().is_empty() {
        return Err(AppError::invalid(
            "reason",
            "say why the certificate is amended; the reason is printed on the new revision",
        )
        .into());
    }
    let mut p = super::records::Problems::default();
    p.screen("reason", reason, super::records::MAX_TEXT_CHARS, true);
    p.finish()?;
    let mut tx = store::begin_write(db).await?;
    let old = certificates::by_number(&mut tx, number, None)
        .await?
        .ok_or_else(|| AppError::NotFound(format!("there is no certificate {number:?}")))?;
    let run = run_or_404(&mut tx, old.run_id).await?;
    if run.technician_id == caller.user_id {
        return Err(AppError::Forbidden(format!(
            "you performed run {}; another person must authorise its certificates",
            run.id
        ))
        .into());
    }
    let results = compute(&mut tx, &run)
        .await
        .map_err(super::results::results_error)?;
    let (issued_on, _) = today();
    let revision = old.revision + 1;
    let snapshot = build_snapshot(
        &mut tx,
        Issue {
            run: &run,
            results: &results,
            number,
            revision: u32::try_from(revision).unwrap_or(u32::MAX),
            replaces: Some(crate::report::snapshot::Replaced {
                number: number.to_owned(),
                revision: u32::try_from(old.revision).unwrap_or(0),
                reason: reason.trim().to_owned(),
            }),
            issued_on: &issued_on,
            approved_by: &caller.display_name,
        },
    )
    .await
    .map_err(super::results::results_error)?;
    let json = snapshot
        .canonical_json()
        .map_err(|e| AppError::Internal(e.to_string()))?;
    let sha256 = snapshot
        .fingerprint()
        .map_err(|e| AppError::Internal(e.to_string()))?;
    let new_id = certificates::insert(
        &mut tx,
        &certificates::NewCertificate {
            number,
            revision,
            run_id: run.id,
            instrument_id: run.instrument_id,
            issued_on: &issued_on,
            approved_by: caller.user_id,
            snapshot: &json,
            sha256: &sha256,
            replaces_id: Some(old.id),
            amendment_reason: Some(reason.trim()),
            outcome: snapshot.overall_outcome(),
        },
    )
    .await?;
    certificates::mark_replaced(&mut tx, old.id, new_id).await?;
    let after = serde_json::json!({"certificate": number, "revision": revision, "replaces": old.revision, "reason": reason.trim(), "sha256": sha256});
    record(
        &mut tx,
        caller,
        "amend",
        "certificate",
        number,
        None,
        Some(&after),
    )
    .await?;
    tx.commit().await?;
    Ok(Issued {
        number: number.to_owned(),
        revision,
        issued_on,
        sha256,
    })
}

/// `POST /api/v1/certificates/{number}/amend`.
pub async fn amend(
    State(state): State<AppState>,
    caller: Caller,
    Path(number): Path<String>,
    ApiJson(body): ApiJson<AmendBody>,
) -> ApiResult<(StatusCode, Json<Issued>)> {
    let issued = amend_certificate(&state.db, &caller, &number, &body.reason).await?;
    Ok((StatusCode::CREATED, Json(issued)))
}
