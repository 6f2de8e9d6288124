//! The lab's reference standards, readouts and comparison media, their
//! calibration certificates, medium characterisations and the CMC table.

use serde::Serialize;
use sqlx::SqliteConnection;

/// An item of the lab's equipment.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Equipment {
    /// Row id.
    pub id: i64,
    /// The lab's asset identifier.
    pub asset_id: String,
    /// reference_sprt, reference_prt, reference_thermocouple,
    /// reference_indicating, readout, bath, furnace or dry_block.
    pub kind: String,
    /// Description.
    pub description: String,
    /// Manufacturer.
    pub manufacturer: String,
    /// Model.
    pub model: String,
    /// Manufacturer's serial number.
    pub serial: String,
    /// Firmware or software version.
    pub firmware: String,
    /// Where it is kept.
    pub location: String,
    /// in_service or out_of_service.
    pub status: String,
    /// Why it is out of service.
    pub status_reason: String,
    /// Letter type of a reference thermocouple.
    pub tc_type: Option<String>,
    /// Unit of the readout specification (mV, ohm, degC).
    pub spec_unit: Option<String>,
    /// Accuracy offset, in `spec_unit`.
    pub spec_offset: Option<f64>,
    /// Accuracy relative to the reading (dimensionless).
    pub spec_relative: Option<f64>,
    /// Resolution (one digit), in `spec_unit`.
    pub spec_resolution: Option<f64>,
    /// Created (UTC).
    pub created_at: String,
    /// Last changed (UTC).
    pub updated_at: String,
}

/// Fields of an equipment item a caller sets.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct EquipmentFields {
    /// Asset identifier.
    pub asset_id: String,
    /// Kind.
    pub kind: String,
    /// Description.
    pub description: String,
    /// Manufacturer.
    pub manufacturer: String,
    /// Model.
    pub model: String,
    /// Serial number.
    pub serial: String,
    /// Firmware.
    pub firmware: String,
    /// Location.
    pub location: String,
    /// Status.
    pub status: String,
    /// Reason for the status.
    pub status_reason: String,
    /// Reference thermocouple type.
    pub tc_type: Option<String>,
    /// Readout specification unit.
    pub spec_unit: Option<String>,
    /// Accuracy offset.
    pub spec_offset: Option<f64>,
    /// Relative accuracy.
    pub spec_relative: Option<f64>,
    /// Resolution.
    pub spec_resolution: Option<f64>,
}

/// Creates an equipment item; returns it.
///
/// # Errors
/// Any database error; a taken asset id is a unique violation.
pub async fn create(conn: &mut SqliteConnection, f: &EquipmentFields) -> sqlx::Result<Equipment> {
    let now = super::now_timestamp();
    let id = sqlx::query_scalar!(
        r#"INSERT INTO equipment (asset_id, kind, description, manufacturer, model, serial, firmware,
                location, status, status_reason, tc_type, spec_unit, spec_offset, spec_relative,
                spec_resolution, created_at, updated_at)
           VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?) RETURNING id AS "id!: i64""#,
        f.asset_id,
        f.kind,
        f.description,
        f.manufacturer,
        f.model,
        f.serial,
        f.firmware,
        f.location,
        f.status,
        f.status_reason,
        f.tc_type,
        f.spec_unit,
        f.spec_offset,
        f.spec_relative,
        f.spec_resolution,
        now,
        now
    )
    .fetch_one(&mut *conn)
    .await?;
    by_id(conn, id).await?.ok_or(sqlx::Error::RowNotFound)
}

/// Sets an item's status (in_service / out_of_service) with a reason.
///
/// # Errors
/// Any database error.
pub async fn set_status(
    conn: &mut SqliteConnection,
    id: i64,
    status: &str,
    reason: &str,
) -> sqlx::Result<Option<Equipment>> {
    let now = super::now_timestamp();
    sqlx::query!(
        "UPDATE equipment SET status = ?, status_reason = ?, updated_at = ? WHERE id = ?",
        status,
        reason,
        now,
        id
    )
    .execute(&mut *conn)
    .await?;
    by_id(conn, id).await
}

/// One item by id.
///
/// # Errors
/// Any database error.
pub async fn by_id(conn: &mut SqliteConnection, id: i64) -> sqlx::Result<Option<Equipment>> {
    sqlx::query_as!(
        Equipment,
        r#"SELECT id AS "id!: i64", asset_id, kind, description, manufacturer, model, serial, firmware,
                  location, status, status_reason, tc_type, spec_unit, spec_offset, spec_relative,
                  spec_resolution, created_at, updated_at
           FROM equipment WHERE id = ?"#,
        id
    )
    .fetch_optional(conn)
    .await
}

