//! Issued certificates (append-only) and their numbering.

use serde::Serialize;
use sqlx::SqliteConnection;

/// A stored certificate.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Certificate {
    /// Row id.
    pub id: i64,
    /// Number.
    pub number: String,
    /// Revision.
    pub revision: i64,
    /// The run it reports.
    pub run_id: i64,
    /// The instrument.
    pub instrument_id: i64,
    /// Issue date.
    pub issued_on: String,
    /// Approver's user id.
    pub approved_by: i64,
    /// Canonical JSON snapshot.
    pub snapshot: String,
    /// SHA-256 of the snapshot.
    pub sha256: String,
    /// The row this one replaces.
    pub replaces_id: Option<i64>,
    /// Why it replaces it.
    pub amendment_reason: Option<String>,
    /// The row that replaced this one, if any.
    pub replaced_by_id: Option<i64>,
}

/// Takes the next sequence number of `year`.
///
/// # Errors
/// Any database error.
pub async fn next_sequence(conn: &mut SqliteConnection, year: i64) -> sqlx::Result<i64> {
    let next = sqlx::query_scalar!(
        r#"INSERT INTO certificate_sequence (year, last) VALUES (?, 1)
           ON CONFLICT (year) DO UPDATE SET last = last + 1
           RETURNING last AS "last!: i64""#,
        year
    )
    .fetch_one(conn)
    .await?;
    Ok(next)
}

/// Fields of a new certificate row.
#[derive(Debug, Clone)]
pub struct NewCertificate<'a> {
    /// Number.
    pub number: &'a str,
    /// Revision.
    pub revision: i64,
    /// Run.
    pub run_id: i64,
    /// Instrument.
    pub instrument_id: i64,
    /// Issue date.
    pub issued_on: &'a str,
    /// Approver.
    pub approved_by: i64,
    /// Snapshot JSON.
    pub snapshot: &'a str,
    /// Its SHA-256.
    pub sha256: &'a str,
    /// Replaced row.
    pub replaces_id: Option<i64>,
    /// Amendment reason.
    pub amendment_reason: Option<&'a str>,
    /// Least favourable conformity outcome (see `certificate_facts`).
    pub outcome: &'a str,
}

/// Inserts a certificate; returns its id.
///
/// # Errors
/// Any database error.
pub async fn insert(conn: &mut SqliteConnection, c: &NewCertificate<'_>) -> sqlx::Result<i64> {
    let now = super::now_timestamp();
    let id = sqlx::query_scalar!(
        r#"INSERT INTO certificate (number, revision, run_id, instrument_id, issued_on, approved_by,
               snapshot, sha256, replaces_id, amendment_reason, created_at)
           VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?) RETURNING id AS "id!: i64""#,
        c.number,
        c.revision,
        c.run_id,
        c.instrument_id,
        c.issued_on,
        c.approved_by,
        c.snapshot,
        c.sha256,
        c.replaces_id,
        c.amendment_reason,
        now
    )
    .fetch_one(&mut *conn)
    .await?;
    sqlx::query!(
        "INSERT INTO certificate_facts (certificate_id, outcome) VALUES (?, ?)",
        id,
        c.outcome
    )
    .execute(conn)
    .await?;
    Ok(id)
}

/// Records that `old_id` was replaced by `new_id`.
///
/// # Errors
/// Any database error (a row can be replaced only once).
pub async fn mark_replaced(
    conn: &mut SqliteConnection,
    old_id: i64,
    new_id: i64,
) -> sqlx::Result<()> {
    let now = super::now_timestamp();
    sqlx::query!(
        "INSERT INTO certificate_replacement (certificate_id, replaced_by_id, replaced_at) VALUES (?, ?, ?)",
        old_id,
        new_id,
        now
    )
    .execute(conn)
    .await?;
    Ok(())
}

