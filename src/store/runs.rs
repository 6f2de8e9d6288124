//! Comparison runs, their set points and raw readings.

use serde::Serialize;
use sqlx::SqliteConnection;

/// A comparison run.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Run {
    /// Row id.
    pub id: i64,
    /// Unit under test.
    pub instrument_id: i64,
    /// Reference standard.
    pub reference_id: i64,
    /// Readout of the reference.
    pub reference_readout_id: Option<i64>,
    /// Readout of the unit under test.
    pub uut_readout_id: Option<i64>,
    /// Comparison medium.
    pub medium_id: Option<i64>,
    /// Date of the measurements (YYYY-MM-DD).
    pub performed_on: String,
    /// Procedure identifier and revision.
    pub procedure_ref: String,
    /// Where the work was done.
    pub location: String,
    /// Ambient temperature, °C.
    pub ambient_t_c: Option<f64>,
    /// Ambient relative humidity, %.
    pub ambient_rh_percent: Option<f64>,
    /// ice_point, measured, compensated or not_applicable.
    pub rj_method: String,
    /// Immersion depth, mm.
    pub immersion_mm: Option<f64>,
    /// as_found or as_left.
    pub condition: String,
    /// simple, guarded, guarded_non_binary or none.
    pub decision_rule: String,
    /// Guard band factor r (w = r U).
    pub guard_band_factor: f64,
    /// Tolerance class (e.g. "1", "A").
    pub tolerance_class: Option<String>,
    /// Customer tolerance ±, °C.
    pub tolerance_limit_c: Option<f64>,
    /// Degree of the deviation function.
    pub fit_degree: Option<i64>,
    /// Lab-entered budget rows (JSON text).
    pub extra_budget: String,
    /// Technician.
    pub technician_id: i64,
    /// open, submitted, returned or approved.
    pub status: String,
    /// Optimistic-concurrency version.
    pub version: i64,
    /// Created (UTC).
    pub created_at: String,
    /// Last changed (UTC).
    pub updated_at: String,
    /// When submitted for review.
    pub submitted_at: Option<String>,
    /// Why a reviewer returned the run, while it is returned.
    pub returned_reason: Option<String>,
}

/// Fields of a run a caller sets.
#[derive(Debug, Clone, PartialEq)]
pub struct RunFields {
    /// Unit under test.
    pub instrument_id: i64,
    /// Reference standard.
    pub reference_id: i64,
    /// Reference readout.
    pub reference_readout_id: Option<i64>,
    /// UUT readout.
    pub uut_readout_id: Option<i64>,
    /// Medium.
    pub medium_id: Option<i64>,
    /// Date.
    pub performed_on: String,
    /// Procedure.
    pub procedure_ref: String,
    /// Location.
    pub location: String,
    /// Ambient temperature, °C.
    pub ambient_t_c: Option<f64>,
    /// Ambient humidity, %.
    pub ambient_rh_percent: Option<f64>,
    /// Reference-junction method.
    pub rj_method: String,
    /// Immersion, mm.
    pub immersion_mm: Option<f64>,
    /// as_found / as_left.
    pub condition: String,
    /// Decision rule.
    pub decision_rule: String,
    /// Guard band factor.
    pub guard_band_factor: f64,
    /// Tolerance class.
    pub tolerance_class: Option<String>,
    /// Customer limit, °C.
    pub tolerance_limit_c: Option<f64>,
    /// Fit degree.
    pub fit_degree: Option<i64>,
    /// Lab-entered budget rows (JSON text).
    pub extra_budget: String,
}

