//! Customers and instruments: `/api/v1/customers`, `/api/v1/instruments`.
//! Every change is written with its audit event in one transaction.

use axum::Json;
use axum::extract::{Path, State};
use axum::http::StatusCode;
use serde::Deserialize;
use serde_json::Value;

use crate::metrology::thermo::ThermocoupleType;
use crate::store::accounts::Role;
use crate::store::records::{self, Customer, CustomerFields, Instrument, InstrumentFields};
use crate::store::{self, audit};
use crate::web::auth::{AuthError, Caller};
use crate::web::extract::ApiJson;
use crate::web::{AppError, AppState, FieldError};

/// Roles that may register customers and instruments.
pub const RECEIVING_ROLES: &[Role] = &[Role::Technician, Role::Reviewer, Role::Administrator];

/// Either an authorisation refusal or an application error.
#[derive(Debug)]
pub enum ApiError {
    /// 401/403.
    Auth(AuthError),
    /// Everything else.
    App(AppError),
}

impl From<AuthError> for ApiError {
    fn from(e: AuthError) -> Self {
        Self::Auth(e)
    }
}

impl<E: Into<AppError>> From<E> for ApiError {
    fn from(e: E) -> Self {
        Self::App(e.into())
    }
}

impl axum::response::IntoResponse for ApiError {
    fn into_response(self) -> axum::response::Response {
        match self {
            Self::Auth(e) => e.into_response(),
            Self::App(e) => e.into_response(),
        }
    }
}

/// Result of an API handler that needs a caller.
pub type ApiResult<T> = Result<T, ApiError>;

/// Maps a unique-key violation to 409 with `message`, other errors as they are.
pub fn unique(message: impl Into<String>) -> impl FnOnce(sqlx::Error) -> AppError {
    let message = message.into();
    move |e| match e.as_database_error() {
        Some(db) if db.is_unique_violation() => AppError::Conflict(message),
        _ => AppError::Db(e),
    }
}

/// Appends an audit event for `caller`.
///
/// # Errors
/// Any database error.
pub async fn record(
    conn: &mut sqlx::SqliteConnection,
    caller: &Caller,
    action: &str,
    entity: &str,
    entity_id: &str,
    before: Option<&Value>,
    after: Option<&Value>,
) -> Result<(), AppError> {
    audit::append(
        conn,
        &audit::NewEvent {
            actor: &caller.username,
            action,
            entity,
            entity_id,
            before,
            after,
        },
    )
    .await?;
    Ok(())
}

/// Longest name, serial, number or other one-line text accepted.
pub const MAX_NAME_CHARS: usize = 200;
/// Longest free text (addresses, descriptions, reasons) accepted.
pub const MAX_TEXT_CHARS: usize = 2000;

/// Collects field errors and turns them into one 422.
#[derive(Debug, Default)]
pub struct Problems(pub Vec<FieldError>);

impl Problems {
    /// Adds an error on `field`.
    pub fn add(&mut self, field: &str, message: impl Into<String>) {
        self.0.push(FieldError::new(field, message));
    }
    /// Requires a non-blank, single-line text of at most [`MAX_NAME_CHARS`]
    /// characters without control characters.
    pub fn text(&mut self, field: &str, value: &str) {
        if value.trim().is_empty() {
            self.add(field, "must not be empty");
        } else {
            self.screen(field, value, MAX_NAME_CHARS, false);
        }
    }

