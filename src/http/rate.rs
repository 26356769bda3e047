//! Per-key request rate limit: a token bucket per API key, in memory.
//!
//! Each replica keeps its own buckets, so with N replicas behind a balancer a
//! key may reach N times the rate; the bound protects a replica's CPU, not a
//! contract. Buckets are pruned when the map grows large.

use std::collections::HashMap;
use std::sync::Mutex;
use std::time::Instant;

#[derive(Debug)]
pub struct RateLimiter {
    per_second: f64,
    burst: f64,
    buckets: Mutex<HashMap<String, (f64, Instant)>>,
}

impl RateLimiter {
    /// `per_second` requests per key, bursts of two seconds' worth. Zero
    /// disables the limit.
    pub fn new(per_second: u32) -> Self {
        let per_second = f64::from(per_second);
        RateLimiter { per_second, burst: (2.0 * per_second).max(1.0), buckets: Mutex::new(HashMap::new()) }
    }

    /// Takes one token for `key`; `Err(seconds to wait)` when empty.
    pub fn check(&self, key: &str) -> Result<(), u64> {
        if self.per_second <= 0.0 {
            return Ok(());
        }
        let now = Instant::now();
        let mut map = self.buckets.lock().unwrap_or_else(|p| p.into_inner());
        if map.len() > 100_000 {
            map.retain(|_, (_, t)| now.duration_since(*t).as_secs() < 60);
        }
        let (tokens, last) = map.entry(key.to_string()).or_insert((self.burst, now));
        *tokens = (*tokens + now.duration_since(*last).as_secs_f64() * self.per_second).min(self.burst);
        *last = now;
        if *tokens >= 1.0 {
            *tokens -= 1.0;
            Ok(())
        } else {
            Err(((1.0 - *tokens) / self.per_second).ceil().max(1.0) as u64)
        }
    }
}