/// A certificate by number and revision (latest revision when `None`).
///
/// # Errors
/// Any database error.
pub async fn by_number(
    conn: &mut SqliteConnection,
    number: &str,
    revision: Option<i64>,
) -> sqlx::Result<Option<Certificate>> {
    let revision = revision.unwrap_or(-1);
    sqlx::query_as!(
        Certificate,
        r#"SELECT c.id AS "id!: i64", c.number, c.revision, c.run_id, c.instrument_id, c.issued_on,
                  c.approved_by, c.snapshot, c.sha256, c.replaces_id, c.amendment_reason,
                  r.replaced_by_id AS "replaced_by_id?: i64"
           FROM certificate c LEFT JOIN certificate_replacement r ON r.certificate_id = c.id
           WHERE c.number = ?1 AND (c.revision = ?2 OR (?2 = -1 AND c.revision =
                 (SELECT MAX(revision) FROM certificate WHERE number = ?1)))"#,
        number,
        revision
    )
    .fetch_optional(conn)
    .await
}

/// The current certificate of an instrument: the latest issued that has
/// not been replaced.
///
/// # Errors
/// Any database error.
pub async fn current_for_instrument(
    conn: &mut SqliteConnection,
    instrument_id: i64,
) -> sqlx::Result<Option<Certificate>> {
    sqlx::query_as!(
        Certificate,
        r#"SELECT c.id AS "id!: i64", c.number, c.revision, c.run_id, c.instrument_id, c.issued_on,
                  c.approved_by, c.snapshot, c.sha256, c.replaces_id, c.amendment_reason,
                  r.replaced_by_id AS "replaced_by_id?: i64"
           FROM certificate c LEFT JOIN certificate_replacement r ON r.certificate_id = c.id
           WHERE c.instrument_id = ? AND r.replaced_by_id IS NULL
           ORDER BY c.issued_on DESC, c.id DESC LIMIT 1"#,
        instrument_id
    )
    .fetch_optional(conn)
    .await
}

/// Certificates, newest first (for the register), at most `limit`.
///
/// # Errors
/// Any database error.
pub async fn latest(conn: &mut SqliteConnection, limit: i64) -> sqlx::Result<Vec<Certificate>> {
    sqlx::query_as!(
        Certificate,
        r#"SELECT c.id AS "id!: i64", c.number, c.revision, c.run_id, c.instrument_id, c.issued_on,
                  c.approved_by, c.snapshot, c.sha256, c.replaces_id, c.amendment_reason,
                  r.replaced_by_id AS "replaced_by_id?: i64"
           FROM certificate c LEFT JOIN certificate_replacement r ON r.certificate_id = c.id
           ORDER BY c.id DESC LIMIT ?"#,
        limit
    )
    .fetch_all(conn)
    .await
}

/// The latest certificate issued for a run.
///
/// # Errors
/// Any database error.
pub async fn latest_for_run(
    conn: &mut SqliteConnection,
    run_id: i64,
) -> sqlx::Result<Option<(String, i64)>> {
    let row = sqlx::query!(
        r#"SELECT number, revision AS "revision!: i64" FROM certificate WHERE run_id = ? ORDER BY revision DESC LIMIT 1"#,
        run_id
    )
    .fetch_optional(conn)
    .await?;
    Ok(row.map(|r| (r.number, r.revision)))
}

/// A certificate row by number, revision and fingerprint, with whether it
/// was replaced (by which revision).
///
/// # Errors
/// Any database error.
pub async fn verify(
    conn: &mut SqliteConnection,
    number: &str,
    sha256: &str,
) -> sqlx::Result<Option<(i64, Option<i64>)>> {
    let row = sqlx::query!(
        r#"SELECT c.revision AS "revision!: i64", n.revision AS "replaced_by_revision?: i64"
           FROM certificate c
           LEFT JOIN certificate_replacement r ON r.certificate_id = c.id
           LEFT JOIN certificate n ON n.id = r.replaced_by_id
           WHERE c.number = ? AND c.sha256 = ?"#,
        number,
        sha256
    )
    .fetch_optional(conn)
    .await?;
    Ok(row.map(|r| (r.revision, r.replaced_by_revision)))
}

