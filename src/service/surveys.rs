//! Surveys: store a survey of a site revision with its analysis.

use super::{Caller, Result, Role, Service, ServiceError, stored, to_json};
use crate::ids::{SiteId, SurveyId};
use crate::store::SurveyRow;
use fluxbound_core::assess::ReviewFraction;
use fluxbound_core::limits::choose_tables;
use fluxbound_core::survey::{SurveyAnalysis, wire::SurveyDoc};
use fluxbound_core::usecase;

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
    /// Stores a survey with its analysis; extrapolated values are judged at
    /// `review_fraction`.
    #[tracing::instrument(name = "surveys_create", skip_all, fields(org = %caller.org_id, site = %site_id))]
    pub async fn surveys_create(
        &self,
        caller: &Caller,
        site_id: &SiteId,
        doc: SurveyDoc,
        review_fraction: ReviewFraction,
    ) -> Result<SurveyView> {
        caller.require(Role::Assessor)?;
        let (rev, site) = self.site_at_revision(caller, site_id, doc.revision).await?;
        let survey = usecase::check_survey(&site, &doc)?;
        usecase::check_survey_budget(&survey, &self.limits().budget())?;
        let pairs = usecase::survey_pairs(&survey);
        let choice = choose_tables(&[], survey.tables(), site.tables());
        let (tables, _) = self.resolve_tables(caller, &choice).await?;
        let analysis =
            self.compute(move |budget| usecase::analyse_survey(&survey, &tables, review_fraction, budget)).await??;
        self.count_pairs(pairs);
        let row = self
            .store()
            .survey_insert(&caller.org_id, &rev.site.id, rev.revision, &to_json(&doc), &to_json(&analysis))
            .await?;
        tracing::info!(survey = %row.id, "survey stored");
        Ok(SurveyView { row, survey: doc, analysis })
    }

    #[tracing::instrument(name = "surveys_show", skip_all, fields(org = %caller.org_id, survey = %id))]
    pub async fn surveys_show(&self, caller: &Caller, id: &SurveyId) -> Result<SurveyView> {
        caller.require(Role::Viewer)?;
        view(self.store().survey_get(&caller.org_id, id).await?.ok_or(ServiceError::NotFound("survey"))?)
    }

    #[tracing::instrument(name = "surveys_list", skip_all, fields(org = %caller.org_id, site = %site_id))]
    pub async fn surveys_list(
        &self,
        caller: &Caller,
        site_id: &SiteId,
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
            |r| r.id.to_string(),
        )
        .await
    }
}
