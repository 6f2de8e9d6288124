//! The demonstration laboratory: an invented lab with invented customers,
//! instruments and serial numbers, for trying Juncture out. Nothing here
//! describes a real organisation.

use sqlx::SqlitePool;

use crate::store::{self, lab::LabSettings};

/// Why the demo could not be loaded.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum DemoError {
    /// The database already holds a laboratory; the demo never overwrites.
    #[error(
        "the database already holds the laboratory \"{0}\"; the demo loads only into an empty database (choose another file with --database)"
    )]
    NotEmpty(String),
    /// A database error.
    #[error(transparent)]
    Db(#[from] sqlx::Error),
}

/// Actor recorded in the audit trail for demo records.
pub const DEMO_ACTOR: &str = "demo loader";

/// Name of the invented demonstration laboratory.
pub const DEMO_LAB_NAME: &str = "Larchmere Thermal Metrology (demonstration)";

/// The demonstration laboratory's identity and settings.
#[must_use]
pub fn demo_lab() -> LabSettings {
    LabSettings {
        name: DEMO_LAB_NAME.to_owned(),
        address: "Unit 7, Foundry Lane\nLarchmere LM4 2QT".to_owned(),
        accreditation: "Demonstration accreditation no. 0000 (invented; not a real accreditation)"
            .to_owned(),
        contact_email: "lab@larchmere.invalid".to_owned(),
        contact_phone: "+00 0000 000000".to_owned(),
        certificate_number_pattern: "LTM-{year}-{seq:4}".to_owned(),
        coverage_probability: 0.9545,
        due_warning_days: 30,
        characterisation_interval_days: 365,
        updated_at: String::new(),
    }
}

/// Loads the demonstration laboratory into an empty, migrated database, in
/// one transaction: either all of it is stored or nothing is.
///
/// # Errors
/// [`DemoError::NotEmpty`] when a laboratory is already set up; any
/// database error.
pub async fn load(pool: &SqlitePool) -> Result<(), DemoError> {
    let mut tx = store::begin_write(pool).await?;
    if let Some(existing) = store::lab::get(&mut tx).await? {
        return Err(DemoError::NotEmpty(existing.name));
    }
    let lab = demo_lab();
    store::lab::put(&mut tx, &lab).await?;
    let after = serde_json::to_value(&lab).unwrap_or_default();
    store::audit::append(
        &mut tx,
        &store::audit::NewEvent {
            actor: DEMO_ACTOR,
            action: "create",
            entity: "lab_settings",
            entity_id: "1",
            before: None,
            after: Some(&after),
        },
    )
    .await?;
    tx.commit().await?;
    Ok(())
}
