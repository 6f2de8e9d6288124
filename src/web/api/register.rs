//! The certificate register as an API: search with filters, the
//! reference-standard impact query (JSON or CSV) and an instrument's
//! calibration history with E_n between consecutive calibrations. The pages
//! call the same functions.

use axum::Json;
use axum::extract::{Path, State};
use axum::http::header;
use axum::response::{IntoResponse, Response};
use serde::{Deserialize, Serialize};

use super::equipment::check_date;
use super::records::{ApiResult, Problems};
use crate::domain::history::{self, History};
use crate::store::certificates::{self, ImpactLine, RegisterFilter, RegisterLine};
use crate::store::{equipment, records};
use crate::web::AppError;
use crate::web::AppState;
use crate::web::auth::Caller;
use crate::web::extract::ApiQuery;

/// Instrument kinds a register search may name.
pub const KINDS: &[&str] = &["thermocouple", "prt", "sprt", "indicating", "switch"];
/// Outcomes a register search may name.
pub const OUTCOMES: &[&str] = &[
    "pass",
    "conditional_pass",
    "conditional_fail",
    "fail",
    "no_statement",
];
/// Most lines per register page.
pub const MAX_PAGE: i64 = 500;

/// Query of the register (every field optional; empty means "any").
#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RegisterQuery {
    /// Text in the number, serial or customer name.
    #[serde(default)]
    pub q: String,
    /// First issue date, YYYY-MM-DD.
    #[serde(default)]
    pub from: String,
    /// Last issue date, YYYY-MM-DD.
    #[serde(default)]
    pub to: String,
    /// Instrument kind.
    #[serde(default)]
    pub kind: String,
    /// Outcome.
    #[serde(default)]
    pub outcome: String,
    /// Asset id of an equipment item used in any role.
    #[serde(default)]
    pub equipment: String,
    /// Keyset cursor: only certificates with a smaller row id.
    pub before: Option<i64>,
    /// Page size (1..=500, default 50).
    pub limit: Option<i64>,
}

/// Checks a register query and turns it into a store filter.
///
/// # Errors
/// A 422 naming each bad field, or 404 for an unknown asset id.
pub async fn filter_of(
    conn: &mut sqlx::SqliteConnection,
    q: &RegisterQuery,
) -> Result<RegisterFilter, AppError> {
    let mut p = Problems::default();
    let from = q.from.trim();
    let to = q.to.trim();
    if !from.is_empty() {
        check_date(&mut p, "from", from);
    }
    if !to.is_empty() {
        check_date(&mut p, "to", to);
    }
    if !from.is_empty() && !to.is_empty() && from > to {
        p.add("to", "the last date comes before the first");
    }
    let kind = q.kind.trim();
    if !kind.is_empty() && !KINDS.contains(&kind) {
        p.add(
            "kind",
            format!(
                "{kind:?} is not an instrument kind; use one of {}",
                KINDS.join(", ")
            ),
        );
    }
    let outcome = q.outcome.trim();
    if !outcome.is_empty() && !OUTCOMES.contains(&outcome) {
        p.add(
            "outcome",
            format!(
                "{outcome:?} is not an outcome; use one of {}",
                OUTCOMES.join(", ")
            ),
        );
    }
    if let Some(l) = q.limit
        && !(1..=MAX_PAGE).contains(&l)
    {
        p.add("limit", format!("{l} is not between 1 and {MAX_PAGE}"));
    }
    p.finish()?;
    let equipment_id = match q.equipment.trim() {
        "" => 0,
        asset => equipment_id(conn, asset).await?,
    };
    Ok(RegisterFilter {
        text: q.q.trim().to_owned(),
        from: from.to_owned(),
        to: to.to_owned(),
        kind: kind.to_owned(),
        outcome: outcome.to_owned(),
        equipment_id,
    })
}

async fn equipment_id(conn: &mut sqlx::SqliteConnection, asset: &str) -> Result<i64, AppError> {
    Ok(equipment::by_asset_id(conn, asset)
        .await?
        .ok_or_else(|| {
            AppError::NotFound(format!("there is no equipment with asset id {asset:?}"))
        })?
        .id)
}

/// A page of the register.
#[derive(Debug, Serialize)]
pub struct RegisterPage {
    /// Newest first.
    pub certificates: Vec<RegisterLine>,
    /// Pass as `before` for the next (older) page; absent on the last page.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub next_before: Option<i64>,
}

/// Runs a register search.
///
/// # Errors
/// As [`filter_of`], or a database error.
pub async fn search(state: &AppState, q: &RegisterQuery) -> Result<RegisterPage, AppError> {
    let mut conn = state.db.acquire().await?;
    let filter = filter_of(&mut conn, q).await?;
    let limit = q.limit.unwrap_or(50);
    let lines =
        crate::store::register::search(&mut conn, &filter, q.before.unwrap_or(i64::MAX), limit)
            .await?;
    let next_before = (lines.len() as i64 == limit)
        .then(|| lines.last().map(|l| l.id))
        .flatten();
    Ok(RegisterPage {
        certificates: lines,
        next_before,
    })
}

/// `GET /api/v1/certificates`: the register.
pub async fn list(
    State(state): State<AppState>,
    _caller: Caller,
    ApiQuery(q): ApiQuery<RegisterQuery>,
) -> ApiResult<Json<RegisterPage>> {
    Ok(Json(search(&state, &q).await?))
}

/// Query of the impact search.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ImpactQuery {
    /// First calibration date, YYYY-MM-DD.
    pub from: String,
    /// Last calibration date.
    pub to: String,
    /// "json" (default) or "csv".
    #[serde(default)]
    pub format: String,
}

