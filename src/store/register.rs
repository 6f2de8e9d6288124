//! The certificate register's search, shaped so that SQLite reads an index
//! in certificate order for the filter that narrows most, instead of
//! scanning every certificate for a rare match.
//!
//! One statement with every filter optional (`?x = '' OR ...`) leaves the
//! planner nothing to choose: it walks all certificates newest first and
//! tests each, which is fast when matches are common and a full scan when
//! they are rare (an item used once, the few failed certificates, a serial
//! number). So the search picks the statement by the filters given:
//!
//! * equipment: the `certificate_equipment` index (equipment, certificate);
//! * an outcome other than "pass" (the usual one; the others are the few a
//!   lab looks for): the `certificate_facts_outcome` index (outcome,
//!   certificate);
//! * text: the certificates whose number matches (a scan of the number
//!   index only) and those of the instruments whose serial or customer
//!   matches (found in the small instrument and customer tables, then
//!   through the certificate-by-instrument index);
//! * dates: the `certificate_issued` index (issue date, id), then sorted;
//! * otherwise: certificates newest first, every filter tested per row.
//!
//! Each statement still applies every other filter, so the answers are
//! the same whichever statement runs (tests compare them).

use sqlx::SqliteConnection;

use super::certificates::{RegisterFilter, RegisterLine};

/// Which statement a search runs (exposed for tests and benchmarks).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Driver {
    /// Certificates newest first, filters tested per row.
    Scan,
    /// The equipment index.
    Equipment,
    /// The outcome index.
    Outcome,
    /// Text matches first.
    Text,
    /// The issue-date index.
    Dates,
}

impl Driver {
    /// The statement for `f`.
    #[must_use]
    pub fn for_filter(f: &RegisterFilter) -> Self {
        if f.equipment_id != 0 {
            Self::Equipment
        } else if !f.outcome.is_empty() && f.outcome != "pass" {
            Self::Outcome
        } else if !f.text.is_empty() {
            Self::Text
        } else if !f.from.is_empty() || !f.to.is_empty() {
            Self::Dates
        } else {
            Self::Scan
        }
    }
}

/// Certificates newest first, filtered, at most `limit` with ids below
/// `before_id` (keyset pagination).
///
/// # Errors
/// Any database error.
pub async fn search(
    conn: &mut SqliteConnection,
    f: &RegisterFilter,
    before_id: i64,
    limit: i64,
) -> sqlx::Result<Vec<RegisterLine>> {
    search_with(conn, f, before_id, limit, Driver::for_filter(f)).await
}

/// [`search`] with the statement chosen by the caller (tests check that
/// every statement gives the same answer).
///
/// # Errors
/// Any database error.
pub async fn search_with(
    conn: &mut SqliteConnection,
    f: &RegisterFilter,
    before_id: i64,
    limit: i64,
    driver: Driver,
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
    match driver {
        Driver::Scan => {
            super::certificates::register(conn, f, before_id, limit).await
        }
        Driver::Equipment => {
            sqlx::query_as!(
                RegisterLine,
                r#"SELECT c.id AS "id!: i64", c.number, c.revision, c.issued_on, ru.performed_on AS calibrated_on,
                          i.serial, i.kind, cu.name AS customer, f.outcome, e.asset_id AS reference,
                          (r.certificate_id IS NOT NULL) AS "replaced!: bool"
                   FROM certificate_equipment ce
                   CROSS JOIN certificate c ON c.id = ce.certificate_id
                   JOIN certificate_facts f ON f.certificate_id = c.id
                   JOIN run ru ON ru.id = c.run_id
                   JOIN equipment e ON e.id = ru.reference_id
                   JOIN instrument i ON i.id = c.instrument_id
                   JOIN customer cu ON cu.id = i.customer_id
                   LEFT JOIN certificate_replacement r ON r.certificate_id = c.id
                   WHERE ce.equipment_id = ?7 AND ce.certificate_id < ?1
                     AND (?2 = '' OR c.number LIKE ?2 ESCAPE '\' OR i.serial LIKE ?2 ESCAPE '\' OR cu.name LIKE ?2 ESCAPE '\')
                     AND c.issued_on BETWEEN ?3 AND ?4
                     AND (?5 = '' OR i.kind = ?5)
                     AND (?6 = '' OR f.outcome = ?6)
                   ORDER BY ce.certificate_id DESC LIMIT ?8"#,
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
        Driver::Outcome => {
            sqlx::query_as!(
                RegisterLine,
                r#"SELECT c.id AS "id!: i64", c.number, c.revision, c.issued_on, ru.performed_on AS calibrated_on,
                          i.serial, i.kind, cu.name AS customer, f.outcome, e.asset_id AS reference,
                          (r.certificate_id IS NOT NULL) AS "replaced!: bool"
                   FROM certificate_facts f
                   CROSS JOIN certificate c ON c.id = f.certificate_id
                   JOIN run ru ON ru.id = c.run_id
                   JOIN equipment e ON e.id = ru.reference_id
                   JOIN instrument i ON i.id = c.instrument_id
                   JOIN customer cu ON cu.id = i.customer_id
                   LEFT JOIN certificate_replacement r ON r.certificate_id = c.id
                   WHERE f.outcome = ?6 AND f.certificate_id < ?1
                     AND (?2 = '' OR c.number LIKE ?2 ESCAPE '\' OR i.serial LIKE ?2 ESCAPE '\' OR cu.name LIKE ?2 ESCAPE '\')
                     AND c.issued_on BETWEEN ?3 AND ?4
                     AND (?5 = '' OR i.kind = ?5)
                     AND (?7 = 0 OR ru.reference_id = ?7 OR ru.reference_readout_id = ?7
                          OR ru.uut_readout_id = ?7 OR ru.medium_id = ?7)
                   ORDER BY f.certificate_id DESC LIMIT ?8"#,
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
        Driver::Dates => {
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
                   WHERE c.issued_on BETWEEN ?3 AND ?4 AND c.id < ?1
                     AND (?2 = '' OR c.number LIKE ?2 ESCAPE '\' OR i.serial LIKE ?2 ESCAPE '\' OR cu.name LIKE ?2 ESCAPE '\')
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
        Driver::Text => {
            sqlx::query_as!(
                RegisterLine,
                r#"WITH hit (id) AS (
                       SELECT c.id FROM certificate c
                       WHERE c.number LIKE ?2 ESCAPE '\'
                       UNION
                       SELECT c.id FROM instrument i
                       CROSS JOIN customer cu ON cu.id = i.customer_id
                       CROSS JOIN certificate c ON c.instrument_id = i.id
                       WHERE i.serial LIKE ?2 ESCAPE '\' OR cu.name LIKE ?2 ESCAPE '\'
                   )
                   SELECT c.id AS "id!: i64", c.number, c.revision, c.issued_on, ru.performed_on AS calibrated_on,
                          i.serial, i.kind, cu.name AS customer, f.outcome, e.asset_id AS reference,
                          (r.certificate_id IS NOT NULL) AS "replaced!: bool"
                   FROM hit h
                   CROSS JOIN certificate c ON c.id = h.id
                   JOIN certificate_facts f ON f.certificate_id = c.id
                   JOIN run ru ON ru.id = c.run_id
                   JOIN equipment e ON e.id = ru.reference_id
                   JOIN instrument i ON i.id = c.instrument_id
                   JOIN customer cu ON cu.id = i.customer_id
                   LEFT JOIN certificate_replacement r ON r.certificate_id = c.id
                   WHERE c.id < ?1 AND c.issued_on BETWEEN ?3 AND ?4
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
    }
}
