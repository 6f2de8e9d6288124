//! The audit trail: an append-only, hash-chained list of every change.
//!
//! Each event's hash is SHA-256 over the previous event's hash and the
//! event's own fields, each length-prefixed so that no two different events
//! encode alike. [`append`] must run in the same transaction as the change
//! it records; [`verify`] re-walks the chain.

use sha2::{Digest, Sha256};
use sqlx::SqliteConnection;

/// Hash that the first event chains to.
pub const GENESIS_HASH: &str = "0000000000000000000000000000000000000000000000000000000000000000";

/// A change to record.
#[derive(Debug, Clone)]
pub struct NewEvent<'a> {
    /// Who made the change (username, or `system` for the service itself).
    pub actor: &'a str,
    /// What was done, e.g. `create`, `update`, `submit`.
    pub action: &'a str,
    /// The kind of record, e.g. `customer`, `run`.
    pub entity: &'a str,
    /// The record's identifier.
    pub entity_id: &'a str,
    /// The record before the change (JSON), if it existed.
    pub before: Option<&'a serde_json::Value>,
    /// The record after the change (JSON), if it still exists.
    pub after: Option<&'a serde_json::Value>,
}

/// A stored event.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Event {
    /// Position in the chain, from 1.
    pub seq: i64,
    /// When (ISO 8601, UTC).
    pub at: String,
    /// Who.
    pub actor: String,
    /// What.
    pub action: String,
    /// Kind of record.
    pub entity: String,
    /// Record identifier.
    pub entity_id: String,
    /// JSON before.
    pub before_json: Option<String>,
    /// JSON after.
    pub after_json: Option<String>,
    /// Hash of the previous event.
    pub prev_hash: String,
    /// This event's hash.
    pub hash: String,
}

fn field(hasher: &mut Sha256, value: Option<&str>) {
    match value {
        None => hasher.update(b"-"),
        Some(v) => {
            hasher.update((v.len() as u64).to_be_bytes());
            hasher.update(v.as_bytes());
        }
    }
}

/// The hash of an event chained to `prev_hash`, as lowercase hex. `fields`
/// are, in order: at, actor, action, entity, entity id, before, after.
#[must_use]
pub fn chain_hash(prev_hash: &str, seq: i64, fields: [Option<&str>; 7]) -> String {
    let mut h = Sha256::new();
    field(&mut h, Some(prev_hash));
    h.update(seq.to_be_bytes());
    for v in fields {
        field(&mut h, v);
    }
    hex::encode(h.finalize())
}

/// Appends an event chained to the newest one. Call inside the transaction
/// that makes the change, so both commit or neither does.
///
/// # Errors
/// Any database error.
pub async fn append(conn: &mut SqliteConnection, event: &NewEvent<'_>) -> sqlx::Result<i64> {
    let last = sqlx::query!(
        r#"SELECT seq AS "seq!: i64", hash FROM audit_event ORDER BY seq DESC LIMIT 1"#
    )
    .fetch_optional(&mut *conn)
    .await?;
    let (seq, prev_hash) = match last {
        Some(row) => (row.seq + 1, row.hash),
        None => (1, GENESIS_HASH.to_owned()),
    };
    let at = super::now_timestamp();
    let before = event.before.map(serde_json::Value::to_string);
    let after = event.after.map(serde_json::Value::to_string);
    let hash = chain_hash(
        &prev_hash,
        seq,
        [
            Some(at.as_str()),
            Some(event.actor),
            Some(event.action),
            Some(event.entity),
            Some(event.entity_id),
            before.as_deref(),
            after.as_deref(),
        ],
    );
    sqlx::query!(
        "INSERT INTO audit_event (seq, at, actor, action, entity, entity_id, before_json, after_json, prev_hash, hash)
         VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)",
        seq,
        at,
        event.actor,
        event.action,
        event.entity,
        event.entity_id,
        before,
        after,
        prev_hash,
        hash,
    )
    .execute(&mut *conn)
    .await?;
    Ok(seq)
}

/// The outcome of walking the chain.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Verification {
    /// Every event links to its predecessor and matches its own hash.
    Intact {
        /// Number of events checked.
        events: i64,
    },
    /// The first event that does not check out.
    Broken {
        /// Its sequence number.
        seq: i64,
        /// What is wrong.
        reason: String,
    },
}

/// Walks the whole chain in order and reports the first broken link.
///
/// # Errors
/// Any database error.
pub async fn verify(conn: &mut SqliteConnection) -> sqlx::Result<Verification> {
    let events = sqlx::query_as!(
        Event,
        r#"SELECT seq AS "seq!: i64", at, actor, action, entity, entity_id, before_json, after_json, prev_hash, hash
           FROM audit_event ORDER BY seq"#
    )
    .fetch_all(&mut *conn)
    .await?;
    let mut expected_prev = GENESIS_HASH.to_owned();
    let mut expected_seq = 1;
    for e in &events {
        if e.seq != expected_seq {
            return Ok(Verification::Broken {
                seq: e.seq,
                reason: format!("expected event {expected_seq} here; events are missing"),
            });
        }
        if e.prev_hash != expected_prev {
            return Ok(Verification::Broken {
                seq: e.seq,
                reason: "it does not link to the event before it".to_owned(),
            });
        }
        let recomputed = chain_hash(
            &e.prev_hash,
            e.seq,
            [
                Some(e.at.as_str()),
                Some(&e.actor),
                Some(&e.action),
                Some(&e.entity),
                Some(&e.entity_id),
                e.before_json.as_deref(),
                e.after_json.as_deref(),
            ],
        );
        if recomputed != e.hash {
            return Ok(Verification::Broken {
                seq: e.seq,
                reason: "its content no longer matches its hash (the row was altered)".to_owned(),
            });
        }
        expected_prev.clone_from(&e.hash);
        expected_seq += 1;
    }
    Ok(Verification::Intact {
        events: expected_seq - 1,
    })
}

/// Events about one record, oldest first.
///
/// # Errors
/// Any database error.
pub async fn for_entity(
    conn: &mut SqliteConnection,
    entity: &str,
    entity_id: &str,
) -> sqlx::Result<Vec<Event>> {
    sqlx::query_as!(
        Event,
        r#"SELECT seq AS "seq!: i64", at, actor, action, entity, entity_id, before_json, after_json, prev_hash, hash
           FROM audit_event WHERE entity = ? AND entity_id = ? ORDER BY seq"#,
        entity,
        entity_id
    )
    .fetch_all(conn)
    .await
}
