//! Budget templates: lab-entered budget rows per kind of unit under test.

use sqlx::SqliteConnection;

use crate::domain::results::ExtraBudgetRow;

/// The template rows of a kind, in order.
///
/// # Errors
/// Any database error.
pub async fn rows(
    conn: &mut SqliteConnection,
    instrument_kind: &str,
) -> sqlx::Result<Vec<ExtraBudgetRow>> {
    sqlx::query_as!(
        ExtraBudgetRow,
        r#"SELECT name, distribution, value_c AS "value_c!: f64", kind
           FROM budget_template_row WHERE instrument_kind = ? ORDER BY position"#,
        instrument_kind
    )
    .fetch_all(conn)
    .await
}

/// Replaces the template rows of a kind.
///
/// # Errors
/// Any database error (CHECK constraints on distribution, kind, value).
pub async fn replace(
    conn: &mut SqliteConnection,
    instrument_kind: &str,
    rows: &[ExtraBudgetRow],
) -> sqlx::Result<()> {
    sqlx::query!(
        "DELETE FROM budget_template_row WHERE instrument_kind = ?",
        instrument_kind
    )
    .execute(&mut *conn)
    .await?;
    for (position, row) in rows.iter().enumerate() {
        let position = position as i64;
        sqlx::query!(
            "INSERT INTO budget_template_row (instrument_kind, position, name, distribution, value_c, kind)
             VALUES (?, ?, ?, ?, ?, ?)",
            instrument_kind,
            position,
            row.name,
            row.distribution,
            row.value_c,
            row.kind
        )
        .execute(&mut *conn)
        .await?;
    }
    Ok(())
}
