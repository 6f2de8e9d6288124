//! Bulk loading of invented records for `juncture generate` (scale
//! measurements): runs as already approved, set points with their readings,
//! and issued certificates with their register facts, written in large
//! transactions by the caller.
//!
//! Ordinary operations never use these functions: they skip the per-change
//! audit events (the generator writes one event for the whole load) and the
//! review workflow.

use sqlx::SqliteConnection;

use super::runs::{Reading, RunFields};

/// Inserts a run that is already approved (status `approved`, submitted at
/// `submitted_at`); returns its id.
///
/// # Errors
/// Any database error.
pub async fn insert_approved_run(
    conn: &mut SqliteConnection,
    f: &RunFields,
    technician_id: i64,
    submitted_at: &str,
) -> sqlx::Result<i64> {
    sqlx::query_scalar!(
        r#"INSERT INTO run (instrument_id, reference_id, reference_readout_id, uut_readout_id, medium_id,
               performed_on, procedure_ref, location, ambient_t_c, ambient_rh_percent, rj_method,
               immersion_mm, condition, decision_rule, guard_band_factor, tolerance_class,
               tolerance_limit_c, fit_degree, extra_budget, technician_id, status, version,
               created_at, updated_at, submitted_at)
           VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10, ?11, ?12, ?13, ?14, ?15, ?16, ?17, ?18,
                   ?19, ?20, 'approved', 3, ?21, ?21, ?21)
           RETURNING id AS "id!: i64""#,
        f.instrument_id,
        f.reference_id,
        f.reference_readout_id,
        f.uut_readout_id,
        f.medium_id,
        f.performed_on,
        f.procedure_ref,
        f.location,
        f.ambient_t_c,
        f.ambient_rh_percent,
        f.rj_method,
        f.immersion_mm,
        f.condition,
        f.decision_rule,
        f.guard_band_factor,
        f.tolerance_class,
        f.tolerance_limit_c,
        f.fit_degree,
        f.extra_budget,
        technician_id,
        submitted_at
    )
    .fetch_one(conn)
    .await
}

/// Inserts a set point with all its readings (positions from 1) in two
/// statements; returns the set point's id.
///
/// # Errors
/// Any database error.
pub async fn insert_set_point_with_readings(
    conn: &mut SqliteConnection,
    run_id: i64,
    nominal_t_c: f64,
    created_at: &str,
    readings: &[Reading],
) -> sqlx::Result<i64> {
    let id = sqlx::query_scalar!(
        r#"INSERT INTO set_point (run_id, nominal_t_c, created_at) VALUES (?, ?, ?) RETURNING id AS "id!: i64""#,
        run_id,
        nominal_t_c,
        created_at
    )
    .fetch_one(&mut *conn)
    .await?;
    // One statement for all readings: the rows travel as a JSON array of
    // [taken_at, reference_signal, uut_signal, rj_t_c] (SQLite's json_each;
    // this bulk loader is the only user).
    let rows: Vec<(Option<&str>, f64, f64, Option<f64>)> = readings
        .iter()
        .map(|r| {
            (
                r.taken_at.as_deref(),
                r.reference_signal,
                r.uut_signal,
                r.rj_t_c,
            )
        })
        .collect();
    let json = serde_json::to_string(&rows).map_err(|e| sqlx::Error::Encode(Box::new(e)))?;
    sqlx::query!(
        r#"INSERT INTO reading (set_point_id, position, taken_at, reference_signal, uut_signal, rj_t_c)
           SELECT ?1, j.key + 1, j.value ->> 0, j.value ->> 1, j.value ->> 2, j.value ->> 3
           FROM json_each(?2) AS j"#,
        id,
        json
    )
    .execute(conn)
    .await?;
    Ok(id)
}

/// Raises a year's last certificate sequence number to at least `last`, so
/// that certificates issued later continue after the loaded ones.
///
/// # Errors
/// Any database error.
pub async fn raise_sequence(conn: &mut SqliteConnection, year: i64, last: i64) -> sqlx::Result<()> {
    sqlx::query!(
        r#"INSERT INTO certificate_sequence (year, last) VALUES (?1, ?2)
           ON CONFLICT (year) DO UPDATE SET last = MAX(last, excluded.last)"#,
        year,
        last
    )
    .execute(conn)
    .await?;
    Ok(())
}

/// Counts of the tables a load fills: (customers, instruments, runs,
/// certificates, certificate facts).
///
/// # Errors
/// Any database error.
pub async fn counts(conn: &mut SqliteConnection) -> sqlx::Result<[i64; 5]> {
    let r = sqlx::query!(
        r#"SELECT (SELECT COUNT(*) FROM customer) AS "customers!: i64",
                  (SELECT COUNT(*) FROM instrument) AS "instruments!: i64",
                  (SELECT COUNT(*) FROM run) AS "runs!: i64",
                  (SELECT COUNT(*) FROM certificate) AS "certificates!: i64",
                  (SELECT COUNT(*) FROM certificate_facts) AS "facts!: i64""#
    )
    .fetch_one(conn)
    .await?;
    Ok([r.customers, r.instruments, r.runs, r.certificates, r.facts])
}
