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

/// The last position a set point's readings take (0 when it has none), over
/// rows and blocks.
///
/// # Errors
/// Any database error.
pub async fn last_position(conn: &mut SqliteConnection, set_point_id: i64) -> sqlx::Result<i64> {
    sqlx::query_scalar!(
        r#"SELECT MAX(
               COALESCE((SELECT MAX(position) FROM reading WHERE set_point_id = ?1), 0),
               COALESCE((SELECT MAX(first_position + count - 1) FROM reading_block
                         WHERE set_point_id = ?1), 0)) AS "n!: i64""#,
        set_point_id
    )
    .fetch_one(conn)
    .await
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
    let start = last_position(conn, set_point_id).await?;
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

/// Readings packed as they will be stored (blocks of [`BLOCK_READINGS`],
/// migration 0011): a logger file of a million readings parsed as it
/// arrives takes 24 bytes per reading plus its time stamp's text, and no
/// buffer ever grows past one block.
#[derive(Debug, Default, Clone, PartialEq)]
pub struct ReadingColumns {
    blocks: Vec<PackedBlock>,
    len: usize,
}

#[derive(Debug, Clone, PartialEq)]
struct PackedBlock {
    count: usize,
    /// Three little-endian doubles per reading; NaN for no junction value.
    signals: Vec<u8>,
    /// Time stamps joined by line feeds (an empty line: none).
    stamps: String,
    any_stamp: bool,
}

impl ReadingColumns {
    /// Appends a reading. Signals must be finite (the parser checks) and a
    /// time stamp must not hold a line feed (it comes from one line).
    pub fn push(
        &mut self,
        taken_at: Option<&str>,
        reference_signal: f64,
        uut_signal: f64,
        rj_t_c: Option<f64>,
    ) {
        if self.blocks.last().is_none_or(|b| b.count == BLOCK_READINGS) {
            self.blocks.push(PackedBlock {
                count: 0,
                signals: Vec::with_capacity(BLOCK_READINGS * BLOCK_STRIDE),
                stamps: String::new(),
                any_stamp: false,
            });
        }
        let Some(block) = self.blocks.last_mut() else {
            return;
        };
        block
            .signals
            .extend_from_slice(&reference_signal.to_le_bytes());
        block.signals.extend_from_slice(&uut_signal.to_le_bytes());
        block
            .signals
            .extend_from_slice(&rj_t_c.unwrap_or(f64::NAN).to_le_bytes());
        if block.count > 0 {
            block.stamps.push('\n');
        }
        if let Some(t) = taken_at {
            block.any_stamp = true;
            block.stamps.push_str(t);
        }
        block.count += 1;
        self.len += 1;
    }

    /// Number of readings.
    #[must_use]
    pub fn len(&self) -> usize {
        self.len
    }

    /// Whether there are none.
    #[must_use]
    pub fn is_empty(&self) -> bool {
        self.len == 0
    }

    /// Reading `i`: (time stamp, reference signal, UUT signal, reference
    /// junction °C). Reads its block's time stamps up to it: for checks,
    /// not for loops over every reading.
    ///
    /// # Panics
    /// When `i` is not below [`ReadingColumns::len`].
    #[must_use]
    pub fn get(&self, i: usize) -> (Option<&str>, f64, f64, Option<f64>) {
        let block = &self.blocks[i / BLOCK_READINGS];
        let k = i % BLOCK_READINGS;
        let value = |j: usize| {
            let at = k * BLOCK_STRIDE + 8 * j;
            let mut bytes = [0_u8; 8];
            bytes.copy_from_slice(&block.signals[at..at + 8]);
            f64::from_le_bytes(bytes)
        };
        let stamp = block
            .stamps
            .split('\n')
            .nth(k)
            .filter(|t| block.any_stamp && !t.is_empty());
        let rj = value(2);
        (stamp, value(0), value(1), (!rj.is_nan()).then_some(rj))
    }
}