/// Creates a run for `technician_id`; returns it.
///
/// # Errors
/// Any database error.
pub async fn create(
    conn: &mut SqliteConnection,
    f: &RunFields,
    technician_id: i64,
) -> sqlx::Result<Run> {
    let now = super::now_timestamp();
    let id = sqlx::query_scalar!(
        r#"INSERT INTO run (instrument_id, reference_id, reference_readout_id, uut_readout_id, medium_id,
               performed_on, procedure_ref, location, ambient_t_c, ambient_rh_percent, rj_method,
               immersion_mm, condition, decision_rule, guard_band_factor, tolerance_class,
               tolerance_limit_c, fit_degree, extra_budget, technician_id, created_at, updated_at)
           VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)
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
        now,
        now
    )
    .fetch_one(&mut *conn)
    .await?;
    by_id(conn, id).await?.ok_or(sqlx::Error::RowNotFound)
}

/// One run by id.
///
/// # Errors
/// Any database error.
pub async fn by_id(conn: &mut SqliteConnection, id: i64) -> sqlx::Result<Option<Run>> {
    sqlx::query_as!(
        Run,
        r#"SELECT id AS "id!: i64", instrument_id, reference_id, reference_readout_id, uut_readout_id,
                  medium_id, performed_on, procedure_ref, location, ambient_t_c, ambient_rh_percent,
                  rj_method, immersion_mm, condition, decision_rule,
                  guard_band_factor AS "guard_band_factor!: f64", tolerance_class, tolerance_limit_c,
                  fit_degree, extra_budget, technician_id, status, version, created_at, updated_at,
                  submitted_at, returned_reason
           FROM run WHERE id = ?"#,
        id
    )
    .fetch_optional(conn)
    .await
}

/// All runs, newest first.
///
/// # Errors
/// Any database error.
pub async fn all(conn: &mut SqliteConnection) -> sqlx::Result<Vec<Run>> {
    sqlx::query_as!(
        Run,
        r#"SELECT id AS "id!: i64", instrument_id, reference_id, reference_readout_id, uut_readout_id,
                  medium_id, performed_on, procedure_ref, location, ambient_t_c, ambient_rh_percent,
                  rj_method, immersion_mm, condition, decision_rule,
                  guard_band_factor AS "guard_band_factor!: f64", tolerance_class, tolerance_limit_c,
                  fit_degree, extra_budget, technician_id, status, version, created_at, updated_at,
                  submitted_at, returned_reason
           FROM run ORDER BY performed_on DESC, id DESC"#
    )
    .fetch_all(conn)
    .await
}

/// Runs that used an equipment item (as reference, readout or medium)
/// with a run date in [from, to].
///
/// # Errors
/// Any database error.
pub async fn using_equipment(
    conn: &mut SqliteConnection,
    equipment_id: i64,
    from: &str,
    to: &str,
) -> sqlx::Result<Vec<Run>> {
    sqlx::query_as!(
        Run,
        r#"SELECT id AS "id!: i64", instrument_id, reference_id, reference_readout_id, uut_readout_id,
                  medium_id, performed_on, procedure_ref, location, ambient_t_c, ambient_rh_percent,
                  rj_method, immersion_mm, condition, decision_rule,
                  guard_band_factor AS "guard_band_factor!: f64", tolerance_class, tolerance_limit_c,
                  fit_degree, extra_budget, technician_id, status, version, created_at, updated_at,
                  submitted_at, returned_reason
           FROM run
           WHERE (reference_id = ?1 OR reference_readout_id = ?1 OR uut_readout_id = ?1 OR medium_id = ?1)
             AND performed_on BETWEEN ?2 AND ?3
           ORDER BY performed_on, id"#,
        equipment_id,
        from,
        to
    )
    .fetch_all(conn)
    .await
}

/// Bumps a run's version if it is still at `expected_version`; returns
/// whether it was (a stale edit returns false and changes nothing).
///
/// # Errors
/// Any database error.
pub async fn touch(
    conn: &mut SqliteConnection,
    id: i64,
    expected_version: i64,
) -> sqlx::Result<bool> {
    let now = super::now_timestamp();
    let done = sqlx::query!(
        "UPDATE run SET version = version + 1, updated_at = ? WHERE id = ? AND version = ?",
        now,
        id,
        expected_version
    )
    .execute(conn)
    .await?;
    Ok(done.rows_affected() == 1)
}

