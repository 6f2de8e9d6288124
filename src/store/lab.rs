//! The laboratory's identity and settings (table `lab_settings`, one row).

use sqlx::SqliteConnection;

/// The laboratory as printed on certificates, with its job defaults.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct LabSettings {
    /// Legal name of the laboratory.
    pub name: String,
    /// Postal address (may span several lines).
    pub address: String,
    /// Accreditation body and number, empty when not accredited.
    pub accreditation: String,
    /// Contact e-mail address.
    pub contact_email: String,
    /// Contact telephone number.
    pub contact_phone: String,
    /// Pattern for certificate numbers (`{year}`, `{seq:N}`).
    pub certificate_number_pattern: String,
    /// Default coverage probability for expanded uncertainties.
    pub coverage_probability: f64,
    /// Days before a due date at which equipment is listed as due soon.
    pub due_warning_days: i64,
    /// Maximum age of a medium characterisation, in days.
    pub characterisation_interval_days: i64,
    /// When the settings last changed (ISO 8601, UTC).
    pub updated_at: String,
}

/// Reads the laboratory settings; `None` while no laboratory is set up.
///
/// # Errors
/// Any database error.
pub async fn get(conn: &mut SqliteConnection) -> sqlx::Result<Option<LabSettings>> {
    sqlx::query_as!(
        LabSettings,
        r#"SELECT name, address, accreditation, contact_email, contact_phone,
                  certificate_number_pattern,
                  coverage_probability AS "coverage_probability: f64",
                  due_warning_days, characterisation_interval_days, updated_at
           FROM lab_settings WHERE id = 1"#
    )
    .fetch_optional(conn)
    .await
}

/// Creates or replaces the laboratory settings. `updated_at` is set here.
///
/// # Errors
/// Any database error, including a CHECK constraint (empty name,
/// coverage probability outside (0, 1), negative day counts).
pub async fn put(conn: &mut SqliteConnection, lab: &LabSettings) -> sqlx::Result<()> {
    let now = super::now_timestamp();
    sqlx::query!(
        r#"INSERT INTO lab_settings (id, name, address, accreditation, contact_email,
               contact_phone, certificate_number_pattern, coverage_probability,
               due_warning_days, characterisation_interval_days, updated_at)
           VALUES (1, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)
           ON CONFLICT (id) DO UPDATE SET
               name = excluded.name,
               address = excluded.address,
               accreditation = excluded.accreditation,
               contact_email = excluded.contact_email,
               contact_phone = excluded.contact_phone,
               certificate_number_pattern = excluded.certificate_number_pattern,
               coverage_probability = excluded.coverage_probability,
               due_warning_days = excluded.due_warning_days,
               characterisation_interval_days = excluded.characterisation_interval_days,
               updated_at = excluded.updated_at"#,
        lab.name,
        lab.address,
        lab.accreditation,
        lab.contact_email,
        lab.contact_phone,
        lab.certificate_number_pattern,
        lab.coverage_probability,
        lab.due_warning_days,
        lab.characterisation_interval_days,
        now,
    )
    .execute(conn)
    .await?;
    Ok(())
}
