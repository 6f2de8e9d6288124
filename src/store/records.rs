//! Customers and their instruments.

use serde::Serialize;
use sqlx::SqliteConnection;

/// A customer.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Customer {
    /// Row id.
    pub id: i64,
    /// Name (unique).
    pub name: String,
    /// Postal address.
    pub address: String,
    /// Contact e-mail.
    pub contact_email: String,
    /// Contact telephone.
    pub contact_phone: String,
    /// Created (UTC).
    pub created_at: String,
    /// Last changed (UTC).
    pub updated_at: String,
}

/// Fields of a customer a caller sets.
#[derive(Debug, Clone, PartialEq)]
pub struct CustomerFields {
    /// Name (unique, not empty).
    pub name: String,
    /// Postal address.
    pub address: String,
    /// Contact e-mail.
    pub contact_email: String,
    /// Contact telephone.
    pub contact_phone: String,
}

/// Creates a customer; returns it.
///
/// # Errors
/// Any database error; a taken name is a unique violation.
pub async fn create_customer(
    conn: &mut SqliteConnection,
    f: &CustomerFields,
) -> sqlx::Result<Customer> {
    let now = super::now_timestamp();
    let id = sqlx::query_scalar!(
        r#"INSERT INTO customer (name, address, contact_email, contact_phone, created_at, updated_at)
           VALUES (?, ?, ?, ?, ?, ?) RETURNING id AS "id!: i64""#,
        f.name,
        f.address,
        f.contact_email,
        f.contact_phone,
        now,
        now
    )
    .fetch_one(&mut *conn)
    .await?;
    customer(conn, id).await?.ok_or(sqlx::Error::RowNotFound)
}

/// Replaces a customer's fields; returns the new state, `None` if absent.
///
/// # Errors
/// Any database error.
pub async fn update_customer(
    conn: &mut SqliteConnection,
    id: i64,
    f: &CustomerFields,
) -> sqlx::Result<Option<Customer>> {
    let now = super::now_timestamp();
    sqlx::query!(
        "UPDATE customer SET name = ?, address = ?, contact_email = ?, contact_phone = ?, updated_at = ?
         WHERE id = ?",
        f.name,
        f.address,
        f.contact_email,
        f.contact_phone,
        now,
        id
    )
    .execute(&mut *conn)
    .await?;
    customer(conn, id).await
}

/// One customer by id.
///
/// # Errors
/// Any database error.
pub async fn customer(conn: &mut SqliteConnection, id: i64) -> sqlx::Result<Option<Customer>> {
    sqlx::query_as!(
        Customer,
        r#"SELECT id AS "id!: i64", name, address, contact_email, contact_phone, created_at, updated_at
           FROM customer WHERE id = ?"#,
        id
    )
    .fetch_optional(conn)
    .await
}

/// All customers by name.
///
/// # Errors
/// Any database error.
pub async fn customers(conn: &mut SqliteConnection) -> sqlx::Result<Vec<Customer>> {
    sqlx::query_as!(
        Customer,
        r#"SELECT id AS "id!: i64", name, address, contact_email, contact_phone, created_at, updated_at
           FROM customer ORDER BY name"#
    )
    .fetch_all(conn)
    .await
}

/// A customer's instrument (a unit under test).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Instrument {
    /// Row id.
    pub id: i64,
    /// Serial number (unique).
    pub serial: String,
    /// thermocouple, prt, sprt, indicating or switch.
    pub kind: String,
    /// Thermocouple letter type.
    pub tc_type: Option<String>,
    /// Nominal R0 of a PRT, Ω.
    pub r0_ohm: Option<f64>,
    /// Free description (sheath, length, range...).
    pub description: String,
    /// Manufacturer.
    pub manufacturer: String,
    /// Model.
    pub model: String,
    /// Owner.
    pub customer_id: i64,
    /// Created (UTC).
    pub created_at: String,
    /// Last changed (UTC).
    pub updated_at: String,
}

/// Fields of an instrument a caller sets.
#[derive(Debug, Clone, PartialEq)]
pub struct InstrumentFields {
    /// Serial number.
    pub serial: String,
    /// Kind.
    pub kind: String,
    /// Thermocouple letter type.
    pub tc_type: Option<String>,
    /// Nominal R0, Ω.
    pub r0_ohm: Option<f64>,
    /// Description.
    pub description: String,
    /// Manufacturer.
    pub manufacturer: String,
    /// Model.
    pub model: String,
    /// Owner.
    pub customer_id: i64,
}

/// Creates an instrument; returns it.
///
/// # Errors
/// Any database error; a taken serial is a unique violation.
pub async fn create_instrument(
    conn: &mut SqliteConnection,
    f: &InstrumentFields,
) -> sqlx::Result<Instrument> {
    let now = super::now_timestamp();
    let id = sqlx::query_scalar!(
        r#"INSERT INTO instrument (serial, kind, tc_type, r0_ohm, description, manufacturer, model,
                                   customer_id, created_at, updated_at)
           VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?) RETURNING id AS "id!: i64""#,
        f.serial,
        f.kind,
        f.tc_type,
        f.r0_ohm,
        f.description,
        f.manufacturer,
        f.model,
        f.customer_id,
        now,
        now
    )
    .fetch_one(&mut *conn)
    .await?;
    instrument_by_id(conn, id)
        .await?
        .ok_or(sqlx::Error::RowNotFound)
}

/// One instrument by id.
///
/// # Errors
/// Any database error.
pub async fn instrument_by_id(
    conn: &mut SqliteConnection,
    id: i64,
) -> sqlx::Result<Option<Instrument>> {
    sqlx::query_as!(
        Instrument,
        r#"SELECT id AS "id!: i64", serial, kind, tc_type, r0_ohm, description, manufacturer, model,
                  customer_id, created_at, updated_at
           FROM instrument WHERE id = ?"#,
        id
    )
    .fetch_optional(conn)
    .await
}

/// One instrument by serial number.
///
/// # Errors
/// Any database error.
pub async fn instrument_by_serial(
    conn: &mut SqliteConnection,
    serial: &str,
) -> sqlx::Result<Option<Instrument>> {
    sqlx::query_as!(
        Instrument,
        r#"SELECT id AS "id!: i64", serial, kind, tc_type, r0_ohm, description, manufacturer, model,
                  customer_id, created_at, updated_at
           FROM instrument WHERE serial = ?"#,
        serial
    )
    .fetch_optional(conn)
    .await
}

/// All instruments by serial number.
///
/// # Errors
/// Any database error.
pub async fn instruments(conn: &mut SqliteConnection) -> sqlx::Result<Vec<Instrument>> {
    sqlx::query_as!(
        Instrument,
        r#"SELECT id AS "id!: i64", serial, kind, tc_type, r0_ohm, description, manufacturer, model,
                  customer_id, created_at, updated_at
           FROM instrument ORDER BY serial"#
    )
    .fetch_all(conn)
    .await
}

/// Changes an instrument's descriptive fields (serial number, kind, type
/// and R0 stay: runs refer to them).
///
/// # Errors
/// Any database error.
pub async fn describe_instrument(
    conn: &mut SqliteConnection,
    id: i64,
    description: &str,
    manufacturer: &str,
    model: &str,
) -> sqlx::Result<Option<Instrument>> {
    let now = super::now_timestamp();
    sqlx::query!(
        "UPDATE instrument SET description = ?, manufacturer = ?, model = ?, updated_at = ? WHERE id = ?",
        description,
        manufacturer,
        model,
        now,
        id
    )
    .execute(&mut *conn)
    .await?;
    instrument_by_id(conn, id).await
}
