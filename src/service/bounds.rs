//! Size bounds and compute budgets per request, configurable, with defaults
//! sized for two cores answering within a couple of seconds.

use fluxbound_core::assess::{DEFAULT_MAX_GRID_CELLS, MAP_MAX_CELLS, check_grid_budget};
use fluxbound_core::cancel::Cancel;
use fluxbound_core::site::{Pointer, Problems, Site};
use fluxbound_core::usecase::{Budget, DEFAULT_MAX_DISTANCE_PAIRS, DEFAULT_MAX_PAIRS, segment_count};
use serde::{Deserialize, Serialize};

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Limits {
    /// Largest request body, bytes.
    pub body_bytes: usize,
    pub max_conductors: usize,
    pub max_segments: usize,
    pub max_positions: usize,
    /// Points per `POST /v1/evaluate`.
    pub max_points: usize,
    /// Grid cells over all areas of one assessment.
    pub max_grid_cells: u64,
    /// Segment–point pairs per synchronous request (≈ 1 s of the engine on
    /// two AVX2 cores at the default).
    pub max_pairs: u64,
    /// Requests per second per API key (token bucket, burst = 2 s worth).
    pub rate_per_key: u32,
    /// Seconds before a request is answered 503.
    pub request_timeout_s: u64,
    /// Segment–point pairs per distance query (its probes go one point at a
    /// time: ≈ 1 s at the default, estimated).
    pub max_distance_pairs: u64,
    // Concurrent computations (see `Service::compute`).
    /// Field computations running at once; more wait for a slot.
    pub max_computations: usize,
    /// Milliseconds a computation waits for a slot before its request is
    /// answered 503 `busy` with `Retry-After`.
    pub compute_queue_ms: u64,
    /// Seconds a key found valid is trusted without looking up its row
    /// again (0 = every request looks it up); see `auth::KeyCache`.
    pub key_cache_s: u64,
}

/// Default seconds a key found valid is trusted before its row is read
/// again: a key revoked through another replica or the CLI stops working
/// within this time (through this process, at once).
pub const DEFAULT_KEY_CACHE_S: u64 = 2;

/// Default computations at once: one per core. The engine already spreads
/// one computation over every core (rayon), so more at once only share the
/// same cores and all finish later; as many as cores keeps each core busy
/// while a computation is in one of its single-threaded steps (load fit,
/// refinement, distance probes).
pub fn default_max_computations() -> usize {
    std::thread::available_parallelism().map_or(1, |n| n.get())
}

/// Default queue wait, ms: about one computation at the default pair
/// budget (≈ 1 s on two cores), so a slot frees within it unless every
/// slot holds a large computation; past it the server is overloaded, not
/// briefly busy, and a quick answer serves the client better.
pub const DEFAULT_COMPUTE_QUEUE_MS: u64 = 1_000;

impl Default for Limits {
    fn default() -> Self {
        Limits {
            body_bytes: 4 * 1024 * 1024,
            max_conductors: 5_000,
            max_segments: 100_000,
            max_positions: 5_000,
            max_points: 200_000,
            max_grid_cells: DEFAULT_MAX_GRID_CELLS,
            max_pairs: DEFAULT_MAX_PAIRS,
            rate_per_key: 50,
            request_timeout_s: 30,
            max_distance_pairs: DEFAULT_MAX_DISTANCE_PAIRS,
            max_computations: default_max_computations(),
            compute_queue_ms: DEFAULT_COMPUTE_QUEUE_MS,
            key_cache_s: DEFAULT_KEY_CACHE_S,
        }
    }
}

impl Limits {
    /// Size bounds of a site document.
    pub fn check_site(&self, site: &Site) -> Problems {
        let root = Pointer::root();
        let mut p = Problems::default();
        if site.conductors().len() > self.max_conductors {
            p.push(&root.key("conductors"), format!("at most {} conductors per site", self.max_conductors));
        }
        let segments = segment_count(site.conductors());
        if segments > self.max_segments as u64 {
            p.push(
                &root.key("conductors"),
                format!("at most {} segments per site (this one has {segments})", self.max_segments),
            );
        }
        if site.positions().len() > self.max_positions {
            p.push(&root.key("positions"), format!("at most {} positions per site", self.max_positions));
        }
        p.0.extend(check_grid_budget(site, self.max_grid_cells).0);
        p
    }

    /// The compute budgets of the use cases, with a flag nobody sets
    /// (`Service::compute` gives each computation its own).
    pub fn budget(&self) -> Budget {
        Budget {
            max_pairs: self.max_pairs,
            max_grid_cells: self.max_grid_cells,
            map_max_cells: MAP_MAX_CELLS,
            max_distance_pairs: self.max_distance_pairs,
            max_search_work: fluxbound_core::mitigate::phases::DEFAULT_MAX_WORK,
            cancel: Cancel::never(),
        }
    }

    /// Seconds a client refused as busy is told to wait (`Retry-After`):
    /// the queue wait, rounded up, at least 1.
    pub fn busy_retry_after_s(&self) -> u64 {
        self.compute_queue_ms.div_ceil(1000).max(1)
    }
}
