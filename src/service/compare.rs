//! Two stored assessments side by side: read, never recomputed.

use super::{Caller, Result, Role, Service, ServiceError, stored};
use crate::ids::AssessmentId;
use crate::store::AssessmentRow;
use fluxbound_core::assess::Assessment;
use fluxbound_core::mitigate::compare::{Comparison, compare};

impl Service {
    /// Compares assessment `id` (before) with `with` (after): every change
    /// is `with` minus `id`. Both must be the caller's organisation's (404
    /// otherwise, so another organisation's ids are not revealed).
    #[tracing::instrument(name = "assessments_compare", skip_all, fields(org = %caller.org_id, assessment = %id, with = %with))]
    pub async fn assessments_compare(
        &self,
        caller: &Caller,
        id: &AssessmentId,
        with: &AssessmentId,
    ) -> Result<Comparison> {
        caller.require(Role::Viewer)?;
        let before = self.assessment_row(caller, id).await?;
        let after = self.assessment_row(caller, with).await?;
        let (a, b): (Assessment, Assessment) = (stored(&before.result)?, stored(&after.result)?);
        // Matching is linear in the items (by id), so this stays on the
        // request's thread like the other reads of a stored result.
        Ok(compare(&a, &b).with_ids(
            (before.site_id.to_string(), before.id.to_string()),
            (after.site_id.to_string(), after.id.to_string()),
        ))
    }

    async fn assessment_row(&self, caller: &Caller, id: &AssessmentId) -> Result<AssessmentRow> {
        self.store().assessment_get(&caller.org_id, id).await?.ok_or(ServiceError::NotFound("assessment"))
    }
}
