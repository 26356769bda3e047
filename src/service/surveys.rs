//! Surveys: store a survey of a site revision with its analysis.

use super::{Caller, Result, Role, Service, ServiceError, stored, to_json};
use crate::store::SurveyRow;
use fluxbound_core::limits::choose_table_ids;
use fluxbound_core::site::{Pointer, Problems};
use fluxbound_core::survey::{SurveyAnalysis, analyse, validate_survey, wire::SurveyDoc};

#[derive(Debug, Clone, PartialEq)]
pub struct SurveyView {
    pub row: SurveyRow,
    pub survey: SurveyDoc,
    pub analysis: SurveyAnalysis,
}

fn view(row: SurveyRow) -> Result<SurveyView> {
    Ok(SurveyView { survey: stored(&row.body)?, analysis: stored(&row.result)?, row })
}

impl Service {
    #[tracing::instrument(name = "surveys_create", skip_all, fields(org = %caller.org_id, site = %site_id))]
    pub async fn surveys_create(&self, caller: &Caller, site_id: &str, doc: SurveyDoc) -> Result<SurveyView> {
        caller.require(Role::Assessor)?;
        let (rev, site) = self.site_at_revision(caller, site_id, doc.revision).await?;
        let survey = validate_survey(&doc, &site).map_err(ServiceError::Validation)?;
        let segments = super::bounds::segment_count(&site) as u64;
        // Field at the survey's loads, at rated load, and the fit's matrix.
        let pairs = 3 * segments * survey.points().len() as u64;
        if pairs > self.limits().max_pairs {
            let mut p = Problems::default();
            p.push(
                &Pointer::root().key("points"),
                format!("{pairs} segment-point pairs exceed the budget of {}", self.limits().max_pairs),
            );
            return Err(ServiceError::TooBig(p));
        }
        let root = Pointer::root();
        let (ids, at) = choose_table_ids(
            vec![(survey.tables().to_vec(), root.key("tables")), (site.tables.clone(), root.key("site").key("tables"))],
            root.key("tables"),
        );
        let (tables, _) = self.resolve_tables(caller, &ids, &at).await?;
        let analysis = self.compute(move || analyse(&survey, &tables, 0.5)).await?.map_err(ServiceError::Validation)?;
        self.count_pairs(pairs);
        let row = self
            .store()
            .survey_insert(&caller.org_id, &rev.site.id, rev.revision, &to_json(&doc), &to_json(&analysis))
            .await?;
        tracing::info!(survey = %row.id, "survey stored");
        Ok(SurveyView { row, survey: doc, analysis })
    }

    #[tracing::instrument(name = "surveys_show", skip_all, fields(org = %caller.org_id, survey = %id))]
    pub async fn surveys_show(&self, caller: &Caller, id: &str) -> Result<SurveyView> {
        caller.require(Role::Viewer)?;
        view(self.store().survey_get(&caller.org_id, id).await?.ok_or(ServiceError::NotFound("survey"))?)
    }

    #[tracing::instrument(name = "surveys_list", skip_all, fields(org = %caller.org_id, site = %site_id))]
    pub async fn surveys_list(
        &self,
        caller: &Caller,
        site_id: &str,
        cursor: Option<&str>,
        limit: Option<i64>,
    ) -> Result<(Vec<SurveyView>, Option<String>)> {
        let (store, org) = (self.store(), caller.org_id.clone());
        self.page_for_site(
            caller,
            site_id,
            limit,
            |n| async move { store.surveys_list(&org, site_id, cursor, n).await },
            view,
            |r| r.id.clone(),
        )
        .await
    }
}