    /// Checks an optional text: at most `max` characters, no control
    /// characters (line breaks and tabs allowed when `multiline`).
    pub fn screen(&mut self, field: &str, value: &str, max: usize, multiline: bool) {
        let count = value.chars().count();
        if count > max {
            self.add(
                field,
                format!("is {count} characters long; at most {max} are allowed"),
            );
            return;
        }
        if let Some((i, c)) = value
            .chars()
            .enumerate()
            .find(|(_, c)| c.is_control() && !(multiline && matches!(c, '\n' | '\r' | '\t')))
        {
            self.add(
                field,
                format!(
                    "contains the control character U+{:04X} at character {}; {}",
                    u32::from(c),
                    i + 1,
                    if multiline {
                        "only line breaks and tabs are allowed"
                    } else {
                        "write it on one line without control characters"
                    }
                ),
            );
        }
    }
    /// Checks a kind against the accepted ones (`allowed`, comma separated);
    /// returns it lower-cased.
    pub fn kind(&mut self, given: &str, allowed: &str) -> String {
        let kind = given.trim().to_ascii_lowercase();
        if !allowed.split(", ").any(|k| k == kind) {
            self.add(
                "kind",
                format!("unknown kind {given:?}; expected one of {allowed}"),
            );
        }
        kind
    }

    /// The letter type of a thermocouple: required when `needed` (naming
    /// `what` in the message), refused otherwise.
    pub fn tc_type(&mut self, given: Option<&str>, needed: bool, what: &str) -> Option<String> {
        match (given, needed) {
            (Some(t), true) => match t.parse::<ThermocoupleType>() {
                Ok(t) => Some(t.to_string()),
                Err(e) => {
                    self.add("tc_type", e.to_string());
                    None
                }
            },
            (None, true) => {
                self.add(
                    "tc_type",
                    format!("{what} needs its letter type (B, E, J, K, N, R, S or T)"),
                );
                None
            }
            (Some(_), false) => {
                let plural = format!("{}s", what.trim_start_matches("a "));
                self.add("tc_type", format!("only {plural} have a letter type"));
                None
            }
            (None, false) => None,
        }
    }

    /// Ends validation.
    ///
    /// # Errors
    /// [`AppError::Invalid`] when any error was added.
    pub fn finish(self) -> Result<(), AppError> {
        if self.0.is_empty() {
            return Ok(());
        }
        let detail = self
            .0
            .iter()
            .map(|e| format!("{}: {}", e.field, e.message))
            .collect::<Vec<_>>()
            .join("; ");
        Err(AppError::Invalid {
            detail,
            errors: self.0,
        })
    }
}

fn json<T: serde::Serialize>(value: &T) -> Value {
    serde_json::to_value(value).unwrap_or(Value::Null)
}

// ------------------------------------------------------------------ customers

/// Body of customer create/update.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CustomerBody {
    /// Name.
    pub name: String,
    /// Address.
    #[serde(default)]
    pub address: String,
    /// E-mail.
    #[serde(default)]
    pub contact_email: String,
    /// Telephone.
    #[serde(default)]
    pub contact_phone: String,
}

impl CustomerBody {
    fn validate(self) -> Result<CustomerFields, AppError> {
        let mut p = Problems::default();
        p.text("name", &self.name);
        p.screen("address", &self.address, MAX_TEXT_CHARS, true);
        p.screen("contact_email", &self.contact_email, MAX_NAME_CHARS, false);
        p.screen("contact_phone", &self.contact_phone, MAX_NAME_CHARS, false);
        if !self.contact_email.is_empty() && !self.contact_email.contains('@') {
            p.add("contact_email", "is not an e-mail address (no @)");
        }
        p.finish()?;
        Ok(CustomerFields {
            name: self.name.trim().to_owned(),
            address: self.address,
            contact_email: self.contact_email.trim().to_owned(),
            contact_phone: self.contact_phone.trim().to_owned(),
        })
    }
}

/// `GET /api/v1/customers`.
pub async fn list_customers(
    State(state): State<AppState>,
    _caller: Caller,
) -> ApiResult<Json<Vec<Customer>>> {
    let mut conn = state.db.acquire().await?;
    Ok(Json(records::customers(&mut conn).await?))
}

/// `GET /api/v1/customers/{id}`.
pub async fn get_customer(
    State(state): State<AppState>,
    _caller: Caller,
    Path(id): Path<i64>,
) -> ApiResult<Json<Customer>> {
    let mut conn = state.db.acquire().await?;
    let customer = records::customer(&mut conn, id)
        .await?
        .ok_or_else(|| AppError::NotFound(format!("there is no customer {id}")))?;
    Ok(Json(customer))
}