/// Marks a run submitted for review.
///
/// # Errors
/// Any database error.
pub async fn submit(conn: &mut SqliteConnection, id: i64) -> sqlx::Result<()> {
    let now = super::now_timestamp();
    sqlx::query!(
        "UPDATE run SET status = 'submitted', submitted_at = ?, updated_at = ?, version = version + 1
         WHERE id = ?",
        now,
        now,
        id
    )
    .execute(conn)
    .await?;
    Ok(())
}

/// A set point.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SetPoint {
    /// Row id.
    pub id: i64,
    /// Its run.
    pub run_id: i64,
    /// Nominal temperature, °C.
    pub nominal_t_c: f64,
}

/// Adds a set point to a run.
///
/// # Errors
/// Any database error (a duplicate nominal temperature is a unique violation).
pub async fn add_set_point(
    conn: &mut SqliteConnection,
    run_id: i64,
    nominal_t_c: f64,
) -> sqlx::Result<SetPoint> {
    let now = super::now_timestamp();
    let id = sqlx::query_scalar!(
        r#"INSERT INTO set_point (run_id, nominal_t_c, created_at) VALUES (?, ?, ?) RETURNING id AS "id!: i64""#,
        run_id,
        nominal_t_c,
        now
    )
    .fetch_one(conn)
    .await?;
    Ok(SetPoint {
        id,
        run_id,
        nominal_t_c,
    })
}

/// A run's set points by nominal temperature.
///
/// # Errors
/// Any database error.
pub async fn set_points(conn: &mut SqliteConnection, run_id: i64) -> sqlx::Result<Vec<SetPoint>> {
    sqlx::query_as!(
        SetPoint,
        r#"SELECT id AS "id!: i64", run_id, nominal_t_c AS "nominal_t_c!: f64"
           FROM set_point WHERE run_id = ? ORDER BY nominal_t_c"#,
        run_id
    )
    .fetch_all(conn)
    .await
}

/// A raw reading.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Reading {
    /// Order within the set point, from 1.
    pub position: i64,
    /// When taken, as recorded.
    pub taken_at: Option<String>,
    /// Reference signal (mV, Ω or °C by the reference's kind).
    pub reference_signal: f64,
    /// UUT signal (mV, Ω or °C by the instrument's kind).
    pub uut_signal: f64,
    /// Reference-junction temperature, °C, when measured.
    pub rj_t_c: Option<f64>,
}

/// Appends readings to a set point after the ones it has; returns how many
/// it now holds.
///
/// # Errors
/// Any database error.
pub async fn append_readings(
    conn: &mut SqliteConnection,
    set_point_id: i64,
    readings: &[Reading],
) -> sqlx::Result<i64> {
    let start: i64 = sqlx::query_scalar!(
        r#"SELECT COALESCE(MAX(position), 0) AS "n!: i64" FROM reading WHERE set_point_id = ?"#,
        set_point_id
    )
    .fetch_one(&mut *conn)
    .await?;
    for (i, r) in readings.iter().enumerate() {
        let position = start + 1 + i as i64;
        sqlx::query!(
            "INSERT INTO reading (set_point_id, position, taken_at, reference_signal, uut_signal, rj_t_c)
             VALUES (?, ?, ?, ?, ?, ?)",
            set_point_id,
            position,
            r.taken_at,
            r.reference_signal,
            r.uut_signal,
            r.rj_t_c
        )
        .execute(&mut *conn)
        .await?;
    }
    Ok(start + readings.len() as i64)
}

