-- Fluxbound schema, version 2 (PostgreSQL): surveys of a site revision, with
-- their analysis (reconciliation, load fit, extrapolation) as JSON text.
CREATE TABLE surveys (
    id TEXT PRIMARY KEY,
    org_id TEXT NOT NULL REFERENCES organisations (id),
    site_id TEXT NOT NULL REFERENCES sites (id),
    site_revision BIGINT NOT NULL,
    body TEXT NOT NULL,
    result TEXT NOT NULL,
    created_at TEXT NOT NULL
);
CREATE INDEX surveys_site ON surveys (org_id, site_id, id);
