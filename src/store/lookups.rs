//! Light look-ups for the hot read paths: which certificate answers a
//! request, without reading its snapshot. The callers keep what they render
//! from a snapshot in memory by its SHA-256 (`web::cache`) and read the
//! snapshot itself only when it is not cached yet.

use sqlx::SqliteConnection;

/// A certificate without its snapshot.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct CertificateHeader {
    /// Row id.
    pub id: i64,
    /// Number.
    pub number: String,
    /// Revision.
    pub revision: i64,
    /// Issue date.
    pub issued_on: String,
    /// SHA-256 of the snapshot.
    pub sha256: String,
    /// Letter type of the instrument, for thermocouples (current-certificate
    /// look-ups only).
    pub tc_type: Option<String>,
    /// The row that replaced this one, if any.
    pub replaced_by_id: Option<i64>,
}

/// The current certificate of the instrument with `serial` (the latest
/// issued that has not been replaced), or `None` when the serial is unknown
/// or has no current certificate.
///
/// # Errors
/// Any database error.
pub async fn current_by_serial(
    conn: &mut SqliteConnection,
    serial: &str,
) -> sqlx::Result<Option<CertificateHeader>> {
    sqlx::query_as!(
        CertificateHeader,
        r#"SELECT c.id AS "id!: i64", c.number, c.revision, c.issued_on, c.sha256, i.tc_type,
                  r.replaced_by_id AS "replaced_by_id?: i64"
           FROM instrument i
           JOIN certificate c ON c.instrument_id = i.id
           LEFT JOIN certificate_replacement r ON r.certificate_id = c.id
           WHERE i.serial = ? AND r.replaced_by_id IS NULL
           ORDER BY c.issued_on DESC, c.id DESC LIMIT 1"#,
        serial
    )
    .fetch_optional(conn)
    .await
}

/// A certificate by number and revision (the latest revision when `None`),
/// without its snapshot.
///
/// # Errors
/// Any database error.
pub async fn by_number(
    conn: &mut SqliteConnection,
    number: &str,
    revision: Option<i64>,
) -> sqlx::Result<Option<CertificateHeader>> {
    let revision = revision.unwrap_or(-1);
    sqlx::query_as!(
        CertificateHeader,
        r#"SELECT c.id AS "id!: i64", c.number, c.revision, c.issued_on, c.sha256,
                  NULL AS "tc_type?: String", r.replaced_by_id AS "replaced_by_id?: i64"
           FROM certificate c LEFT JOIN certificate_replacement r ON r.certificate_id = c.id
           WHERE c.number = ?1 AND (c.revision = ?2 OR (?2 = -1 AND c.revision =
                 (SELECT MAX(revision) FROM certificate WHERE number = ?1)))"#,
        number,
        revision
    )
    .fetch_optional(conn)
    .await
}

/// The snapshot (canonical JSON) of certificate row `id`.
///
/// # Errors
/// Any database error.
pub async fn snapshot(conn: &mut SqliteConnection, id: i64) -> sqlx::Result<Option<String>> {
    sqlx::query_scalar!("SELECT snapshot FROM certificate WHERE id = ?", id)
        .fetch_optional(conn)
        .await
}