/// Readings held as columns: a logger file of a million readings parsed
/// as it arrives, in about 28 bytes per reading plus its time stamp's text
/// (one `String` for all time stamps).
#[derive(Debug, Default, Clone, PartialEq)]
pub struct ReadingColumns {
    reference_signal: Vec<f64>,
    uut_signal: Vec<f64>,
    /// NaN when not given (given values are finite).
    rj_t_c: Vec<f64>,
    taken_at: String,
    /// End of each reading's time stamp in `taken_at` (empty: none).
    taken_at_end: Vec<u32>,
}

impl ReadingColumns {
    /// Appends a reading. Signals must be finite (the parser checks).
    ///
    /// # Panics
    /// When the time stamps together exceed 4 GiB of text.
    pub fn push(
        &mut self,
        taken_at: Option<&str>,
        reference_signal: f64,
        uut_signal: f64,
        rj_t_c: Option<f64>,
    ) {
        self.reference_signal.push(reference_signal);
        self.uut_signal.push(uut_signal);
        self.rj_t_c.push(rj_t_c.unwrap_or(f64::NAN));
        if let Some(t) = taken_at {
            self.taken_at.push_str(t);
        }
        let end = u32::try_from(self.taken_at.len()).expect("time stamps under 4 GiB");
        self.taken_at_end.push(end);
    }

    /// Number of readings.
    #[must_use]
    pub fn len(&self) -> usize {
        self.reference_signal.len()
    }

    /// Whether there are none.
    #[must_use]
    pub fn is_empty(&self) -> bool {
        self.reference_signal.is_empty()
    }

    /// Reading `i`: (time stamp, reference signal, UUT signal, reference
    /// junction °C).
    #[must_use]
    pub fn get(&self, i: usize) -> (Option<&str>, f64, f64, Option<f64>) {
        let start = if i == 0 {
            0
        } else {
            self.taken_at_end[i - 1] as usize
        };
        let end = self.taken_at_end[i] as usize;
        let t = (end > start).then(|| &self.taken_at[start..end]);
        let rj = self.rj_t_c[i];
        (
            t,
            self.reference_signal[i],
            self.uut_signal[i],
            (!rj.is_nan()).then_some(rj),
        )
    }
}

/// Rows per INSERT statement when appending [`ReadingColumns`] (6 values
/// each, well under SQLite's limit of 32 766 bound values).
pub const APPEND_BATCH_ROWS: usize = 500;

/// Appends readings held as columns to a set point, [`APPEND_BATCH_ROWS`]
/// per statement (values bound, never printed into the SQL). Returns how
/// many the set point now holds.
///
/// # Errors
/// Any database error.
pub async fn append_reading_columns(
    conn: &mut SqliteConnection,
    set_point_id: i64,
    readings: &ReadingColumns,
) -> sqlx::Result<i64> {
    let start: i64 = sqlx::query_scalar!(
        r#"SELECT COALESCE(MAX(position), 0) AS "n!: i64" FROM reading WHERE set_point_id = ?"#,
        set_point_id
    )
    .fetch_one(&mut *conn)
    .await?;
    let n = readings.len();
    let mut first = 0;
    while first < n {
        let last = (first + APPEND_BATCH_ROWS).min(n);
        let mut q = sqlx::QueryBuilder::<sqlx::Sqlite>::new(
            "INSERT INTO reading (set_point_id, position, taken_at, reference_signal, uut_signal, rj_t_c) ",
        );
        q.push_values(first..last, |mut row, i| {
            let (taken_at, reference, uut, rj) = readings.get(i);
            row.push_bind(set_point_id)
                .push_bind(start + 1 + i as i64)
                .push_bind(taken_at)
                .push_bind(reference)
                .push_bind(uut)
                .push_bind(rj);
        });
        q.build().execute(&mut *conn).await?;
        first = last;
    }
    Ok(start + n as i64)
}

/// The signals of one reading, for computation (no time stamp).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Signals {
    /// Reference signal.
    pub reference_signal: f64,
    /// UUT signal.
    pub uut_signal: f64,
    /// Reference-junction temperature, °C.
    pub rj_t_c: Option<f64>,
}

