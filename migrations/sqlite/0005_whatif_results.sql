-- Fluxbound schema, version 5 (SQLite): what-if results stored when asked
-- (phase searches, load scenarios, moves, passive loops), with the request,
-- as JSON text, pinned to the site revision they were computed on.
CREATE TABLE whatif_results (
    id TEXT PRIMARY KEY,
    org_id TEXT NOT NULL REFERENCES organisations (id),
    site_id TEXT NOT NULL REFERENCES sites (id),
    site_revision BIGINT NOT NULL,
    kind TEXT NOT NULL,
    request TEXT NOT NULL,
    result TEXT NOT NULL,
    created_at TEXT NOT NULL
);
CREATE INDEX whatif_results_site ON whatif_results (org_id, site_id, id);
