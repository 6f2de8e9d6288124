//! In-memory caches of what the service derives from issued certificates.
//!
//! An issued certificate's snapshot never changes (database triggers refuse
//! edits; an amendment is a new row with its own fingerprint), so anything
//! rendered or parsed from it can be kept, keyed by the snapshot's SHA-256,
//! and never goes stale. Each cache is bounded by a total weight (bytes)
//! and evicts its oldest entries first.

use std::collections::{HashMap, VecDeque};
use std::hash::Hash;
use std::sync::{Arc, Mutex, PoisonError};

use axum::body::Bytes;

use crate::report::snapshot::{CertificateSnapshot, FunctionBlock};

/// A map bounded by the total weight of its values; inserting past the
/// bound evicts the oldest entries. Values are cheap to clone (`Bytes`,
/// `Arc`).
#[derive(Debug)]
pub struct Bounded<K, V> {
    inner: Mutex<Inner<K, V>>,
    capacity: usize,
}

#[derive(Debug)]
struct Inner<K, V> {
    map: HashMap<K, (V, usize)>,
    order: VecDeque<K>,
    weight: usize,
}

impl<K: Eq + Hash + Clone, V: Clone> Bounded<K, V> {
    /// An empty cache holding at most `capacity` in total weight.
    #[must_use]
    pub fn new(capacity: usize) -> Self {
        Self {
            inner: Mutex::new(Inner {
                map: HashMap::new(),
                order: VecDeque::new(),
                weight: 0,
            }),
            capacity,
        }
    }

    /// The value under `key`, if cached.
    pub fn get(&self, key: &K) -> Option<V> {
        // A poisoned lock only means another request panicked mid-update;
        // the map itself is consistent after every statement.
        let inner = self.inner.lock().unwrap_or_else(PoisonError::into_inner);
        inner.map.get(key).map(|(v, _)| v.clone())
    }

    /// Keeps `value` (of `weight`) under `key`, evicting the oldest entries
    /// while the total would exceed the capacity. A value heavier than the
    /// whole capacity is not kept.
    pub fn insert(&self, key: K, value: V, weight: usize) {
        if weight > self.capacity {
            return;
        }
        let mut inner = self.inner.lock().unwrap_or_else(PoisonError::into_inner);
        if let Some((_, old)) = inner.map.remove(&key) {
            inner.weight -= old;
            inner.order.retain(|k| k != &key);
        }
        while inner.weight + weight > self.capacity {
            let Some(oldest) = inner.order.pop_front() else {
                break;
            };
            if let Some((_, w)) = inner.map.remove(&oldest) {
                inner.weight -= w;
            }
        }
        inner.weight += weight;
        inner.order.push_back(key.clone());
        inner.map.insert(key, (value, weight));
    }

    /// Number of entries and their total weight.
    pub fn usage(&self) -> (usize, usize) {
        let inner = self.inner.lock().unwrap_or_else(PoisonError::into_inner);
        (inner.map.len(), inner.weight)
    }
}

/// Rendered PDFs kept, in bytes.
pub const PDF_CAPACITY_BYTES: usize = 64 * 1024 * 1024;
/// Deviation-function answers and parsed functions kept, in bytes.
pub const DEVIATION_CAPACITY_BYTES: usize = 16 * 1024 * 1024;
/// Snapshots kept (as served and parsed) and plots, in bytes of JSON/SVG.
pub const SNAPSHOT_CAPACITY_BYTES: usize = 32 * 1024 * 1024;

/// The caches of the service, keyed by a snapshot's SHA-256.
#[derive(Debug)]
pub struct Artefacts {
    /// The certificate as PDF.
    pub pdf: Bounded<String, Bytes>,
    /// The body of `GET /api/v1/instruments/{serial}/deviation`.
    pub deviation_json: Bounded<String, Bytes>,
    /// The parsed deviation function (for the evaluate endpoint).
    pub function: Bounded<String, Option<Arc<FunctionBlock>>>,
    /// The snapshot as served (`GET /api/v1/certificates/{number}`).
    pub snapshot_json: Bounded<String, Bytes>,
    /// The snapshot parsed (for the certificate page).
    pub snapshot: Bounded<String, Arc<CertificateSnapshot>>,
    /// The deviation plot as SVG (for the certificate page).
    pub plot_svg: Bounded<String, Arc<str>>,
}

impl Default for Artefacts {
    fn default() -> Self {
        Self {
            pdf: Bounded::new(PDF_CAPACITY_BYTES),
            deviation_json: Bounded::new(DEVIATION_CAPACITY_BYTES),
            function: Bounded::new(DEVIATION_CAPACITY_BYTES),
            snapshot_json: Bounded::new(SNAPSHOT_CAPACITY_BYTES),
            snapshot: Bounded::new(SNAPSHOT_CAPACITY_BYTES),
            plot_svg: Bounded::new(SNAPSHOT_CAPACITY_BYTES),
        }
    }
}

/// Answers of the database kept in memory while nothing has been written
/// since: each answer is filed under [`crate::store::ChangeWatch::changes`] as read
/// *before* the query, and the whole map is dropped as soon as a newer
/// count is seen. An answer read before a commit can therefore never be
/// served after that commit has advanced the count (own writes advance it
/// on commit, other processes' writes when the next request looks).
/// When the map reaches its entry limit it is emptied and refilled.
#[derive(Debug)]
pub struct Fresh<K, V> {
    inner: Mutex<FreshInner<K, V>>,
    max_entries: usize,
}