/// One item by asset identifier.
///
/// # Errors
/// Any database error.
pub async fn by_asset_id(
    conn: &mut SqliteConnection,
    asset_id: &str,
) -> sqlx::Result<Option<Equipment>> {
    sqlx::query_as!(
        Equipment,
        r#"SELECT id AS "id!: i64", asset_id, kind, description, manufacturer, model, serial, firmware,
                  location, status, status_reason, tc_type, spec_unit, spec_offset, spec_relative,
                  spec_resolution, created_at, updated_at
           FROM equipment WHERE asset_id = ?"#,
        asset_id
    )
    .fetch_optional(conn)
    .await
}

/// All equipment by asset identifier.
///
/// # Errors
/// Any database error.
pub async fn all(conn: &mut SqliteConnection) -> sqlx::Result<Vec<Equipment>> {
    sqlx::query_as!(
        Equipment,
        r#"SELECT id AS "id!: i64", asset_id, kind, description, manufacturer, model, serial, firmware,
                  location, status, status_reason, tc_type, spec_unit, spec_offset, spec_relative,
                  spec_resolution, created_at, updated_at
           FROM equipment ORDER BY asset_id"#
    )
    .fetch_all(conn)
    .await
}

/// A calibration certificate of an equipment item.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Certificate {
    /// Row id.
    pub id: i64,
    /// The item.
    pub equipment_id: i64,
    /// Certificate number.
    pub number: String,
    /// Issuing laboratory.
    pub issuer: String,
    /// Calibration date (YYYY-MM-DD).
    pub calibrated_on: String,
    /// Due date (YYYY-MM-DD).
    pub due_on: String,
    /// Coefficients (tagged JSON).
    pub coefficients: String,
    /// Created (UTC).
    pub created_at: String,
}

/// Expanded uncertainty of a certificate over a temperature range.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CertificateUncertainty {
    /// Lower end, °C.
    pub t_lo_c: f64,
    /// Upper end, °C.
    pub t_hi_c: f64,
    /// Expanded uncertainty, °C.
    pub expanded_c: f64,
    /// Its coverage factor.
    pub k: f64,
}

/// Fields of a new certificate.
#[derive(Debug, Clone, PartialEq)]
pub struct CertificateFields {
    /// Certificate number.
    pub number: String,
    /// Issuing laboratory.
    pub issuer: String,
    /// Calibration date.
    pub calibrated_on: String,
    /// Due date.
    pub due_on: String,
    /// Coefficients (tagged JSON text).
    pub coefficients: String,
    /// Uncertainty by range.
    pub uncertainties: Vec<CertificateUncertainty>,
}

/// Adds a certificate with its uncertainty table; returns it.
///
/// # Errors
/// Any database error (duplicate number for the item, due before calibration).
pub async fn add_certificate(
    conn: &mut SqliteConnection,
    equipment_id: i64,
    f: &CertificateFields,
) -> sqlx::Result<Certificate> {
    let now = super::now_timestamp();
    let id = sqlx::query_scalar!(
        r#"INSERT INTO equipment_certificate (equipment_id, number, issuer, calibrated_on, due_on,
               coefficients, created_at)
           VALUES (?, ?, ?, ?, ?, ?, ?) RETURNING id AS "id!: i64""#,
        equipment_id,
        f.number,
        f.issuer,
        f.calibrated_on,
        f.due_on,
        f.coefficients,
        now
    )
    .fetch_one(&mut *conn)
    .await?;
    for u in &f.uncertainties {
        sqlx::query!(
            "INSERT INTO certificate_uncertainty (certificate_id, t_lo_c, t_hi_c, expanded_c, k)
             VALUES (?, ?, ?, ?, ?)",
            id,
            u.t_lo_c,
            u.t_hi_c,
            u.expanded_c,
            u.k
        )
        .execute(&mut *conn)
        .await?;
    }
    sqlx::query_as!(
        Certificate,
        r#"SELECT id AS "id!: i64", equipment_id, number, issuer, calibrated_on, due_on, coefficients, created_at
           FROM equipment_certificate WHERE id = ?"#,
        id
    )
    .fetch_one(conn)
    .await
}

/// An item's certificates, newest calibration first.
///
/// # Errors
/// Any database error.
pub async fn certificates(
    conn: &mut SqliteConnection,
    equipment_id: i64,
) -> sqlx::Result<Vec<Certificate>> {
    sqlx::query_as!(
        Certificate,
        r#"SELECT id AS "id!: i64", equipment_id, number, issuer, calibrated_on, due_on, coefficients, created_at
           FROM equipment_certificate WHERE equipment_id = ? ORDER BY calibrated_on DESC"#,
        equipment_id
    )
    .fetch_all(conn)
    .await
}