/// `POST /api/v1/customers`.
pub async fn create_customer(
    State(state): State<AppState>,
    caller: Caller,
    ApiJson(body): ApiJson<CustomerBody>,
) -> ApiResult<(StatusCode, Json<Customer>)> {
    caller.may_change(RECEIVING_ROLES, "registering customers")?;
    let fields = body.validate()?;
    let mut tx = store::begin_write(&state.db).await?;
    let customer = records::create_customer(&mut tx, &fields)
        .await
        .map_err(unique(format!(
            "a customer named {:?} already exists",
            fields.name
        )))?;
    record(
        &mut tx,
        &caller,
        "create",
        "customer",
        &customer.id.to_string(),
        None,
        Some(&json(&customer)),
    )
    .await?;
    tx.commit().await?;
    Ok((StatusCode::CREATED, Json(customer)))
}

/// `PUT /api/v1/customers/{id}`.
pub async fn update_customer(
    State(state): State<AppState>,
    caller: Caller,
    Path(id): Path<i64>,
    ApiJson(body): ApiJson<CustomerBody>,
) -> ApiResult<Json<Customer>> {
    caller.may_change(RECEIVING_ROLES, "changing customers")?;
    let fields = body.validate()?;
    let mut tx = store::begin_write(&state.db).await?;
    let before = records::customer(&mut tx, id)
        .await?
        .ok_or_else(|| AppError::NotFound(format!("there is no customer {id}")))?;
    let after = records::update_customer(&mut tx, id, &fields)
        .await
        .map_err(unique(format!(
            "a customer named {:?} already exists",
            fields.name
        )))?
        .ok_or_else(|| AppError::NotFound(format!("there is no customer {id}")))?;
    record(
        &mut tx,
        &caller,
        "update",
        "customer",
        &id.to_string(),
        Some(&json(&before)),
        Some(&json(&after)),
    )
    .await?;
    tx.commit().await?;
    Ok(Json(after))
}

// ---------------------------------------------------------------- instruments

/// Kinds of instrument a lab receives.
pub const INSTRUMENT_KINDS: &str = "thermocouple, prt, sprt, indicating, switch";

/// Body of instrument create.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct InstrumentBody {
    /// Serial number.
    pub serial: String,
    /// Kind.
    pub kind: String,
    /// Thermocouple letter type.
    #[serde(default)]
    pub tc_type: Option<String>,
    /// Nominal R0 of a PRT, Ω.
    #[serde(default)]
    pub r0_ohm: Option<f64>,
    /// Description.
    #[serde(default)]
    pub description: String,
    /// Manufacturer.
    #[serde(default)]
    pub manufacturer: String,
    /// Model.
    #[serde(default)]
    pub model: String,
    /// Owner.
    pub customer_id: i64,
}

impl InstrumentBody {
    /// Checks the body and turns it into fields to store.
    ///
    /// # Errors
    /// 422 naming each bad field.
    pub fn validate(self) -> Result<InstrumentFields, AppError> {
        let mut p = Problems::default();
        p.text("serial", &self.serial);
        p.screen("description", &self.description, MAX_TEXT_CHARS, true);
        p.screen("manufacturer", &self.manufacturer, MAX_NAME_CHARS, false);
        p.screen("model", &self.model, MAX_NAME_CHARS, false);
        let kind = p.kind(&self.kind, INSTRUMENT_KINDS);
        let tc_type = p.tc_type(
            self.tc_type.as_deref(),
            kind == "thermocouple",
            "a thermocouple",
        );
        match (self.r0_ohm, kind.as_str()) {
            (Some(r0), "prt") if !(r0.is_finite() && r0 > 0.0) => {
                p.add("r0_ohm", "must be a positive resistance in Ω")
            }
            (None, "prt") => p.add(
                "r0_ohm",
                "a PRT needs its nominal R0 in Ω (e.g. 100 for a Pt100)",
            ),
            (Some(_), k) if k != "prt" => p.add("r0_ohm", "only PRTs have a nominal R0"),
            _ => {}
        }
        p.finish()?;
        Ok(InstrumentFields {
            serial: self.serial.trim().to_owned(),
            kind,
            tc_type,
            r0_ohm: self.r0_ohm,
            description: self.description,
            manufacturer: self.manufacturer,
            model: self.model,
            customer_id: self.customer_id,
        })
    }
}

