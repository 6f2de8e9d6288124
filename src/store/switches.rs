//! Temperature-switch tests (`switch_test`, `switch_ramp`) and
//! characterisation runs of comparison media (`medium_characterisation_run`,
//! `medium_point`).

use serde::Serialize;
use sqlx::SqliteConnection;

/// The settings of a switch test.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SwitchSettings {
    /// The run.
    pub run_id: i64,
    /// Nominal switch point, °C.
    pub nominal_t_c: f64,
    /// "rising" or "falling": the direction that actuates the switch.
    pub actuation_direction: String,
    /// "opens" or "closes": what the contact does then.
    pub contact_action: String,
    /// Ramp rate through the switching region, °C/min.
    pub ramp_rate_c_per_min: Option<f64>,
    /// Time constant of the switch relative to the reference, s.
    pub time_constant_s: Option<f64>,
    /// Or a lab-entered thermal-lag half-width, °C.
    pub lag_half_width_c: Option<f64>,
    /// Resolution with which a directly observed change is read, °C.
    pub observed_resolution_c: f64,
}

/// Stores (or replaces) a run's switch settings.
///
/// # Errors
/// Any database error (the table's checks refuse inconsistent settings).
pub async fn put_settings(conn: &mut SqliteConnection, s: &SwitchSettings) -> sqlx::Result<()> {
    sqlx::query!(
        r#"INSERT INTO switch_test (run_id, nominal_t_c, actuation_direction, contact_action,
               ramp_rate_c_per_min, time_constant_s, lag_half_width_c, observed_resolution_c)
           VALUES (?, ?, ?, ?, ?, ?, ?, ?)
           ON CONFLICT (run_id) DO UPDATE SET
               nominal_t_c = excluded.nominal_t_c,
               actuation_direction = excluded.actuation_direction,
               contact_action = excluded.contact_action,
               ramp_rate_c_per_min = excluded.ramp_rate_c_per_min,
               time_constant_s = excluded.time_constant_s,
               lag_half_width_c = excluded.lag_half_width_c,
               observed_resolution_c = excluded.observed_resolution_c"#,
        s.run_id,
        s.nominal_t_c,
        s.actuation_direction,
        s.contact_action,
        s.ramp_rate_c_per_min,
        s.time_constant_s,
        s.lag_half_width_c,
        s.observed_resolution_c
    )
    .execute(conn)
    .await?;
    Ok(())
}

/// A run's switch settings.
///
/// # Errors
/// Any database error.
pub async fn settings(
    conn: &mut SqliteConnection,
    run_id: i64,
) -> sqlx::Result<Option<SwitchSettings>> {
    sqlx::query_as!(
        SwitchSettings,
        r#"SELECT run_id AS "run_id!: i64", nominal_t_c AS "nominal_t_c!: f64", actuation_direction,
                  contact_action, ramp_rate_c_per_min, time_constant_s, lag_half_width_c,
                  observed_resolution_c AS "observed_resolution_c!: f64"
           FROM switch_test WHERE run_id = ?"#,
        run_id
    )
    .fetch_optional(conn)
    .await
}

/// One stored ramp.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StoredRamp {
    /// Row id.
    pub id: i64,
    /// Order within the run (1-based).
    pub position: i64,
    /// "rising" or "falling".
    pub direction: String,
    /// Readings as JSON `[[t_ref_c, "open" | "closed"], ...]`.
    pub readings: Option<String>,
    /// Or the observed change temperature, °C.
    pub observed_t_c: Option<f64>,
}

/// Appends a ramp; returns its id and position.
///
/// # Errors
/// Any database error.
pub async fn add_ramp(
    conn: &mut SqliteConnection,
    run_id: i64,
    direction: &str,
    readings: Option<&str>,
    observed_t_c: Option<f64>,
) -> sqlx::Result<(i64, i64)> {
    let now = super::now_timestamp();
    let row = sqlx::query!(
        r#"INSERT INTO switch_ramp (run_id, position, direction, readings, observed_t_c, created_at)
           VALUES (?1, (SELECT COALESCE(MAX(position), 0) + 1 FROM switch_ramp WHERE run_id = ?1), ?2, ?3, ?4, ?5)
           RETURNING id AS "id!: i64", position AS "position!: i64""#,
        run_id,
        direction,
        readings,
        observed_t_c,
        now
    )
    .fetch_one(conn)
    .await?;
    Ok((row.id, row.position))
}

/// A run's ramps in order.
///
/// # Errors
/// Any database error.
pub async fn ramps(conn: &mut SqliteConnection, run_id: i64) -> sqlx::Result<Vec<StoredRamp>> {
    sqlx::query_as!(
        StoredRamp,
        r#"SELECT id AS "id!: i64", position AS "position!: i64", direction, readings, observed_t_c
           FROM switch_ramp WHERE run_id = ? ORDER BY position"#,
        run_id
    )
    .fetch_all(conn)
    .await
}

