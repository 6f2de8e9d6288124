//! Request counters and latency histograms, exposed at `/metrics` in the
//! Prometheus text exposition format (version 0.0.4).

use std::collections::BTreeMap;
use std::fmt::Write as _;
use std::sync::Mutex;
use std::time::Instant;

use axum::extract::{MatchedPath, Request, State};
use axum::http::header;
use axum::middleware::Next;
use axum::response::{IntoResponse, Response};

use super::AppState;

/// Upper bounds of the latency histogram buckets, in seconds.
pub const BUCKETS_S: [f64; 14] = [
    0.000_5, 0.001, 0.002_5, 0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1.0, 2.5, 5.0, 10.0,
];

#[derive(Debug, Clone, PartialEq, Eq, PartialOrd, Ord)]
struct Key {
    route: String,
    method: String,
    status: u16,
}

#[derive(Debug, Clone, Default)]
struct Series {
    count: u64,
    sum_s: f64,
    /// Non-cumulative counts per bucket; the last entry is +Inf.
    buckets: [u64; BUCKETS_S.len() + 1],
}

/// Counters keyed by route template, method and status.
#[derive(Debug, Default)]
pub struct Metrics {
    series: Mutex<BTreeMap<Key, Series>>,
}

impl Metrics {
    /// Records one finished request.
    pub fn observe(&self, route: &str, method: &str, status: u16, seconds: f64) {
        let key = Key {
            route: route.to_owned(),
            method: method.to_owned(),
            status,
        };
        let bucket = BUCKETS_S
            .iter()
            .position(|&bound| seconds <= bound)
            .unwrap_or(BUCKETS_S.len());
        // A poisoned lock only means another request panicked mid-update;
        // the counters are still usable.
        let mut series = self
            .series
            .lock()
            .unwrap_or_else(std::sync::PoisonError::into_inner);
        let entry = series.entry(key).or_default();
        entry.count += 1;
        entry.sum_s += seconds;
        entry.buckets[bucket] += 1;
    }

    /// The exposition text.
    #[must_use]
    pub fn render(&self) -> String {
        let series = self
            .series
            .lock()
            .unwrap_or_else(std::sync::PoisonError::into_inner)
            .clone();
        let mut out = String::with_capacity(256 + series.len() * 1024);
        out.push_str(
            "# HELP juncture_http_requests_total HTTP requests answered, by route, method and status.\n\
             # TYPE juncture_http_requests_total counter\n",
        );
        for (key, s) in &series {
            let _ = writeln!(
                out,
                "juncture_http_requests_total{{{}}} {}",
                labels(key),
                s.count
            );
        }
        out.push_str(
            "# HELP juncture_http_request_duration_seconds Time to answer HTTP requests, by route, method and status.\n\
             # TYPE juncture_http_request_duration_seconds histogram\n",
        );
        for (key, s) in &series {
            let labels = labels(key);
            let mut cumulative = 0;
            for (i, bound) in BUCKETS_S.iter().enumerate() {
                cumulative += s.buckets[i];
                let _ = writeln!(
                    out,
                    "juncture_http_request_duration_seconds_bucket{{{labels},le=\"{bound}\"}} {cumulative}"
                );
            }
            cumulative += s.buckets[BUCKETS_S.len()];
            let _ = writeln!(
                out,
                "juncture_http_request_duration_seconds_bucket{{{labels},le=\"+Inf\"}} {cumulative}"
            );
            let _ = writeln!(
                out,
                "juncture_http_request_duration_seconds_sum{{{labels}}} {}",
                s.sum_s
            );
            let _ = writeln!(
                out,
                "juncture_http_request_duration_seconds_count{{{labels}}} {}",
                s.count
            );
        }
        out
    }
}

fn labels(key: &Key) -> String {
    format!(
        "route=\"{}\",method=\"{}\",status=\"{}\"",
        escape_label(&key.route),
        escape_label(&key.method),
        key.status
    )
}

/// Escapes a label value as the exposition format requires.
fn escape_label(value: &str) -> String {
    value
        .replace('\\', "\\\\")
        .replace('"', "\\\"")
        .replace('\n', "\\n")
}

/// Middleware: times the request and records it under its route template.
pub async fn track(State(state): State<AppState>, request: Request, next: Next) -> Response {
    let started = Instant::now();
    let route = request
        .extensions()
        .get::<MatchedPath>()
        .map_or_else(|| "unmatched".to_owned(), |p| p.as_str().to_owned());
    let method = request.method().as_str().to_owned();
    let response = next.run(request).await;
    state.metrics.observe(
        &route,
        &method,
        response.status().as_u16(),
        started.elapsed().as_secs_f64(),
    );
    response
}

/// `GET /metrics`.
pub async fn exposition(State(state): State<AppState>) -> impl IntoResponse {
    (
        [(
            header::CONTENT_TYPE,
            "text/plain; version=0.0.4; charset=utf-8",
        )],
        state.metrics.render(),
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn histogram_buckets_are_cumulative_and_match_the_count() {
        let m = Metrics::default();
        m.observe("/healthz", "GET", 200, 0.0004);
        m.observe("/healthz", "GET", 200, 0.003);
        m.observe("/healthz", "GET", 200, 20.0);
        let text = m.render();
        assert!(text.contains(
            "juncture_http_requests_total{route=\"/healthz\",method=\"GET\",status=\"200\"} 3"
        ));
        assert!(text.contains("le=\"0.0005\"} 1"));
        assert!(text.contains("le=\"0.005\"} 2"));
        assert!(text.contains("le=\"10\"} 2"));
        assert!(text.contains("le=\"+Inf\"} 3"));
        assert!(text.contains(
            "juncture_http_request_duration_seconds_count{route=\"/healthz\",method=\"GET\",status=\"200\"} 3"
        ));
    }

    #[test]
    fn label_values_are_escaped() {
        assert_eq!(escape_label("a\"b\\c\nd"), "a\\\"b\\\\c\\nd");
    }
}