/// `GET /api/v1/instruments`.
pub async fn list_instruments(
    State(state): State<AppState>,
    _caller: Caller,
) -> ApiResult<Json<Vec<Instrument>>> {
    let mut conn = state.db.acquire().await?;
    Ok(Json(records::instruments(&mut conn).await?))
}

/// `GET /api/v1/instruments/{serial}`.
pub async fn get_instrument(
    State(state): State<AppState>,
    _caller: Caller,
    Path(serial): Path<String>,
) -> ApiResult<Json<Instrument>> {
    let mut conn = state.db.acquire().await?;
    let instrument = records::instrument_by_serial(&mut conn, &serial)
        .await?
        .ok_or_else(|| {
            AppError::NotFound(format!(
                "there is no instrument with serial number {serial:?}"
            ))
        })?;
    Ok(Json(instrument))
}

/// `POST /api/v1/instruments`.
pub async fn create_instrument(
    State(state): State<AppState>,
    caller: Caller,
    ApiJson(body): ApiJson<InstrumentBody>,
) -> ApiResult<(StatusCode, Json<Instrument>)> {
    caller.may_change(RECEIVING_ROLES, "registering instruments")?;
    let fields = body.validate()?;
    let mut tx = store::begin_write(&state.db).await?;
    if records::customer(&mut tx, fields.customer_id)
        .await?
        .is_none()
    {
        return Err(AppError::invalid(
            "customer_id",
            format!("there is no customer {}", fields.customer_id),
        )
        .into());
    }
    let instrument = records::create_instrument(&mut tx, &fields)
        .await
        .map_err(unique(format!(
            "an instrument with serial number {:?} is already registered",
            fields.serial
        )))?;
    record(
        &mut tx,
        &caller,
        "create",
        "instrument",
        &instrument.serial,
        None,
        Some(&json(&instrument)),
    )
    .await?;
    tx.commit().await?;
    Ok((StatusCode::CREATED, Json(instrument)))
}

/// Body of an instrument description change.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct DescribeBody {
    /// Description.
    #[serde(default)]
    pub description: String,
    /// Manufacturer.
    #[serde(default)]
    pub manufacturer: String,
    /// Model.
    #[serde(default)]
    pub model: String,
}

/// `PUT /api/v1/instruments/{serial}`: changes the descriptive fields.
pub async fn describe_instrument(
    State(state): State<AppState>,
    caller: Caller,
    Path(serial): Path<String>,
    ApiJson(body): ApiJson<DescribeBody>,
) -> ApiResult<Json<Instrument>> {
    caller.may_change(RECEIVING_ROLES, "changing instruments")?;
    let mut tx = store::begin_write(&state.db).await?;
    let before = records::instrument_by_serial(&mut tx, &serial)
        .await?
        .ok_or_else(|| {
            AppError::NotFound(format!(
                "there is no instrument with serial number {serial:?}"
            ))
        })?;
    let after = records::describe_instrument(
        &mut tx,
        before.id,
        &body.description,
        &body.manufacturer,
        &body.model,
    )
    .await?
    .ok_or_else(|| {
        AppError::NotFound(format!(
            "there is no instrument with serial number {serial:?}"
        ))
    })?;
    record(
        &mut tx,
        &caller,
        "update",
        "instrument",
        &serial,
        Some(&json(&before)),
        Some(&json(&after)),
    )
    .await?;
    tx.commit().await?;
    Ok(Json(after))
}