/// A line of the certificate register.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RegisterLine {
    /// Row id (the pagination key).
    pub id: i64,
    /// Number.
    pub number: String,
    /// Revision.
    pub revision: i64,
    /// Issue date.
    pub issued_on: String,
    /// Calibration date (the run's date).
    pub calibrated_on: String,
    /// Instrument serial.
    pub serial: String,
    /// Instrument kind.
    pub kind: String,
    /// Customer.
    pub customer: String,
    /// Least favourable conformity outcome.
    pub outcome: String,
    /// Asset id of the reference standard.
    pub reference: String,
    /// Whether a later revision replaced it.
    pub replaced: bool,
}

/// Filters of the register; empty strings and 0 mean "any".
#[derive(Debug, Clone, Default)]
pub struct RegisterFilter {
    /// Text found in the number, the serial or the customer's name.
    pub text: String,
    /// First issue date (YYYY-MM-DD), inclusive.
    pub from: String,
    /// Last issue date, inclusive.
    pub to: String,
    /// Instrument kind.
    pub kind: String,
    /// Outcome as stored in `certificate_facts`.
    pub outcome: String,
    /// Equipment used in any role (reference, readout, medium); 0 = any.
    pub equipment_id: i64,
}

/// Certificates newest first, filtered; keyset pagination (`before_id`)
/// so that deep pages stay as fast as the first. The dates are written so
/// that without them SQLite walks certificates newest first (a plain
/// `BETWEEN` made it read the whole issue-date index and sort); searches
/// that narrow by a filter go through `store::register`.
///
/// # Errors
/// Any database error.
pub async fn register(
    conn: &mut SqliteConnection,
    f: &RegisterFilter,
    before_id: i64,
    limit: i64,
) -> sqlx::Result<Vec<RegisterLine>> {
    let pattern = if f.text.is_empty() {
        String::new()
    } else {
        format!("%{}%", f.text.replace('%', "\\%").replace('_', "\\_"))
    };
    let from = if f.from.is_empty() {
        "0000-01-01"
    } else {
        &f.from
    };
    let to = if f.to.is_empty() { "9999-12-31" } else { &f.to };
    sqlx::query_as!(
        RegisterLine,
        r#"SELECT c.id AS "id!: i64", c.number, c.revision, c.issued_on, ru.performed_on AS calibrated_on,
                  i.serial, i.kind, cu.name AS customer, f.outcome, e.asset_id AS reference,
                  (r.certificate_id IS NOT NULL) AS "replaced!: bool"
           FROM certificate c
           JOIN certificate_facts f ON f.certificate_id = c.id
           JOIN run ru ON ru.id = c.run_id
           JOIN equipment e ON e.id = ru.reference_id
           JOIN instrument i ON i.id = c.instrument_id
           JOIN customer cu ON cu.id = i.customer_id
           LEFT JOIN certificate_replacement r ON r.certificate_id = c.id
           WHERE c.id < ?1
             AND (?2 = '' OR c.number LIKE ?2 ESCAPE '\' OR i.serial LIKE ?2 ESCAPE '\' OR cu.name LIKE ?2 ESCAPE '\')
             AND (?3 = '0000-01-01' OR c.issued_on >= ?3) AND (?4 = '9999-12-31' OR c.issued_on <= ?4)
             AND (?5 = '' OR i.kind = ?5)
             AND (?6 = '' OR f.outcome = ?6)
             AND (?7 = 0 OR ru.reference_id = ?7 OR ru.reference_readout_id = ?7
                  OR ru.uut_readout_id = ?7 OR ru.medium_id = ?7)
           ORDER BY c.id DESC LIMIT ?8"#,
        before_id,
        pattern,
        from,
        to,
        f.kind,
        f.outcome,
        f.equipment_id,
        limit
    )
    .fetch_all(conn)
    .await
}

/// A certificate whose run used a given equipment item.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ImpactLine {
    /// Number.
    pub number: String,
    /// Revision.
    pub revision: i64,
    /// Issue date.
    pub issued_on: String,
    /// Calibration date (the day the item was used).
    pub calibrated_on: String,
    /// Instrument serial.
    pub serial: String,
    /// Instrument kind.
    pub kind: String,
    /// Customer.
    pub customer: String,
    /// Customer's contact e-mail (to notify).
    pub customer_email: String,
    /// The roles the item played: "reference", "reference readout", "unit readout", "medium".
    pub roles: String,
    /// Least favourable conformity outcome.
    pub outcome: String,
    /// Whether a later revision replaced it.
    pub replaced: bool,
}