/// Most readings in one stored block (see migration 0011).
pub const BLOCK_READINGS: usize = 65_536;

/// Bytes of one reading's signals in a block: three little-endian doubles.
const BLOCK_STRIDE: usize = 24;

/// Appends readings held as columns to a set point as blocks of at most
/// [`BLOCK_READINGS`] (the same raw values, packed; migration 0011).
/// Returns how many readings the set point now holds.
///
/// # Errors
/// Any database error.
pub async fn append_reading_columns(
    conn: &mut SqliteConnection,
    set_point_id: i64,
    readings: &ReadingColumns,
) -> sqlx::Result<i64> {
    let start = last_position(conn, set_point_id).await?;
    let mut first_position = start + 1;
    for block in &readings.blocks {
        let count = block.count as i64;
        let stamps = block.any_stamp.then_some(block.stamps.as_str());
        sqlx::query!(
            "INSERT INTO reading_block (set_point_id, first_position, count, signals, taken_at)
             VALUES (?, ?, ?, ?, ?)",
            set_point_id,
            first_position,
            count,
            block.signals,
            stamps
        )
        .execute(&mut *conn)
        .await?;
        first_position += count;
    }
    let n = readings.len();
    Ok(start + n as i64)
}

/// A stored block of readings (migration 0011).
struct Block {
    first_position: i64,
    signals: Vec<u8>,
    taken_at: Option<String>,
}

impl Block {
    /// Calls `f` with each reading of the block: (position, time stamp,
    /// signals).
    fn each(&self, mut f: impl FnMut(i64, Option<&str>, Signals)) {
        let mut stamps = self.taken_at.as_deref().map(|t| t.split('\n'));
        for (i, chunk) in self.signals.chunks_exact(BLOCK_STRIDE).enumerate() {
            let value = |k: usize| {
                let mut bytes = [0_u8; 8];
                bytes.copy_from_slice(&chunk[8 * k..8 * k + 8]);
                f64::from_le_bytes(bytes)
            };
            let rj = value(2);
            let stamp = stamps
                .as_mut()
                .and_then(Iterator::next)
                .filter(|t| !t.is_empty());
            f(
                self.first_position + i as i64,
                stamp,
                Signals {
                    reference_signal: value(0),
                    uut_signal: value(1),
                    rj_t_c: (!rj.is_nan()).then_some(rj),
                },
            );
        }
    }
}

/// The blocks of a set point as (id, first position, count), in order.
async fn block_heads(
    conn: &mut SqliteConnection,
    set_point_id: i64,
) -> sqlx::Result<Vec<(i64, i64, i64)>> {
    let rows = sqlx::query!(
        r#"SELECT id AS "id!: i64", first_position, count FROM reading_block
           WHERE set_point_id = ? ORDER BY first_position"#,
        set_point_id
    )
    .fetch_all(conn)
    .await?;
    Ok(rows
        .into_iter()
        .map(|r| (r.id, r.first_position, r.count))
        .collect())
}