/// Removes a ramp of a run; returns whether it existed.
///
/// # Errors
/// Any database error.
pub async fn delete_ramp(
    conn: &mut SqliteConnection,
    run_id: i64,
    ramp_id: i64,
) -> sqlx::Result<bool> {
    let done = sqlx::query!(
        "DELETE FROM switch_ramp WHERE run_id = ? AND id = ?",
        run_id,
        ramp_id
    )
    .execute(conn)
    .await?;
    Ok(done.rows_affected() == 1)
}

/// One characterised temperature as stored.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MediumPointRow {
    /// Temperature, °C.
    pub temperature_c: f64,
    /// Uniformity half-width, °C.
    pub uniformity_half_width_c: f64,
    /// Stability half-width, °C.
    pub stability_half_width_c: f64,
    /// Loading half-width, °C.
    pub loading_half_width_c: Option<f64>,
    /// How the half-widths were derived.
    pub derivation: String,
}

/// A characterisation run with its points.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CharacterisationRun {
    /// Row id.
    pub id: i64,
    /// Date of the characterisation.
    pub characterised_on: String,
    /// The raw readings as recorded (JSON).
    pub input: String,
    /// The half-widths by temperature.
    pub points: Vec<MediumPointRow>,
}

/// Stores a characterisation run and its points; returns its id.
///
/// # Errors
/// Any database error.
pub async fn add_characterisation_run(
    conn: &mut SqliteConnection,
    equipment_id: i64,
    characterised_on: &str,
    input: &str,
    recorded_by: i64,
    points: &[MediumPointRow],
) -> sqlx::Result<i64> {
    let now = super::now_timestamp();
    let id = sqlx::query_scalar!(
        r#"INSERT INTO medium_characterisation_run (equipment_id, characterised_on, input, recorded_by, created_at)
           VALUES (?, ?, ?, ?, ?) RETURNING id AS "id!: i64""#,
        equipment_id,
        characterised_on,
        input,
        recorded_by,
        now
    )
    .fetch_one(&mut *conn)
    .await?;
    for p in points {
        sqlx::query!(
            r#"INSERT INTO medium_point (run_id, temperature_c, uniformity_half_width_c,
                   stability_half_width_c, loading_half_width_c, derivation)
               VALUES (?, ?, ?, ?, ?, ?)"#,
            id,
            p.temperature_c,
            p.uniformity_half_width_c,
            p.stability_half_width_c,
            p.loading_half_width_c,
            p.derivation
        )
        .execute(&mut *conn)
        .await?;
    }
    Ok(id)
}

async fn points_of(conn: &mut SqliteConnection, run_id: i64) -> sqlx::Result<Vec<MediumPointRow>> {
    sqlx::query_as!(
        MediumPointRow,
        r#"SELECT temperature_c AS "temperature_c!: f64",
                  uniformity_half_width_c AS "uniformity_half_width_c!: f64",
                  stability_half_width_c AS "stability_half_width_c!: f64",
                  loading_half_width_c, derivation
           FROM medium_point WHERE run_id = ? ORDER BY temperature_c"#,
        run_id
    )
    .fetch_all(conn)
    .await
}

/// The latest characterisation run of a medium dated on or before `date`.
///
/// # Errors
/// Any database error.
pub async fn characterisation_run_on(
    conn: &mut SqliteConnection,
    equipment_id: i64,
    date: &str,
) -> sqlx::Result<Option<CharacterisationRun>> {
    let row = sqlx::query!(
        r#"SELECT id AS "id!: i64", characterised_on, input FROM medium_characterisation_run
           WHERE equipment_id = ? AND characterised_on <= ?
           ORDER BY characterised_on DESC, id DESC LIMIT 1"#,
        equipment_id,
        date
    )
    .fetch_optional(&mut *conn)
    .await?;
    let Some(r) = row else { return Ok(None) };
    let points = points_of(conn, r.id).await?;
    Ok(Some(CharacterisationRun {
        id: r.id,
        characterised_on: r.characterised_on,
        input: r.input,
        points,
    }))
}

/// Every characterisation run of a medium, newest first.
///
/// # Errors
/// Any database error.
pub async fn characterisation_runs(
    conn: &mut SqliteConnection,
    equipment_id: i64,
) -> sqlx::Result<Vec<CharacterisationRun>> {
    let rows = sqlx::query!(
        r#"SELECT id AS "id!: i64", characterised_on, input FROM medium_characterisation_run
           WHERE equipment_id = ? ORDER BY characterised_on DESC, id DESC"#,
        equipment_id
    )
    .fetch_all(&mut *conn)
    .await?;
    let mut out = Vec::new();
    for r in rows {
        let points = points_of(conn, r.id).await?;
        out.push(CharacterisationRun {
            id: r.id,
            characterised_on: r.characterised_on,
            input: r.input,
            points,
        });
    }
    Ok(out)
}
