//! Prints SQLite's query plan (EXPLAIN QUERY PLAN) of every register
//! statement for each kind of filter, with the SQLite that Juncture is
//! built with. The statements are read from the committed sqlx query data
//! (`.sqlx/`), so this prints the plans of exactly what the binary runs;
//! the SQL itself lives only in `src/store/`.
//!
//! Run: `cargo run --release --example query_plan -- DATABASE [.sqlx]`
//! (bench/scale.sh does, on the generated database).

use std::path::PathBuf;

use sqlx::Row;
use sqlx::sqlite::{SqliteConnectOptions, SqlitePoolOptions};

#[tokio::main(flavor = "current_thread")]
async fn main() -> Result<(), Box<dyn std::error::Error>> {
    let mut args = std::env::args().skip(1);
    let database = PathBuf::from(args.next().ok_or("usage: query_plan DATABASE [.sqlx]")?);
    let dir = PathBuf::from(args.next().unwrap_or_else(|| ".sqlx".to_owned()));
    let pool = SqlitePoolOptions::new()
        .max_connections(1)
        .connect_with(
            SqliteConnectOptions::new()
                .filename(&database)
                .read_only(true),
        )
        .await?;
    let version: String = sqlx::query_scalar("SELECT sqlite_version()")
        .fetch_one(&pool)
        .await?;
    println!("SQLite {version}");
    let equipment: i64 =
        sqlx::query_scalar("SELECT id FROM equipment WHERE asset_id = 'LTM-DIG-04'")
            .fetch_one(&pool)
            .await?;
    let mut statements = Vec::new();
    for entry in std::fs::read_dir(&dir)? {
        let text = std::fs::read_to_string(entry?.path())?;
        let json: serde_json::Value = serde_json::from_str(&text)?;
        let query = json["query"].as_str().unwrap_or_default().to_owned();
        if query.contains("certificate_facts f") && query.contains("LIMIT ?8") {
            statements.push(query);
        }
    }
    statements.sort();
    // (name, text, from, to, kind, outcome, equipment)
    let cases: [(&str, &str, &str, &str, &str, &str, i64); 6] = [
        ("no filter", "", "0000-01-01", "9999-12-31", "", "", 0),
        ("kind", "", "0000-01-01", "9999-12-31", "prt", "", 0),
        ("outcome", "", "0000-01-01", "9999-12-31", "", "fail", 0),
        (
            "equipment",
            "",
            "0000-01-01",
            "9999-12-31",
            "",
            "",
            equipment,
        ),
        ("text", "%Kester%", "0000-01-01", "9999-12-31", "", "", 0),
        ("dates", "", "2019-03-01", "2019-03-31", "", "", 0),
    ];
    for sql in &statements {
        let head: String = sql.split_whitespace().collect::<Vec<_>>().join(" ");
        let from = head.find(" FROM ").map_or("", |i| &head[i..]);
        println!("-- ...{}", &from[..from.len().min(100)]);
        for (name, text, from, to, kind, outcome, equipment) in cases {
            // The statement comes from the project's own .sqlx data, not
            // from a user; only the EXPLAIN prefix is added.
            let rows = sqlx::query(sqlx::AssertSqlSafe(format!("EXPLAIN QUERY PLAN {sql}")))
                .bind(i64::MAX)
                .bind(text)
                .bind(from)
                .bind(to)
                .bind(kind)
                .bind(outcome)
                .bind(equipment)
                .bind(50_i64)
                .fetch_all(&pool)
                .await?;
            let steps: Vec<String> = rows.iter().map(|r| r.get::<String, _>("detail")).collect();
            println!("   {name}: {}", steps.join("; "));
        }
    }
    Ok(())
}
