//! The stateless evaluation: same document as `fluxbound evaluate`.

use super::{Caller, Result, Role, Service, ServiceError};
use fluxbound_core::evaluate::{self, EvaluateRequest, EvaluateResponse};
use fluxbound_core::site::{Pointer, Problems};

impl Service {
    #[tracing::instrument(name = "evaluate", skip_all, fields(org = %caller.org_id, conductors = req.conductors.len(), points = req.points.len()))]
    pub async fn evaluate(&self, caller: &Caller, req: EvaluateRequest) -> Result<EvaluateResponse> {
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
        let ev = evaluate::validate_request(&req).map_err(ServiceError::Validation)?;
        let pairs = ev.pair_count();
        if pairs > limits.max_pairs {
            return Err(ServiceError::TooBig(Problems::one(
                "/points",
                format!(
                    "{pairs} segment-point pairs exceed the budget of {} per request: send fewer points or segments per request",
                    limits.max_pairs
                ),
            )));
        }
        let response = self.compute(move || evaluate::evaluate(&ev)).await?;
        self.count_pairs(pairs);
        Ok(response)
    }
}
