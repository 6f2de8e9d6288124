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

#[cfg(test)]
mod tests {
    use super::*;

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
