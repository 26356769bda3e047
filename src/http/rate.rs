//! Request rate limits, in memory: a token bucket per API key
//! ([`RateLimiter`]), and a log of failed authentications per client
//! address ([`FailedAuthLimiter`]).
//!
//! Each replica keeps its own buckets, so with N replicas behind a balancer a
//! key may reach N times the rate; the bound protects a replica's CPU, not a
//! contract. Buckets are pruned when the map grows large.

use std::collections::{HashMap, VecDeque};
use std::net::{IpAddr, Ipv4Addr};
use std::sync::Mutex;
use std::time::{Duration, Instant};

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

/// Failed authentications per client: at most `max` within any `window`
/// (a sliding log of their instants, so there is no window edge at which
/// twice as many get through). While a client is at the limit, every
/// request it makes to an authenticated route is answered 429 before its
/// key is looked at, so guessing keys costs the guesser time and the
/// database nothing. A success does not clear the log: otherwise one valid
/// key would let its holder guess others between its own requests.
///
/// Kept in memory per replica, like [`RateLimiter`]. Memory is bounded by
/// the clients that failed within one window: the log of a client holds at
/// most `max` instants, and clients whose failures have all aged out are
/// dropped when the map grows past [`TRACKED_CLIENTS`].
#[derive(Debug)]
pub struct FailedAuthLimiter {
    max: usize,
    window: Duration,
    log: Mutex<HashMap<ClientKey, VecDeque<Instant>>>,
}

/// Clients tracked before aged-out logs are swept (a sweep is one pass over
/// the map under its lock: about a millisecond at this size).
pub const TRACKED_CLIENTS: usize = 100_000;

/// Whose failures count together: one IPv4 address; one IPv6 /64 network
/// (a subscriber is usually handed a whole /64, so single IPv6 addresses
/// would give one client 2^64 fresh logs); or every request whose peer
/// address is unknown.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum ClientKey {
    V4(Ipv4Addr),
    V6Network(u64),
    Unknown,
}

impl ClientKey {
    pub fn of(ip: Option<IpAddr>) -> ClientKey {
        match ip.map(|ip| ip.to_canonical()) {
            Some(IpAddr::V4(v4)) => ClientKey::V4(v4),
            Some(IpAddr::V6(v6)) => ClientKey::V6Network((v6.to_bits() >> 64) as u64),
            None => ClientKey::Unknown,
        }
    }
}

impl FailedAuthLimiter {
    /// `max` failures per `window`; `max` 0 disables the limit.
    pub fn new(max: u32, window: Duration) -> Self {
        FailedAuthLimiter { max: max as usize, window, log: Mutex::new(HashMap::new()) }
    }

    /// `Err(seconds until the oldest counted failure ages out)` while the
    /// client has made `max` failures within the window.
    pub fn check(&self, client: ClientKey) -> Result<(), u64> {
        if self.max == 0 {
            return Ok(());
        }
        let now = Instant::now();
        let mut map = self.log.lock().unwrap_or_else(|p| p.into_inner());
        let Some(log) = map.get_mut(&client) else { return Ok(()) };
        self.age_out(log, now);
        match log.front() {
            Some(oldest) if log.len() >= self.max => {
                let wait = (*oldest + self.window).saturating_duration_since(now);
                Err(wait.as_secs_f64().ceil().max(1.0) as u64)
            }
            _ => Ok(()),
        }
    }

    /// Counts one failed authentication of `client`.
    pub fn record_failure(&self, client: ClientKey) {
        if self.max == 0 {
            return;
        }
        let now = Instant::now();
        let mut map = self.log.lock().unwrap_or_else(|p| p.into_inner());
        if map.len() >= TRACKED_CLIENTS {
            map.retain(|_, log| log.back().is_some_and(|t| now.duration_since(*t) < self.window));
        }
        let log = map.entry(client).or_default();
        self.age_out(log, now);
        if log.len() >= self.max {
            log.pop_front();
        }
        log.push_back(now);
    }

    fn age_out(&self, log: &mut VecDeque<Instant>, now: Instant) {
        while log.front().is_some_and(|t| now.duration_since(*t) >= self.window) {
            log.pop_front();
        }
    }

    /// The limit and its window, seconds (for the answer's words).
    pub fn limit(&self) -> (usize, u64) {
        (self.max, self.window.as_secs())
    }
}
