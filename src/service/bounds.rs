//! Size bounds and compute budgets per request, configurable, with defaults
//! sized for two cores answering within a couple of seconds.

use fluxbound_core::assess::bounding_cells;
use fluxbound_core::site::{Pointer, Problems, Site};
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
}

impl Default for Limits {
    fn default() -> Self {
        Limits {
            body_bytes: 4 * 1024 * 1024,
            max_conductors: 5_000,
            max_segments: 100_000,
            max_positions: 5_000,
            max_points: 200_000,
            max_grid_cells: 1_000_000,
            max_pairs: 1_000_000_000,
            rate_per_key: 50,
            request_timeout_s: 30,
        }
    }
}

impl Limits {
    /// Size bounds of a site document.
    pub fn check_site(&self, site: &Site) -> Problems {
        let root = Pointer::root();
        let mut p = Problems::default();
        if site.conductors.len() > self.max_conductors {
            p.push(&root.key("conductors"), format!("at most {} conductors per site", self.max_conductors));
        }
        let segments = segment_count(site);
        if segments > self.max_segments {
            p.push(
                &root.key("conductors"),
                format!("at most {} segments per site (this one has {segments})", self.max_segments),
            );
        }
        if site.positions.len() > self.max_positions {
            p.push(&root.key("positions"), format!("at most {} positions per site", self.max_positions));
        }
        let mut cells = 0u64;
        for (i, a) in site.areas.iter().enumerate() {
            cells = cells.saturating_add(bounding_cells(&a.polygon, a.spacing_m));
            if cells > self.max_grid_cells {
                p.push(
                    &root.key("areas").index(i).key("spacing_m"),
                    format!("the area grids would exceed {} cells: increase spacing_m", self.max_grid_cells),
                );
                break;
            }
        }
        p
    }

    /// Compute budget of an assessment of `site`: segments × points.
    pub fn check_assessment_budget(&self, site: &Site) -> Problems {
        let points: u64 = site
            .positions
            .iter()
            .map(|q| match &q.placement {
                fluxbound_core::site::Placement::Standing { heights_m, .. } => heights_m.len() as u64,
                fluxbound_core::site::Placement::Point(_) => 1,
            })
            .sum::<u64>()
            + site.areas.iter().map(|a| bounding_cells(&a.polygon, a.spacing_m)).sum::<u64>();
        let pairs = points.saturating_mul(segment_count(site) as u64);
        let mut p = Problems::default();
        if pairs > self.max_pairs {
            let field = if site.areas.is_empty() { "positions" } else { "areas" };
            p.push(
                &Pointer::root().key(field),
                format!(
                    "this assessment needs {pairs} segment-point pairs, over the budget of {}: coarsen area spacing_m or split the site",
                    self.max_pairs
                ),
            );
        }
        p
    }
}

pub(crate) fn segment_count(site: &Site) -> usize {
    site.conductors.iter().map(|c| c.path.len().saturating_sub(1)).sum()
}