/// Rows read per query by [`for_each_signals`].
pub const SIGNALS_PAGE_ROWS: i64 = 20_000;

/// Calls `f` with the signals of every reading of a set point, in order,
/// reading [`SIGNALS_PAGE_ROWS`] rows at a time so that memory does not
/// grow with the set point. Returns the number of readings.
///
/// # Errors
/// Any database error.
pub async fn for_each_signals(
    conn: &mut SqliteConnection,
    set_point_id: i64,
    mut f: impl FnMut(Signals),
) -> sqlx::Result<usize> {
    let mut after = 0_i64;
    let mut count = 0;
    loop {
        let page = sqlx::query!(
            r#"SELECT position AS "position!: i64", reference_signal AS "reference_signal!: f64",
                      uut_signal AS "uut_signal!: f64", rj_t_c
               FROM reading WHERE set_point_id = ? AND position > ? ORDER BY position LIMIT ?"#,
            set_point_id,
            after,
            SIGNALS_PAGE_ROWS
        )
        .fetch_all(&mut *conn)
        .await?;
        let Some(last) = page.last() else { break };
        after = last.position;
        let full = page.len() as i64 == SIGNALS_PAGE_ROWS;
        count += page.len();
        for r in page {
            f(Signals {
                reference_signal: r.reference_signal,
                uut_signal: r.uut_signal,
                rj_t_c: r.rj_t_c,
            });
        }
        if !full {
            break;
        }
    }
    Ok(count)
}

/// Number of readings of a set point.
///
/// # Errors
/// Any database error.
pub async fn reading_count(conn: &mut SqliteConnection, set_point_id: i64) -> sqlx::Result<i64> {
    sqlx::query_scalar!(
        r#"SELECT COUNT(*) AS "n!: i64" FROM reading WHERE set_point_id = ?"#,
        set_point_id
    )
    .fetch_one(conn)
    .await
}

/// A set point's readings in order.
///
/// # Errors
/// Any database error.
pub async fn readings(
    conn: &mut SqliteConnection,
    set_point_id: i64,
) -> sqlx::Result<Vec<Reading>> {
    sqlx::query_as!(
        Reading,
        r#"SELECT position AS "position!: i64", taken_at, reference_signal AS "reference_signal!: f64",
                  uut_signal AS "uut_signal!: f64", rj_t_c
           FROM reading WHERE set_point_id = ? ORDER BY position"#,
        set_point_id
    )
    .fetch_all(conn)
    .await
}

/// Removes a set point and its readings; returns whether it existed.
///
/// # Errors
/// Any database error.
pub async fn delete_set_point(
    conn: &mut SqliteConnection,
    run_id: i64,
    set_point_id: i64,
) -> sqlx::Result<bool> {
    sqlx::query!(
        "DELETE FROM reading WHERE set_point_id = (SELECT id FROM set_point WHERE id = ? AND run_id = ?)",
        set_point_id,
        run_id
    )
    .execute(&mut *conn)
    .await?;
    let done = sqlx::query!(
        "DELETE FROM set_point WHERE id = ? AND run_id = ?",
        set_point_id,
        run_id
    )
    .execute(conn)
    .await?;
    Ok(done.rows_affected() == 1)
}

/// Sets a run's review state: `approved`, or `returned` with the reason.
///
/// # Errors
/// Any database error.
pub async fn set_review_state(
    conn: &mut SqliteConnection,
    id: i64,
    status: &str,
    reason: Option<&str>,
) -> sqlx::Result<()> {
    let now = super::now_timestamp();
    sqlx::query!(
        "UPDATE run SET status = ?, returned_reason = ?, updated_at = ?, version = version + 1 WHERE id = ?",
        status,
        reason,
        now,
        id
    )
    .execute(conn)
    .await?;
    Ok(())
}
