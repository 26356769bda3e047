//! Request counts and latencies by route and status, in Prometheus text.

use crate::service::ComputeCounts;
use axum::extract::{MatchedPath, Request, State};
use axum::middleware::Next;
use axum::response::Response;
use std::collections::BTreeMap;
use std::fmt::Write;
use std::sync::{Arc, Mutex};
use std::time::Instant;

/// Upper bounds of the latency buckets, seconds.
const BUCKETS_S: [f64; 12] = [0.001, 0.0025, 0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1.0, 2.5, 10.0];

#[derive(Debug, Default, Clone)]
struct Series {
    count: u64,
    sum_s: f64,
    buckets: [u64; BUCKETS_S.len()],
}

/// (method, route template, status).
type SeriesKey = (String, String, u16);

/// Shared by all requests; a short critical section per request.
#[derive(Debug, Default, Clone)]
pub struct Metrics {
    series: Arc<Mutex<BTreeMap<SeriesKey, Series>>>,
}

impl Metrics {
    fn record(&self, method: &str, route: &str, status: u16, seconds: f64) {
        let mut map = self.series.lock().unwrap_or_else(|p| p.into_inner());
        let s = map.entry((method.to_string(), route.to_string(), status)).or_default();
        s.count += 1;
        s.sum_s += seconds;
        for (b, le) in s.buckets.iter_mut().zip(BUCKETS_S) {
            if seconds <= le {
                *b += 1;
            }
        }
    }

    /// Prometheus text exposition (version 0.0.4).
    pub fn render(&self, pairs_computed: u64, compute: ComputeCounts) -> String {
        let map = self.series.lock().unwrap_or_else(|p| p.into_inner()).clone();
        let mut s = String::new();
        let _ = writeln!(s, "# HELP fluxbound_http_requests_total HTTP requests answered, by route and status.");
        let _ = writeln!(s, "# TYPE fluxbound_http_requests_total counter");
        for ((m, r, st), v) in &map {
            let _ = writeln!(
                s,
                "fluxbound_http_requests_total{{method=\"{m}\",route=\"{r}\",status=\"{st}\"}} {}",
                v.count
            );
        }
        let _ = writeln!(s, "# HELP fluxbound_http_request_duration_seconds Time to answer, by route and status.");
        let _ = writeln!(s, "# TYPE fluxbound_http_request_duration_seconds histogram");
        for ((m, r, st), v) in &map {
            let labels = format!("method=\"{m}\",route=\"{r}\",status=\"{st}\"");
            for (b, le) in v.buckets.iter().zip(BUCKETS_S) {
                let _ = writeln!(s, "fluxbound_http_request_duration_seconds_bucket{{{labels},le=\"{le}\"}} {b}");
            }
            let _ = writeln!(s, "fluxbound_http_request_duration_seconds_bucket{{{labels},le=\"+Inf\"}} {}", v.count);
            let _ = writeln!(s, "fluxbound_http_request_duration_seconds_sum{{{labels}}} {}", v.sum_s);
            let _ = writeln!(s, "fluxbound_http_request_duration_seconds_count{{{labels}}} {}", v.count);
        }
        let _ =
            writeln!(s, "# HELP fluxbound_segment_point_pairs_total Segment-point pairs computed by the field engine.");
        let _ = writeln!(s, "# TYPE fluxbound_segment_point_pairs_total counter");
        let _ = writeln!(s, "fluxbound_segment_point_pairs_total {pairs_computed}");
        render_compute(&mut s, compute);
        s
    }
}

/// The computation gauge and counters (see `service::compute`).
fn render_compute(s: &mut String, c: ComputeCounts) {
    let lines = [
        ("fluxbound_computations_running", "gauge", "Field computations running now.", c.running),
        (
            "fluxbound_computations_cancelled_total",
            "counter",
            "Field computations stopped because their request was gone.",
            c.cancelled,
        ),
        (
            "fluxbound_computations_refused_total",
            "counter",
            "Requests answered 503 busy: every computation slot stayed taken.",
            c.refused,
        ),
    ];
    for (name, kind, help, value) in lines {
        let _ = writeln!(s, "# HELP {name} {help}");
        let _ = writeln!(s, "# TYPE {name} {kind}");
        let _ = writeln!(s, "{name} {value}");
    }
}

/// Middleware: times each request and records it under its route template
/// (never the raw path, so ids do not explode the label set).
pub async fn track(State(metrics): State<Metrics>, req: Request, next: Next) -> Response {
    let start = Instant::now();
    let method = req.method().to_string();
    let route =
        req.extensions().get::<MatchedPath>().map(|m| m.as_str().to_string()).unwrap_or_else(|| "unmatched".into());
    let res = next.run(req).await;
    metrics.record(&method, &route, res.status().as_u16(), start.elapsed().as_secs_f64());
    res
}