/// Certificates issued from runs that used an item.
#[derive(Debug, Serialize)]
pub struct Impact {
    /// The item.
    pub asset_id: String,
    /// First calibration date.
    pub from: String,
    /// Last calibration date.
    pub to: String,
    /// Oldest calibration first; every revision.
    pub certificates: Vec<ImpactLine>,
}

/// Every certificate whose run used `asset_id` (any role) with a
/// calibration date in [from, to].
///
/// # Errors
/// 422 for bad dates, 404 for an unknown asset id.
pub async fn impact_of(
    state: &AppState,
    asset_id: &str,
    from: &str,
    to: &str,
) -> Result<Impact, AppError> {
    let mut p = Problems::default();
    check_date(&mut p, "from", from);
    check_date(&mut p, "to", to);
    if from > to {
        p.add("to", "the last date comes before the first");
    }
    p.finish()?;
    let mut conn = state.db.acquire().await?;
    let id = equipment_id(&mut conn, asset_id).await?;
    Ok(Impact {
        asset_id: asset_id.to_owned(),
        from: from.to_owned(),
        to: to.to_owned(),
        certificates: certificates::impact(&mut conn, id, from, to).await?,
    })
}

/// One CSV field: quoted when it holds a comma, quote or line break
/// (RFC 4180), and prefixed with an apostrophe when a spreadsheet would
/// take it for a formula (OWASP "CSV injection" advice).
fn csv_field(value: &str) -> String {
    let value = if value.starts_with(['=', '+', '-', '@', '\t', '\r']) {
        format!("'{value}")
    } else {
        value.to_owned()
    };
    if value.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", value.replace('"', "\"\""))
    } else {
        value
    }
}

/// The impact list as CSV (RFC 4180, CRLF line ends, a header row).
#[must_use]
pub fn impact_csv(impact: &Impact) -> String {
    let mut out = String::from(
        "certificate,revision,state,issued_on,calibrated_on,serial,kind,customer,customer_email,roles,outcome\r\n",
    );
    for l in &impact.certificates {
        let fields = [
            l.number.clone(),
            l.revision.to_string(),
            if l.replaced { "replaced" } else { "current" }.to_owned(),
            l.issued_on.clone(),
            l.calibrated_on.clone(),
            l.serial.clone(),
            l.kind.clone(),
            l.customer.clone(),
            l.customer_email.clone(),
            l.roles.clone(),
            l.outcome.clone(),
        ];
        let line: Vec<String> = fields.iter().map(|f| csv_field(f)).collect();
        out.push_str(&line.join(","));
        out.push_str("\r\n");
    }
    out
}

/// A CSV download response.
#[must_use]
pub fn csv_response(impact: &Impact) -> Response {
    let name: String = format!(
        "impact-{}-{}-{}.csv",
        impact.asset_id, impact.from, impact.to
    )
    .chars()
    .map(|c| {
        if c.is_ascii_alphanumeric() || c == '-' || c == '.' {
            c
        } else {
            '_'
        }
    })
    .collect();
    (
        [
            (header::CONTENT_TYPE, "text/csv; charset=utf-8".to_owned()),
            (
                header::CONTENT_DISPOSITION,
                format!("attachment; filename=\"{name}\""),
            ),
        ],
        impact_csv(impact),
    )
        .into_response()
}

/// `GET /api/v1/equipment/{asset_id}/impact?from=&to=[&format=csv]`.
pub async fn impact(
    State(state): State<AppState>,
    _caller: Caller,
    Path(asset_id): Path<String>,
    ApiQuery(q): ApiQuery<ImpactQuery>,
) -> ApiResult<Response> {
    let format = q.format.trim();
    if !matches!(format, "" | "json" | "csv") {
        return Err(AppError::invalid(
            "format",
            format!("{format:?} is not a format; use json or csv"),
        )
        .into());
    }
    let impact = impact_of(&state, &asset_id, q.from.trim(), q.to.trim()).await?;
    if format == "csv" {
        Ok(csv_response(&impact))
    } else {
        Ok(Json(impact).into_response())
    }
}

/// An instrument's history by serial.
///
/// # Errors
/// 404 for an unknown serial; an unreadable stored snapshot.
pub async fn history_of(state: &AppState, serial: &str) -> Result<History, AppError> {
    let mut conn = state.db.acquire().await?;
    let instrument = records::instrument_by_serial(&mut conn, serial)
        .await?
        .ok_or_else(|| {
            AppError::NotFound(format!(
                "there is no instrument with serial number {serial:?}"
            ))
        })?;
    let rows = certificates::history(&mut conn, instrument.id).await?;
    history::build(serial, &rows)
        .map_err(|e| AppError::Internal(format!("stored snapshot unreadable: {e}")))
}

/// `GET /api/v1/instruments/{serial}/history`.
pub async fn history(
    State(state): State<AppState>,
    _caller: Caller,
    Path(serial): Path<String>,
) -> ApiResult<Json<History>> {
    Ok(Json(history_of(&state, &serial).await?))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn csv_fields_are_quoted_and_defused() {
        // RFC 4180 section 2: fields with commas or quotes are quoted, quotes doubled.
        assert_eq!(csv_field("plain"), "plain");
        assert_eq!(csv_field("a,b"), "\"a,b\"");
        assert_eq!(csv_field("say \"hi\""), "\"say \"\"hi\"\"\"");
        // OWASP CSV injection advice: a leading = + - @ is neutralised.
        assert_eq!(csv_field("=HYPERLINK(1)"), "'=HYPERLINK(1)");
        assert_eq!(csv_field("-2+3,x"), "\"'-2+3,x\"");
    }
}
