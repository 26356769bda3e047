//! The stateless evaluation: same document as `fluxbound evaluate`.

use super::{Caller, Result, Role, Service, ServiceError};
use fluxbound_core::evaluate::{EvaluateRequest, Evaluated};
use fluxbound_core::site::{Pointer, Problems};
use fluxbound_core::usecase;

impl Service {
    #[tracing::instrument(name = "evaluate", skip_all, fields(org = %caller.org_id, conductors = req.conductors.len(), points = req.points.len()))]
    /// The answer is kept as computed phasors; the HTTP layer writes it in
    /// the form the document's `output` asks for.
    pub async fn evaluate(&self, caller: &Caller, req: EvaluateRequest) -> Result<Evaluated> {
        caller.require(Role::Viewer)?;
        let limits = self.limits();
        let root = Pointer::root();
        let mut bounds = Problems::default();
        if req.conductors.len() > limits.max_conductors {
            bounds.push(&root.key("conductors"), format!("at most {} conductors per request", limits.max_conductors));
        }
        if req.points.len() > limits.max_points {
            bounds.push(&root.key("points"), format!("at most {} points per request", limits.max_points));
        }
        if !bounds.is_empty() {
            return Err(ServiceError::TooBig(bounds));
        }
        let pairs = segment_point_pairs(&req);
        let response = self.compute_sized(pairs, move |budget| usecase::evaluate_output(&req, budget)).await??;
        self.count_pairs(response.pair_count());
        Ok(response)
    }
}

/// Segment–point pairs the request asks for, read off the document before
/// it is checked (an upper bound on the work: invalid documents do less).
fn segment_point_pairs(req: &EvaluateRequest) -> u64 {
    let segments: u64 = req.conductors.iter().map(|c| c.path.len().saturating_sub(1) as u64).sum();
    segments.saturating_mul(req.points.len() as u64)
}