async fn block(conn: &mut SqliteConnection, id: i64) -> sqlx::Result<Block> {
    let r = sqlx::query!(
        r#"SELECT first_position, signals, taken_at FROM reading_block WHERE id = ?"#,
        id
    )
    .fetch_one(conn)
    .await?;
    Ok(Block {
        first_position: r.first_position,
        signals: r.signals,
        taken_at: r.taken_at,
    })
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

/// Calls `f` with the signals of every reading of a set point, in order
/// of position, whether held as rows ([`SIGNALS_PAGE_ROWS`] at a time) or
/// as blocks (one at a time), so that memory does not grow with the set
/// point. Returns the number of readings.
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
    let heads = block_heads(conn, set_point_id).await?;
    for next in heads.iter().map(Some).chain([None]) {
        // Rows between the previous block and this one.
        let before = next.map_or(i64::MAX, |&(_, first, _)| first);
        loop {
            let page = sqlx::query!(
                r#"SELECT position AS "position!: i64", reference_signal AS "reference_signal!: f64",
                          uut_signal AS "uut_signal!: f64", rj_t_c
                   FROM reading WHERE set_point_id = ? AND position > ? AND position < ?
                   ORDER BY position LIMIT ?"#,
                set_point_id,
                after,
                before,
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
        if let Some(&(id, first, n)) = next {
            block(conn, id).await?.each(|_, _, s| f(s));
            count += usize::try_from(n).unwrap_or(0);
            after = first + n - 1;
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
        r#"SELECT (SELECT COUNT(*) FROM reading WHERE set_point_id = ?1)
                + COALESCE((SELECT SUM(count) FROM reading_block WHERE set_point_id = ?1), 0)
                AS "n!: i64""#,
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
    readings_in(conn, set_point_id, 1, i64::MAX).await
}

/// A set point's readings at positions `first ..= last`, in order.
///
/// # Errors
/// Any database error.
pub async fn readings_in(
    conn: &mut SqliteConnection,
    set_point_id: i64,
    first: i64,
    last: i64,
) -> sqlx::Result<Vec<Reading>> {
    let mut out = sqlx::query_as!(
        Reading,
        r#"SELECT position AS "position!: i64", taken_at, reference_signal AS "reference_signal!: f64",
                  uut_signal AS "uut_signal!: f64", rj_t_c
           FROM reading WHERE set_point_id = ? AND position BETWEEN ? AND ? ORDER BY position"#,
        set_point_id,
        first,
        last
    )
    .fetch_all(&mut *conn)
    .await?;
    let heads = block_heads(conn, set_point_id).await?;
    let mut from_blocks = false;
    for (id, start, count) in heads {
        if start > last || start + count - 1 < first {
            continue;
        }
        from_blocks = true;
        block(conn, id).await?.each(|position, taken_at, s| {
            if (first..=last).contains(&position) {
                out.push(Reading {
                    position,
                    taken_at: taken_at.map(str::to_owned),
                    reference_signal: s.reference_signal,
                    uut_signal: s.uut_signal,
                    rj_t_c: s.rj_t_c,
                });
            }
        });
    }
    if from_blocks {
        out.sort_by_key(|r| r.position);
    }
    Ok(out)
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
    sqlx::query!(
        "DELETE FROM reading_block WHERE set_point_id = (SELECT id FROM set_point WHERE id = ? AND run_id = ?)",
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

#[cfg(test)]
mod packing_tests {
    use super::*;

    #[test]
    fn packed_readings_read_back_across_block_boundaries() {
        let mut c = ReadingColumns::default();
        let n = BLOCK_READINGS + 4_464;
        for i in 0..n {
            let stamp = format!("t{i}");
            c.push(
                (i % 3 != 0).then_some(stamp.as_str()),
                100.0 + i as f64 / 8.0,
                -(i as f64),
                (i % 5 == 0).then_some(20.5),
            );
        }
        assert_eq!(c.len(), n);
        assert_eq!(c.blocks.len(), 2);
        assert_eq!(c.blocks[0].count, BLOCK_READINGS);
        for i in [0, 1, 2, 5, BLOCK_READINGS - 1, BLOCK_READINGS, n - 1] {
            let stamp = format!("t{i}");
            assert_eq!(
                c.get(i),
                (
                    (i % 3 != 0).then_some(stamp.as_str()),
                    100.0 + i as f64 / 8.0,
                    -(i as f64),
                    (i % 5 == 0).then_some(20.5)
                ),
                "reading {i}"
            );
        }
        // A block without any time stamp stores none (NULL, not empty lines).
        let mut bare = ReadingColumns::default();
        bare.push(None, 1.0, 2.0, None);
        bare.push(None, 3.0, 4.0, None);
        assert!(!bare.blocks[0].any_stamp);
        assert_eq!(bare.get(1), (None, 3.0, 4.0, None));
    }
}