#[derive(Debug)]
struct FreshInner<K, V> {
    changes: u64,
    map: HashMap<K, V>,
}

impl<K: Eq + Hash, V: Clone> Fresh<K, V> {
    /// An empty cache of at most `max_entries` answers.
    #[must_use]
    pub fn new(max_entries: usize) -> Self {
        Self {
            inner: Mutex::new(FreshInner {
                changes: 0,
                map: HashMap::new(),
            }),
            max_entries,
        }
    }

    /// The answer under `key` if it was read at change count `changes`.
    pub fn get<Q>(&self, key: &Q, changes: u64) -> Option<V>
    where
        K: std::borrow::Borrow<Q>,
        Q: Eq + Hash + ?Sized,
    {
        let mut inner = self.inner.lock().unwrap_or_else(PoisonError::into_inner);
        if inner.changes != changes {
            if changes > inner.changes {
                inner.map.clear();
                inner.changes = changes;
            }
            return None;
        }
        inner.map.get(key).cloned()
    }

    /// Files `value`, read from the database after `changes` was taken.
    /// An answer older than what the cache holds is not kept.
    pub fn insert(&self, key: K, value: V, changes: u64) {
        let mut inner = self.inner.lock().unwrap_or_else(PoisonError::into_inner);
        if changes < inner.changes {
            return;
        }
        if changes > inner.changes || inner.map.len() >= self.max_entries {
            inner.map.clear();
            inner.changes = changes;
        }
        inner.map.insert(key, value);
    }

    /// Number of answers held.
    pub fn len(&self) -> usize {
        let inner = self.inner.lock().unwrap_or_else(PoisonError::into_inner);
        inner.map.len()
    }

    /// Whether no answer is held.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }
}

/// API tokens' owners and browser sessions kept (entries, each).
pub const TOKEN_ENTRIES: usize = 4_096;
/// Current-certificate and certificate-number look-ups kept (entries).
pub const HEADER_ENTRIES: usize = 50_000;

/// Look-ups of the hot read paths, valid until the next database change.
#[derive(Debug)]
pub struct Lookups {
    /// Token hash -> its owner and scope (known, unrevoked tokens only).
    pub tokens: Fresh<String, crate::web::auth::Caller>,
    /// Instrument serial -> its current certificate.
    pub current: Fresh<String, crate::store::lookups::CertificateHeader>,
    /// (certificate number, revision or -1 for the latest) -> certificate.
    pub by_number: Fresh<(String, i64), crate::store::lookups::CertificateHeader>,
    /// Session cookie hash -> the live session (its end is checked on every
    /// use; signing out, ending sessions and deactivating are changes).
    pub sessions: Fresh<String, crate::store::sessions::Session>,
}

impl Default for Lookups {
    fn default() -> Self {
        Self {
            tokens: Fresh::new(TOKEN_ENTRIES),
            current: Fresh::new(HEADER_ENTRIES),
            by_number: Fresh::new(HEADER_ENTRIES),
            sessions: Fresh::new(TOKEN_ENTRIES),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fresh_answers_never_outlive_a_change() {
        let c: Fresh<&str, u32> = Fresh::new(3);
        // Read at count 5, filed, served while the count stays 5.
        c.insert("a", 1, 5);
        assert_eq!(c.get("a", 5), Some(1));
        // The count moved on: nothing from before is served, and an answer
        // read before the change (filed late under 5) is not kept.
        assert_eq!(c.get("a", 6), None);
        c.insert("b", 2, 5);
        assert_eq!(c.get("b", 6), None);
        assert!(c.is_empty());
        // A request that still holds the old count sees nothing either.
        c.insert("a", 3, 6);
        assert_eq!(c.get("a", 5), None);
        assert_eq!(c.get("a", 6), Some(3));
        // At the entry limit the map starts afresh.
        c.insert("b", 4, 6);
        c.insert("c", 5, 6);
        assert_eq!(c.len(), 3);
        c.insert("d", 6, 6);
        assert_eq!(c.len(), 1);
        assert_eq!(c.get("d", 6), Some(6));
        assert_eq!(c.get("a", 6), None);
    }

    #[test]
    fn the_oldest_entries_go_first_when_full() {
        let c: Bounded<&str, u32> = Bounded::new(10);
        c.insert("a", 1, 4);
        c.insert("b", 2, 4);
        assert_eq!(c.usage(), (2, 8));
        c.insert("c", 3, 4);
        assert_eq!(c.get(&"a"), None, "a was the oldest");
        assert_eq!(c.get(&"b"), Some(2));
        assert_eq!(c.get(&"c"), Some(3));
        assert_eq!(c.usage(), (2, 8));
        // Replacing a key keeps one entry and its new weight.
        c.insert("c", 4, 2);
        assert_eq!(c.get(&"c"), Some(4));
        assert_eq!(c.usage(), (2, 6));
        // Too heavy for the whole cache: not kept, nothing evicted.
        c.insert("d", 5, 11);
        assert_eq!(c.get(&"d"), None);
        assert_eq!(c.usage(), (2, 6));
    }
}