/// Every certificate (all revisions) whose run used `equipment_id` in any
/// role with a calibration date in [from, to], oldest first.
///
/// # Errors
/// Any database error.
pub async fn impact(
    conn: &mut SqliteConnection,
    equipment_id: i64,
    from: &str,
    to: &str,
) -> sqlx::Result<Vec<ImpactLine>> {
    sqlx::query_as!(
        ImpactLine,
        r#"SELECT c.number, c.revision, c.issued_on, ru.performed_on AS calibrated_on,
                  i.serial, i.kind, cu.name AS customer, cu.contact_email AS customer_email,
                  trim(CASE WHEN ru.reference_id = ?1 THEN 'reference ' ELSE '' END
                    || CASE WHEN ru.reference_readout_id = ?1 THEN 'reference-readout ' ELSE '' END
                    || CASE WHEN ru.uut_readout_id = ?1 THEN 'unit-readout ' ELSE '' END
                    || CASE WHEN ru.medium_id = ?1 THEN 'medium' ELSE '' END) AS "roles!: String",
                  f.outcome, (r.certificate_id IS NOT NULL) AS "replaced!: bool"
           FROM run ru
           JOIN certificate c ON c.run_id = ru.id
           JOIN certificate_facts f ON f.certificate_id = c.id
           JOIN instrument i ON i.id = c.instrument_id
           JOIN customer cu ON cu.id = i.customer_id
           LEFT JOIN certificate_replacement r ON r.certificate_id = c.id
           WHERE (ru.reference_id = ?1 OR ru.reference_readout_id = ?1 OR ru.uut_readout_id = ?1 OR ru.medium_id = ?1)
             AND ru.performed_on BETWEEN ?2 AND ?3
           ORDER BY ru.performed_on, c.number, c.revision"#,
        equipment_id,
        from,
        to
    )
    .fetch_all(conn)
    .await
}

/// Every certificate of an instrument (all revisions) with its
/// calibration date and outcome, oldest calibration first.
///
/// # Errors
/// Any database error.
pub async fn history(
    conn: &mut SqliteConnection,
    instrument_id: i64,
) -> sqlx::Result<Vec<(Certificate, String, String)>> {
    let rows = sqlx::query!(
        r#"SELECT c.id AS "id!: i64", c.number, c.revision, c.run_id, c.instrument_id, c.issued_on,
                  c.approved_by, c.snapshot, c.sha256, c.replaces_id, c.amendment_reason,
                  r.replaced_by_id AS "replaced_by_id?: i64", ru.performed_on, f.outcome
           FROM certificate c
           JOIN run ru ON ru.id = c.run_id
           JOIN certificate_facts f ON f.certificate_id = c.id
           LEFT JOIN certificate_replacement r ON r.certificate_id = c.id
           WHERE c.instrument_id = ?
           ORDER BY ru.performed_on, c.issued_on, c.id"#,
        instrument_id
    )
    .fetch_all(conn)
    .await?;
    Ok(rows
        .into_iter()
        .map(|r| {
            (
                Certificate {
                    id: r.id,
                    number: r.number,
                    revision: r.revision,
                    run_id: r.run_id,
                    instrument_id: r.instrument_id,
                    issued_on: r.issued_on,
                    approved_by: r.approved_by,
                    snapshot: r.snapshot,
                    sha256: r.sha256,
                    replaces_id: r.replaces_id,
                    amendment_reason: r.amendment_reason,
                    replaced_by_id: r.replaced_by_id,
                },
                r.performed_on,
                r.outcome,
            )
        })
        .collect())
}