/// The certificate in force on `date`: the latest calibrated on or before it.
///
/// # Errors
/// Any database error.
pub async fn certificate_on(
    conn: &mut SqliteConnection,
    equipment_id: i64,
    date: &str,
) -> sqlx::Result<Option<Certificate>> {
    sqlx::query_as!(
        Certificate,
        r#"SELECT id AS "id!: i64", equipment_id, number, issuer, calibrated_on, due_on, coefficients, created_at
           FROM equipment_certificate WHERE equipment_id = ? AND calibrated_on <= ?
           ORDER BY calibrated_on DESC LIMIT 1"#,
        equipment_id,
        date
    )
    .fetch_optional(conn)
    .await
}

/// A certificate's uncertainty table.
///
/// # Errors
/// Any database error.
pub async fn certificate_uncertainties(
    conn: &mut SqliteConnection,
    certificate_id: i64,
) -> sqlx::Result<Vec<CertificateUncertainty>> {
    sqlx::query_as!(
        CertificateUncertainty,
        r#"SELECT t_lo_c AS "t_lo_c!: f64", t_hi_c AS "t_hi_c!: f64", expanded_c AS "expanded_c!: f64", k AS "k!: f64"
           FROM certificate_uncertainty WHERE certificate_id = ? ORDER BY t_lo_c"#,
        certificate_id
    )
    .fetch_all(conn)
    .await
}

/// A medium's characterisation over a temperature range.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Characterisation {
    /// When characterised (YYYY-MM-DD).
    pub characterised_on: String,
    /// Lower end, °C.
    pub t_lo_c: f64,
    /// Upper end, °C.
    pub t_hi_c: f64,
    /// Uniformity half-width, °C.
    pub uniformity_half_width_c: f64,
    /// Stability half-width, °C.
    pub stability_half_width_c: f64,
}

/// Adds a characterisation range of a medium.
///
/// # Errors
/// Any database error.
pub async fn add_characterisation(
    conn: &mut SqliteConnection,
    equipment_id: i64,
    c: &Characterisation,
) -> sqlx::Result<()> {
    sqlx::query!(
        "INSERT INTO medium_characterisation (equipment_id, characterised_on, t_lo_c, t_hi_c,
             uniformity_half_width_c, stability_half_width_c) VALUES (?, ?, ?, ?, ?, ?)",
        equipment_id,
        c.characterised_on,
        c.t_lo_c,
        c.t_hi_c,
        c.uniformity_half_width_c,
        c.stability_half_width_c
    )
    .execute(conn)
    .await?;
    Ok(())
}

/// A medium's characterisation ranges in force on `date` (from the latest
/// characterisation on or before it).
///
/// # Errors
/// Any database error.
pub async fn characterisation_on(
    conn: &mut SqliteConnection,
    equipment_id: i64,
    date: &str,
) -> sqlx::Result<Vec<Characterisation>> {
    sqlx::query_as!(
        Characterisation,
        r#"SELECT characterised_on, t_lo_c AS "t_lo_c!: f64", t_hi_c AS "t_hi_c!: f64",
                  uniformity_half_width_c AS "uniformity_half_width_c!: f64",
                  stability_half_width_c AS "stability_half_width_c!: f64"
           FROM medium_characterisation
           WHERE equipment_id = ? AND characterised_on = (
               SELECT MAX(characterised_on) FROM medium_characterisation
               WHERE equipment_id = ? AND characterised_on <= ?)
           ORDER BY t_lo_c"#,
        equipment_id,
        equipment_id,
        date
    )
    .fetch_all(conn)
    .await
}

/// One row of the lab's CMC table.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Cmc {
    /// Kind of unit under test.
    pub instrument_kind: String,
    /// Lower end, °C.
    pub t_lo_c: f64,
    /// Upper end, °C.
    pub t_hi_c: f64,
    /// Expanded uncertainty, °C.
    pub expanded_c: f64,
}

/// Adds a CMC row.
///
/// # Errors
/// Any database error.
pub async fn add_cmc(conn: &mut SqliteConnection, c: &Cmc) -> sqlx::Result<()> {
    sqlx::query!(
        "INSERT INTO cmc (instrument_kind, t_lo_c, t_hi_c, expanded_c) VALUES (?, ?, ?, ?)",
        c.instrument_kind,
        c.t_lo_c,
        c.t_hi_c,
        c.expanded_c
    )
    .execute(conn)
    .await?;
    Ok(())
}

/// The CMC table.
///
/// # Errors
/// Any database error.
pub async fn cmc_table(conn: &mut SqliteConnection) -> sqlx::Result<Vec<Cmc>> {
    sqlx::query_as!(
        Cmc,
        r#"SELECT instrument_kind, t_lo_c AS "t_lo_c!: f64", t_hi_c AS "t_hi_c!: f64", expanded_c AS "expanded_c!: f64"
           FROM cmc ORDER BY instrument_kind, t_lo_c"#
    )
    .fetch_all(conn)
    .await
}
